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

use cpal::traits::{DeviceTrait, StreamTrait};
use cpal::{FromSample, SampleFormat, SizedSample, StreamConfig, SupportedStreamConfig};

use super::device::{
    audio_host, default_device, device_name, find_device, is_pcm, open_error, preferred_rate,
};
use super::tone::{ToneControls, ToneRenderer, ToneSettings, FADE_S};
use super::{check_sample_rate, CaptureError, Direction};

/// Stream errors waiting to be read (more are dropped).
const ERROR_RING_LEN: usize = 16;
/// How long cpal may wait for the backend.
const BACKEND_TIMEOUT: Duration = Duration::from_millis(500);
/// Silence played after a fade-out before the stream is closed, so the
/// device's own buffer (the end of the fade) is heard rather than cut.
const TAIL_S: f64 = 0.2;
/// Longest wait for the fade-out and the tail when an output is dropped.
const CLOSE_FADE_LIMIT: Duration = Duration::from_millis(1200);
/// Longest wait for a stream to close before it is left behind.
const STREAM_CLOSE_LIMIT: Duration = Duration::from_millis(500);
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
) -> Result<ToneOutput, CaptureError> {
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
) -> Result<ToneOutput, CaptureError> {
    let host = audio_host()?;
    let device = match wanted {
        None => default_device(&host, Direction::Output).ok_or(CaptureError::NoOutputDevice)?,
        Some(name) => find_device(&host, name, Direction::Output)?,
    };
    let name = device_name(&device);
    let is_default = wanted.is_none();
    let supported = choose_output_config(&device, &name, is_default)?;
    let sample_rate_hz = check_sample_rate(supported.sample_rate())?;
    let config: StreamConfig = supported.config();
    let controls = Arc::new(ToneControls::new(settings));
    let renderer = ToneRenderer::new(sample_rate_hz, Arc::clone(&controls));
    let (error_writer, errors) = rtrb::RingBuffer::new(ERROR_RING_LEN);
    let opening = |e: cpal::Error| open_error(&name, is_default, Direction::Output, &e);
    let stream = build_output(
        &device,
        &config,
        supported.sample_format(),
        renderer,
        error_writer,
    )
    .map_err(opening)?;
    stream.play().map_err(opening)?;
    Ok(ToneOutput {
        description: format!(
            "{name} ({sample_rate_hz} Hz, {} ch, {})",
            config.channels,
            supported.sample_format()
        ),
        sample_rate_hz,
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
) -> Result<ToneOutput, CaptureError> {
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
        .map_err(|e| CaptureError::Thread {
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

/// The configuration to ask for: mono before stereo before more channels
/// (the tone is the same in every channel), 48 kHz before 44.1 kHz before
/// the highest rate up to 192 kHz, and 32-bit float (what the generator
/// makes) before 32-, 24- and 16-bit integers. On a device that converts
/// (an ALSA plug-in) this is float mono at 48 kHz.
fn choose_output_config(
    device: &cpal::Device,
    name: &str,
    is_default: bool,
) -> Result<SupportedStreamConfig, CaptureError> {
    let ranges: Vec<cpal::SupportedStreamConfigRange> = match device.supported_output_configs() {
        Ok(ranges) => ranges.filter(|c| is_pcm(c.sample_format())).collect(),
        Err(_) => Vec::new(),
    };
    let best = ranges
        .iter()
        .filter_map(|range| {
            let rate = preferred_rate(range)?;
            let config = range.try_with_sample_rate(rate)?;
            Some((
                output_rank(range.channels(), rate, range.sample_format()),
                config,
            ))
        })
        .max_by_key(|(rank, _)| *rank);
    if let Some((_, config)) = best {
        return Ok(config);
    }
    match device.default_output_config() {
        Ok(config) if is_pcm(config.sample_format()) => Ok(config),
        Ok(_) => Err(CaptureError::NoUsableFormat {
            direction: Direction::Output,
            device: name.to_owned(),
        }),
        Err(error) => Err(open_error(name, is_default, Direction::Output, &error)),
    }
}

/// Larger is better: channels first, then rate, then sample format.
fn output_rank(channels: u16, rate_hz: u32, format: SampleFormat) -> (u8, u8, u8) {
    let channel_rank = match channels {
        1 => 3,
        2 => 2,
        0 => 0,
        _ => 1,
    };
    let rate_rank = match rate_hz {
        48_000 => 2,
        44_100 => 1,
        _ => 0,
    };
    let format_rank = match format {
        SampleFormat::F32 => 8,
        SampleFormat::I32 => 7,
        SampleFormat::I24 => 6,
        SampleFormat::I16 => 5,
        SampleFormat::F64 => 4,
        SampleFormat::U16 => 3,
        SampleFormat::U24 | SampleFormat::U32 => 2,
        _ => 1,
    };
    (channel_rank, rate_rank, format_rank)
}

fn build_output(
    device: &cpal::Device,
    config: &StreamConfig,
    format: SampleFormat,
    renderer: ToneRenderer,
    errors: rtrb::Producer<cpal::Error>,
) -> Result<cpal::Stream, cpal::Error> {
    use cpal::{I24, U24};
    match format {
        SampleFormat::F32 => build_typed::<f32>(device, config, renderer, errors),
        SampleFormat::F64 => build_typed::<f64>(device, config, renderer, errors),
        SampleFormat::I8 => build_typed::<i8>(device, config, renderer, errors),
        SampleFormat::I16 => build_typed::<i16>(device, config, renderer, errors),
        SampleFormat::I24 => build_typed::<I24>(device, config, renderer, errors),
        SampleFormat::I32 => build_typed::<i32>(device, config, renderer, errors),
        SampleFormat::I64 => build_typed::<i64>(device, config, renderer, errors),
        SampleFormat::U8 => build_typed::<u8>(device, config, renderer, errors),
        SampleFormat::U16 => build_typed::<u16>(device, config, renderer, errors),
        SampleFormat::U24 => build_typed::<U24>(device, config, renderer, errors),
        SampleFormat::U32 => build_typed::<u32>(device, config, renderer, errors),
        SampleFormat::U64 => build_typed::<u64>(device, config, renderer, errors),
        _ => Err(cpal::Error::with_message(
            cpal::ErrorKind::UnsupportedConfig,
            format!("the {format} sample format is not PCM"),
        )),
    }
}

/// Builds the stream for sample type `T`. The data callback is the only
/// code on the audio thread: read atomics, render, convert, store atomics.
fn build_typed<T>(
    device: &cpal::Device,
    config: &StreamConfig,
    mut renderer: ToneRenderer,
    mut errors: rtrb::Producer<cpal::Error>,
) -> Result<cpal::Stream, cpal::Error>
where
    T: SizedSample + FromSample<f32> + Send + 'static,
{
    let channels = usize::from(config.channels);
    device.build_output_stream_raw(
        *config,
        T::FORMAT,
        move |data: &mut cpal::Data, _info: &cpal::OutputCallbackInfo| {
            if let Some(samples) = data.as_slice_mut::<T>() {
                renderer.fill(samples, channels, <T as FromSample<f32>>::from_sample_);
            }
        },
        move |error: cpal::Error| {
            // Full ring: an older error is already waiting; drop this one.
            let _ = errors.push(error);
        },
        Some(BACKEND_TIMEOUT),
    )
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
            match error.kind() {
                cpal::ErrorKind::RealtimeDenied => {}
                cpal::ErrorKind::DeviceNotAvailable
                | cpal::ErrorKind::StreamInvalidated
                | cpal::ErrorKind::HostUnavailable
                | cpal::ErrorKind::PermissionDenied => {
                    return Some(format!(
                        "the output device {} stopped working ({})",
                        self.description,
                        error.to_string().trim_end_matches('.')
                    ));
                }
                _ => {
                    return Some(format!(
                        "the output device reported a problem: {}",
                        error.to_string().trim_end_matches('.')
                    ));
                }
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
    /// Fades out, plays the tail, then closes the stream on a helper
    /// thread and waits at most [`STREAM_CLOSE_LIMIT`] (a stuck driver is
    /// left behind rather than hang the caller).
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
            Keeper::Stream(stream) => {
                let (closed, wait) = std::sync::mpsc::channel();
                let controls = Arc::clone(&self.controls);
                let closer = std::thread::Builder::new()
                    .name("tapwright-output-close".to_owned())
                    .spawn(move || {
                        drop(stream);
                        drop(controls);
                        let _ = closed.send(());
                    });
                if closer.is_ok() {
                    let _ = wait.recv_timeout(STREAM_CLOSE_LIMIT);
                }
            }
        }
    }
}
