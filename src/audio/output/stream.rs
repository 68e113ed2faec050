//! Playing the drive tone through an audio output device (cpal), or
//! through a virtual output that renders in real time into nothing (tests,
//! and machines without a loudspeaker).
//!
//! The cpal data callback owns a [`ToneRenderer`]: it reads the settings
//! and commands from atomics, renders the block and stores a few atomics
//! back. It allocates nothing, takes no lock and logs nothing. Stream
//! errors travel through a small ring to [`ToneOutput::problem`]. Dropping
//! a [`ToneOutput`] fades the tone out, lets the device play what it holds,
//! and only then closes the stream.

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use super::tone::{ToneControls, ToneRenderer, ToneSettings, FADE_S};
use crate::audio::device::{
    choose_device, close_stream, stream_problem, DeviceSample, StreamCallback, StreamProblem,
    ERROR_RING_LEN,
};
use crate::audio::error::{AudioError, Direction};
use crate::audio::settings::check_sample_rate;
/// Silence played after a fade-out before the stream is closed, so the
/// device's own buffer (the end of the fade) is heard rather than cut.
const TAIL_S: f64 = 0.2;
/// Longest wait for the fade-out and the tail when an output is dropped.
const CLOSE_FADE_LIMIT: Duration = Duration::from_millis(1200);
/// Block length of the virtual output.
const VIRTUAL_BLOCK_S: f64 = 0.005;

/// Where the drive tone goes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum OutputChoice {
    /// An output device: None for the system default, or a name or id
    /// (exact name, exact id, or a case-insensitive part of one name).
    Device(Option<String>),
    /// Rendered in real time at this rate into nothing (tests).
    Virtual {
        /// Samples per second.
        sample_rate_hz: u32,
    },
}

impl Default for OutputChoice {
    fn default() -> Self {
        OutputChoice::Device(None)
    }
}

enum Keeper {
    Stream(cpal::Stream),
    Virtual {
        running: Arc<AtomicBool>,
        thread: JoinHandle<()>,
    },
}

/// A drive tone being played. Change it through [`ToneOutput::controls`];
/// drop it to fade out and close.
pub struct ToneOutput {
    description: String,
    sample_rate_hz: u32,
    controls: Arc<ToneControls>,
    errors: Option<rtrb::Consumer<cpal::Error>>,
    keeper: Option<Keeper>,
}

impl std::fmt::Debug for ToneOutput {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ToneOutput")
            .field("description", &self.description)
            .field("sample_rate_hz", &self.sample_rate_hz)
            .finish_non_exhaustive()
    }
}

/// Opens the chosen output, silent, holding `settings`. Nothing sounds
/// until [`ToneControls::play`] or [`ToneControls::play_for`].
pub fn open_output(
    choice: &OutputChoice,
    settings: &ToneSettings,
) -> Result<ToneOutput, AudioError> {
    match choice {
        OutputChoice::Device(wanted) => open_tone_output(wanted.as_deref(), settings),
        OutputChoice::Virtual { sample_rate_hz } => open_virtual_output(*sample_rate_hz, settings),
    }
}

/// Opens the default output device (`None`) or the named one and starts
/// its stream, silent.
pub fn open_tone_output(
    wanted: Option<&str>,
    settings: &ToneSettings,
) -> Result<ToneOutput, AudioError> {
    let chosen = choose_device(wanted, Direction::Output)?;
    let controls = Arc::new(ToneControls::new(settings));
    let renderer = ToneRenderer::new(chosen.sample_rate_hz, Arc::clone(&controls));
    let (error_writer, errors) = rtrb::RingBuffer::new(ERROR_RING_LEN);
    let output = OutputStream {
        channels: usize::from(chosen.config().channels),
        renderer,
    };
    let stream = chosen.start(output, error_writer)?;
    Ok(ToneOutput {
        description: chosen.description(),
        sample_rate_hz: chosen.sample_rate_hz,
        controls,
        errors: Some(errors),
        keeper: Some(Keeper::Stream(stream)),
    })
}

/// A virtual output: a thread renders the tone in real time, in 5 ms
/// blocks, into nothing. It behaves like a device for everything the
/// window and the tests look at (state, frames, fades, timing).
pub fn open_virtual_output(
    sample_rate_hz: u32,
    settings: &ToneSettings,
) -> Result<ToneOutput, AudioError> {
    let sample_rate_hz = check_sample_rate(sample_rate_hz)?;
    let controls = Arc::new(ToneControls::new(settings));
    let mut renderer = ToneRenderer::new(sample_rate_hz, Arc::clone(&controls));
    let running = Arc::new(AtomicBool::new(true));
    let still_running = Arc::clone(&running);
    let block_frames = (VIRTUAL_BLOCK_S * f64::from(sample_rate_hz)).round() as usize;
    let block_time = Duration::from_secs_f64(block_frames as f64 / f64::from(sample_rate_hz));
    let thread = std::thread::Builder::new()
        .name("tapwright-virtual-output".to_owned())
        .spawn(move || {
            let mut block = vec![0f32; block_frames];
            let started = Instant::now();
            let mut blocks: u32 = 0;
            while still_running.load(Ordering::Acquire) {
                renderer.fill(&mut block, 1, |x| x);
                blocks = blocks.saturating_add(1);
                let due = started + block_time * blocks;
                std::thread::sleep(due.saturating_duration_since(Instant::now()));
            }
        })
        .map_err(|e| AudioError::Thread {
            detail: e.to_string(),
        })?;
    Ok(ToneOutput {
        description: format!("virtual output ({sample_rate_hz} Hz)"),
        sample_rate_hz,
        controls,
        errors: None,
        keeper: Some(Keeper::Virtual { running, thread }),
    })
}

/// What the output stream's callback owns: the renderer.
struct OutputStream {
    channels: usize,
    renderer: ToneRenderer,
}

impl StreamCallback for OutputStream {
    /// Read atomics, render, convert, store atomics: nothing else on the
    /// audio thread.
    fn fill<T: DeviceSample>(&mut self, data: &mut [T]) {
        self.renderer.fill(data, self.channels, T::from_f32);
    }
}

impl ToneOutput {
    /// The device's name, rate, channels and format, for display.
    pub fn description(&self) -> &str {
        &self.description
    }

    /// The device's sample rate.
    pub fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// The tone's settings and commands (and what it is doing).
    pub fn controls(&self) -> &ToneControls {
        &self.controls
    }

    /// The same controls, shared (they outlive the output).
    pub fn shared_controls(&self) -> Arc<ToneControls> {
        Arc::clone(&self.controls)
    }

    /// The first stream error since the last call, as a sentence, if any.
    /// Reports of a refused real-time priority are skipped.
    pub fn problem(&mut self) -> Option<String> {
        let errors = self.errors.as_mut()?;
        while let Ok(error) = errors.pop() {
            match stream_problem(Direction::Output, &self.description, &error) {
                Some(StreamProblem::Lost(text) | StreamProblem::Notice(text)) => return Some(text),
                None => {}
            }
        }
        None
    }

    /// Waits until the last command has been taken and the tone is silent
    /// (a timed tone ended, or a stop faded out), at most `limit`. True if
    /// it is.
    pub fn wait_until_finished(&self, limit: Duration) -> bool {
        let deadline = Instant::now() + limit;
        loop {
            if self.controls.is_finished() {
                return true;
            }
            if Instant::now() >= deadline {
                return false;
            }
            std::thread::sleep(Duration::from_millis(2));
        }
    }

    /// Waits until [`TAIL_S`] of silence has been rendered after now, at
    /// most `limit`, so the device plays out what it holds.
    fn play_out_tail(&self, limit: Duration) {
        let tail_frames = (TAIL_S * f64::from(self.sample_rate_hz)) as u64;
        let target = self.controls.frames_rendered() + tail_frames;
        let deadline = Instant::now() + limit;
        while self.controls.frames_rendered() < target && Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(5));
        }
    }
}

impl Drop for ToneOutput {
    /// Fades out, plays the tail, then closes the stream without waiting on
    /// a stuck driver (see `close_stream`).
    fn drop(&mut self) {
        let Some(keeper) = self.keeper.take() else {
            return;
        };
        self.controls.stop();
        let fade_limit = Duration::from_secs_f64(FADE_S) + CLOSE_FADE_LIMIT;
        if self.wait_until_finished(fade_limit) {
            self.play_out_tail(CLOSE_FADE_LIMIT);
        }
        match keeper {
            Keeper::Virtual { running, thread } => {
                running.store(false, Ordering::Release);
                let _ = thread.join();
            }
            Keeper::Stream(stream) => close_stream(stream),
        }
    }
}
