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

/// What carry-over reads of an earlier pass of the part.
pub trait EarlierPass {
    /// The part's mass at that pass, g.
    fn mass_g(&self) -> f64;
    /// The frequency of the mode labelled `label` in that pass, Hz.
    fn labelled_hz(&self, label: &str) -> Option<f64>;
}

/// Carries the labels of `history` (the part's earlier passes) to a new pass
/// of mass `new_mass_g` whose modes are at `new_frequencies_hz` (sorted).
/// `label_order` fixes the order labels are considered in (ties).
pub fn carry_labels<P: EarlierPass>(
    history: &[P],
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
fn label_points<P: EarlierPass>(history: &[P], label: &str) -> Vec<(f64, f64)> {
    history
        .iter()
        .filter_map(|pass| pass.labelled_hz(label).map(|hz| (pass.mass_g(), hz)))
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
fn pooled_exponent<P: EarlierPass>(history: &[P], labels: &[String]) -> Option<f64> {
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

#[cfg(test)]
mod tests {
    use crate::ledger::{Build, Family, MeasuredMode, Part, PartKind, PassInput};

    /// Deterministic small noise in cents, from a fixed linear congruential sequence.
    fn noise_cents(seed: &mut u64, amplitude: f64) -> f64 {
        *seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((*seed >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0) * amplitude
    }

    fn mode(frequency_hz: f64) -> MeasuredMode {
        MeasuredMode {
            frequency_hz,
            q: 40.0,
            level_db: -20.0,
            spread_hz: 0.5,
        }
    }

    /// A violin top whose labelled modes follow f = C·m^k, with two
    /// unlabelled modes in between that also fall.
    fn synthetic_modes(mass_g: f64, seed: &mut u64) -> Vec<MeasuredMode> {
        let k = 0.45;
        let at = |f_at_85: f64| f_at_85 * (mass_g / 85.0_f64).powf(k);
        [95.0, 180.0, 262.0, 380.0, 455.0]
            .iter()
            .map(|&f| mode(at(f) * 2f64.powf(noise_cents(seed, 3.0) / 1200.0)))
            .collect()
    }

    fn labelled_top(masses_g: &[f64]) -> (Build, u64) {
        let mut build = Build::new("synthetic", Family::Violin);
        let mut seed = 7;
        let part = build.add_part("top", PartKind::TopPlate).unwrap();
        part.record_pass(PassInput::new(
            masses_g[0],
            synthetic_modes(masses_g[0], &mut seed),
        ))
        .unwrap();
        part.set_label(1, 0, Some("mode 1")).unwrap();
        part.set_label(1, 1, Some("mode 2")).unwrap();
        part.set_label(1, 3, Some("mode 5")).unwrap();
        for &m in &masses_g[1..] {
            part.record_pass(PassInput::new(m, synthetic_modes(m, &mut seed)))
                .unwrap();
        }
        (build, seed)
    }

    fn top(build: &Build) -> &Part {
        build.part("top").unwrap()
    }

    #[test]
    fn labels_follow_their_modes_through_a_thinning_series() {
        let (build, _) = labelled_top(&[85.0, 82.5, 80.0, 77.0, 74.5, 72.0, 69.0]);
        for pass in top(&build).passes() {
            let labelled: Vec<(usize, &str)> = pass
                .modes()
                .iter()
                .enumerate()
                .filter_map(|(i, m)| m.label_name().map(|l| (i, l)))
                .collect();
            assert_eq!(
                labelled,
                [(0, "mode 1"), (1, "mode 2"), (3, "mode 5")],
                "pass {}",
                pass.number()
            );
            if pass.number() >= 4 {
                assert!(
                    pass.modes().iter().all(|m| !m.label_needs_confirmation()),
                    "pass {} should be confident",
                    pass.number()
                );
            }
        }
    }

    #[test]
    fn history_beats_a_fixed_window_after_a_big_cut() {
        // After a steady history, a heavy pass (−12 % mass) moves mode 5
        // down about 100 cents; a mode sits exactly where mode 5 used to be.
        let (mut build, mut seed) = labelled_top(&[85.0, 83.0, 81.0, 79.0]);
        let part = build.part_mut("top").unwrap();
        let old_mode5 = part
            .latest_pass()
            .unwrap()
            .mode_labelled("mode 5")
            .unwrap()
            .frequency_hz;
        let mut modes = synthetic_modes(69.5, &mut seed);
        modes.push(mode(old_mode5));
        let expected_hz = modes[3].frequency_hz;
        let outcome = part.record_pass(PassInput::new(69.5, modes)).unwrap();
        let carried = outcome
            .carried
            .iter()
            .find(|c| c.label == "mode 5")
            .unwrap();
        let pass = part.latest_pass().unwrap();
        assert_eq!(pass.modes()[carried.mode_index].frequency_hz, expected_hz);
        assert!(carried.confident);
    }

    #[test]
    fn an_ambiguous_match_is_placed_but_flagged() {
        let (mut build, _) = labelled_top(&[85.0, 83.0, 81.0, 79.0, 77.0]);
        let part = build.part_mut("top").unwrap();
        let predicted = 380.0 * (75.0f64 / 85.0).powf(0.45);
        // Two modes 12 cents either side of where mode 5 should land.
        let cents = |c: f64| predicted * 2f64.powf(c / 1200.0);
        let modes = vec![
            mode(95.0 * (75.0f64 / 85.0).powf(0.45)),
            mode(cents(-12.0)),
            mode(cents(12.5)),
        ];
        let outcome = part.record_pass(PassInput::new(75.0, modes)).unwrap();
        assert!(
            outcome.needs_confirmation.contains(&"mode 5".to_string()),
            "{outcome:?}"
        );
        let pass = part.latest_pass().unwrap();
        let holders: Vec<usize> = pass
            .modes()
            .iter()
            .enumerate()
            .filter(|(_, m)| m.label_name() == Some("mode 5"))
            .map(|(i, _)| i)
            .collect();
        assert_eq!(holders, [1], "the nearer of the two gets the label, once");
        assert!(pass.modes()[1].label_needs_confirmation());
        // mode 2 had no candidate in its window.
        assert_eq!(outcome.not_found, ["mode 2"]);
    }

    #[test]
    fn one_mode_never_gets_two_labels() {
        // Two labels whose predictions fall on the same single mode.
        let mut build = Build::new("b", Family::Violin);
        let part = build.add_part("top", PartKind::TopPlate).unwrap();
        part.record_pass(PassInput::new(80.0, vec![mode(340.0), mode(350.0)]))
            .unwrap();
        part.set_label(1, 0, Some("mode 2")).unwrap();
        part.set_label(1, 1, Some("mode 5")).unwrap();
        let outcome = part
            .record_pass(PassInput::new(79.0, vec![mode(343.0)]))
            .unwrap();
        assert_eq!(outcome.carried.len(), 1);
        assert_eq!(outcome.not_found.len(), 1);
        assert!(build.validate().is_ok());
    }

    #[test]
    fn with_one_earlier_pass_uniform_thinning_predicts_the_move() {
        // f ∝ m (thin-plate uniform thinning): 5 % less mass, 5 % lower.
        let mut build = Build::new("b", Family::Guitar);
        let part = build.add_part("top", PartKind::TopPlate).unwrap();
        part.record_pass(PassInput::new(200.0, vec![mode(200.0), mode(300.0)]))
            .unwrap();
        part.set_label(1, 0, Some("monopole")).unwrap();
        let outcome = part
            .record_pass(PassInput::new(190.0, vec![mode(190.5), mode(285.0)]))
            .unwrap();
        assert_eq!(outcome.carried.len(), 1);
        let carried = &outcome.carried[0];
        assert!((carried.predicted_hz - 190.0).abs() < 1e-9);
        assert_eq!(carried.mode_index, 0);
        assert!(carried.confident, "{carried:?}");
    }
}
