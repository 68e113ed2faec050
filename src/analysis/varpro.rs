//! Joint least-squares refit of the poles of one band by variable
//! projection (G. Golub & V. Pereyra, "Separable nonlinear least squares:
//! the variable projection method and its applications", Inverse Problems
//! 19(2), 2003): the model y[k] ≈ Σᵢ bᵢ·wᵢᵏ is linear in the amplitudes b,
//! so for given poles w they follow by linear least squares and only the
//! poles are iterated, by Levenberg–Marquardt steps on the projected
//! residual with Kaufman's approximation of its Jacobian (L. Kaufman, BIT
//! 15, 1975). Each pole is parametrised by s = ln w = −a + jθ (a the decay
//! and θ the angle per decimated sample). The model order of a band is
//! settled in `model_order`.

use rustfft::num_complex::Complex64;

use super::linalg::{solve_hermitian, solve_symmetric};

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
    if poles.is_empty() {
        return Some(Fit {
            poles: Vec::new(),
            amplitudes: Vec::new(),
            residual_energy: y.iter().map(|v| v.norm_sqr()).sum(),
        });
    }
    Projection::of(y, poles).map(|projection| projection.fit)
}

/// The least-squares fit for fixed poles with what the refit needs of it
/// again: the basis Φ (column after column), ΦᴴΦ and the residual.
struct Projection {
    fit: Fit,
    basis: Vec<Complex64>,
    gram: Vec<Complex64>,
    residual: Vec<Complex64>,
}

impl Projection {
    fn of(y: &[Complex64], poles: &[Complex64]) -> Option<Self> {
        let p = poles.len();
        let basis = vandermonde(poles, y.len());
        let (gram, rhs) = normal_equations(&basis, y, p);
        let amplitudes = solve_hermitian(&gram, &rhs, p)?;
        let residual = residual(y, &basis, &amplitudes);
        let residual_energy = residual.iter().map(|r| r.norm_sqr()).sum();
        Some(Self {
            fit: Fit {
                poles: poles.to_vec(),
                amplitudes,
                residual_energy,
            },
            basis,
            gram,
            residual,
        })
    }
}

/// Levenberg–Marquardt on the poles from `initial`; None if the amplitudes
/// cannot be solved for at the start.
pub(super) fn refine(y: &[Complex64], initial: &[Complex64]) -> Option<Fit> {
    let p = initial.len();
    if p == 0 {
        return fit_amplitudes(y, initial);
    }
    let mut current = Projection::of(y, initial)?;
    let dof = y.len().saturating_sub(2 * p).max(1) as f64;
    let mut lambda = 1e-3;
    for _ in 0..MAX_ITERATIONS {
        let (jtj, jtr) = projected_normal_equations(&current);
        let mut improved = false;
        let mut damped = jtj.clone();
        for _ in 0..6 {
            damped.copy_from_slice(&jtj);
            for i in 0..2 * p {
                damped[i * 2 * p + i] += lambda * jtj[i * 2 * p + i].max(1e-30);
            }
            let Some(step) = solve_symmetric(&damped, &jtr, 2 * p) else {
                lambda *= 10.0;
                continue;
            };
            let trial_poles: Vec<Complex64> = current
                .fit
                .poles
                .iter()
                .enumerate()
                .map(|(i, w)| {
                    let decay_step = step[2 * i].clamp(-MAX_STEP, MAX_STEP);
                    let angle_step = step[2 * i + 1].clamp(-MAX_STEP, MAX_STEP);
                    w * Complex64::from_polar((-decay_step).exp(), angle_step)
                })
                .collect();
            let before = current.fit.residual_energy;
            match Projection::of(y, &trial_poles) {
                Some(trial) if trial.fit.residual_energy < before => {
                    let gain = before - trial.fit.residual_energy;
                    let relative = gain / before.max(1e-300);
                    let resolution = NEGLIGIBLE_GAIN * trial.fit.residual_energy / dof;
                    current = trial;
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
    Some(current.fit)
}

/// Columns wᵢᵏ, stored column after column.
pub(super) fn vandermonde(poles: &[Complex64], len: usize) -> Vec<Complex64> {
    let mut basis = vec![Complex64::new(0.0, 0.0); poles.len() * len];
    // Four columns advance together (independent chains of products; each
    // column is still w⁰, w¹·1, w²… multiplied in the same order).
    for (group, columns) in poles.chunks(LANES).zip(basis.chunks_mut(LANES * len)) {
        let mut power = [Complex64::new(1.0, 0.0); LANES];
        let mut step = [Complex64::new(1.0, 0.0); LANES];
        step[..group.len()].copy_from_slice(group);
        for k in 0..len {
            for (lane, column) in columns.chunks_mut(len).enumerate() {
                column[k] = power[lane];
            }
            for (value, w) in power.iter_mut().zip(&step) {
                *value *= w;
            }
        }
    }
    basis
}

/// Independent sums computed side by side (see [`conj_dots`]).
const LANES: usize = 4;

/// Σₖ conj(uᵢ[k])·vᵢ[k] for each pair (uᵢ, vᵢ) of equal-length slices,
/// into `out`: up to [`LANES`] sums advance together, each added up in the
/// order k = 0, 1, … as a plain sum would, so the values are the same,
/// only the latency of one long chain of additions is shared.
fn conj_dots(pairs: &[(&[Complex64], &[Complex64])], out: &mut [Complex64]) {
    for (group, sums) in pairs.chunks(LANES).zip(out.chunks_mut(LANES)) {
        let len = group[0].0.len();
        let mut acc = [Complex64::new(0.0, 0.0); LANES];
        // Short groups repeat their first pair in the spare lanes.
        let lane = |i: usize| group.get(i).unwrap_or(&group[0]);
        let (u0, v0) = lane(0);
        let (u1, v1) = lane(1);
        let (u2, v2) = lane(2);
        let (u3, v3) = lane(3);
        let (u0, v0, u1, v1) = (&u0[..len], &v0[..len], &u1[..len], &v1[..len]);
        let (u2, v2, u3, v3) = (&u2[..len], &v2[..len], &u3[..len], &v3[..len]);
        for k in 0..len {
            acc[0] += u0[k].conj() * v0[k];
            acc[1] += u1[k].conj() * v1[k];
            acc[2] += u2[k].conj() * v2[k];
            acc[3] += u3[k].conj() * v3[k];
        }
        sums.copy_from_slice(&acc[..sums.len()]);
    }
}

/// ΦᴴΦ (with a whisper of ridge for nearly equal poles) and Φᴴy.
pub(super) fn normal_equations(
    basis: &[Complex64],
    y: &[Complex64],
    p: usize,
) -> (Vec<Complex64>, Vec<Complex64>) {
    let len = y.len();
    let column = |i: usize| &basis[i * len..(i + 1) * len];
    let zero = Complex64::new(0.0, 0.0);
    let mut gram = vec![zero; p * p];
    let mut rhs = vec![zero; p];
    let mut pairs: Vec<(&[Complex64], &[Complex64])> = Vec::with_capacity(p * (p + 3) / 2);
    for i in 0..p {
        for j in i..p {
            pairs.push((column(i), column(j)));
        }
        pairs.push((column(i), y));
    }
    let mut sums = vec![zero; pairs.len()];
    conj_dots(&pairs, &mut sums);
    let mut next = sums.into_iter();
    for i in 0..p {
        for j in i..p {
            let value = next.next().unwrap_or(zero);
            gram[i * p + j] = value;
            gram[j * p + i] = value.conj();
        }
        rhs[i] = next.next().unwrap_or(zero);
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

/// Projects each of `columns` (column after column) onto the complement
/// of the columns of `basis`.
fn project_out(columns: &mut [Complex64], basis: &[Complex64], gram: &[Complex64], p: usize) {
    let len = basis.len() / p.max(1);
    let zero = Complex64::new(0.0, 0.0);
    let mut rhs = vec![zero; p * p];
    {
        let pairs: Vec<(&[Complex64], &[Complex64])> = columns
            .chunks(len)
            .flat_map(|v| basis.chunks(len).map(move |phi| (phi, v)))
            .collect();
        conj_dots(&pairs, &mut rhs);
    }
    for (v, rhs) in columns.chunks_mut(len).zip(rhs.chunks(p)) {
        if let Some(coefficients) = solve_hermitian(gram, rhs, p) {
            for (c, phi) in coefficients.iter().zip(basis.chunks(len)) {
                for (slot, phi) in v.iter_mut().zip(phi) {
                    *slot -= c * phi;
                }
            }
        }
    }
}

/// JᵀJ and −Jᵀr (real, 2p unknowns: for each pole a step in its decay a
/// and its angle θ) of the projected residual, Kaufman's form: the
/// derivative of the model by s = −a + jθ is dᵢ = k·wᵏ·bᵢ, projected out
/// of the columns of Φ; ∂model/∂a = −dᵢ and ∂model/∂θ = j·dᵢ, so every
/// entry is a real or imaginary part of dᵢᴴdⱼ or dᵢᴴr (term by term the
/// same products as the real columns would give).
fn projected_normal_equations(current: &Projection) -> (Vec<f64>, Vec<f64>) {
    let fit = &current.fit;
    let p = fit.poles.len();
    let len = current.residual.len();
    let mut derivatives: Vec<Complex64> = Vec::with_capacity(p * len);
    for (b, phi) in fit.amplitudes.iter().zip(current.basis.chunks(len)) {
        derivatives.extend(phi.iter().enumerate().map(|(k, phi)| b * phi * k as f64));
    }
    project_out(&mut derivatives, &current.basis, &current.gram, p);
    let column = |i: usize| &derivatives[i * len..(i + 1) * len];
    let mut pairs: Vec<(&[Complex64], &[Complex64])> = Vec::with_capacity(p * (p + 3) / 2);
    for i in 0..p {
        for j in i..p {
            pairs.push((column(i), column(j)));
        }
        pairs.push((column(i), &current.residual));
    }
    let zero = Complex64::new(0.0, 0.0);
    let mut sums = vec![zero; pairs.len()];
    conj_dots(&pairs, &mut sums);
    let n = 2 * p;
    let mut jtj = vec![0.0; n * n];
    let mut jtr = vec![0.0; n];
    let mut next = sums.into_iter();
    for i in 0..p {
        for j in i..p {
            let d = next.next().unwrap_or(zero);
            let (a, b) = (2 * i, 2 * j);
            jtj[a * n + b] = d.re;
            jtj[(a + 1) * n + b + 1] = d.re;
            jtj[a * n + b + 1] = d.im;
            if i != j {
                jtj[(a + 1) * n + b] = -d.im;
            }
        }
        let e = next.next().unwrap_or(zero);
        jtr[2 * i] = -e.re;
        jtr[2 * i + 1] = e.im;
    }
    for a in 0..n {
        for b in 0..a {
            jtj[a * n + b] = jtj[b * n + a];
        }
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

    /// The side-by-side sums are the plain sums, bit for bit, whatever the
    /// number of pairs (full groups of four and a short one).
    #[test]
    fn side_by_side_sums_are_the_plain_sums() {
        let y = sequence(&[], 50, 1.0, 7);
        let columns: Vec<&[Complex64]> = y.chunks(10).collect();
        for count in 1..=9 {
            let pairs: Vec<(&[Complex64], &[Complex64])> = (0..count)
                .map(|i| (columns[i % 5], columns[(i * 3 + 1) % 5]))
                .collect();
            let mut sums = vec![Complex64::new(0.0, 0.0); count];
            conj_dots(&pairs, &mut sums);
            for ((u, v), sum) in pairs.iter().zip(&sums) {
                let plain: Complex64 = u.iter().zip(*v).map(|(a, b)| a.conj() * b).sum();
                assert_eq!(*sum, plain, "{count} pairs");
            }
        }
    }

    /// JᵀJ and Jᵀr from the complex products dᵢᴴdⱼ, dᵢᴴr are exactly those
    /// of the real Jacobian's columns −dᵢ and j·dᵢ.
    #[test]
    fn jacobian_products_match_its_columns() {
        let truth = [
            (Complex64::from_polar(0.97, 0.30), Complex64::new(1.0, 0.2)),
            (Complex64::from_polar(0.95, 0.45), Complex64::new(-0.3, 0.6)),
            (Complex64::from_polar(0.9, -1.0), Complex64::new(0.1, 0.1)),
        ];
        let y = sequence(&truth, 64, 1e-2, 3);
        let rough: Vec<Complex64> = truth.iter().map(|(w, _)| w * 0.99).collect();
        let current = Projection::of(&y, &rough).expect("fit");
        let (jtj, jtr) = projected_normal_equations(&current);
        let (p, len) = (rough.len(), y.len());
        let mut columns: Vec<Vec<Complex64>> = Vec::new();
        for i in 0..p {
            let mut d: Vec<Complex64> = current.basis[i * len..(i + 1) * len]
                .iter()
                .enumerate()
                .map(|(k, phi)| current.fit.amplitudes[i] * phi * k as f64)
                .collect();
            project_out(&mut d, &current.basis, &current.gram, p);
            columns.push(d.iter().map(|v| -v).collect());
            columns.push(d.iter().map(|v| v * Complex64::new(0.0, 1.0)).collect());
        }
        let n = 2 * p;
        for a in 0..n {
            for b in 0..n {
                let value: f64 = columns[a]
                    .iter()
                    .zip(&columns[b])
                    .map(|(u, v)| (u.conj() * v).re)
                    .sum();
                assert_eq!(jtj[a * n + b], value, "JᵀJ[{a}][{b}]");
            }
            let value: f64 = columns[a]
                .iter()
                .zip(&current.residual)
                .map(|(u, v)| (u.conj() * v).re)
                .sum();
            assert_eq!(jtr[a], value, "Jᵀr[{a}]");
        }
    }

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
}
