//! Finding and judging taps in a recording: a beating pair is one tap, a
//! second strike is a double strike, and a DC offset changes nothing.
//!
//! The physics behind the first two (common practice, no source; the
//! detector itself follows Bello et al., IEEE Trans. Speech and Audio
//! Processing 13(5), 2005): two modes a few hertz apart make the envelope
//! of a free decay rise and fall at their difference frequency, slowly and
//! without new sound, so the decay stays a sum of damped sinusoids; a
//! second strike adds a new impulse response that the decay before it does
//! not foretell.

mod common;
use common::analyze_with_defaults;

use std::f64::consts::PI;

use tapwright::analysis::synth::{
    add_modes, contact_pulse, to_f32_clipped, NoiseGenerator, SynthMode,
};
use tapwright::analysis::{RecordingReport, RejectReason};

const FS: f64 = 48_000.0;

/// A strike as an impulse response: a short contact pulse, and every mode
/// starting from zero (sine phase), as a struck plate or bar rings.
fn strike(out: &mut [f64], at_s: f64, modes: &[SynthMode], pulse_amplitude: f64) {
    let start = (at_s * FS) as usize;
    contact_pulse(out, FS, start, 0.8, pulse_amplitude);
    let from_zero: Vec<SynthMode> = modes
        .iter()
        .map(|m| SynthMode {
            phase_rad: m.phase_rad - PI / 2.0,
            ..*m
        })
        .collect();
    add_modes(out, FS, start, &from_zero);
}

fn with_noise(mut x: Vec<f64>, noise_rms: f64, seed: u64) -> Vec<f32> {
    let mut noise = NoiseGenerator::new(seed);
    for v in &mut x {
        *v += noise_rms * noise.gaussian();
    }
    to_f32_clipped(&x)
}

fn analyze(samples: &[f32]) -> RecordingReport {
    analyze_with_defaults(samples, FS)
}

fn reasons(report: &RecordingReport) -> Vec<Option<RejectReason>> {
    report.taps.iter().map(|t| t.rejected).collect()
}

/// Pairs 1 to 10 Hz apart, at the pitch of a struck bar's higher notes and
/// of a violin plate's mode 5, in four relative phases (which put the
/// first beat null anywhere in the record): every tap is kept.
#[test]
fn beating_pairs_are_not_double_strikes() {
    for (case, &centre_hz) in [452.0, 1318.0].iter().enumerate() {
        for &gap_hz in &[1.0, 2.0, 4.0, 6.0, 8.0, 10.0] {
            let mut x = vec![0.0; (6.5 * FS) as usize];
            for (tap, phase) in [0.0, 0.5 * PI, PI, 1.5 * PI].into_iter().enumerate() {
                let pair = [
                    SynthMode::new(centre_hz - gap_hz / 2.0, 120.0, 0.2),
                    SynthMode {
                        phase_rad: phase,
                        ..SynthMode::new(centre_hz + gap_hz / 2.0, 120.0, 0.17)
                    },
                ];
                strike(&mut x, 0.5 + 1.5 * tap as f64, &pair, 0.05);
            }
            let report = analyze(&with_noise(x, 1e-4, 10 * case as u64 + gap_hz as u64));
            assert_eq!(
                reasons(&report),
                vec![None; 4],
                "{centre_hz} Hz ± {} Hz",
                gap_hz / 2.0
            );
        }
    }
}

/// The same pair with nothing else, at equal strength (the deepest nulls,
/// where the envelope climbs back by tens of dB): still one tap each.
#[test]
fn deep_beat_nulls_are_not_double_strikes() {
    for &gap_hz in &[1.5, 3.0, 5.0, 9.0] {
        let mut x = vec![0.0; (5.0 * FS) as usize];
        for (tap, phase) in [0.3, 2.0, 4.0].into_iter().enumerate() {
            let pair = [
                SynthMode::new(600.0, 150.0, 0.2),
                SynthMode {
                    phase_rad: phase,
                    ..SynthMode::new(600.0 + gap_hz, 150.0, 0.2)
                },
            ];
            strike(&mut x, 0.5 + 1.5 * tap as f64, &pair, 0.05);
        }
        let report = analyze(&with_noise(x, 1e-4, 40 + gap_hz as u64));
        assert_eq!(reasons(&report), vec![None; 3], "{gap_hz} Hz");
    }
}

/// A closed body's first modes, 60–80 Hz apart with overlapping tails
/// (A0, CBR, B1−, B1+ at typical violin values, from memory), strong enough
/// that their envelope swings widely: one tap each.
#[test]
fn overlapping_body_modes_are_one_tap() {
    let body = [
        SynthMode::new(275.0, 18.0, 0.15),
        SynthMode::new(405.0, 30.0, 0.25),
        SynthMode::new(465.0, 25.0, 0.2),
        SynthMode::new(535.0, 40.0, 0.25),
    ];
    let mut x = vec![0.0; (5.0 * FS) as usize];
    for tap in 0..3 {
        strike(&mut x, 0.5 + 1.5 * tap as f64, &body, 0.05);
    }
    let report = analyze(&with_noise(x, 1e-4, 61));
    assert_eq!(reasons(&report), vec![None; 3]);
    assert_eq!(report.pass.modes.len(), 4, "{:?}", report.pass.modes);
}

fn plate(amplitude: f64) -> Vec<SynthMode> {
    vec![
        SynthMode::new(168.0, 45.0, amplitude * 0.5),
        SynthMode::new(338.0, 60.0, amplitude),
        SynthMode::new(486.0, 50.0, amplitude * 0.3),
        SynthMode::new(712.0, 70.0, amplitude * 0.2),
    ]
}

/// A second strike 20 to 150 ms after the first, as strong or a little
/// weaker (a mallet that bounced), is refused; the single strikes around it
/// are kept.
#[test]
fn second_strikes_are_double_strikes() {
    for &delay_ms in &[20.0, 35.0, 50.0, 80.0, 110.0, 150.0] {
        for &second in &[1.0, 0.6] {
            let mut x = vec![0.0; (4.5 * FS) as usize];
            strike(&mut x, 0.5, &plate(0.25), 0.05);
            strike(&mut x, 2.0, &plate(0.25), 0.05);
            strike(
                &mut x,
                2.0 + delay_ms / 1000.0,
                &plate(0.25 * second),
                0.05 * second,
            );
            strike(&mut x, 3.3, &plate(0.2), 0.04);
            let report = analyze(&with_noise(x, 1e-4, delay_ms as u64));
            assert_eq!(
                reasons(&report),
                vec![None, Some(RejectReason::DoubleStrike), None],
                "second strike {delay_ms} ms later at {second}×"
            );
        }
    }
}

/// A constant offset of up to ±0.3 full scale (a poor converter or a DC
/// coupled input) changes neither the taps found nor their modes.
#[test]
fn dc_offset_changes_nothing() {
    let recording = |offset: f64| {
        let mut x = vec![offset; (5.0 * FS) as usize];
        for (i, amplitude) in [0.2, 0.25, 0.22].into_iter().enumerate() {
            strike(&mut x, 0.6 + 1.4 * i as f64, &plate(amplitude), 0.05);
        }
        with_noise(x, 1e-4, 9)
    };
    let clean = analyze(&recording(0.0));
    assert_eq!(reasons(&clean), vec![None; 3]);
    assert_eq!(clean.pass.modes.len(), 4, "{:?}", clean.pass.modes);
    for offset in [-0.3, -0.1, 0.05, 0.1, 0.3] {
        let shifted = analyze(&recording(offset));
        assert_eq!(reasons(&shifted), reasons(&clean), "offset {offset}");
        for (a, b) in clean.taps.iter().zip(&shifted.taps) {
            assert!((a.onset_s - b.onset_s).abs() < 0.002, "offset {offset}");
        }
        assert_eq!(
            shifted.pass.modes.len(),
            clean.pass.modes.len(),
            "offset {offset}"
        );
        for (a, b) in clean.pass.modes.iter().zip(&shifted.pass.modes) {
            assert!(
                (a.frequency_hz - b.frequency_hz).abs() < 0.01,
                "offset {offset}: {a:?} vs {b:?}"
            );
            assert!(
                (a.q / b.q - 1.0).abs() < 0.005,
                "offset {offset}: {a:?} vs {b:?}"
            );
            assert!((a.level_db - b.level_db).abs() < 0.05, "offset {offset}");
        }
    }
}
