//! What the capture worker tells the window (or `tapwright listen`).

use crate::analysis::Tap;

/// The input level over the last interval.
#[derive(Clone, Debug, PartialEq)]
pub struct InputLevel {
    /// RMS level, dB full scale (−160 for digital silence).
    pub rms_dbfs: f64,
    /// Largest absolute sample, dB full scale.
    pub peak_dbfs: f64,
    /// True if any sample reached 99 % of full scale.
    pub clipped: bool,
    /// The trigger's noise floor, dB full scale (None while it warms up).
    pub floor_dbfs: Option<f64>,
    /// True while a tap is being recorded.
    pub recording: bool,
}

/// One piece of news from the capture worker. Events come in the order
/// things happened; tap events are never dropped (the worker waits for room
/// in the channel, and the ring counts the overrun instead), level events
/// are dropped when the channel is full.
#[derive(Clone, Debug)]
pub enum CaptureEvent {
    /// A source was opened (at start, and again after each reconnection).
    SourceStarted {
        /// The device name, file or generator, for display.
        description: String,
        /// Its sample rate; taps that follow are at this rate.
        sample_rate_hz: u32,
    },
    /// The input level, a few times a second.
    Level(InputLevel),
    /// A strike was heard; its record is being taken. The tap event with
    /// the same `index` follows.
    TapStarted {
        /// 1-based number of the tap since capture started.
        index: usize,
        /// Time of the strike, seconds since the current source opened.
        onset_s: f64,
    },
    /// A finished tap, accepted (with its measurement) or rejected (with
    /// the reason).
    Tap(Tap),
    /// Sound was lost because the worker fell behind and the ring filled up.
    Overrun {
        /// Samples dropped since capture started (a running total).
        dropped_samples_total: u64,
    },
    /// Something worth showing that is not a failure (e.g. the system
    /// reported a glitch).
    Status {
        /// One sentence.
        message: String,
    },
    /// The source stopped working (unplugged, taken by another program,
    /// silent for a second). The worker will try again.
    DeviceLost {
        /// One sentence saying what happened.
        message: String,
    },
    /// The worker is about to try to open the source again.
    Retrying {
        /// 1 for the first attempt after a loss.
        attempt: u32,
        /// How long it waits first, in milliseconds.
        delay_ms: u64,
        /// Why the last attempt failed (or why the source was lost).
        reason: String,
    },
    /// A replay or synthetic source reached its end; the worker has stopped.
    SourceEnded,
}

impl CaptureEvent {
    /// True for the events that carry a finished tap.
    pub fn is_tap(&self) -> bool {
        matches!(self, Self::Tap(_))
    }

    /// The tap number of a tap event.
    pub fn tap_index(&self) -> Option<usize> {
        match self {
            Self::TapStarted { index, .. } => Some(*index),
            Self::Tap(tap) => Some(tap.index),
            _ => None,
        }
    }
}
