//! `tapwright devices` (list the audio inputs) and `tapwright listen`
//! (capture taps from an input and print the same report as `analyze`).

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use anyhow::{bail, Context};

use super::analyze::parse_band_hz;
use super::report::ReportInput;
use crate::analysis::{
    aggregate_taps, AnalysisSettings, RejectReason, TapAnalysis, TriggerSettings, DEFAULT_A4_HZ,
};
use crate::capture::{
    list_input_devices, CaptureEvent, CaptureHandle, CaptureSettings, DeviceInfo, SourceChoice,
};
use crate::wav_io::write_mono;

/// Longest wait for one event before the deadline is checked again.
const EVENT_WAIT: Duration = Duration::from_millis(100);

#[derive(Debug, clap::Args)]
pub struct DevicesArgs {}

#[derive(Debug, clap::Args)]
pub struct ListenArgs {
    /// Input device: a name or id from `tapwright devices` (default: the system default).
    #[arg(long, value_name = "NAME")]
    pub device: Option<String>,
    /// Stop after this many accepted taps.
    #[arg(long, value_name = "N", default_value_t = 5, value_parser = clap::value_parser!(u32).range(1..=1000))]
    pub taps: u32,
    /// Stop after this many seconds, whatever the count.
    #[arg(long, value_name = "S", default_value_t = 60.0)]
    pub seconds: f64,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Keep each raw tap as a WAV file in this folder (tap_001.wav …).
    #[arg(long, value_name = "DIR")]
    pub save_wav: Option<PathBuf>,
    /// Frequency band to search, LOW:HIGH in Hz.
    #[arg(long, value_name = "LOW:HIGH", default_value = "40:4000", value_parser = parse_band_hz)]
    pub band: (f64, f64),
    /// At most this many modes.
    #[arg(long, value_name = "N", default_value_t = 16, value_parser = clap::value_parser!(u16).range(1..=64))]
    pub max_modes: u16,
    /// Reference A4 for note names, Hz.
    #[arg(long, value_name = "HZ", default_value_t = DEFAULT_A4_HZ, value_parser = parse_a4_hz)]
    pub a4: f64,
    /// Trigger margin above the noise floor, dB.
    #[arg(long, value_name = "DB", default_value_t = 20.0)]
    pub margin_db: f64,
    /// Record length after each strike, ms.
    #[arg(long, value_name = "MS", default_value_t = 1000.0)]
    pub record_ms: f64,
}

/// `tapwright devices`: one line per input device, the default marked.
pub fn run_devices(_args: &DevicesArgs) -> anyhow::Result<()> {
    let devices = list_input_devices()?;
    if devices.is_empty() {
        println!("No audio input device found: connect a microphone or audio interface.");
        return Ok(());
    }
    for device in &devices {
        println!("{}", device_line(device));
    }
    Ok(())
}

fn device_line(device: &DeviceInfo) -> String {
    let mark = if device.is_default { "*" } else { " " };
    let channels = match (device.channels.first(), device.channels.last()) {
        (Some(low), Some(high)) if low == high => format!("{low} ch"),
        (Some(low), Some(high)) => format!("{low}–{high} ch"),
        _ => "? ch".to_owned(),
    };
    let rates: Vec<String> = device
        .sample_rates_hz
        .iter()
        .map(|&(low, high)| match (low, high) {
            (low, high) if low == high => format!("{low}"),
            // Plugin devices resample to anything; the top is meaningless.
            (low, high) if high >= 10_000_000 => format!("{low} and up"),
            (low, high) => format!("{low}–{high}"),
        })
        .collect();
    let default_note = if device.is_default { "  (default)" } else { "" };
    format!(
        "{mark} {}{default_note}\n    id {}; {channels}; {} Hz",
        device.name,
        device.id,
        rates.join(", ")
    )
}

/// What `listen` has collected so far.
#[derive(Default)]
struct Collected {
    taps_found: usize,
    accepted: Vec<TapAnalysis>,
    rejected: Vec<(usize, RejectReason)>,
    dropped_samples: u64,
}

/// `tapwright listen`: capture until enough taps are accepted or time is up,
/// then print the report.
pub fn run_listen(args: &ListenArgs) -> anyhow::Result<()> {
    let settings = listen_settings(args)?;
    let mut handle =
        CaptureHandle::start(SourceChoice::Device(args.device.clone()), settings, None)?;
    let sample_rate_hz = handle.sample_rate_hz();
    let source = handle.description().to_owned();
    if args.band.1 >= f64::from(sample_rate_hz) / 2.0 {
        bail!(
            "the band's upper edge {} Hz is at or above half the sample rate of {source} ({} Hz)",
            args.band.1,
            f64::from(sample_rate_hz) / 2.0
        );
    }
    if let Some(dir) = &args.save_wav {
        std::fs::create_dir_all(dir)
            .with_context(|| format!("creating the folder {}", dir.display()))?;
    }
    eprintln!(
        "Listening on {source}: tap the part; stopping after {} accepted taps or {} s.",
        args.taps, args.seconds
    );
    let collected = collect_taps(&mut handle, args)?;
    handle.stop();
    if collected.dropped_samples > 0 {
        eprintln!(
            "note: {} samples ({:.2} s) were lost because the computer fell behind the input.",
            collected.dropped_samples,
            collected.dropped_samples as f64 / f64::from(sample_rate_hz)
        );
    }
    print_report(args, &source, sample_rate_hz, &collected)
}

fn listen_settings(args: &ListenArgs) -> anyhow::Result<CaptureSettings> {
    if !(args.margin_db.is_finite() && (3.0..=60.0).contains(&args.margin_db)) {
        bail!(
            "--margin-db must be between 3 and 60 dB, not {}",
            args.margin_db
        );
    }
    if !(args.record_ms.is_finite() && (100.0..=10_000.0).contains(&args.record_ms)) {
        bail!(
            "--record-ms must be between 100 and 10000 ms, not {}",
            args.record_ms
        );
    }
    if !(args.seconds.is_finite() && args.seconds > 0.0 && args.seconds <= 86_400.0) {
        bail!(
            "--seconds must be more than 0 and at most 86400, not {}",
            args.seconds
        );
    }
    Ok(CaptureSettings {
        trigger: TriggerSettings {
            margin_db: args.margin_db,
            record_ms: args.record_ms,
            ..Default::default()
        },
        analysis: AnalysisSettings {
            band_low_hz: args.band.0,
            band_high_hz: args.band.1,
            max_modes: usize::from(args.max_modes),
            ..Default::default()
        },
        ..Default::default()
    })
}

/// Takes events until enough taps are accepted, time is up, or the source ends.
fn collect_taps(handle: &mut CaptureHandle, args: &ListenArgs) -> anyhow::Result<Collected> {
    let deadline = Instant::now() + Duration::from_secs_f64(args.seconds);
    let mut collected = Collected::default();
    while collected.accepted.len() < args.taps as usize {
        let now = Instant::now();
        if now >= deadline {
            break;
        }
        let event = match handle.events().recv_timeout(EVENT_WAIT.min(deadline - now)) {
            Ok(event) => event,
            Err(std::sync::mpsc::RecvTimeoutError::Timeout) => continue,
            Err(std::sync::mpsc::RecvTimeoutError::Disconnected) => break,
        };
        match event {
            CaptureEvent::TapAccepted {
                index,
                tap,
                analysis,
                sample_rate_hz,
                ..
            } => {
                collected.taps_found += 1;
                save_tap(
                    args.save_wav.as_deref(),
                    index,
                    sample_rate_hz,
                    &tap.samples,
                )?;
                eprintln!("tap {index}: accepted, {} modes", analysis.modes.len());
                collected.accepted.push(analysis);
            }
            CaptureEvent::TapRejected {
                index,
                tap,
                reason,
                sample_rate_hz,
                ..
            } => {
                collected.taps_found += 1;
                save_tap(
                    args.save_wav.as_deref(),
                    index,
                    sample_rate_hz,
                    &tap.samples,
                )?;
                eprintln!("tap {index}: rejected, {reason} ({})", reason.advice());
                collected.rejected.push((index, reason));
            }
            CaptureEvent::Overrun {
                dropped_samples_total,
            } => collected.dropped_samples = dropped_samples_total,
            CaptureEvent::DeviceLost { message } => eprintln!("tapwright: {message}."),
            CaptureEvent::Retrying {
                attempt, delay_ms, ..
            } => {
                eprintln!(
                    "tapwright: trying the input again in {:.1} s (attempt {attempt}).",
                    delay_ms as f64 / 1000.0
                )
            }
            CaptureEvent::Status { message } => eprintln!("tapwright: {message}."),
            CaptureEvent::SourceEnded => break,
            CaptureEvent::SourceStarted { .. }
            | CaptureEvent::Level(_)
            | CaptureEvent::TapStarted { .. } => {}
        }
    }
    Ok(collected)
}

/// Writes one raw tap as `DIR/tap_NNN.wav` (32-bit float, atomically).
fn save_tap(
    dir: Option<&Path>,
    index: usize,
    sample_rate_hz: u32,
    samples: &[f32],
) -> anyhow::Result<()> {
    let Some(dir) = dir else {
        return Ok(());
    };
    let path = dir.join(format!("tap_{index:03}.wav"));
    write_mono(&path, sample_rate_hz, samples, false)?;
    Ok(())
}

fn print_report(
    args: &ListenArgs,
    source: &str,
    sample_rate_hz: u32,
    collected: &Collected,
) -> anyhow::Result<()> {
    if collected.taps_found == 0 {
        bail!(
            "no tap was heard from {source} in {} s: nothing rose {} dB above the background",
            args.seconds,
            args.margin_db
        );
    }
    if collected.accepted.is_empty() {
        let reasons: Vec<&str> = collected
            .rejected
            .iter()
            .map(|(_, r)| r.short_text())
            .collect();
        bail!(
            "no usable tap: all {} were rejected ({})",
            collected.taps_found,
            reasons.join(", ")
        );
    }
    let pass = aggregate_taps(collected.accepted.iter(), usize::from(args.max_modes));
    let input = ReportInput {
        source: source.to_owned(),
        sample_rate_hz: f64::from(sample_rate_hz),
        a4_hz: args.a4,
        taps_found: collected.taps_found,
        rejected: collected.rejected.clone(),
        modes: &pass.modes,
    };
    if args.json {
        let text =
            serde_json::to_string_pretty(&input.to_json()).context("formatting the JSON report")?;
        println!("{text}");
    } else {
        print!("{}", input.to_table());
    }
    Ok(())
}

/// Parses the reference A4 in Hz (380–500), as `analyze` does.
fn parse_a4_hz(text: &str) -> Result<f64, String> {
    let hz: f64 = text
        .trim()
        .parse()
        .map_err(|_| format!("'{text}' is not a frequency in Hz"))?;
    if (380.0..=500.0).contains(&hz) {
        Ok(hz)
    } else {
        Err(format!("A4 of {hz} Hz is outside 380–500 Hz"))
    }
}
