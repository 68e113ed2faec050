//! Made-up taps with known modes, generated as a stream: for the demo (the
//! Listen area without a microphone), the tests and the benchmarks.
//!
//! Each strike is a short raised-cosine contact pulse plus the modes ringing
//! down as exponentially decaying sinusoids, over white Gaussian noise; the
//! same model as `analysis::synth`, computed sample by sample.

use std::f64::consts::PI;

use super::feeder::SampleGenerator;
use crate::analysis::synth::{NoiseGenerator, SynthMode};
use crate::audio::error::AudioError;

/// Contact time of the made-up mallet.
const CONTACT_MS: f64 = 0.8;
/// A ringing mode below this amplitude is dropped.
const SILENT_AMPLITUDE: f64 = 1e-7;

/// One strike of the schedule.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SyntheticStrike {
    /// Time from the start (or from the start of each repetition), seconds.
    pub at_s: f64,
    /// Scales every mode's amplitude (1 = as given in the modes). Large
    /// values clip; two strikes close together make a double strike.
    pub strength: f64,
}

/// What the synthetic source plays.
#[derive(Clone, Debug, PartialEq)]
pub struct SyntheticTaps {
    /// Samples per second.
    pub sample_rate_hz: u32,
    /// The modes each strike excites (frequency, Q, amplitude, phase).
    pub modes: Vec<SynthMode>,
    /// The strikes, in any order.
    pub strikes: Vec<SyntheticStrike>,
    /// Play the schedule again every this many seconds (strikes should lie
    /// within the period); None plays it once.
    pub repeat_every_s: Option<f64>,
    /// Total length in seconds; None never ends.
    pub length_s: Option<f64>,
    /// Standard deviation of the background noise, full scale = 1.
    pub noise_rms: f64,
    /// Seed of the noise (the same seed gives the same samples).
    pub seed: u64,
}

impl SyntheticTaps {
    /// Background noise only (no strikes) for `length_s` seconds.
    pub fn quiet(sample_rate_hz: u32, length_s: f64, noise_rms: f64) -> Self {
        Self {
            sample_rate_hz,
            modes: Vec::new(),
            strikes: Vec::new(),
            repeat_every_s: None,
            length_s: Some(length_s),
            noise_rms,
            seed: 0x7A9_0003,
        }
    }
}

/// One mode ringing: a complex phasor rotated and shrunk every sample.
#[derive(Clone, Copy, Debug)]
struct Ringing {
    re: f64,
    im: f64,
    step_re: f64,
    step_im: f64,
}

/// Generates [`SyntheticTaps`] sample by sample.
#[derive(Clone, Debug)]
pub struct SyntheticGenerator {
    taps: SyntheticTaps,
    /// Strike sample positions within one period, sorted.
    schedule: Vec<(u64, f64)>,
    period_samples: Option<u64>,
    next_strike: usize,
    repetition: u64,
    position: u64,
    end: Option<u64>,
    ringing: Vec<Ringing>,
    contact_len: u64,
    contact_start: Option<(u64, f64)>,
    noise: NoiseGenerator,
}

impl SyntheticGenerator {
    /// A generator for `taps`; fails on a rate out of range or a
    /// zero-length source.
    pub fn new(taps: SyntheticTaps) -> Result<Self, AudioError> {
        let rate = f64::from(crate::audio::settings::check_sample_rate(
            taps.sample_rate_hz,
        )?);
        let to_samples = |s: f64| {
            if s.is_finite() && s > 0.0 {
                (s * rate).round() as u64
            } else {
                0
            }
        };
        let end = taps.length_s.map(to_samples);
        if end == Some(0) {
            return Err(AudioError::EmptySource {
                what: "synthetic source".to_owned(),
            });
        }
        let period_samples = taps.repeat_every_s.map(to_samples).filter(|&p| p > 0);
        let mut schedule: Vec<(u64, f64)> = taps
            .strikes
            .iter()
            .filter(|s| s.at_s.is_finite() && s.at_s >= 0.0 && s.strength.is_finite())
            .map(|s| (to_samples(s.at_s), s.strength))
            .filter(|&(at, _)| period_samples.is_none_or(|p| at < p))
            .collect();
        schedule.sort_by_key(|&(at, _)| at);
        Ok(Self {
            noise: NoiseGenerator::new(taps.seed),
            contact_len: ((CONTACT_MS * 1e-3 * rate).round() as u64).max(1),
            ringing: Vec::with_capacity(taps.modes.len() * 4),
            schedule,
            period_samples,
            next_strike: 0,
            repetition: 0,
            position: 0,
            end,
            contact_start: None,
            taps,
        })
    }

    fn next_strike_at(&self) -> Option<(u64, f64)> {
        let &(at, strength) = self.schedule.get(self.next_strike)?;
        let offset = self.period_samples.map_or(0, |p| p * self.repetition);
        Some((at + offset, strength))
    }

    fn advance_schedule(&mut self) {
        self.next_strike += 1;
        if self.next_strike >= self.schedule.len() && self.period_samples.is_some() {
            self.next_strike = 0;
            self.repetition += 1;
        }
    }

    fn strike(&mut self, strength: f64) {
        let rate = f64::from(self.taps.sample_rate_hz);
        let mut loudest: f64 = 0.0;
        for mode in &self.taps.modes {
            let amplitude = mode.amplitude * strength;
            loudest = loudest.max(amplitude.abs());
            let decay = (-mode.decay_per_s() / rate).exp();
            let step = 2.0 * PI * mode.frequency_hz / rate;
            self.ringing.push(Ringing {
                re: amplitude * mode.phase_rad.cos(),
                im: amplitude * mode.phase_rad.sin(),
                step_re: decay * step.cos(),
                step_im: decay * step.sin(),
            });
        }
        self.contact_start = Some((self.position, 0.5 * loudest));
    }

    fn next_sample(&mut self) -> f64 {
        while let Some((at, strength)) = self.next_strike_at() {
            if at > self.position {
                break;
            }
            self.strike(strength);
            self.advance_schedule();
        }
        let mut value = self.taps.noise_rms * self.noise.gaussian();
        for ring in &mut self.ringing {
            value += ring.re;
            let re = ring.re * ring.step_re - ring.im * ring.step_im;
            ring.im = ring.re * ring.step_im + ring.im * ring.step_re;
            ring.re = re;
        }
        if let Some((start, amplitude)) = self.contact_start {
            let i = self.position - start;
            if i < self.contact_len {
                let x = i as f64 / self.contact_len as f64;
                value += amplitude * 0.5 * (1.0 - (2.0 * PI * x).cos());
            } else {
                self.contact_start = None;
            }
        }
        self.position += 1;
        value
    }
}

impl SampleGenerator for SyntheticGenerator {
    fn description(&self) -> String {
        format!("synthetic taps ({} modes)", self.taps.modes.len())
    }

    fn sample_rate_hz(&self) -> u32 {
        self.taps.sample_rate_hz
    }

    fn generate(&mut self, out: &mut [f32]) -> usize {
        let room = match self.end {
            Some(end) => (end.saturating_sub(self.position)).min(out.len() as u64) as usize,
            None => out.len(),
        };
        for slot in &mut out[..room] {
            *slot = self.next_sample().clamp(-1.0, 1.0) as f32;
        }
        self.ringing
            .retain(|r| r.re * r.re + r.im * r.im > SILENT_AMPLITUDE * SILENT_AMPLITUDE);
        room
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::add_modes;

    #[test]
    fn matches_the_batch_synthesiser() {
        let modes = vec![
            SynthMode::new(200.0, 30.0, 0.2),
            SynthMode {
                phase_rad: 1.0,
                ..SynthMode::new(530.0, 50.0, 0.1)
            },
        ];
        let taps = SyntheticTaps {
            sample_rate_hz: 48_000,
            modes: modes.clone(),
            strikes: vec![SyntheticStrike {
                at_s: 0.01,
                strength: 1.0,
            }],
            repeat_every_s: None,
            length_s: Some(0.5),
            noise_rms: 0.0,
            seed: 1,
        };
        let mut generator = SyntheticGenerator::new(taps).expect("ok");
        let mut streamed = vec![0.0f32; 20_000];
        let mut filled = 0;
        while filled < streamed.len() {
            let n = generator.generate(&mut streamed[filled..(filled + 333).min(20_000)]);
            assert!(n > 0);
            filled += n;
        }
        let mut batch = vec![0.0f64; 20_000];
        add_modes(&mut batch, 48_000.0, 480, &modes);
        // Outside the 0.8 ms contact pulse the two must agree.
        for i in (480 + 40)..20_000 {
            assert!(
                (f64::from(streamed[i]) - batch[i]).abs() < 1e-5,
                "sample {i}"
            );
        }
        assert!(streamed[..480].iter().all(|&x| x == 0.0));
        let mut rest = [0.0f32; 10_000];
        assert_eq!(generator.generate(&mut rest), 4_000);
        assert_eq!(generator.generate(&mut rest), 0);
    }
}
