//! An input device as a sample source: a cpal input stream feeding a
//! sample ring, read by the capture worker.
//!
//! The data callback converts whatever sample format the device delivers
//! (f32, f64, i8, i16, i24, i32, i64, u8, u16, u24, u32, u64) to f32, mixes
//! the channels to mono and pushes into the pre-allocated ring; samples that
//! do not fit are counted, never waited for. Stream errors travel through a
//! second small ring to the worker. The callback allocates nothing, takes no
//! lock and makes no system call.

use std::time::{Duration, Instant};

use super::ring::{sample_ring, RingReader, RingWriter};
use super::source::{OpenSource, SampleSource, SourceRead};
use crate::audio::device::{
    choose_device, close_stream, stream_problem, DeviceSample, StreamCallback, StreamProblem,
    ERROR_RING_LEN,
};
use crate::audio::error::{AudioError, Direction};
use crate::audio::settings::ring_capacity_samples;

/// Sleep between looks at an empty ring. The callback may not wake the
/// worker (no syscalls there), so the worker polls: 4 ms keeps an armed,
/// quiet input near 0.5 % of a core and adds at most 4 ms to a tap's event.
const POLL_SLEEP: Duration = Duration::from_millis(4);
/// A device that has delivered more than this many times the sound the
/// wall clock allows (plus [`FAST_DELIVERY_SLACK_S`] for the first
/// buffers) is not a live input but one with no clock, e.g. ALSA's `null`
/// device, which returns zeros as fast as they are read, or a `file`
/// plug-in. Samples it overfills the ring with are not sound the computer
/// failed to keep up with, so they are not counted as lost.
const FAST_DELIVERY_RATIO: f64 = 1.5;
const FAST_DELIVERY_SLACK_S: f64 = 1.0;

/// A live input stream read through a ring.
pub struct DeviceSource {
    description: String,
    sample_rate_hz: u32,
    reader: RingReader,
    errors: StreamErrors,
    /// Kept alive for as long as the source is; dropping it stops the stream.
    stream: Option<cpal::Stream>,
    pace: DeliveryPace,
}

/// How fast the device delivers, to tell a live input that the worker
/// fell behind from a device that delivers faster than real time.
#[derive(Debug)]
struct DeliveryPace {
    opened_at: Instant,
    samples_read: u64,
    /// Drops seen so far (the ring's running total when last looked at).
    drops_seen: u64,
    /// The part of `drops_seen` that came while the device ran faster
    /// than real time.
    drops_while_fast: u64,
    told_fast: bool,
}

impl DeliveryPace {
    fn new() -> Self {
        Self {
            opened_at: Instant::now(),
            samples_read: 0,
            drops_seen: 0,
            drops_while_fast: 0,
            told_fast: false,
        }
    }

    /// Seconds of sound delivered against seconds since the stream opened.
    fn delivered_and_elapsed_s(&self, waiting: usize, sample_rate_hz: u32) -> (f64, f64) {
        let delivered = self.samples_read + self.drops_seen + waiting as u64;
        (
            delivered as f64 / f64::from(sample_rate_hz),
            self.opened_at.elapsed().as_secs_f64(),
        )
    }

    /// Drops that are sound a live input lost.
    fn lost_samples(&self) -> u64 {
        self.drops_seen - self.drops_while_fast
    }
}

impl std::fmt::Debug for DeviceSource {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("DeviceSource")
            .field("description", &self.description)
            .field("sample_rate_hz", &self.sample_rate_hz)
            .finish_non_exhaustive()
    }
}

/// Opens the default input (`None`) or the named one, with a ring of
/// `ring_capacity_s` seconds, and starts it.
pub fn open_device(wanted: Option<&str>, ring_capacity_s: f64) -> Result<DeviceSource, AudioError> {
    let chosen = choose_device(wanted, Direction::Input)?;
    let channels = usize::from(chosen.config().channels);
    let (writer, reader) = sample_ring(ring_capacity_samples(
        ring_capacity_s,
        chosen.sample_rate_hz,
    ));
    let (error_writer, errors) = rtrb::RingBuffer::new(ERROR_RING_LEN);
    let stream = chosen.start(InputStream { channels, writer }, error_writer)?;
    Ok(DeviceSource {
        description: chosen.description(),
        sample_rate_hz: chosen.sample_rate_hz,
        reader,
        errors: StreamErrors {
            errors,
            last_notice: None,
        },
        stream: Some(stream),
        pace: DeliveryPace::new(),
    })
}

/// What the input stream's callback owns: the ring it pushes into.
struct InputStream {
    channels: usize,
    writer: RingWriter,
}

impl StreamCallback for InputStream {
    /// Convert, mix, push, count: nothing else on the audio thread.
    fn take<T: DeviceSample>(&mut self, data: &[T]) {
        self.writer.push_interleaved(data, self.channels, T::to_f32);
    }
}

impl DeviceSource {
    /// Takes in the ring's drop count. Drops while the device delivers
    /// faster than real time are not losses; the first time that happens
    /// the user is told, once, what kind of device this is.
    fn account_drops(&mut self) -> Option<SourceRead> {
        let dropped = self.reader.dropped_samples();
        let new_drops = dropped.saturating_sub(self.pace.drops_seen);
        if new_drops == 0 {
            return None;
        }
        self.pace.drops_seen = dropped;
        let (delivered_s, elapsed_s) = self
            .pace
            .delivered_and_elapsed_s(self.reader.available(), self.sample_rate_hz);
        if delivered_s <= FAST_DELIVERY_RATIO * elapsed_s + FAST_DELIVERY_SLACK_S {
            return None;
        }
        self.pace.drops_while_fast += new_drops;
        if std::mem::replace(&mut self.pace.told_fast, true) {
            return None;
        }
        Some(SourceRead::Notice(format!(
            "the input {} delivers sound faster than real time ({delivered_s:.0} s of sound in {elapsed_s:.1} s), so it is not a live microphone; what did not fit the buffer was skipped",
            self.description
        )))
    }
}

/// The input stream's errors as the callback reported them.
struct StreamErrors {
    errors: rtrb::Consumer<cpal::Error>,
    last_notice: Option<Instant>,
}

impl StreamErrors {
    /// The first stream error that means the device `description` is gone,
    /// as a sentence; lesser problems become a notice at most once a
    /// second.
    fn check(&mut self, description: &str) -> Option<SourceRead> {
        while let Ok(error) = self.errors.pop() {
            match stream_problem(Direction::Input, description, &error) {
                Some(StreamProblem::Lost(text)) => return Some(SourceRead::Lost(text)),
                Some(StreamProblem::Notice(text)) => {
                    let due = self
                        .last_notice
                        .is_none_or(|t| t.elapsed() >= Duration::from_secs(1));
                    if due {
                        self.last_notice = Some(Instant::now());
                        return Some(SourceRead::Notice(text));
                    }
                }
                None => {}
            }
        }
        None
    }
}

impl SampleSource for DeviceSource {
    fn description(&self) -> &str {
        &self.description
    }

    fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    fn read(&mut self, out: &mut [f32], max_wait: Duration) -> SourceRead {
        if let Some(notice) = self.account_drops() {
            return notice;
        }
        let (errors, description) = (&mut self.errors, &self.description);
        let read = self
            .reader
            .wait_for_samples(out, max_wait, POLL_SLEEP, |_, _| errors.check(description));
        if let SourceRead::Samples(n) = read {
            self.pace.samples_read += n as u64;
        }
        read
    }

    /// Only drops while the device kept to real time: those are sound the
    /// worker was too slow to take.
    fn dropped_samples(&self) -> u64 {
        self.pace.lost_samples()
    }

    fn is_live(&self) -> bool {
        true
    }
}

impl Drop for DeviceSource {
    /// Closes the stream without waiting on a stuck driver (see
    /// `close_stream`).
    fn drop(&mut self) {
        if let Some(stream) = self.stream.take() {
            close_stream(stream);
        }
    }
}

/// Opens (and reopens) an input device by name.
#[derive(Debug)]
pub(crate) struct DeviceOpener {
    pub(crate) wanted: Option<String>,
}

impl OpenSource for DeviceOpener {
    fn open(&mut self, ring_capacity_s: f64) -> Result<Box<dyn SampleSource>, AudioError> {
        Ok(Box::new(open_device(
            self.wanted.as_deref(),
            ring_capacity_s,
        )?))
    }

    fn can_reopen(&self) -> bool {
        true
    }
}
