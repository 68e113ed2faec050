//! Sources that are not devices: a feeder thread takes samples from a
//! [`SampleGenerator`] (a recording, synthetic taps) and pushes them into the
//! same kind of ring a device callback fills, at the chosen [`Pacing`]. The
//! worker reads them exactly as it reads a microphone.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use super::ring::{sample_ring, RingReader, RingWriter};
use super::source::{OpenSource, SampleSource, SourceRead};
use crate::audio::error::AudioError;
use crate::audio::settings::{check_sample_rate, ring_capacity_samples, Pacing};

/// Block length the feeder works in (like a device period).
const FEED_BLOCK_MS: f64 = 5.0;
/// Sleep while waiting for room (lossless pacing) or data (reads): about
/// one feed block, so a paced source wakes the worker once per block.
const POLL_SLEEP: Duration = Duration::from_millis(4);

/// Makes samples on demand.
pub trait SampleGenerator: Send {
    /// Name for display.
    fn description(&self) -> String;
    /// Samples per second.
    fn sample_rate_hz(&self) -> u32;
    /// Fills `out` from the start; returns how many samples were written.
    /// 0 means the generator has ended.
    fn generate(&mut self, out: &mut [f32]) -> usize;
}

#[derive(Debug, Default)]
struct FeederFlags {
    stop: AtomicBool,
    ended: AtomicBool,
}

/// A generator running on its own feeder thread, read through a ring.
#[derive(Debug)]
pub struct FedSource {
    description: String,
    sample_rate_hz: u32,
    reader: RingReader,
    flags: Arc<FeederFlags>,
    thread: Option<JoinHandle<()>>,
}

impl FedSource {
    /// Starts the feeder thread for `generator` with a ring of
    /// `ring_capacity_s` seconds.
    pub fn start(
        generator: Box<dyn SampleGenerator>,
        pacing: Pacing,
        ring_capacity_s: f64,
    ) -> Result<Self, AudioError> {
        let sample_rate_hz = check_sample_rate(generator.sample_rate_hz())?;
        let description = generator.description();
        let (writer, reader) = sample_ring(ring_capacity_samples(ring_capacity_s, sample_rate_hz));
        let flags = Arc::new(FeederFlags::default());
        let thread_flags = Arc::clone(&flags);
        let thread = std::thread::Builder::new()
            .name("tapwright-feeder".to_owned())
            .spawn(move || feed(generator, pacing, writer, &thread_flags))
            .map_err(|e| AudioError::Thread {
                detail: e.to_string(),
            })?;
        Ok(Self {
            description,
            sample_rate_hz,
            reader,
            flags,
            thread: Some(thread),
        })
    }
}

impl SampleSource for FedSource {
    fn description(&self) -> &str {
        &self.description
    }

    fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    fn read(&mut self, out: &mut [f32], max_wait: Duration) -> SourceRead {
        let flags = &self.flags;
        self.reader
            .wait_for_samples(out, max_wait, POLL_SLEEP, |reader, out| {
                if !flags.ended.load(Ordering::Acquire) {
                    return None;
                }
                // The feeder sets `ended` after its last push: one more look.
                let n = reader.pop_into(out);
                Some(if n > 0 {
                    SourceRead::Samples(n)
                } else {
                    SourceRead::Ended
                })
            })
    }

    fn dropped_samples(&self) -> u64 {
        self.reader.dropped_samples()
    }

    fn is_live(&self) -> bool {
        false
    }
}

impl Drop for FedSource {
    fn drop(&mut self) {
        self.flags.stop.store(true, Ordering::Release);
        if let Some(thread) = self.thread.take() {
            let _ = thread.join();
        }
    }
}

/// Opens a fed source once: a recording or a schedule of made-up taps does
/// not come back after it ends or is lost (the worker does not retry it).
pub(crate) struct FedOpener {
    /// The generator, until the source is opened.
    pub generator: Option<Box<dyn SampleGenerator>>,
    /// How fast it is delivered.
    pub pacing: Pacing,
    /// What it plays ("recording"), for the error of a second opening.
    pub what: &'static str,
}

impl std::fmt::Debug for FedOpener {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("FedOpener")
            .field("what", &self.what)
            .field("pacing", &self.pacing)
            .finish_non_exhaustive()
    }
}

impl OpenSource for FedOpener {
    fn open(&mut self, ring_capacity_s: f64) -> Result<Box<dyn SampleSource>, AudioError> {
        let generator = self.generator.take().ok_or(AudioError::EmptySource {
            what: self.what.to_owned(),
        })?;
        Ok(Box::new(FedSource::start(
            generator,
            self.pacing,
            ring_capacity_s,
        )?))
    }

    fn can_reopen(&self) -> bool {
        false
    }
}

/// The feeder thread.
fn feed(
    mut generator: Box<dyn SampleGenerator>,
    pacing: Pacing,
    mut writer: RingWriter,
    flags: &FeederFlags,
) {
    let rate = f64::from(generator.sample_rate_hz());
    let block_len = ((FEED_BLOCK_MS * 1e-3 * rate).round() as usize).max(16);
    let mut block = vec![0.0f32; block_len];
    let started = Instant::now();
    let mut produced: u64 = 0;
    while !flags.stop.load(Ordering::Acquire) && !writer.is_abandoned() {
        let n = generator.generate(&mut block).min(block_len);
        if n == 0 {
            break;
        }
        produced += n as u64;
        match pacing {
            Pacing::RealTime => {
                // A block is delivered once its last sample's time has come.
                let due = started + Duration::from_secs_f64(produced as f64 / rate);
                if !sleep_until(due, flags) {
                    break;
                }
                writer.push_or_drop(&block[..n]);
            }
            Pacing::Flood => {
                writer.push_or_drop(&block[..n]);
                std::thread::yield_now();
            }
            Pacing::AsFastAsPossible => {
                if !push_all(&mut writer, &block[..n], flags) {
                    break;
                }
            }
        }
    }
    flags.ended.store(true, Ordering::Release);
}

/// Sleeps until `due` in short steps; false if told to stop meanwhile.
fn sleep_until(due: Instant, flags: &FeederFlags) -> bool {
    loop {
        if flags.stop.load(Ordering::Acquire) {
            return false;
        }
        let now = Instant::now();
        if now >= due {
            return true;
        }
        std::thread::sleep((due - now).min(Duration::from_millis(5)));
    }
}

/// Pushes every sample, waiting for room; false if told to stop meanwhile.
fn push_all(writer: &mut RingWriter, mut samples: &[f32], flags: &FeederFlags) -> bool {
    loop {
        let pushed = writer.push_some(samples);
        samples = &samples[pushed..];
        if samples.is_empty() {
            return true;
        }
        if flags.stop.load(Ordering::Acquire) || writer.is_abandoned() {
            return false;
        }
        std::thread::sleep(POLL_SLEEP);
    }
}
