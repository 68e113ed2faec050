//! The engine on real strikes: a marimba, a xylophone, wood blocks, claves,
//! agogo bells and timbales, recorded in stereo by others (the FluidR3
//! General MIDI sound font; `tests/data/real/README.md`). Each channel of
//! each sample becomes the file: three copies of the strike, 0.3 s
//! of quiet before each, faint room noise.
//!
//! What must hold on every file: no strike refused and all three used; the
//! strongest peak of the strike's own long-window spectrum (computed here
//! with rustfft, not by the engine) listed; the two channels of wood and
//! tuned bars list the same modes; marimba and xylophone fundamentals on
//! their notes.

mod real;

use real::{Kind, RealSample};
use tapwright::analysis::{analyze_recording, PassMode, RecordingReport};

fn analyze(sample: &RealSample) -> RecordingReport {
    let file = real::three_strikes(sample, 1);
    analyze_recording(
        &file,
        sample.sample_rate_hz,
        &real::trigger_settings(),
        &real::analysis_settings(),
    )
}

/// Every file of the corpus with its report (analysed once per test).
fn reports() -> Vec<(RealSample, RecordingReport)> {
    real::load_corpus()
        .into_iter()
        .map(|sample| {
            let report = analyze(&sample);
            (sample, report)
        })
        .collect()
}

fn describe(modes: &[PassMode]) -> String {
    modes
        .iter()
        .map(|m| format!("{:.2} Hz Q {:.0} {:.1} dB", m.frequency_hz, m.q, m.level_db))
        .collect::<Vec<_>>()
        .join(", ")
}

/// No strike is refused and every one is found where it was put.
#[test]
fn every_strike_is_used() {
    let mut failures = Vec::new();
    for (sample, report) in reports() {
        let onsets: Vec<f64> = report.taps.iter().map(|t| t.onset_s).collect();
        let placed = real::strike_times_s();
        let found_each = onsets.len() == placed.len()
            && onsets
                .iter()
                .zip(&placed)
                .all(|(found, put)| (found - put).abs() < 0.01);
        if report.taps_used() != real::STRIKES || !found_each {
            failures.push(format!(
                "{}: {} of {} used, onsets {onsets:?}, refused {:?}",
                sample.file,
                report.taps_used(),
                real::STRIKES,
                report.rejected()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Peaks of the strike's own spectrum (a zero-padded FFT of the whole
/// sample, in this test) that are not listed: a peak counts as listed when
/// a mode lies within the peak's half-power half-width or the window's
/// resolution, whichever is wider. `all_prominent` adds, to the strongest
/// peak, every peak standing 6 dB above its surroundings within 20 dB of
/// it (the guarantee).
fn unlisted_peaks(
    sample: &RealSample,
    report: &RecordingReport,
    all_prominent: bool,
) -> Vec<String> {
    let peaks = real::long_fft_peaks(sample);
    peaks
        .iter()
        .enumerate()
        .filter(|(i, p)| *i == 0 || (all_prominent && p.level_db > -20.0 && p.prominence_db >= 6.0))
        .filter_map(|(_, peak)| {
            let reach_hz = peak.resolution_hz.max(peak.half_width_hz);
            let listed = report
                .pass
                .modes
                .iter()
                .any(|m| (m.frequency_hz - peak.frequency_hz).abs() <= reach_hz);
            (!listed).then(|| {
                format!(
                    "{}: peak {:.2} Hz ({:.1} dB, prominence {:.1} dB, ±{:.2} Hz) not in [{}]",
                    sample.file,
                    peak.frequency_hz,
                    peak.level_db,
                    peak.prominence_db,
                    reach_hz,
                    describe(&report.pass.modes)
                )
            })
        })
        .collect()
}

/// The strongest peak of every strike's own spectrum is a listed mode.
#[test]
fn strongest_peak_is_listed() {
    let failures: Vec<String> = reports()
        .iter()
        .flat_map(|(sample, report)| unlisted_peaks(sample, report, false))
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The full guarantee on wood and bars: every peak standing 6 dB
/// above its surroundings within 20 dB of the strongest is listed.
#[test]
fn every_prominent_peak_is_listed() {
    let failures: Vec<String> = reports()
        .iter()
        .filter(|(sample, _)| sample.is_wood_or_bar())
        .flat_map(|(sample, report)| unlisted_peaks(sample, report, true))
        .collect();
    assert!(
        failures.is_empty(),
        "{} unlisted:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

/// The same strike heard by two microphones gives the same modes: every
/// mode within 20 dB of the strongest in one channel is listed in the
/// other within max(0.3 Hz, 0.05 %) (the criterion). Wood and
/// tuned bars only: the timbales' drum heads and the agogo bells are left
/// out, as the issue allows, because their pitch moves with amplitude (a
/// membrane's tension rises with its displacement; common practice, no
/// source) and their two channels were recorded at different levels
/// (the timbale's right channel is 4.6 dB weaker at the peak).
#[test]
fn both_channels_list_the_same_modes() {
    let all = reports();
    let mut failures = Vec::new();
    let mut pairs = 0;
    for (sample, report) in all.iter().filter(|(s, _)| s.is_wood_or_bar()) {
        let Some(other_name) = sample.pair_name() else {
            continue;
        };
        let Some((_, other)) = all.iter().find(|(s, _)| s.file == other_name) else {
            continue;
        };
        pairs += 1;
        let strongest = report
            .pass
            .modes
            .iter()
            .map(|m| m.level_db)
            .fold(f64::MIN, f64::max);
        for mode in report
            .pass
            .modes
            .iter()
            .filter(|m| m.level_db > strongest - 20.0)
        {
            let reach_hz = 0.3f64.max(0.0005 * mode.frequency_hz);
            let matched = other
                .pass
                .modes
                .iter()
                .any(|m| (m.frequency_hz - mode.frequency_hz).abs() <= reach_hz);
            if !matched {
                failures.push(format!(
                    "{}: {:.2} Hz ({:.1} dB) not in {other_name}: [{}]",
                    sample.file,
                    mode.frequency_hz,
                    mode.level_db,
                    describe(&other.pass.modes)
                ));
            }
        }
    }
    assert_eq!(pairs, 38, "wood and bar files, each compared with its pair");
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// Marimba and xylophone fundamentals within 30 cents of their notes: the
/// note of each sample is its MIDI root key in twelve-tone equal
/// temperament from A4 = 440 Hz (ISO 16:1975); cents = 1200·log2(f/f_ref).
/// (The font's sample names call each note an octave higher; the root
/// keys match what an independent FFT of each sample shows.)
#[test]
fn bar_fundamentals_are_on_their_notes() {
    let mut failures = Vec::new();
    for (sample, report) in reports().iter().filter(|(s, _)| s.kind == Kind::Pitched) {
        let note_hz = sample.note_hz();
        let nearest = report.pass.modes.iter().min_by(|a, b| {
            let cents = |m: &PassMode| (1200.0 * (m.frequency_hz / note_hz).log2()).abs();
            cents(a).total_cmp(&cents(b))
        });
        let cents = nearest.map(|m| 1200.0 * (m.frequency_hz / note_hz).log2());
        if !cents.is_some_and(|c| c.abs() <= 30.0) {
            failures.push(format!(
                "{}: note {note_hz:.2} Hz, nearest mode {cents:?} cents: [{}]",
                sample.file,
                describe(&report.pass.modes)
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
