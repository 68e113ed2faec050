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
mod real;
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

/// A decay stopped short, as when the maker lays a hand on the plate, a
/// recording is cut at a loud point, or a sampled instrument's data end,
/// is unforetold sound too, but nothing rings after it: one tap, never a
/// double strike. The sound stops within 0 to 20 ms here, 60 to 400 ms
/// after the strike (common practice, no source); the second strikes of
/// `second_strikes_are_double_strikes`, which ring on, are still refused.
#[test]
fn a_decay_stopped_short_is_not_a_double_strike() {
    for &stop_ms in &[0.0, 1.0, 5.0, 20.0] {
        for &after_ms in &[60.0, 150.0, 400.0] {
            let mut x = vec![0.0; (3.5 * FS) as usize];
            strike(&mut x, 0.5, &plate(0.25), 0.05);
            strike(&mut x, 2.0, &plate(0.25), 0.05);
            let from = ((0.5 + after_ms / 1000.0) * FS) as usize;
            let ramp = ((stop_ms / 1000.0 * FS) as usize).max(1);
            for (i, v) in x[from..(2.0 * FS) as usize - 1].iter_mut().enumerate() {
                *v *= if i < ramp {
                    0.5 + 0.5 * (PI * i as f64 / ramp as f64).cos()
                } else {
                    0.0
                };
            }
            let report = analyze(&with_noise(x, 1e-4, 70 + after_ms as u64));
            assert_eq!(
                reasons(&report),
                vec![None, None],
                "stopped {after_ms} ms after the strike within {stop_ms} ms"
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

/// The first tap at point 7B of the bundled roving-tap demo set is one
/// clean synthetic strike (a click, then the plate's modes, 50 dB over the
/// room noise). It was refused as a double strike: a predictor refitted
/// where the decay is weak and its low modes barely resolved has large
/// coefficients, and the room noise through it was taken for new sound.
/// Both taps of every point are kept now.
#[test]
fn every_tap_of_the_demo_set_is_kept() {
    let folder = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/roving_violin_top");
    let mut names: Vec<_> = std::fs::read_dir(&folder)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "wav"))
        .collect();
    names.sort();
    assert_eq!(names.len(), 45);
    for path in names {
        let recording = tapwright::wav_io::read_mono(&path).unwrap();
        let found = tapwright::shapes::taps_in_recording(
            &recording.samples,
            f64::from(recording.sample_rate_hz),
            &tapwright::shapes::roving_trigger_settings(),
        );
        assert_eq!(
            (found.accepted.len(), found.rejected.as_slice()),
            (2, &[][..]),
            "{}",
            path.display()
        );
    }
}

/// A slow rise: the plate's modes grow linearly over 25 ms (a soft
/// mallet, or a resonator taking up the sound) before they decay, in a
/// noisy room (RMS 2e-3, 42 dB under the sound). The sound clears the
/// 20 dB margin 2 ms after the rise starts, so the block that fires the
/// trigger starts 1–2 ms late; the record's strike is put where the sound
/// first stands out of the noise (there the rise is 0.2 ms old), within
/// 0.5 ms of the rise's known start (common practice, no source).
#[test]
fn a_slow_rise_starts_where_it_leaves_the_noise() {
    let rise_s = 0.025;
    let starts_s = [0.6, 1.9003, 3.20071];
    let mut x = vec![0.0; (4.5 * FS) as usize];
    for &at_s in &starts_s {
        let start = (at_s * FS).round() as usize;
        let mut strike = vec![0.0; (1.2 * FS) as usize];
        add_modes(&mut strike, FS, 0, &plate(0.3));
        for (n, v) in strike.iter_mut().enumerate() {
            *v *= (n as f64 / (rise_s * FS)).min(1.0);
        }
        for (o, s) in x[start..].iter_mut().zip(&strike) {
            *o += s;
        }
    }
    let report = analyze(&with_noise(x, 2e-3, 71));
    assert_eq!(reasons(&report), vec![None; 3]);
    for (tap, &at_s) in report.taps.iter().zip(&starts_s) {
        let start_s = (at_s * FS).round() / FS;
        assert!(
            (tap.onset_s - start_s).abs() <= 0.0005,
            "onset {:.5} s for a rise from {start_s:.5} s",
            tap.onset_s
        );
    }
}

/// A faint precursor 3 ms before a strike (an encoder's pre-echo, a brush
/// of the mallet) that rises past half the margin and falls back: part of
/// the strike, not a too-quiet tap, and the strike's record starts at the
/// strike, not 100 ms later.
#[test]
fn a_precursor_is_part_of_its_strike() {
    let onset_s = onset_after_precursor(5e-4, 5);
    assert!((onset_s - PRECURSOR_STRIKE_S).abs() < 0.004, "{onset_s}");
}

const PRECURSOR_STRIKE_S: f64 = 1.0;

/// A strike at [`PRECURSOR_STRIKE_S`] after a 1 ms burst of noise of RMS
/// `precursor_rms` 3 ms before it, in room noise of RMS 1e-4: the onset of
/// its one tap, which must be kept.
fn onset_after_precursor(precursor_rms: f64, seed: u64) -> f64 {
    let mut x = vec![0.0; (3.0 * FS) as usize];
    let precursor = ((PRECURSOR_STRIKE_S - 0.003) * FS) as usize;
    let mut noise = NoiseGenerator::new(seed);
    for v in &mut x[precursor..precursor + 48] {
        *v += precursor_rms * noise.gaussian();
    }
    strike(&mut x, PRECURSOR_STRIKE_S, &plate(0.25), 0.05);
    let report = analyze(&with_noise(x, 1e-4, 70 + seed));
    assert_eq!(reasons(&report), vec![None]);
    report.taps[0].onset_s
}

/// A recording that starts with digital silence (a decoder's priming, an
/// edit's padding) and then the room: the rise from silence to the room
/// noise is no tap, and the first strike is found where it is.
#[test]
fn a_start_in_digital_silence_is_no_tap() {
    let mut x = vec![0.0; (3.0 * FS) as usize];
    strike(&mut x, 0.4, &plate(0.25), 0.05);
    strike(&mut x, 1.7, &plate(0.25), 0.05);
    let mut samples = with_noise(x, 3e-4, 73);
    let silent = (0.03 * FS) as usize;
    samples[..silent].iter_mut().for_each(|v| *v = 0.0);
    samples[silent..silent + 200]
        .iter_mut()
        .enumerate()
        .for_each(|(i, v)| *v *= i as f32 / 200.0);
    let report = analyze(&samples);
    assert_eq!(reasons(&report), vec![None; 2]);
    assert!((report.taps[0].onset_s - 0.4).abs() < 0.002);
}

/// A precursor loud enough to fire the trigger (a click 30 dB over the
/// room, 3 ms before the strike: an encoder's pre-echo, a brush of the
/// mallet) and then the strike, 40 dB louder still: the record starts
/// again at the strike, which it measures from where it rises.
#[test]
fn a_loud_precursor_restarts_the_record_at_the_strike() {
    let onset_s = onset_after_precursor(3e-3, 6);
    assert!((onset_s - PRECURSOR_STRIKE_S).abs() <= 0.0005, "{onset_s}");
}

/// Every real strike of the corpus (`tests/data/real/`, in the issue's
/// three-strike files) is recorded from where it starts: no later than
/// 0.5 ms after its first sample standing 3× over the room noise's RMS
/// (common practice, no source), and no more than 2 ms before it (a faint
/// lead-in under that mark is part of the strike). A drum's strike climbs
/// 20 dB within a few milliseconds of its first block and is not a
/// precursor followed by a strike: its record is not started again.
#[test]
fn real_strikes_are_recorded_from_their_start() {
    let mut late = Vec::new();
    for sample in real::load_corpus() {
        let fs = sample.sample_rate_hz;
        let file = real::three_strikes(&sample, 1);
        let report = tapwright::analysis::find_taps(&file, fs, &real::trigger_settings());
        let standing = 3.0 * real::ROOM_NOISE_RMS / real::PLAYBACK_GAIN;
        let first_s = sample
            .samples
            .iter()
            .position(|x| f64::from(x.abs()) > standing)
            .unwrap_or(0) as f64
            / fs;
        for (tap, placed_s) in report.iter().zip(real::strike_times_s()) {
            let error_ms = (tap.onset_sample() as f64 / fs - placed_s - first_s) * 1e3;
            if !(-2.0..=0.5).contains(&error_ms) {
                late.push(format!("{}: {error_ms:+.2} ms", sample.file));
            }
        }
    }
    assert!(late.is_empty(), "{late:?}");
}
