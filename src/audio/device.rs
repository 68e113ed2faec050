//! Audio devices through cpal, both ways, written once for the input (the
//! microphone) and the output (the drive tone): the audio system, listing
//! the input devices, finding a device by name or id, choosing its stream
//! configuration, opening errors as one sentence, building a stream for
//! whatever sample format the device takes, stream errors as sentences,
//! and closing a stream without waiting on a stuck driver.

use std::time::Duration;

use cpal::traits::{DeviceTrait, HostTrait, StreamTrait};
use cpal::{FromSample, SampleFormat, SizedSample, StreamConfig, SupportedStreamConfig};

use super::error::{AudioError, Direction};
use super::settings::check_sample_rate;

/// Stream errors waiting to be read (more are dropped).
pub(crate) const ERROR_RING_LEN: usize = 16;
/// How long cpal may wait for the backend (ALSA uses it as its poll timeout).
const BACKEND_TIMEOUT: Duration = Duration::from_millis(500);
/// Longest wait for a stream to close before it is left behind.
const STREAM_CLOSE_LIMIT: Duration = Duration::from_millis(500);

/// An input device as `tapwright devices` and the window list it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DeviceInfo {
    /// The name to show (and to pass to `--device`).
    pub name: String,
    /// The system's identifier, unique even when names repeat (also
    /// accepted by `--device`), e.g. `alsa:hw:CARD=0,DEV=0`.
    pub id: String,
    /// True for the system's default input.
    pub is_default: bool,
    /// Channel counts it can record, ascending.
    pub channels: Vec<u16>,
    /// Sample-rate ranges it can record at, (lowest, highest) Hz, ascending.
    pub sample_rates_hz: Vec<(u32, u32)>,
}

/// The first audio system that starts (on Linux: ALSA). Every thread that
/// lists or opens devices comes through here, so alsa-lib's own messages
/// are silenced on it first.
pub(crate) fn audio_host() -> Result<cpal::Host, AudioError> {
    silence_audio_library_messages();
    let mut last_problem = String::from("no audio system is compiled in");
    for id in cpal::available_hosts() {
        match cpal::host_from_id(id) {
            Ok(host) => return Ok(host),
            Err(error) => last_problem = error.to_string(),
        }
    }
    Err(AudioError::NoAudioSystem {
        detail: last_problem,
    })
}

/// Stops alsa-lib printing its own error lines on stderr for the calling
/// thread. Without a sound card, listing devices makes it print a dozen
/// lines ("ALSA lib confmisc.c:855:(parse_card) cannot find card '0'" and
/// so on) that tell the user nothing tapwright does not say in one
/// sentence. alsa-lib's default error handler hands every message to the
/// thread's local handler when one is set (`snd_lib_error_set_local`,
/// alsa-lib error.c); ours drops it. The local handler takes a `va_list`,
/// not `...`, so it can be written in Rust.
#[cfg(target_os = "linux")]
fn silence_audio_library_messages() {
    use std::ffi::{c_char, c_int};

    unsafe extern "C" fn drop_message(
        _file: *const c_char,
        _line: c_int,
        _function: *const c_char,
        _err: c_int,
        _format: *const c_char,
        _args: *mut alsa_sys::__va_list_tag,
    ) {
    }

    // SAFETY: sets a thread-local function pointer in alsa-lib; the handler
    // has the C signature alsa-lib calls and reads none of its arguments.
    unsafe {
        alsa_sys::snd_lib_error_set_local(Some(drop_message));
    }
}

#[cfg(not(target_os = "linux"))]
fn silence_audio_library_messages() {}

fn device_name(device: &cpal::Device) -> String {
    match device.description() {
        Ok(description) => description.name().to_owned(),
        Err(_) => device_id(device),
    }
}

fn device_id(device: &cpal::Device) -> String {
    device.id().map(|id| id.to_string()).unwrap_or_default()
}

/// Lists the input devices that can be opened now, the default first.
/// An empty list means there is no usable input device.
pub fn list_input_devices() -> Result<Vec<DeviceInfo>, AudioError> {
    let host = audio_host()?;
    let default_id = host.default_input_device().map(|d| device_id(&d));
    let mut devices: Vec<cpal::Device> = host
        .input_devices()
        .map_err(|e| AudioError::NoAudioSystem {
            detail: e.to_string(),
        })?
        .collect();
    if let Some(default) = host.default_input_device() {
        if !devices.iter().any(|d| device_id(d) == device_id(&default)) {
            devices.insert(0, default);
        }
    }
    let mut infos: Vec<DeviceInfo> = devices
        .iter()
        .filter_map(|d| describe(d, default_id.as_deref()))
        .collect();
    infos.sort_by_key(|info| !info.is_default);
    Ok(infos)
}

/// Name, id, channels and rates of one device; None if it cannot record now.
fn describe(device: &cpal::Device, default_id: Option<&str>) -> Option<DeviceInfo> {
    let configs: Vec<cpal::SupportedStreamConfigRange> = device
        .supported_input_configs()
        .ok()?
        .filter(|c| is_pcm(c.sample_format()))
        .collect();
    if configs.is_empty() {
        return None;
    }
    let mut channels: Vec<u16> = configs.iter().map(|c| c.channels()).collect();
    channels.sort_unstable();
    channels.dedup();
    let mut sample_rates_hz: Vec<(u32, u32)> = configs
        .iter()
        .map(|c| (c.min_sample_rate(), c.max_sample_rate()))
        .collect();
    sample_rates_hz.sort_unstable();
    sample_rates_hz.dedup();
    let id = device_id(device);
    Some(DeviceInfo {
        name: device_name(device),
        is_default: default_id == Some(id.as_str()),
        id,
        channels,
        sample_rates_hz,
    })
}

fn is_pcm(format: SampleFormat) -> bool {
    !matches!(
        format,
        SampleFormat::DsdU8 | SampleFormat::DsdU16 | SampleFormat::DsdU32
    )
}

/// The devices that go one way, the system default among them.
fn devices_of(host: &cpal::Host, direction: Direction) -> Result<Vec<cpal::Device>, AudioError> {
    let listed = match direction {
        Direction::Input => host.input_devices().map(|d| d.collect::<Vec<_>>()),
        Direction::Output => host.output_devices().map(|d| d.collect::<Vec<_>>()),
    };
    let mut devices = listed.map_err(|e| AudioError::NoAudioSystem {
        detail: e.to_string(),
    })?;
    if let Some(default) = default_device(host, direction) {
        if !devices.iter().any(|d| device_id(d) == device_id(&default)) {
            devices.push(default);
        }
    }
    Ok(devices)
}

/// The system's default device one way, if there is one.
fn default_device(host: &cpal::Host, direction: Direction) -> Option<cpal::Device> {
    match direction {
        Direction::Input => host.default_input_device(),
        Direction::Output => host.default_output_device(),
    }
}

/// Finds a device by exact id (with or without the host prefix), exact
/// name, or a case-insensitive part of exactly one name.
fn find_device(
    host: &cpal::Host,
    wanted: &str,
    direction: Direction,
) -> Result<cpal::Device, AudioError> {
    let mut devices = devices_of(host, direction)?;
    let by_id = devices.iter().position(|d| {
        d.id()
            .is_ok_and(|id| id.to_string() == wanted || id.id() == wanted)
    });
    if let Some(index) = by_id {
        return Ok(devices.swap_remove(index));
    }
    if let Some(index) = devices.iter().position(|d| device_name(d) == wanted) {
        return Ok(devices.swap_remove(index));
    }
    let lower = wanted.to_lowercase();
    let mut partial: Vec<usize> = (0..devices.len())
        .filter(|&i| device_name(&devices[i]).to_lowercase().contains(&lower))
        .collect();
    match partial.len() {
        1 => Ok(devices.swap_remove(partial.remove(0))),
        0 => Err(AudioError::DeviceNotFound {
            direction,
            name: wanted.to_owned(),
            known: known_names(&devices),
        }),
        _ => Err(AudioError::AmbiguousDevice {
            direction,
            name: wanted.to_owned(),
            matches: partial
                .iter()
                .map(|&i| device_id(&devices[i]))
                .collect::<Vec<_>>()
                .join(", "),
        }),
    }
}

fn known_names(devices: &[cpal::Device]) -> String {
    if devices.is_empty() {
        return "none".to_owned();
    }
    let mut names: Vec<String> = devices.iter().map(device_name).collect();
    names.dedup();
    let shown = names.len().min(6);
    let mut text = names[..shown].join(", ");
    if names.len() > shown {
        text.push_str(&format!(" and {} more", names.len() - shown));
    }
    text
}

/// A device found and its stream configuration chosen, ready for a stream.
pub(crate) struct ChosenDevice {
    device: cpal::Device,
    /// The device's name, for messages.
    pub name: String,
    is_default: bool,
    direction: Direction,
    supported: SupportedStreamConfig,
    /// The rate of the chosen configuration (checked to be one tapwright
    /// works at).
    pub sample_rate_hz: u32,
}

impl ChosenDevice {
    /// The configuration the stream is built with.
    pub fn config(&self) -> StreamConfig {
        self.supported.config()
    }

    /// "name (48000 Hz, 1 ch, i16)".
    pub fn description(&self) -> String {
        format!(
            "{} ({} Hz, {} ch, {})",
            self.name,
            self.sample_rate_hz,
            self.supported.channels(),
            self.supported.sample_format()
        )
    }

    /// Builds the stream for the device's sample format, with `callback`
    /// on the audio thread and stream errors going to `errors`, and starts
    /// it; a failure is one sentence naming the device.
    pub fn start<C: StreamCallback>(
        &self,
        callback: C,
        errors: rtrb::Producer<cpal::Error>,
    ) -> Result<cpal::Stream, AudioError> {
        let failed = |e: cpal::Error| open_error(&self.name, self.is_default, self.direction, &e);
        let stream = StreamParts {
            device: &self.device,
            config: self.config(),
            direction: self.direction,
            callback,
            errors,
        }
        .build_for(self.supported.sample_format())
        .map_err(failed)?;
        stream.play().map_err(failed)?;
        Ok(stream)
    }
}

/// Finds the default device going `direction` (`wanted` None) or the named
/// one, and chooses its stream configuration.
pub(crate) fn choose_device(
    wanted: Option<&str>,
    direction: Direction,
) -> Result<ChosenDevice, AudioError> {
    let host = audio_host()?;
    let device = match wanted {
        None => default_device(&host, direction).ok_or(match direction {
            Direction::Input => AudioError::NoInputDevice,
            Direction::Output => AudioError::NoOutputDevice,
        })?,
        Some(name) => find_device(&host, name, direction)?,
    };
    let name = device_name(&device);
    let is_default = wanted.is_none();
    let supported = choose_config(&device, &name, is_default, direction)?;
    let sample_rate_hz = check_sample_rate(supported.sample_rate())?;
    Ok(ChosenDevice {
        device,
        name,
        is_default,
        direction,
        supported,
        sample_rate_hz,
    })
}

/// The stream configuration to ask for. tapwright records one channel and
/// plays the same tone in every channel, so it asks for what every
/// interface offers: mono before stereo before more channels, 48 kHz
/// before 44.1 kHz before the highest rate up to 192 kHz, and the sample
/// format in the order of [`format_rank`]. On a device that converts to
/// anything (an ALSA plug-in) this asks for plain 16-bit mono at 48 kHz to
/// record and float mono at 48 kHz to play; on a hardware device it picks
/// among what the hardware does. If the device cannot list its
/// configurations, its default configuration is used.
fn choose_config(
    device: &cpal::Device,
    name: &str,
    is_default: bool,
    direction: Direction,
) -> Result<SupportedStreamConfig, AudioError> {
    let listed = match direction {
        Direction::Input => device
            .supported_input_configs()
            .map(|ranges| ranges.collect::<Vec<_>>()),
        Direction::Output => device
            .supported_output_configs()
            .map(|ranges| ranges.collect::<Vec<_>>()),
    };
    let ranges: Vec<cpal::SupportedStreamConfigRange> = listed
        .unwrap_or_default()
        .into_iter()
        .filter(|c| is_pcm(c.sample_format()))
        .collect();
    let best = ranges
        .iter()
        .filter_map(|range| {
            let rate = preferred_rate(range)?;
            let config = range.try_with_sample_rate(rate)?;
            Some((
                config_rank(direction, range.channels(), rate, range.sample_format()),
                config,
            ))
        })
        .max_by_key(|(rank, _)| *rank);
    if let Some((_, config)) = best {
        return Ok(config);
    }
    let default = match direction {
        Direction::Input => device.default_input_config(),
        Direction::Output => device.default_output_config(),
    };
    match default {
        Ok(config) if is_pcm(config.sample_format()) => Ok(config),
        Ok(_) => Err(AudioError::NoUsableFormat {
            direction,
            device: name.to_owned(),
        }),
        Err(error) => Err(open_error(name, is_default, direction, &error)),
    }
}

/// 48 kHz, else 44.1 kHz, else the highest rate tapwright accepts.
fn preferred_rate(range: &cpal::SupportedStreamConfigRange) -> Option<u32> {
    let (low, high) = (range.min_sample_rate(), range.max_sample_rate());
    let accepted = crate::wav_io::MIN_SAMPLE_RATE_HZ..=crate::wav_io::MAX_SAMPLE_RATE_HZ;
    [48_000, 44_100]
        .into_iter()
        .find(|rate| (low..=high).contains(rate))
        .or_else(|| {
            Some(high.min(*accepted.end())).filter(|&rate| rate >= low && accepted.contains(&rate))
        })
}

/// Larger is better: channels first, then rate, then sample format.
fn config_rank(
    direction: Direction,
    channels: u16,
    rate_hz: u32,
    format: SampleFormat,
) -> (u8, u8, u8) {
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
    (channel_rank, rate_rank, format_rank(direction, format))
}

/// Larger is better. To record, 16-bit integers come first: they give
/// about 96 dB of range, far more than the 50–60 dB between a workshop's
/// background and a firm tap, and every interface has them. To play,
/// 32-bit float comes first: it is what the tone generator makes. Then
/// 32- and 24-bit integers, the other of the two, 64-bit float, and the
/// unsigned formats.
fn format_rank(direction: Direction, format: SampleFormat) -> u8 {
    use Direction::{Input, Output};
    match (direction, format) {
        (Input, SampleFormat::I16) | (Output, SampleFormat::F32) => 8,
        (_, SampleFormat::I32) => 7,
        (_, SampleFormat::I24) => 6,
        (Input, SampleFormat::F32) | (Output, SampleFormat::I16) => 5,
        (_, SampleFormat::F64) => 4,
        (_, SampleFormat::U16) => 3,
        (_, SampleFormat::U24 | SampleFormat::U32) => 2,
        _ => 1,
    }
}

/// Turns a cpal error met while opening into one of ours. `is_default`
/// says whether the system default was asked for (no name given).
fn open_error(
    device: &str,
    is_default: bool,
    direction: Direction,
    error: &cpal::Error,
) -> AudioError {
    let device = device.to_owned();
    // cpal's own message when it has one (the kind's text is generic).
    let detail = error
        .message()
        .map(|m| format!(" ({})", m.trim_end_matches('.')))
        .unwrap_or_default();
    match error.kind() {
        cpal::ErrorKind::DeviceBusy => AudioError::DeviceBusy { direction, device },
        cpal::ErrorKind::DeviceNotAvailable | cpal::ErrorKind::HostUnavailable if is_default => {
            AudioError::DefaultUnavailable {
                direction,
                device,
                detail,
            }
        }
        cpal::ErrorKind::DeviceNotAvailable | cpal::ErrorKind::HostUnavailable => {
            AudioError::DeviceUnavailable {
                direction,
                device,
                detail,
            }
        }
        cpal::ErrorKind::PermissionDenied => AudioError::PermissionDenied {
            direction,
            device,
            detail,
        },
        cpal::ErrorKind::UnsupportedConfig => AudioError::NoUsableFormat { direction, device },
        _ => AudioError::Open {
            direction,
            device,
            detail: error.to_string().trim_end_matches('.').to_owned(),
        },
    }
}

/// A sample type a device may use: converted to f32 as it comes in, from
/// f32 as it goes out.
pub(crate) trait DeviceSample: SizedSample + Send + 'static {
    /// The sample as f32, full scale ±1.
    fn to_f32(self) -> f32;
    /// An f32 sample, full scale ±1, as this type.
    fn from_f32(value: f32) -> Self;
}

impl<T> DeviceSample for T
where
    T: SizedSample + FromSample<f32> + Send + 'static,
    f32: FromSample<T>,
{
    fn to_f32(self) -> f32 {
        <f32 as FromSample<T>>::from_sample_(self)
    }

    fn from_f32(value: f32) -> Self {
        <T as FromSample<f32>>::from_sample_(value)
    }
}

/// The only code on the audio thread: what a stream does with each block,
/// in whatever sample type the device uses. An input stream takes the
/// samples that came in; an output stream fills the block to play.
pub(crate) trait StreamCallback: Send + 'static {
    /// Takes a block that came in (input streams).
    fn take<T: DeviceSample>(&mut self, _data: &[T]) {}
    /// Fills a block to play (output streams).
    fn fill<T: DeviceSample>(&mut self, _data: &mut [T]) {}
}

/// Everything a stream is built from.
struct StreamParts<'a, C> {
    device: &'a cpal::Device,
    config: StreamConfig,
    direction: Direction,
    callback: C,
    errors: rtrb::Producer<cpal::Error>,
}

impl<C: StreamCallback> StreamParts<'_, C> {
    /// Builds the stream for the sample type of `format`.
    fn build_for(self, format: SampleFormat) -> Result<cpal::Stream, cpal::Error> {
        use cpal::{I24, U24};
        match format {
            SampleFormat::F32 => self.build::<f32>(),
            SampleFormat::F64 => self.build::<f64>(),
            SampleFormat::I8 => self.build::<i8>(),
            SampleFormat::I16 => self.build::<i16>(),
            SampleFormat::I24 => self.build::<I24>(),
            SampleFormat::I32 => self.build::<i32>(),
            SampleFormat::I64 => self.build::<i64>(),
            SampleFormat::U8 => self.build::<u8>(),
            SampleFormat::U16 => self.build::<u16>(),
            SampleFormat::U24 => self.build::<U24>(),
            SampleFormat::U32 => self.build::<u32>(),
            SampleFormat::U64 => self.build::<u64>(),
            _ => Err(cpal::Error::with_message(
                cpal::ErrorKind::UnsupportedConfig,
                format!("the {format} sample format is not PCM"),
            )),
        }
    }

    fn build<T: DeviceSample>(self) -> Result<cpal::Stream, cpal::Error> {
        let Self {
            device,
            config,
            direction,
            mut callback,
            mut errors,
        } = self;
        // With the ring full an older error is already waiting: drop this one.
        let keep_error = move |error: cpal::Error| {
            let _ = errors.push(error);
        };
        match direction {
            Direction::Input => device.build_input_stream_raw(
                config,
                T::FORMAT,
                move |data: &cpal::Data, _info: &cpal::InputCallbackInfo| {
                    if let Some(samples) = data.as_slice::<T>() {
                        callback.take(samples);
                    }
                },
                keep_error,
                Some(BACKEND_TIMEOUT),
            ),
            Direction::Output => device.build_output_stream_raw(
                config,
                T::FORMAT,
                move |data: &mut cpal::Data, _info: &cpal::OutputCallbackInfo| {
                    if let Some(samples) = data.as_slice_mut::<T>() {
                        callback.fill(samples);
                    }
                },
                keep_error,
                Some(BACKEND_TIMEOUT),
            ),
        }
    }
}

/// What a stream error means for the maker.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) enum StreamProblem {
    /// The device is gone; one sentence saying so.
    Lost(String),
    /// A passing problem worth a notice.
    Notice(String),
}

/// A stream error of the device `description` going `direction` as a
/// sentence; None for what the maker need not hear (a refused real-time
/// priority).
pub(crate) fn stream_problem(
    direction: Direction,
    description: &str,
    error: &cpal::Error,
) -> Option<StreamProblem> {
    let detail = error.to_string();
    let detail = detail.trim_end_matches('.');
    match error.kind() {
        cpal::ErrorKind::RealtimeDenied => None,
        cpal::ErrorKind::DeviceNotAvailable
        | cpal::ErrorKind::StreamInvalidated
        | cpal::ErrorKind::HostUnavailable
        | cpal::ErrorKind::PermissionDenied => Some(StreamProblem::Lost(format!(
            "the {direction} device {description} stopped working ({detail})"
        ))),
        _ => Some(StreamProblem::Notice(format!(
            "the {direction} device reported a problem: {detail}"
        ))),
    }
}

/// Closes `stream` on a helper thread and waits at most
/// [`STREAM_CLOSE_LIMIT`]. A backend thread that never returns (a stuck
/// driver; or the ALSA `file` plug-in at the end of its file in recent
/// alsa-lib, whose reads of 0 frames make cpal's reader loop for ever) is
/// left behind instead of hanging the caller; it ends with the program.
pub(crate) fn close_stream(stream: cpal::Stream) {
    let (closed, wait) = std::sync::mpsc::channel();
    let closer = std::thread::Builder::new()
        .name("tapwright-stream-close".to_owned())
        .spawn(move || {
            silence_audio_library_messages();
            drop(stream);
            let _ = closed.send(());
        });
    if closer.is_ok() {
        let _ = wait.recv_timeout(STREAM_CLOSE_LIMIT);
    }
}
