//! The shell's background jobs (run by the window's job runner, see
//! `ui::jobs`): listing devices, opening the capture source, file dialogs,
//! reading and analysing a recording, measuring the taps again, saving the
//! kept taps and the pass, and loading a build. Each returns one
//! [`ShellJob`].

use std::path::{Path, PathBuf};

use crate::analysis::{AnalysisSettings, FoundTap, Tap, TapAnalysis, TapAnalyzer, TriggerSettings};
use crate::audio::{AudioError, CaptureHandle, CaptureSettings, DeviceInfo, Notify, SourceChoice};
use crate::ledger::store::DiskFingerprint;
use crate::ledger::Build;
use crate::text::{error_sentence, one_sentence};
use crate::ui::dialogs::{FileDialog, EXPORT_PASS, OPEN_RECORDING, SAVE_BUILD_AS, SAVE_TAPS};
use crate::ui::session::taps_of_stream;

/// What a file dialog of the shell was opened for.
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

impl FilePurpose {
    fn dialog(self) -> FileDialog {
        match self {
            Self::OpenRecording => OPEN_RECORDING,
            Self::SaveTaps => SAVE_TAPS,
            Self::ExportPass => EXPORT_PASS,
            Self::SaveBuildCopy => SAVE_BUILD_AS,
        }
    }
}

/// The answer of one of the shell's jobs.
pub enum ShellJob {
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
}

/// Lists the input devices.
pub fn list_devices() -> ShellJob {
    ShellJob::Devices(crate::audio::list_input_devices())
}

/// Opens a capture source.
pub fn start_capture(
    generation: u64,
    source: SourceChoice,
    settings: CaptureSettings,
    notify: Notify,
) -> ShellJob {
    ShellJob::CaptureStarted {
        generation,
        result: CaptureHandle::start(source, settings, Some(notify)),
    }
}

/// Shows a file dialog and reports the chosen path.
pub fn choose_file(purpose: FilePurpose, suggested_name: &str) -> ShellJob {
    let dialog = purpose.dialog();
    let path = match purpose {
        FilePurpose::OpenRecording => dialog.pick(),
        _ => dialog.save(suggested_name),
    };
    ShellJob::FileChosen { purpose, path }
}

/// Reads a WAV file and measures every tap in it.
pub fn analyse_recording(
    path: PathBuf,
    trigger: TriggerSettings,
    analysis: AnalysisSettings,
) -> ShellJob {
    let result = read_and_analyse(&path, &trigger, &analysis).map_err(|e| one_sentence(&e));
    ShellJob::RecordingAnalysed { path, result }
}

/// Measures the given tap records again with `analysis` (after the maker
/// changed the band or the number of modes).
pub fn remeasure_taps(
    records: Vec<(usize, FoundTap, u32)>,
    analysis: AnalysisSettings,
) -> ShellJob {
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
    ShellJob::TapsRemeasured(measured)
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
pub fn save_wav(path: PathBuf, recording: crate::wav_io::MonoRecording) -> ShellJob {
    let result =
        crate::wav_io::write_mono(&path, recording.sample_rate_hz, &recording.samples, false)
            .map(|()| format!("Saved the kept taps to {}.", path.display()))
            .map_err(error_sentence);
    ShellJob::Saved(result)
}

/// Writes text to a file atomically (see [`crate::atomic_file`]).
pub fn save_text(path: PathBuf, text: String, what: &'static str) -> ShellJob {
    let result = crate::atomic_file::write_bytes_atomically(&path, text.as_bytes())
        .map(|()| format!("Saved {what} to {}.", path.display()))
        .map_err(|e| {
            one_sentence(&anyhow::Error::new(e).context(format!("cannot save {}", path.display())))
        });
    ShellJob::Saved(result)
}

/// Reads a build file and the fingerprint of what was read.
pub fn load_build(path: PathBuf) -> ShellJob {
    let result = crate::ledger::store::load_with_fingerprint(&path).map_err(error_sentence);
    ShellJob::BuildLoaded { path, result }
}
