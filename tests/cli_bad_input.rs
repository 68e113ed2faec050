//! The command line's promise for input it cannot use: one sentence on
//! standard error naming the option or file, exit code 2, nothing on
//! standard output, and never a hang or a panic. Also: a closed standard
//! output ends quietly, a full one is one sentence.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
}

fn demo_path() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/demo_plate_taps.wav")
}

fn demo() -> String {
    demo_path().to_str().expect("demo path").to_owned()
}

/// Runs with no standard input and a time limit, so a hang fails the test.
fn run(command: &mut Command) -> Output {
    let mut child = command
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start tapwright");
    let started = Instant::now();
    while child.try_wait().expect("wait").is_none() {
        if started.elapsed() > Duration::from_secs(60) {
            let _ = child.kill();
            panic!("tapwright {command:?} did not finish within 60 s");
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    child.wait_with_output().expect("output")
}

/// Exit 2, nothing on stdout, one line on stderr that names `needle`.
fn assert_one_sentence(output: &Output, needle: &str, what: &str) -> String {
    let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
    assert_eq!(output.status.code(), Some(2), "{what}: {stderr}");
    assert!(
        output.stdout.is_empty(),
        "{what}: stdout {:?}",
        output.stdout
    );
    assert_eq!(stderr.trim_end().lines().count(), 1, "{what}: {stderr}");
    assert!(stderr.starts_with("tapwright: "), "{what}: {stderr}");
    assert!(stderr.trim_end().ends_with('.'), "{what}: {stderr}");
    assert!(stderr.contains(needle), "{what}: {needle} not in {stderr}");
    assert!(!stderr.contains("panicked"), "{what}: {stderr}");
    stderr
}

#[test]
fn every_bad_option_value_is_one_sentence_with_its_range() {
    let demo = demo();
    // (arguments, option named, what the sentence must also say)
    let cases: Vec<(Vec<&str>, &str, &str)> = vec![
        (
            vec!["analyze", "--band", "100:120", &demo],
            "--band",
            "half an octave",
        ),
        (
            vec!["analyze", "--band", "4000:40", &demo],
            "--band",
            "half an octave",
        ),
        (
            vec!["analyze", "--band", "5:4000", &demo],
            "--band",
            "10 Hz",
        ),
        (
            vec!["analyze", "--band", "forty", &demo],
            "--band",
            "LOW:HIGH",
        ),
        (
            vec!["analyze", "--max-modes", "0", &demo],
            "--max-modes",
            "1 to 64",
        ),
        (
            vec!["analyze", "--max-modes", "many", &demo],
            "--max-modes",
            "1 to 64",
        ),
        (vec!["analyze", "--a4", "0", &demo], "--a4", "380 to 500"),
        (vec!["analyze", "--a4", "-440", &demo], "--a4", "380 to 500"),
        (
            vec!["analyze", "--margin-db", "-5", &demo],
            "--margin-db",
            "3 to 60",
        ),
        (
            vec!["analyze", "--record-ms", "5", &demo],
            "--record-ms",
            "100 to 10000",
        ),
        (
            vec!["analyze", &demo, "--max-modes="],
            "--max-modes",
            "needs a value",
        ),
        (vec!["listen", "--taps", "0"], "--taps", "1 to 1000"),
        (vec!["listen", "--seconds", "-1"], "--seconds", "86400"),
        (
            vec!["analyze", "--frobnicate", &demo],
            "--frobnicate",
            "tapwright analyze --help",
        ),
        (vec!["anlyze", &demo], "anlyze", "analyze"),
        (vec!["analyze"], "FILE", "tapwright analyze --help"),
        (vec!["--demo", "--device", "x"], "--demo", "--device"),
    ];
    for (args, option, also) in cases {
        let output = run(bin().args(&args));
        let sentence = assert_one_sentence(&output, option, &format!("{args:?}"));
        assert!(
            sentence.contains(also),
            "{args:?}: {also} not in {sentence}"
        );
        assert!(!sentence.contains("Usage"), "{args:?}: {sentence}");
    }
}

#[test]
fn help_and_version_still_print_normally() {
    let help = run(bin().args(["analyze", "--help"]));
    assert_eq!(help.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&help.stdout).contains("--max-modes"));
    let version = run(bin().arg("--version"));
    assert_eq!(version.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&version.stdout).starts_with("tapwright "));
}

#[test]
fn pipes_and_folders_are_refused_at_once() {
    let dir = tempfile::tempdir().expect("temp dir");
    let fifo = dir.path().join("taps.wav");
    let made = Command::new("mkfifo").arg(&fifo).status().expect("mkfifo");
    assert!(made.success());
    // Nobody ever writes to the pipe: opening it would block for ever.
    let output = run(bin().arg("analyze").arg(&fifo));
    let sentence = assert_one_sentence(&output, "taps.wav", "named pipe");
    assert!(
        sentence.contains("is a pipe, not a regular file"),
        "{sentence}"
    );
    assert!(!sentence.contains("empty"), "{sentence}");

    let output = run(bin().arg("analyze").arg(dir.path()));
    let sentence = assert_one_sentence(&output, "is a folder", "folder");
    assert!(!sentence.contains("empty"), "{sentence}");

    // An anonymous pipe from the shell (process substitution is bash's;
    // /dev/stdin as a pipe is the same case in any shell).
    let script = format!(
        "cat '{}' | '{}' analyze /dev/stdin",
        demo(),
        env!("CARGO_BIN_EXE_tapwright")
    );
    let output = run(Command::new("sh").args(["-c", &script]));
    let sentence = assert_one_sentence(&output, "/dev/stdin", "stdin pipe");
    assert!(sentence.contains("pipe"), "{sentence}");
}

/// Runs with standard output read by nobody: the read end is closed as
/// soon as the program starts.
fn run_with_closed_stdout(args: &[&str]) -> Output {
    let mut child = bin()
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start tapwright");
    drop(child.stdout.take());
    child.wait_with_output().expect("output")
}

fn full_stdout(args: &[&str]) -> Output {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full");
    bin()
        .args(args)
        .stdin(Stdio::null())
        .stdout(full)
        .stderr(Stdio::piped())
        .output()
        .expect("run tapwright")
}

fn reports() -> Vec<Vec<String>> {
    vec![
        vec!["analyze".into(), demo()],
        vec!["analyze".into(), "--json".into(), demo()],
        vec![
            "air".into(),
            "--volume-l".into(),
            "13".into(),
            "--opening".into(),
            "round:86".into(),
        ],
        vec!["devices".into()],
    ]
}

#[test]
fn a_closed_standard_output_ends_quietly() {
    for args in reports() {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let output = run_with_closed_stdout(&args);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(0), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
        assert!(!stderr.contains("tapwright:"), "{args:?}: {stderr}");
    }
}

#[test]
fn a_full_standard_output_is_one_sentence() {
    for args in reports() {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let output = full_stdout(&args);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{args:?}: {stderr}");
        let last = stderr.trim_end().lines().last().unwrap_or_default();
        assert_eq!(
            last, "tapwright: cannot write to standard output: the disk is full.",
            "{args:?}: {stderr}"
        );
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
    }
}

#[test]
fn no_display_is_one_plain_sentence() {
    let output = run(bin()
        .arg("--demo")
        .env_remove("DISPLAY")
        .env_remove("WAYLAND_DISPLAY")
        .env_remove("WAYLAND_SOCKET"));
    let sentence = assert_one_sentence(&output, "no display found", "no display");
    assert!(sentence.contains("set DISPLAY"), "{sentence}");
    assert!(sentence.contains("subcommands"), "{sentence}");
    // A display that is set but where no server runs (a number nobody uses).
    let output = run(bin()
        .arg("--demo")
        .env("DISPLAY", ":4242")
        .env_remove("WAYLAND_DISPLAY")
        .env_remove("WAYLAND_SOCKET"));
    let sentence = assert_one_sentence(&output, "DISPLAY=:4242", "unreachable display");
    for leak in ["winit", ".rs:", "EventLoopError"] {
        assert!(!sentence.contains(leak), "{leak} in {sentence}");
    }
}
