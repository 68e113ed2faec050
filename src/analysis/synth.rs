//! Synthetic taps with known truth: sums of exponentially decaying
//! sinusoids plus white Gaussian noise. Used by the tests, the benchmarks,
//! the demo recording and the synthetic capture source.
//!
//! The random generator is a small SplitMix64 so that a given seed gives the
//! same samples on every platform and every version (the bundled demo
//! recording is checked against it).

use std::f64::consts::PI;

/// One damped mode: x(t) = A·exp(−πf t / Q)·cos(2πf t + φ).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SynthMode {
    pub frequency_hz: f64,
    pub q: f64,
    /// Initial amplitude, full scale = 1.
    pub amplitude: f64,
    pub phase_rad: f64,
}

impl SynthMode {
    pub fn new(frequency_hz: f64, q: f64, amplitude: f64) -> Self {
        Self {
            frequency_hz,
            q,
            amplitude,
            phase_rad: 0.0,
        }
    }

    /// Decay rate α = πf/Q in 1/s.
    pub fn decay_per_s(&self) -> f64 {
        PI * self.frequency_hz / self.q
    }
}

/// Deterministic SplitMix64 generator with Gaussian samples (Box–Muller).
#[derive(Clone, Debug)]
pub struct NoiseGenerator {
    state: u64,
    spare: Option<f64>,
}

impl NoiseGenerator {
    pub fn new(seed: u64) -> Self {
        Self {
            state: seed,
            spare: None,
        }
    }

    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in (0, 1).
    pub fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// Standard normal.
    pub fn gaussian(&mut self) -> f64 {
        if let Some(spare) = self.spare.take() {
            return spare;
        }
        let radius = (-2.0 * self.uniform().ln()).sqrt();
        let angle = 2.0 * PI * self.uniform();
        self.spare = Some(radius * angle.sin());
        radius * angle.cos()
    }
}

/// Adds the modes, starting at sample `start`, into `out` (f64 accumulator).
pub fn add_modes(out: &mut [f64], sample_rate_hz: f64, start: usize, modes: &[SynthMode]) {
    for mode in modes {
        let decay = (-mode.decay_per_s() / sample_rate_hz).exp();
        let step = 2.0 * PI * mode.frequency_hz / sample_rate_hz;
        let mut envelope = mode.amplitude;
        for (n, sample) in out.iter_mut().skip(start).enumerate() {
            *sample += envelope * (step * n as f64 + mode.phase_rad).cos();
            envelope *= decay;
            if envelope < 1e-12 {
                break;
            }
        }
    }
}

/// One tap: `length` samples of the modes plus noise of standard deviation
/// `noise_rms` (full scale = 1).
pub fn damped_modes(
    sample_rate_hz: f64,
    length: usize,
    modes: &[SynthMode],
    noise_rms: f64,
    noise: &mut NoiseGenerator,
) -> Vec<f64> {
    let mut out = vec![0.0; length];
    add_modes(&mut out, sample_rate_hz, 0, modes);
    for sample in &mut out {
        *sample += noise_rms * noise.gaussian();
    }
    out
}

/// Converts to f32 samples, clipping at full scale as an ADC would.
pub fn to_f32_clipped(samples: &[f64]) -> Vec<f32> {
    samples.iter().map(|&x| x.clamp(-1.0, 1.0) as f32).collect()
}

/// A strike: a short raised-cosine pulse (the mallet contact) of the given
/// length, which excites the modes; returned as the modes' phases unchanged.
/// Used to make recordings that start like a real tap rather than at a peak.
pub fn contact_pulse(
    out: &mut [f64],
    sample_rate_hz: f64,
    start: usize,
    contact_ms: f64,
    amplitude: f64,
) {
    let length = ((contact_ms * 1e-3 * sample_rate_hz).round() as usize).max(1);
    for i in 0..length {
        if let Some(sample) = out.get_mut(start + i) {
            let x = i as f64 / length as f64;
            *sample += amplitude * 0.5 * (1.0 - (2.0 * PI * x).cos());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gaussian_has_unit_variance() {
        let mut g = NoiseGenerator::new(7);
        let n = 200_000;
        let (mut sum, mut sum_sq) = (0.0, 0.0);
        for _ in 0..n {
            let x = g.gaussian();
            sum += x;
            sum_sq += x * x;
        }
        let mean = sum / n as f64;
        let var = sum_sq / n as f64 - mean * mean;
        assert!(mean.abs() < 0.01, "mean {mean}");
        assert!((var - 1.0).abs() < 0.01, "variance {var}");
    }

    #[test]
    fn mode_decays_by_its_q() {
        // After one time constant τ = Q/(πf) the envelope is 1/e.
        let fs = 48_000.0;
        let mode = SynthMode::new(200.0, 50.0, 1.0);
        let mut out = vec![0.0; 48_000];
        add_modes(&mut out, fs, 0, &[mode]);
        let tau_samples = (fs / mode.decay_per_s()).round() as usize;
        let period = (fs / 200.0) as usize;
        let peak = out[tau_samples..tau_samples + period]
            .iter()
            .fold(0.0f64, |m, x| m.max(x.abs()));
        assert!((peak - (-1.0f64).exp()).abs() < 0.01, "peak {peak}");
    }
}
