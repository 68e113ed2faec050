//! Sound coming in: from a microphone, a recording or made-up taps, to the
//! capture worker and on to whoever listens.
//!
//! ```text
//! input device ─cpal callback─┐
//! WAV replay ──feeder thread──┼─> SampleRing (rtrb, pre-allocated, wait-free)
//! synthetic taps ─feeder──────┘       │
//!                                     ▼
//!              capture worker thread: level meter, tap gathering
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

mod device_source;
mod events;
mod feeder;
mod pipeline;
mod replay;
mod ring;
mod source;
mod synthetic;
mod worker;

pub use device_source::{open_device, DeviceSource};
pub use events::{CaptureEvent, InputLevel};
pub use feeder::{FedSource, SampleGenerator};
pub use pipeline::TapPipeline;
pub use replay::ReplayGenerator;
pub use ring::{sample_ring, RingReader, RingWriter};
pub use source::{OpenSource, SampleSource, SourceRead};
pub use synthetic::{SyntheticGenerator, SyntheticStrike, SyntheticTaps};
pub use worker::{CaptureHandle, Notify};
