//! `tapwright drive` end to end through real ALSA, with no sound card: a
//! temporary HOME whose `.asoundrc` makes the default playback device a
//! `plug` (converting to 16-bit mono at 48 kHz) in front of the ALSA
//! `file` plug-in over the `null` device, so what tapwright plays is
//! written to a raw file. The test reads the file back and checks the
//! frequency, the level cap, the fades and the length.
//!
//! The `null` device has no clock: it takes samples as fast as they come,
//! so a 2 s tone is written in a fraction of a second. tapwright times its
//! tones in samples, not wall time, so the file is the same as on a real
//! device. After the tone the file holds the silent tail tapwright plays
//! before it closes the stream (and whatever silence the device took
//! meanwhile).
//!
//! Needs the ALSA library and its configuration (`libasound2`, installed by
//! `.ci/setup`). Without them the test fails with a message saying so.
#![cfg(target_os = "linux")]

mod common;
use common::alsa::{self, run_tapwright};

use std::path::{Path, PathBuf};
use std::time::Duration;

use tapwright::analysis::fit_sine;

const FS: f64 = 48_000.0;
/// Full scale of the 16-bit file: ALSA converts float to S16 as x · 32768.
const FULL_SCALE: f64 = 32_768.0;

/// The default playback device: a plug converting whatever tapwright asks
/// for to S16_LE mono 48 kHz, into the `file` plug-in writing `raw`.
fn asoundrc(raw: &Path) -> String {
    format!(
        r#"pcm.!default {{
    type plug
    slave {{
        pcm "drive_file"
        format S16_LE
        rate 48000
        channels 1
    }}
}}
pcm.drive_file {{
    type file
    slave.pcm "null"
    file "{}"
    format "raw"
}}
"#,
        raw.display()
    )
}

/// Runs `tapwright drive` with `args` under `home` (at most a minute).
fn drive(home: &Path, args: &[&str]) -> alsa::Run {
    alsa::run_subcommand(home, "drive", args)
}

/// A temporary HOME whose default playback device writes to `out.raw`.
fn file_device_home() -> (tempfile::TempDir, PathBuf) {
    alsa::check_alsa_installed("drive");
    let home = tempfile::tempdir().expect("temp HOME");
    let raw = home.path().join("out.raw");
    std::fs::write(home.path().join(".asoundrc"), asoundrc(&raw)).expect("write .asoundrc");
    (home, raw)
}

/// The file's samples, full scale ±1.
fn read_s16(path: &Path) -> Vec<f64> {
    let bytes = std::fs::read(path)
        .unwrap_or_else(|e| panic!("tapwright wrote nothing to {}: {e}", path.display()));
    bytes
        .chunks_exact(2)
        .map(|b| f64::from(i16::from_le_bytes([b[0], b[1]])) / FULL_SCALE)
        .collect()
}

fn db_to_gain(level_db: f64) -> f64 {
    10f64.powf(level_db / 20.0)
}

/// The played tone: from the first to the last sample that is not zero.
fn sounding(samples: &[f64]) -> &[f64] {
    let first = samples.iter().position(|x| *x != 0.0).expect("some sound");
    let last = samples.iter().rposition(|x| *x != 0.0).expect("some sound");
    &samples[first..=last]
}

fn max_step(samples: &[f64]) -> f64 {
    samples
        .windows(2)
        .map(|w| (w[1] - w[0]).abs())
        .fold(0.0, f64::max)
}

fn peak(samples: &[f64]) -> f64 {
    samples.iter().map(|x| x.abs()).fold(0.0, f64::max)
}

#[test]
fn drive_writes_the_asked_tone_with_fades_through_the_alsa_file_device() {
    let (home, raw) = file_device_home();
    let run = drive(
        home.path(),
        &["--hz", "233.3", "--seconds", "2", "--level-db", "-12"],
    );
    assert_eq!(
        run.code,
        Some(0),
        "tapwright drive failed through the ALSA file device (is ALSA installed? bash .ci/setup)\nstderr:\n{}",
        run.stderr
    );
    assert!(run.stderr.contains("Caution"), "{}", run.stderr);
    assert!(run.stdout.contains("233.300 Hz"), "{}", run.stdout);

    let samples = read_s16(&raw);
    let tone = sounding(&samples);
    // 2 s in all, within a few samples (the fades start and end near zero,
    // so the first and last non-zero samples sit a little inside).
    let length_s = tone.len() as f64 / FS;
    assert!(
        (length_s - 2.0).abs() < 0.01,
        "the tone lasted {length_s} s"
    );

    // The steady part (after the 0.25 s fade-in, before the fade-out),
    // fitted by a four-parameter sine fit (IEEE Std 1057 method).
    let steady = &tone[(0.35 * FS) as usize..(1.65 * FS) as usize];
    let fit = fit_sine(steady, FS).expect("a sine in the steady part");
    assert!(
        (fit.frequency_hz - 233.3).abs() < 0.01,
        "the file holds {} Hz",
        fit.frequency_hz
    );
    let cap = db_to_gain(-12.0);
    assert!(
        (fit.amplitude / cap - 1.0).abs() < 0.001,
        "level {} dBFS",
        20.0 * fit.amplitude.log10()
    );
    // Never above the cap, allowing one step of 16-bit rounding.
    assert!(
        peak(&samples) <= cap + 1.0 / FULL_SCALE,
        "peak {} dBFS above the -12 dBFS cap",
        20.0 * peak(&samples).log10()
    );

    // No click: no step between samples larger than the steady sine's own
    // largest step, 2·A·sin(π f / fs) (analytic), plus two 16-bit steps.
    let sine_step = 2.0 * cap * (std::f64::consts::PI * 233.3 / FS).sin();
    let bound = sine_step + 2.0 / FULL_SCALE;
    assert!(
        max_step(&samples) <= bound,
        "a step of {} where the tone itself moves at most {bound}",
        max_step(&samples)
    );
    // The fades start and end quietly: the first and last 5 ms are below
    // -40 dB of the level (a raised cosine over 0.25 s reaches 1 % at
    // about 16 ms).
    let ms5 = (0.005 * FS) as usize;
    assert!(peak(&tone[..ms5]) < 0.01 * cap, "a loud start");
    assert!(peak(&tone[tone.len() - ms5..]) < 0.01 * cap, "a loud end");
}

#[test]
fn a_level_above_the_cap_is_refused_and_nothing_is_played() {
    let (home, raw) = file_device_home();
    let run = drive(
        home.path(),
        &["--hz", "233.3", "--seconds", "2", "--level-db", "-6"],
    );
    assert_eq!(run.code, Some(2), "stderr:\n{}", run.stderr);
    let last = run.stderr.lines().last().unwrap_or_default();
    assert!(last.starts_with("tapwright: "), "{last}");
    assert!(
        last.contains("--level-db") && last.contains("-12"),
        "{last}"
    );
    assert!(run.stdout.is_empty(), "{}", run.stdout);
    // Refused before the device was opened: no file at all.
    assert!(!raw.exists(), "something was played");
}

#[test]
fn a_lower_cap_holds_a_swept_tone_below_it() {
    let (home, raw) = file_device_home();
    let run = drive(
        home.path(),
        &[
            "--hz",
            "440",
            "--seconds",
            "3",
            "--level-db",
            "-20",
            "--cap-db",
            "-20",
            "--sweep-hz",
            "5",
            "--sweep-period-s",
            "2",
        ],
    );
    assert_eq!(run.code, Some(0), "stderr:\n{}", run.stderr);
    let samples = read_s16(&raw);
    let cap = db_to_gain(-20.0);
    assert!(peak(&samples) <= cap + 1.0 / FULL_SCALE);
    // The sweep moves the frequency between 435 and 445 Hz: the fastest
    // sine sets the largest step, and no click exceeds it.
    let bound = 2.0 * cap * (std::f64::consts::PI * 445.0 / FS).sin() + 2.0 / FULL_SCALE;
    assert!(max_step(&samples) <= bound);
    // Over one whole sweep period (2 s) the mean frequency is the centre:
    // count rising zero crossings over exactly 0.5–2.5 s.
    let tone = sounding(&samples);
    let part = &tone[(0.5 * FS) as usize..(2.5 * FS) as usize];
    let mean_hz = tapwright::analysis::zero_crossing_hz(part, FS).expect("crossings");
    assert!((mean_hz - 440.0).abs() < 0.2, "mean {mean_hz} Hz");
}

#[test]
fn bad_values_and_a_missing_device_get_one_sentence_and_exit_2() {
    let (home, _raw) = file_device_home();
    let cases: [(&[&str], &str); 5] = [
        (&["drive", "--hz", "5", "--seconds", "2"], "--hz"),
        (&["drive", "--hz", "nan", "--seconds", "2"], "--hz"),
        (&["drive", "--hz", "200", "--seconds", "0.1"], "--seconds"),
        (&["drive", "--hz", "200", "--cap-db", "0"], "--cap-db"),
        (
            &[
                "drive",
                "--hz",
                "200",
                "--seconds",
                "1",
                "--device",
                "no such loudspeaker",
            ],
            "no such loudspeaker",
        ),
    ];
    for (args, expected) in cases {
        let run = run_tapwright(home.path(), args, Duration::from_secs(60));
        assert_eq!(run.code, Some(2), "{args:?}\nstderr:\n{}", run.stderr);
        let last = run.stderr.lines().last().unwrap_or_default();
        assert!(
            last.starts_with("tapwright: ") && last.contains(expected) && last.ends_with('.'),
            "{args:?}: {last}"
        );
        assert!(run.stdout.is_empty(), "{args:?}: {}", run.stdout);
    }
}
