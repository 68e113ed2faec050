//! The one sample-source abstraction the capture worker reads from.
//!
//! Implementations: [`super::DeviceSource`] (a cpal input stream) and
//! [`super::FedSource`] driving a [`super::ReplayGenerator`] (a recording)
//! or a [`super::SyntheticGenerator`] (made-up taps). Tests add their own
//! through [`OpenSource`].

use std::time::Duration;

use crate::audio::error::AudioError;

/// What one read from a source gave.
#[derive(Clone, Debug, PartialEq)]
pub enum SourceRead {
    /// This many samples were written to the start of the buffer.
    Samples(usize),
    /// Nothing arrived within the wait; try again.
    Waiting,
    /// The source has no more samples (end of a recording).
    Ended,
    /// The source stopped working; one sentence saying why. The worker
    /// drops the source and opens a new one.
    Lost(String),
    /// Something worth telling the user that does not stop the source.
    Notice(String),
}

/// A stream of mono f32 samples at a fixed rate.
pub trait SampleSource: Send {
    /// Name for display: the device name, the file, the generator.
    fn description(&self) -> &str;

    /// Samples per second.
    fn sample_rate_hz(&self) -> u32;

    /// Moves the next samples into `out`, waiting at most `max_wait` for
    /// some to arrive.
    fn read(&mut self, out: &mut [f32], max_wait: Duration) -> SourceRead;

    /// Samples lost so far because the worker fell behind (a running total).
    fn dropped_samples(&self) -> u64;

    /// True for live sources, where a second without sound means the
    /// device has stopped delivering (the worker then treats it as lost).
    fn is_live(&self) -> bool;
}

/// Something that can open (and, after a loss, reopen) a source.
pub trait OpenSource: Send + std::fmt::Debug {
    /// Opens the source with a ring of `ring_capacity_s` seconds.
    fn open(&mut self, ring_capacity_s: f64) -> Result<Box<dyn SampleSource>, AudioError>;

    /// False for sources that cannot come back once lost or ended
    /// (recordings); the worker then stops instead of retrying.
    fn can_reopen(&self) -> bool;
}
