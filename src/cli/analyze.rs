//! `tapwright analyze FILE.wav`: find the taps in a recording and measure
//! their modes.

use std::path::PathBuf;

use anyhow::{bail, Context};

use super::measure::MeasureArgs;
use super::report::ReportInput;
use crate::analysis::analyze_recording;
use crate::wav_io::read_mono;

#[derive(Debug, clap::Args)]
pub struct AnalyzeArgs {
    /// The WAV recording (8–192 kHz; 16/24/32-bit integer or 32-bit float).
    pub file: PathBuf,
    #[command(flatten)]
    pub measure: MeasureArgs,
}

pub fn run(args: &AnalyzeArgs) -> anyhow::Result<()> {
    let trigger = args.measure.trigger_settings()?;
    let recording = read_mono(&args.file)?;
    let fs = f64::from(recording.sample_rate_hz);
    let name = args.file.display().to_string();
    let analysis = args.measure.analysis_settings(fs, &name)?;
    let report = analyze_recording(&recording.samples, fs, &trigger, &analysis);
    if report.taps.is_empty() {
        bail!(
            "{name} has no tap in it: nothing rose {} dB above the background",
            args.measure.margin_db
        );
    }
    if report.taps_used() == 0 {
        let reasons: Vec<&str> = report
            .rejected()
            .iter()
            .map(|r| r.reason.short_text())
            .collect();
        bail!(
            "{name} has no usable tap: all {} were rejected ({})",
            report.taps.len(),
            reasons.join(", ")
        );
    }
    let input = ReportInput {
        source: name,
        sample_rate_hz: fs,
        a4_hz: args.measure.a4,
        taps_found: report.taps.len(),
        rejected: report
            .rejected()
            .into_iter()
            .map(|r| (r.index, r.reason))
            .collect(),
        modes: &report.pass.modes,
    };
    if args.measure.json {
        let text =
            serde_json::to_string_pretty(&input.to_json()).context("formatting the JSON report")?;
        println!("{text}");
    } else {
        print!("{}", input.to_table());
    }
    Ok(())
}
