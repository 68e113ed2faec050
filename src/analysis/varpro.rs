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

/// Columns wᵢᵏ, stored column after column.
pub(super) fn vandermonde(poles: &[Complex64], len: usize) -> Vec<Complex64> {
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
pub(super) fn normal_equations(
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
}
