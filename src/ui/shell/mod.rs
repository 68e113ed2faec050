//! The window's shell: what holds the window together.
//!
//! [`TapwrightApp`] keeps its state in a few groups: the open document
//! (the build, its file and saving, the conflict and close prompts,
//! recording a pass: `document`, `prompts`, `saver`), the input (the
//! source and its capture events: `input`), the pass being measured, each
//! area's view state, and the window itself (`frame`). Each frame it takes
//! the news from the background (finished jobs, saves, capture events),
//! draws the areas, and then applies the commands they pushed
//! (`dispatch`). Audio, analysis of opened files, file dialogs and saves
//! run on other threads through the window's job runner (`ui::jobs`, the
//! shell's own jobs in `work`); the capture worker wakes the window
//! through a repaint hook, so an idle window does not repaint.

mod dispatch;
mod document;
mod export;
mod frame;
mod help;
mod input;
mod prompts;
mod saver;
mod window;
mod work;

use std::path::{Path, PathBuf};
use std::time::Instant;

use eframe::egui;

use crate::analysis::{PassResult, DEFAULT_A4_HZ};
use crate::audio::{OutputChoice, Pacing};
use crate::ledger::Build;
use crate::text::sentence;
use crate::ui::areas::drive::{self, DriveAreaState};
use crate::ui::commands::{AppCommand, Area, SourcePick};
use crate::ui::context::InputView;
use crate::ui::jobs::{Inbox, Jobs};
use crate::ui::session::ListenSession;

use document::OpenDocument;
use frame::{AreaStates, FrameTiming, WindowView};
use input::InputState;
use work::ShellJob;

pub use window::{run_workbench, WorkbenchOptions};

/// Where the window takes its sound from when it opens.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum StartSource {
    /// The bundled demo recording.
    Demo,
    /// An input device (None: the default); if it cannot be opened the
    /// window says why and plays the demo instead.
    Device(Option<String>),
}

/// How the window starts.
#[derive(Clone, Debug)]
pub struct AppOptions {
    /// Where the sound comes from at first.
    pub source: StartSource,
    /// How fast the demo recording is delivered (real time in the window;
    /// tests may go faster).
    pub demo_pacing: Pacing,
    /// A build file to open at start.
    pub build: Option<PathBuf>,
    /// With the demo recording (chosen, or because no microphone could be
    /// opened) and no build file, open the bundled sample build too, so a
    /// newcomer sees a ledger. It has no path: saving asks for one.
    pub sample_build_with_demo: bool,
    /// When the program started, to report the time to the first frame
    /// (printed on stderr when set).
    pub started_at: Option<Instant>,
    /// Where the Drive area plays its tone.
    pub drive_output: OutputChoice,
}

impl Default for AppOptions {
    fn default() -> Self {
        Self {
            source: StartSource::Device(None),
            demo_pacing: Pacing::RealTime,
            build: None,
            sample_build_with_demo: false,
            started_at: None,
            drive_output: OutputChoice::default(),
        }
    }
}

/// The preset label sets Listen offers when no part of a build is chosen:
/// (name on screen, labels). Trade terms (README.md, "The workbench").
pub const LABEL_SETS: [(&str, &[&str]); 4] = [
    (
        "violin-family free plate",
        crate::ledger::labels::VIOLIN_FREE_PLATE,
    ),
    (
        "guitar-family free plate",
        crate::ledger::labels::GUITAR_FREE_PLATE,
    ),
    ("violin-family body", crate::ledger::labels::VIOLIN_BODY),
    ("guitar-family body", crate::ledger::labels::GUITAR_BODY),
];

/// The status line: one sentence, and whether it reports a problem.
#[derive(Clone, Debug)]
pub struct Status {
    /// The sentence.
    pub text: String,
    /// True for problems.
    pub is_error: bool,
}

/// The pass being measured in Listen, and how its modes are named.
#[derive(Debug)]
struct PassState {
    session: ListenSession,
    /// Reference pitch for note names, Hz.
    a4_hz: f64,
    /// The preset label set offered when no part is chosen.
    label_set: usize,
    /// The part of the open build whose labels Listen offers.
    listen_part: Option<String>,
}

impl PassState {
    /// The labels Listen offers: the chosen part's, else the chosen preset
    /// set.
    fn label_choices(&self, build: Option<&Build>) -> Vec<String> {
        let from_part = self
            .listen_part
            .as_deref()
            .and_then(|name| build?.part(name))
            .map(|part| part.labels().to_vec());
        from_part.unwrap_or_else(|| {
            LABEL_SETS[self.label_set.min(LABEL_SETS.len() - 1)]
                .1
                .iter()
                .map(|s| (*s).to_owned())
                .collect()
        })
    }
}

/// The workbench: everything the window shows and remembers.
pub struct TapwrightApp {
    options: AppOptions,
    /// The egui context, once the first frame has given it.
    ctx: Option<egui::Context>,
    /// The window's runner of background work, and the shell's own inbox.
    jobs: Jobs,
    work: Inbox<ShellJob>,
    input: InputState,
    pass: PassState,
    document: OpenDocument,
    areas: AreaStates,
    view: WindowView,
    /// What the areas asked for this frame, applied after drawing.
    commands: Vec<AppCommand>,
    timing: FrameTiming,
}

impl TapwrightApp {
    /// A new workbench. Nothing starts until the first frame (which gives
    /// the app its egui context).
    pub fn new(options: AppOptions) -> Self {
        let pick = match &options.source {
            StartSource::Demo => SourcePick::Demo,
            StartSource::Device(name) => SourcePick::Device(name.clone()),
        };
        let jobs = Jobs::default();
        let input = InputState::new(pick);
        Self {
            ctx: None,
            work: jobs.inbox(),
            document: OpenDocument::new(&jobs),
            areas: AreaStates::new(&input.settings, options.drive_output.clone()),
            pass: PassState {
                session: ListenSession::default(),
                a4_hz: DEFAULT_A4_HZ,
                label_set: 0,
                listen_part: None,
            },
            input,
            view: WindowView::default(),
            commands: Vec::new(),
            timing: FrameTiming::new(options.started_at),
            jobs,
            options,
        }
    }

    /// The pass being measured.
    pub fn session(&self) -> &ListenSession {
        &self.pass.session
    }

    /// The current Listen result.
    pub fn pass(&self) -> Option<&PassResult> {
        self.pass.session.pass()
    }

    /// The input source's state.
    pub fn input(&self) -> &InputView {
        &self.input.view
    }

    /// The status line.
    pub fn status(&self) -> Option<&Status> {
        self.view.status.as_ref()
    }

    /// The area shown.
    pub fn area(&self) -> Area {
        self.view.area
    }

    /// The Drive area's state (its tone).
    pub fn drive(&self) -> &DriveAreaState {
        &self.areas.drive
    }

    /// The open build.
    pub fn build(&self) -> Option<&Build> {
        self.document.build()
    }

    /// True when the open build has changes not saved to its file.
    pub fn build_unsaved(&self) -> bool {
        self.document.unsaved()
    }

    /// The part whose labels Listen offers.
    pub fn listen_part(&self) -> Option<&str> {
        self.pass.listen_part.as_deref()
    }

    /// The file that changed on disk under the open build, while the window
    /// waits for the maker's answer about it.
    pub fn save_conflict(&self) -> Option<&Path> {
        self.document.conflict()
    }

    /// True while the window asks whether to save before closing.
    pub fn close_prompt_shown(&self) -> bool {
        self.document.closing.prompt
    }

    /// True once the maker agreed to close (or nothing was unsaved).
    pub fn close_confirmed(&self) -> bool {
        self.document.closing.confirmed
    }

    /// True while background work (a file being read, a source being
    /// opened, a build being saved …) has not reported.
    pub fn is_busy(&self) -> bool {
        self.jobs.running() > 0
    }

    /// Queues a command as if an area had pushed it; it is applied at the
    /// end of the next frame (for tests and for code driving the window).
    pub fn queue(&mut self, command: AppCommand) {
        self.commands.push(command);
    }

    /// Draws one frame into `ui` (the whole window) and applies the commands
    /// it produced. eframe calls it through [`eframe::App::ui`]; tests call
    /// it directly.
    pub fn show(&mut self, ui: &mut egui::Ui) {
        if self.ctx.is_none() {
            self.first_frame(ui.ctx());
        }
        self.timing.count_frame();
        self.take_job_results();
        self.take_finished_saves();
        self.take_capture_events();
        self.take_dropped_files(ui.ctx());
        drive::each_frame(ui, &mut self.areas.drive, &self.jobs);
        self.hold_close_if_unsaved(ui.ctx());
        self.draw(ui);
        self.draw_conflict_prompt(ui.ctx());
        self.draw_close_prompt(ui.ctx());
        if !self.commands.is_empty() {
            // The frame just drawn predates the commands: draw once more.
            ui.ctx().request_repaint();
            self.apply_commands();
        }
        self.schedule_repaint(ui.ctx());
    }

    fn first_frame(&mut self, ctx: &egui::Context) {
        self.ctx = Some(ctx.clone());
        self.jobs.set_context(ctx);
        frame::set_text_sizes(ctx);
        ctx.set_theme(egui::ThemePreference::Dark);
        self.timing.first_frame();
        self.work.spawn("devices", work::list_devices);
        let pick = self.input.view.pick.clone();
        if pick == SourcePick::Demo {
            self.open_sample_build_if_wanted();
        }
        self.start_source(pick);
        if let Some(path) = self.options.build.clone() {
            self.commands.push(AppCommand::OpenBuild(path));
        }
    }

    fn set_message(&mut self, text: String) {
        self.view.status = Some(Status {
            text,
            is_error: false,
        });
    }

    fn set_error(&mut self, text: String) {
        self.view.status = Some(Status {
            text: sentence(&text),
            is_error: true,
        });
    }
}

impl eframe::App for TapwrightApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }

    fn on_exit(&mut self, _gl: Option<&eframe::glow::Context>) {
        // Fade the drive tone out before the window goes.
        self.areas.drive.stop_and_close();
    }
}

impl Drop for TapwrightApp {
    fn drop(&mut self) {
        self.input.stop();
    }
}

/// The file name of `path` for display.
fn file_name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string())
}
