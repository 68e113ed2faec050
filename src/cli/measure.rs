//! The measuring options `analyze` and `listen` share, and how they become
//! trigger and analysis settings.

use anyhow::bail;

use crate::analysis::{AnalysisSettings, TriggerSettings, DEFAULT_A4_HZ};

/// The band searched when none is given.
const DEFAULT_BAND_HZ: (f64, f64) = (40.0, 4000.0);

#[derive(Debug, Clone, clap::Args)]
pub struct MeasureArgs {
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

impl MeasureArgs {
    /// Trigger settings, or one sentence naming the option that is off.
    pub fn trigger_settings(&self) -> anyhow::Result<TriggerSettings> {
        if !(self.margin_db.is_finite() && (3.0..=60.0).contains(&self.margin_db)) {
            bail!(
                "--margin-db must be between 3 and 60 dB, not {}",
                self.margin_db
            );
        }
        if !(self.record_ms.is_finite() && (100.0..=10_000.0).contains(&self.record_ms)) {
            bail!(
                "--record-ms must be between 100 and 10000 ms, not {}",
                self.record_ms
            );
        }
        Ok(TriggerSettings {
            margin_db: self.margin_db,
            record_ms: self.record_ms,
            ..Default::default()
        })
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

/// Parses the reference A4 in Hz (380–500).
pub fn parse_a4_hz(text: &str) -> Result<f64, String> {
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
