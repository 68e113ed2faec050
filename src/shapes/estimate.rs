//! From the taps at every point to each mode's signed shape: the pass's
//! modes (`poles`), each tap's complex amplitudes with the poles fixed
//! (`amplitudes`), each tap's delay and each mode's reference phase
//! (`align`), then per point the mean over its taps, their spread, an
//! uncertainty, and per mode a figure of how well the shape is determined.
//!
//! Points near a nodal line give weak values, dominated by noise: they are
//! kept as they are, with their uncertainty ([`ModeShape::is_uncertain`]),
//! never dropped or smoothed here.

use rustfft::num_complex::Complex64;
use serde::{Deserialize, Serialize};

use super::align::align_taps;
use super::amplitudes::{fit_amplitudes, pole_phasor, FitWindow, TapAmplitudes};
use super::grid::TapPoint;
use super::poles::{pass_poles, PassPole};
use crate::analysis::{
    find_taps, AnalysisSettings, FoundTap, RejectReason, TapAnalysis, TapAnalyzer, TriggerSettings,
};

/// How shapes are estimated.
#[derive(Clone, Debug, PartialEq)]
pub struct ShapeSettings {
    /// The per-tap mode search (its band is the band of the map).
    pub analysis: AnalysisSettings,
    /// At most this many modes in the map.
    pub max_modes: usize,
    /// A mode must show in the per-tap analysis at this share of the
    /// points (it vanishes on its nodal lines, so not at all of them).
    pub min_point_share: f64,
    /// The amplitude fit starts this long after the trigger's onset, when
    /// the strike and its click are over, ms.
    pub fit_start_ms: f64,
    /// The amplitude fit covers at most this much of the decay, ms.
    pub fit_length_ms: f64,
    /// Each tap's delay is searched within ± this of its onset, ms (the
    /// trigger finds the onset to about a millisecond).
    pub delay_search_ms: f64,
}

impl Default for ShapeSettings {
    fn default() -> Self {
        Self {
            analysis: AnalysisSettings::default(),
            max_modes: 12,
            min_point_share: 0.25,
            fit_start_ms: 3.0,
            fit_length_ms: 500.0,
            delay_search_ms: 2.0,
        }
    }
}

/// The trigger for roving taps: the library's rules with records of
/// 600 ms, so the maker can tap about once a second.
pub fn roving_trigger_settings() -> TriggerSettings {
    TriggerSettings {
        record_ms: 600.0,
        ..TriggerSettings::default()
    }
}

/// The taps the library trigger finds in one point's recording.
#[derive(Clone, Debug, PartialEq)]
pub struct RecordingTaps {
    /// Accepted taps, in time order.
    pub accepted: Vec<FoundTap>,
    /// Why each of the others was left out, in time order.
    pub rejected: Vec<RejectReason>,
}

/// Finds the taps in one point's recording with the usual trigger,
/// double-strike and clip rules.
pub fn taps_in_recording(
    samples: &[f32],
    sample_rate_hz: f64,
    trigger: &TriggerSettings,
) -> RecordingTaps {
    let (accepted, rejected): (Vec<FoundTap>, Vec<FoundTap>) =
        find_taps(samples, sample_rate_hz, trigger)
            .into_iter()
            .partition(|t| t.rejected.is_none());
    RecordingTaps {
        accepted,
        rejected: rejected.into_iter().filter_map(|t| t.rejected).collect(),
    }
}

/// The accepted taps at one point.
#[derive(Clone, Debug, PartialEq)]
pub struct PointTaps {
    /// Where.
    pub point: TapPoint,
    /// The accepted taps (as the trigger found them).
    pub taps: Vec<FoundTap>,
}

/// What a map cannot be made from.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ShapeError {
    /// A point has no accepted tap.
    #[error("point {point} has no usable tap")]
    NoUsableTap {
        /// The point's name.
        point: String,
    },
    /// Fewer than two points.
    #[error("a shape map needs at least two tap points, not {0}")]
    TooFewPoints(usize),
    /// No mode shows at enough points.
    #[error("no mode shows at enough of the {points} points to map (each mode must show at {needed} or more)")]
    NoModes {
        /// Points given.
        points: usize,
        /// Points a mode must show at.
        needed: usize,
    },
    /// A tap too short to fit.
    #[error("a tap at point {point} is too short to measure its modes' amplitudes")]
    TapTooShort {
        /// The point's name.
        point: String,
    },
}

/// One point of a map.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MapPoint {
    /// Where.
    pub point: TapPoint,
    /// Each tap's delay after its onset as the alignment found it, ms.
    pub tap_delays_ms: Vec<f64>,
    /// Each tap's strength relative to the point's mean (1.0 for a single
    /// tap): the taps at one point share one shape, so their amplitudes
    /// differ only by how hard each was struck.
    pub tap_strengths: Vec<f64>,
}

impl MapPoint {
    /// Taps used at this point.
    pub fn taps_used(&self) -> usize {
        self.tap_delays_ms.len()
    }
}

/// One mode's signed shape over the points.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ModeShape {
    /// Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
    /// One signed value per point (in the map's point order); the largest
    /// magnitude is +1.0.
    pub values: Vec<f64>,
    /// Standard deviation of each point's value over its taps (0 for a
    /// point tapped once), on the same scale.
    pub spreads: Vec<f64>,
    /// Standard uncertainty of each point's value: its taps' scatter, the
    /// part of them the alignment could not make real, and the fit's noise.
    pub uncertainties: Vec<f64>,
    /// How well the shape is determined, 0 to 1: the share of the mode's
    /// energy over all taps that lies in one real, repeatable shape (what
    /// is left over is the imaginary part after alignment and the scatter
    /// between taps at the same point).
    pub quality: f64,
    /// Points at which the per-tap analysis listed the mode.
    pub points_seen: usize,
}

/// A value less than this many uncertainties from zero has no certain sign.
pub const CERTAIN_SIGN_UNCERTAINTIES: f64 = 2.0;

impl ModeShape {
    /// True when point `index`'s value lies within
    /// [`CERTAIN_SIGN_UNCERTAINTIES`] of zero: near a nodal line, its sign
    /// is not known.
    pub fn is_uncertain(&self, index: usize) -> bool {
        match (self.values.get(index), self.uncertainties.get(index)) {
            (Some(v), Some(u)) => v.abs() < CERTAIN_SIGN_UNCERTAINTIES * u,
            _ => true,
        }
    }

    /// Weights for fitting a surface through the values (see
    /// [`super::drawing::weights_from_uncertainties`]).
    pub fn fit_weights(&self) -> Vec<f64> {
        super::drawing::weights_from_uncertainties(&self.uncertainties)
    }
}

/// The shapes of a roving-tap pass.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ShapeMap {
    /// The points, in the order given.
    pub points: Vec<MapPoint>,
    /// The modes, lowest first.
    pub modes: Vec<ModeShape>,
}

/// The modal assurance criterion of two shapes over the same points:
/// (aᵀb)²/(aᵀa·bᵀb), 1 for proportional shapes, 0 for orthogonal ones.
pub fn modal_assurance(a: &[f64], b: &[f64]) -> f64 {
    let dot: f64 = a.iter().zip(b).map(|(x, y)| x * y).sum();
    let aa: f64 = a.iter().map(|x| x * x).sum();
    let bb: f64 = b.iter().map(|x| x * x).sum();
    if aa > 0.0 && bb > 0.0 {
        dot * dot / (aa * bb)
    } else {
        0.0
    }
}

/// Estimates every mode's shape from the accepted taps at each point.
pub fn estimate_shapes(
    points: &[PointTaps],
    sample_rate_hz: f64,
    settings: &ShapeSettings,
) -> Result<ShapeMap, ShapeError> {
    if points.len() < 2 {
        return Err(ShapeError::TooFewPoints(points.len()));
    }
    if let Some(empty) = points.iter().find(|p| p.taps.is_empty()) {
        return Err(ShapeError::NoUsableTap {
            point: empty.point.name.clone(),
        });
    }
    let mut analyzer = TapAnalyzer::new(settings.analysis.clone(), sample_rate_hz);
    let analyses: Vec<Vec<TapAnalysis>> = points
        .iter()
        .map(|p| p.taps.iter().map(|t| analyzer.analyze(t)).collect())
        .collect();
    let needed = ((settings.min_point_share * points.len() as f64).ceil() as usize).max(2);
    let poles = pass_poles(&analyses, needed, settings.max_modes);
    if poles.is_empty() {
        return Err(ShapeError::NoModes {
            points: points.len(),
            needed,
        });
    }
    let fits = fit_all(points, sample_rate_hz, settings, &poles)?;
    let flat: Vec<Vec<Complex64>> = fits
        .iter()
        .flatten()
        .map(|f| f.amplitudes.clone())
        .collect();
    let alignment = align_taps(&flat, &poles, settings.delay_search_ms * 1e-3);
    let mut taps = Vec::with_capacity(flat.len());
    let mut next = 0;
    for point_fits in &fits {
        let mut point_taps = Vec::with_capacity(point_fits.len());
        for fit in point_fits {
            point_taps.push(AlignedTap::new(
                fit,
                &poles,
                alignment.delays_s[next],
                &alignment.phases_rad,
            ));
            next += 1;
        }
        taps.push(point_taps);
    }
    let strengths: Vec<Vec<f64>> = taps.iter().map(|t| equalise_strengths(t, &poles)).collect();
    let modes = (0..poles.len())
        .map(|k| mode_shape(k, &poles[k], &taps, &strengths))
        .collect();
    let map_points = points
        .iter()
        .zip(&taps)
        .zip(strengths)
        .map(|((p, t), s)| MapPoint {
            point: p.point.clone(),
            tap_delays_ms: t.iter().map(|a| a.delay_s * 1e3).collect(),
            tap_strengths: s,
        })
        .collect();
    Ok(ShapeMap {
        points: map_points,
        modes,
    })
}

/// The fixed-pole fit of every tap, per point.
fn fit_all(
    points: &[PointTaps],
    sample_rate_hz: f64,
    settings: &ShapeSettings,
    poles: &[PassPole],
) -> Result<Vec<Vec<TapAmplitudes>>, ShapeError> {
    let to_samples = |ms: f64| (ms * 1e-3 * sample_rate_hz).round() as usize;
    points
        .iter()
        .map(|p| {
            p.taps
                .iter()
                .map(|tap| {
                    let onset = strike_index(&tap.samples, tap.onset_index, sample_rate_hz);
                    let window = FitWindow {
                        onset,
                        start: onset + to_samples(settings.fit_start_ms),
                        end: onset + to_samples(settings.fit_length_ms),
                    };
                    fit_amplitudes(&tap.samples, window, sample_rate_hz, poles).ok_or_else(|| {
                        ShapeError::TapTooShort {
                            point: p.point.name.clone(),
                        }
                    })
                })
                .collect()
        })
        .collect()
}

/// Noise must be exceeded this many times (RMS) to count as the strike.
const STRIKE_ABOVE_NOISE: f64 = 5.0;

/// Where the strike starts in a record, to a fraction of a millisecond:
/// the first sample within 5 ms before to 10 ms after the trigger's onset
/// that stands [`STRIKE_ABOVE_NOISE`] times above the RMS of the record
/// before that window. The trigger's onset is only the ~1 ms envelope
/// block where the level crossed its margin; a tap that rises slowly (a
/// low mode, heard at a point where the higher ones are weak) crosses it
/// several milliseconds late. Falls back to the trigger's onset when no
/// sample stands out (or there is no noise before it to judge by).
fn strike_index(record: &[f32], onset_index: usize, sample_rate_hz: f64) -> usize {
    let before = (5e-3 * sample_rate_hz) as usize;
    let after = (10e-3 * sample_rate_hz) as usize;
    let from = onset_index.saturating_sub(before);
    if from < 16 {
        return onset_index;
    }
    let noise = &record[..from];
    let rms =
        (noise.iter().map(|&x| f64::from(x).powi(2)).sum::<f64>() / noise.len() as f64).sqrt();
    if rms <= 0.0 {
        return onset_index;
    }
    let threshold = STRIKE_ABOVE_NOISE * rms;
    let to = (onset_index + after).min(record.len());
    (from..to)
        .find(|&n| f64::from(record[n]).abs() > threshold)
        .unwrap_or(onset_index)
}

/// One tap's amplitudes after alignment: real parts (the shape values),
/// imaginary parts (what alignment could not remove) and fit variances.
struct AlignedTap {
    delay_s: f64,
    real: Vec<f64>,
    imaginary: Vec<f64>,
    variances: Vec<f64>,
}

impl AlignedTap {
    fn new(fit: &TapAmplitudes, poles: &[PassPole], delay_s: f64, phases_rad: &[f64]) -> Self {
        let mut real = Vec::with_capacity(poles.len());
        let mut imaginary = Vec::with_capacity(poles.len());
        let mut variances = Vec::with_capacity(poles.len());
        for (k, pole) in poles.iter().enumerate() {
            let turn = pole_phasor(pole, delay_s) * Complex64::from_polar(1.0, -phases_rad[k]);
            let aligned = fit.amplitudes[k] * turn;
            real.push(aligned.re);
            imaginary.push(aligned.im);
            variances.push(fit.variances[k] * turn.norm_sqr());
        }
        Self {
            delay_s,
            real,
            imaginary,
            variances,
        }
    }
}

/// Each tap's strength relative to the mean of its point's taps: the
/// least-squares factor between its real amplitudes and the point's mean
/// amplitudes, every mode weighted alike; normalised to a mean of 1. A tap
/// whose factor makes no sense (not clearly positive) keeps 1.
fn equalise_strengths(taps: &[AlignedTap], poles: &[PassPole]) -> Vec<f64> {
    if taps.len() < 2 {
        return vec![1.0; taps.len()];
    }
    let n = taps.len() as f64;
    let mean: Vec<f64> = (0..poles.len())
        .map(|k| taps.iter().map(|t| t.real[k]).sum::<f64>() / n)
        .collect();
    let weight: Vec<f64> = (0..poles.len())
        .map(|k| {
            let energy: f64 = taps
                .iter()
                .map(|t| t.real[k].powi(2) + t.imaginary[k].powi(2))
                .sum();
            if energy > 0.0 {
                1.0 / energy
            } else {
                0.0
            }
        })
        .collect();
    let reference: f64 = (0..poles.len())
        .map(|k| weight[k] * mean[k] * mean[k])
        .sum();
    let mut factors: Vec<f64> = taps
        .iter()
        .map(|t| {
            let along: f64 = (0..poles.len())
                .map(|k| weight[k] * t.real[k] * mean[k])
                .sum();
            let factor = along / reference;
            if reference > 0.0 && factor.is_finite() && factor > 0.2 {
                factor
            } else {
                1.0
            }
        })
        .collect();
    let average = factors.iter().sum::<f64>() / n;
    for f in &mut factors {
        *f /= average;
    }
    factors
}

/// Mode k's shape from the aligned taps of every point.
fn mode_shape(
    k: usize,
    pole: &PassPole,
    taps: &[Vec<AlignedTap>],
    strengths: &[Vec<f64>],
) -> ModeShape {
    let mut values = Vec::with_capacity(taps.len());
    let mut spreads = Vec::with_capacity(taps.len());
    let mut uncertainties = Vec::with_capacity(taps.len());
    let (mut consistent, mut scatter, mut leftover) = (0.0, 0.0, 0.0);
    for (point_taps, point_strengths) in taps.iter().zip(strengths) {
        let n = point_taps.len() as f64;
        let real: Vec<f64> = point_taps
            .iter()
            .zip(point_strengths)
            .map(|(t, s)| t.real[k] / s)
            .collect();
        let imaginary_sq: f64 = point_taps
            .iter()
            .zip(point_strengths)
            .map(|(t, s)| (t.imaginary[k] / s).powi(2))
            .sum();
        let fit_variance: f64 = point_taps
            .iter()
            .zip(point_strengths)
            .map(|(t, s)| t.variances[k] / (2.0 * s * s))
            .sum();
        let mean = real.iter().sum::<f64>() / n;
        let deviations: f64 = real.iter().map(|v| (v - mean).powi(2)).sum();
        let spread = if point_taps.len() > 1 {
            (deviations / (n - 1.0)).sqrt()
        } else {
            0.0
        };
        consistent += n * mean * mean;
        scatter += deviations;
        leftover += imaginary_sq;
        values.push(mean);
        spreads.push(spread);
        uncertainties.push(((spread * spread + (imaginary_sq + fit_variance) / n) / n).sqrt());
    }
    let total = consistent + scatter + leftover;
    let quality = if total > 0.0 { consistent / total } else { 0.0 };
    let peak_index = (0..values.len())
        .max_by(|&a, &b| values[a].abs().total_cmp(&values[b].abs()))
        .unwrap_or(0);
    let scale = values.get(peak_index).copied().unwrap_or(1.0);
    let scale = if scale != 0.0 { scale } else { 1.0 };
    ModeShape {
        frequency_hz: pole.frequency_hz,
        q: pole.q,
        values: values.iter().map(|v| v / scale).collect(),
        spreads: spreads.iter().map(|s| s / scale.abs()).collect(),
        uncertainties: uncertainties.iter().map(|u| u / scale.abs()).collect(),
        quality,
        points_seen: pole.points_seen,
    }
}
