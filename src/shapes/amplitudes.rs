//! Each tap's complex amplitude for every mode of the pass, with the poles
//! held fixed: the record after the strike is fitted by least squares with
//! x(t) = Σₖ Re(cₖ·e^{sₖt}), sₖ = −αₖ + jωₖ. With the poles fixed the model
//! is linear in the amplitudes (variable projection: the poles come from
//! the whole pass, only the linear part is solved per tap), so the fit is
//! one small linear solve. Amplitudes are given at the trigger's onset, so
//! all taps share one time reference up to each tap's own small delay
//! (found later by `align`).

use nalgebra::{DMatrix, DVector};
use rustfft::num_complex::Complex64;

use super::poles::PassPole;

/// One tap's fitted amplitudes.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct TapAmplitudes {
    /// cₖ at the onset, one per pole, full scale.
    pub amplitudes: Vec<Complex64>,
    /// Variance of each cₖ from the fit's residual noise (the sum of the
    /// variances of its real and imaginary parts).
    pub variances: Vec<f64>,
}

/// Where to fit, in samples of the record.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct FitWindow {
    /// The trigger's onset (the time reference).
    pub onset: usize,
    /// First sample fitted (after the strike and its click have passed).
    pub start: usize,
    /// One past the last sample fitted.
    pub end: usize,
}

/// Fits the amplitudes of `poles` to `record[window.start..window.end]`;
/// `None` when the window is too short for the number of poles or the
/// least-squares problem is singular.
pub(crate) fn fit_amplitudes(
    record: &[f32],
    window: FitWindow,
    sample_rate_hz: f64,
    poles: &[PassPole],
) -> Option<TapAmplitudes> {
    let end = window.end.min(record.len());
    let unknowns = 2 * poles.len();
    if poles.is_empty() || end <= window.start || end - window.start < 4 * unknowns {
        return None;
    }
    let samples = &record[window.start..end];
    let steps: Vec<Complex64> = poles.iter().map(|p| pole_step(p, sample_rate_hz)).collect();
    // Normal equations AᵀA·u = Aᵀx over the columns e^{−αt}cos ωt and
    // e^{−αt}sin ωt of each pole, made by recurrence sample by sample.
    let mut gram = DMatrix::<f64>::zeros(unknowns, unknowns);
    let mut rhs = DVector::<f64>::zeros(unknowns);
    let mut phasors = vec![Complex64::new(1.0, 0.0); poles.len()];
    let mut row = vec![0.0; unknowns];
    let mut energy = 0.0;
    for (n, &sample) in samples.iter().enumerate() {
        for (k, phasor) in phasors.iter().enumerate() {
            row[2 * k] = phasor.re;
            row[2 * k + 1] = phasor.im;
        }
        let x = f64::from(sample);
        energy += x * x;
        for i in 0..unknowns {
            rhs[i] += row[i] * x;
            for j in 0..=i {
                gram[(i, j)] += row[i] * row[j];
            }
        }
        for (phasor, step) in phasors.iter_mut().zip(&steps) {
            *phasor *= step;
        }
        if n % 256 == 255 {
            // Restart from the exact phasor so rounding cannot grow.
            for (k, p) in poles.iter().enumerate() {
                phasors[k] = pole_phasor(p, (n + 1) as f64 / sample_rate_hz);
            }
        }
    }
    for i in 0..unknowns {
        for j in 0..i {
            gram[(j, i)] = gram[(i, j)];
        }
    }
    let inverse = gram.clone().try_inverse()?;
    let solution = &inverse * &rhs;
    let dof = (samples.len() - unknowns) as f64;
    let noise_variance = ((energy - solution.dot(&rhs)) / dof).max(0.0);
    // x = Re(c·e^{st}) = Re c·e^{−αt}cos ωt − Im c·e^{−αt}sin ωt, so
    // c = u_cos − j·u_sin at the fit's start; referred back to the onset by
    // e^{−s·Δ}, Δ = start − onset.
    let lead_s = (window.start as f64 - window.onset as f64) / sample_rate_hz;
    let mut amplitudes = Vec::with_capacity(poles.len());
    let mut variances = Vec::with_capacity(poles.len());
    for (k, pole) in poles.iter().enumerate() {
        let at_start = Complex64::new(solution[2 * k], -solution[2 * k + 1]);
        let back = pole_phasor(pole, -lead_s);
        amplitudes.push(at_start * back);
        let variance = noise_variance * (inverse[(2 * k, 2 * k)] + inverse[(2 * k + 1, 2 * k + 1)]);
        variances.push(variance * back.norm_sqr());
    }
    Some(TapAmplitudes {
        amplitudes,
        variances,
    })
}

/// e^{s·t} for the pole, t in seconds.
pub(crate) fn pole_phasor(pole: &PassPole, t_s: f64) -> Complex64 {
    let omega = 2.0 * std::f64::consts::PI * pole.frequency_hz;
    Complex64::from_polar((-pole.decay_per_s * t_s).exp(), omega * t_s)
}

/// e^{s/fs}: one sample's step.
fn pole_step(pole: &PassPole, sample_rate_hz: f64) -> Complex64 {
    pole_phasor(pole, 1.0 / sample_rate_hz)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::NoiseGenerator;

    #[test]
    fn known_amplitudes_come_back_at_the_onset() {
        let fs = 24_000.0;
        let poles = [
            PassPole {
                frequency_hz: 150.0,
                q: 50.0,
                decay_per_s: std::f64::consts::PI * 150.0 / 50.0,
                points_seen: 1,
            },
            PassPole {
                frequency_hz: 163.0,
                q: 80.0,
                decay_per_s: std::f64::consts::PI * 163.0 / 80.0,
                points_seen: 1,
            },
        ];
        let truth = [Complex64::new(0.2, -0.1), Complex64::new(-0.05, 0.12)];
        let onset = 1000;
        let mut noise = NoiseGenerator::new(3);
        let record: Vec<f32> = (0..12_000)
            .map(|n| {
                let t = (n as f64 - onset as f64) / fs;
                let clean: f64 = if n < onset {
                    0.0
                } else {
                    poles
                        .iter()
                        .zip(&truth)
                        .map(|(p, c)| (c * pole_phasor(p, t)).re)
                        .sum()
                };
                (clean + 1e-3 * noise.gaussian()) as f32
            })
            .collect();
        let window = FitWindow {
            onset,
            start: onset + 72,
            end: 12_000,
        };
        let fit = fit_amplitudes(&record, window, fs, &poles).unwrap();
        for (k, expected) in truth.iter().enumerate() {
            let error = (fit.amplitudes[k] - expected).norm();
            let sigma = fit.variances[k].sqrt();
            assert!(
                error < 4.0 * sigma + 1e-4,
                "{k}: {:?} vs {expected:?}",
                fit.amplitudes[k]
            );
            assert!(sigma > 1e-5 && sigma < 1e-3, "{sigma}");
        }
        // Too short a window is refused, not guessed.
        let short = FitWindow {
            onset,
            start: onset,
            end: onset + 10,
        };
        assert!(fit_amplitudes(&record, short, fs, &poles).is_none());
    }
}
