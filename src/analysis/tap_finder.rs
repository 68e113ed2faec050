//! Finding taps in a stream of samples (being built).
use serde::{Deserialize, Serialize};

/// Why a tap was left out of a pass.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RejectReason {
    Clipped,
    DoubleStrike,
    TooQuiet,
    TooShort,
}
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TriggerSettings {}
#[derive(Clone, Debug)]
pub struct FoundTap {}
#[derive(Clone, Debug)]
pub enum TriggerEvent {}
#[derive(Debug)]
pub struct TapTrigger {}
