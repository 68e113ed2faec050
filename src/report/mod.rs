//! The build report: one self-contained HTML file (no scripts, no network,
//! fonts from the reader's system) with the build's parts, every pass, the
//! charts of each labelled mode as inline SVG, targets and forecasts, top
//! against back, the air check and the cautions. Made for the maker's
//! records and for the client; it prints on A4 and Letter.
//!
//! It sits beside `cli` and `ui`, above `ledger` and `acoustics`, and only
//! presents what those compute (pass changes, forecasts, the top/back
//! comparison, the cavity estimate). `html` has one function per section;
//! `charts` draws the SVG with plotters.

pub mod charts;
pub mod html;

use std::path::{Path, PathBuf};

use crate::atomic_file::write_bytes_atomically;
use crate::ledger::{Build, Timestamp};

/// Choices that are not in the build.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ReportSettings {
    /// Reference pitch for note names and cents, Hz.
    pub a4_hz: f64,
    /// When the report is made (shown in it).
    pub made: Timestamp,
}

impl Default for ReportSettings {
    /// A4 = 440 Hz, made now.
    fn default() -> Self {
        Self {
            a4_hz: 440.0,
            made: Timestamp::now(),
        }
    }
}

/// What can go wrong writing a report.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The folder cannot take a temporary file, or writing, syncing or
    /// renaming failed; any earlier file at the path is untouched.
    #[error("cannot write the report {}: {source}", path.display())]
    Write {
        /// The report file.
        path: PathBuf,
        /// The system's reason.
        source: std::io::Error,
    },
}

/// The report of `build` as one HTML document.
pub fn build_report_html(build: &Build, settings: &ReportSettings) -> String {
    html::document(build, settings).into_string()
}

/// Writes `html` to `path` atomically (see [`crate::atomic_file`]): a
/// crash leaves the old file or the new one, never half of one, and a new
/// file gets the ordinary permissions, not a temporary file's owner-only
/// ones.
pub fn write_report(path: &Path, html: &str) -> Result<(), ReportError> {
    write_bytes_atomically(path, html.as_bytes()).map_err(|source| ReportError::Write {
        path: path.to_path_buf(),
        source,
    })
}
