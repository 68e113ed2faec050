//! `tapwright analyze`: the report on the demo recording, the JSON schema
//! documented in README.md, and one clear sentence with exit code 2 for
//! every kind of bad input, with nothing on stdout.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use tapwright::analysis::synth::{add_modes, to_f32_clipped, SynthMode};
use tapwright::wav_io::write_mono;

fn tapwright(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .args(args)
        .output()
        .unwrap()
}

fn demo_path() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/demo_plate_taps.wav")
}

fn assert_bad_input(output: &Output, file_name: &str) {
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "stderr: {stderr}");
    assert!(
        output.stdout.is_empty(),
        "stdout: {}",
        String::from_utf8_lossy(&output.stdout)
    );
    assert_eq!(
        stderr.trim_end().lines().count(),
        1,
        "not one line: {stderr}"
    );
    assert!(
        stderr.contains(file_name),
        "{file_name} not named in: {stderr}"
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
}

#[test]
fn table_for_the_demo() {
    let out = tapwright(&["analyze", demo_path().to_str().unwrap()]);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("Taps: 6 found, 5 used, 1 rejected"), "{text}");
    assert!(text.contains("double strike"), "{text}");
    // The invented plate's mode 5 is at 338 Hz (each tap jitters it by up
    // to ±0.07 Hz): E4 and about +43 cents, with E4 = 329.628 Hz in equal
    // temperament from A4 = 440 Hz (ISO 16:1975). The cents shown must be
    // those of the frequency shown, rounded.
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("338."))
        .unwrap_or_else(|| panic!("{text}"));
    let fields: Vec<&str> = line.split_whitespace().collect();
    let frequency_hz: f64 = fields[0].parse().unwrap();
    let cents: f64 = fields[4].parse().unwrap();
    assert!((frequency_hz - 338.0).abs() < 0.07, "{line}");
    assert_eq!(fields[3], "E4", "{line}");
    let expected_cents = 1200.0 * (frequency_hz / 329.628).log2();
    assert!(
        (cents - expected_cents).abs() <= 0.55,
        "{line}: {expected_cents}"
    );
}

#[test]
fn json_schema() {
    let out = tapwright(&[
        "analyze",
        "--json",
        "--max-modes",
        "3",
        "--a4",
        "442",
        demo_path().to_str().unwrap(),
    ]);
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["sample_rate_hz"], 48000.0);
    assert_eq!(v["taps_used"], 5);
    assert_eq!(v["taps_rejected"][0]["index"], 4);
    assert_eq!(v["taps_rejected"][0]["reason"], "double_strike");
    assert_eq!(v["a4_hz"], 442.0);
    let modes = v["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 3); // the three loudest: 168, 338 and 486 Hz
    let frequencies: Vec<f64> = modes
        .iter()
        .map(|m| m["frequency_hz"].as_f64().unwrap())
        .collect();
    assert!(
        frequencies.windows(2).all(|w| w[0] < w[1]),
        "sorted: {frequencies:?}"
    );
    for key in [
        "frequency_hz",
        "q",
        "level_db",
        "spread_hz",
        "note",
        "cents",
        "taps_seen",
        "prominence_db",
        "q_spread",
    ] {
        assert!(modes[0].get(key).is_some(), "missing {key}");
    }
    let m5 = modes
        .iter()
        .find(|m| (m["frequency_hz"].as_f64().unwrap() - 338.0).abs() < 0.2)
        .unwrap();
    // With A4 = 442 Hz, E4 is 442·2^(-5/12) = 331.13 Hz; 338 Hz is +35.6 cents.
    assert_eq!(m5["note"], "E4");
    assert!((m5["cents"].as_f64().unwrap() - 35.6).abs() < 0.5);
}

#[test]
fn band_limits_the_search() {
    let out = tapwright(&[
        "analyze",
        "--json",
        "--band",
        "300:600",
        demo_path().to_str().unwrap(),
    ]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let frequencies: Vec<f64> = v["modes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["frequency_hz"].as_f64().unwrap())
        .collect();
    assert_eq!(frequencies.len(), 2, "{frequencies:?}"); // 338 and 486 Hz
}

#[test]
fn bad_files() {
    let dir = tempfile::tempdir().unwrap();
    let demo = std::fs::read(demo_path()).unwrap();
    let cases: Vec<(&str, Vec<u8>)> = vec![
        ("empty.wav", Vec::new()),
        ("truncated.wav", demo[..30].to_vec()),
        ("notes.wav", b"mode 5 at 338 Hz, mass 68 g\n".to_vec()),
        ("alaw.wav", {
            // A-law (format tag 6): a real WAV encoding tapwright does not read.
            let mut b = demo[..44].to_vec();
            b[20] = 6;
            b[34] = 8;
            b.extend_from_slice(&[0u8; 1000]);
            b
        }),
    ];
    for (name, bytes) in cases {
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).unwrap();
        assert_bad_input(&tapwright(&["analyze", path.to_str().unwrap()]), name);
    }
    assert_bad_input(
        &tapwright(&["analyze", "/no/such/folder/tap.wav"]),
        "tap.wav",
    );
}

#[test]
fn silence_and_no_usable_tap() {
    let dir = tempfile::tempdir().unwrap();
    let silence = dir.path().join("silence.wav");
    write_mono(&silence, 48_000, &vec![0.0; 96_000], true).unwrap();
    assert_bad_input(
        &tapwright(&["analyze", silence.to_str().unwrap()]),
        "silence.wav",
    );
    // Two taps, both clipped.
    let mut x = vec![0.0; 3 * 48_000];
    for start in [24_000, 96_000] {
        add_modes(&mut x, 48_000.0, start, &[SynthMode::new(300.0, 50.0, 3.0)]);
    }
    for (i, v) in x.iter_mut().enumerate() {
        *v += 1e-4 * ((i as f64 * 0.37).sin());
    }
    let clipped = dir.path().join("clipped.wav");
    write_mono(&clipped, 48_000, &to_f32_clipped(&x), true).unwrap();
    let out = tapwright(&["analyze", clipped.to_str().unwrap()]);
    assert_bad_input(&out, "clipped.wav");
    assert!(String::from_utf8_lossy(&out.stderr).contains("clipped"));
}

#[test]
fn bad_options() {
    let demo = demo_path();
    for args in [
        vec!["analyze", "--band", "4000:40"],
        vec!["analyze", "--band", "forty"],
        vec!["analyze", "--max-modes", "0"],
        vec!["analyze", "--a4", "1000"],
        vec!["analyze", "--band", "100:30000"],
    ] {
        let mut all = args.clone();
        all.push(demo.to_str().unwrap());
        let out = tapwright(&all);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(out.stdout.is_empty());
    }
}

fn encoded(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/encoded")
        .join(name)
}

/// Phone and recorder formats are read like WAV (fixtures: see
/// tests/data/encoded/README.md; the plate's mode 5 is at 338 Hz).
#[test]
fn reads_encoded_recordings() {
    for name in ["plate.flac", "plate_alac.m4a", "plate.ogg", "plate.caf"] {
        let path = encoded(name);
        let out = tapwright(&["analyze", "--json", path.to_str().unwrap()]);
        assert!(
            out.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        assert_eq!(v["taps_used"], 2, "{name}");
        let modes = v["modes"].as_array().unwrap();
        assert!(
            modes
                .iter()
                .any(|m| (m["frequency_hz"].as_f64().unwrap() - 338.0).abs() < 0.1),
            "{name}: {modes:?}"
        );
    }
}

/// A file the decoder cannot read: one sentence naming it, exit 2.
#[test]
fn encoded_files_that_cannot_be_read() {
    for (name, words) in [
        ("bad_he_aac.m4a", "HE-AAC"),
        ("bad_opus.ogg", "Opus"),
        ("bad_video_only.mp4", "video"),
        ("bad_encrypted.m4a", "encrypted"),
        ("bad_truncated.m4a", "cut short"),
        ("bad_truncated.flac", "cut short"),
    ] {
        let out = tapwright(&["analyze", encoded(name).to_str().unwrap()]);
        assert_bad_input(&out, name);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(stderr.contains(words), "{stderr}");
    }
    let dir = tempfile::tempdir().unwrap();
    for (name, bytes) in [
        ("empty.m4a", Vec::new()),
        ("unknown.mp3", b"not a recording at all\n".repeat(100)),
    ] {
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).unwrap();
        assert_bad_input(&tapwright(&["analyze", path.to_str().unwrap()]), name);
    }
}
