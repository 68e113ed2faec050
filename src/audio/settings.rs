//! How the input is read: where the sound comes from, how fast a recording
//! or a synthetic source is delivered, and the capture worker's settings.

use std::time::Duration;

use super::error::AudioError;
use super::input::{OpenSource, SyntheticTaps};
use crate::analysis::{AnalysisSettings, TriggerSettings};
use crate::wav_io::MonoRecording;

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
    /// listed by [`list_input_devices`](super::list_input_devices) (exact name, exact id, or a
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
/// [`CaptureHandle::set_settings`](super::CaptureHandle::set_settings).
#[derive(Clone, Debug, PartialEq)]
pub struct CaptureSettings {
    /// How taps are found (margin, record length …).
    pub trigger: TriggerSettings,
    /// How each tap is measured (band, number of modes …).
    pub analysis: AnalysisSettings,
    /// How often a [`CaptureEvent::Level`](super::CaptureEvent::Level) is sent, in milliseconds of wall time.
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
pub(crate) fn check_sample_rate(rate_hz: u32) -> Result<u32, AudioError> {
    if (crate::wav_io::MIN_SAMPLE_RATE_HZ..=crate::wav_io::MAX_SAMPLE_RATE_HZ).contains(&rate_hz) {
        Ok(rate_hz)
    } else {
        Err(AudioError::SampleRate { rate_hz })
    }
}
