//! One-shot work that must not block the window: file dialogs, reading and
//! analysing a recording, saving files, listing devices, opening a capture
//! source, loading and saving builds. Each job runs on its own thread and
//! sends one [`JobDone`] back over a channel, then asks egui to repaint.

use std::path::{Path, PathBuf};
use std::sync::mpsc::{self, Receiver, Sender};

use eframe::egui;

use crate::analysis::{AnalysisSettings, FoundTap, Tap, TapAnalysis, TapAnalyzer, TriggerSettings};
use crate::audio::{AudioError, CaptureHandle, CaptureSettings, DeviceInfo, SourceChoice};
use crate::ledger::store::{DiskFingerprint, StoreError};
use crate::ledger::Build;

use crate::ui::session::taps_of_stream;

/// What a file dialog was opened for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FilePurpose {
    /// Open a WAV recording.
    OpenRecording,
    /// Save the kept taps as WAV.
    SaveTaps,
    /// Export the pass as JSON.
    ExportPass,
    /// Save the open build under another name (after its file changed on
    /// disk, or when closing a build that has no file).
    SaveBuildCopy,
}

/// The result of a job.
pub enum JobDone {
    /// The input devices, or why they cannot be listed.
    Devices(Result<Vec<DeviceInfo>, AudioError>),
    /// A capture source opened (or failed to). `generation` tells stale
    /// results (the maker chose another source meanwhile) from current ones.
    CaptureStarted {
        generation: u64,
        result: Result<CaptureHandle, AudioError>,
    },
    /// The maker chose a file (None: the dialog was cancelled).
    FileChosen {
        purpose: FilePurpose,
        path: Option<PathBuf>,
    },
    /// A recording was read and analysed.
    RecordingAnalysed {
        path: PathBuf,
        result: Result<Vec<Tap>, String>,
    },
    /// Taps already heard, measured again with new analysis settings:
    /// (tap number, new measurement).
    TapsRemeasured(Vec<(usize, TapAnalysis)>),
    /// A file was written: the sentence to show, or the problem.
    Saved(Result<String, String>),
    /// A build file was read, with the fingerprint of what was read.
    BuildLoaded {
        path: PathBuf,
        result: Result<(Build, DiskFingerprint), String>,
    },
    /// The build saver finished a save to `path` of the snapshot stamped
    /// `stamp`; `handled` counts the requests this answers (older snapshots
    /// of the same file still queued were skipped in favour of this one).
    BuildSaved {
        path: PathBuf,
        stamp: SaveStamp,
        handled: usize,
        result: Result<(), SaveProblem>,
    },
}

/// Which snapshot of which open build a save wrote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SaveStamp {
    /// Counts the builds opened or started in the window.
    pub document: u64,
    /// Counts the changes to that build.
    pub generation: u64,
}

/// Why a save did not happen.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SaveProblem {
    /// The file changed on disk since this window read or wrote it; the
    /// sentence to show.
    ChangedOnDisk(String),
    /// Anything else (no permission, disk full, invalid build ...).
    Failed(String),
}

/// How a save treats a file that changed on disk.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SaveCheck {
    /// Refuse if the file is not what this window last read or wrote.
    IfUnchanged,
    /// Write over whatever is there (the maker chose to).
    Overwrite,
}

/// What the build saver is told, in order.
enum SaverMessage {
    /// The window now holds `path` as it was read (fingerprint), or holds
    /// no file (None).
    Track(Option<(PathBuf, DiskFingerprint)>),
    /// Save this snapshot.
    Save {
        path: PathBuf,
        build: Box<Build>,
        stamp: SaveStamp,
        check: SaveCheck,
    },
}

/// Starts jobs and collects their results.
pub struct Jobs {
    sender: Sender<JobDone>,
    receiver: Receiver<JobDone>,
    ctx: Option<egui::Context>,
    running: usize,
    saver: Option<Sender<SaverMessage>>,
}

impl Default for Jobs {
    fn default() -> Self {
        let (sender, receiver) = mpsc::channel();
        Self {
            sender,
            receiver,
            ctx: None,
            running: 0,
            saver: None,
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
        let answered: usize = done
            .iter()
            .map(|d| match d {
                JobDone::BuildSaved { handled, .. } => *handled,
                _ => 1,
            })
            .sum();
        self.running = self.running.saturating_sub(answered);
        done
    }

    /// Queues a save of `build` to `path` on the build saver: one thread
    /// that writes the window's builds one at a time, in the order asked,
    /// skipping a snapshot when a newer one of the same file is already
    /// waiting. The answer comes back as [`JobDone::BuildSaved`].
    pub fn save_build(&mut self, path: PathBuf, build: Build, stamp: SaveStamp, check: SaveCheck) {
        self.running += 1;
        let message = SaverMessage::Save {
            path,
            build: Box::new(build),
            stamp,
            check,
        };
        if let Err(mpsc::SendError(message)) = self.send_to_saver(message) {
            self.running -= 1;
            if let SaverMessage::Save { path, stamp, .. } = message {
                let _ = self.sender.send(JobDone::BuildSaved {
                    path,
                    stamp,
                    handled: 0,
                    result: Err(SaveProblem::Failed(
                        "Could not start the background task that saves builds.".to_owned(),
                    )),
                });
            }
        }
    }

    /// Tells the build saver which file the window holds now and what was
    /// in it (after opening a build), or that it holds none.
    pub fn track_build_file(&mut self, file: Option<(PathBuf, DiskFingerprint)>) {
        let _ = self.send_to_saver(SaverMessage::Track(file));
    }

    fn send_to_saver(
        &mut self,
        message: SaverMessage,
    ) -> Result<(), mpsc::SendError<SaverMessage>> {
        if self.saver.is_none() {
            let (sender, receiver) = mpsc::channel();
            let results = self.sender.clone();
            let ctx = self.ctx.clone();
            let started = std::thread::Builder::new()
                .name("tapwright-build-saver".to_owned())
                .spawn(move || run_build_saver(&receiver, &results, ctx.as_ref()));
            if started.is_err() {
                return Err(mpsc::SendError(message));
            }
            self.saver = Some(sender);
        }
        match &self.saver {
            Some(saver) => saver.send(message),
            None => Err(mpsc::SendError(message)),
        }
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
    JobDone::Devices(crate::audio::list_input_devices())
}

/// Opens a capture source.
pub fn start_capture(
    generation: u64,
    source: SourceChoice,
    settings: CaptureSettings,
    notify: crate::audio::Notify,
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
        FilePurpose::SaveBuildCopy => dialog
            .set_title("Save the build as")
            .add_filter("tapwright build", &["ron"])
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
        read_and_analyse(&path, &trigger, &analysis).map_err(|e| crate::text::one_sentence(&e));
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
) -> anyhow::Result<Vec<Tap>> {
    let mut stream = crate::wav_io::WavStream::open(path)?;
    let taps = taps_of_stream(&mut stream, trigger, analysis)?;
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
            .map_err(|e| crate::text::one_sentence(&anyhow::Error::new(e)));
    JobDone::Saved(result)
}

/// Writes text to a file atomically (see [`crate::atomic_file`]).
pub fn save_text(path: PathBuf, text: String, what: &'static str) -> JobDone {
    let result = crate::atomic_file::write_bytes_atomically(&path, text.as_bytes())
        .map(|()| format!("Saved {what} to {}.", path.display()))
        .map_err(|e| {
            crate::text::one_sentence(
                &anyhow::Error::new(e).context(format!("cannot save {}", path.display())),
            )
        });
    JobDone::Saved(result)
}

/// Reads a build file and the fingerprint of what was read.
pub fn load_build(path: PathBuf) -> JobDone {
    let result = crate::ledger::store::load_with_fingerprint(&path)
        .map_err(|e| crate::text::one_sentence(&anyhow::Error::new(e)));
    JobDone::BuildLoaded { path, result }
}

/// The build saver's loop: takes every message waiting, then works through
/// them in order. A save is skipped (counted into the answer of the newer
/// one) when a newer save of the same file is in the same batch, so the
/// newest snapshot is the one left on disk. Ends when the window drops its
/// side of the channel.
fn run_build_saver(
    receiver: &Receiver<SaverMessage>,
    results: &Sender<JobDone>,
    ctx: Option<&egui::Context>,
) {
    let mut known: Option<(PathBuf, DiskFingerprint)> = None;
    while let Ok(first) = receiver.recv() {
        let mut batch: Vec<SaverMessage> =
            std::iter::once(first).chain(receiver.try_iter()).collect();
        let mut skipped: Vec<(PathBuf, usize, bool)> = Vec::new();
        for index in 0..batch.len() {
            let newer_save_waiting = match &batch[index] {
                SaverMessage::Save { path, .. } => batch[index + 1..]
                    .iter()
                    .any(|m| matches!(m, SaverMessage::Save { path: p, .. } if p == path)),
                SaverMessage::Track(_) => false,
            };
            let message = std::mem::replace(&mut batch[index], SaverMessage::Track(None));
            match message {
                SaverMessage::Track(file) => known = file,
                SaverMessage::Save { path, check, .. } if newer_save_waiting => {
                    // Remember that the maker chose to overwrite, for the
                    // newer snapshot that replaces this one.
                    let overwrite = check == SaveCheck::Overwrite;
                    match skipped.iter_mut().find(|(p, ..)| *p == path) {
                        Some(entry) => {
                            entry.1 += 1;
                            entry.2 |= overwrite;
                        }
                        None => skipped.push((path, 1, overwrite)),
                    }
                }
                SaverMessage::Save {
                    path,
                    build,
                    stamp,
                    check,
                } => {
                    let (earlier, overwrite) = match skipped.iter().position(|(p, ..)| *p == path) {
                        Some(at) => {
                            let (_, count, overwrite) = skipped.remove(at);
                            (count, overwrite)
                        }
                        None => (0, false),
                    };
                    let check = if overwrite {
                        SaveCheck::Overwrite
                    } else {
                        check
                    };
                    let result = save_one_build(&path, &build, check, &mut known);
                    let _ = results.send(JobDone::BuildSaved {
                        path,
                        stamp,
                        handled: earlier + 1,
                        result,
                    });
                    if let Some(ctx) = ctx {
                        ctx.request_repaint();
                    }
                }
            }
        }
    }
}

/// One save by the build saver. With [`SaveCheck::IfUnchanged`] and the
/// file the window last read or wrote, the save is refused if the file
/// changed since; saving to another file (Save as…) does not look, as the
/// dialog already asked about replacing it.
fn save_one_build(
    path: &Path,
    build: &Build,
    check: SaveCheck,
    known: &mut Option<(PathBuf, DiskFingerprint)>,
) -> Result<(), SaveProblem> {
    let expected = match (check, &*known) {
        (SaveCheck::IfUnchanged, Some((known_path, fingerprint))) if known_path == path => {
            Some(fingerprint.clone())
        }
        _ => None,
    };
    match crate::ledger::store::save_checked(path, build, expected.as_ref()) {
        Ok(fingerprint) => {
            *known = Some((path.to_path_buf(), fingerprint));
            Ok(())
        }
        Err(error @ StoreError::ChangedOnDisk { .. }) => Err(SaveProblem::ChangedOnDisk(
            crate::text::one_sentence(&anyhow::Error::new(error)),
        )),
        Err(error) => Err(SaveProblem::Failed(crate::text::one_sentence(
            &anyhow::Error::new(error),
        ))),
    }
}
