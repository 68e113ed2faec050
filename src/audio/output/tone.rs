//! The drive tone for Chladni patterns: a sine at a plate's mode, pure and
//! deterministic (no device here; `stream` plays it).
//!
//! - The phase is an f64 count of cycles kept in [0, 1), advanced by
//!   `f / fs` each sample, so the frequency is exact to about 1e-16 of
//!   itself and never drifts.
//! - The centre frequency, the sweep width and the level glide to new
//!   values (one-pole, [`GLIDE_S`]) instead of jumping; the phase is never
//!   reset, so a change of frequency cannot click.
//! - Every start fades in and every stop fades out along a raised cosine
//!   of [`FADE_S`]; a stop during the fade-in fades out from where it was.
//! - The slow sweep moves the frequency sinusoidally ± `sweep_hz` around
//!   the centre over `sweep_period_s`, to find the exact resonance of a
//!   mode whose pattern is forming.
//! - The level is a peak level in dBFS (a full-scale sine is 0 dBFS) and
//!   is never above the level cap, whatever is asked: the cap is applied
//!   to the gain of every sample.
//!
//! The window and the command line reach a playing generator only through
//! [`ToneControls`] (atomics); [`ToneRenderer`] is what the audio callback
//! runs: read the atomics, render, report back, no allocation or lock.

use std::f64::consts::{PI, TAU};
use std::sync::atomic::{AtomicU64, AtomicU8, Ordering};

use thiserror::Error;

/// The level cap unless the maker sets another, dBFS.
pub const DEFAULT_LEVEL_CAP_DB: f64 = -12.0;
/// The highest the cap itself can be set, dBFS (headroom against the
/// clipping of a converter or amplifier that adds gain).
pub const HIGHEST_LEVEL_CAP_DB: f64 = -3.0;
/// The lowest level (and cap) that can be asked for, dBFS.
pub const LOWEST_LEVEL_DB: f64 = -80.0;
/// The level a new drive starts at, dBFS: low, as the caution asks.
pub const DEFAULT_LEVEL_DB: f64 = -30.0;
/// Length of the raised-cosine fade in and out, seconds.
pub const FADE_S: f64 = 0.25;
/// Time constant of the frequency, sweep and level glides, seconds.
pub const GLIDE_S: f64 = 0.05;
/// Drive frequencies offered, Hz.
pub const LOWEST_HZ: f64 = 20.0;
/// Drive frequencies offered, Hz (and never above 45 % of the sample rate).
pub const HIGHEST_HZ: f64 = 20_000.0;
/// The widest sweep, ± Hz.
pub const WIDEST_SWEEP_HZ: f64 = 50.0;
/// Sweep periods offered, seconds.
pub const SWEEP_PERIOD_RANGE_S: (f64, f64) = (2.0, 600.0);
/// The largest fine-tune offset, ± Hz.
pub const WIDEST_FINE_TUNE_HZ: f64 = 50.0;

/// What the tone should be.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ToneSettings {
    /// The centre frequency (a mode's, or typed), Hz.
    pub frequency_hz: f64,
    /// Added to the centre, Hz (may be negative).
    pub fine_tune_hz: f64,
    /// Half-width of the slow sweep, Hz (0: a steady tone).
    pub sweep_hz: f64,
    /// Time for one sweep down and up, seconds.
    pub sweep_period_s: f64,
    /// Peak level, dBFS.
    pub level_db: f64,
    /// The level is never above this, dBFS.
    pub level_cap_db: f64,
}

impl Default for ToneSettings {
    fn default() -> Self {
        Self {
            frequency_hz: 200.0,
            fine_tune_hz: 0.0,
            sweep_hz: 0.0,
            sweep_period_s: 20.0,
            level_db: DEFAULT_LEVEL_DB,
            level_cap_db: DEFAULT_LEVEL_CAP_DB,
        }
    }
}

/// A setting the drive refuses. Each message is one sentence.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum ToneError {
    /// The frequency is not a number or outside what is offered.
    #[error("a drive frequency of {frequency_hz} Hz is outside {LOWEST_HZ} to {highest_hz} Hz")]
    Frequency { frequency_hz: f64, highest_hz: f64 },
    /// The fine-tune offset is too wide.
    #[error("a fine tune of {fine_tune_hz} Hz is outside ±{WIDEST_FINE_TUNE_HZ} Hz")]
    FineTune { fine_tune_hz: f64 },
    /// The sweep is too wide or its period out of range.
    #[error("a sweep of ±{sweep_hz} Hz over {sweep_period_s} s is outside 0 to ±{WIDEST_SWEEP_HZ} Hz over {} to {} s", SWEEP_PERIOD_RANGE_S.0, SWEEP_PERIOD_RANGE_S.1)]
    Sweep { sweep_hz: f64, sweep_period_s: f64 },
    /// The cap is outside what may be set.
    #[error(
        "a level cap of {cap_db} dBFS is outside {LOWEST_LEVEL_DB} to {HIGHEST_LEVEL_CAP_DB} dBFS"
    )]
    Cap { cap_db: f64 },
    /// The level is above the cap (or not a number, or too low).
    #[error("a level of {level_db} dBFS is above the level cap of {cap_db} dBFS; ask for {cap_db} dBFS or less")]
    AboveCap { level_db: f64, cap_db: f64 },
    /// The level is too low to be meant.
    #[error("a level of {level_db} dBFS is below the lowest level of {LOWEST_LEVEL_DB} dBFS")]
    BelowLowest { level_db: f64 },
    /// A timed tone too short for its fades.
    #[error("a tone of {seconds} s is outside {} to 86400 s (it needs room to fade in and out)", 2.0 * FADE_S)]
    Duration { seconds: f64 },
}

impl ToneSettings {
    /// Checks every setting; `sample_rate_hz`, when known, also limits the
    /// frequency to 45 % of it. The generator clamps anyway; this is what
    /// refuses a bad value with a sentence.
    pub fn check(&self, sample_rate_hz: Option<u32>) -> Result<(), ToneError> {
        let highest_hz = highest_hz(sample_rate_hz.map(f64::from));
        let drive_hz = self.frequency_hz + self.fine_tune_hz;
        let frequency_ok = |f: f64| f.is_finite() && (LOWEST_HZ..=highest_hz).contains(&f);
        if !frequency_ok(self.frequency_hz) || !frequency_ok(drive_hz) {
            return Err(ToneError::Frequency {
                frequency_hz: if frequency_ok(self.frequency_hz) {
                    drive_hz
                } else {
                    self.frequency_hz
                },
                highest_hz,
            });
        }
        if !self.fine_tune_hz.is_finite() || self.fine_tune_hz.abs() > WIDEST_FINE_TUNE_HZ {
            return Err(ToneError::FineTune {
                fine_tune_hz: self.fine_tune_hz,
            });
        }
        let (shortest, longest) = SWEEP_PERIOD_RANGE_S;
        let sweep_ok = self.sweep_hz.is_finite()
            && (0.0..=WIDEST_SWEEP_HZ).contains(&self.sweep_hz)
            && self.sweep_period_s.is_finite()
            && (shortest..=longest).contains(&self.sweep_period_s);
        if !sweep_ok {
            return Err(ToneError::Sweep {
                sweep_hz: self.sweep_hz,
                sweep_period_s: self.sweep_period_s,
            });
        }
        if !self.level_cap_db.is_finite()
            || !(LOWEST_LEVEL_DB..=HIGHEST_LEVEL_CAP_DB).contains(&self.level_cap_db)
        {
            return Err(ToneError::Cap {
                cap_db: self.level_cap_db,
            });
        }
        if !self.level_db.is_finite() || self.level_db > self.level_cap_db {
            return Err(ToneError::AboveCap {
                level_db: self.level_db,
                cap_db: self.level_cap_db,
            });
        }
        if self.level_db < LOWEST_LEVEL_DB {
            return Err(ToneError::BelowLowest {
                level_db: self.level_db,
            });
        }
        Ok(())
    }

    /// The peak amplitude asked for, after the cap (full scale is 1).
    pub fn capped_gain(&self) -> f64 {
        let cap_db = clean(self.level_cap_db, DEFAULT_LEVEL_CAP_DB)
            .clamp(LOWEST_LEVEL_DB, HIGHEST_LEVEL_CAP_DB);
        let level_db = clean(self.level_db, LOWEST_LEVEL_DB).clamp(LOWEST_LEVEL_DB, cap_db);
        db_to_gain(level_db)
    }
}

/// Checks the length of a timed tone.
pub fn check_duration(seconds: f64) -> Result<(), ToneError> {
    if seconds.is_finite() && (2.0 * FADE_S..=86_400.0).contains(&seconds) {
        Ok(())
    } else {
        Err(ToneError::Duration { seconds })
    }
}

/// The highest frequency offered at a sample rate (unknown: [`HIGHEST_HZ`]).
pub fn highest_hz(sample_rate_hz: Option<f64>) -> f64 {
    match sample_rate_hz {
        Some(fs) => HIGHEST_HZ.min(0.45 * fs),
        None => HIGHEST_HZ,
    }
}

/// Peak amplitude (full scale 1) of a level in dBFS.
pub fn db_to_gain(level_db: f64) -> f64 {
    10f64.powf(level_db / 20.0)
}

fn clean(value: f64, fallback: f64) -> f64 {
    if value.is_finite() {
        value
    } else {
        fallback
    }
}

/// What the generator is doing.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ToneState {
    /// No sound.
    Silent,
    /// Rising to the level.
    FadingIn,
    /// At the level.
    Steady,
    /// Falling to silence.
    FadingOut,
}

impl ToneState {
    fn code(self) -> u8 {
        match self {
            ToneState::Silent => 0,
            ToneState::FadingIn => 1,
            ToneState::Steady => 2,
            ToneState::FadingOut => 3,
        }
    }

    fn from_code(code: u8) -> Self {
        match code {
            1 => ToneState::FadingIn,
            2 => ToneState::Steady,
            3 => ToneState::FadingOut,
            _ => ToneState::Silent,
        }
    }
}

/// A value that follows its target with a one-pole glide.
#[derive(Clone, Copy, Debug)]
struct Glide {
    value: f64,
    target: f64,
}

impl Glide {
    fn at(value: f64) -> Self {
        Self {
            value,
            target: value,
        }
    }

    fn step(&mut self, coefficient: f64) -> f64 {
        let gap = self.target - self.value;
        if gap.abs() <= 1e-12 * self.target.abs().max(1e-9) {
            self.value = self.target;
        } else {
            self.value += coefficient * gap;
        }
        self.value
    }
}

/// The tone itself: call [`ToneGenerator::next_sample`] once per frame.
#[derive(Clone, Debug)]
pub struct ToneGenerator {
    sample_rate_hz: f64,
    highest_hz: f64,
    phase_cycles: f64,
    sweep_phase_cycles: f64,
    sweep_period_s: f64,
    centre_hz: Glide,
    sweep_hz: Glide,
    gain: Glide,
    glide_coefficient: f64,
    /// 0 (silent) to 1 (full); the envelope is a raised cosine of it.
    fade_position: f64,
    fade_step: f64,
    wants_sound: bool,
    /// Frames until a timed tone starts its fade-out.
    frames_until_fade_out: Option<u64>,
    frames_rendered: u64,
}

impl ToneGenerator {
    /// A silent generator at `sample_rate_hz` with these settings.
    pub fn new(sample_rate_hz: u32, settings: &ToneSettings) -> Self {
        let fs = f64::from(sample_rate_hz.max(1));
        let mut generator = Self {
            sample_rate_hz: fs,
            highest_hz: highest_hz(Some(fs)),
            phase_cycles: 0.0,
            sweep_phase_cycles: 0.0,
            sweep_period_s: SWEEP_PERIOD_RANGE_S.0,
            centre_hz: Glide::at(LOWEST_HZ),
            sweep_hz: Glide::at(0.0),
            gain: Glide::at(0.0),
            glide_coefficient: 1.0 - (-1.0 / (GLIDE_S * fs)).exp(),
            fade_position: 0.0,
            fade_step: 1.0 / (FADE_S * fs),
            wants_sound: false,
            frames_until_fade_out: None,
            frames_rendered: 0,
        };
        generator.set_settings(settings);
        generator
    }

    /// New targets. While silent they apply at once; while sounding the
    /// frequency, sweep and level glide to them. Values out of range are
    /// clamped (the level to the cap).
    pub fn set_settings(&mut self, settings: &ToneSettings) {
        let centre_hz = clean(settings.frequency_hz, LOWEST_HZ)
            + clean(settings.fine_tune_hz, 0.0).clamp(-WIDEST_FINE_TUNE_HZ, WIDEST_FINE_TUNE_HZ);
        self.centre_hz.target = centre_hz.clamp(LOWEST_HZ, self.highest_hz);
        self.sweep_hz.target = clean(settings.sweep_hz, 0.0).clamp(0.0, WIDEST_SWEEP_HZ);
        self.sweep_period_s = clean(settings.sweep_period_s, SWEEP_PERIOD_RANGE_S.0)
            .clamp(SWEEP_PERIOD_RANGE_S.0, SWEEP_PERIOD_RANGE_S.1);
        self.gain.target = settings.capped_gain();
        if self.state() == ToneState::Silent {
            self.centre_hz.value = self.centre_hz.target;
            self.sweep_hz.value = self.sweep_hz.target;
            self.gain.value = self.gain.target;
        }
    }

    /// Fades in and plays until [`ToneGenerator::stop`].
    pub fn start(&mut self) {
        if self.state() == ToneState::Silent {
            self.sweep_phase_cycles = 0.0;
        }
        self.wants_sound = true;
        self.frames_until_fade_out = None;
    }

    /// Fades in and plays for `seconds` in all (fade-in, steady, fade-out),
    /// at least the two fades.
    pub fn start_for(&mut self, seconds: f64) {
        self.start();
        let total = (clean(seconds, 0.0) * self.sample_rate_hz).round().max(0.0);
        let fade = (FADE_S * self.sample_rate_hz).round();
        self.frames_until_fade_out = Some((total - fade).max(fade) as u64);
    }

    /// Fades out (from wherever the fade-in has got to).
    pub fn stop(&mut self) {
        self.wants_sound = false;
        self.frames_until_fade_out = None;
    }

    /// What it is doing now.
    pub fn state(&self) -> ToneState {
        match (self.wants_sound, self.fade_position) {
            (true, p) if p >= 1.0 => ToneState::Steady,
            (true, _) => ToneState::FadingIn,
            (false, p) if p <= 0.0 => ToneState::Silent,
            (false, _) => ToneState::FadingOut,
        }
    }

    /// The frequency of the next sample, Hz (centre, fine tune and sweep).
    pub fn current_frequency_hz(&self) -> f64 {
        let sweep = self.sweep_hz.value * (TAU * self.sweep_phase_cycles).sin();
        (self.centre_hz.value + sweep).clamp(LOWEST_HZ, self.highest_hz)
    }

    /// The peak level of the next sample, dBFS (−inf when silent).
    pub fn current_level_db(&self) -> f64 {
        20.0 * (self.gain.value * self.envelope()).log10()
    }

    /// Frames made since the generator was created.
    pub fn frames_rendered(&self) -> u64 {
        self.frames_rendered
    }

    fn envelope(&self) -> f64 {
        0.5 - 0.5 * (PI * self.fade_position).cos()
    }

    /// The next sample (full scale ±1).
    #[inline]
    pub fn next_sample(&mut self) -> f32 {
        self.frames_rendered += 1;
        self.count_down_to_fade_out();
        self.advance_fade();
        if self.fade_position <= 0.0 {
            return 0.0;
        }
        let coefficient = self.glide_coefficient;
        self.centre_hz.step(coefficient);
        self.sweep_hz.step(coefficient);
        let gain = self.gain.step(coefficient);
        let value = gain * self.envelope() * (TAU * self.phase_cycles).sin();
        let frequency_hz = self.current_frequency_hz();
        self.phase_cycles += frequency_hz / self.sample_rate_hz;
        self.phase_cycles -= self.phase_cycles.floor();
        self.sweep_phase_cycles += 1.0 / (self.sweep_period_s * self.sample_rate_hz);
        self.sweep_phase_cycles -= self.sweep_phase_cycles.floor();
        value as f32
    }

    fn count_down_to_fade_out(&mut self) {
        if let Some(left) = self.frames_until_fade_out.as_mut() {
            if *left == 0 {
                self.stop();
            } else {
                *left -= 1;
            }
        }
    }

    fn advance_fade(&mut self) {
        if self.wants_sound {
            self.fade_position = (self.fade_position + self.fade_step).min(1.0);
        } else if self.fade_position > 0.0 {
            self.fade_position = (self.fade_position - self.fade_step).max(0.0);
            if self.fade_position <= 0.0 {
                // Silent again: the next start begins a fresh cycle.
                self.phase_cycles = 0.0;
            }
        }
    }

    /// Fills interleaved frames of `channels` channels with the tone (the
    /// same in every channel), converting each sample with `convert`.
    #[inline]
    pub fn fill_interleaved<T: Copy>(
        &mut self,
        out: &mut [T],
        channels: usize,
        convert: impl Fn(f32) -> T,
    ) {
        for frame in out.chunks_mut(channels.max(1)) {
            let value = convert(self.next_sample());
            frame.fill(value);
        }
    }
}

/// An f64 kept in an atomic as its bits.
#[derive(Debug, Default)]
struct AtomicF64(AtomicU64);

impl AtomicF64 {
    fn new(value: f64) -> Self {
        Self(AtomicU64::new(value.to_bits()))
    }

    fn load(&self) -> f64 {
        f64::from_bits(self.0.load(Ordering::Acquire))
    }

    fn store(&self, value: f64) {
        self.0.store(value.to_bits(), Ordering::Release);
    }
}

const COMMAND_NONE: u64 = 0;
const COMMAND_PLAY: u64 = 1;
const COMMAND_PLAY_TIMED: u64 = 2;
const COMMAND_STOP: u64 = 3;

/// The settings and commands of a playing tone, shared between the window
/// (or the command line) and the audio callback through atomics only, and
/// what the callback reports back.
#[derive(Debug, Default)]
pub struct ToneControls {
    frequency_hz: AtomicF64,
    fine_tune_hz: AtomicF64,
    sweep_hz: AtomicF64,
    sweep_period_s: AtomicF64,
    level_db: AtomicF64,
    level_cap_db: AtomicF64,
    /// Bumped on every settings change (the callback re-reads them then).
    settings_serial: AtomicU64,
    /// (serial << 2) | command.
    command: AtomicU64,
    duration_s: AtomicF64,
    // Reported by the callback:
    seen_command: AtomicU64,
    state: AtomicU8,
    current_hz: AtomicF64,
    current_level_db: AtomicF64,
    frames_rendered: AtomicU64,
}

impl ToneControls {
    /// Controls holding `settings`, silent.
    pub fn new(settings: &ToneSettings) -> Self {
        let controls = Self {
            current_level_db: AtomicF64::new(f64::NEG_INFINITY),
            ..Self::default()
        };
        controls.set_settings(settings);
        controls
    }

    /// New settings for the tone (the callback glides to them).
    pub fn set_settings(&self, settings: &ToneSettings) {
        self.frequency_hz.store(settings.frequency_hz);
        self.fine_tune_hz.store(settings.fine_tune_hz);
        self.sweep_hz.store(settings.sweep_hz);
        self.sweep_period_s.store(settings.sweep_period_s);
        self.level_db.store(settings.level_db);
        self.level_cap_db.store(settings.level_cap_db);
        self.settings_serial.fetch_add(1, Ordering::AcqRel);
    }

    /// The settings last given.
    pub fn settings(&self) -> ToneSettings {
        ToneSettings {
            frequency_hz: self.frequency_hz.load(),
            fine_tune_hz: self.fine_tune_hz.load(),
            sweep_hz: self.sweep_hz.load(),
            sweep_period_s: self.sweep_period_s.load(),
            level_db: self.level_db.load(),
            level_cap_db: self.level_cap_db.load(),
        }
    }

    /// Fade in and play until stopped.
    pub fn play(&self) {
        self.send(COMMAND_PLAY);
    }

    /// Fade in, play, and fade out so that the whole tone lasts `seconds`.
    pub fn play_for(&self, seconds: f64) {
        self.duration_s.store(seconds);
        self.send(COMMAND_PLAY_TIMED);
    }

    /// Fade out.
    pub fn stop(&self) {
        self.send(COMMAND_STOP);
    }

    fn send(&self, command: u64) {
        let serial = (self.command.load(Ordering::Acquire) >> 2) + 1;
        self.command
            .store((serial << 2) | command, Ordering::Release);
    }

    /// What the generator was doing at the end of the last block.
    pub fn state(&self) -> ToneState {
        ToneState::from_code(self.state.load(Ordering::Acquire))
    }

    /// True once the callback has taken the last command and is silent:
    /// a stop has faded out, or a timed tone has ended.
    pub fn is_finished(&self) -> bool {
        self.seen_command.load(Ordering::Acquire) == self.command.load(Ordering::Acquire)
            && self.state() == ToneState::Silent
    }

    /// The frequency at the end of the last block, Hz.
    pub fn current_frequency_hz(&self) -> f64 {
        self.current_hz.load()
    }

    /// The peak level at the end of the last block, dBFS (−inf: silent).
    pub fn current_level_db(&self) -> f64 {
        self.current_level_db.load()
    }

    /// Frames the callback has made so far.
    pub fn frames_rendered(&self) -> u64 {
        self.frames_rendered.load(Ordering::Acquire)
    }
}

/// What the audio callback owns: the generator and the shared controls.
/// [`ToneRenderer::fill`] reads atomics, renders and stores atomics;
/// nothing else.
#[derive(Debug)]
pub struct ToneRenderer {
    generator: ToneGenerator,
    controls: std::sync::Arc<ToneControls>,
    seen_settings: u64,
    seen_command: u64,
}

impl ToneRenderer {
    /// A renderer at `sample_rate_hz` following `controls`.
    pub fn new(sample_rate_hz: u32, controls: std::sync::Arc<ToneControls>) -> Self {
        let generator = ToneGenerator::new(sample_rate_hz, &controls.settings());
        Self {
            generator,
            seen_settings: controls.settings_serial.load(Ordering::Acquire),
            seen_command: COMMAND_NONE,
            controls,
        }
    }

    /// Fills one block of interleaved frames: takes new settings and
    /// commands, renders, reports.
    #[inline]
    pub fn fill<T: Copy>(&mut self, out: &mut [T], channels: usize, convert: impl Fn(f32) -> T) {
        self.take_controls();
        self.generator.fill_interleaved(out, channels, convert);
        self.report();
    }

    fn take_controls(&mut self) {
        let controls = &self.controls;
        let serial = controls.settings_serial.load(Ordering::Acquire);
        if serial != self.seen_settings {
            self.seen_settings = serial;
            self.generator.set_settings(&controls.settings());
        }
        let command = controls.command.load(Ordering::Acquire);
        if command != self.seen_command {
            self.seen_command = command;
            match command & 3 {
                COMMAND_PLAY => self.generator.start(),
                COMMAND_PLAY_TIMED => self.generator.start_for(controls.duration_s.load()),
                COMMAND_STOP => self.generator.stop(),
                _ => {}
            }
        }
    }

    fn report(&self) {
        let controls = &self.controls;
        let generator = &self.generator;
        controls
            .state
            .store(generator.state().code(), Ordering::Release);
        controls.current_hz.store(generator.current_frequency_hz());
        controls
            .current_level_db
            .store(generator.current_level_db());
        controls
            .frames_rendered
            .store(generator.frames_rendered(), Ordering::Release);
        controls
            .seen_command
            .store(self.seen_command, Ordering::Release);
    }
}

#[cfg(test)]
mod tests {
    use std::sync::Arc;

    use super::*;
    use crate::analysis::{fit_sine, zero_crossing_hz};

    const FS: u32 = 48_000;

    fn settings(frequency_hz: f64, level_db: f64) -> ToneSettings {
        ToneSettings {
            frequency_hz,
            level_db,
            ..ToneSettings::default()
        }
    }

    fn render(generator: &mut ToneGenerator, seconds: f64) -> Vec<f64> {
        (0..(seconds * f64::from(FS)) as usize)
            .map(|_| f64::from(generator.next_sample()))
            .collect()
    }

    fn max_step(samples: &[f64]) -> f64 {
        samples
            .windows(2)
            .map(|w| (w[1] - w[0]).abs())
            .fold(0.0, f64::max)
    }

    fn peak(samples: &[f64]) -> f64 {
        samples.iter().map(|x| x.abs()).fold(0.0, f64::max)
    }

    /// Largest step of a steady sine of amplitude `a` at `f` (analytic).
    fn sine_step(frequency_hz: f64, amplitude: f64) -> f64 {
        2.0 * amplitude * (PI * frequency_hz / f64::from(FS)).sin()
    }

    #[test]
    fn a_timed_tone_holds_its_frequency_level_and_length() {
        let mut generator = ToneGenerator::new(FS, &settings(233.3, -12.0));
        generator.start_for(2.0);
        let out = render(&mut generator, 2.5);
        let steady = &out[(0.3 * 48_000.0) as usize..(1.7 * 48_000.0) as usize];
        let fit = fit_sine(steady, f64::from(FS)).expect("fit");
        assert!((fit.frequency_hz - 233.3).abs() < 1e-6, "{fit:?}");
        let amplitude = db_to_gain(-12.0);
        assert!((fit.amplitude - amplitude).abs() < 1e-6, "{fit:?}");
        assert!(peak(&out) <= amplitude * (1.0 + 1e-6));
        // Sound for 2 s (within a sample), then silence.
        let last = out.iter().rposition(|x| *x != 0.0).expect("some sound");
        assert!((last as f64 - 2.0 * 48_000.0).abs() <= 2.0, "{last}");
        assert_eq!(generator.state(), ToneState::Silent);
    }

    #[test]
    fn fades_rise_and_fall_without_a_click() {
        let mut generator = ToneGenerator::new(FS, &settings(1000.0, -12.0));
        generator.start_for(1.0);
        let out = render(&mut generator, 1.2);
        let amplitude = db_to_gain(-12.0);
        // No step larger than the steady sine's own largest step (plus the
        // fade's slope, which is tiny).
        let limit = sine_step(1000.0, amplitude) * 1.001;
        assert!(max_step(&out) <= limit, "{} > {limit}", max_step(&out));
        // The first and last millisecond are below -40 dB of the level.
        let ms = 48;
        assert!(peak(&out[..ms]) < amplitude * 0.01);
        let last = out.iter().rposition(|x| *x != 0.0).expect("sound");
        assert!(peak(&out[last - ms..=last]) < amplitude * 0.01);
        // Half-way through the fade-in the envelope is at one half.
        let middle = (FADE_S * 48_000.0 / 2.0) as usize;
        let around = peak(&out[middle - 24..middle + 24]);
        assert!((around / amplitude - 0.5).abs() < 0.02, "{around}");
    }

    #[test]
    fn a_stop_during_the_fade_in_falls_from_where_it_was() {
        let mut generator = ToneGenerator::new(FS, &settings(440.0, -12.0));
        generator.start();
        let mut out = render(&mut generator, 0.1);
        generator.stop();
        out.extend(render(&mut generator, 0.3));
        let limit = sine_step(440.0, db_to_gain(-12.0)) * 1.001;
        assert!(max_step(&out) <= limit);
        assert_eq!(generator.state(), ToneState::Silent);
        assert!(out[out.len() - 1000..].iter().all(|x| *x == 0.0));
    }

    #[test]
    fn the_level_never_exceeds_the_cap() {
        let asked = ToneSettings {
            level_db: 0.0,
            level_cap_db: -12.0,
            ..settings(300.0, 0.0)
        };
        assert!(matches!(
            asked.check(Some(FS)),
            Err(ToneError::AboveCap { .. })
        ));
        let mut generator = ToneGenerator::new(FS, &asked);
        generator.start();
        let out = render(&mut generator, 1.0);
        assert!(peak(&out) <= db_to_gain(-12.0) * (1.0 + 1e-6));
        // A cap asked above the highest is held at the highest.
        let wild = ToneSettings {
            level_cap_db: 6.0,
            ..asked
        };
        generator.set_settings(&wild);
        let out = render(&mut generator, 1.0);
        assert!(peak(&out) <= db_to_gain(HIGHEST_LEVEL_CAP_DB) * (1.0 + 1e-6));
        // Not a number: silence-level, never full scale.
        generator.set_settings(&ToneSettings {
            level_db: f64::NAN,
            level_cap_db: f64::NAN,
            ..asked
        });
        let out = render(&mut generator, 1.0);
        assert!(peak(&out[36_000..]) <= db_to_gain(LOWEST_LEVEL_DB) * 1.01);
    }

    #[test]
    fn a_new_frequency_glides_without_a_click() {
        let mut generator = ToneGenerator::new(FS, &settings(200.0, -12.0));
        generator.start();
        let mut out = render(&mut generator, 0.5);
        generator.set_settings(&settings(400.0, -12.0));
        out.extend(render(&mut generator, 1.5));
        let limit = sine_step(400.0, db_to_gain(-12.0)) * 1.001;
        assert!(max_step(&out) <= limit);
        // From 20 glide time constants on (1 s) it is on the new frequency.
        let tail = &out[out.len() - 24_000..];
        let fit = fit_sine(tail, f64::from(FS)).expect("fit");
        assert!((fit.frequency_hz - 400.0).abs() < 1e-6, "{fit:?}");
    }

    #[test]
    fn the_sweep_moves_around_the_fine_tuned_centre() {
        let asked = ToneSettings {
            fine_tune_hz: 2.5,
            sweep_hz: 10.0,
            sweep_period_s: 4.0,
            ..settings(300.0, -20.0)
        };
        let mut generator = ToneGenerator::new(FS, &asked);
        generator.start();
        let out = render(&mut generator, 8.0);
        // Local frequency over 50 ms windows.
        let window = 2_400;
        let local: Vec<f64> = out[12_000..]
            .chunks(window)
            .filter_map(|c| zero_crossing_hz(c, f64::from(FS)))
            .collect();
        let highest = local.iter().copied().fold(f64::MIN, f64::max);
        let lowest = local.iter().copied().fold(f64::MAX, f64::min);
        assert!((highest - 312.5).abs() < 0.6, "{highest}");
        assert!((lowest - 292.5).abs() < 0.6, "{lowest}");
        // The highest comes a quarter period in, the lowest three quarters
        // (sinusoidal sweep), i.e. at 1 s and 3 s (and again at 5 and 7 s).
        let at_s = |value: f64| {
            let i = local.iter().position(|&f| f == value).expect("present");
            0.25 + (i as f64 + 0.5) * 0.05
        };
        let (t_high, t_low) = (at_s(highest), at_s(lowest));
        assert!((t_high % 4.0 - 1.0).abs() < 0.2, "highest at {t_high} s");
        assert!((t_low % 4.0 - 3.0).abs() < 0.2, "lowest at {t_low} s");
    }

    #[test]
    fn the_renderer_follows_the_controls_in_blocks() {
        let controls = Arc::new(ToneControls::new(&settings(500.0, -18.0)));
        let mut renderer = ToneRenderer::new(FS, Arc::clone(&controls));
        let mut block = vec![0f32; 2 * 256];
        let mut left = Vec::new();
        renderer.fill(&mut block, 2, |x| x);
        assert!(block.iter().all(|x| *x == 0.0), "silent until played");
        assert!(controls.is_finished());
        controls.play_for(1.0);
        assert!(!controls.is_finished());
        for _ in 0..250 {
            renderer.fill(&mut block, 2, |x| x);
            assert!(
                block.chunks(2).all(|f| f[0] == f[1]),
                "same in both channels"
            );
            left.extend(block.chunks(2).map(|f| f64::from(f[0])));
        }
        assert!(controls.is_finished(), "{:?}", controls.state());
        assert_eq!(controls.frames_rendered(), 251 * 256);
        let steady = &left[15_000..33_000];
        let fit = fit_sine(steady, f64::from(FS)).expect("fit");
        assert!((fit.frequency_hz - 500.0).abs() < 1e-6);
        assert!((20.0 * fit.amplitude.log10() + 18.0).abs() < 1e-6);

        // Play, then a stop fades out.
        controls.play();
        renderer.fill(&mut block, 2, |x| x);
        assert_eq!(controls.state(), ToneState::FadingIn);
        controls.stop();
        for _ in 0..60 {
            renderer.fill(&mut block, 2, |x| x);
        }
        assert!(controls.is_finished());
        assert!(controls.current_level_db().is_infinite());
    }

    #[test]
    fn bad_settings_are_refused_with_a_sentence() {
        let base = settings(200.0, -20.0);
        let cases = [
            ToneSettings {
                frequency_hz: 5.0,
                ..base
            },
            ToneSettings {
                frequency_hz: 30_000.0,
                ..base
            },
            ToneSettings {
                frequency_hz: f64::NAN,
                ..base
            },
            ToneSettings {
                fine_tune_hz: 80.0,
                ..base
            },
            ToneSettings {
                sweep_hz: 60.0,
                ..base
            },
            ToneSettings {
                sweep_period_s: 0.5,
                ..base
            },
            ToneSettings {
                level_cap_db: 0.0,
                ..base
            },
            ToneSettings {
                level_db: -6.0,
                ..base
            },
            ToneSettings {
                level_db: -120.0,
                ..base
            },
        ];
        for case in cases {
            let error = case.check(Some(FS)).expect_err("refused");
            let text = error.to_string();
            assert!(!text.contains('\n') && text.len() > 20, "{text}");
        }
        assert!(base.check(Some(FS)).is_ok());
        // 45 % of 16 kHz is 7.2 kHz.
        let high = ToneSettings {
            frequency_hz: 8_000.0,
            ..base
        };
        assert!(high.check(None).is_ok());
        assert!(high.check(Some(16_000)).is_err());
        assert!(check_duration(0.2).is_err());
        assert!(check_duration(2.0).is_ok());
    }
}
