//! Model order of one band.
//!
//! Settled by backward elimination against the
//! Bayesian information criterion (G. Schwarz, Ann. Statist. 6(2), 1978):
//! a pole stays only if removing it raises the residual by more than its
//! four real parameters are worth, 4·ln(N) noise variances. N is the
//! number of samples of the whole analysed decay, not of the band: the
//! bands only divide the work of fitting one model to the whole record,
//! and a band placed on the highest bump of the noise must not make that
//! bump a mode.

use rustfft::num_complex::Complex64;

use super::linalg::solve_hermitian;
use super::varpro::{normal_equations, refine, vandermonde, Fit};

/// What the model order is judged against.
#[derive(Clone, Copy, Debug)]
pub(super) struct BandNoise {
    /// Room noise variance per decimated sample (white-equivalent).
    pub variance: f64,
    /// Fraction of the decimated band the taper lets through (ΣW²/M): a
    /// residual's variance over this is its white-equivalent.
    pub taper_fill: f64,
    /// Samples of the whole analysed decay (the criterion's N).
    pub observations: usize,
}

/// Model order and the final poles of one band: backward elimination with
/// the poles held where `fit` has them, then one joint refit of the poles
/// that stayed.
///
/// The elimination drops, one at a time, the pole whose removal costs the
/// fit least, while that cost is under the information criterion's price
/// of a pole (4·ln(N)·σ² for `observations` = N); with the poles fixed each
/// trial is a linear least-squares problem for the amplitudes, so it costs
/// a p×p solve, not a refit. σ² is the larger of the room noise (`noise`)
/// and what the largest model, `fit` as given, leaves per degree of
/// freedom (the variance of the full model's residual, as Mallows' Cp
/// takes it: C. L. Mallows, Technometrics 15(4), 1973): on a real strike
/// the residual also holds what no sum of exponentials models
/// (reverberation, the strike's own sound), which a pole must not be spent
/// on. The refit of the survivors follows ([`refine`]); a single pole left
/// must still pay for itself against the empty model.
pub(super) fn prune(y: &[Complex64], mut fit: Fit, noise: &BandNoise) -> Fit {
    let dof = y.len().saturating_sub(2 * fit.poles.len()).max(1) as f64;
    let left = fit.residual_energy / dof / noise.taper_fill.max(1e-9);
    let price = 4.0 * (noise.observations.max(2) as f64).ln() * noise.variance.max(left);
    let kept = eliminate(y, &fit.poles, price);
    fit = refine(y, &kept).unwrap_or(fit);
    fit = merge_refitted_neighbours(y, fit, price);
    if fit.poles.len() == 1 {
        let energy: f64 = y.iter().map(|v| v.norm_sqr()).sum();
        if energy - fit.residual_energy < price {
            return Fit {
                poles: Vec::new(),
                amplitudes: Vec::new(),
                residual_energy: energy,
            };
        }
    }
    fit
}

/// The same criterion once more for the poles whose Lorentzians overlap a
/// neighbour's (centres closer than the sum of their half-power
/// half-widths): with the poles held fixed, removing one looks costly
/// because its neighbour cannot move to take its share; here the removal
/// of the weaker of each overlapping pair (the merge keeps the stronger)
/// is refitted ([`refine`]) before the comparison, so each order
/// is judged at its own least-squares optimum, as the criterion asks
/// (Schwarz 1978). If the cheapest costs under the price, the two poles
/// are one mode whose decay bends (early reflections adding late copies
/// of it): they are merged as the band merges unresolved poles, at the
/// one with the higher peak, with the sum of their amplitudes (the
/// refitted single pole would be pulled off the mode by the bend). A true
/// close pair costs far more than the price to split. One merge per band.
fn merge_refitted_neighbours(y: &[Complex64], fit: Fit, price: f64) -> Fit {
    let cheapest = overlapping(&fit, y.len())
        .into_iter()
        .filter_map(|drop| {
            let mut rest = fit.poles.clone();
            rest.remove(drop);
            refine(y, &rest).map(|trial| (drop, trial.residual_energy))
        })
        .min_by(|a, b| a.1.total_cmp(&b.1));
    let Some((drop, energy)) = cheapest else {
        return fit;
    };
    if energy - fit.residual_energy >= price {
        return fit;
    }
    let Some(partner) = nearest_other(&fit.poles, drop) else {
        return fit;
    };
    let height = |i: usize| peak_height(&fit, i, y.len());
    let (keep, gone) = if height(drop) > height(partner) {
        (drop, partner)
    } else {
        (partner, drop)
    };
    let mut merged = fit.clone();
    merged.amplitudes[keep] += fit.amplitudes[gone];
    merged.poles.remove(gone);
    merged.amplitudes.remove(gone);
    merged.residual_energy = energy;
    merged
}

/// Height of pole `i`'s peak in an unwindowed spectrum of `len` samples:
/// |b|/α, or |b|·len for a pole slower than that.
fn peak_height(fit: &Fit, i: usize, len: usize) -> f64 {
    let decay = (-fit.poles[i].norm().ln()).max(1.0 / len.max(1) as f64);
    fit.amplitudes[i].norm() / decay
}

/// The pole nearest in angle to pole `i`.
fn nearest_other(poles: &[Complex64], i: usize) -> Option<usize> {
    (0..poles.len()).filter(|&j| j != i).min_by(|&a, &b| {
        let gap = |j: usize| (poles[j].arg() - poles[i].arg()).abs();
        gap(a).total_cmp(&gap(b))
    })
}

/// Indices of the poles whose Lorentzian overlaps that of a pole with a
/// higher peak: of two overlapping poles only the weaker is tried out,
/// since the merge keeps the stronger either way.
fn overlapping(fit: &Fit, len: usize) -> Vec<usize> {
    let decay = |w: &Complex64| (-w.norm().ln()).max(0.0);
    let height = |i: usize| peak_height(fit, i, len);
    (0..fit.poles.len())
        .filter(|&i| {
            let wi = fit.poles[i];
            fit.poles.iter().enumerate().any(|(j, wj)| {
                let stronger = height(j) > height(i) || (height(j) == height(i) && j < i);
                j != i && stronger && (wi.arg() - wj.arg()).abs() < decay(&wi) + decay(wj)
            })
        })
        .collect()
}

/// The poles that stay after backward elimination with the poles fixed:
/// the Gram matrix and Φᴴy are formed once, and the residual of any subset
/// S follows from them as ‖y‖² − Re(rₛᴴ·Gₛₛ⁻¹·rₛ), a |S|×|S| solve.
fn eliminate(y: &[Complex64], poles: &[Complex64], price: f64) -> Vec<Complex64> {
    let p = poles.len();
    if p < 2 {
        return poles.to_vec();
    }
    let basis = vandermonde(poles, y.len());
    let (gram, rhs) = normal_equations(&basis, y, p);
    let energy: f64 = y.iter().map(|v| v.norm_sqr()).sum();
    let residual_of = |subset: &[usize]| -> Option<f64> {
        let q = subset.len();
        let sub_gram: Vec<Complex64> = subset
            .iter()
            .flat_map(|&i| subset.iter().map(move |&j| (i, j)))
            .map(|(i, j)| gram[i * p + j])
            .collect();
        let sub_rhs: Vec<Complex64> = subset.iter().map(|&i| rhs[i]).collect();
        let x = solve_hermitian(&sub_gram, &sub_rhs, q)?;
        let explained: f64 = sub_rhs.iter().zip(&x).map(|(r, v)| (r.conj() * v).re).sum();
        Some(energy - explained)
    };
    let mut active: Vec<usize> = (0..p).collect();
    let Some(mut current) = residual_of(&active) else {
        return poles.to_vec();
    };
    while active.len() > 1 {
        let cheapest = (0..active.len())
            .filter_map(|drop| {
                let mut rest = active.clone();
                rest.remove(drop);
                let left = residual_of(&rest)?;
                Some((left - current, left, rest))
            })
            .min_by(|a, b| a.0.total_cmp(&b.0));
        match cheapest {
            Some((cost, left, rest)) if cost < price => {
                active = rest;
                current = left;
            }
            _ => break,
        }
    }
    active.iter().map(|&i| poles[i]).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::varpro::{fit_amplitudes, test_sequence as sequence};

    #[test]
    fn prune_drops_a_pole_the_data_do_not_need() {
        let truth = [(Complex64::from_polar(0.97, 0.30), Complex64::new(1.0, 0.0))];
        let noise = 1e-3;
        let y = sequence(&truth, 64, noise, 2);
        let spare = [truth[0].0, Complex64::from_polar(0.9, -0.8)];
        let fit = fit_amplitudes(&y, &spare).expect("fit");
        let band_noise = BandNoise {
            variance: noise * noise,
            taper_fill: 1.0,
            observations: 128,
        };
        let pruned = prune(&y, fit, &band_noise);
        assert_eq!(pruned.poles.len(), 1, "{:?}", pruned.poles);
        assert!((pruned.poles[0] - truth[0].0).norm() < 1e-3);
    }

    /// Two true modes whose Lorentzians overlap (1.5 half-widths apart,
    /// one 2.5 dB under the other) stay two: the merge of overlapping
    /// poles (`merge_refitted_neighbours`) takes only a pole the refitted
    /// model does without. (A decay bent by reflections, which it merges,
    /// is in tests/mode_lists.rs.)
    #[test]
    fn a_close_pair_stays_two() {
        let w = Complex64::from_polar(0.96, 0.30);
        let decay = -0.96f64.ln();
        let spare = Complex64::from_polar(0.955, 0.30 + 1.5 * decay);
        let noise = 1e-3;
        let band_noise = BandNoise {
            variance: noise * noise,
            taper_fill: 1.0,
            observations: 48_000,
        };
        let pair = [
            (w, Complex64::new(1.0, 0.0)),
            (spare, Complex64::new(0.0, 0.75)),
        ];
        let y = sequence(&pair, 80, noise, 4);
        let fit = fit_amplitudes(&y, &[w, spare]).expect("fit");
        assert_eq!(prune(&y, fit, &band_noise).poles.len(), 2);
    }
}
