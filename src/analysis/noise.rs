//! The room noise's level per frequency, from the quiet part of a record:
//! a Hann-windowed periodogram (common practice, no source), read as the
//! noise variance per sample at each frequency (white noise of variance σ²
//! reads σ² in every bin).

use std::sync::Arc;

use realfft::{RealFftPlanner, RealToComplex};
use rustfft::num_complex::Complex32;

use super::spectrum::hann_weight;

/// Fewer quiet samples than this: no noise estimate (zero).
const MIN_SAMPLES: usize = 32;
/// A band's noise is averaged over at least this many periodogram bins.
const MIN_BINS: usize = 5;

#[derive(Default)]
pub(super) struct NoiseProfile {
    bin_hz: f64,
    /// Noise variance per sample, per bin.
    density: Vec<f64>,
    planner: RealFftPlanner<f32>,
    plan: Option<Arc<dyn RealToComplex<f32>>>,
    input: Vec<f32>,
    output: Vec<Complex32>,
    scratch: Vec<Complex32>,
    /// The Hann window of the last length measured, and its energy.
    window: Vec<f32>,
    window_energy: f64,
}

impl std::fmt::Debug for NoiseProfile {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("NoiseProfile")
            .field("bins", &self.density.len())
            .finish()
    }
}

impl NoiseProfile {
    /// Measures the noise of `quiet` (offset already removed).
    pub fn measure(&mut self, quiet: &[f32], sample_rate_hz: f64) {
        self.density.clear();
        if quiet.len() < MIN_SAMPLES {
            return;
        }
        let fft_len = quiet.len().next_power_of_two();
        if self.plan.as_ref().is_none_or(|p| p.len() != fft_len) {
            let plan = self.planner.plan_fft_forward(fft_len);
            self.output = plan.make_output_vec();
            self.scratch = plan.make_scratch_vec();
            self.plan = Some(plan);
        }
        let Some(plan) = &self.plan else {
            return;
        };
        let len = quiet.len();
        if self.window.len() != len {
            self.window = (0..len).map(|n| hann_weight(n, len) as f32).collect();
            self.window_energy = self.window.iter().map(|&w| f64::from(w).powi(2)).sum();
        }
        self.input.clear();
        self.input
            .extend(quiet.iter().zip(&self.window).map(|(&x, &w)| x * w));
        self.input.resize(fft_len, 0.0);
        let window_energy = self.window_energy;
        if plan
            .process_with_scratch(&mut self.input, &mut self.output, &mut self.scratch)
            .is_err()
        {
            return;
        }
        self.bin_hz = sample_rate_hz / fft_len as f64;
        self.density.extend(
            self.output
                .iter()
                .map(|c| f64::from(c.norm_sqr()) / window_energy),
        );
    }

    /// Noise variance per sample at a frequency (the mean of `MIN_BINS`
    /// bins around it); zero when nothing was measured.
    pub fn density_at(&self, frequency_hz: f64) -> f64 {
        self.density(frequency_hz, frequency_hz)
    }

    /// Mean noise variance per sample between two frequencies (at least
    /// `MIN_BINS` bins around their middle); zero when nothing was measured.
    pub fn density(&self, low_hz: f64, high_hz: f64) -> f64 {
        let last = self.density.len().saturating_sub(1);
        if self.density.is_empty() || self.bin_hz <= 0.0 {
            return 0.0;
        }
        let centre = 0.5 * (low_hz + high_hz) / self.bin_hz;
        let half = (0.5 * (high_hz - low_hz) / self.bin_hz).max(MIN_BINS as f64 / 2.0);
        let from = ((centre - half).floor().max(1.0) as usize).min(last);
        let to = ((centre + half).ceil().max(1.0) as usize).min(last);
        let bins = &self.density[from..=to.max(from)];
        bins.iter().sum::<f64>() / bins.len() as f64
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::NoiseGenerator;

    #[test]
    fn white_noise_reads_its_variance() {
        let mut random = NoiseGenerator::new(5);
        let sigma = 0.01;
        let quiet: Vec<f32> = (0..4800)
            .map(|_| (sigma * random.gaussian()) as f32)
            .collect();
        let mut profile = NoiseProfile::default();
        profile.measure(&quiet, 48_000.0);
        for centre in [300.0, 2000.0, 9000.0] {
            let read = profile.density(centre - 500.0, centre + 500.0);
            assert!(
                (read / (sigma * sigma) - 1.0).abs() < 0.25,
                "{centre} Hz: {read}"
            );
        }
    }
}
