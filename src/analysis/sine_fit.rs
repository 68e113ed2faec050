//! Measuring a steady tone: its frequency by counting zero crossings, then
//! refined by a four-parameter least-squares sine fit (amplitude, phase,
//! offset and frequency, the method of IEEE Std 1057 for digitiser
//! testing). Used to check what the tone generator (and a device fed by
//! it) actually holds.

use std::f64::consts::TAU;

use super::linalg::solve_symmetric;

/// A sine fitted to a record.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SineFit {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// Peak amplitude, in the record's units.
    pub amplitude: f64,
    /// Constant offset, in the record's units.
    pub offset: f64,
    /// RMS of what the sine does not explain.
    pub residual_rms: f64,
}

/// The frequency from the first and last rising zero crossing (linearly
/// interpolated between samples) and the number of whole periods between
/// them. None with fewer than two rising crossings.
pub fn zero_crossing_hz(samples: &[f64], sample_rate_hz: f64) -> Option<f64> {
    let mut first: Option<f64> = None;
    let mut last = 0.0;
    let mut periods = 0usize;
    for (i, pair) in samples.windows(2).enumerate() {
        let (a, b) = (pair[0], pair[1]);
        if a < 0.0 && b >= 0.0 {
            let at = i as f64 + a / (a - b);
            if first.is_none() {
                first = Some(at);
            } else {
                periods += 1;
            }
            last = at;
        }
    }
    let first = first?;
    (periods > 0 && last > first).then(|| periods as f64 * sample_rate_hz / (last - first))
}

/// Fits `offset + a·cos(ωt) + b·sin(ωt)` with ω refined by Gauss–Newton
/// from a zero-crossing start. None if the record is too short (under
/// four periods), has no crossings, or the fit does not settle.
pub fn fit_sine(samples: &[f64], sample_rate_hz: f64) -> Option<SineFit> {
    let guess_hz = zero_crossing_hz(samples, sample_rate_hz)?;
    if samples.len() as f64 * guess_hz / sample_rate_hz < 4.0 {
        return None;
    }
    // Time measured from the middle of the record keeps the frequency
    // column of the normal equations well scaled.
    let middle = (samples.len() as f64 - 1.0) / 2.0;
    let times_s: Vec<f64> = (0..samples.len())
        .map(|i| (i as f64 - middle) / sample_rate_hz)
        .collect();
    let mut omega = TAU * guess_hz;
    let mut terms = linear_terms(samples, &times_s, omega)?;
    for _ in 0..20 {
        let step = frequency_step(samples, &times_s, omega, terms)?;
        omega += step;
        terms = linear_terms(samples, &times_s, omega)?;
        if step.abs() < 1e-12 * omega {
            break;
        }
    }
    let (a, b, c) = terms;
    let residual: f64 = samples
        .iter()
        .zip(&times_s)
        .map(|(&x, &t)| {
            let (s, co) = (omega * t).sin_cos();
            (x - (a * co + b * s + c)).powi(2)
        })
        .sum();
    Some(SineFit {
        frequency_hz: omega / TAU,
        amplitude: a.hypot(b),
        offset: c,
        residual_rms: (residual / samples.len() as f64).sqrt(),
    })
}

/// The three-parameter fit (cos, sin, offset) at a known ω.
fn linear_terms(samples: &[f64], times_s: &[f64], omega: f64) -> Option<(f64, f64, f64)> {
    let mut normal = [0.0; 9];
    let mut rhs = [0.0; 3];
    for (&x, &t) in samples.iter().zip(times_s) {
        let (s, c) = (omega * t).sin_cos();
        let row = [c, s, 1.0];
        accumulate(&mut normal, &mut rhs, &row, x);
    }
    let solved = solve_symmetric(&normal, &rhs, 3)?;
    Some((solved[0], solved[1], solved[2]))
}

/// One Gauss–Newton step in ω with the other three parameters free.
fn frequency_step(
    samples: &[f64],
    times_s: &[f64],
    omega: f64,
    (a, b, c): (f64, f64, f64),
) -> Option<f64> {
    let mut normal = [0.0; 16];
    let mut rhs = [0.0; 4];
    for (&x, &t) in samples.iter().zip(times_s) {
        let (s, co) = (omega * t).sin_cos();
        let model = a * co + b * s + c;
        let row = [co, s, 1.0, t * (b * co - a * s)];
        accumulate(&mut normal, &mut rhs, &row, x - model);
    }
    let solved = solve_symmetric(&normal, &rhs, 4)?;
    solved[3].is_finite().then_some(solved[3])
}

fn accumulate<const N: usize>(normal: &mut [f64], rhs: &mut [f64], row: &[f64; N], value: f64) {
    for i in 0..N {
        rhs[i] += row[i] * value;
        for j in 0..N {
            normal[i * N + j] += row[i] * row[j];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::NoiseGenerator;

    fn sine(frequency_hz: f64, amplitude: f64, phase_rad: f64, n: usize, fs: f64) -> Vec<f64> {
        (0..n)
            .map(|i| amplitude * (TAU * frequency_hz * i as f64 / fs + phase_rad).sin())
            .collect()
    }

    #[test]
    fn zero_crossings_give_the_frequency_of_a_clean_sine() {
        let x = sine(233.3, 0.5, 0.3, 48_000, 48_000.0);
        let f = zero_crossing_hz(&x, 48_000.0).expect("crossings");
        assert!((f - 233.3).abs() < 1e-3, "{f}");
    }

    #[test]
    fn the_fit_recovers_frequency_amplitude_and_offset_in_noise() {
        let fs = 48_000.0;
        let mut noise = NoiseGenerator::new(7);
        let x: Vec<f64> = sine(1234.567, 0.25, 1.0, 48_000, fs)
            .into_iter()
            .map(|v| v + 0.01 + 1e-3 * noise.gaussian())
            .collect();
        let fit = fit_sine(&x, fs).expect("fit");
        // Cramér–Rao bound for this SNR and length is about 1e-5 Hz
        // (analytic, Rife & Boorstyn 1974); 1e-3 Hz leaves room.
        assert!((fit.frequency_hz - 1234.567).abs() < 1e-3, "{fit:?}");
        assert!((fit.amplitude - 0.25).abs() < 1e-4, "{fit:?}");
        assert!((fit.offset - 0.01).abs() < 1e-4, "{fit:?}");
        assert!((fit.residual_rms - 1e-3).abs() < 1e-4, "{fit:?}");
    }

    #[test]
    fn too_short_or_silent_records_give_none() {
        assert!(fit_sine(&[0.0; 1000], 48_000.0).is_none());
        assert!(fit_sine(&sine(100.0, 1.0, 0.5, 960, 48_000.0), 48_000.0).is_none());
    }
}
