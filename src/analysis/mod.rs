//! Pure signal processing: finding taps in a stream of samples, measuring
//! the modes (frequency, Q, level) of each tap, combining taps into a pass,
//! the display spectrum and pitch naming. No files, no devices, no window.
//!
//! The method is the one in `README.md` ("How a tap is measured"): a
//! complex-ratio estimate on the unwindowed DFT of a record matched to each
//! mode's decay, subtraction of stronger modes, then a joint least-squares
//! refinement of overlapping modes in the time domain.

pub mod aggregate;
mod linalg;
pub mod modal;
pub mod onset;
mod pencil;
pub mod pitch;
pub mod recording;
pub mod sine_fit;
pub mod spectrum;
pub mod synth;
pub mod tap_finder;

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
