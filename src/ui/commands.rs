//! What the window's areas may ask of the app.
//!
//! Widgets never change the model directly: they push an [`AppCommand`]
//! into the [`AreaContext`](crate::ui::context::AreaContext); the shell
//! applies all commands once per frame, after every area has been drawn.

use std::path::PathBuf;

use crate::ledger::{Build, Family, LedgerError, PassInput};

/// The places in the window (README.md, "The workbench").
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum Area {
    /// Live input, spectrum, modes and taps.
    #[default]
    Listen,
    /// The build's parts and passes.
    Ledger,
    /// The cavity estimator and the air check.
    Air,
    /// Wood samples graded from bar taps.
    Stock,
    /// A tone at a mode's frequency for Chladni patterns.
    Drive,
}

impl Area {
    /// Every area, in the order of the top bar.
    pub const ALL: [Area; 5] = [
        Area::Listen,
        Area::Ledger,
        Area::Air,
        Area::Stock,
        Area::Drive,
    ];

    /// The name on screen.
    pub fn title(self) -> &'static str {
        match self {
            Area::Listen => "Listen",
            Area::Ledger => "Ledger",
            Area::Air => "Air",
            Area::Stock => "Stock",
            Area::Drive => "Drive",
        }
    }
}

/// A change to a build, applied by the app once per frame. Returns a short
/// sentence for the status line on success ("Added part \"top\"."), or the
/// ledger's refusal, shown inline.
pub type BuildEdit = Box<dyn FnOnce(&mut Build) -> Result<String, LedgerError> + Send>;

/// Everything an area may ask the app to do.
pub enum AppCommand {
    /// Show another area.
    ShowArea(Area),
    /// Start a new, empty build (replaces the open one; the caller asks the
    /// maker first if the open one has unsaved changes).
    NewBuild {
        /// The build's name.
        name: String,
        /// The instrument family.
        family: Family,
    },
    /// Load a build file (RON) in a worker thread and make it the open build.
    OpenBuild(PathBuf),
    /// Save the open build to the path it came from (or was last saved to).
    SaveBuild,
    /// Save the open build to a new path and keep that path.
    SaveBuildAs(PathBuf),
    /// Forget the open build.
    CloseBuild,
    /// Any change to the open build, through the ledger's own commands
    /// (`add_part`, `set_label`, `set_target` …). Marks the build unsaved.
    EditBuild {
        /// What it does, for error messages ("setting the target").
        description: String,
        /// The change itself.
        edit: BuildEdit,
    },
    /// Record a pass on a part of the open build. `labels` runs beside
    /// `input.modes` (same order): a label chosen in Listen is put on its
    /// mode after the ledger's own carry-over, and added to the part's label
    /// set if the maker typed a new one.
    RecordPass {
        /// The part's name.
        part: String,
        /// The pass.
        input: PassInput,
        /// One optional label per mode of `input.modes`.
        labels: Vec<Option<String>>,
    },
    /// Make Listen offer the labels of this part of the open build (None:
    /// the trade's preset labels).
    SetListenPart(Option<String>),
    /// Show a sentence in the status line.
    ShowMessage(String),
    /// Show a problem as one sentence in the status line.
    ShowError(String),
    /// Something for the Listen area (input, taps, modes, files).
    Listen(ListenCommand),
}

/// Where Listen takes its sound from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SourcePick {
    /// The bundled demo recording, replayed as if live.
    Demo,
    /// An input device (None: the system default).
    Device(Option<String>),
}

/// What the Listen area asks of the app.
#[derive(Clone, Debug, PartialEq)]
pub enum ListenCommand {
    /// Listen to another source (stops the current one).
    ChooseSource(SourcePick),
    /// List the input devices again.
    RefreshDevices,
    /// New trigger and analysis settings (applied to taps that follow).
    SetSettings(crate::audio::CaptureSettings),
    /// Average this many of the latest kept taps.
    SetTapsToAverage(usize),
    /// Leave a tap out of the pass (true) or take it back (false).
    SetTapLeftOut {
        /// The tap's number.
        tap_index: usize,
        /// Out or back in.
        left_out: bool,
    },
    /// Put a label on a mode of the pass (None clears it).
    SetModeLabel {
        /// Index into the pass's modes.
        mode_index: usize,
        /// The label.
        label: Option<String>,
    },
    /// Forget the taps and start a new pass.
    NewPass,
    /// Read a WAV file and show its taps as the pass.
    OpenRecording(PathBuf),
    /// Show the file dialog to open a recording.
    ChooseRecordingFile,
    /// Show the file dialog to save the kept taps as WAV.
    ChooseSaveTapsFile,
    /// Save the kept taps as WAV to this path.
    SaveTaps(PathBuf),
    /// Show the file dialog to export the pass as JSON.
    ChooseExportFile,
    /// Export the pass as JSON to this path.
    ExportPass(PathBuf),
    /// Reference pitch for note names, Hz.
    SetA4(f64),
    /// Which preset label set to offer when no part is chosen.
    SetLabelSet(usize),
}

impl std::fmt::Debug for AppCommand {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::ShowArea(area) => write!(f, "ShowArea({area:?})"),
            Self::NewBuild { name, family } => write!(f, "NewBuild({name:?}, {family:?})"),
            Self::OpenBuild(path) => write!(f, "OpenBuild({path:?})"),
            Self::SaveBuild => write!(f, "SaveBuild"),
            Self::SaveBuildAs(path) => write!(f, "SaveBuildAs({path:?})"),
            Self::CloseBuild => write!(f, "CloseBuild"),
            Self::EditBuild { description, .. } => write!(f, "EditBuild({description:?})"),
            Self::RecordPass { part, labels, .. } => {
                write!(f, "RecordPass({part:?}, {labels:?})")
            }
            Self::SetListenPart(part) => write!(f, "SetListenPart({part:?})"),
            Self::ShowMessage(text) => write!(f, "ShowMessage({text:?})"),
            Self::ShowError(text) => write!(f, "ShowError({text:?})"),
            Self::Listen(command) => write!(f, "Listen({command:?})"),
        }
    }
}
