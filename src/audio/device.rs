//! Audio input devices through cpal: listing them, and a [`DeviceSource`]
//! that runs a cpal input stream into a sample ring.
//!
//! The data callback converts whatever sample format the device delivers
//! (f32, f64, i8, i16, i24, i32, i64, u8, u16, u24, u32, u64) to f32, mixes
//! the channels to mono and pushes into the pre-allocated ring; samples that
//! do not fit are counted, never waited for. Stream errors travel through a
//! second small ring to the worker. The callback allocates nothing, takes no
//! lock and makes no system call.

use std::time::{Duration, Instant};

use cpal::traits::{DeviceTrait, HostTrait, StreamTrait};
use cpal::{FromSample, SampleFormat, SizedSample, StreamConfig, SupportedStreamConfig};

use super::ring::{sample_ring, RingReader, RingWriter};
use super::source::{OpenSource, SampleSource, SourceRead};
use super::{check_sample_rate, ring_capacity_samples, CaptureError, Direction};

/// Stream errors waiting for the worker (more are dropped).
const ERROR_RING_LEN: usize = 16;
/// How long cpal may wait for the backend (ALSA uses it as its poll timeout).
const BACKEND_TIMEOUT: Duration = Duration::from_millis(500);
/// Longest wait for a stream to close before it is left behind.
const STREAM_CLOSE_LIMIT: Duration = Duration::from_millis(500);
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
pub(crate) fn audio_host() -> Result<cpal::Host, CaptureError> {
    silence_audio_library_messages();
    let mut last_problem = String::from("no audio system is compiled in");
    for id in cpal::available_hosts() {
        match cpal::host_from_id(id) {
            Ok(host) => return Ok(host),
            Err(error) => last_problem = error.to_string(),
        }
    }
    Err(CaptureError::NoAudioSystem {
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

pub(crate) fn device_name(device: &cpal::Device) -> String {
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
pub fn list_input_devices() -> Result<Vec<DeviceInfo>, CaptureError> {
    let host = audio_host()?;
    let default_id = host.default_input_device().map(|d| device_id(&d));
    let mut devices: Vec<cpal::Device> = host
        .input_devices()
        .map_err(|e| CaptureError::NoAudioSystem {
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

pub(crate) fn is_pcm(format: SampleFormat) -> bool {
    !matches!(
        format,
        SampleFormat::DsdU8 | SampleFormat::DsdU16 | SampleFormat::DsdU32
    )
}

/// The devices that go one way, the system default among them.
fn devices_of(host: &cpal::Host, direction: Direction) -> Result<Vec<cpal::Device>, CaptureError> {
    let listed = match direction {
        Direction::Input => host.input_devices().map(|d| d.collect::<Vec<_>>()),
        Direction::Output => host.output_devices().map(|d| d.collect::<Vec<_>>()),
    };
    let mut devices = listed.map_err(|e| CaptureError::NoAudioSystem {
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
pub(crate) fn default_device(host: &cpal::Host, direction: Direction) -> Option<cpal::Device> {
    match direction {
        Direction::Input => host.default_input_device(),
        Direction::Output => host.default_output_device(),
    }
}

/// Finds a device by exact id (with or without the host prefix), exact
/// name, or a case-insensitive part of exactly one name.
pub(crate) fn find_device(
    host: &cpal::Host,
    wanted: &str,
    direction: Direction,
) -> Result<cpal::Device, CaptureError> {
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
        0 => Err(CaptureError::DeviceNotFound {
            direction,
            name: wanted.to_owned(),
            known: known_names(&devices),
        }),
        _ => Err(CaptureError::AmbiguousDevice {
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

/// The stream configuration to ask for. tapwright measures one channel, so
/// it asks for what a tap needs and every interface offers: mono before
/// stereo before more channels (the channels are averaged anyway), 48 kHz
/// before 44.1 kHz before the highest rate up to 192 kHz, and 16-bit
/// integer samples before 32-bit, 24-bit and float (16 bits give about
/// 96 dB of range, far more than the 50–60 dB between a workshop's
/// background and a firm tap). On a device that converts to anything (an
/// ALSA plug-in) this asks for plain 16-bit mono at 48 kHz; on a hardware
/// device it picks among what the hardware does. If the device cannot list
/// its configurations, its default configuration is used.
fn choose_config(
    device: &cpal::Device,
    name: &str,
    is_default: bool,
) -> Result<SupportedStreamConfig, CaptureError> {
    let ranges: Vec<cpal::SupportedStreamConfigRange> = match device.supported_input_configs() {
        Ok(ranges) => ranges.filter(|c| is_pcm(c.sample_format())).collect(),
        Err(_) => Vec::new(),
    };
    let best = ranges
        .iter()
        .filter_map(|range| {
            let rate = preferred_rate(range)?;
            let config = range.try_with_sample_rate(rate)?;
            Some((
                config_rank(range.channels(), rate, range.sample_format()),
                config,
            ))
        })
        .max_by_key(|(rank, _)| *rank);
    if let Some((_, config)) = best {
        return Ok(config);
    }
    match device.default_input_config() {
        Ok(config) if is_pcm(config.sample_format()) => Ok(config),
        Ok(_) => Err(CaptureError::NoUsableFormat {
            direction: Direction::Input,
            device: name.to_owned(),
        }),
        Err(error) => Err(open_error(name, is_default, Direction::Input, &error)),
    }
}

/// 48 kHz, else 44.1 kHz, else the highest rate tapwright accepts.
pub(crate) fn preferred_rate(range: &cpal::SupportedStreamConfigRange) -> Option<u32> {
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
fn config_rank(channels: u16, rate_hz: u32, format: SampleFormat) -> (u8, u8, u8) {
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
        SampleFormat::I16 => 8,
        SampleFormat::I32 => 7,
        SampleFormat::I24 => 6,
        SampleFormat::F32 => 5,
        SampleFormat::F64 => 4,
        SampleFormat::U16 => 3,
        SampleFormat::U24 | SampleFormat::U32 => 2,
        _ => 1,
    };
    (channel_rank, rate_rank, format_rank)
}

/// Turns a cpal error met while opening into one of ours. `is_default`
/// says whether the system default was asked for (no name given).
pub(crate) fn open_error(
    device: &str,
    is_default: bool,
    direction: Direction,
    error: &cpal::Error,
) -> CaptureError {
    let device = device.to_owned();
    // cpal's own message when it has one (the kind's text is generic).
    let detail = error
        .message()
        .map(|m| format!(" ({})", m.trim_end_matches('.')))
        .unwrap_or_default();
    match error.kind() {
        cpal::ErrorKind::DeviceBusy => CaptureError::DeviceBusy { direction, device },
        cpal::ErrorKind::DeviceNotAvailable | cpal::ErrorKind::HostUnavailable if is_default => {
            CaptureError::DefaultUnavailable {
                direction,
                device,
                detail,
            }
        }
        cpal::ErrorKind::DeviceNotAvailable | cpal::ErrorKind::HostUnavailable => {
            CaptureError::DeviceUnavailable {
                direction,
                device,
                detail,
            }
        }
        cpal::ErrorKind::PermissionDenied => CaptureError::PermissionDenied {
            direction,
            device,
            detail,
        },
        cpal::ErrorKind::UnsupportedConfig => CaptureError::NoUsableFormat { direction, device },
        _ => CaptureError::Open {
            direction,
            device,
            detail: error.to_string().trim_end_matches('.').to_owned(),
        },
    }
}

/// A live input stream read through a ring.
pub struct DeviceSource {
    description: String,
    sample_rate_hz: u32,
    reader: RingReader,
    errors: rtrb::Consumer<cpal::Error>,
    /// Kept alive for as long as the source is; dropping it stops the stream.
    stream: Option<cpal::Stream>,
    last_notice: Option<Instant>,
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
pub fn open_device(
    wanted: Option<&str>,
    ring_capacity_s: f64,
) -> Result<DeviceSource, CaptureError> {
    let host = audio_host()?;
    let device = match wanted {
        None => host
            .default_input_device()
            .ok_or(CaptureError::NoInputDevice)?,
        Some(name) => find_device(&host, name, Direction::Input)?,
    };
    let name = device_name(&device);
    let is_default = wanted.is_none();
    let supported = choose_config(&device, &name, is_default)?;
    let sample_rate_hz = check_sample_rate(supported.sample_rate())?;
    let config: StreamConfig = supported.config();
    let (writer, reader) = sample_ring(ring_capacity_samples(ring_capacity_s, sample_rate_hz));
    let (error_writer, errors) = rtrb::RingBuffer::new(ERROR_RING_LEN);
    let stream = build_stream(
        &device,
        &config,
        supported.sample_format(),
        writer,
        error_writer,
    )
    .map_err(|e| open_error(&name, is_default, Direction::Input, &e))?;
    stream
        .play()
        .map_err(|e| open_error(&name, is_default, Direction::Input, &e))?;
    let channels = config.channels;
    Ok(DeviceSource {
        description: format!(
            "{name} ({} Hz, {channels} ch, {})",
            sample_rate_hz,
            supported.sample_format()
        ),
        sample_rate_hz,
        reader,
        errors,
        stream: Some(stream),
        last_notice: None,
        pace: DeliveryPace::new(),
    })
}

fn build_stream(
    device: &cpal::Device,
    config: &StreamConfig,
    format: SampleFormat,
    writer: RingWriter,
    errors: rtrb::Producer<cpal::Error>,
) -> Result<cpal::Stream, cpal::Error> {
    use cpal::{I24, U24};
    match format {
        SampleFormat::F32 => build_typed::<f32>(device, config, writer, errors),
        SampleFormat::F64 => build_typed::<f64>(device, config, writer, errors),
        SampleFormat::I8 => build_typed::<i8>(device, config, writer, errors),
        SampleFormat::I16 => build_typed::<i16>(device, config, writer, errors),
        SampleFormat::I24 => build_typed::<I24>(device, config, writer, errors),
        SampleFormat::I32 => build_typed::<i32>(device, config, writer, errors),
        SampleFormat::I64 => build_typed::<i64>(device, config, writer, errors),
        SampleFormat::U8 => build_typed::<u8>(device, config, writer, errors),
        SampleFormat::U16 => build_typed::<u16>(device, config, writer, errors),
        SampleFormat::U24 => build_typed::<U24>(device, config, writer, errors),
        SampleFormat::U32 => build_typed::<u32>(device, config, writer, errors),
        SampleFormat::U64 => build_typed::<u64>(device, config, writer, errors),
        _ => Err(cpal::Error::with_message(
            cpal::ErrorKind::UnsupportedConfig,
            format!("the {format} sample format is not PCM"),
        )),
    }
}

/// Builds the stream for sample type `T`. The data callback is the only
/// code on the audio thread: convert, mix, push, count.
fn build_typed<T>(
    device: &cpal::Device,
    config: &StreamConfig,
    mut writer: RingWriter,
    mut errors: rtrb::Producer<cpal::Error>,
) -> Result<cpal::Stream, cpal::Error>
where
    T: SizedSample + Send + 'static,
    f32: FromSample<T>,
{
    let channels = usize::from(config.channels);
    device.build_input_stream_raw(
        *config,
        T::FORMAT,
        move |data: &cpal::Data, _info: &cpal::InputCallbackInfo| {
            if let Some(samples) = data.as_slice::<T>() {
                writer.push_interleaved(samples, channels, <f32 as FromSample<T>>::from_sample_);
            }
        },
        move |error: cpal::Error| {
            // Full ring: an older error is already waiting; drop this one.
            let _ = errors.push(error);
        },
        Some(BACKEND_TIMEOUT),
    )
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

    /// The first stream error that means the device is gone, as a sentence;
    /// lesser problems become a notice at most once a second.
    fn check_errors(&mut self) -> Option<SourceRead> {
        while let Ok(error) = self.errors.pop() {
            match error.kind() {
                cpal::ErrorKind::DeviceNotAvailable
                | cpal::ErrorKind::StreamInvalidated
                | cpal::ErrorKind::HostUnavailable
                | cpal::ErrorKind::PermissionDenied => {
                    return Some(SourceRead::Lost(format!(
                        "the input device {} stopped working ({})",
                        self.description,
                        error.to_string().trim_end_matches('.')
                    )));
                }
                cpal::ErrorKind::RealtimeDenied => {}
                _ => {
                    let due = self
                        .last_notice
                        .is_none_or(|t| t.elapsed() >= Duration::from_secs(1));
                    if due {
                        self.last_notice = Some(Instant::now());
                        return Some(SourceRead::Notice(format!(
                            "the input device reported a problem: {}",
                            error.to_string().trim_end_matches('.')
                        )));
                    }
                }
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
        let deadline = Instant::now() + max_wait;
        if let Some(notice) = self.account_drops() {
            return notice;
        }
        loop {
            let n = self.reader.pop_into(out);
            if n > 0 {
                self.pace.samples_read += n as u64;
                return SourceRead::Samples(n);
            }
            if let Some(problem) = self.check_errors() {
                return problem;
            }
            if Instant::now() >= deadline {
                return SourceRead::Waiting;
            }
            std::thread::sleep(POLL_SLEEP);
        }
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
    /// Closes the stream on a helper thread and waits at most
    /// [`STREAM_CLOSE_LIMIT`]. A backend thread that never returns (a stuck
    /// driver; or the ALSA `file` plug-in at the end of its file in recent
    /// alsa-lib, whose reads of 0 frames make cpal's reader loop for ever)
    /// is left behind instead of hanging the worker; it ends with the
    /// program.
    fn drop(&mut self) {
        let Some(stream) = self.stream.take() else {
            return;
        };
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
}

/// Opens (and reopens) an input device by name.
#[derive(Debug)]
pub(crate) struct DeviceOpener {
    pub(crate) wanted: Option<String>,
}

impl OpenSource for DeviceOpener {
    fn open(&mut self, ring_capacity_s: f64) -> Result<Box<dyn SampleSource>, CaptureError> {
        Ok(Box::new(open_device(
            self.wanted.as_deref(),
            ring_capacity_s,
        )?))
    }

    fn can_reopen(&self) -> bool {
        true
    }
}
