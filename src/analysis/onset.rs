//! Telling a second strike from beating, while a tap is being recorded.
//!
//! A free decay is a sum of exponentially decaying sinusoids, and so is a
//! decay whose envelope beats (two modes a few hertz apart, rising 6 dB or
//! more out of each beat null): both obey a linear recurrence,
//! x[n] = −Σ aₖ·x[n−k], with two coefficients per mode. A linear predictor
//! fitted to the last few milliseconds of the decay therefore foretells the
//! next sample to within the room noise, however the envelope moves. A
//! second strike is new input to the plate: for the first samples after it
//! nothing before it foretells what comes, and the prediction error jumps
//! far above its level of a moment before.
//!
//! The predictor is fitted by the autocorrelation method with the
//! Levinson–Durbin recursion (J. Makhoul, "Linear prediction: a tutorial
//! review", Proc. IEEE 63(4), 1975) on a Hann-windowed stretch of
//! [`FIT_MS`], refitted every [`REFIT_MS`], and its error is measured in
//! blocks of [`BLOCK_MS`]. Onsets as bursts of prediction error: Bello et
//! al., "A tutorial on onset detection in music signals", IEEE Trans.
//! Speech and Audio Processing 13(5), 2005, section III-B.
//!
//! The room noise passes through the predictor too: white noise of power
//! σ² leaves an error of σ²·(1 + Σ aₖ²) (the predictor is an FIR filter
//! with taps 1, a₁ … a_p). A predictor fitted where the decay is weak, or
//! dominated by low modes that a few milliseconds barely resolve, has large
//! coefficients, and its error on the noise alone can stand 10 dB above
//! the error of the predictor before it. That is no new sound: the level
//! the error is judged against is never below what the noise alone gives
//! through the current predictor ([`NoveltyDetector::set_noise_power`]).

use super::spectrum::hann_weight;

/// Prediction order: room for twelve modes.
const ORDER: usize = 24;
/// Length of the stretch each predictor is fitted to.
const FIT_MS: f64 = 8.0;
/// A new predictor is fitted this often.
const REFIT_MS: f64 = 4.0;
/// The prediction error is measured over blocks this long.
const BLOCK_MS: f64 = 1.0;
/// The error level is the median over this many blocks before.
const REFERENCE_BLOCKS: usize = 16;
/// A block of prediction error this many times (10 dB) its level of a
/// moment before is new sound. The error of a decay, beating or not, stays
/// at the room noise and wanders by a dB or two; a second strike, even at a
/// third of the first's strength, lifts it by 20 dB or more.
const NEW_SOUND_RATIO: f64 = 10.0;
/// New sound is a second strike when it carries at least this fraction
/// (−10 dB) of the energy that set the decay ringing, as the same
/// predictor measures both. An early reflection of the strike from a bench
/// or a wall (a fifth of its pressure or less at a few milliseconds, from
/// memory) stays below; a mallet that bounces back at a third of its first
/// strength is above.
const SECOND_STRIKE_ENERGY_RATIO: f64 = 0.1;
/// New sound is a second strike only if the record still sounds
/// [`RINGING_FROM_BLOCKS`] to [`RINGING_UNTIL_BLOCKS`] blocks (5–10 ms)
/// after it: a strike sets the object ringing again, for tens of
/// milliseconds even in a wood block (τ 5–10 ms), while a sound stopped
/// short (a hand laid on the plate, a recording cut at a loud point, a
/// sampled instrument whose data end) leaves the room noise (common
/// practice, no source).
const RINGING_FROM_BLOCKS: usize = 5;
/// See [`RINGING_FROM_BLOCKS`].
const RINGING_UNTIL_BLOCKS: usize = 10;
/// What "still sounds" means: above what the margin asks over the room
/// noise, and above this share (−20 dB) of the record's power in the
/// block before the new sound. After a second strike the record keeps at
/// least about half its power there (the weakest of the synthetic second
/// strikes, one in anti-phase with the decay, kept 0.56 of it); after a
/// sound stopped short, under a thousandth is left (the high-pass of the
/// input's DC blocker still settling), so the share sits between
/// (tapwright's choice, measured in `tests/tap_finding.rs`).
const RINGING_SHARE: f64 = 0.01;

/// What one block tells.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BlockNovelty {
    /// Mean-square prediction error over the block (full scale = 1).
    pub unforetold_power: f64,
    /// What the prediction error was a moment before: the largest of the
    /// fitted predictor's own error, the median of the blocks before, and
    /// the error the room noise alone gives through the predictor.
    pub reference_power: f64,
}

impl BlockNovelty {
    /// Unforetold power over the reference power.
    pub fn ratio(&self) -> f64 {
        self.unforetold_power / self.reference_power.max(1e-30)
    }
}

/// Streaming detector of unforetold sound. Buffers are allocated once, in
/// [`NoveltyDetector::new`]; [`NoveltyDetector::reset`] and
/// [`NoveltyDetector::push`] allocate nothing.
#[derive(Clone, Debug)]
pub struct NoveltyDetector {
    /// The last `fit_len` samples, a ring written at `write`.
    ring: Vec<f64>,
    write: usize,
    seen: usize,
    fit_len: usize,
    refit_len: usize,
    block_len: usize,
    window: Vec<f64>,
    fit_buffer: Vec<f64>,
    /// Predictor coefficients a₁..a_p (a₀ = 1) and its fitted error power.
    coefficients: [f64; ORDER],
    fitted_error: Option<f64>,
    since_refit: usize,
    block_sum: f64,
    block_fill: usize,
    recent: [f64; REFERENCE_BLOCKS],
    recent_count: usize,
    /// Room noise power per sample (full scale = 1), if known.
    noise_power: f64,
    /// The current predictor's noise gain, 1 + Σ aₖ².
    noise_gain: f64,
}

impl NoveltyDetector {
    pub fn new(sample_rate_hz: f64) -> Self {
        let samples = |ms: f64| ((ms * 1e-3 * sample_rate_hz).round() as usize).max(1);
        let fit_len = samples(FIT_MS).max(4 * ORDER);
        let window = (0..fit_len).map(|i| hann_weight(i, fit_len)).collect();
        Self {
            ring: vec![0.0; fit_len],
            write: 0,
            seen: 0,
            fit_len,
            refit_len: samples(REFIT_MS),
            block_len: samples(BLOCK_MS),
            window,
            fit_buffer: vec![0.0; fit_len],
            coefficients: [0.0; ORDER],
            fitted_error: None,
            since_refit: 0,
            block_sum: 0.0,
            block_fill: 0,
            recent: [0.0; REFERENCE_BLOCKS],
            recent_count: 0,
            noise_power: 0.0,
            noise_gain: 1.0,
        }
    }

    /// Tells the room noise's power per sample (full scale = 1): the error
    /// the noise alone leaves through a predictor is never taken for new
    /// sound.
    pub fn set_noise_power(&mut self, noise_power: f64) {
        self.noise_power = if noise_power.is_finite() {
            noise_power.max(0.0)
        } else {
            0.0
        };
    }

    /// The error power that the room noise alone leaves through the current
    /// predictor: noise power × (1 + Σ aₖ²).
    pub fn noise_error_power(&self) -> f64 {
        self.noise_power * self.noise_gain
    }

    /// The room noise's power per sample, as told.
    pub fn noise_power(&self) -> f64 {
        self.noise_power
    }

    /// True once a predictor has been fitted to the decay.
    pub fn has_predictor(&self) -> bool {
        self.fitted_error.is_some()
    }

    /// Sum of squared prediction errors of the current predictor over
    /// `samples` (from the `ORDER`-th on, which have a full past): applied
    /// to the strike itself, the energy of what set the decay ringing.
    pub fn unforetold_energy(&self, samples: &[f32]) -> f64 {
        if self.fitted_error.is_none() || samples.len() <= ORDER {
            return 0.0;
        }
        (ORDER..samples.len())
            .map(|n| {
                let error = f64::from(samples[n])
                    + (0..ORDER)
                        .map(|k| self.coefficients[k] * f64::from(samples[n - 1 - k]))
                        .sum::<f64>();
                error * error
            })
            .sum()
    }

    /// Samples per block.
    pub fn block_len(&self) -> usize {
        self.block_len
    }

    /// Forgets everything seen: the next samples start a new decay.
    pub fn reset(&mut self) {
        self.write = 0;
        self.seen = 0;
        self.fitted_error = None;
        self.since_refit = 0;
        self.block_sum = 0.0;
        self.block_fill = 0;
        self.recent_count = 0;
        self.noise_gain = 1.0;
    }

    /// Feeds one sample; at the end of each block, once a predictor has
    /// been fitted, returns how much of the block it failed to foretell.
    pub fn push(&mut self, sample: f32) -> Option<BlockNovelty> {
        let x = f64::from(sample);
        let novelty = match self.fitted_error {
            Some(fitted_error) => self.measure(x, fitted_error),
            None => None,
        };
        self.remember(x);
        novelty
    }

    fn remember(&mut self, x: f64) {
        self.ring[self.write] = x;
        self.write = (self.write + 1) % self.fit_len;
        self.seen += 1;
        self.since_refit += 1;
        if self.seen >= self.fit_len && self.since_refit >= self.refit_len {
            self.since_refit = 0;
            self.refit();
        }
    }

    /// The sample `back` steps before the newest one remembered (1 = newest).
    fn past(&self, back: usize) -> f64 {
        self.ring[(self.write + self.fit_len - back) % self.fit_len]
    }

    fn measure(&mut self, x: f64, fitted_error: f64) -> Option<BlockNovelty> {
        let foretold: f64 = -(0..ORDER)
            .map(|k| self.coefficients[k] * self.past(k + 1))
            .sum::<f64>();
        let error = x - foretold;
        self.block_sum += error * error;
        self.block_fill += 1;
        if self.block_fill < self.block_len {
            return None;
        }
        let unforetold_power = self.block_sum / self.block_len as f64;
        self.block_sum = 0.0;
        self.block_fill = 0;
        let novelty = BlockNovelty {
            unforetold_power,
            reference_power: fitted_error
                .max(self.median_recent())
                .max(self.noise_error_power()),
        };
        self.recent[self.recent_count % REFERENCE_BLOCKS] = unforetold_power;
        self.recent_count += 1;
        Some(novelty)
    }

    fn median_recent(&self) -> f64 {
        let count = self.recent_count.min(REFERENCE_BLOCKS);
        if count == 0 {
            return 0.0;
        }
        let mut sorted = self.recent;
        let values = &mut sorted[..count];
        values.sort_by(f64::total_cmp);
        values[count / 2]
    }

    /// Fits a new predictor to the last `fit_len` samples.
    fn refit(&mut self) {
        for i in 0..self.fit_len {
            self.fit_buffer[i] = self.past(self.fit_len - i) * self.window[i];
        }
        let window_power: f64 = self.window.iter().map(|w| w * w).sum();
        let mut autocorrelation = [0.0f64; ORDER + 1];
        for (lag, slot) in autocorrelation.iter_mut().enumerate() {
            *slot = self.fit_buffer[lag..]
                .iter()
                .zip(&self.fit_buffer)
                .map(|(a, b)| a * b)
                .sum::<f64>()
                / window_power;
        }
        // A whisper of white noise keeps the recursion stable on a pure
        // synthetic decay.
        autocorrelation[0] *= 1.0 + 1e-9;
        self.fitted_error = levinson_durbin(&autocorrelation, &mut self.coefficients);
        self.noise_gain = 1.0 + self.coefficients.iter().map(|a| a * a).sum::<f64>();
    }
}

/// Levinson–Durbin recursion: from r[0..=p] to the predictor a₁..a_p of
/// x[n] + Σ aₖ x[n−k] = e[n]; returns the error power, or None for silence.
fn levinson_durbin(r: &[f64; ORDER + 1], a: &mut [f64; ORDER]) -> Option<f64> {
    if r[0] <= 1e-30 {
        return None;
    }
    let mut error = r[0];
    let mut previous = [0.0f64; ORDER];
    a.fill(0.0);
    for i in 0..ORDER {
        let mut acc = r[i + 1];
        for j in 0..i {
            acc += a[j] * r[i - j];
        }
        let reflection = -acc / error;
        previous[..i].copy_from_slice(&a[..i]);
        for j in 0..i {
            a[j] = previous[j] + reflection * previous[i - 1 - j];
        }
        a[i] = reflection;
        error *= 1.0 - reflection * reflection;
        if error <= 0.0 {
            return Some(r[0] * 1e-12);
        }
    }
    Some(error)
}

/// The search for a second strike during one record, fed sample by sample
/// once the strike's contact is over.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SecondStrikeWatch {
    /// What set the decay ringing, as the first predictor of the decay
    /// measures it (None until that predictor is fitted).
    strike_energy: Option<f64>,
    /// Unforetold energy of the previous block (a strike may straddle two).
    previous_block_energy: f64,
    /// New sound heard, waiting to see whether the record still sounds
    /// after it.
    pending: Option<PendingStrike>,
    found: bool,
}

impl SecondStrikeWatch {
    /// True once a second strike was heard (new sound the record ended
    /// too soon after to tell whether it rings counts as one).
    pub fn found_second_strike(&self) -> bool {
        self.found || self.pending.is_some()
    }

    /// Feeds the newest sample of `record` (whose strike is at
    /// `onset_index`) to the search: once the decay's first predictor is
    /// fitted it measures the strike with it (over `guard` samples either
    /// side of the onset), and from then on a block that brings new sound,
    /// `audible_ratio` times above what the room noise alone leaves through
    /// the predictor, with a good part of the strike's energy, is a second
    /// strike if the record still sounds 5–10 ms after it ([`PendingStrike`]).
    ///
    /// While the sound is `still_rising` (its envelope made a new maximum
    /// a moment ago), the strike's own excitation is going on: a soft
    /// mallet on a bar, or a bar whose resonator takes up the sound, keeps
    /// feeding in energy for tens of milliseconds, and no predictor fitted
    /// to the first milliseconds foretells it. What arrives then is counted
    /// into the strike's energy, not against it; a second strike comes once
    /// the sound has begun to fall. (A second strike lifts the 10 ms
    /// envelope by a tenth of its own power in its first block, which does
    /// not make a new maximum over a decay that fell for a few ms: it is
    /// judged, and found.)
    pub fn push(
        &mut self,
        novelty: &mut NoveltyDetector,
        (record, onset_index): (&[f32], usize),
        guard: usize,
        audible_ratio: f64,
        still_rising: bool,
    ) {
        let Some(&sample) = record.last() else {
            return;
        };
        let block = novelty.push(sample);
        if self.strike_energy.is_none() && novelty.has_predictor() {
            let from = onset_index.saturating_sub(guard).min(record.len());
            let to = (onset_index + guard).min(record.len());
            self.strike_energy = Some(novelty.unforetold_energy(&record[from..to]));
        }
        let (Some(block), Some(strike_energy)) = (block, self.strike_energy) else {
            return;
        };
        let energy = block.unforetold_power * novelty.block_len() as f64;
        if let Some(pending) = &mut self.pending {
            let block_power = power_of_block(record, novelty.block_len(), 0);
            let audible_power = audible_ratio * novelty.noise_power();
            if let Some(rings) = pending.add_block(block_power, audible_power) {
                self.found |= rings;
                self.pending = None;
            }
            return;
        }
        if still_rising {
            self.strike_energy = Some(strike_energy + energy);
            self.previous_block_energy = 0.0;
            return;
        }
        let burst = energy + self.previous_block_energy;
        self.previous_block_energy = energy;
        let audible = block.unforetold_power > audible_ratio * novelty.noise_error_power();
        let strong = burst > SECOND_STRIKE_ENERGY_RATIO * strike_energy;
        if !self.found && audible && strong && block.ratio() > NEW_SOUND_RATIO {
            self.pending = Some(PendingStrike {
                power_before: power_of_block(record, novelty.block_len(), 1),
                ..PendingStrike::default()
            });
        }
    }
}

/// New sound heard during a record, not yet judged: a second strike only
/// if the record still sounds [`RINGING_FROM_BLOCKS`] to
/// [`RINGING_UNTIL_BLOCKS`] blocks after it.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct PendingStrike {
    /// Blocks since the new sound.
    blocks: usize,
    /// The record's power summed over the blocks that count.
    ringing_power_sum: f64,
    /// The record's power in the block before the new sound.
    power_before: f64,
}

impl PendingStrike {
    /// Takes the newest block's power; once the blocks that count are in,
    /// tells whether the record still sounded: above `audible_power` and
    /// above [`RINGING_SHARE`] of the power before the new sound.
    fn add_block(&mut self, block_power: f64, audible_power: f64) -> Option<bool> {
        self.blocks += 1;
        if self.blocks > RINGING_FROM_BLOCKS {
            self.ringing_power_sum += block_power;
        }
        if self.blocks < RINGING_UNTIL_BLOCKS {
            return None;
        }
        let mean = self.ringing_power_sum / (RINGING_UNTIL_BLOCKS - RINGING_FROM_BLOCKS) as f64;
        Some(mean > audible_power && mean > RINGING_SHARE * self.power_before)
    }
}

/// Mean-square of the block of `block_len` samples that ends `back`
/// blocks before the end of `record` (0: the newest block); 0 if the
/// record is not that long.
fn power_of_block(record: &[f32], block_len: usize, back: usize) -> f64 {
    let end = record.len().saturating_sub(back * block_len);
    let start = end.saturating_sub(block_len);
    if end == start {
        return 0.0;
    }
    record[start..end]
        .iter()
        .map(|&x| f64::from(x) * f64::from(x))
        .sum::<f64>()
        / (end - start) as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::synth::{add_modes, NoiseGenerator, SynthMode};

    const FS: f64 = 48_000.0;

    fn largest_ratio(samples: &[f64]) -> f64 {
        let mut detector = NoveltyDetector::new(FS);
        samples
            .iter()
            .filter_map(|&x| detector.push(x as f32))
            .map(|n| n.ratio())
            .fold(0.0, f64::max)
    }

    fn noisy(mut x: Vec<f64>, seed: u64) -> Vec<f64> {
        let mut noise = NoiseGenerator::new(seed);
        x.iter_mut().for_each(|v| *v += 1e-4 * noise.gaussian());
        x
    }

    #[test]
    fn levinson_recovers_a_known_recurrence() {
        // A damped resonator x[n] = 2r cos ω x[n−1] − r² x[n−2] driven by
        // white noise has a₁ = −2r cos ω, a₂ = r² (Makhoul 1975).
        let (radius, omega) = (0.95f64, 0.3f64);
        let mut noise = NoiseGenerator::new(3);
        let (mut x1, mut x2) = (0.0, 0.0);
        let signal: Vec<f64> = (0..200_000)
            .map(|_| {
                let x = 2.0 * radius * omega.cos() * x1 - radius * radius * x2 + noise.gaussian();
                x2 = x1;
                x1 = x;
                x
            })
            .collect();
        let mut r = [0.0; ORDER + 1];
        for (lag, slot) in r.iter_mut().enumerate() {
            *slot = signal[lag..]
                .iter()
                .zip(&signal)
                .map(|(a, b)| a * b)
                .sum::<f64>()
                / signal.len() as f64;
        }
        let mut a = [0.0; ORDER];
        levinson_durbin(&r, &mut a).expect("fit");
        assert!((a[0] + 2.0 * radius * omega.cos()).abs() < 0.02, "{a:?}");
        assert!((a[1] - radius * radius).abs() < 0.02, "{a:?}");
        assert!(a[2..].iter().all(|c| c.abs() < 0.02), "{a:?}");
    }

    #[test]
    fn a_decay_and_a_beating_pair_are_foretold() {
        let mut decay = vec![0.0; 24_000];
        add_modes(&mut decay, FS, 0, &[SynthMode::new(345.0, 60.0, 0.3)]);
        let worst = largest_ratio(&noisy(decay, 1));
        assert!(worst < 3.0, "{worst}");
        let mut pair = vec![0.0; 48_000];
        let modes = [
            SynthMode::new(452.0, 120.0, 0.3),
            SynthMode {
                phase_rad: 2.0,
                ..SynthMode::new(456.0, 120.0, 0.3)
            },
        ];
        add_modes(&mut pair, FS, 0, &modes);
        let worst = largest_ratio(&noisy(pair, 2));
        assert!(worst < 3.0, "{worst}");
    }

    #[test]
    fn a_second_strike_is_not_foretold() {
        let modes = [
            SynthMode::new(170.0, 40.0, 0.2),
            SynthMode::new(345.0, 60.0, 0.3),
        ];
        let mut twice = vec![0.0; 24_000];
        add_modes(&mut twice, FS, 0, &modes);
        add_modes(&mut twice, FS, 4_800, &modes);
        let worst = largest_ratio(&noisy(twice, 3));
        assert!(worst > 30.0, "{worst}");
    }
}
