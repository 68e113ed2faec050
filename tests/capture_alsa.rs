//! End to end through real ALSA, with no sound card: the test makes a raw
//! 16-bit recording of taps with known modes, points the default ALSA
//! capture device at it (a `file` plug-in reading the recording over the
//! `null` device), runs `tapwright listen --json` under a temporary HOME,
//! and checks that the taps and their modes come back.
//!
//! Needs the ALSA library and its configuration (`libasound2`, installed by
//! `.ci/setup` with `libasound2-dev alsa-utils`). Without them the test fails
//! with a message saying so; it never passes silently.
//!
//! How the `file` plug-in behaves (alsa-lib 1.2.8, checked with `arecord`
//! and a small C reader): it delivers the recording as fast as the reader
//! takes it (no real-time pacing: the `null` slave has no clock), and after
//! the end of the file every read still "succeeds" but leaves the reader's
//! buffer as it was, so the last period of the file repeats for ever, again
//! as fast as it is read. (The current alsa-lib source returns 0 frames
//! instead, which makes cpal's ALSA thread loop without end; tapwright
//! closes streams on a helper thread and leaves such a one behind rather
//! than hang.) tapwright's ring (20 s by default) holds the whole burst; the
//! repeats that follow overrun it and are counted, and the recording ends
//! with quiet so that the repeated period is quiet too.
#![cfg(target_os = "linux")]

mod common;
use common::alsa::{self, run_tapwright};

use std::path::Path;
use std::time::Duration;

use tapwright::analysis::synth::{add_modes, contact_pulse, NoiseGenerator, SynthMode};

const FS: u32 = 48_000;
/// The plate's modes: the truth the report must find (analytic, no outside source).
const TRUE_MODES: [(f64, f64, f64); 3] = [
    (185.0, 40.0, 0.12),
    (352.0, 55.0, 0.20),
    (590.0, 50.0, 0.08),
];
/// Strike times (s) and strengths; the strike at 2.5 s bounces at 2.64 s.
const STRIKES: [(f64, f64); 5] = [(1.0, 1.0), (2.5, 0.9), (4.0, 1.1), (5.5, 0.85), (7.0, 1.0)];
const BOUNCE: (f64, f64) = (2.64, 0.8);
const LENGTH_S: f64 = 11.0;

fn synthesize_taps() -> Vec<i16> {
    let fs = f64::from(FS);
    let mut out = vec![0.0f64; (LENGTH_S * fs) as usize];
    let mut random = NoiseGenerator::new(0xA15A);
    let modes_at = |strength: f64, random: &mut NoiseGenerator| -> Vec<SynthMode> {
        TRUE_MODES
            .iter()
            .map(|&(f, q, a)| SynthMode {
                phase_rad: 2.0 * std::f64::consts::PI * random.uniform(),
                ..SynthMode::new(f, q, a * strength)
            })
            .collect()
    };
    for &(at_s, strength) in STRIKES.iter().chain(std::iter::once(&BOUNCE)) {
        let start = (at_s * fs) as usize;
        contact_pulse(&mut out, fs, start, 0.8, 0.1 * strength);
        let modes = modes_at(strength, &mut random);
        add_modes(&mut out, fs, start, &modes);
    }
    for x in &mut out {
        *x += 3e-4 * random.gaussian();
    }
    out.iter()
        .map(|&x| (x.clamp(-1.0, 1.0) * 32767.0).round() as i16)
        .collect()
}

fn write_raw(path: &Path, samples: &[i16]) {
    let bytes: Vec<u8> = samples.iter().flat_map(|s| s.to_le_bytes()).collect();
    std::fs::write(path, bytes).expect("write the raw recording");
}

/// The default capture device reads `raw` through the `file` plug-in,
/// over the `null` device (which accepts any format and has no clock).
///
/// The `file` plug-in reads `infile` only when the program reads it
/// directly (`snd_pcm_readi`, which cpal uses); put behind a converting
/// `plug` it is read through mmap and the samples come out wrong. So there
/// is no conversion: the program must ask for exactly the file's format.
/// tapwright asks a device that offers everything for 16-bit mono at
/// 48 kHz (see `choose_config` in src/audio/device.rs), which is the
/// file's format.
fn asoundrc(raw: &Path) -> String {
    format!(
        r#"pcm.!default {{
    type file
    slave.pcm "null"
    file "/dev/null"
    infile "{}"
    format "raw"
}}
"#,
        raw.display()
    )
}

fn check_alsa_installed() {
    alsa::check_alsa_installed("capture");
}

/// Runs `tapwright listen` with `args` under `home` (at most a minute).
fn listen(home: &Path, args: &[&str]) -> alsa::Run {
    alsa::run_subcommand(home, "listen", args)
}

/// A HOME whose default capture device points at a card that does not
/// exist.
fn home_without_a_sound_card() -> tempfile::TempDir {
    alsa::home_with("pcm.!default { type hw card 97 }\n")
}

#[test]
fn listen_reads_taps_from_the_alsa_file_device() {
    check_alsa_installed();
    let home = tempfile::tempdir().expect("temp HOME");
    let raw = home.path().join("taps_s16le_48k_mono.raw");
    write_raw(&raw, &synthesize_taps());
    std::fs::write(home.path().join(".asoundrc"), asoundrc(&raw)).expect("write .asoundrc");
    let wav_dir = home.path().join("taps");
    let wav_dir_text = wav_dir.to_string_lossy().into_owned();

    let run = run_tapwright(
        home.path(),
        &[
            "listen",
            "--taps",
            "4",
            "--seconds",
            "30",
            "--json",
            "--save-wav",
            &wav_dir_text,
        ],
        Duration::from_secs(90),
    );
    assert_eq!(
        run.code,
        Some(0),
        "tapwright listen failed through the ALSA file device (is ALSA installed? bash .ci/setup)\nstderr:\n{}",
        run.stderr
    );
    let report: serde_json::Value = serde_json::from_str(&run.stdout).unwrap_or_else(|e| {
        panic!(
            "listen --json printed no JSON ({e}):\n{}\nstderr:\n{}",
            run.stdout, run.stderr
        )
    });

    // Five strikes heard: four clean, the bounced one rejected.
    assert_eq!(report["sample_rate_hz"], 48_000.0, "{report}");
    assert_eq!(report["taps_found"], 5, "{report}\nstderr:\n{}", run.stderr);
    assert_eq!(report["taps_used"], 4, "{report}");
    assert_eq!(
        report["taps_rejected"],
        serde_json::json!([{ "index": 2, "reason": "double_strike" }]),
        "{report}"
    );

    // Every synthesised mode comes back within 0.3 % (the truth is the
    // synthesis itself; 16-bit quantisation and noise at -70 dBFS).
    let modes = report["modes"].as_array().expect("modes array");
    for &(frequency_hz, q, _) in &TRUE_MODES {
        let found = modes
            .iter()
            .filter_map(|m| {
                Some((
                    m["frequency_hz"].as_f64()?,
                    m["q"].as_f64()?,
                    m["taps_seen"].as_u64()?,
                ))
            })
            .find(|&(f, _, _)| (f - frequency_hz).abs() < 0.003 * frequency_hz);
        let (_, found_q, taps_seen) =
            found.unwrap_or_else(|| panic!("mode {frequency_hz} Hz not found in {report}"));
        assert_eq!(
            taps_seen, 4,
            "mode {frequency_hz} Hz seen in {taps_seen} taps"
        );
        assert!(
            (found_q - q).abs() < 0.15 * q,
            "mode {frequency_hz} Hz: Q {found_q} vs {q}"
        );
    }

    // --save-wav kept every tap, accepted or not, as a readable WAV.
    for index in 1..=5 {
        let path = wav_dir.join(format!("tap_{index:03}.wav"));
        let tap = tapwright::wav_io::read_mono(&path)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        assert_eq!(tap.sample_rate_hz, FS);
        assert!(
            tap.samples.len() > FS as usize / 2,
            "{} is too short",
            path.display()
        );
    }
}

#[test]
fn devices_lists_the_alsa_default() {
    check_alsa_installed();
    let home = tempfile::tempdir().expect("temp HOME");
    let raw = home.path().join("quiet.raw");
    write_raw(&raw, &vec![0i16; FS as usize]);
    std::fs::write(home.path().join(".asoundrc"), asoundrc(&raw)).expect("write .asoundrc");
    let run = run_tapwright(home.path(), &["devices"], Duration::from_secs(60));
    assert_eq!(run.code, Some(0), "stderr:\n{}", run.stderr);
    let default_line = run
        .stdout
        .lines()
        .find(|line| line.starts_with('*'))
        .unwrap_or_else(|| {
            panic!(
                "no default device marked in:\n{}\nstderr:\n{}",
                run.stdout, run.stderr
            )
        });
    assert!(default_line.contains("(default)"), "{default_line}");
}

#[test]
fn listen_without_an_input_device_says_so() {
    check_alsa_installed();
    // A default capture device that points at a card that does not exist.
    let home = home_without_a_sound_card();
    let run = listen(home.path(), &["--taps", "1", "--seconds", "2"]);
    assert_eq!(
        run.code,
        Some(2),
        "stdout:\n{}\nstderr:\n{}",
        run.stdout,
        run.stderr
    );
    let last = run.stderr.lines().last().unwrap_or_default();
    assert!(last.starts_with("tapwright: "), "{last}");
    assert!(last.contains("input"), "{last}");
    assert!(run.stdout.is_empty(), "{}", run.stdout);
}

#[test]
fn without_a_sound_card_alsa_prints_nothing_of_its_own() {
    check_alsa_installed();
    // A default device on a card that does not exist: alsa-lib's own
    // error printing would add lines such as "ALSA lib pcm.c:...".
    let home = home_without_a_sound_card();
    for args in [
        &["devices"][..],
        &["listen", "--taps", "1", "--seconds", "2"][..],
    ] {
        let run = run_tapwright(home.path(), args, Duration::from_secs(60));
        assert!(
            !run.stderr.contains("ALSA lib"),
            "{args:?}:\n{}",
            run.stderr
        );
        for line in run.stderr.lines() {
            assert!(line.starts_with("tapwright: "), "{args:?}: {line}");
        }
    }
}

#[test]
fn the_null_device_is_named_for_what_it_is_not_as_losing_samples() {
    check_alsa_installed();
    let home = tempfile::tempdir().expect("temp HOME");
    // ALSA's `null` capture device returns zeros as fast as they are read
    // (alsa-lib pcm_null.c: it has no clock): far faster than real time,
    // so the ring overfills at once. That is not sound the computer lost.
    let run = listen(
        home.path(),
        &["--device", "null", "--taps", "1", "--seconds", "2"],
    );
    assert_eq!(run.code, Some(2), "stderr:\n{}", run.stderr);
    assert!(!run.stderr.contains("were lost"), "{}", run.stderr);
    assert!(
        run.stderr.contains("faster than real time"),
        "{}",
        run.stderr
    );
    let last = run.stderr.lines().last().unwrap_or_default();
    assert!(last.contains("no tap was heard"), "{last}");
    assert!(run.stdout.is_empty(), "{}", run.stdout);
}
