//! Audio in and out: the only code that touches audio devices.
//!
//! - `device`: the devices themselves, both ways (audio
//!   system, listing, finding by name, choosing the stream configuration,
//!   building a stream for any sample format, closing it).
//! - [`input`]: sound coming in, from a microphone, a recording or the
//!   synthetic tap generator, through a wait-free ring to the capture
//!   worker, which sends [`CaptureEvent`]s (levels, taps) to the window or
//!   `tapwright listen`.
//! - [`output`]: the drive tone going out to a loudspeaker (or to a
//!   virtual output in tests).
//! - [`settings`] (where the input comes from and how it is read) and
//!   [`error`] (one sentence for each thing that can go wrong).
//!
//! Start here: [`CaptureHandle::start`] with a [`SourceChoice`] and
//! [`CaptureSettings`], draining [`CaptureHandle::try_events`] once per
//! frame; or [`open_output`] with an [`OutputChoice`] for a tone.

mod device;
pub mod error;
pub mod input;
pub mod output;
pub mod settings;

pub use device::{list_input_devices, DeviceInfo};
pub use error::{AudioError, Direction};
pub use input::{
    open_device, sample_ring, CaptureEvent, CaptureHandle, DeviceSource, FedSource, InputLevel,
    Notify, OpenSource, ReplayGenerator, RingReader, RingWriter, SampleGenerator, SampleSource,
    SourceRead, SyntheticGenerator, SyntheticStrike, SyntheticTaps, TapPipeline,
};
pub use output::{
    open_output, open_tone_output, open_virtual_output, tone, OutputChoice, ToneControls,
    ToneOutput, ToneSettings, ToneState,
};
pub use settings::{ring_capacity_samples, CaptureSettings, Pacing, SourceChoice, SILENCE_LIMIT};
