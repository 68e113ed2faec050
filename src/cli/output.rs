//! Writing to standard output and standard error without panicking.
//!
//! `println!` panics when standard output is closed or full. Here a closed
//! pipe (the reader went away: `tapwright analyze x.wav | head -1`) becomes
//! [`StdoutClosed`], which ends the program quietly with success, and any
//! other failure (a full disk) becomes one sentence.

use std::io::Write;

use anyhow::anyhow;

/// Standard output was closed by its reader; nothing is wrong with the input.
#[derive(Debug, thiserror::Error)]
#[error("standard output was closed")]
pub struct StdoutClosed;

/// Writes `text` to standard output and flushes it.
pub fn write_stdout(text: &str) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(error) if error.kind() == std::io::ErrorKind::BrokenPipe => Err(StdoutClosed.into()),
        Err(error) => Err(anyhow!(write_failure("standard output", &error))),
    }
}

/// One clause for a failed write: "cannot write to standard output: the
/// disk is full".
fn write_failure(what: &str, error: &std::io::Error) -> String {
    /// ENOSPC on Linux and the BSDs.
    const NO_SPACE: i32 = 28;
    if error.kind() == std::io::ErrorKind::StorageFull || error.raw_os_error() == Some(NO_SPACE) {
        format!("cannot write to {what}: the disk is full")
    } else {
        let detail = error.to_string();
        let detail = detail.split(" (os error").next().unwrap_or(&detail);
        format!("cannot write to {what}: {}", detail.to_lowercase())
    }
}

/// Writes one line to standard error; a closed or failing standard error is
/// ignored (there is nowhere left to say anything).
pub fn note(line: &str) {
    let mut err = std::io::stderr().lock();
    let _ = writeln!(err, "{line}");
}
