//! How much lossy coding smears short decays: the taps of the accuracy
//! tests (tests/encoded_fixtures/mod.rs) through AAC-LC at 128 kb/s (M4A) and MP3
//! at 192 kb/s, each tap measured from the same record (its known strike,
//! 100 ms before it, 1 s after) in the decoded file and in the 16-bit WAV
//! original. The figures printed here (`cargo test --test lossy_decay --
//! --nocapture`) are the ones in README.md ("Files tapwright reads").

mod encoded_fixtures;

use encoded_fixtures::{accuracy_source, fixture};
use tapwright::analysis::{AnalysisSettings, Mode, TapAnalyzer};
use tapwright::wav_io::{read_mono, MonoRecording};

const PRE_MS: f64 = 100.0;
const RECORD_MS: f64 = 1000.0;

/// Frequency and Q differences of one mode, decoded against original.
struct Smear {
    tap: usize,
    frequency_hz: f64,
    frequency_error_hz: f64,
    q_error_percent: f64,
}

/// The modes of each tap of `recording`, each measured from its record.
fn modes_per_tap(recording: &MonoRecording, onsets_s: &[f64]) -> Vec<Vec<Mode>> {
    let fs = f64::from(recording.sample_rate_hz);
    let mut analyzer = TapAnalyzer::new(AnalysisSettings::default(), fs);
    onsets_s
        .iter()
        .map(|&at_s| {
            let onset = (at_s * fs).round() as usize;
            let start = onset - (PRE_MS * 1e-3 * fs) as usize;
            let end = (onset + (RECORD_MS * 1e-3 * fs) as usize).min(recording.samples.len());
            analyzer
                .analyze_record(&recording.samples[start..end], onset - start)
                .modes
        })
        .collect()
}

/// Each mode of the original against the nearest mode of the decoded tap.
fn smears(original: &[Vec<Mode>], decoded: &[Vec<Mode>]) -> Vec<Smear> {
    let mut out = Vec::new();
    for (tap, (before, after)) in original.iter().zip(decoded).enumerate() {
        for mode in before {
            let nearest = after
                .iter()
                .min_by(|a, b| {
                    let da = (a.frequency_hz - mode.frequency_hz).abs();
                    da.total_cmp(&(b.frequency_hz - mode.frequency_hz).abs())
                })
                .unwrap_or_else(|| panic!("tap {}: no mode at all", tap + 1));
            out.push(Smear {
                tap: tap + 1,
                frequency_hz: mode.frequency_hz,
                frequency_error_hz: nearest.frequency_hz - mode.frequency_hz,
                q_error_percent: 100.0 * (nearest.q / mode.q - 1.0),
            });
        }
    }
    out
}

fn median(mut values: Vec<f64>) -> f64 {
    values.sort_by(f64::total_cmp);
    let n = values.len();
    if n % 2 == 1 {
        values[n / 2]
    } else {
        0.5 * (values[n / 2 - 1] + values[n / 2])
    }
}

/// Worst and median (typical) absolute frequency error (Hz) and Q error (%).
fn summary(smears: &[Smear]) -> (f64, f64, f64, f64) {
    let df: Vec<f64> = smears.iter().map(|s| s.frequency_error_hz.abs()).collect();
    let dq: Vec<f64> = smears.iter().map(|s| s.q_error_percent.abs()).collect();
    (
        df.iter().copied().fold(0.0, f64::max),
        median(df),
        dq.iter().copied().fold(0.0, f64::max),
        median(dq),
    )
}

/// The figures for README.md, and limits that hold them with some room:
/// worst frequency error within 0.5 Hz and worst Q error within 10 %
/// (about the spread of Q between taps of one plate; common practice, no
/// source), typical (median) within 0.05 Hz and 2 %.
#[test]
fn aac_and_mp3_smear_short_decays_only_a_little() {
    let source = accuracy_source();
    let onsets_s: Vec<f64> = source.taps.iter().map(|t| t.at_s).collect();
    let original = modes_per_tap(&source.original(), &onsets_s);
    // The original itself finds every mode of the truth (the accuracy tests'
    // own targets are stricter).
    for (tap, truth) in original.iter().zip(&source.taps) {
        assert_eq!(tap.len(), truth.modes.len(), "{tap:?}");
    }
    for (name, what) in [
        ("accuracy_aac128.m4a", "AAC-LC 128 kb/s"),
        ("accuracy_mp3_192.mp3", "MP3 192 kb/s"),
    ] {
        let decoded = read_mono(&fixture(name)).unwrap();
        assert_eq!(decoded.sample_rate_hz, source.sample_rate_hz);
        let smears = smears(&original, &modes_per_tap(&decoded, &onsets_s));
        println!("{what} ({name}): mode, frequency error, Q error");
        for s in &smears {
            println!(
                "  tap {} {:8.2} Hz  {:+.3} Hz  {:+.2} %",
                s.tap, s.frequency_hz, s.frequency_error_hz, s.q_error_percent
            );
        }
        let (worst_hz, typical_hz, worst_q, typical_q) = summary(&smears);
        println!(
            "  worst {worst_hz:.3} Hz, {worst_q:.2} %; typical (median) {typical_hz:.3} Hz, {typical_q:.2} %"
        );
        assert!(worst_hz <= 0.5 && worst_q <= 10.0, "{what}: worst");
        assert!(typical_hz <= 0.05 && typical_q <= 2.0, "{what}: typical");
    }
}
