//! What the end-to-end ALSA tests share: a check that the ALSA library and
//! its configuration are installed, a temporary HOME whose `.asoundrc`
//! says what the default device is, and running the `tapwright` binary
//! under that HOME with a time limit.

use std::io::Read;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Fails (never passes silently) when the ALSA configuration is missing;
/// `test` names the test in the message ("capture", "drive").
pub fn check_alsa_installed(test: &str) {
    let candidates = ["/usr/share/alsa/alsa.conf", "/etc/alsa/alsa.conf"];
    assert!(
        candidates.iter().any(|p| Path::new(p).exists()),
        "the ALSA configuration (alsa.conf) is not installed: install libasound2 and alsa-utils \
         (bash .ci/setup does) to run the end-to-end {test} test"
    );
}

/// A temporary HOME whose `.asoundrc` holds `asoundrc`.
pub fn home_with(asoundrc: &str) -> tempfile::TempDir {
    let home = tempfile::tempdir().expect("temp HOME");
    std::fs::write(home.path().join(".asoundrc"), asoundrc).expect("write .asoundrc");
    home
}

/// What a run of tapwright gave.
pub struct Run {
    pub code: Option<i32>,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `tapwright <subcommand> <args>` with HOME set to `home`, killing
/// it after a minute.
pub fn run_subcommand(home: &Path, subcommand: &str, args: &[&str]) -> Run {
    let all: Vec<&str> = std::iter::once(subcommand)
        .chain(args.iter().copied())
        .collect();
    run_tapwright(home, &all, Duration::from_secs(60))
}

/// Runs tapwright with HOME set to `home`, killing it after `limit`.
pub fn run_tapwright(home: &Path, args: &[&str], limit: Duration) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .args(args)
        .env("HOME", home)
        .env("XDG_CONFIG_HOME", home.join(".config"))
        .env_remove("ALSA_CONFIG_PATH")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start tapwright");
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait for tapwright") {
            break Some(status);
        }
        if started.elapsed() > limit {
            let _ = child.kill();
            let _ = child.wait();
            break None;
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    let mut stdout = String::new();
    let mut stderr = String::new();
    if let Some(mut out) = child.stdout.take() {
        out.read_to_string(&mut stdout).expect("read stdout");
    }
    if let Some(mut err) = child.stderr.take() {
        err.read_to_string(&mut stderr).expect("read stderr");
    }
    assert!(
        status.is_some(),
        "tapwright {args:?} did not finish within {limit:?}; stderr:\n{stderr}"
    );
    Run {
        code: status.and_then(|s| s.code()),
        stdout,
        stderr,
    }
}
