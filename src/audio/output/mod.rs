//! Sound going out: the drive tone. [`tone`] is the pure generator (phase,
//! glides, fades, sweep, level cap) and the atomics it is controlled
//! through; `stream` plays it through an output device, or through a
//! virtual output that renders in real time into nothing.

mod stream;
pub mod tone;

pub use stream::{open_output, open_tone_output, open_virtual_output, OutputChoice, ToneOutput};
pub use tone::{ToneControls, ToneSettings, ToneState};
