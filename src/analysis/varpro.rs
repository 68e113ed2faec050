//! Joint least-squares refit of the poles of one band by variable
//! projection (G. Golub & V. Pereyra, "Separable nonlinear least squares:
//! the variable projection method and its applications", Inverse Problems
//! 19(2), 2003): the model y[k] ≈ Σᵢ bᵢ·wᵢᵏ is linear in the amplitudes b,
//! so for given poles w they follow by linear least squares and only the
//! poles are iterated, by Levenberg–Marquardt steps on the projected
//! residual with Kaufman's approximation of its Jacobian (L. Kaufman, BIT
//! 15, 1975). Each pole is parametrised by s = ln w = −a + jθ (a the decay
//! and θ the angle per decimated sample).
//!
//! Model order is then settled by backward elimination against the
//! Bayesian information criterion (G. Schwarz, Ann. Statist. 6(2), 1978):
//! a pole stays only if removing it raises the residual by more than its
//! four real parameters are worth, 4·ln(N) noise variances. N is the
//! number of samples of the whole analysed decay, not of the band: the
//! bands only divide the work of fitting one model to the whole record,
//! and a band placed on the highest bump of the noise must not make that
//! bump a mode.

use rustfft::num_complex::Complex64;

use super::linalg::{solve_hermitian, solve_symmetric};

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

/// Levenberg–Marquardt iterations at most.
const MAX_ITERATIONS: usize = 12;
/// The refit stops when a step lowers the residual energy by less than
/// this many residual variances (residual energy per degree of freedom):
/// moving the poles by one standard deviation of their estimate changes
/// the residual by one variance (the χ² surface's unit), so such a step
/// moved them by well under a tenth of that and the next ones, converging
/// quadratically, by far less (common practice in least squares, e.g.
/// W. H. Press and others, Numerical Recipes, 3rd ed., §15.5.2).
const NEGLIGIBLE_GAIN: f64 = 0.01;
/// Largest step in decay or angle per decimated sample: a pole never moves
/// more than this in one iteration.
const MAX_STEP: f64 = 0.2;

/// Poles, their amplitudes and the residual energy of the fit.
#[derive(Clone, Debug)]
pub(super) struct Fit {
    pub poles: Vec<Complex64>,
    pub amplitudes: Vec<Complex64>,
    pub residual_energy: f64,
}

/// Least-squares amplitudes for fixed poles.
pub(super) fn fit_amplitudes(y: &[Complex64], poles: &[Complex64]) -> Option<Fit> {
    let p = poles.len();
    if p == 0 {
        return Some(Fit {
            poles: Vec::new(),
            amplitudes: Vec::new(),
            residual_energy: y.iter().map(|v| v.norm_sqr()).sum(),
        });
    }
    let basis = vandermonde(poles, y.len());
    let (gram, rhs) = normal_equations(&basis, y, p);
    let amplitudes = solve_hermitian(&gram, &rhs, p)?;
    let residual_energy = residual(y, &basis, &amplitudes)
        .iter()
        .map(|r| r.norm_sqr())
        .sum();
    Some(Fit {
        poles: poles.to_vec(),
        amplitudes,
        residual_energy,
    })
}

/// Levenberg–Marquardt on the poles from `initial`; None if the amplitudes
/// cannot be solved for at the start.
pub(super) fn refine(y: &[Complex64], initial: &[Complex64]) -> Option<Fit> {
    let mut fit = fit_amplitudes(y, initial)?;
    let p = initial.len();
    if p == 0 {
        return Some(fit);
    }
    let dof = y.len().saturating_sub(2 * p).max(1) as f64;
    let mut lambda = 1e-3;
    for _ in 0..MAX_ITERATIONS {
        let (jtj, jtr) = projected_normal_equations(y, &fit);
        let mut improved = false;
        for _ in 0..6 {
            let mut damped = jtj.clone();
            for i in 0..2 * p {
                damped[i * 2 * p + i] += lambda * jtj[i * 2 * p + i].max(1e-30);
            }
            let Some(step) = solve_symmetric(&damped, &jtr, 2 * p) else {
                lambda *= 10.0;
                continue;
            };
            let trial_poles: Vec<Complex64> = fit
                .poles
                .iter()
                .enumerate()
                .map(|(i, w)| {
                    let decay_step = step[2 * i].clamp(-MAX_STEP, MAX_STEP);
                    let angle_step = step[2 * i + 1].clamp(-MAX_STEP, MAX_STEP);
                    w * Complex64::from_polar((-decay_step).exp(), angle_step)
                })
                .collect();
            match fit_amplitudes(y, &trial_poles) {
                Some(trial) if trial.residual_energy < fit.residual_energy => {
                    let gain = fit.residual_energy - trial.residual_energy;
                    let relative = gain / fit.residual_energy.max(1e-300);
                    let resolution = NEGLIGIBLE_GAIN * trial.residual_energy / dof;
                    fit = trial;
                    lambda = (lambda * 0.3).max(1e-9);
                    improved = relative > 1e-10 && gain > resolution;
                    break;
                }
                _ => lambda *= 10.0,
            }
        }
        if !improved {
            break;
        }
    }
    Some(fit)
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
/// because its neighbour cannot move to take its share; here each such
/// removal is refitted ([`refine`]) before the comparison, so each order
/// is judged at its own least-squares optimum, as the criterion asks
/// (Schwarz 1978). If the cheapest costs under the price, the two poles
/// are one mode whose decay bends (early reflections adding late copies
/// of it): they are merged as the band merges unresolved poles, at the
/// one with the higher peak, with the sum of their amplitudes (the
/// refitted single pole would be pulled off the mode by the bend). A true
/// close pair costs far more than the price to split. One merge per band.
fn merge_refitted_neighbours(y: &[Complex64], fit: Fit, price: f64) -> Fit {
    let cheapest = overlapping(&fit)
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
    let height = |i: usize| {
        let decay = (-fit.poles[i].norm().ln()).max(1.0 / y.len().max(1) as f64);
        fit.amplitudes[i].norm() / decay
    };
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

/// The pole nearest in angle to pole `i`.
fn nearest_other(poles: &[Complex64], i: usize) -> Option<usize> {
    (0..poles.len()).filter(|&j| j != i).min_by(|&a, &b| {
        let gap = |j: usize| (poles[j].arg() - poles[i].arg()).abs();
        gap(a).total_cmp(&gap(b))
    })
}

/// Indices of the poles whose Lorentzian overlaps another's.
fn overlapping(fit: &Fit) -> Vec<usize> {
    let decay = |w: &Complex64| (-w.norm().ln()).max(0.0);
    (0..fit.poles.len())
        .filter(|&i| {
            let wi = fit.poles[i];
            fit.poles
                .iter()
                .enumerate()
                .any(|(j, wj)| j != i && (wi.arg() - wj.arg()).abs() < decay(&wi) + decay(wj))
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

/// Columns wᵢᵏ, stored column after column.
fn vandermonde(poles: &[Complex64], len: usize) -> Vec<Complex64> {
    let mut basis = Vec::with_capacity(poles.len() * len);
    for &w in poles {
        let mut power = Complex64::new(1.0, 0.0);
        for _ in 0..len {
            basis.push(power);
            power *= w;
        }
    }
    basis
}

/// ΦᴴΦ (with a whisper of ridge for nearly equal poles) and Φᴴy.
fn normal_equations(
    basis: &[Complex64],
    y: &[Complex64],
    p: usize,
) -> (Vec<Complex64>, Vec<Complex64>) {
    let len = y.len();
    let column = |i: usize| &basis[i * len..(i + 1) * len];
    let mut gram = vec![Complex64::new(0.0, 0.0); p * p];
    let mut rhs = vec![Complex64::new(0.0, 0.0); p];
    for i in 0..p {
        for j in i..p {
            let value: Complex64 = column(i)
                .iter()
                .zip(column(j))
                .map(|(a, b)| a.conj() * b)
                .sum();
            gram[i * p + j] = value;
            gram[j * p + i] = value.conj();
        }
        rhs[i] = column(i).iter().zip(y).map(|(a, b)| a.conj() * b).sum();
    }
    let trace: f64 = (0..p).map(|i| gram[i * p + i].re).sum();
    for i in 0..p {
        gram[i * p + i] += 1e-13 * trace / p as f64;
    }
    (gram, rhs)
}

fn residual(y: &[Complex64], basis: &[Complex64], amplitudes: &[Complex64]) -> Vec<Complex64> {
    let len = y.len();
    let mut r = y.to_vec();
    for (i, b) in amplitudes.iter().enumerate() {
        for (slot, phi) in r.iter_mut().zip(&basis[i * len..(i + 1) * len]) {
            *slot -= b * phi;
        }
    }
    r
}

/// Projects `v` onto the complement of the columns of `basis`.
fn project_out(v: &mut [Complex64], basis: &[Complex64], gram: &[Complex64], p: usize) {
    let len = v.len();
    let rhs: Vec<Complex64> = (0..p)
        .map(|i| {
            basis[i * len..(i + 1) * len]
                .iter()
                .zip(v.iter())
                .map(|(a, b)| a.conj() * b)
                .sum()
        })
        .collect();
    if let Some(coefficients) = solve_hermitian(gram, &rhs, p) {
        for (i, c) in coefficients.iter().enumerate() {
            for (slot, phi) in v.iter_mut().zip(&basis[i * len..(i + 1) * len]) {
                *slot -= c * phi;
            }
        }
    }
}

/// JᵀJ and −Jᵀr (real, 2p unknowns: for each pole a step in its decay a
/// and its angle θ) of the projected residual, Kaufman's form: the
/// derivative of the model by s = −a + jθ is k·wᵏ·b, projected out of the
/// columns of Φ.
fn projected_normal_equations(y: &[Complex64], fit: &Fit) -> (Vec<f64>, Vec<f64>) {
    let p = fit.poles.len();
    let len = y.len();
    let basis = vandermonde(&fit.poles, len);
    let (gram, _) = normal_equations(&basis, y, p);
    let r = residual(y, &basis, &fit.amplitudes);
    let mut columns: Vec<Vec<Complex64>> = Vec::with_capacity(2 * p);
    for i in 0..p {
        let mut derivative: Vec<Complex64> = basis[i * len..(i + 1) * len]
            .iter()
            .enumerate()
            .map(|(k, phi)| fit.amplitudes[i] * phi * k as f64)
            .collect();
        project_out(&mut derivative, &basis, &gram, p);
        // ∂model/∂a = −k·wᵏ·b, ∂model/∂θ = j·k·wᵏ·b.
        columns.push(derivative.iter().map(|d| -d).collect());
        columns.push(
            derivative
                .iter()
                .map(|d| d * Complex64::new(0.0, 1.0))
                .collect(),
        );
    }
    let n = 2 * p;
    let mut jtj = vec![0.0; n * n];
    let mut jtr = vec![0.0; n];
    for a in 0..n {
        for b in a..n {
            let value: f64 = columns[a]
                .iter()
                .zip(&columns[b])
                .map(|(u, v)| (u.conj() * v).re)
                .sum();
            jtj[a * n + b] = value;
            jtj[b * n + a] = value;
        }
        jtr[a] = columns[a]
            .iter()
            .zip(&r)
            .map(|(u, v)| (u.conj() * v).re)
            .sum();
    }
    (jtj, jtr)
}

/// A decimated test sequence: Σ b·wᵏ plus complex white noise of
/// standard deviation `noise` (deterministic).
#[cfg(test)]
pub(super) fn test_sequence(
    poles: &[(Complex64, Complex64)],
    len: usize,
    noise: f64,
    seed: u64,
) -> Vec<Complex64> {
    let mut random = crate::analysis::synth::NoiseGenerator::new(seed);
    (0..len)
        .map(|k| {
            let clean: Complex64 = poles.iter().map(|(w, b)| b * w.powu(k as u32)).sum();
            clean + Complex64::new(random.gaussian(), random.gaussian()) * (noise / 2f64.sqrt())
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use test_sequence as sequence;

    #[test]
    fn refit_reaches_the_true_poles_from_rough_ones() {
        let truth = [
            (Complex64::from_polar(0.97, 0.30), Complex64::new(1.0, 0.2)),
            (Complex64::from_polar(0.95, 0.45), Complex64::new(-0.3, 0.6)),
        ];
        let y = sequence(&truth, 64, 0.0, 1);
        let rough = [
            Complex64::from_polar(0.96, 0.28),
            Complex64::from_polar(0.93, 0.48),
        ];
        let fit = refine(&y, &rough).expect("fit");
        for ((w, b), (tw, tb)) in fit.poles.iter().zip(&fit.amplitudes).zip(&truth) {
            assert!((w - tw).norm() < 1e-8, "{w} vs {tw}");
            assert!((b - tb).norm() < 1e-7, "{b} vs {tb}");
        }
        assert!(fit.residual_energy < 1e-20);
    }

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
