//! The trigger's view of the signal level: the DC blocker in front of
//! everything, the running median that is the noise floor, and where a
//! strike's rise starts out of the noise.

use std::collections::VecDeque;

/// Level histogram resolution for the running median.
const HIST_STEP_DB: f64 = 0.25;
const HIST_MIN_DB: f64 = -160.0;
const HIST_BINS: usize = 680; // -160 .. +10 dB
/// Corner of each of the two DC-blocking high-pass stages, Hz: far below
/// any band a maker measures (a 40 Hz mode loses 0.07 dB), fast enough
/// (time constant 32 ms) to follow an offset that drifts.
const DC_BLOCK_HZ: f64 = 5.0;
/// The change-point search below looks for a rise in power by this factor
/// (6 dB) over the noise: the log-likelihood ratio of each sample then
/// grows with the sound as soon as it stands about 4.5 dB over the noise.
const RISE_POWER_RATIO: f64 = 4.0;

/// Running median of block levels by a histogram of 0.25 dB bins.
#[derive(Clone, Debug)]
pub(super) struct FloorTracker {
    history: VecDeque<u16>,
    counts: Vec<u32>,
    capacity: usize,
}

impl FloorTracker {
    pub(super) fn new(capacity: usize) -> Self {
        Self {
            history: VecDeque::with_capacity(capacity + 1),
            counts: vec![0; HIST_BINS],
            capacity: capacity.max(1),
        }
    }

    fn bin(level_db: f64) -> u16 {
        let index = ((level_db - HIST_MIN_DB) / HIST_STEP_DB).floor();
        index.clamp(0.0, (HIST_BINS - 1) as f64) as u16
    }

    pub(super) fn push(&mut self, level_db: f64) {
        let bin = Self::bin(level_db);
        self.history.push_back(bin);
        self.counts[usize::from(bin)] += 1;
        if self.history.len() > self.capacity {
            if let Some(old) = self.history.pop_front() {
                self.counts[usize::from(old)] -= 1;
            }
        }
    }

    pub(super) fn median_db(&self) -> f64 {
        let half = self.history.len().div_ceil(2) as u32;
        let mut seen = 0;
        for (bin, &count) in self.counts.iter().enumerate() {
            seen += count;
            if seen >= half && count > 0 {
                return HIST_MIN_DB + (bin as f64 + 0.5) * HIST_STEP_DB;
            }
        }
        HIST_MIN_DB
    }
}

/// Two first-order DC blockers in series, y[n] = x[n] − x[n−1] + R·y[n−1],
/// each started as if its input had always been the first sample, so a
/// constant offset gives no start-up transient.
#[derive(Clone, Debug)]
pub(super) struct DcBlocker {
    pole: f64,
    previous_in: [f64; 2],
    previous_out: [f64; 2],
    started: bool,
}

impl DcBlocker {
    pub(super) fn new(sample_rate_hz: f64) -> Self {
        Self {
            pole: (-2.0 * std::f64::consts::PI * DC_BLOCK_HZ / sample_rate_hz).exp(),
            previous_in: [0.0; 2],
            previous_out: [0.0; 2],
            started: false,
        }
    }

    pub(super) fn filter(&mut self, sample: f32) -> f32 {
        let mut x = f64::from(sample);
        if !self.started {
            self.started = true;
            self.previous_in = [x, 0.0];
        }
        for stage in 0..2 {
            let y = x - self.previous_in[stage] + self.pole * self.previous_out[stage];
            self.previous_in[stage] = x;
            self.previous_out[stage] = y;
            x = y;
        }
        x as f32
    }
}

/// Mean square to dB (full scale = 0 dB).
pub(super) fn power_to_db(mean_square: f64) -> f64 {
    10.0 * (mean_square + 1e-20).log10()
}

/// Where a strike's rise starts in `samples` (which end in the sound), for
/// room noise of power `noise_power` per sample: the maximum-likelihood
/// change point of a change in variance from the known noise power to
/// [`RISE_POWER_RATIO`] times it, found by the cumulative sum of the
/// samples' log-likelihood ratios taken backwards from the end (Page's
/// CUSUM; M. Basseville and I. Nikiforov, "Detection of abrupt changes",
/// Prentice Hall 1993, section 2.2.3). Unlike a level threshold on an
/// envelope, the sum runs through the zero crossings of a low mode, and it
/// finds the start of a slow rise where the sound first stands out of the
/// noise, not where it clears the trigger margin milliseconds later.
/// Returns an index into `samples`; None without noise or samples.
pub(super) fn strike_start(samples: &[f32], noise_power: f64) -> Option<usize> {
    if samples.is_empty() || !noise_power.is_finite() || noise_power <= 0.0 {
        return None;
    }
    let ratio = RISE_POWER_RATIO;
    let constant = -0.5 * ratio.ln();
    let weight = 0.5 * (1.0 - 1.0 / ratio) / noise_power;
    let mut sum = 0.0;
    let mut best = (f64::NEG_INFINITY, samples.len());
    for (index, &x) in samples.iter().enumerate().rev() {
        let x = f64::from(x);
        sum += constant + weight * x * x;
        if sum > best.0 {
            best = (sum, index);
        }
    }
    Some(best.1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::NoiseGenerator;

    #[test]
    fn floor_tracker_median() {
        let mut floor = FloorTracker::new(5);
        for level in [-60.0, -50.0, -70.0, -55.0, -65.0, -10.0] {
            floor.push(level);
        }
        // Window holds -50, -70, -55, -65, -10: median -55.
        assert!((floor.median_db() - -55.0).abs() <= HIST_STEP_DB);
    }

    /// A 100 Hz tone switched on at a known sample, in noise 40 dB under
    /// it: found within a few samples, though it starts at a zero crossing
    /// and crosses zero again every 5 ms.
    #[test]
    fn strike_start_finds_a_tone_switched_on() {
        let fs = 48_000.0;
        let sigma = 1e-3;
        let start = 2_000;
        let mut noise = NoiseGenerator::new(11);
        let samples: Vec<f32> = (0..2_960)
            .map(|n| {
                let tone = if n >= start {
                    0.1 * (2.0 * std::f64::consts::PI * 100.0 * (n - start) as f64 / fs).sin()
                } else {
                    0.0
                };
                (tone + sigma * noise.gaussian()) as f32
            })
            .collect();
        let found = strike_start(&samples, sigma * sigma).unwrap();
        assert!(found.abs_diff(start) <= 24, "{found} vs {start}");
    }
}
