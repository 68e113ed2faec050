//! Band signals by FFT-domain filtering and decimation.
//!
//! The decay is transformed once (one real FFT, zero-padded), and again for
//! shorter prefixes of it (a quarter, a sixteenth, ... of its length): all of
//! these together cost at most 4/3 of the first. A band around a frequency
//! ω₀ is then a handful of those bins, weighted by a Gaussian taper and
//! brought back to the time domain by one small inverse FFT of M points:
//!
//!   y[m] = (1/M)·Σᵢ W(i)·X[k₀ + i]·e^{j2πim/M},  i = −M/2 … M/2 − 1,
//!
//! which is the decay mixed down by ω₀ = 2πk₀/N, low-pass filtered by the
//! kernel whose spectrum is W, and sampled every D = N/M samples. Inside
//! the record, away from its two ends, a damped exponential c·zⁿ passes
//! through as G(z)·c·(z·e^{−jω₀})^{mD}: still one exponential, its pole
//! mapped to w = (z·e^{−jω₀})^D and its amplitude scaled by a gain G(z) that
//! follows in closed form from the exponential's own DFT ([`BandSignal::gain`]).
//! At the record's start every component outside the band leaves a
//! transient of the kernel's length (the Lorentzian tail of a one-sided
//! exponential is its onset); the first [`SKIP`] decimated samples hold it
//! and are not used, nor the last ones before the record ends.
//!
//! The Gaussian taper (σ = M/8, cut at ±M/2 where it is 70 dB down) keeps
//! the kernel short: a Gaussian of σ = 1.3 decimated samples in time, so
//! after [`SKIP`] samples what is left of the onset is 65 dB down (checked
//! by a unit test). Filtering a sum of damped exponentials by FFT-domain
//! decimation and fitting the decimated band is the usual way to make a
//! subspace method local and cheap (see e.g. M. Tohyama and others on
//! band-wise modal estimation; the filter design here is common practice).

use std::sync::Arc;

use realfft::{RealFftPlanner, RealToComplex};
use rustfft::num_complex::{Complex32, Complex64};
use rustfft::{Fft, FftPlanner};

use super::spectrum::DisplaySpectrum;

/// Decimated samples skipped at each end of the record: the kernel's
/// transient is 65 dB down after five, one more for margin.
pub(super) const SKIP: usize = 6;
/// Decimated samples a band aims to use (its span is SPAN_TAUS time
/// constants over these many samples).
pub(super) const TARGET_SAMPLES: usize = 64;
/// A band never uses more decimated samples than this (the matrix sizes of
/// the subspace stage stay fixed and small).
pub(super) const MAX_SAMPLES: usize = 96;
/// Fewer useful samples than this: no band.
pub(super) const MIN_SAMPLES: usize = 32;
/// Shortest prefix transformed (shorter spans use it too).
const MIN_LEVEL_LEN: usize = 512;
/// The Gaussian taper's standard deviation is M / TAPER_SIGMA_DIVISOR bins.
const TAPER_SIGMA_DIVISOR: f64 = 8.0;

/// One transform of a prefix of the decay.
#[derive(Debug, Default)]
struct Level {
    /// Samples of the decay transformed (the rest of the FFT is zeros).
    len: usize,
    fft_len: usize,
    /// Bins 0 ..= fft_len/2 of the real FFT (single precision, as the
    /// record is: its rounding is 140 dB under the strongest bin).
    bins: Vec<Complex32>,
}

impl Level {
    /// Bin `k` of the full (two-sided) DFT, any integer k.
    fn bin(&self, k: i64) -> Complex64 {
        let n = self.fft_len as i64;
        let k = k.rem_euclid(n) as usize;
        let bin = if k <= self.fft_len / 2 {
            self.bins[k]
        } else {
            self.bins[self.fft_len - k].conj()
        };
        Complex64::new(f64::from(bin.re), f64::from(bin.im))
    }
}

/// The transforms of a decay and its prefixes, with the plans and buffers
/// kept between taps.
pub(super) struct DecaySpectra {
    levels: Vec<Level>,
    real_planner: RealFftPlanner<f32>,
    complex_planner: FftPlanner<f64>,
    real_plans: Vec<Arc<dyn RealToComplex<f32>>>,
    input: Vec<f32>,
    scratch: Vec<Complex32>,
    sample_rate_hz: f64,
    /// Per band length M (a handful of powers of two): its taper and its
    /// inverse plan, made once.
    band_kits: Vec<BandKit>,
    band_buffer: Vec<Complex64>,
    band_scratch: Vec<Complex64>,
}

/// What every band of M points shares.
struct BandKit {
    taper: Arc<Taper>,
    inverse: Arc<dyn Fft<f64>>,
}

/// The Gaussian taper of one band length and ΣW²/M.
#[derive(Debug)]
struct Taper {
    weights: Vec<f64>,
    fill: f64,
}

impl std::fmt::Debug for DecaySpectra {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("DecaySpectra")
            .field("levels", &self.levels.len())
            .finish()
    }
}

/// A band of the decay, decimated: the samples the subspace stage sees and
/// what is needed to take its poles and amplitudes back to the full rate.
#[derive(Clone, Debug)]
pub(super) struct BandSignal {
    /// Useful decimated samples (transients at both ends left out).
    pub samples: Vec<Complex64>,
    /// Decimation factor D (a power of two).
    pub factor: usize,
    /// Band centre ω₀ in rad/sample at the full rate.
    pub centre_rad: f64,
    /// Poles within this distance of the centre (rad/sample, full rate)
    /// belong to the band: the central quarter of the decimated circle,
    /// where the taper is within 4.3 dB of its peak.
    pub owned_half_width_rad: f64,
    /// Variance of the room noise in one decimated sample where the taper
    /// is 1 (white-equivalent: what a flat band would let through).
    pub noise_var: f64,
    /// ΣW²/M of the taper: the fraction of the decimated band it passes.
    pub taper_fill: f64,
    /// For [`BandSignal::gain`]: the transform used and the band's bins.
    level_len: usize,
    fft_len: usize,
    centre_bin: i64,
    taper: Arc<Taper>,
    /// Decimated index (in the whole inverse FFT) of `samples[0]`.
    first_decimated: usize,
}

impl BandSignal {
    /// Full-rate span of the useful samples.
    pub fn span_samples(&self) -> usize {
        self.samples.len() * self.factor
    }

    /// Decimated pole of a full-rate pole: w = (z·e^{−jω₀})^D.
    #[cfg(test)]
    pub fn to_decimated(&self, z: Complex64) -> Complex64 {
        (z * Complex64::from_polar(1.0, -self.centre_rad)).powu(self.factor as u32)
    }

    /// Full-rate pole of a decimated pole: the D-th root nearest the band
    /// centre (the band holds one period of the decimated circle).
    pub fn to_full_rate(&self, w: Complex64) -> Complex64 {
        let d = self.factor as f64;
        let magnitude = w.norm().powf(1.0 / d);
        Complex64::from_polar(magnitude, self.centre_rad + w.arg() / d)
    }

    /// What the band does to a unit exponential zⁿ (n from the decay's
    /// start) as seen in `samples[0]`: the band's output for the
    /// exponential's exact DFT, (1 − (zρᵏ)^L)/(1 − zρᵏ) with ρ = e^{−j2π/N},
    /// evaluated at the first useful sample. An amplitude b fitted to the
    /// band at that sample is c·G(z) for the full-rate amplitude c.
    pub fn gain(&self, z: Complex64) -> Complex64 {
        let one = Complex64::new(1.0, 0.0);
        let tau = 2.0 * std::f64::consts::PI;
        let n = self.fft_len as f64;
        let m_len = self.taper.weights.len();
        let half = (m_len / 2) as i64;
        let z_len = z.powu(self.level_len as u32);
        // The three unit phasors of each term advance by a fixed step from
        // one taper offset to the next: ρᵏ, ρ^{kL} and the decimated
        // phase e^{j2πi·m₀/M}; they are stepped, not recomputed.
        let phasor = |turns: f64| Complex64::from_polar(1.0, tau * turns);
        let level_len = self.level_len as i128;
        let fft_len = self.fft_len as i128;
        let first_k = self.centre_bin - half;
        let mut rho_k = phasor(-(first_k as f64) / n);
        let mut rho_k_len = phasor(-((first_k as i128 * level_len).rem_euclid(fft_len) as f64) / n);
        let mut shift = phasor(
            ((-half * self.first_decimated as i64).rem_euclid(m_len as i64)) as f64 / m_len as f64,
        );
        let rho_step = phasor(-1.0 / n);
        let rho_len_step = phasor(-((level_len % fft_len) as f64) / n);
        let shift_step = phasor(self.first_decimated as f64 / m_len as f64);
        let mut sum = Complex64::new(0.0, 0.0);
        for &w in &self.taper.weights {
            let bin = (one - z_len * rho_k_len) / (one - z * rho_k);
            sum += w * bin * shift;
            rho_k *= rho_step;
            rho_k_len *= rho_len_step;
            shift *= shift_step;
        }
        sum / m_len as f64
    }
}

/// How a band is asked for.
#[derive(Clone, Copy, Debug)]
pub(super) struct BandRequest {
    pub centre_hz: f64,
    /// Full-rate samples the useful part should span.
    pub span_samples: usize,
}

impl DecaySpectra {
    pub fn new(sample_rate_hz: f64) -> Self {
        Self {
            levels: Vec::new(),
            real_planner: RealFftPlanner::new(),
            complex_planner: FftPlanner::new(),
            real_plans: Vec::new(),
            input: Vec::new(),
            scratch: Vec::new(),
            sample_rate_hz,
            band_kits: Vec::new(),
            band_buffer: Vec::new(),
            band_scratch: Vec::new(),
        }
    }

    /// Transforms `decay` and its prefixes of a quarter, a sixteenth, ...
    /// of its length (down to `MIN_LEVEL_LEN`).
    pub fn transform(&mut self, decay: &[f32]) {
        let mut len = decay.len();
        let mut count = 0;
        while len >= MIN_LEVEL_LEN || count == 0 {
            // Zeros after the data: at least a sixteenth of the transform,
            // so the kernel's ends (SKIP·D samples) never wrap onto data.
            let fft_len = (len + len / 8).max(64).next_power_of_two();
            if self.levels.len() <= count {
                self.levels.push(Level::default());
            }
            let plan = self.real_plan(fft_len);
            self.input.clear();
            self.input.extend_from_slice(&decay[..len]);
            self.input.resize(fft_len, 0.0);
            let level = &mut self.levels[count];
            level.len = len;
            level.fft_len = fft_len;
            level.bins.resize(fft_len / 2 + 1, Complex32::new(0.0, 0.0));
            self.scratch
                .resize(plan.get_scratch_len(), Complex32::new(0.0, 0.0));
            // The lengths match by construction, so the FFT cannot fail.
            let _ = plan.process_with_scratch(&mut self.input, &mut level.bins, &mut self.scratch);
            count += 1;
            if len / 4 < MIN_LEVEL_LEN {
                break;
            }
            len /= 4;
        }
        self.levels.truncate(count);
    }

    fn real_plan(&mut self, fft_len: usize) -> Arc<dyn RealToComplex<f32>> {
        if let Some(plan) = self.real_plans.iter().find(|p| p.len() == fft_len) {
            return Arc::clone(plan);
        }
        let plan = self.real_planner.plan_fft_forward(fft_len);
        self.real_plans.push(Arc::clone(&plan));
        plan
    }

    /// The taper and inverse plan of bands of `m_len` points.
    fn band_kit(&mut self, m_len: usize) -> (Arc<Taper>, Arc<dyn Fft<f64>>) {
        let kit = match self.band_kits.iter().position(|k| k.inverse.len() == m_len) {
            Some(index) => &self.band_kits[index],
            None => {
                let weights = gaussian_taper(m_len);
                let fill = weights.iter().map(|w| w * w).sum::<f64>() / m_len as f64;
                self.band_kits.push(BandKit {
                    taper: Arc::new(Taper { weights, fill }),
                    inverse: self.complex_planner.plan_fft_inverse(m_len),
                });
                &self.band_kits[self.band_kits.len() - 1]
            }
        };
        (Arc::clone(&kit.taper), Arc::clone(&kit.inverse))
    }

    /// Power spectrum of the whole decay, unwindowed (for a damped
    /// exponential exactly a Lorentzian: Bertocco, Offelli & Petri, IEEE
    /// Trans. Instrum. Meas. 43(2), 1994), scaled as the display spectrum
    /// is (a steady sinusoid of amplitude A reads A²).
    pub fn decay_power(&self) -> DisplaySpectrum {
        let Some(level) = self.levels.first() else {
            return DisplaySpectrum {
                bin_hz: 1.0,
                power: Vec::new(),
            };
        };
        let scale = (2.0 / level.len.max(1) as f32).powi(2);
        DisplaySpectrum {
            bin_hz: self.sample_rate_hz / level.fft_len as f64,
            power: level.bins.iter().map(|c| c.norm_sqr() * scale).collect(),
        }
    }

    /// Samples of the longest transform (the whole decay).
    pub fn decay_len(&self) -> usize {
        self.levels.first().map_or(0, |l| l.len)
    }

    /// The band around `request.centre_hz` whose useful samples span about
    /// `request.span_samples`, or None if the decay is too short for it.
    /// `noise_density` gives the room noise's variance per sample at a
    /// frequency (white noise of variance σ² gives σ² everywhere).
    pub fn band(
        &mut self,
        request: BandRequest,
        noise_density: impl Fn(f64, f64) -> f64,
    ) -> Option<BandSignal> {
        let fs = self.sample_rate_hz;
        let total = self.decay_len();
        let span = request.span_samples.clamp(1, total.max(1));
        let factor = decimation_for(span, total)?;
        // The shortest prefix that holds the span and both skipped ends.
        let needed = (span + 2 * SKIP * factor).min(total);
        let level_index = self
            .levels
            .iter()
            .rposition(|l| l.len >= needed)
            .unwrap_or(0);
        let m_len = self.levels[level_index].fft_len / factor;
        if m_len < 2 * SKIP + MIN_SAMPLES {
            return None;
        }
        let (taper, inverse) = self.band_kit(m_len);
        let level = &self.levels[level_index];
        let centre_bin = (request.centre_hz * level.fft_len as f64 / fs).round() as i64;
        let half = (m_len / 2) as i64;
        let buffer = &mut self.band_buffer;
        buffer.clear();
        buffer.extend((0..m_len).map(|index| {
            // Inverse-FFT order: offsets 0, 1, …, M/2−1, −M/2, …, −1.
            let i = if (index as i64) < half {
                index as i64
            } else {
                index as i64 - m_len as i64
            };
            taper.weights[(i + half) as usize] * level.bin(centre_bin + i)
        }));
        self.band_scratch
            .resize(inverse.get_inplace_scratch_len(), Complex64::new(0.0, 0.0));
        inverse.process_with_scratch(buffer, &mut self.band_scratch);
        let usable_end = (level.len / factor).saturating_sub(SKIP);
        let count = usable_end.saturating_sub(SKIP).min(MAX_SAMPLES);
        if count < MIN_SAMPLES {
            return None;
        }
        let scale = 1.0 / m_len as f64;
        let samples: Vec<Complex64> = buffer[SKIP..SKIP + count]
            .iter()
            .map(|&v| v * scale)
            .collect();
        let centre_rad = 2.0 * std::f64::consts::PI * centre_bin as f64 / level.fft_len as f64;
        let band_half_hz = 0.5 * fs / factor as f64;
        let density = noise_density(
            request.centre_hz - band_half_hz,
            request.centre_hz + band_half_hz,
        );
        // White noise of variance σ² gives y = (1/M)·Σ W·X a variance of
        // N·σ²·ΣW²/M², spread over the taper only. The thresholds of the
        // subspace stage and of the model order assume white noise over the
        // decimated band at the level where the signal is (W = 1): D·σ².
        let noise_var = factor as f64 * density;
        Some(BandSignal {
            samples,
            factor,
            centre_rad,
            owned_half_width_rad: std::f64::consts::PI / (4.0 * factor as f64),
            noise_var,
            taper_fill: taper.fill,
            level_len: level.len,
            fft_len: level.fft_len,
            centre_bin,
            taper,
            first_decimated: SKIP,
        })
    }
}

/// Decimation factor for a span: the power of two that puts between
/// `TARGET_SAMPLES` and twice that many samples on it, reduced until the decay holds at least
/// `MIN_SAMPLES` useful ones. None if even D = 1 does not.
fn decimation_for(span: usize, total: usize) -> Option<usize> {
    let wanted = (span as f64 / TARGET_SAMPLES as f64).max(1.0);
    let mut factor = 1usize << (wanted.log2().floor().max(0.0) as u32);
    while factor > 1 && total / factor < MIN_SAMPLES + 2 * SKIP {
        factor /= 2;
    }
    (total / factor >= MIN_SAMPLES + 2 * SKIP).then_some(factor)
}

/// Gaussian weights over offsets −M/2 … M/2−1 (index 0 is −M/2).
fn gaussian_taper(m_len: usize) -> Vec<f64> {
    let sigma = m_len as f64 / TAPER_SIGMA_DIVISOR;
    let half = (m_len / 2) as f64;
    (0..m_len)
        .map(|index| {
            let i = index as f64 - half;
            (-0.5 * (i / sigma).powi(2)).exp()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    const FS: f64 = 48_000.0;

    fn damped(len: usize, modes: &[(f64, f64, Complex64)]) -> Vec<f32> {
        (0..len)
            .map(|n| {
                modes
                    .iter()
                    .map(|&(f, decay, c)| {
                        let z = Complex64::from_polar((-decay / FS).exp(), 2.0 * PI * f / FS);
                        2.0 * (c * z.powu(n as u32)).re
                    })
                    .sum::<f64>() as f32
            })
            .collect()
    }

    /// The time kernel of the taper: after SKIP decimated samples it is
    /// more than 65 dB under its peak (the design's transient allowance).
    #[test]
    fn kernel_dies_within_the_skip() {
        let m_len = 256;
        let taper = gaussian_taper(m_len);
        let kernel = |t: f64| -> f64 {
            taper
                .iter()
                .enumerate()
                .map(|(index, &w)| {
                    let i = index as f64 - (m_len / 2) as f64;
                    w * Complex64::from_polar(1.0, 2.0 * PI * i * t / m_len as f64)
                })
                .sum::<Complex64>()
                .norm()
        };
        let peak = kernel(0.0);
        for t in SKIP - 1..m_len / 2 {
            let db = 20.0 * (kernel(t as f64) / peak).log10();
            assert!(db < -65.0, "t = {t}: {db} dB");
        }
    }

    /// A damped exponential inside the band comes out as one decimated
    /// exponential with the mapped pole and the gain the closed form gives.
    #[test]
    fn band_of_one_mode_is_one_exponential() {
        let c = Complex64::from_polar(0.25, 0.7);
        let (f, decay) = (1234.5, 14.0);
        let x = damped(
            30_000,
            &[(f, decay, c), (1900.0, 30.0, Complex64::new(0.3, 0.0))],
        );
        let mut spectra = DecaySpectra::new(FS);
        spectra.transform(&x);
        let band = spectra
            .band(
                BandRequest {
                    centre_hz: 1230.0,
                    span_samples: 12_000,
                },
                |_, _| 0.0,
            )
            .expect("band");
        let z = Complex64::from_polar((-decay / FS).exp(), 2.0 * PI * f / FS);
        let w = band.to_decimated(z);
        let b = c * band.gain(z);
        for (k, y) in band.samples.iter().enumerate() {
            let model = b * w.powu(k as u32);
            assert!(
                (y - model).norm() < 1e-4 * b.norm(),
                "sample {k}: {y} vs {model}"
            );
        }
        let back = band.to_full_rate(w);
        assert!((back - z).norm() < 1e-12);
    }

    /// A band made with the kept taper and plan (a second band of the
    /// same length first) is the band a fresh transform makes.
    #[test]
    fn kept_taper_and_plan_give_the_same_band() {
        let x = damped(20_000, &[(800.0, 20.0, Complex64::new(0.2, 0.1))]);
        let request = |centre_hz| BandRequest {
            centre_hz,
            span_samples: 8_000,
        };
        let mut fresh = DecaySpectra::new(FS);
        fresh.transform(&x);
        let once = fresh.band(request(800.0), |_, _| 1e-8).expect("band");
        let mut kept = DecaySpectra::new(FS);
        kept.transform(&x);
        let other = kept.band(request(1500.0), |_, _| 1e-8).expect("band");
        let again = kept.band(request(800.0), |_, _| 1e-8).expect("band");
        assert_eq!(other.samples.len(), again.samples.len());
        assert_eq!(once.samples, again.samples);
        assert_eq!(once.taper_fill, again.taper_fill);
        let z = Complex64::from_polar((-20.0 / FS).exp(), 2.0 * PI * 800.0 / FS);
        assert_eq!(once.gain(z), again.gain(z));
    }

    #[test]
    fn decimation_is_a_power_of_two_with_enough_samples() {
        assert_eq!(decimation_for(64 * 100, 48_000), Some(64));
        assert_eq!(decimation_for(48_000, 48_000), Some(512));
        assert_eq!(decimation_for(10, 48_000), Some(1));
        assert_eq!(decimation_for(100, 40), None);
    }
}
