//! `tapwright analyze FILE.wav`: find the taps in a recording and measure
//! their modes.

use std::path::PathBuf;

use anyhow::{bail, Context};

use super::report::ReportInput;
use crate::analysis::{analyze_recording, AnalysisSettings, TriggerSettings, DEFAULT_A4_HZ};
use crate::wav_io::read_mono;

#[derive(Debug, clap::Args)]
pub struct AnalyzeArgs {
    /// The WAV recording (8–192 kHz; 16/24/32-bit integer or 32-bit float).
    pub file: PathBuf,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Frequency band to search, LOW:HIGH in Hz [default: 40:4000, or up to
    /// 45 % of the sample rate for slower recordings].
    #[arg(long, value_name = "LOW:HIGH", value_parser = parse_band_hz)]
    pub band: Option<(f64, f64)>,
    /// At most this many modes.
    #[arg(long, value_name = "N", default_value_t = 16, value_parser = clap::value_parser!(u16).range(1..=64))]
    pub max_modes: u16,
    /// Reference A4 for note names, Hz.
    #[arg(long, value_name = "HZ", default_value_t = DEFAULT_A4_HZ, value_parser = parse_a4_hz)]
    pub a4: f64,
    /// Trigger margin above the noise floor, dB.
    #[arg(long, value_name = "DB", default_value_t = 20.0)]
    pub margin_db: f64,
    /// Record length after each strike, ms.
    #[arg(long, value_name = "MS", default_value_t = 1000.0)]
    pub record_ms: f64,
}

pub fn run(args: &AnalyzeArgs) -> anyhow::Result<()> {
    if !(args.margin_db.is_finite() && (3.0..=60.0).contains(&args.margin_db)) {
        bail!(
            "--margin-db must be between 3 and 60 dB, not {}",
            args.margin_db
        );
    }
    if !(args.record_ms.is_finite() && (100.0..=10_000.0).contains(&args.record_ms)) {
        bail!(
            "--record-ms must be between 100 and 10000 ms, not {}",
            args.record_ms
        );
    }
    let recording = read_mono(&args.file)?;
    let fs = f64::from(recording.sample_rate_hz);
    let band = band_for(args.band, fs, &args.file.display().to_string())?;
    let trigger = TriggerSettings {
        margin_db: args.margin_db,
        record_ms: args.record_ms,
        ..Default::default()
    };
    let analysis = AnalysisSettings {
        band_low_hz: band.0,
        band_high_hz: band.1,
        max_modes: usize::from(args.max_modes),
        ..Default::default()
    };
    let report = analyze_recording(&recording.samples, fs, &trigger, &analysis);
    let name = args.file.display();
    if report.taps.is_empty() {
        bail!(
            "{name} has no tap in it: nothing rose {} dB above the background",
            args.margin_db
        );
    }
    if report.taps_used() == 0 {
        bail!(
            "{name} has no usable tap: all {} were rejected ({})",
            report.taps.len(),
            report
                .rejected()
                .iter()
                .map(|r| r.reason.short_text())
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    let input = ReportInput {
        source: args.file.display().to_string(),
        sample_rate_hz: fs,
        a4_hz: args.a4,
        taps_found: report.taps.len(),
        rejected: report
            .rejected()
            .into_iter()
            .map(|r| (r.index, r.reason))
            .collect(),
        modes: &report.pass.modes,
    };
    if args.json {
        let text =
            serde_json::to_string_pretty(&input.to_json()).context("formatting the JSON report")?;
        println!("{text}");
    } else {
        print!("{}", input.to_table());
    }
    Ok(())
}

/// The band to search: the user's, checked against the sample rate, or the
/// default 40–4000 Hz trimmed to 45 % of the sample rate.
pub fn band_for(
    requested: Option<(f64, f64)>,
    sample_rate_hz: f64,
    source: &str,
) -> anyhow::Result<(f64, f64)> {
    const DEFAULT_BAND_HZ: (f64, f64) = (40.0, 4000.0);
    let nyquist_hz = sample_rate_hz / 2.0;
    match requested {
        Some((_, high)) if high >= nyquist_hz => bail!(
            "the band's upper edge {high} Hz is at or above half the sample rate of {source} ({nyquist_hz} Hz)"
        ),
        Some(band) => Ok(band),
        None => Ok((DEFAULT_BAND_HZ.0, DEFAULT_BAND_HZ.1.min(0.9 * nyquist_hz))),
    }
}

/// Parses "LOW:HIGH" in Hz.
pub fn parse_band_hz(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = text
        .split_once(':')
        .ok_or_else(|| format!("'{text}' is not LOW:HIGH in Hz, e.g. 40:4000"))?;
    let parse = |s: &str| {
        s.trim()
            .parse::<f64>()
            .map_err(|_| format!("'{s}' is not a number of Hz"))
    };
    let (low, high) = (parse(low)?, parse(high)?);
    if !(low.is_finite() && high.is_finite() && low >= 10.0 && high > low * 1.5) {
        return Err(format!(
            "band {low}:{high} Hz must start at 10 Hz or above and span at least half an octave"
        ));
    }
    Ok((low, high))
}

fn parse_a4_hz(text: &str) -> Result<f64, String> {
    let hz: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("'{text}' is not a frequency in Hz"))?;
    if (380.0..=500.0).contains(&hz) {
        Ok(hz)
    } else {
        Err(format!("A4 of {hz} Hz is outside 380–500 Hz"))
    }
}
