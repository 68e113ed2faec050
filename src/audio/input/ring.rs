//! The ring between whoever produces samples (the cpal callback or a feeder
//! thread) and the capture worker: an `rtrb` single-producer single-consumer
//! ring of mono f32 samples, allocated once, wait-free on both sides, plus an
//! atomic count of the samples that did not fit (overruns).

use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

use rtrb::{Consumer, Producer, RingBuffer};

use super::source::SourceRead;

/// The writing end. Safe to use in a real-time audio callback: no
/// allocation, no lock, no system call.
#[derive(Debug)]
pub struct RingWriter {
    producer: Producer<f32>,
    dropped: Arc<AtomicU64>,
}

/// The reading end, owned by the capture worker (through a source).
#[derive(Debug)]
pub struct RingReader {
    consumer: Consumer<f32>,
    dropped: Arc<AtomicU64>,
}

/// Makes a ring holding `capacity_samples` mono samples (at least 1).
pub fn sample_ring(capacity_samples: usize) -> (RingWriter, RingReader) {
    let (producer, consumer) = RingBuffer::new(capacity_samples.max(1));
    let dropped = Arc::new(AtomicU64::new(0));
    (
        RingWriter {
            producer,
            dropped: Arc::clone(&dropped),
        },
        RingReader { consumer, dropped },
    )
}

impl RingWriter {
    /// Mixes interleaved frames of `channels` samples to mono (the mean of
    /// the channels), converting each sample with `to_f32`, and pushes as
    /// many frames as fit; the rest are counted as dropped. Returns the
    /// number of frames pushed. Wait-free, allocation-free.
    pub fn push_interleaved<T: Copy>(
        &mut self,
        data: &[T],
        channels: usize,
        to_f32: impl Fn(T) -> f32,
    ) -> usize {
        let channels = channels.max(1);
        let frames = data.len() / channels;
        let fit = frames.min(self.producer.slots());
        if fit < frames {
            self.dropped
                .fetch_add((frames - fit) as u64, Ordering::Relaxed);
        }
        if fit == 0 {
            return 0;
        }
        let Ok(chunk) = self.producer.write_chunk_uninit(fit) else {
            // Cannot happen (`fit` slots are free), but never panic here.
            self.dropped.fetch_add(fit as u64, Ordering::Relaxed);
            return 0;
        };
        let scale = 1.0 / channels as f32;
        if channels == 1 {
            chunk.fill_from_iter(data.iter().map(|&s| to_f32(s)))
        } else {
            chunk.fill_from_iter(
                data.chunks_exact(channels)
                    .map(|frame| frame.iter().map(|&s| to_f32(s)).sum::<f32>() * scale),
            )
        }
    }

    /// Pushes mono samples; what does not fit is dropped and counted.
    /// Returns the number pushed.
    pub fn push_or_drop(&mut self, samples: &[f32]) -> usize {
        let (pushed, rest) = self.producer.push_partial_slice(samples);
        if !rest.is_empty() {
            self.dropped.fetch_add(rest.len() as u64, Ordering::Relaxed);
        }
        pushed.len()
    }

    /// Pushes as many mono samples as fit without counting the rest as
    /// dropped (the caller will try again). Returns the number pushed.
    pub fn push_some(&mut self, samples: &[f32]) -> usize {
        self.producer.push_partial_slice(samples).0.len()
    }

    /// Free room, in samples.
    pub fn free_slots(&self) -> usize {
        self.producer.slots()
    }

    /// True once the reading end is gone.
    pub fn is_abandoned(&self) -> bool {
        self.producer.is_abandoned()
    }
}

impl RingReader {
    /// Waits at most `max_wait` for samples, looking every `poll`, and
    /// moves what is waiting into `out`. While the ring is empty, `idle`
    /// may end the wait with its own answer (the device reported trouble,
    /// the feeder has ended); it is given the reader for one more look.
    pub fn wait_for_samples(
        &mut self,
        out: &mut [f32],
        max_wait: Duration,
        poll: Duration,
        mut idle: impl FnMut(&mut Self, &mut [f32]) -> Option<SourceRead>,
    ) -> SourceRead {
        let deadline = Instant::now() + max_wait;
        loop {
            let n = self.pop_into(out);
            if n > 0 {
                return SourceRead::Samples(n);
            }
            if let Some(answer) = idle(self, out) {
                return answer;
            }
            if Instant::now() >= deadline {
                return SourceRead::Waiting;
            }
            std::thread::sleep(poll);
        }
    }

    /// Moves up to `out.len()` samples out of the ring; returns how many.
    pub fn pop_into(&mut self, out: &mut [f32]) -> usize {
        self.consumer.pop_partial_slice(out).0.len()
    }

    /// Samples waiting in the ring.
    pub fn available(&self) -> usize {
        self.consumer.slots()
    }

    /// Ring size in samples.
    pub fn capacity(&self) -> usize {
        self.consumer.buffer().capacity()
    }

    /// Samples dropped so far because the ring was full.
    pub fn dropped_samples(&self) -> u64 {
        self.dropped.load(Ordering::Relaxed)
    }

    /// True once the writing end is gone.
    pub fn is_abandoned(&self) -> bool {
        self.consumer.is_abandoned()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stereo_is_mixed_to_mono() {
        let (mut writer, mut reader) = sample_ring(8);
        let pushed =
            writer.push_interleaved(&[1000i16, 3000, -2000, 0], 2, |s| f32::from(s) / 1000.0);
        assert_eq!(pushed, 2);
        let mut out = [0.0; 8];
        assert_eq!(reader.pop_into(&mut out), 2);
        assert_eq!(&out[..2], &[2.0, -1.0]);
    }

    #[test]
    fn overflow_is_counted_not_blocking() {
        let (mut writer, mut reader) = sample_ring(4);
        assert_eq!(writer.push_or_drop(&[0.1; 6]), 4);
        assert_eq!(writer.push_interleaved(&[0.5f32; 3], 1, |s| s), 0);
        assert_eq!(reader.dropped_samples(), 5);
        let mut out = [0.0; 8];
        assert_eq!(reader.pop_into(&mut out), 4);
        assert_eq!(writer.push_some(&[0.2; 6]), 4);
        assert_eq!(reader.dropped_samples(), 5);
    }
}
