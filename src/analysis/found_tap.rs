//! What the tap finder is told and what it reports: its settings, each
//! strike it found (accepted or not, with the reason) and its events.

use std::fmt;

use serde::{Deserialize, Serialize};

/// Why a tap was left out of a pass.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RejectReason {
    /// Two or more consecutive samples at 99 % of full scale or more.
    Clipped,
    /// New sound arrived during the decay: a second strike or a rattle.
    DoubleStrike,
    /// The strike rose above the noise but not by the trigger margin.
    TooQuiet,
    /// The recording ended too soon after the strike, or the sound died at once.
    TooShort,
    /// Left out by the user.
    LeftOut,
}

impl RejectReason {
    /// A short phrase for tables.
    pub fn short_text(self) -> &'static str {
        match self {
            Self::Clipped => "clipped",
            Self::DoubleStrike => "double strike",
            Self::TooQuiet => "too quiet",
            Self::TooShort => "too short",
            Self::LeftOut => "left out",
        }
    }

    /// What the maker can do about it.
    pub fn advice(self) -> &'static str {
        match self {
            Self::Clipped => "the input overloaded: tap more softly or turn the input gain down",
            Self::DoubleStrike => "the sound rose again while decaying: tap once, let the mallet bounce off",
            Self::TooQuiet => "the tap barely rose above the room noise: tap a little harder or move the microphone closer",
            Self::TooShort => "the tap did not ring long enough to measure",
            Self::LeftOut => "left out by hand",
        }
    }
}

impl fmt::Display for RejectReason {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.short_text())
    }
}

/// How taps are found. Times in milliseconds, levels in dB.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct TriggerSettings {
    /// How far above the noise floor a strike must rise.
    pub margin_db: f64,
    /// How much of the sound before the strike each record keeps: the
    /// analysis measures the noise there, and tells a steady tone (hum)
    /// from a mode the strike set ringing.
    pub pre_trigger_ms: f64,
    /// Length of each record after the strike.
    pub record_ms: f64,
    /// Minimum time between the end of one record and the next strike.
    pub refractory_ms: f64,
    /// A record shorter than this (the input ended) is rejected.
    pub min_record_ms: f64,
    /// Ringing shorter than this (back to the floor) is rejected.
    pub min_ring_ms: f64,
    /// After a record, a rise by more than this (and past the margin) above
    /// the lowest level since starts a new tap at once.
    pub double_strike_rise_db: f64,
    /// The envelope must fall back within this of the floor to re-arm.
    pub settle_db: f64,
    /// Envelope block length.
    pub envelope_ms: f64,
    /// Noise-floor median window.
    pub floor_window_ms: f64,
}

impl Default for TriggerSettings {
    fn default() -> Self {
        Self {
            margin_db: 20.0,
            pre_trigger_ms: 100.0,
            record_ms: 1000.0,
            refractory_ms: 100.0,
            min_record_ms: 100.0,
            min_ring_ms: 15.0,
            double_strike_rise_db: 6.0,
            settle_db: 6.0,
            envelope_ms: 1.0,
            floor_window_ms: 1000.0,
        }
    }
}

/// One strike found in the stream, accepted or not.
#[derive(Clone, Debug, PartialEq)]
pub struct FoundTap {
    /// Stream position (samples since the trigger started) of the first
    /// sample of `samples`.
    pub start_sample: u64,
    /// Index in `samples` of the block where the strike was detected.
    pub onset_index: usize,
    /// The record: `pre_trigger_ms` before the strike, up to `record_ms` after.
    pub samples: Vec<f32>,
    /// Loudest envelope block of the record, dB full scale.
    pub peak_dbfs: f64,
    /// Noise floor when the strike came, dB full scale.
    pub floor_dbfs: f64,
    /// Why the tap is left out, if it is.
    pub rejected: Option<RejectReason>,
}

impl FoundTap {
    /// Stream position of the strike.
    pub fn onset_sample(&self) -> u64 {
        self.start_sample + self.onset_index as u64
    }

    /// The part of the record from the strike on.
    pub fn from_onset(&self) -> &[f32] {
        &self.samples[self.onset_index.min(self.samples.len())..]
    }
}

/// What the trigger reports.
#[derive(Clone, Debug, PartialEq)]
pub enum TriggerEvent {
    /// A strike was detected; its record follows in a [`TriggerEvent::Tap`].
    Started { onset_sample: u64 },
    /// A finished tap, accepted or rejected.
    Tap(FoundTap),
}
