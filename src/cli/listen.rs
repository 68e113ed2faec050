//! `tapwright listen`: capture taps from an input device and print the
//! same report as `analyze`.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use anyhow::{bail, Context};

use super::measure::{band_for, MeasureArgs};
use super::output::{note, write_stdout};
use super::tap_table::{rejection_reasons, ReportInput};
use super::values::parse_count;
use crate::analysis::{pass_of_taps, Tap};
use crate::audio::{CaptureEvent, CaptureHandle, CaptureSettings, SourceChoice};
use crate::text::read_number;
use crate::wav_io::write_mono;

/// Longest wait for one event before the deadline is checked again.
const EVENT_WAIT: Duration = Duration::from_millis(100);

#[derive(Debug, clap::Args)]
pub struct ListenArgs {
    /// Input device: a name or id from `tapwright devices` (default: the system default).
    #[arg(long, value_name = "NAME")]
    pub device: Option<String>,
    /// Stop after this many accepted taps (1 to 1000).
    #[arg(long, value_name = "N", default_value_t = 5, value_parser = parse_taps, allow_hyphen_values = true)]
    pub taps: u32,
    /// Stop after this many seconds, whatever the count (more than 0, at most 86400).
    #[arg(long, value_name = "S", default_value_t = 60.0, value_parser = parse_seconds, allow_hyphen_values = true)]
    pub seconds: f64,
    /// Keep each raw tap as a WAV file in this folder (tap_001.wav …).
    #[arg(long, value_name = "DIR")]
    pub save_wav: Option<PathBuf>,
    #[command(flatten)]
    pub measure: MeasureArgs,
}

fn parse_taps(text: &str) -> Result<u32, String> {
    parse_count(text, 1..=1000)
}

/// More than 0 and at most a day.
fn parse_seconds(text: &str) -> Result<f64, String> {
    match read_number(text) {
        Ok(s) if s > 0.0 && s <= 86_400.0 => Ok(s),
        Ok(s) => Err(format!("{s} s is not more than 0 and at most 86400 s")),
        Err(_) => Err(format!(
            "'{text}' is not a number of seconds; give more than 0, at most 86400"
        )),
    }
}

/// What `listen` has collected so far: every tap heard (records dropped
/// once saved), and the samples lost.
#[derive(Default)]
struct Collected {
    taps: Vec<Tap>,
    dropped_samples: u64,
}

impl Collected {
    fn accepted(&self) -> usize {
        self.taps.iter().filter(|t| t.is_accepted()).count()
    }
}

/// `tapwright listen`: capture until enough taps are accepted or time is up,
/// then print the report.
pub fn run(args: &ListenArgs) -> anyhow::Result<()> {
    let mut settings = listen_settings(args)?;
    let mut handle = CaptureHandle::start(
        SourceChoice::Device(args.device.clone()),
        settings.clone(),
        None,
    )?;
    let sample_rate_hz = handle.sample_rate_hz();
    let source = handle.description().to_owned();
    // The band is checked against the rate the device actually gave.
    let band = band_for(args.measure.band, f64::from(sample_rate_hz), &source)?;
    if band
        != (
            settings.analysis.band_low_hz,
            settings.analysis.band_high_hz,
        )
    {
        (
            settings.analysis.band_low_hz,
            settings.analysis.band_high_hz,
        ) = band;
        handle.set_settings(settings)?;
    }
    if let Some(dir) = &args.save_wav {
        std::fs::create_dir_all(dir)
            .with_context(|| format!("creating the folder {}", dir.display()))?;
    }
    note(&format!(
        "Listening on {source}: tap the part; stopping after {} accepted taps or {} s.",
        args.taps, args.seconds
    ));
    let collected = collect_taps(&mut handle, args)?;
    handle.stop();
    if collected.dropped_samples > 0 {
        note(&format!(
            "note: {} samples ({:.2} s) were lost because the computer fell behind the input.",
            collected.dropped_samples,
            collected.dropped_samples as f64 / f64::from(sample_rate_hz)
        ));
    }
    print_report(args, &source, sample_rate_hz, &collected)
}

fn listen_settings(args: &ListenArgs) -> anyhow::Result<CaptureSettings> {
    let trigger = args.measure.trigger_settings();
    // Until the device tells its rate, assume the usual 48 kHz.
    let analysis = args.measure.analysis_settings(48_000.0, "the input")?;
    Ok(CaptureSettings {
        trigger,
        analysis,
        ..Default::default()
    })
}

/// Takes events until enough taps are accepted, time is up, or the source ends.
fn collect_taps(handle: &mut CaptureHandle, args: &ListenArgs) -> anyhow::Result<Collected> {
    let deadline = Instant::now() + Duration::from_secs_f64(args.seconds);
    let mut collected = Collected::default();
    while collected.accepted() < args.taps as usize {
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
            CaptureEvent::Tap(mut tap) => {
                save_tap(args.save_wav.as_deref(), &tap)?;
                match (&tap.analysis, tap.rejected) {
                    (_, Some(reason)) => note(&format!(
                        "tap {}: rejected, {reason} ({})",
                        tap.index,
                        reason.advice()
                    )),
                    (Some(analysis), None) => note(&format!(
                        "tap {}: accepted, {} modes",
                        tap.index,
                        analysis.modes.len()
                    )),
                    (None, None) => {}
                }
                // The measurement is what the report needs.
                tap.record = None;
                collected.taps.push(tap);
            }
            CaptureEvent::Overrun {
                dropped_samples_total,
            } => collected.dropped_samples = dropped_samples_total,
            CaptureEvent::DeviceLost { message } => note(&format!("tapwright: {message}.")),
            CaptureEvent::Retrying {
                attempt, delay_ms, ..
            } => note(&format!(
                "tapwright: trying the input again in {:.1} s (attempt {attempt}).",
                delay_ms as f64 / 1000.0
            )),
            CaptureEvent::Status { message } => note(&format!("tapwright: {message}.")),
            CaptureEvent::SourceEnded => break,
            CaptureEvent::SourceStarted { .. }
            | CaptureEvent::Level(_)
            | CaptureEvent::TapStarted { .. } => {}
        }
    }
    Ok(collected)
}

/// Writes one raw tap as `DIR/tap_NNN.wav` (32-bit float, atomically).
fn save_tap(dir: Option<&Path>, tap: &Tap) -> anyhow::Result<()> {
    let (Some(dir), Some(record)) = (dir, &tap.record) else {
        return Ok(());
    };
    let path = dir.join(format!("tap_{:03}.wav", tap.index));
    write_mono(&path, tap.sample_rate_hz, &record.samples, false)?;
    Ok(())
}

fn print_report(
    args: &ListenArgs,
    source: &str,
    sample_rate_hz: u32,
    collected: &Collected,
) -> anyhow::Result<()> {
    if collected.taps.is_empty() {
        bail!(
            "no tap was heard from {source} in {} s: nothing rose {} dB above the background",
            args.seconds,
            args.measure.margin_db
        );
    }
    if collected.accepted() == 0 {
        bail!(
            "no usable tap: all {} were rejected ({})",
            collected.taps.len(),
            rejection_reasons(&collected.taps)
        );
    }
    let pass = pass_of_taps(&collected.taps, usize::from(args.measure.max_modes));
    let input = ReportInput::of_taps(
        source.to_owned(),
        f64::from(sample_rate_hz),
        args.measure.a4,
        &collected.taps,
        &pass.modes,
    );
    write_stdout(&input.render(args.measure.json)?)
}
