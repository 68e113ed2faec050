//! What the window (or the command line) and the audio callback share:
//! [`ToneControls`], atomics only, and [`ToneRenderer`], which the callback
//! runs without allocation or lock.

use super::*;
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
