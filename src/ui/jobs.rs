//! One-shot work that must not block the window: file dialogs, reading and
//! analysing a recording, saving files, listing devices, opening a capture
//! source, loading and saving builds. Each job runs on its own thread and
//! sends one [`JobDone`] back over a channel, then asks egui to repaint.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{self, Receiver, Sender};

use anyhow::Context as _;
use eframe::egui;

use crate::analysis::{AnalysisSettings, FoundTap, TapAnalysis, TapAnalyzer, TriggerSettings};
use crate::capture::{CaptureError, CaptureHandle, CaptureSettings, DeviceInfo, SourceChoice};
use crate::ledger::Build;

use super::session::{taps_of_recording, TapEntry};

/// What a file dialog was opened for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FilePurpose {
    /// Open a WAV recording.
    OpenRecording,
    /// Save the kept taps as WAV.
    SaveTaps,
    /// Export the pass as JSON.
    ExportPass,
}

/// The result of a job.
pub enum JobDone {
    /// The input devices, or why they cannot be listed.
    Devices(Result<Vec<DeviceInfo>, CaptureError>),
    /// A capture source opened (or failed to). `generation` tells stale
    /// results (the maker chose another source meanwhile) from current ones.
    CaptureStarted {
        generation: u64,
        result: Result<CaptureHandle, CaptureError>,
    },
    /// The maker chose a file (None: the dialog was cancelled).
    FileChosen {
        purpose: FilePurpose,
        path: Option<PathBuf>,
    },
    /// A recording was read and analysed.
    RecordingAnalysed {
        path: PathBuf,
        result: Result<Vec<TapEntry>, String>,
    },
    /// Taps already heard, measured again with new analysis settings:
    /// (tap number, new measurement).
    TapsRemeasured(Vec<(usize, TapAnalysis)>),
    /// A file was written: the sentence to show, or the problem.
    Saved(Result<String, String>),
    /// A build file was read.
    BuildLoaded {
        path: PathBuf,
        result: Result<Build, String>,
    },
    /// A build file was written to `path`.
    BuildSaved {
        path: PathBuf,
        result: Result<(), String>,
    },
}

/// Starts jobs and collects their results.
pub struct Jobs {
    sender: Sender<JobDone>,
    receiver: Receiver<JobDone>,
    ctx: Option<egui::Context>,
    running: usize,
}

impl Default for Jobs {
    fn default() -> Self {
        let (sender, receiver) = mpsc::channel();
        Self {
            sender,
            receiver,
            ctx: None,
            running: 0,
        }
    }
}

impl Jobs {
    /// Gives the jobs the context to wake when they finish.
    pub fn set_context(&mut self, ctx: &egui::Context) {
        self.ctx = Some(ctx.clone());
    }

    /// How many jobs have not reported yet.
    pub fn running(&self) -> usize {
        self.running
    }

    /// Results that have arrived.
    pub fn drain(&mut self) -> Vec<JobDone> {
        let done: Vec<JobDone> = self.receiver.try_iter().collect();
        self.running = self.running.saturating_sub(done.len());
        done
    }

    /// Runs `work` on a new thread; its result comes back through
    /// [`Self::drain`]. If the thread cannot start, `work` is run here.
    pub fn spawn(&mut self, name: &str, work: impl FnOnce() -> JobDone + Send + 'static) {
        let sender = self.sender.clone();
        let ctx = self.ctx.clone();
        self.running += 1;
        let spawned = std::thread::Builder::new()
            .name(format!("tapwright-{name}"))
            .spawn(move || {
                let _ = sender.send(work());
                if let Some(ctx) = ctx {
                    ctx.request_repaint();
                }
            });
        if let Err(error) = spawned {
            let _ = self.sender.send(JobDone::Saved(Err(format!(
                "Could not start a background task: {error}."
            ))));
        }
    }
}

/// Lists the input devices.
pub fn list_devices() -> JobDone {
    JobDone::Devices(crate::capture::list_input_devices())
}

/// Opens a capture source.
pub fn start_capture(
    generation: u64,
    source: SourceChoice,
    settings: CaptureSettings,
    notify: crate::capture::Notify,
) -> JobDone {
    JobDone::CaptureStarted {
        generation,
        result: CaptureHandle::start(source, settings, Some(notify)),
    }
}

/// Shows a file dialog and reports the chosen path.
pub fn choose_file(purpose: FilePurpose, suggested_name: String) -> JobDone {
    let dialog = rfd::FileDialog::new();
    let path = match purpose {
        FilePurpose::OpenRecording => dialog
            .set_title("Open a recording")
            .add_filter("WAV recording", &["wav", "WAV"])
            .pick_file(),
        FilePurpose::SaveTaps => dialog
            .set_title("Save the kept taps as WAV")
            .add_filter("WAV recording", &["wav"])
            .set_file_name(suggested_name)
            .save_file(),
        FilePurpose::ExportPass => dialog
            .set_title("Export the pass as JSON")
            .add_filter("JSON", &["json"])
            .set_file_name(suggested_name)
            .save_file(),
    };
    JobDone::FileChosen { purpose, path }
}

/// Reads a WAV file and measures every tap in it.
pub fn analyse_recording(
    path: PathBuf,
    trigger: TriggerSettings,
    analysis: AnalysisSettings,
) -> JobDone {
    let result =
        read_and_analyse(&path, &trigger, &analysis).map_err(|e| crate::cli::one_sentence(&e));
    JobDone::RecordingAnalysed { path, result }
}

/// Measures the given tap records again with `analysis` (after the maker
/// changed the band or the number of modes).
pub fn remeasure_taps(records: Vec<(usize, FoundTap, u32)>, analysis: AnalysisSettings) -> JobDone {
    let mut analyzer: Option<TapAnalyzer> = None;
    let measured = records
        .into_iter()
        .map(|(index, record, sample_rate_hz)| {
            let fs = f64::from(sample_rate_hz);
            let analyzer = match &mut analyzer {
                Some(a) if a.sample_rate_hz() == fs => a,
                slot => slot.insert(TapAnalyzer::new(analysis.clone(), fs)),
            };
            (index, analyzer.analyze(&record))
        })
        .collect();
    JobDone::TapsRemeasured(measured)
}

fn read_and_analyse(
    path: &Path,
    trigger: &TriggerSettings,
    analysis: &AnalysisSettings,
) -> anyhow::Result<Vec<TapEntry>> {
    let recording = crate::wav_io::read_mono(path)?;
    let taps = taps_of_recording(
        &recording.samples,
        recording.sample_rate_hz,
        trigger,
        analysis,
    );
    if taps.is_empty() {
        anyhow::bail!(
            "no taps were found in {} (is the trigger margin of {:.0} dB too high for it?)",
            path.display(),
            trigger.margin_db
        );
    }
    Ok(taps)
}

/// Writes a recording as 32-bit float WAV (atomically).
pub fn save_wav(path: PathBuf, recording: crate::wav_io::MonoRecording) -> JobDone {
    let result =
        crate::wav_io::write_mono(&path, recording.sample_rate_hz, &recording.samples, false)
            .map(|()| format!("Saved the kept taps to {}.", path.display()))
            .map_err(|e| crate::cli::one_sentence(&anyhow::Error::new(e)));
    JobDone::Saved(result)
}

/// Writes text to a file atomically (temporary file beside it, then rename).
pub fn save_text(path: PathBuf, text: String, what: &'static str) -> JobDone {
    let result = write_atomic(&path, text.as_bytes())
        .map(|()| format!("Saved {what} to {}.", path.display()))
        .map_err(|e| crate::cli::one_sentence(&e));
    JobDone::Saved(result)
}

fn write_atomic(path: &Path, bytes: &[u8]) -> anyhow::Result<()> {
    use std::io::Write as _;
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut temp = tempfile::NamedTempFile::new_in(&folder)
        .with_context(|| format!("cannot write in the folder {}", folder.display()))?;
    temp.write_all(bytes)
        .and_then(|()| temp.as_file().sync_all())
        .with_context(|| format!("cannot write {}", path.display()))?;
    temp.persist(path)
        .map_err(|e| e.error)
        .with_context(|| format!("cannot save {}", path.display()))?;
    Ok(())
}

/// Reads a build file.
pub fn load_build(path: PathBuf) -> JobDone {
    let result = crate::ledger::store::load(&path)
        .map_err(|e| crate::cli::one_sentence(&anyhow::Error::new(e)));
    JobDone::BuildLoaded { path, result }
}

/// Writes a build file (atomically, keeping a backup).
pub fn save_build(path: PathBuf, build: Build) -> JobDone {
    let result = crate::ledger::store::save(&path, &build)
        .map_err(|e| crate::cli::one_sentence(&anyhow::Error::new(e)));
    JobDone::BuildSaved { path, result }
}
