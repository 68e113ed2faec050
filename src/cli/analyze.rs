//! `tapwright analyze FILE`: find the taps in a recording (WAV, FLAC, MP3,
//! M4A… see `wav_io`) and measure their modes.
//!
//! The file is read block by block and fed to the streaming tap finder, so
//! memory holds one block, the tap under way and the measurements, however
//! long the recording (a 4 GB file is as good as a short one).

use std::path::PathBuf;

use anyhow::bail;

use super::measure::MeasureArgs;
use super::output::write_stdout;
use super::tap_table::{rejection_reasons, ReportInput};
use crate::analysis::{RecordingAnalyzer, RecordingReport};
use crate::wav_io::WavStream;

/// Frames read from the file at a time (about 1.4 s at 48 kHz).
const BLOCK_FRAMES: usize = 65_536;

#[derive(Debug, clap::Args)]
pub struct AnalyzeArgs {
    /// The recording: WAV, AIFF, AIFC, CAF, FLAC, MP3, AAC-LC or ALAC in M4A/MP4, ADTS AAC or Ogg Vorbis (8–192 kHz).
    pub file: PathBuf,
    #[command(flatten)]
    pub measure: MeasureArgs,
}

pub fn run(args: &AnalyzeArgs) -> anyhow::Result<()> {
    let trigger = args.measure.trigger_settings();
    let mut stream = WavStream::open(&args.file)?;
    let fs = f64::from(stream.sample_rate_hz());
    let name = args.file.display().to_string();
    let analysis = args.measure.analysis_settings(fs, &name)?;
    let mut analyzer = RecordingAnalyzer::new(&trigger, &analysis, fs);
    let mut block = Vec::with_capacity(BLOCK_FRAMES);
    while stream.read_block(&mut block, BLOCK_FRAMES)? > 0 {
        analyzer.push(&block);
    }
    let report = analyzer.finish();
    check_usable(&report, &name, args.measure.margin_db)?;
    let input = ReportInput::of_taps(name, fs, args.measure.a4, &report.taps, &report.pass.modes);
    write_stdout(&input.render(args.measure.json)?)
}

/// One sentence when the recording has no tap, or none that can be used.
fn check_usable(report: &RecordingReport, name: &str, margin_db: f64) -> anyhow::Result<()> {
    if report.taps.is_empty() {
        bail!("{name} has no tap in it: nothing rose {margin_db} dB above the background");
    }
    if report.taps_used() == 0 {
        bail!(
            "{name} has no usable tap: all {} were rejected ({})",
            report.taps.len(),
            rejection_reasons(&report.taps)
        );
    }
    Ok(())
}
