//! Pure signal processing: finding taps in a stream of samples, measuring
//! the modes (frequency, Q, level) of each tap, combining taps into a pass,
//! the display spectrum and pitch naming. No files, no devices, no window.
//!
//! The method (see `modal`): one FFT of the decay; around each candidate
//! peak a band, filtered and decimated in the FFT domain, with a span
//! matched to the peak's width and a fixed number of samples; in each band
//! a matrix pencil, a variable-projection refit and an information
//! criterion; poles kept by the band that owns them.

pub mod aggregate;
mod bands;
mod candidates;
mod found_tap;
mod linalg;
pub mod modal;
mod model_order;
mod noise;
pub mod onset;
pub mod pitch;
pub mod recording;
mod settings;
pub mod sine_fit;
pub mod spectrum;
mod subspace;
pub mod synth;
pub mod tap_finder;
mod trigger_levels;
mod varpro;

pub use aggregate::{aggregate_taps, PassMode, PassResult};
pub use modal::{AnalysisSettings, Mode, TapAnalysis, TapAnalyzer};
pub use pitch::{Pitch, DEFAULT_A4_HZ};
pub use recording::{
    analyze_recording, pass_of_taps, rejected_taps, Gathered, RecordingAnalyzer, RecordingReport,
    RejectedTap, Tap, TapGatherer,
};
pub use sine_fit::{fit_sine, zero_crossing_hz, SineFit};
pub use spectrum::DisplaySpectrum;
pub use tap_finder::{
    find_taps, FoundTap, RejectReason, TapTrigger, TriggerEvent, TriggerSettings,
};
