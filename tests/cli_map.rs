//! `tapwright map POINTS.csv`: the tables and the JSON for the bundled
//! roving-tap demo set, and one clear sentence with exit code 2 (nothing
//! on stdout) for every kind of bad input, naming the row.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use tapwright::analysis::synth::{add_modes, to_f32_clipped, NoiseGenerator, SynthMode};
use tapwright::wav_io::write_mono;

fn tapwright(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .args(args)
        .output()
        .unwrap()
}

fn demo_folder() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/roving_violin_top")
}

fn demo_csv() -> String {
    demo_folder().join("points.csv").display().to_string()
}

fn assert_bad_input(output: &Output, expected: &[&str]) {
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
    assert!(!stderr.contains("panicked"), "{stderr}");
    for part in expected {
        assert!(stderr.contains(part), "{part:?} not in: {stderr}");
    }
}

/// The demo's model frequencies of modes 1, 2 and 5 (shapes::demo_set).
const MODES_1_2_5_HZ: [f64; 3] = [90.0, 150.7, 333.4];

#[test]
fn tables_for_the_demo_set() {
    let out = tapwright(&["map", &demo_csv()]);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Every tap of the demo set is a single clean strike: all 90 are kept.
    assert!(text.contains(": 45 tap points, 90 taps, 8 modes"), "{text}");
    assert!(!text.contains("left out"), "{text}");
    for hz in MODES_1_2_5_HZ {
        assert!(
            text.lines().any(|l| l.starts_with("Mode ")
                && l.split_whitespace()
                    .nth(2)
                    .and_then(|f| f.parse::<f64>().ok())
                    .is_some_and(|f| (f - hz).abs() < 0.2)),
            "{hz} Hz missing: {text}"
        );
    }
    // One row per point per mode; the centre column of the twisting mode
    // (its nodal line) is marked uncertain, its outer columns are not.
    let mode_1: Vec<&str> = text
        .lines()
        .skip_while(|l| !l.starts_with("Mode 1:"))
        .skip(2)
        .take(45)
        .collect();
    assert_eq!(mode_1.len(), 45);
    for row in &mode_1 {
        let name = row.split_whitespace().next().unwrap();
        if name.ends_with('C') {
            assert!(row.ends_with('?'), "{row}");
        }
        if name.ends_with('A') || name.ends_with('E') {
            assert!(!row.ends_with('?'), "{row}");
        }
    }
}

#[test]
fn json_for_the_demo_set() {
    let out = tapwright(&["map", &demo_csv(), "--json"]);
    assert!(out.status.success());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let csv = std::fs::read_to_string(demo_folder().join("points.csv")).unwrap();
    let names: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    let points = json["points"].as_array().unwrap();
    let listed: Vec<&str> = points
        .iter()
        .map(|p| p["point"].as_str().unwrap())
        .collect();
    assert_eq!(listed, names, "points in CSV order");
    let seven_b = points.iter().find(|p| p["point"] == "7B").unwrap();
    assert_eq!(seven_b["taps"], 2);
    let modes = json["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 8);
    for mode in modes {
        let shape: Vec<f64> = mode["shape"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let spread = mode["shape_spread"].as_array().unwrap();
        assert_eq!(shape.len(), 45);
        assert_eq!(spread.len(), 45);
        let largest = shape.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        assert_eq!(largest, 1.0, "largest magnitude");
        assert!(shape.contains(&1.0));
        let quality = mode["quality"].as_f64().unwrap();
        assert!((0.0..=1.0).contains(&quality) && quality > 0.9, "{quality}");
        assert!(mode["q"].as_f64().unwrap() > 30.0);
    }
    for hz in MODES_1_2_5_HZ {
        assert!(
            modes
                .iter()
                .any(|m| (m["frequency_hz"].as_f64().unwrap() - hz).abs() < 0.2),
            "{hz} Hz missing"
        );
    }
    // A band leaves the modes outside it out.
    let out = tapwright(&["map", &demo_csv(), "--json", "--band", "120:400"]);
    assert!(out.status.success());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let frequencies: Vec<f64> = json["modes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["frequency_hz"].as_f64().unwrap())
        .collect();
    assert!(
        frequencies.iter().all(|f| (120.0..=400.0).contains(f)),
        "{frequencies:?}"
    );
    assert!(
        frequencies.iter().any(|f| (f - 150.7).abs() < 0.2),
        "{frequencies:?}"
    );
}

/// A recording to write beside the points file: name, samples, rate.
type ExtraFile = (&'static str, Vec<f32>, u32);

/// A folder with copies of the demo's 1A and 1B recordings and `extra`
/// files, and a points file with `csv` as its text.
fn set_up(csv: &str, extra: &[ExtraFile]) -> (tempfile::TempDir, String) {
    let folder = tempfile::tempdir().unwrap();
    for name in ["1A.wav", "1B.wav"] {
        std::fs::copy(demo_folder().join(name), folder.path().join(name)).unwrap();
    }
    for (name, samples, rate) in extra {
        write_mono(&folder.path().join(name), *rate, samples, true).unwrap();
    }
    let path = folder.path().join("points.csv");
    std::fs::write(&path, csv).unwrap();
    (folder, path.display().to_string())
}

const HEADER: &str = "point,x_mm,y_mm,file\n";
const TWO_GOOD_ROWS: &str = "1A,-48.0,334.6,1A.wav\n1B,-24.0,334.6,1B.wav\n";

/// Two taps at 11 025 Hz, at `level` full scale (above 1: clipped).
fn two_taps(level: f64) -> Vec<f32> {
    let fs = 11_025.0;
    let mut out = vec![0.0; 22_050];
    let mode = SynthMode::new(150.0, 50.0, level);
    add_modes(&mut out, fs, 3_000, &[mode]);
    add_modes(&mut out, fs, 13_000, &[mode]);
    let mut noise = NoiseGenerator::new(5);
    for x in &mut out {
        *x += 1e-4 * noise.gaussian();
    }
    to_f32_clipped(&out)
}

#[test]
fn every_bad_input_is_one_sentence_naming_the_row() {
    let missing = tempfile::tempdir().unwrap();
    let nowhere = missing.path().join("points.csv").display().to_string();
    assert_bad_input(
        &tapwright(&["map", &nowhere]),
        &["points.csv", "cannot read"],
    );
    assert_bad_input(
        &tapwright(&["map", &missing.path().display().to_string()]),
        &["is not a plain file"],
    );

    let cases: Vec<(String, Vec<ExtraFile>, Vec<&str>)> = vec![
        ("".into(), vec![], vec!["points.csv", "the file is empty"]),
        (
            "point;x;y;file\n".into(),
            vec![],
            vec!["line 1", "must be point,x_mm,y_mm,file"],
        ),
        (
            format!("{HEADER}1A,-48.0,334.6,1A.wav\n"),
            vec![],
            vec!["1 tap point is listed"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10\n"),
            vec![],
            vec!["line 4", "3 fields"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,zero,10,1A.wav\n"),
            vec![],
            vec!["line 4 (point 3C)", "x_mm 'zero'"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}1A,0,10,1A.wav\n"),
            vec![],
            vec!["line 4", "point 1A is listed twice"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10,gone.wav\n"),
            vec![],
            vec!["line 4 (point 3C)", "gone.wav"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10,notes.wav\n"),
            vec![],
            vec![
                "line 4 (point 3C)",
                "notes.wav",
                "not a recording tapwright can read",
            ],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10,quiet.wav\n"),
            vec![("quiet.wav", vec![0.0; 22_050], 11_025)],
            vec!["line 4 (point 3C)", "quiet.wav has no tap in it"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10,loud.wav\n"),
            vec![("loud.wav", two_taps(3.0), 11_025)],
            vec!["line 4 (point 3C)", "loud.wav has no usable tap", "clipped"],
        ),
        (
            format!("{HEADER}{TWO_GOOD_ROWS}3C,0,10,fast.wav\n"),
            vec![("fast.wav", two_taps(0.3), 48_000)],
            vec!["line 4 (point 3C)", "48000 Hz", "11025 Hz"],
        ),
    ];
    for (csv, extra, expected) in cases {
        let (folder, path) = set_up(&csv, &extra);
        std::fs::write(folder.path().join("notes.wav"), "not a recording").unwrap();
        assert_bad_input(&tapwright(&["map", &path]), &expected);
    }

    // Option values name the option and the range.
    let out = tapwright(&["map", &demo_csv(), "--band", "400:300"]);
    assert_bad_input(&out, &["--band"]);
    let out = tapwright(&["map", &demo_csv(), "--band", "40:9000"]);
    assert_bad_input(&out, &["upper edge 9000 Hz", "half the sample rate"]);
}
