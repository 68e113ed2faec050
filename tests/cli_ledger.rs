//! `tapwright ledger`: the report and the CSV of the sample builds, and one
//! clear sentence for a bad file.

use std::path::Path;
use std::process::{Command, Output};

fn tapwright(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .unwrap()
}

/// A small RFC 4180 reader: quoted fields may hold commas, doubled quotes
/// and line breaks.
fn parse_csv(text: &str) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let (mut row, mut field) = (Vec::new(), String::new());
    let (mut quoted, mut chars) = (false, text.chars().peekable());
    while let Some(c) = chars.next() {
        match (quoted, c) {
            (true, '"') if chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            (true, '"') => quoted = false,
            (true, c) => field.push(c),
            (false, '"') => quoted = true,
            (false, ',') => row.push(std::mem::take(&mut field)),
            (false, '\n') => {
                row.push(std::mem::take(&mut field));
                rows.push(std::mem::take(&mut row));
            }
            (false, c) => field.push(c),
        }
    }
    rows
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).unwrap()
}

#[test]
fn report_of_the_violin_sample_shows_passes_changes_and_forecasts() {
    let out = tapwright(&["ledger", "sample_sessions/violin_wren.ron"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(out.stderr.is_empty());
    let report = text(&out.stdout);
    for expected in [
        "Build: Violin \"Wren\" (demo) (violin",
        "Top (top plate; spruce",
        "Back (back plate; maple",
        "Body (assembled body)",
        "  Pass 7  ",
        "mode 5 ",
        "vs pass 6:",
        "vs pass 1:",
        "cents",
        "B1−",
        "Targets and forecasts",
        "mode 5 → 340.00 Hz",
        "method: fitted to this part's own 7 passes",
        "mean thickness",
    ] {
        assert!(
            report.contains(expected),
            "missing {expected:?} in\n{report}"
        );
    }
    // The change printed for top mode 5 in pass 2 agrees with the numbers
    // in the same report: Hz difference, per cent and cents.
    let line = report
        .lines()
        .skip_while(|l| !l.starts_with("  Pass 2 "))
        .find(|l| l.trim_start().starts_with("mode 5"))
        .unwrap();
    let numbers: Vec<f64> = line
        .split_whitespace()
        .filter_map(|w| w.trim_end_matches(':').parse::<f64>().ok())
        .collect();
    // mode, 5, f2, vs pass 1: Δhz, %, cents
    let (f2, hz, percent, cents) = (numbers[1], numbers[3], numbers[4], numbers[5]);
    let f1 = f2 - hz;
    assert!((percent - 100.0 * hz / f1).abs() < 0.01, "{line}");
    assert!((cents - 1200.0 * (f2 / f1).log2()).abs() < 0.6, "{line}");
}

#[test]
fn csv_of_the_guitar_sample_has_one_row_per_pass_and_a_column_per_label() {
    let out = tapwright(&["ledger", "--csv", "sample_sessions/guitar_larkspur.ron"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let rows = parse_csv(&text(&out.stdout));
    let header = &rows[0];
    for column in [
        "part",
        "pass",
        "mass (g)",
        "monopole (Hz)",
        "cross-dipole (Hz)",
        "A0 (Hz)",
        "top T(1,1) (Hz)",
    ] {
        assert!(header.iter().any(|c| c == column), "{column} in {header:?}");
    }
    // 6 top passes + 1 body pass, every row as wide as the header.
    assert_eq!(rows.len(), 1 + 6 + 1);
    assert!(rows.iter().all(|r| r.len() == header.len()), "{rows:?}");
    let column = |name: &str| header.iter().position(|c| c == name).unwrap();
    assert_eq!(rows[1][column("part")], "Top");
    assert_eq!(rows[1][column("pass")], "1");
    let hz: f64 = rows[1][column("monopole (Hz)")].parse().unwrap();
    assert!(rows[1][column("top T(1,1) (Hz)")].is_empty());
    let body_a0: f64 = rows[7][column("A0 (Hz)")].parse().unwrap();
    assert!((90.0..110.0).contains(&body_a0));
    assert!((150.0..250.0).contains(&hz));
}

#[test]
fn a_corrupt_file_gives_one_sentence_and_exit_code_2() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("broken.ron");
    std::fs::write(
        &path,
        "(schema_version: 2, name: \"x\", family: Violin, notes: ",
    )
    .unwrap();
    let before = std::fs::read(&path).unwrap();
    for args in [vec!["ledger"], vec!["ledger", "--csv"]] {
        let mut args: Vec<&str> = args;
        args.push(path.to_str().unwrap());
        let out = tapwright(&args);
        assert_eq!(out.status.code(), Some(2));
        assert!(out.stdout.is_empty(), "{}", text(&out.stdout));
        let stderr = text(&out.stderr);
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(stderr.starts_with("tapwright: "), "{stderr}");
        assert!(
            stderr.contains("broken.ron") && stderr.contains("line 1"),
            "{stderr}"
        );
    }
    assert_eq!(std::fs::read(&path).unwrap(), before);
}

#[test]
fn a_missing_file_and_a_future_version_are_refused() {
    let out = tapwright(&["ledger", "no/such/build.ron"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    assert!(text(&out.stderr).contains("build.ron"));

    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("future.ron");
    let sample = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_sessions/violin_wren.ron"),
    )
    .unwrap();
    std::fs::write(
        &path,
        sample.replacen("schema_version: 4", "schema_version: 9", 1),
    )
    .unwrap();
    let out = tapwright(&["ledger", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let stderr = text(&out.stderr);
    assert_eq!(stderr.lines().count(), 1);
    assert!(stderr.contains("schema version 9"), "{stderr}");
}

/// Runs `tapwright ledger PATH`, killing it if it has not answered in 30 s
/// (so a hang fails the test instead of stalling it).
fn ledger_with_timeout(path: &Path) -> Output {
    use std::process::Stdio;
    let mut child = Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .arg("ledger")
        .arg(path)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let started = std::time::Instant::now();
    while child.try_wait().unwrap().is_none() {
        if started.elapsed() > std::time::Duration::from_secs(30) {
            child.kill().unwrap();
            panic!("tapwright ledger {} hung", path.display());
        }
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    child.wait_with_output().unwrap()
}

fn assert_one_sentence_refusal(out: &Output, expected: &[&str]) {
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(out.stdout.is_empty(), "{}", text(&out.stdout));
    let stderr = text(&out.stderr);
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    for part in expected {
        assert!(stderr.contains(part), "{part:?} not in {stderr}");
    }
}

#[cfg(unix)]
#[test]
fn pipes_and_devices_are_refused_without_hanging() {
    let folder = tempfile::tempdir().unwrap();
    let pipe = folder.path().join("pipe.ron");
    assert!(Command::new("mkfifo")
        .arg(&pipe)
        .status()
        .unwrap()
        .success());
    assert_one_sentence_refusal(&ledger_with_timeout(&pipe), &["pipe.ron", "named pipe"]);
    assert_one_sentence_refusal(
        &ledger_with_timeout(Path::new("/dev/zero")),
        &["/dev/zero", "device"],
    );
}

#[test]
fn impossible_values_and_deep_nesting_are_one_sentence() {
    let folder = tempfile::tempdir().unwrap();
    let sample = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_sessions/violin_wren.ron"),
    )
    .unwrap();
    let cases = [
        (
            "negative_q.ron",
            sample.replacen("q: ", "q: -", 1),
            "Q is -",
        ),
        (
            "thick.ron",
            sample.replacen("thickness_mm: 3.55", "thickness_mm: 1e308", 1),
            "thickness",
        ),
        (
            "deep.ron",
            format!(
                "(extra: {}{}, schema_version: 2)",
                "[".repeat(5000),
                "]".repeat(5000)
            ),
            "nests brackets deeper",
        ),
    ];
    for (name, contents, expected) in cases {
        let path = folder.path().join(name);
        std::fs::write(&path, contents).unwrap();
        let out = ledger_with_timeout(&path);
        assert_one_sentence_refusal(&out, &[name]);
        let stderr = text(&out.stderr);
        assert!(stderr.contains(expected), "{stderr}");
        assert!(!stderr.contains("inf"), "{stderr}");
        assert!(!stderr.contains("recursion_limit"), "{stderr}");
    }
}

#[test]
fn a_build_file_with_a_byte_order_mark_is_shown() {
    let folder = tempfile::tempdir().unwrap();
    let sample = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_sessions/violin_wren.ron"),
    )
    .unwrap();
    let path = folder.path().join("bom.ron");
    std::fs::write(&path, format!("\u{feff}{sample}")).unwrap();
    let out = ledger_with_timeout(&path);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(text(&out.stdout).starts_with("Build: "));
}
