//! Live capture: the only code that touches audio devices.
//!
//! Data flow (see `architecture.md`, "Threads and data flow"):
//!
//! ```text
//! input device ─cpal callback─┐
//! WAV replay ──feeder thread──┼─> SampleRing (rtrb, pre-allocated, wait-free)
//! synthetic taps ─feeder──────┘       │
//!                                     ▼
//!              capture worker thread: level meter, TapTrigger, TapAnalyzer
//!                                     │
//!                                     ▼
//!              bounded channel of CaptureEvent ─> the window or `tapwright listen`
//! ```
//!
//! - The cpal data callback only converts samples to f32, mixes them to mono
//!   and pushes them into the ring; what does not fit is dropped and counted
//!   in an atomic (an overrun). No allocation, lock, logging or I/O there.
//! - Every source is read through one trait, [`SampleSource`]; the worker does
//!   not know whether the sound comes from a microphone, a file or the
//!   synthetic tap generator.
//! - Settings (trigger margin, record length, band …) reach the worker through
//!   a small command channel and are applied without restarting the stream.
//! - Device trouble (no device, busy, unplugged, silent for 1 s) becomes a
//!   [`CaptureEvent`] with one clear sentence; the worker retries with
//!   back-off until it is stopped.
//!
//! Start here: [`CaptureHandle::start`] with a [`SourceChoice`] and
//! [`CaptureSettings`]; drain [`CaptureHandle::try_events`] once per frame.

mod device;
mod events;
mod feeder;
mod output;
mod pipeline;
mod replay;
mod ring;
mod source;
mod synthetic;
pub mod tone;
mod worker;

use std::time::Duration;

use thiserror::Error;

use crate::analysis::{AnalysisSettings, TriggerSettings};
use crate::wav_io::MonoRecording;

pub use device::{list_input_devices, open_device, DeviceInfo, DeviceSource};
pub use events::{CaptureEvent, InputLevel};
pub use feeder::{FedSource, SampleGenerator};
pub use output::{open_output, open_tone_output, open_virtual_output, OutputChoice, ToneOutput};
pub use pipeline::TapPipeline;
pub use replay::ReplayGenerator;
pub use ring::{sample_ring, RingReader, RingWriter};
pub use source::{OpenSource, SampleSource, SourceRead};
pub use synthetic::{SyntheticGenerator, SyntheticStrike, SyntheticTaps};
pub use tone::{ToneControls, ToneSettings, ToneState};
pub use worker::{CaptureHandle, Notify};

/// A live source that delivers nothing for this long is treated as lost.
pub const SILENCE_LIMIT: Duration = Duration::from_secs(1);

/// How fast a replayed or synthetic source delivers its samples.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pacing {
    /// In real time, like a microphone: blocks of about 5 ms as their time
    /// comes; what does not fit the ring is dropped and counted.
    RealTime,
    /// As fast as the worker takes them, never dropping anything (tests,
    /// batch work).
    AsFastAsPossible,
    /// As fast as the feeder can push, without waiting for the worker: what
    /// does not fit the ring is dropped and counted. This is how the ALSA
    /// `file` plugin behaves; use it to test overruns.
    Flood,
}

/// Where the sound comes from.
#[derive(Debug)]
pub enum SourceChoice {
    /// An input device: `None` for the system default, or a name or id as
    /// listed by [`list_input_devices`] (exact name, exact id, or a
    /// case-insensitive part of one name).
    Device(Option<String>),
    /// A recording played back as if it were coming in.
    Replay {
        /// The samples; mono, any supported rate.
        recording: MonoRecording,
        /// How fast it is delivered.
        pacing: Pacing,
        /// Start again at the end instead of ending.
        looped: bool,
    },
    /// Taps made up on the fly from known modes (demo and tests).
    Synthetic {
        /// What to play.
        taps: SyntheticTaps,
        /// How fast it is delivered.
        pacing: Pacing,
    },
    /// Any other source (tests use this to play a device that fails).
    Custom(Box<dyn OpenSource>),
}

/// What the capture worker does with the sound. Everything except
/// `ring_capacity_s` can be changed while running with
/// [`CaptureHandle::set_settings`].
#[derive(Clone, Debug, PartialEq)]
pub struct CaptureSettings {
    /// How taps are found (margin, record length …).
    pub trigger: TriggerSettings,
    /// How each tap is measured (band, number of modes …).
    pub analysis: AnalysisSettings,
    /// How often a [`CaptureEvent::Level`] is sent, in milliseconds of wall time.
    pub level_interval_ms: f64,
    /// Length of the ring between the audio callback and the worker, in
    /// seconds of sound. Read when a source is opened. The default (20 s)
    /// holds a whole burst from a device that delivers faster than real time
    /// (the ALSA `file` plugin) and costs under 4 MB at 48 kHz.
    pub ring_capacity_s: f64,
}

impl Default for CaptureSettings {
    fn default() -> Self {
        Self {
            trigger: TriggerSettings::default(),
            analysis: AnalysisSettings::default(),
            level_interval_ms: 50.0,
            ring_capacity_s: 20.0,
        }
    }
}

impl CaptureSettings {
    /// Ring length in samples at `sample_rate_hz` (at least 0.1 s, at most
    /// 120 s, whatever the setting says).
    pub fn ring_capacity_samples(&self, sample_rate_hz: u32) -> usize {
        ring_capacity_samples(self.ring_capacity_s, sample_rate_hz)
    }

    /// Level interval as a duration (10 ms to 1 s).
    pub fn level_interval(&self) -> Duration {
        let ms = if self.level_interval_ms.is_finite() {
            self.level_interval_ms.clamp(10.0, 1000.0)
        } else {
            50.0
        };
        Duration::from_secs_f64(ms / 1000.0)
    }
}

/// What can go wrong when capture starts. Each message is one sentence.
#[derive(Clone, Debug, Error, PartialEq, Eq)]
pub enum CaptureError {
    /// The computer has no usable audio system at all.
    #[error("no audio system is available on this computer ({detail})")]
    NoAudioSystem { detail: String },
    /// No input device exists (or the default cannot be found).
    #[error("there is no audio input device: connect a microphone or audio interface")]
    NoInputDevice,
    /// No output device exists (or the default cannot be found).
    #[error(
        "there is no audio output device: connect a loudspeaker, amplifier or audio interface"
    )]
    NoOutputDevice,
    /// `--device NAME` named nothing known.
    #[error("no {direction} device is called '{name}' (known: {known}){}", .direction.listing_hint())]
    DeviceNotFound {
        direction: Direction,
        name: String,
        known: String,
    },
    /// The name matched several devices.
    #[error(
        "'{name}' matches several {direction} devices ({matches}); give the full name or the id"
    )]
    AmbiguousDevice {
        direction: Direction,
        name: String,
        matches: String,
    },
    /// Another program holds the device.
    #[error("the {direction} device '{device}' is busy: another program may be using it")]
    DeviceBusy {
        direction: Direction,
        device: String,
    },
    /// The system's default device cannot be opened (no sound card, or the
    /// default points at one that is missing).
    #[error("there is no usable audio {direction} device: the default {direction} '{device}' cannot be opened{detail}; {}", .direction.connect_hint())]
    DefaultUnavailable {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The device is gone or cannot be reached.
    #[error(
        "the {direction} device '{device}' cannot be opened: it is missing or disconnected{detail}"
    )]
    DeviceUnavailable {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The system refused access.
    #[error("permission to {} '{device}' was refused{detail}", .direction.use_verb())]
    PermissionDenied {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// The device cannot take any sample format tapwright makes or reads.
    #[error("the {direction} device '{device}' offers no sample format tapwright can {}", .direction.format_verb())]
    NoUsableFormat {
        direction: Direction,
        device: String,
    },
    /// Anything else the audio system reported while opening.
    #[error("cannot open the {direction} device '{device}': {detail}")]
    Open {
        direction: Direction,
        device: String,
        detail: String,
    },
    /// A recording or synthetic source with nothing to play.
    #[error("the {what} holds no samples")]
    EmptySource { what: String },
    /// A rate tapwright does not work at.
    #[error(
        "a sample rate of {rate_hz} Hz is outside the 8 000 to 192 000 Hz tapwright works with"
    )]
    SampleRate { rate_hz: u32 },
    /// The operating system would not start a thread.
    #[error("cannot start the capture thread: {detail}")]
    Thread { detail: String },
    /// The worker ended before it could answer.
    #[error("the capture worker stopped before the source was opened")]
    WorkerGone,
}

/// Which way the sound goes through a device.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    /// Recording (a microphone).
    Input,
    /// Playing (a loudspeaker, for the drive tone).
    Output,
}

impl Direction {
    fn listing_hint(self) -> &'static str {
        match self {
            Direction::Input => "; `tapwright devices` lists them",
            Direction::Output => "",
        }
    }

    fn connect_hint(self) -> &'static str {
        match self {
            Direction::Input => "connect a microphone or audio interface",
            Direction::Output => "connect a loudspeaker, amplifier or audio interface",
        }
    }

    fn use_verb(self) -> &'static str {
        match self {
            Direction::Input => "record from",
            Direction::Output => "play through",
        }
    }

    fn format_verb(self) -> &'static str {
        match self {
            Direction::Input => "read",
            Direction::Output => "write",
        }
    }
}

impl std::fmt::Display for Direction {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Direction::Input => "input",
            Direction::Output => "output",
        })
    }
}

/// Ring length in samples for `seconds` of sound at `sample_rate_hz`
/// (clamped to 0.1–120 s, and at least 1024 samples).
pub fn ring_capacity_samples(seconds: f64, sample_rate_hz: u32) -> usize {
    let seconds = if seconds.is_finite() {
        seconds.clamp(0.1, 120.0)
    } else {
        20.0
    };
    ((seconds * f64::from(sample_rate_hz)).round() as usize).max(1024)
}

/// Checks a sample rate against the range the rest of tapwright accepts.
pub(crate) fn check_sample_rate(rate_hz: u32) -> Result<u32, CaptureError> {
    if (crate::wav_io::MIN_SAMPLE_RATE_HZ..=crate::wav_io::MAX_SAMPLE_RATE_HZ).contains(&rate_hz) {
        Ok(rate_hz)
    } else {
        Err(CaptureError::SampleRate { rate_hz })
    }
}
