//! Carrying labels from earlier passes to the modes of a new pass.
//!
//! Method (a design of this project, no outside source):
//!
//! 1. For each label, take its history in the part: (mass, frequency) at
//!    every earlier pass where it appears.
//! 2. Predict where it lands in the new pass from its last appearance and
//!    the mass change, `f_pred = f_last·(m_new/m_last)^k`. The exponent `k` is
//!    the least-squares slope of ln f against ln m over the label's own
//!    history; failing that (one point, no mass change, or an implausible
//!    slope), the slope pooled over all labels of the part; failing that,
//!    k = 1, the uniform-thinning rule of thin-plate theory (bending
//!    frequency ∝ thickness ∝ mass for a flat plate thinned evenly).
//! 3. The label's scatter `σ` (cents) is the spread of how well that rule
//!    predicted each earlier step (root mean square over n − 2 degrees of
//!    freedom), never less than [`MIN_SCATTER_CENTS`]; with fewer than three
//!    appearances it is [`DEFAULT_SCATTER_CENTS`].
//! 4. Labels are matched to new modes by distance in cents from the
//!    prediction, nearest (in units of σ) first, so no mode gets two labels
//!    and no label two modes. Modes farther than the search window are not
//!    considered; a label without a candidate is reported as not found.
//! 5. A match is confident when the mode is the label's nearest, lies within
//!    [`CONFIDENT_WITHIN_SCATTERS`]·σ of the prediction, and the runner-up is
//!    at least [`RUNNER_UP_MARGIN_SCATTERS`]·σ farther; otherwise the label is
//!    placed but flagged for the maker to confirm.

use super::model::Pass;
use crate::analysis::pitch::cents_between;

/// Smallest scatter assumed for a label, cents. A mode's frequency repeats
/// from pass to pass only to within a few cents (common practice, no source).
pub const MIN_SCATTER_CENTS: f64 = 8.0;
/// Scatter assumed when a label has fewer than three appearances, cents.
pub const DEFAULT_SCATTER_CENTS: f64 = 25.0;
/// A confident match lies within this many scatters of the prediction.
pub const CONFIDENT_WITHIN_SCATTERS: f64 = 3.0;
/// ... and its runner-up at least this many scatters farther away.
pub const RUNNER_UP_MARGIN_SCATTERS: f64 = 3.0;
/// Search window: the larger of this many scatters ...
pub const SEARCH_SCATTERS: f64 = 8.0;
/// ... and this many cents (two semitones) around the prediction.
pub const MIN_SEARCH_CENTS: f64 = 200.0;

/// Plausible range of the exponent k in f ∝ m^k for a thinning pass;
/// slopes outside it are treated as noise.
const EXPONENT_RANGE: std::ops::RangeInclusive<f64> = 0.05..=3.0;
/// Smallest spread of ln m (≈ 0.5 % of mass) that can support a slope.
const MIN_LN_MASS_SPREAD: f64 = 0.005;

/// Where one label was carried.
#[derive(Clone, Debug, PartialEq)]
pub struct CarriedLabel {
    /// The label.
    pub label: String,
    /// Index of the new pass's mode (modes sorted by frequency).
    pub mode_index: usize,
    /// Where the history said it should land, Hz.
    pub predicted_hz: f64,
    /// Distance of the chosen mode from the prediction, cents (signed).
    pub distance_cents: f64,
    /// The label's scatter used, cents.
    pub scatter_cents: f64,
    /// True if the match is clear; false if the maker should confirm it.
    pub confident: bool,
}

/// The result of carrying labels to a new pass.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct CarryOver {
    /// Labels placed, in mode order.
    pub carried: Vec<CarriedLabel>,
    /// Labels with no candidate mode in their search window.
    pub not_found: Vec<String>,
}

/// A label's expected position in the new pass.
#[derive(Clone, Debug, PartialEq)]
struct Prediction {
    label: String,
    predicted_hz: f64,
    scatter_cents: f64,
}

impl Prediction {
    fn search_cents(&self) -> f64 {
        (SEARCH_SCATTERS * self.scatter_cents).max(MIN_SEARCH_CENTS)
    }
}

/// Carries the labels of `history` (the part's earlier passes) to a new pass
/// of mass `new_mass_g` whose modes are at `new_frequencies_hz` (sorted).
/// `label_order` fixes the order labels are considered in (ties).
pub fn carry_labels(
    history: &[Pass],
    label_order: &[String],
    new_mass_g: f64,
    new_frequencies_hz: &[f64],
) -> CarryOver {
    let pooled_k = pooled_exponent(history, label_order);
    let predictions: Vec<Prediction> = label_order
        .iter()
        .filter_map(|label| predict(label, &label_points(history, label), new_mass_g, pooled_k))
        .collect();
    assign(&predictions, new_frequencies_hz)
}

/// (mass g, frequency Hz) of `label` in each pass that has it.
fn label_points(history: &[Pass], label: &str) -> Vec<(f64, f64)> {
    history
        .iter()
        .filter_map(|pass| {
            pass.mode_labelled(label)
                .map(|m| (pass.mass_g, m.frequency_hz))
        })
        .collect()
}

fn predict(
    label: &str,
    points: &[(f64, f64)],
    new_mass_g: f64,
    pooled_k: Option<f64>,
) -> Option<Prediction> {
    let &(last_mass_g, last_hz) = points.last()?;
    let k = fitted_exponent(points).or(pooled_k).unwrap_or(1.0);
    let predicted_hz = last_hz * (new_mass_g / last_mass_g).powf(k);
    Some(Prediction {
        label: label.to_string(),
        predicted_hz,
        scatter_cents: step_scatter_cents(points, k),
    })
}

/// Least-squares slope of ln f on ln m, if the data support a plausible one.
pub(crate) fn fitted_exponent(points: &[(f64, f64)]) -> Option<f64> {
    let logs: Vec<(f64, f64)> = points.iter().map(|&(m, f)| (m.ln(), f.ln())).collect();
    slope_of_groups(&[logs])
}

/// The slope pooled over all labels, each label centred on its own means.
fn pooled_exponent(history: &[Pass], labels: &[String]) -> Option<f64> {
    let groups: Vec<Vec<(f64, f64)>> = labels
        .iter()
        .map(|l| {
            label_points(history, l)
                .iter()
                .map(|&(m, f)| (m.ln(), f.ln()))
                .collect()
        })
        .collect();
    slope_of_groups(&groups)
}

/// Common slope of several groups of (x, y), each with its own intercept.
fn slope_of_groups(groups: &[Vec<(f64, f64)>]) -> Option<f64> {
    let (mut sxy, mut sxx, mut spread_ok) = (0.0, 0.0, false);
    for group in groups.iter().filter(|g| g.len() >= 2) {
        let n = group.len() as f64;
        let mean_x = group.iter().map(|p| p.0).sum::<f64>() / n;
        let mean_y = group.iter().map(|p| p.1).sum::<f64>() / n;
        let (lo, hi) = group.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
            (lo.min(p.0), hi.max(p.0))
        });
        spread_ok |= hi - lo >= MIN_LN_MASS_SPREAD;
        for &(x, y) in group {
            sxy += (x - mean_x) * (y - mean_y);
            sxx += (x - mean_x) * (x - mean_x);
        }
    }
    if !spread_ok || sxx <= 0.0 {
        return None;
    }
    let k = sxy / sxx;
    (k.is_finite() && EXPONENT_RANGE.contains(&k)).then_some(k)
}

/// How well f ∝ m^k predicted each step of the history, cents.
fn step_scatter_cents(points: &[(f64, f64)], k: f64) -> f64 {
    if points.len() < 3 {
        return DEFAULT_SCATTER_CENTS;
    }
    let sum_sq: f64 = points
        .windows(2)
        .map(|w| {
            let predicted = w[0].1 * (w[1].0 / w[0].0).powf(k);
            cents_between(predicted, w[1].1).powi(2)
        })
        .sum();
    let rms = (sum_sq / (points.len() - 2) as f64).sqrt();
    if rms.is_finite() {
        rms.max(MIN_SCATTER_CENTS)
    } else {
        DEFAULT_SCATTER_CENTS
    }
}

/// Greedy matching, nearest in units of scatter first.
fn assign(predictions: &[Prediction], frequencies_hz: &[f64]) -> CarryOver {
    let distance = |p: &Prediction, j: usize| cents_between(p.predicted_hz, frequencies_hz[j]);
    let mut pairs: Vec<(usize, usize, f64)> = Vec::new();
    for (i, p) in predictions.iter().enumerate() {
        for j in 0..frequencies_hz.len() {
            let d = distance(p, j).abs();
            if d <= p.search_cents() {
                pairs.push((i, j, d / p.scatter_cents));
            }
        }
    }
    pairs.sort_by(|a, b| a.2.total_cmp(&b.2).then(a.0.cmp(&b.0)));
    let mut mode_of_label: Vec<Option<usize>> = vec![None; predictions.len()];
    let mut taken = vec![false; frequencies_hz.len()];
    for &(i, j, _) in &pairs {
        if mode_of_label[i].is_none() && !taken[j] {
            mode_of_label[i] = Some(j);
            taken[j] = true;
        }
    }
    let mut result = CarryOver::default();
    for (p, chosen) in predictions.iter().zip(mode_of_label) {
        let Some(j) = chosen else {
            result.not_found.push(p.label.clone());
            continue;
        };
        let mut sorted: Vec<f64> = (0..frequencies_hz.len())
            .map(|m| distance(p, m).abs())
            .collect();
        sorted.sort_by(f64::total_cmp);
        let d = distance(p, j);
        let is_nearest = d.abs() <= sorted[0];
        let runner_up = sorted.get(1).copied().unwrap_or(f64::INFINITY);
        let confident = is_nearest
            && d.abs() <= CONFIDENT_WITHIN_SCATTERS * p.scatter_cents
            && runner_up - d.abs() >= RUNNER_UP_MARGIN_SCATTERS * p.scatter_cents;
        result.carried.push(CarriedLabel {
            label: p.label.clone(),
            mode_index: j,
            predicted_hz: p.predicted_hz,
            distance_cents: d,
            scatter_cents: p.scatter_cents,
            confident,
        });
    }
    result.carried.sort_by_key(|c| c.mode_index);
    result
}
