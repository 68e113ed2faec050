//! `tapwright report BUILD.ron -o FILE.html`: writes the build report, one
//! self-contained HTML file (see `crate::report`), atomically.

use std::path::PathBuf;

use crate::ledger::store;
use crate::report::{build_report_html, write_report, ReportSettings};

/// Arguments of `tapwright report`.
#[derive(Debug, clap::Args)]
pub struct ReportArgs {
    /// The build file (RON) to report on.
    pub file: PathBuf,
    /// The HTML file to write (replaced whole if it exists).
    #[arg(short = 'o', long = "output", value_name = "FILE.html")]
    pub output: PathBuf,
    /// Reference pitch for note names and cents, Hz.
    #[arg(long, default_value_t = 440.0, value_name = "HZ")]
    pub a4: f64,
}

/// Loads the build, makes the report and writes it.
pub fn run(args: &ReportArgs) -> anyhow::Result<()> {
    if !(args.a4.is_finite() && (300.0..=600.0).contains(&args.a4)) {
        anyhow::bail!("--a4 {} Hz is outside 300–600 Hz", args.a4);
    }
    if args.output.is_dir() {
        anyhow::bail!(
            "the output {} is a folder; give a file name such as report.html",
            args.output.display()
        );
    }
    let build = store::load(&args.file)?;
    let settings = ReportSettings {
        a4_hz: args.a4,
        ..ReportSettings::default()
    };
    let html = build_report_html(&build, &settings);
    write_report(&args.output, &html)?;
    Ok(())
}
