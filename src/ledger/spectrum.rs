//! The averaged spectrum of a pass, kept small enough to overlay passes.
//!
//! A stored spectrum lies on a log-spaced frequency axis from `low_hz` to
//! `high_hz` (both ends included), one level per point, so the axis needs
//! only two numbers in the file and the levels can never disagree with it in
//! length. Levels are kept to 0.01 dB, which is far finer than an overlay can
//! show and keeps a 2000-point spectrum near 16 kB of text.
//!
//! In the file the levels are one string of numbers in dB separated by
//! spaces (`level_db: "-53.57 -53.56 -53.5"`): still readable, and about
//! twenty times quicker to read back than a RON list of floats, which keeps
//! loading a build with hundreds of passes fast.

use serde::ser::SerializeStruct;
use serde::{Deserialize, Serialize, Serializer};

/// Most points a stored spectrum may hold.
pub const MAX_SPECTRUM_POINTS: usize = 4096;

/// Level step of stored spectra, dB.
pub const LEVEL_STEP_DB: f32 = 0.01;
const STEPS_PER_DB: f32 = 100.0;

/// A log-spaced spectrum of one pass, levels in dB (0.01 dB steps).
#[derive(Clone, Debug, PartialEq, Deserialize)]
#[serde(try_from = "SpectrumFields")]
pub struct StoredSpectrum {
    low_hz: f32,
    high_hz: f32,
    level_db: Vec<f32>,
}

/// What is wrong with the numbers given for a spectrum.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SpectrumError {
    /// Fewer than two points, or more than [`MAX_SPECTRUM_POINTS`].
    #[error("a stored spectrum needs between 2 and {MAX_SPECTRUM_POINTS} points, not {0}")]
    PointCount(usize),
    /// The axis ends are not finite, positive and increasing.
    #[error("the spectrum's frequency range {low_hz} Hz to {high_hz} Hz is not a rising range of positive frequencies")]
    BadRange {
        /// Lowest frequency given.
        low_hz: f32,
        /// Highest frequency given.
        high_hz: f32,
    },
    /// A level or frequency is NaN or infinite, or frequencies do not rise.
    #[error("spectrum point {index} is not a finite level at a rising positive frequency")]
    BadPoint {
        /// Index of the first bad point.
        index: usize,
    },
    /// A level in the file is not a number.
    #[error("spectrum level {index} (\"{text}\") is not a number")]
    BadLevelText {
        /// Index of the level.
        index: usize,
        /// The text found.
        text: String,
    },
    /// The frequency and level lists differ in length.
    #[error("the spectrum has {frequencies} frequencies but {levels} levels")]
    LengthMismatch {
        /// Number of frequencies.
        frequencies: usize,
        /// Number of levels.
        levels: usize,
    },
}

/// The serialised layout, checked on the way in.
#[derive(Deserialize)]
#[serde(rename = "StoredSpectrum", deny_unknown_fields)]
struct SpectrumFields {
    low_hz: f32,
    high_hz: f32,
    level_db: String,
}

impl TryFrom<SpectrumFields> for StoredSpectrum {
    type Error = SpectrumError;

    fn try_from(fields: SpectrumFields) -> Result<Self, Self::Error> {
        let levels = fields
            .level_db
            .split_ascii_whitespace()
            .enumerate()
            .map(|(index, word)| {
                word.parse::<f32>()
                    .map_err(|_| SpectrumError::BadLevelText {
                        index,
                        text: word.chars().take(20).collect(),
                    })
            })
            .collect::<Result<Vec<f32>, SpectrumError>>()?;
        Self::on_log_axis(fields.low_hz, fields.high_hz, levels)
    }
}

impl Serialize for StoredSpectrum {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut fields = serializer.serialize_struct("StoredSpectrum", 3)?;
        fields.serialize_field("low_hz", &self.low_hz)?;
        fields.serialize_field("high_hz", &self.high_hz)?;
        fields.serialize_field("level_db", &levels_as_text(&self.level_db))?;
        fields.end()
    }
}

/// Levels as text that reads back to the same values.
fn levels_as_text(level_db: &[f32]) -> String {
    let mut text = String::with_capacity(level_db.len() * 8);
    for (index, &level) in level_db.iter().enumerate() {
        if index > 0 {
            text.push(' ');
        }
        push_level(&mut text, level);
    }
    text
}

/// Writes a level kept to 0.01 dB as its two-decimal form ("-53.57",
/// "12.5", "-0"), which parses back to the same `f32` because that float is
/// the one nearest to the decimal. Far quicker than general float
/// formatting; very large values fall back to it.
fn push_level(text: &mut String, level: f32) {
    use std::fmt::Write;
    let hundredths = (level * STEPS_PER_DB).round();
    if hundredths.abs() >= 1.0e6 {
        // Writing to a String cannot fail.
        let _ = write!(text, "{level}");
        return;
    }
    // Exact: a whole number below a million.
    let hundredths = hundredths as i32;
    if level.is_sign_negative() {
        text.push('-');
    }
    let magnitude = hundredths.unsigned_abs();
    let _ = write!(text, "{}", magnitude / 100);
    let fraction = magnitude % 100;
    if fraction != 0 {
        text.push('.');
        text.push(char::from(b'0' + (fraction / 10) as u8));
        if fraction % 10 != 0 {
            text.push(char::from(b'0' + (fraction % 10) as u8));
        }
    }
}

/// Rounds to 0.01 dB. Dividing the whole number of steps by 100 (rather
/// than multiplying by 0.01, which is inexact in binary) gives the float
/// nearest to the two-decimal value, so the file shows "-47.58".
fn quantise_db(level_db: f32) -> f32 {
    (level_db * STEPS_PER_DB).round() / STEPS_PER_DB
}

impl StoredSpectrum {
    /// A spectrum whose levels already lie on the log-spaced axis from
    /// `low_hz` to `high_hz`. Levels are rounded to 0.01 dB.
    pub fn on_log_axis(
        low_hz: f32,
        high_hz: f32,
        level_db: Vec<f32>,
    ) -> Result<Self, SpectrumError> {
        if !(2..=MAX_SPECTRUM_POINTS).contains(&level_db.len()) {
            return Err(SpectrumError::PointCount(level_db.len()));
        }
        let range_ok =
            low_hz.is_finite() && high_hz.is_finite() && low_hz > 0.0 && high_hz > low_hz;
        if !range_ok {
            return Err(SpectrumError::BadRange { low_hz, high_hz });
        }
        if let Some(index) = level_db.iter().position(|l| !l.is_finite()) {
            return Err(SpectrumError::BadPoint { index });
        }
        let level_db = level_db.into_iter().map(quantise_db).collect();
        Ok(Self {
            low_hz,
            high_hz,
            level_db,
        })
    }

    /// Resamples any spectrum (frequencies rising, positive) onto `points`
    /// log-spaced frequencies over the same range. Each output point takes
    /// the highest input level within its share of the axis, so narrow peaks
    /// survive the decimation; where the input is sparser than the output,
    /// levels are interpolated linearly in log frequency.
    pub fn resample_log(
        frequency_hz: &[f32],
        level_db: &[f32],
        points: usize,
    ) -> Result<Self, SpectrumError> {
        if frequency_hz.len() != level_db.len() {
            return Err(SpectrumError::LengthMismatch {
                frequencies: frequency_hz.len(),
                levels: level_db.len(),
            });
        }
        check_input_points(frequency_hz, level_db)?;
        let (Some(&low_hz), Some(&high_hz)) = (frequency_hz.first(), frequency_hz.last()) else {
            return Err(SpectrumError::PointCount(0));
        };
        if !(2..=MAX_SPECTRUM_POINTS).contains(&points) {
            return Err(SpectrumError::PointCount(points));
        }
        if high_hz <= low_hz {
            return Err(SpectrumError::BadRange { low_hz, high_hz });
        }
        let axis = log_axis(low_hz, high_hz, points);
        let half_step = (f64::from(high_hz) / f64::from(low_hz)).ln() / (2.0 * (points - 1) as f64);
        let levels = axis
            .iter()
            .map(|&centre| level_near(frequency_hz, level_db, f64::from(centre), half_step))
            .collect();
        Self::on_log_axis(low_hz, high_hz, levels)
    }

    /// Lowest frequency of the axis, Hz.
    pub fn low_hz(&self) -> f32 {
        self.low_hz
    }

    /// Highest frequency of the axis, Hz.
    pub fn high_hz(&self) -> f32 {
        self.high_hz
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.level_db.len()
    }

    /// Always false: a stored spectrum has at least two points.
    pub fn is_empty(&self) -> bool {
        self.level_db.is_empty()
    }

    /// The levels, dB, one per axis point.
    pub fn level_db(&self) -> &[f32] {
        &self.level_db
    }

    /// The log-spaced frequencies of the axis, Hz.
    pub fn frequency_hz(&self) -> Vec<f32> {
        log_axis(self.low_hz, self.high_hz, self.level_db.len())
    }

    /// (frequency Hz, level dB) pairs, ready to plot.
    pub fn points(&self) -> impl Iterator<Item = (f32, f32)> + '_ {
        self.frequency_hz()
            .into_iter()
            .zip(self.level_db.iter().copied())
    }
}

fn check_input_points(frequency_hz: &[f32], level_db: &[f32]) -> Result<(), SpectrumError> {
    let mut previous_hz = 0.0f32;
    for (index, (&f, &l)) in frequency_hz.iter().zip(level_db).enumerate() {
        if !(f.is_finite() && l.is_finite() && f > previous_hz) {
            return Err(SpectrumError::BadPoint { index });
        }
        previous_hz = f;
    }
    Ok(())
}

/// `points` frequencies spaced evenly in log frequency, ends included.
fn log_axis(low_hz: f32, high_hz: f32, points: usize) -> Vec<f32> {
    let ln_low = f64::from(low_hz).ln();
    let step = (f64::from(high_hz).ln() - ln_low) / (points.max(2) - 1) as f64;
    (0..points)
        .map(|i| (ln_low + step * i as f64).exp() as f32)
        .collect()
}

/// Highest level within ±`half_step` (in ln f) of `centre_hz`, else the
/// level interpolated in ln f between the neighbours.
fn level_near(frequency_hz: &[f32], level_db: &[f32], centre_hz: f64, half_step: f64) -> f32 {
    let lower = (centre_hz.ln() - half_step).exp();
    let upper = (centre_hz.ln() + half_step).exp();
    let start = frequency_hz.partition_point(|&f| f64::from(f) < lower);
    let end = frequency_hz.partition_point(|&f| f64::from(f) <= upper);
    if let Some(highest) = level_db[start..end].iter().copied().reduce(f32::max) {
        return highest;
    }
    let above = frequency_hz.partition_point(|&f| f64::from(f) < centre_hz);
    if above == 0 {
        return level_db[0];
    }
    if above >= frequency_hz.len() {
        return level_db[level_db.len() - 1];
    }
    let (f0, f1) = (
        f64::from(frequency_hz[above - 1]),
        f64::from(frequency_hz[above]),
    );
    let t = (centre_hz.ln() - f0.ln()) / (f1.ln() - f0.ln());
    let (l0, l1) = (f64::from(level_db[above - 1]), f64::from(level_db[above]));
    (l0 + t * (l1 - l0)) as f32
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_is_log_spaced_with_both_ends() {
        let s = StoredSpectrum::on_log_axis(20.0, 2000.0, vec![0.0; 3]).unwrap();
        let f = s.frequency_hz();
        assert!(
            (f[0] - 20.0).abs() < 1e-3
                && (f[1] - 200.0).abs() < 1e-2
                && (f[2] - 2000.0).abs() < 0.1
        );
    }

    #[test]
    fn levels_are_kept_to_a_hundredth_of_a_db() {
        let s = StoredSpectrum::on_log_axis(20.0, 2000.0, vec![-43.27161, 1.0049]).unwrap();
        assert_eq!(s.level_db(), [-43.27, 1.0]);
        // Every step prints with at most two decimals.
        let levels: Vec<f32> = (-20_000..20_000).map(|i| i as f32 * 0.0100003).collect();
        let s = StoredSpectrum::on_log_axis(20.0, 2000.0, levels[..4000].to_vec()).unwrap();
        for level in s.level_db() {
            let text = format!("{level:?}");
            let decimals = text.split('.').nth(1).map_or(0, str::len);
            assert!(decimals <= 2, "{text}");
        }
    }

    #[test]
    fn decimation_keeps_a_narrow_peak() {
        // 20 000 linear bins 1..20001 Hz, one bin at 350 Hz 40 dB above the floor.
        let f: Vec<f32> = (1..=20_000).map(|i| i as f32).collect();
        let l: Vec<f32> = f
            .iter()
            .map(|&x| if x == 350.0 { 0.0 } else { -40.0 })
            .collect();
        let s = StoredSpectrum::resample_log(&f, &l, 500).unwrap();
        let (peak_hz, peak_db) = s
            .points()
            .fold((0.0, f32::MIN), |a, p| if p.1 > a.1 { p } else { a });
        assert_eq!(peak_db, 0.0);
        assert!((peak_hz / 350.0 - 1.0).abs() < 0.01, "{peak_hz}");
    }

    #[test]
    fn levels_are_written_as_one_string_and_read_back_exactly() {
        let s = StoredSpectrum::on_log_axis(20.0, 2000.0, vec![-53.57, -0.0, 12.0, 1e-3]).unwrap();
        let text = ron::to_string(&s).unwrap();
        assert!(text.contains(r#"level_db:"-53.57 -0 12 0""#), "{text}");
        let back: StoredSpectrum = ron::from_str(&text).unwrap();
        assert_eq!(back, s);
        // Every 0.01 dB step from -300 dB to +300 dB reads back exactly.
        let levels: Vec<f32> = (-30_000..=30_000).map(|n| n as f32 / 100.0).collect();
        let text = levels_as_text(&levels);
        let back: Vec<f32> = text.split(' ').map(|w| w.parse().unwrap()).collect();
        assert_eq!(back, levels);
        assert!(text.starts_with("-300 -299.99 -299.98"));
        let bad = ron::to_string(&s).unwrap().replace("12", "twelve");
        let error = ron::from_str::<StoredSpectrum>(&bad).unwrap_err();
        assert!(error.to_string().contains("twelve"), "{error}");
    }

    #[test]
    fn bad_spectra_are_refused() {
        assert!(StoredSpectrum::on_log_axis(20.0, 2000.0, vec![0.0]).is_err());
        assert!(StoredSpectrum::on_log_axis(200.0, 20.0, vec![0.0; 4]).is_err());
        assert!(StoredSpectrum::on_log_axis(20.0, 2000.0, vec![0.0, f32::NAN]).is_err());
        assert!(StoredSpectrum::resample_log(&[10.0, 5.0], &[0.0, 0.0], 10).is_err());
        assert!(StoredSpectrum::resample_log(&[10.0, 20.0], &[0.0], 10).is_err());
    }
}
