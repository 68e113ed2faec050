//! Synthetic roving taps with known truth, for the tests and the demo set.
//!
//! At every point the microphone hears, for each tap,
//! Σₖ strength·φₖ(point)·Cₖ·(the force pulse filtered by mode k), plus a
//! faint click at the strike, plus room noise: by reciprocity Cₖ (how mode
//! k reaches the microphone) is the same for every point. The force is a
//! half-sine pulse of `contact_ms`; mode k's response to it is the
//! convolution of the pulse with the mode's impulse response
//! e^{−αt}·sin(ωt), written in closed form (during the contact and after
//! it), so nothing is quantised to the sample grid. Each tap's modal
//! sound starts a random delay after its click (up to `max_delay_ms`), as
//! the sound of the strike and the plate's response reach the microphone
//! by different paths. The noise is deterministic (`analysis::synth`).

use std::f64::consts::PI;

use rustfft::num_complex::Complex64;

use crate::analysis::synth::NoiseGenerator;

/// One mode of a synthetic plate as the microphone hears it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HeardMode {
    /// Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
    /// Cₖ: the mode's sound at the microphone per unit of shape, signed,
    /// before the recording is scaled to `peak_level`.
    pub coupling: f64,
}

/// How the synthetic taps are made.
#[derive(Clone, Debug, PartialEq)]
pub struct RovingTapSettings {
    /// Samples per second.
    pub sample_rate_hz: f64,
    /// Taps at every point.
    pub taps_per_point: usize,
    /// Quiet before the first tap, s.
    pub lead_s: f64,
    /// Time from one tap to the next, s (each varies by ±5 %).
    pub tap_interval_s: f64,
    /// Quiet after the last tap, s.
    pub tail_s: f64,
    /// Longest delay of the modal sound after the click, ms.
    pub max_delay_ms: f64,
    /// Length of the half-sine force pulse, ms.
    pub contact_ms: f64,
    /// The click's peak against the modal sound's scale (Cₖ = 1).
    pub click_level: f64,
    /// The loudest sample of the whole set, full scale = 1.
    pub peak_level: f64,
    /// Room noise: its RMS this far below `peak_level`, dB.
    pub noise_below_peak_db: f64,
    /// Each tap's strength is 1 ± this (uniform).
    pub strength_spread: f64,
    /// Seed of the random numbers.
    pub seed: u64,
}

impl Default for RovingTapSettings {
    fn default() -> Self {
        Self {
            sample_rate_hz: 24_000.0,
            taps_per_point: 3,
            lead_s: 0.3,
            tap_interval_s: 1.1,
            tail_s: 0.8,
            max_delay_ms: 0.5,
            contact_ms: 0.4,
            click_level: 0.05,
            peak_level: 0.5,
            noise_below_peak_db: 40.0,
            strength_spread: 0.1,
            seed: 0x5A_0020,
        }
    }
}

/// The recordings and what went into them.
#[derive(Clone, Debug, PartialEq)]
pub struct RovingTaps {
    /// One recording per point, full scale = 1.
    pub recordings: Vec<Vec<f32>>,
    /// Each tap's click (the strike), s from the start of its recording.
    pub clicks_s: Vec<Vec<f64>>,
    /// Each tap's delay of the modal sound after its click, s.
    pub delays_s: Vec<Vec<f64>>,
    /// Each tap's strength.
    pub strengths: Vec<Vec<f64>>,
}

/// Makes the recordings: `shapes[k][p]` is mode k's shape value at point p.
pub fn synthesize_roving_taps(
    modes: &[HeardMode],
    shapes: &[Vec<f64>],
    settings: &RovingTapSettings,
) -> RovingTaps {
    let fs = settings.sample_rate_hz;
    let points = shapes.first().map_or(0, Vec::len);
    let length = ((settings.lead_s
        + settings.tap_interval_s * settings.taps_per_point as f64
        + settings.tail_s)
        * fs)
        .ceil() as usize;
    let mut random = NoiseGenerator::new(settings.seed);
    let mut clean = vec![vec![0.0f64; length]; points];
    let mut clicks_s = vec![Vec::new(); points];
    let mut delays_s = vec![Vec::new(); points];
    let mut strengths = vec![Vec::new(); points];
    for p in 0..points {
        for tap in 0..settings.taps_per_point {
            let jitter = 1.0 + 0.1 * (random.uniform() - 0.5);
            let click_s = settings.lead_s + settings.tap_interval_s * (tap as f64 + 0.05 * jitter);
            let delay_s = settings.max_delay_ms * 1e-3 * random.uniform();
            let strength = 1.0 + settings.strength_spread * (2.0 * random.uniform() - 1.0);
            add_click(
                &mut clean[p],
                fs,
                click_s,
                settings.click_level * strength,
                &mut random,
            );
            for (k, mode) in modes.iter().enumerate() {
                let amplitude = strength * shapes[k][p] * mode.coupling;
                add_mode_response(
                    &mut clean[p],
                    fs,
                    click_s + delay_s,
                    settings.contact_ms * 1e-3,
                    mode,
                    amplitude,
                );
            }
            clicks_s[p].push(click_s);
            delays_s[p].push(delay_s);
            strengths[p].push(strength);
        }
    }
    let peak = clean
        .iter()
        .flatten()
        .fold(0.0f64, |m, x| m.max(x.abs()))
        .max(1e-12);
    let gain = settings.peak_level / peak;
    let noise_rms = settings.peak_level * 10f64.powf(-settings.noise_below_peak_db / 20.0);
    let recordings = clean
        .iter()
        .map(|samples| {
            samples
                .iter()
                .map(|&x| (gain * x + noise_rms * random.gaussian()).clamp(-1.0, 1.0) as f32)
                .collect()
        })
        .collect();
    RovingTaps {
        recordings,
        clicks_s,
        delays_s,
        strengths,
    }
}

/// A click: a burst of noise under a raised-cosine window, 0.25 ms long.
fn add_click(out: &mut [f64], fs: f64, at_s: f64, level: f64, random: &mut NoiseGenerator) {
    let start = (at_s * fs).round() as usize;
    let length = ((0.25e-3 * fs).round() as usize).max(2);
    for i in 0..length {
        if let Some(sample) = out.get_mut(start + i) {
            let window = 0.5 * (1.0 - (2.0 * PI * i as f64 / length as f64).cos());
            *sample += level * window * random.gaussian().clamp(-3.0, 3.0) / 3.0;
        }
    }
}

/// Adds `amplitude` × mode's response to a half-sine force of `contact_s`
/// starting at `start_s` (normalised so a very short pulse gives
/// amplitude·e^{−αt}·sin ωt).
fn add_mode_response(
    out: &mut [f64],
    fs: f64,
    start_s: f64,
    contact_s: f64,
    mode: &HeardMode,
    amplitude: f64,
) {
    let omega = 2.0 * PI * mode.frequency_hz;
    let alpha = omega / (2.0 * mode.q);
    let s = Complex64::new(-alpha, omega);
    let b = PI / contact_s;
    let denominator = s * s + b * b;
    let scale = amplitude / (2.0 * contact_s / PI);
    let after = b * (1.0 + (-s * contact_s).exp()) / denominator;
    let first = (start_s * fs).ceil().max(0.0) as usize;
    // Stop when the envelope is 10⁻⁷ of its start (140 dB down).
    let last = ((start_s + 16.0 / alpha) * fs).ceil() as usize;
    let step = (s / fs).exp();
    let mut phasor = Complex64::new(0.0, 0.0);
    for n in first..last.min(out.len()) {
        let tau = n as f64 / fs - start_s;
        let value = if tau <= contact_s {
            let (sin_bt, cos_bt) = (b * tau).sin_cos();
            ((b * (s * tau).exp() - s * sin_bt - b * cos_bt) / denominator).im
        } else {
            if (n - first) % 256 == 0 || phasor == Complex64::new(0.0, 0.0) {
                phasor = (s * tau).exp() * after;
            } else {
                phasor *= step;
            }
            phasor.im
        };
        out[n] += scale * value;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_tap_rings_with_the_mode_after_its_pulse() {
        // One mode, no noise, no click: after the pulse the record is a
        // damped sinusoid decaying at α = πf/Q (a fit of two peaks' ratio).
        let mode = HeardMode {
            frequency_hz: 200.0,
            q: 50.0,
            coupling: 1.0,
        };
        let settings = RovingTapSettings {
            taps_per_point: 1,
            click_level: 0.0,
            noise_below_peak_db: 300.0,
            strength_spread: 0.0,
            ..RovingTapSettings::default()
        };
        let taps = synthesize_roving_taps(&[mode], &[vec![1.0]], &settings);
        let record = &taps.recordings[0];
        let fs = settings.sample_rate_hz;
        let start = ((settings.lead_s + settings.tap_interval_s * 0.05 * 0.95) * fs) as usize;
        assert!(record[..start].iter().all(|&x| x.abs() < 1e-9));
        let peak_in = |from_s: f64| {
            let from = start + (from_s * fs) as usize;
            record[from..from + (fs / 200.0) as usize]
                .iter()
                .fold(0.0f32, |m, x| m.max(x.abs()))
        };
        let ratio = f64::from(peak_in(0.1) / peak_in(0.3));
        let expected = (std::f64::consts::PI * 200.0 / 50.0 * 0.2).exp();
        assert!(
            (ratio / expected - 1.0).abs() < 0.02,
            "{ratio} vs {expected}"
        );
        assert!((record.iter().fold(0.0f32, |m, x| m.max(x.abs())) - 0.5).abs() < 1e-6);
    }
}
