//! Accuracy of the tap analysis on synthetic damped sinusoids with known
//! truth, against the targets of the analysis design and against the
//! Cramér–Rao bound.

use std::f64::consts::PI;

use tapwright::analysis::pitch::{cents_between, nearest_note};
use tapwright::analysis::synth::{
    add_modes, damped_modes, to_f32_clipped, NoiseGenerator, SynthMode,
};
use tapwright::analysis::{
    analyze_recording, AnalysisSettings, Mode, RejectReason, TapAnalyzer, TriggerSettings,
    DEFAULT_A4_HZ,
};

const FS: f64 = 48_000.0;

fn analyze_decay(samples: &[f64]) -> Vec<Mode> {
    let record: Vec<f32> = samples.iter().map(|&x| x as f32).collect();
    TapAnalyzer::new(AnalysisSettings::default(), FS)
        .analyze_record(&record, 0)
        .modes
}

fn nearest(modes: &[Mode], frequency_hz: f64) -> &Mode {
    modes
        .iter()
        .min_by(|a, b| {
            (a.frequency_hz - frequency_hz)
                .abs()
                .total_cmp(&(b.frequency_hz - frequency_hz).abs())
        })
        .unwrap_or_else(|| panic!("no mode near {frequency_hz} Hz"))
}

/// Target from the analysis design: isolated mode, SNR ≥ 40 dB (peak
/// amplitude over noise RMS), 1 s record: |Δf| ≤ 0.05 Hz and Q within 5 %.
#[test]
fn isolated_mode_at_40_db() {
    let cases = [
        (62.0, 20.0),
        (95.5, 25.0),
        (345.2, 60.0),
        (1210.7, 120.0),
        (2530.0, 300.0),
        (3800.0, 800.0),
    ];
    for (seed, &(frequency_hz, q)) in cases.iter().enumerate() {
        let amplitude = 0.2;
        let noise_rms = amplitude / 100.0; // 40 dB
        for trial in 0..5 {
            let truth = SynthMode {
                phase_rad: trial as f64,
                ..SynthMode::new(frequency_hz, q, amplitude)
            };
            let x = damped_modes(
                FS,
                48_000,
                &[truth],
                noise_rms,
                &mut NoiseGenerator::new(100 * seed as u64 + trial),
            );
            let modes = analyze_decay(&x);
            let m = nearest(&modes, frequency_hz);
            assert!(
                (m.frequency_hz - frequency_hz).abs() <= 0.05,
                "f {frequency_hz}: got {m:?}"
            );
            assert!((m.q / q - 1.0).abs() <= 0.05, "Q {q}: got {m:?}");
        }
    }
}

/// Target from the analysis design: four modes 60–80 Hz apart with Q 18–40
/// (like a closed violin body), tails overlapping: |Δf| ≤ 0.1 Hz, Q within 10 %.
#[test]
fn overlapping_body_modes() {
    let truth = [
        SynthMode::new(275.0, 18.0, 0.15),
        SynthMode::new(345.0, 30.0, 0.25),
        SynthMode::new(410.0, 22.0, 0.12),
        SynthMode::new(490.0, 40.0, 0.2),
    ];
    for trial in 0..10u64 {
        let mut random = NoiseGenerator::new(900 + trial);
        let modes: Vec<SynthMode> = truth
            .iter()
            .map(|m| SynthMode {
                phase_rad: 2.0 * PI * random.uniform(),
                ..*m
            })
            .collect();
        let x = damped_modes(FS, 48_000, &modes, 0.002, &mut random);
        let found = analyze_decay(&x);
        for t in &truth {
            let m = nearest(&found, t.frequency_hz);
            assert!(
                (m.frequency_hz - t.frequency_hz).abs() <= 0.1,
                "trial {trial}: {t:?} got {m:?}"
            );
            assert!(
                (m.q / t.q - 1.0).abs() <= 0.10,
                "trial {trial}: {t:?} got {m:?}"
            );
        }
    }
}

/// Fisher information of one damped sinusoid A·e^{−αt}cos(ωt + φ) in white
/// Gaussian noise of variance σ², parameters (A, α, ω, φ) — S. M. Kay,
/// Fundamentals of Statistical Signal Processing: Estimation Theory, 1993,
/// ch. 3 (general Gaussian case, eq. 3.33 form). Returns the bound on the
/// standard deviation of f in Hz.
fn crb_frequency_std_hz(mode: &SynthMode, noise_rms: f64, len: usize) -> f64 {
    let (a, alpha, omega, phi) = (
        mode.amplitude,
        mode.decay_per_s(),
        2.0 * PI * mode.frequency_hz,
        mode.phase_rad,
    );
    let mut fim = [[0.0f64; 4]; 4];
    for n in 0..len {
        let t = n as f64 / FS;
        let e = (-alpha * t).exp();
        let (c, s) = ((omega * t + phi).cos(), (omega * t + phi).sin());
        let g = [e * c, -t * a * e * c, -t * a * e * s, -a * e * s];
        for i in 0..4 {
            for j in 0..4 {
                fim[i][j] += g[i] * g[j] / (noise_rms * noise_rms);
            }
        }
    }
    let inverse = invert4(fim);
    inverse[2][2].sqrt() / (2.0 * PI)
}

fn invert4(m: [[f64; 4]; 4]) -> [[f64; 4]; 4] {
    let mut a = m;
    let mut inv = [[0.0; 4]; 4];
    for (i, row) in inv.iter_mut().enumerate() {
        row[i] = 1.0;
    }
    for col in 0..4 {
        let pivot = (col..4)
            .max_by(|&x, &y| a[x][col].abs().total_cmp(&a[y][col].abs()))
            .unwrap();
        a.swap(col, pivot);
        inv.swap(col, pivot);
        let p = a[col][col];
        for j in 0..4 {
            a[col][j] /= p;
            inv[col][j] /= p;
        }
        for r in 0..4 {
            if r != col {
                let f = a[r][col];
                for j in 0..4 {
                    a[r][j] -= f * a[col][j];
                    inv[r][j] -= f * inv[col][j];
                }
            }
        }
    }
    inv
}

/// Over 200 noisy trials of one damped mode, the RMS frequency error is
/// within 2× the Cramér–Rao bound (Kay 1993, ch. 3; the design's target).
#[test]
fn frequency_error_near_cramer_rao_bound() {
    let truth = SynthMode {
        phase_rad: 0.7,
        ..SynthMode::new(287.3, 40.0, 0.1)
    };
    let noise_rms = 0.01; // 20 dB peak SNR: errors well above rounding
    let len = 48_000;
    let bound_hz = crb_frequency_std_hz(&truth, noise_rms, len);
    let trials = 200;
    let mut sum_sq = 0.0;
    for trial in 0..trials {
        let x = damped_modes(
            FS,
            len,
            &[truth],
            noise_rms,
            &mut NoiseGenerator::new(5000 + trial),
        );
        let modes = analyze_decay(&x);
        let m = nearest(&modes, truth.frequency_hz);
        sum_sq += (m.frequency_hz - truth.frequency_hz).powi(2);
    }
    let rms_hz = (sum_sq / trials as f64).sqrt();
    eprintln!(
        "RMS error {rms_hz:.5} Hz, Cramér–Rao bound {bound_hz:.5} Hz, ratio {:.2}",
        rms_hz / bound_hz
    );
    assert!(
        rms_hz <= 2.0 * bound_hz,
        "RMS {rms_hz} Hz vs bound {bound_hz} Hz"
    );
    // And the estimator is not suspiciously better than the bound allows.
    assert!(
        rms_hz >= 0.7 * bound_hz,
        "RMS {rms_hz} Hz below the bound {bound_hz} Hz"
    );
}

/// Five strikes: one clipped, one double; every one found, those two
/// rejected with the right reason (tap rules in the analysis design).
#[test]
fn tap_counting_with_clipped_and_double() {
    let plate = |amplitude: f64| {
        vec![
            SynthMode::new(168.0, 45.0, amplitude * 0.5),
            SynthMode::new(338.0, 60.0, amplitude),
            SynthMode::new(486.0, 50.0, amplitude * 0.3),
        ]
    };
    let strikes = [
        (0.5, 0.3, false),
        (2.0, 2.0, false),
        (3.5, 0.25, false),
        (5.0, 0.3, true),
        (6.5, 0.28, false),
    ];
    let mut x = vec![0.0; (8.0 * FS) as usize];
    for &(at_s, amplitude, double) in &strikes {
        add_modes(&mut x, FS, (at_s * FS) as usize, &plate(amplitude));
        if double {
            add_modes(&mut x, FS, ((at_s + 0.15) * FS) as usize, &plate(amplitude));
        }
    }
    let mut noise = NoiseGenerator::new(77);
    for v in &mut x {
        *v += 2e-4 * noise.gaussian();
    }
    let samples = to_f32_clipped(&x);
    let report = analyze_recording(
        &samples,
        FS,
        &TriggerSettings::default(),
        &AnalysisSettings::default(),
    );
    assert_eq!(report.taps.len(), 5);
    for (tap, &(at_s, _, _)) in report.taps.iter().zip(&strikes) {
        assert!(
            (tap.onset_s - at_s).abs() < 0.005,
            "{} vs {at_s}",
            tap.onset_s
        );
    }
    let reasons: Vec<_> = report.taps.iter().map(|t| t.rejected).collect();
    assert_eq!(
        reasons,
        vec![
            None,
            Some(RejectReason::Clipped),
            None,
            Some(RejectReason::DoubleStrike),
            None
        ]
    );
    assert_eq!(report.taps_used(), 3);
    let mode5 = report
        .pass
        .modes
        .iter()
        .find(|m| (m.frequency_hz - 338.0).abs() < 1.0)
        .unwrap();
    assert_eq!(mode5.taps_seen, 3);
    assert!((mode5.frequency_hz - 338.0).abs() < 0.05);
}

/// ISO 16:1975 sets A4 = 440 Hz; twelve-tone equal temperament gives each
/// semitone the ratio 2^(1/12) and cents = 1200·log2(f/f_ref).
#[test]
fn pitch_names_and_cents() {
    assert_eq!(DEFAULT_A4_HZ, 440.0);
    let a4 = nearest_note(440.0, DEFAULT_A4_HZ).unwrap();
    assert_eq!((a4.note.as_str(), a4.cents), ("A4", 0.0));
    // E5 = 440·2^(7/12) = 659.255 Hz; 10 cents sharp of it:
    let f = 440.0 * 2f64.powf(7.0 / 12.0) * 2f64.powf(10.0 / 1200.0);
    let p = nearest_note(f, DEFAULT_A4_HZ).unwrap();
    assert_eq!(p.note, "E5");
    assert!((p.cents - 10.0).abs() < 1e-9);
    // Against the formula directly, with another reference (A4 = 415 Hz).
    let g = nearest_note(300.0, 415.0).unwrap();
    let reference = 415.0 * 2f64.powf(f64::from(g.midi_note - 69) / 12.0);
    assert!((g.cents - 1200.0 * (300.0f64 / reference).log2()).abs() < 1e-9);
    assert!((cents_between(440.0, 880.0) - 1200.0).abs() < 1e-12);
}

/// Two modes closer than the record's DFT resolution can show as two peaks
/// (3–6 Hz apart at Q 80–200; the analysis design notes that a plain
/// peak-picking spectrum sees 4 Hz at Q 120 as one) are measured as two,
/// in every one of sixteen starting phases of the second mode, to 0.2 Hz and
/// 15 % in Q at 40 dB (peak over noise RMS). Targets from the issue; the
/// subspace stage is the matrix pencil (Hua & Sarkar, IEEE Trans. ASSP
/// 38(5), 1990) followed by the joint least-squares refinement.
#[test]
fn close_pairs_are_two_modes() {
    const PHASES: u64 = 16;
    let mut failures = Vec::new();
    let mut case = 0u64;
    for gap_hz in [3.0, 4.0, 5.0, 6.0] {
        for q in [80.0, 120.0, 200.0] {
            case += 1;
            for trial in 0..PHASES {
                let phase = 2.0 * PI * trial as f64 / PHASES as f64;
                let amplitude = 0.2;
                let truth = [
                    SynthMode::new(300.0, q, amplitude),
                    SynthMode {
                        phase_rad: phase,
                        ..SynthMode::new(300.0 + gap_hz, q, 0.75 * amplitude)
                    },
                ];
                let x = damped_modes(
                    FS,
                    48_000,
                    &truth,
                    amplitude / 100.0,
                    &mut NoiseGenerator::new(4000 + PHASES * case + trial),
                );
                let found = analyze_decay(&x);
                let good = found.len() == 2
                    && truth.iter().all(|t| {
                        let m = nearest(&found, t.frequency_hz);
                        (m.frequency_hz - t.frequency_hz).abs() <= 0.2
                            && (m.q / t.q - 1.0).abs() <= 0.15
                    });
                if !good {
                    failures.push(format!(
                        "gap {gap_hz} Hz, Q {q}, phase {phase:.2}: {found:?}"
                    ));
                }
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{} missed:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

/// A steady tone under a tap (mains hum at 50 Hz, or a 150 Hz harmonic
/// 20 Hz below a mode) is not reported as a mode, and the tap's modes are
/// measured as without it (steady tones do not decay: common practice, no
/// source). On a bare decay (no sound before the strike) the fit may still
/// give the hum a slow decay (Q above a thousand); a mode must fall by 3 dB
/// over the record to be listed, which a steady tone never does. Known
/// limit, not covered: 50 and 150 Hz hum together on a bare decay. Tap
/// records keep 100 ms before the strike; see the next test.
#[test]
fn steady_hum_is_not_a_mode() {
    let truth = [
        SynthMode::new(170.0, 40.0, 0.2),
        SynthMode::new(345.0, 60.0, 0.3),
    ];
    for (hum_hz, hum_amplitude) in [(50.0, 0.01), (150.0, 0.006)] {
        let mut x = damped_modes(FS, 48_000, &truth, 1e-3, &mut NoiseGenerator::new(8));
        for (n, v) in x.iter_mut().enumerate() {
            *v += hum_amplitude * (2.0 * PI * hum_hz * n as f64 / FS + 1.0).sin();
        }
        let found = analyze_decay(&x);
        assert_eq!(found.len(), 2, "hum at {hum_hz} Hz: {found:?}");
        for t in &truth {
            let m = nearest(&found, t.frequency_hz);
            assert!(
                (m.frequency_hz - t.frequency_hz).abs() < 0.1,
                "hum at {hum_hz} Hz: {m:?}"
            );
            assert!((m.q / t.q - 1.0).abs() < 0.05, "hum at {hum_hz} Hz: {m:?}");
        }
    }
}

/// A tap record with mains hum (50 and 150 Hz, steady) all through it,
/// 100 ms of it before the strike: the hum, already there before the
/// strike, is not a mode; the plate's modes are (steady tones do not decay:
/// common practice, no source).
#[test]
fn hum_before_the_strike_is_not_a_mode() {
    let plate = [
        SynthMode::new(170.0, 40.0, 0.2),
        SynthMode::new(345.0, 60.0, 0.3),
    ];
    let pre = 4_800; // 100 ms
    for seed in 0..4u64 {
        let mut x = vec![0.0; pre + 48_000];
        add_modes(&mut x, FS, pre, &plate);
        let mut noise = NoiseGenerator::new(12 + seed);
        let phase = noise.uniform() * 2.0 * PI;
        for (n, v) in x.iter_mut().enumerate() {
            let t = n as f64 / FS;
            *v += 0.01 * (2.0 * PI * 50.0 * t + phase).sin()
                + 0.006 * (2.0 * PI * 150.0 * t + 1.0).sin();
            *v += 1e-3 * noise.gaussian();
        }
        let record: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let found = TapAnalyzer::new(AnalysisSettings::default(), FS)
            .analyze_record(&record, pre)
            .modes;
        let frequencies: Vec<f64> = found.iter().map(|m| m.frequency_hz).collect();
        assert_eq!(found.len(), 2, "seed {seed}: {found:?}");
        assert!(
            (frequencies[0] - 170.0).abs() < 0.1 && (frequencies[1] - 345.0).abs() < 0.1,
            "{frequencies:?}"
        );
    }
}
