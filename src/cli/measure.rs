//! The measuring options `analyze` and `listen` share, and how they become
//! trigger and analysis settings.

use anyhow::bail;

use super::values::{parse_count, parse_in_range};
use crate::analysis::{AnalysisSettings, TriggerSettings, DEFAULT_A4_HZ};
use crate::text::read_number;

/// The band searched when none is given.
const DEFAULT_BAND_HZ: (f64, f64) = (40.0, 4000.0);

#[derive(Debug, Clone, clap::Args)]
pub struct MeasureArgs {
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Frequency band to search, LOW:HIGH in Hz [default: 40:4000, or up to
    /// 45 % of the sample rate for slower recordings].
    #[arg(long, value_name = "LOW:HIGH", value_parser = parse_band_hz, allow_hyphen_values = true)]
    pub band: Option<(f64, f64)>,
    /// At most this many modes (1 to 64).
    #[arg(long, value_name = "N", default_value_t = 16, value_parser = parse_max_modes, allow_hyphen_values = true)]
    pub max_modes: u16,
    /// Reference A4 for note names, Hz (380 to 500).
    #[arg(long, value_name = "HZ", default_value_t = DEFAULT_A4_HZ, value_parser = parse_a4_hz, allow_hyphen_values = true)]
    pub a4: f64,
    /// Trigger margin above the noise floor, dB (3 to 60).
    #[arg(long, value_name = "DB", default_value_t = 20.0, value_parser = parse_margin_db, allow_hyphen_values = true)]
    pub margin_db: f64,
    /// Record length after each strike, ms (100 to 10000).
    #[arg(long, value_name = "MS", default_value_t = 1000.0, value_parser = parse_record_ms, allow_hyphen_values = true)]
    pub record_ms: f64,
}

impl MeasureArgs {
    /// Trigger settings (the values were checked when the options were read).
    pub fn trigger_settings(&self) -> TriggerSettings {
        TriggerSettings {
            margin_db: self.margin_db,
            record_ms: self.record_ms,
            ..Default::default()
        }
    }

    /// Analysis settings for a source at `sample_rate_hz` (named `source`
    /// in the error when the band does not fit it).
    pub fn analysis_settings(
        &self,
        sample_rate_hz: f64,
        source: &str,
    ) -> anyhow::Result<AnalysisSettings> {
        let (band_low_hz, band_high_hz) = band_for(self.band, sample_rate_hz, source)?;
        Ok(AnalysisSettings {
            band_low_hz,
            band_high_hz,
            max_modes: usize::from(self.max_modes),
            ..Default::default()
        })
    }
}

/// The band to search: the user's, checked against the sample rate, or the
/// default 40–4000 Hz trimmed to 45 % of the sample rate.
pub fn band_for(
    requested: Option<(f64, f64)>,
    sample_rate_hz: f64,
    source: &str,
) -> anyhow::Result<(f64, f64)> {
    let nyquist_hz = sample_rate_hz / 2.0;
    match requested {
        Some((_, high)) if high >= nyquist_hz => bail!(
            "the band's upper edge {high} Hz is at or above half the sample rate of {source} ({nyquist_hz} Hz)"
        ),
        Some(band) => Ok(band),
        None => Ok((DEFAULT_BAND_HZ.0, DEFAULT_BAND_HZ.1.min(0.9 * nyquist_hz))),
    }
}

/// Parses "LOW:HIGH" in Hz: LOW at least 10 Hz, HIGH at least 1.5 × LOW
/// (half an octave is the least span the mode search works in).
pub fn parse_band_hz(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = text
        .split_once(':')
        .ok_or_else(|| format!("'{text}' is not LOW:HIGH in Hz, e.g. 40:4000"))?;
    let parse =
        |s: &str| read_number(s).map_err(|_| format!("'{s}' in '{text}' is not a number of Hz"));
    let (low, high) = (parse(low)?, parse(high)?);
    if low < 10.0 {
        return Err(format!(
            "the band {low}:{high} Hz starts below 10 Hz; give LOW:HIGH with LOW at least 10 Hz"
        ));
    }
    if high < low * 1.5 {
        return Err(format!(
            "the band {low}:{high} Hz spans less than half an octave; give LOW:HIGH with HIGH at least 1.5 × LOW"
        ));
    }
    Ok((low, high))
}

/// Parses the reference A4 in Hz (380–500).
pub fn parse_a4_hz(text: &str) -> Result<f64, String> {
    parse_in_range(text, 380.0..=500.0, "Hz")
}

/// Parses the trigger margin in dB (3–60).
pub fn parse_margin_db(text: &str) -> Result<f64, String> {
    parse_in_range(text, 3.0..=60.0, "dB")
}

/// Parses the record length in ms (100–10 000).
pub fn parse_record_ms(text: &str) -> Result<f64, String> {
    parse_in_range(text, 100.0..=10_000.0, "ms")
}

/// Parses the mode count (1–64).
pub fn parse_max_modes(text: &str) -> Result<u16, String> {
    parse_count(text, 1..=64).map(|n| n as u16)
}
