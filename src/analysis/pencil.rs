//! Subspace stage for modes closer than the DFT can separate: the matrix
//! pencil of Hua & Sarkar (IEEE Trans. ASSP 38(5), 1990, "Matrix pencil
//! method for estimating parameters of exponentially damped/undamped
//! sinusoids in noise"), run on one narrow band of the record.
//!
//! 1. The real record is mixed down by the band's centre ω₀ (one complex
//!    phasor per sample), low-pass filtered by a third-order comb-integrator
//!    (boxcar³) filter and decimated by D to a short complex sequence. The
//!    first filter-length samples are skipped, so every output sees only the
//!    decay and a damped exponential c·zⁿ stays exactly one: its decimated
//!    pole is w = (z·e^{−jω₀})^D and its amplitude is scaled by the filter's
//!    response H at that pole, which is known in closed form and divided
//!    out again.
//! 2. The pencil: the Hankel matrix of the sequence (pencil parameter
//!    L ≈ N/3, in the range Hua & Sarkar recommend for noise), its SVD
//!    truncated to the model order M, and the poles as the eigenvalues of
//!    the M×M shifted-subspace matrix W₂·W₁⁺. Decay comes from the pole's
//!    magnitude, α = −ln|w|·f_s,decimated; amplitudes from least squares.
//! 3. Only poles that decay, lie in the band, have 5 ≤ Q ≤ 1000, carry an
//!    amplitude well above the noise and stay put when the model order
//!    grows by one are returned. They are starting values for the joint
//!    least-squares refinement on the full-rate record (`modal`).

use std::f64::consts::PI;

use nalgebra::{DMatrix, DVector};
use rustfft::num_complex::Complex64;

/// Order of the comb-integrator decimation filter (boxcar convolved with
/// itself this many times): its aliasing side lobes fall as 1/k³.
const FILTER_ORDER: usize = 3;
/// Decimated samples aimed for (the pencil works on a few hundred at most).
const TARGET_SAMPLES: usize = 160;
/// Fewer decimated samples than this give no poles.
const MIN_SAMPLES: usize = 24;
/// Largest model order tried.
const MAX_ORDER: usize = 4;
/// Singular values this many times the expected noise level count as signal.
const SIGNAL_OVER_NOISE: f64 = 4.0;
/// Kept poles have a Q in this range (the analysis design).
const MIN_Q: f64 = 5.0;
const MAX_Q: f64 = 1000.0;
/// A kept pole's energy (A²/4α per sample) must exceed the noise variance
/// by this factor: a matched-filter SNR of 14 dB.
const MIN_ENERGY_OVER_NOISE: f64 = 25.0;

/// A damped complex pole at the full sample rate with its complex
/// amplitude: the mode is 2·Re(c·zⁿ), n counted from the record's start.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct BandPole {
    pub z: Complex64,
    pub c: Complex64,
}

/// The band to search: centre and half-width in rad/sample at the full
/// rate, and how many samples of the record to use.
#[derive(Clone, Copy, Debug)]
pub(super) struct Band {
    pub centre_rad: f64,
    pub half_width_rad: f64,
    pub span_samples: usize,
}

/// The record mixed down, filtered and decimated.
struct Decimated {
    samples: Vec<Complex64>,
    factor: usize,
    /// Full-rate index of the first output.
    first_index: usize,
    /// Variance of white noise of unit variance after the filter.
    noise_gain: f64,
}

/// Poles of the band that pass every test, strongest first, or an empty
/// list. `noise_rms` is the full-rate noise standard deviation.
pub(super) fn band_poles(record: &[f64], band: &Band, noise_rms: f64) -> Vec<BandPole> {
    let Some(decimated) = decimate_band(record, band) else {
        return Vec::new();
    };
    let Some(pencil) = Pencil::new(&decimated.samples) else {
        return Vec::new();
    };
    let noise_dec = noise_rms * decimated.noise_gain.sqrt();
    let order = pencil
        .signal_order(noise_dec)
        .clamp(1, MAX_ORDER.min(pencil.max_order() - 1));
    let chosen = pencil.poles(order);
    let larger = pencil.poles(order + 1);
    let mut kept: Vec<BandPole> = chosen
        .iter()
        .filter(|w| larger.iter().any(|v| stays_put(**w, *v, decimated.factor)))
        .filter_map(|&w| to_full_rate(w, band, &decimated))
        .collect();
    if kept.is_empty() {
        return kept;
    }
    let mut walls: Vec<Complex64> = kept
        .iter()
        .map(|p| pole_decimated(p.z, band, &decimated))
        .collect();
    let noise_dec_var = noise_dec * noise_dec;
    while let Some(weakest) = least_needed(&decimated.samples, &walls, noise_dec_var) {
        walls.remove(weakest);
        kept.remove(weakest);
    }
    let Some(amplitudes) = least_squares_amplitudes(&decimated.samples, &walls) else {
        return Vec::new();
    };
    for (pole, b) in kept.iter_mut().zip(amplitudes) {
        pole.c = b / filter_response(pole.z, band, &decimated);
    }
    let noise_var = noise_rms * noise_rms;
    kept.retain(|p| {
        let decay = -p.z.norm().ln();
        let energy = (2.0 * p.c.norm()).powi(2) / (4.0 * decay);
        energy > MIN_ENERGY_OVER_NOISE * noise_var
    });
    kept.sort_by(|a, b| b.c.norm().total_cmp(&a.c.norm()));
    kept
}

/// Mixes `record[..span]` down by the band centre, filters it with the
/// boxcar³ filter and keeps every D-th output once the filter is full.
fn decimate_band(record: &[f64], band: &Band) -> Option<Decimated> {
    let span = band.span_samples.min(record.len());
    // The decimated rate must hold the whole band (complex: f_s,d > 2B)
    // with room for the filter's droop; and about TARGET_SAMPLES outputs.
    let by_band = (PI / (2.0 * band.half_width_rad.max(1e-9))).floor() as usize;
    let by_count = span / TARGET_SAMPLES;
    let factor = by_band.min(by_count).max(1);
    let weights = boxcar_power(factor, FILTER_ORDER);
    let first_index = weights.len() - 1;
    if span <= first_index {
        return None;
    }
    let count = (span - 1 - first_index) / factor + 1;
    if count < MIN_SAMPLES {
        return None;
    }
    let step = Complex64::from_polar(1.0, -band.centre_rad);
    let mut phasor = Complex64::new(1.0, 0.0);
    let mixed: Vec<Complex64> = record[..span]
        .iter()
        .enumerate()
        .map(|(n, &x)| {
            if n % 1024 == 0 {
                // Re-anchor the phasor so rounding does not accumulate.
                phasor = Complex64::from_polar(1.0, -band.centre_rad * n as f64);
            }
            let v = phasor * x;
            phasor *= step;
            v
        })
        .collect();
    let samples = (0..count)
        .map(|k| {
            let end = first_index + k * factor;
            weights
                .iter()
                .enumerate()
                .map(|(j, &h)| mixed[end - j] * h)
                .sum()
        })
        .collect();
    let noise_gain = weights.iter().map(|h| h * h).sum();
    Some(Decimated {
        samples,
        factor,
        first_index,
        noise_gain,
    })
}

/// Taps of a boxcar of `length` ones convolved `order` times, scaled to a
/// gain of 1 at DC.
fn boxcar_power(length: usize, order: usize) -> Vec<f64> {
    let mut taps = vec![1.0];
    for _ in 0..order {
        let mut next = vec![0.0; taps.len() + length - 1];
        for (i, &t) in taps.iter().enumerate() {
            for slot in &mut next[i..i + length] {
                *slot += t;
            }
        }
        taps = next;
    }
    let scale = (length as f64).powi(order as i32);
    taps.iter().map(|t| t / scale).collect()
}

/// The decimated pole of a full-rate pole: w = (z·e^{−jω₀})^D.
fn pole_decimated(z: Complex64, band: &Band, decimated: &Decimated) -> Complex64 {
    let u = z * Complex64::from_polar(1.0, -band.centre_rad);
    u.powu(decimated.factor as u32)
}

/// What the mixing and filter do to the amplitude of c·zⁿ, as seen in the
/// decimated sequence indexed from its first output:
/// y[k] = c·u^{n₀}·H(u)·w^k with u = z·e^{−jω₀}, H(u) = (Σ_{i<D} u^{−i})³/D³.
fn filter_response(z: Complex64, band: &Band, decimated: &Decimated) -> Complex64 {
    let u = z * Complex64::from_polar(1.0, -band.centre_rad);
    let inverse = Complex64::new(1.0, 0.0) / u;
    let mut boxcar = Complex64::new(0.0, 0.0);
    let mut power = Complex64::new(1.0, 0.0);
    for _ in 0..decimated.factor {
        boxcar += power;
        power *= inverse;
    }
    let gain = (boxcar / decimated.factor as f64).powu(FILTER_ORDER as u32);
    u.powu(decimated.first_index as u32) * gain
}

/// Converts a decimated pole back to the full rate, if it decays, lies in
/// the band and has a sensible Q.
fn to_full_rate(w: Complex64, band: &Band, decimated: &Decimated) -> Option<BandPole> {
    let factor = decimated.factor as f64;
    let magnitude = w.norm();
    if !(magnitude < 1.0 && magnitude > 0.0) {
        return None;
    }
    let offset_rad = w.arg() / factor;
    let decay = -magnitude.ln() / factor;
    let omega = band.centre_rad + offset_rad;
    let q = omega / (2.0 * decay);
    let in_band = offset_rad.abs() <= band.half_width_rad && omega > 0.0 && omega < PI;
    (in_band && (MIN_Q..=MAX_Q).contains(&q)).then(|| BandPole {
        z: Complex64::from_polar((-decay).exp(), omega),
        c: Complex64::new(0.0, 0.0),
    })
}

/// Two decimated poles from different model orders are the same mode if
/// they are within a quarter of its bandwidth in frequency and a quarter
/// of its decay.
fn stays_put(w: Complex64, v: Complex64, factor: usize) -> bool {
    let factor = factor as f64;
    let (dw, dv) = (-w.norm().ln() / factor, -v.norm().ln() / factor);
    let shift = ((v / w).arg() / factor).abs();
    dw > 0.0 && shift <= 0.5 * dw && (dv - dw).abs() <= 0.25 * dw
}

/// Backward elimination: the index of the pole whose removal costs the
/// least-squares fit least, if that cost is under what one complex
/// amplitude soaks up from noise (`MIN_ENERGY_OVER_NOISE` times the noise
/// variance). A pencil of too high an order can place a spare pole beside
/// a real one; the two then get large amplitudes that nearly cancel, and
/// removing either costs almost nothing.
fn least_needed(y: &[Complex64], poles: &[Complex64], noise_var: f64) -> Option<usize> {
    if poles.len() < 2 {
        return None;
    }
    let full = fit_residual_energy(y, poles)?;
    (0..poles.len())
        .filter_map(|i| {
            let mut rest = poles.to_vec();
            rest.remove(i);
            Some((i, fit_residual_energy(y, &rest)? - full))
        })
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .filter(|&(_, cost)| cost < MIN_ENERGY_OVER_NOISE * noise_var)
        .map(|(i, _)| i)
}

/// Residual energy of the least-squares fit of `poles` to `y`.
fn fit_residual_energy(y: &[Complex64], poles: &[Complex64]) -> Option<f64> {
    let b = least_squares_amplitudes(y, poles)?;
    let energy = y
        .iter()
        .enumerate()
        .map(|(k, &yk)| {
            let model: Complex64 = poles
                .iter()
                .zip(&b)
                .map(|(w, bi)| bi * w.powu(k as u32))
                .sum();
            (yk - model).norm_sqr()
        })
        .sum();
    Some(energy)
}

/// Least-squares amplitudes b of y[k] ≈ Σ bᵢ·wᵢᵏ.
fn least_squares_amplitudes(y: &[Complex64], poles: &[Complex64]) -> Option<Vec<Complex64>> {
    let vandermonde = DMatrix::from_fn(y.len(), poles.len(), |k, i| poles[i].powu(k as u32));
    let rhs = DVector::from_column_slice(y);
    let svd = vandermonde.try_svd(true, true, 1e-14, 200)?;
    let solution = svd.solve(&rhs, 1e-12).ok()?;
    Some(solution.iter().copied().collect())
}

/// The SVD of the Hankel matrix of a decimated sequence.
struct Pencil {
    /// Singular values, largest first.
    singular: Vec<f64>,
    /// Right singular vectors, conjugated: row i of Vᴴ, for each i.
    v_h: DMatrix<Complex64>,
    rows: usize,
    columns: usize,
}

impl Pencil {
    fn new(y: &[Complex64]) -> Option<Self> {
        let n = y.len();
        // Hua & Sarkar (1990) find the noise sensitivity least for a pencil
        // parameter L between N/3 and N/2.
        let pencil_len = n / 3;
        if pencil_len < MAX_ORDER + 2 {
            return None;
        }
        let (rows, columns) = (n - pencil_len, pencil_len + 1);
        let hankel = DMatrix::from_fn(rows, columns, |i, j| y[i + j]);
        let svd = hankel.try_svd(false, true, 1e-14, 500)?;
        let mut order: Vec<usize> = (0..svd.singular_values.len()).collect();
        order.sort_by(|&a, &b| svd.singular_values[b].total_cmp(&svd.singular_values[a]));
        let v_t = svd.v_t?;
        let v_h = DMatrix::from_fn(order.len(), columns, |i, j| v_t[(order[i], j)]);
        let singular = order.iter().map(|&i| svd.singular_values[i]).collect();
        Some(Self {
            singular,
            v_h,
            rows,
            columns,
        })
    }

    fn max_order(&self) -> usize {
        self.singular.len().min(self.columns - 1)
    }

    /// Number of singular values clearly above those of the noise alone:
    /// a rows×columns matrix of white noise of standard deviation s has its
    /// largest singular value near s(√rows + √columns).
    fn signal_order(&self, noise_dec: f64) -> usize {
        let level = SIGNAL_OVER_NOISE
            * noise_dec
            * ((self.rows as f64).sqrt() + (self.columns as f64).sqrt());
        self.singular.iter().take_while(|&&s| s > level).count()
    }

    /// Eigenvalues of W₂·W₁⁺ where W is the top `order` rows of Vᴴ, W₁
    /// without its last column and W₂ without its first (Hua & Sarkar 1990,
    /// SVD-truncated pencil).
    fn poles(&self, order: usize) -> Vec<Complex64> {
        let top = self.v_h.rows(0, order);
        let w1 = top.columns(0, self.columns - 1);
        let w2 = top.columns(1, self.columns - 1);
        let gram = w1 * w1.adjoint();
        let Some(gram_inverse) = gram.try_inverse() else {
            return Vec::new();
        };
        let shifted = w2 * w1.adjoint() * gram_inverse;
        eigenvalues(shifted)
    }
}

/// Eigenvalues of a small complex matrix (complex Schur form).
fn eigenvalues(m: DMatrix<Complex64>) -> Vec<Complex64> {
    nalgebra::Schur::try_new(m, 1e-14, 500)
        .and_then(|schur| schur.eigenvalues())
        .map(|values| values.iter().copied().collect())
        .unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::{damped_modes, NoiseGenerator, SynthMode};

    const FS: f64 = 48_000.0;

    fn band_around(frequency_hz: f64, half_width_hz: f64, span: usize) -> Band {
        Band {
            centre_rad: 2.0 * PI * frequency_hz / FS,
            half_width_rad: 2.0 * PI * half_width_hz / FS,
            span_samples: span,
        }
    }

    fn frequency_hz(p: &BandPole) -> f64 {
        p.z.arg() * FS / (2.0 * PI)
    }

    fn q(p: &BandPole) -> f64 {
        p.z.arg() / (-2.0 * p.z.norm().ln())
    }

    fn by_frequency(mut poles: Vec<BandPole>) -> Vec<BandPole> {
        poles.sort_by(|a, b| a.z.arg().total_cmp(&b.z.arg()));
        poles
    }

    #[test]
    fn boxcar_power_has_unit_gain_and_right_length() {
        let taps = boxcar_power(5, 3);
        assert_eq!(taps.len(), 13);
        assert!((taps.iter().sum::<f64>() - 1.0).abs() < 1e-12);
        // Centre tap of a cubed 5-boxcar is 19/125 (coefficients of
        // (1 + x + x² + x³ + x⁴)³: 1 3 6 10 15 18 19 18 ...).
        assert!((taps[6] - 19.0 / 125.0).abs() < 1e-12);
    }

    #[test]
    fn filter_response_matches_the_decimated_samples() {
        // One noiseless real mode: the decimated sequence is b·wᵏ plus the
        // filtered image; b must equal c·u^{n₀}·H(u).
        let truth = SynthMode {
            phase_rad: 0.9,
            ..SynthMode::new(300.0, 100.0, 0.4)
        };
        let x = damped_modes(FS, 30_000, &[truth], 0.0, &mut NoiseGenerator::new(1));
        let band = band_around(300.0, 20.0, 30_000);
        let decimated = decimate_band(&x, &band).expect("decimated");
        let z = Complex64::from_polar((-truth.decay_per_s() / FS).exp(), 2.0 * PI * 300.0 / FS);
        let c = Complex64::from_polar(0.2, 0.9);
        let b = c * filter_response(z, &band, &decimated);
        let w = pole_decimated(z, &band, &decimated);
        for (k, y) in decimated.samples.iter().enumerate().take(40) {
            let model = b * w.powu(k as u32);
            assert!(
                (y - model).norm() < 2e-3 * b.norm(),
                "k {k}: {y} vs {model}"
            );
        }
    }

    /// Noiseless pair 4 Hz apart at Q 120 (one peak in the spectrum): the
    /// pencil is exact up to what the filter lets through of the image.
    #[test]
    fn noiseless_close_pair_is_exact() {
        let truth = [
            SynthMode::new(300.0, 120.0, 0.2),
            SynthMode {
                phase_rad: 2.4,
                ..SynthMode::new(304.0, 120.0, 0.15)
            },
        ];
        let span = 36_000;
        let x = damped_modes(FS, span, &truth, 0.0, &mut NoiseGenerator::new(1));
        let poles = by_frequency(band_poles(&x, &band_around(302.0, 25.0, span), 1e-6));
        assert_eq!(poles.len(), 2, "{poles:?}");
        for (p, t) in poles.iter().zip(&truth) {
            assert!((frequency_hz(p) - t.frequency_hz).abs() < 1e-3, "{p:?}");
            assert!((q(p) / t.q - 1.0).abs() < 1e-3, "{p:?}");
            assert!((2.0 * p.c.norm() / t.amplitude - 1.0).abs() < 1e-2, "{p:?}");
            assert!((p.c.arg() - t.phase_rad).abs() < 1e-2, "{p:?}");
        }
    }

    /// At 40 dB (peak over noise RMS) a pair 3 Hz apart at Q 200 comes out
    /// as two poles near the truth in every starting phase.
    #[test]
    fn noisy_close_pair_is_two_poles() {
        for trial in 0..8u64 {
            let truth = [
                SynthMode::new(300.0, 200.0, 0.2),
                SynthMode {
                    phase_rad: 0.8 * trial as f64,
                    ..SynthMode::new(303.0, 200.0, 0.15)
                },
            ];
            let span = 48_000;
            let x = damped_modes(
                FS,
                span,
                &truth,
                0.002,
                &mut NoiseGenerator::new(70 + trial),
            );
            let poles = by_frequency(band_poles(&x, &band_around(301.5, 20.0, span), 0.002));
            assert_eq!(poles.len(), 2, "trial {trial}: {poles:?}");
            for (p, t) in poles.iter().zip(&truth) {
                assert!(
                    (frequency_hz(p) - t.frequency_hz).abs() < 0.3,
                    "{trial}: {p:?}"
                );
                assert!((q(p) / t.q - 1.0).abs() < 0.3, "{trial}: {p:?}");
            }
        }
    }

    #[test]
    fn single_mode_gives_one_pole_and_noise_none() {
        let truth = SynthMode::new(500.0, 60.0, 0.3);
        let span = 24_000;
        let x = damped_modes(FS, span, &[truth], 0.003, &mut NoiseGenerator::new(5));
        let poles = band_poles(&x, &band_around(500.0, 40.0, span), 0.003);
        assert_eq!(poles.len(), 1, "{poles:?}");
        assert!((frequency_hz(&poles[0]) - 500.0).abs() < 0.1, "{poles:?}");
        assert!((q(&poles[0]) / 60.0 - 1.0).abs() < 0.05, "{poles:?}");
        let noise = damped_modes(FS, span, &[], 0.003, &mut NoiseGenerator::new(6));
        let none = band_poles(&noise, &band_around(500.0, 40.0, span), 0.003);
        assert!(none.is_empty(), "{none:?}");
    }

    /// A spare pole beside a real one adds nothing to the fit and is the
    /// one eliminated; two well separated real poles are both needed.
    /// (Least squares: a pole whose column the others nearly span explains
    /// almost no energy. Common practice, no source.)
    #[test]
    fn backward_elimination_drops_a_spare_pole_only() {
        let real = [
            Complex64::from_polar(0.97, 0.3),
            Complex64::from_polar(0.95, 0.9),
        ];
        let y: Vec<Complex64> = (0..160)
            .map(|k| real[0].powu(k) * 0.8 + real[1].powu(k) * Complex64::new(0.0, 0.5))
            .collect();
        let noise_var = 1e-6;
        assert_eq!(least_needed(&y, &real, noise_var), None);
        let spare = real[1] * Complex64::from_polar(1.0, 1e-4);
        let with_spare = [real[0], real[1], spare];
        let dropped = least_needed(&y, &with_spare, noise_var);
        assert!(matches!(dropped, Some(1 | 2)), "{dropped:?}");
        let far_real = [real[0], Complex64::from_polar(0.96, 2.0)];
        let y_far_only: Vec<Complex64> = (0..160).map(|k| far_real[0].powu(k)).collect();
        assert_eq!(least_needed(&y_far_only, &far_real, noise_var), Some(1));
    }
}
