//! The app: its state, the frame (drain news, draw the areas, apply the
//! commands they pushed), and how each command changes the state.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant};

use eframe::egui;

use crate::analysis::{PassResult, DEFAULT_A4_HZ};
use crate::audio::{
    CaptureEvent, CaptureHandle, CaptureSettings, DeviceInfo, InputLevel, Pacing, SourceChoice,
};
use crate::ledger::Build;
use crate::text::sentence;

use crate::ui::areas::air::{self as air_area, AirAreaState};
use crate::ui::areas::drive::{self as drive_area, DriveAreaState};
use crate::ui::areas::ledger::{self as ledger_area, LedgerAreaState};
use crate::ui::areas::listen::{self as listen_area, ListenView};
use crate::ui::areas::stock::{self as stock_area, StockAreaState};
use crate::ui::commands::{AppCommand, Area, AreaContext, ListenCommand, SourcePick};
use crate::ui::jobs::{self, FilePurpose, JobDone, Jobs, SaveCheck, SaveProblem, SaveStamp};
use crate::ui::session::ListenSession;

mod export;
mod help;

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
    pub drive_output: crate::audio::OutputChoice,
}

impl Default for AppOptions {
    fn default() -> Self {
        Self {
            source: StartSource::Device(None),
            demo_pacing: Pacing::RealTime,
            build: None,
            sample_build_with_demo: false,
            started_at: None,
            drive_output: crate::audio::OutputChoice::default(),
        }
    }
}

/// The preset label sets Listen offers when no part of a build is chosen:
/// (name on screen, labels). Trade terms, see `vocabulary.md`.
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

/// What the current sound source is doing.
#[derive(Clone, Debug, PartialEq)]
pub enum SourceState {
    /// Being opened.
    Starting,
    /// Delivering sound.
    Running,
    /// Lost; the capture worker is trying again.
    Trouble(String),
    /// The demo recording played to its end.
    Ended,
    /// Showing a recording opened from a file.
    File(PathBuf),
    /// Could not be opened.
    Failed(String),
}

/// The status line: one sentence, and whether it reports a problem.
#[derive(Clone, Debug)]
pub struct Status {
    /// The sentence.
    pub text: String,
    /// True for problems.
    pub is_error: bool,
}

/// Input state the Listen area shows.
#[derive(Debug)]
pub struct InputView {
    /// The source chosen.
    pub pick: SourcePick,
    /// What it is doing.
    pub state: SourceState,
    /// Its name for display.
    pub description: String,
    /// Its sample rate, once open.
    pub sample_rate_hz: Option<u32>,
    /// The last level reading.
    pub level: Option<InputLevel>,
    /// When the input last clipped.
    pub clipped_at: Option<Instant>,
    /// Input devices found (empty until listed).
    pub devices: Vec<DeviceInfo>,
    /// Why devices could not be listed.
    pub devices_problem: Option<String>,
}

/// The workbench: everything the window shows and remembers.
pub struct TapwrightApp {
    options: AppOptions,
    area: Area,
    dark: bool,
    show_help: bool,
    session: ListenSession,
    settings: CaptureSettings,
    a4_hz: f64,
    label_set: usize,
    input: InputView,
    capture: Option<CaptureHandle>,
    capture_generation: u64,
    fell_back_to_demo: bool,
    jobs: Jobs,
    ctx: Option<egui::Context>,
    build: Option<Build>,
    build_path: Option<PathBuf>,
    build_unsaved: bool,
    /// Counts the builds opened or started (stamps saves, see `SaveStamp`).
    build_document: u64,
    /// Counts the changes to the open build; the unsaved mark clears only
    /// when a save of the newest one finishes.
    build_generation: u64,
    /// The file that changed on disk under the open build, while the maker
    /// has not decided what to do about it.
    save_conflict: Option<PathBuf>,
    /// The window was asked to close with unsaved changes.
    close_prompt: bool,
    /// Close once the newest snapshot is saved.
    close_after_save: bool,
    /// The maker agreed to close; the next close request goes through.
    close_confirmed: bool,
    listen_part: Option<String>,
    listen_view: ListenView,
    ledger_state: LedgerAreaState,
    air_state: AirAreaState,
    stock_state: StockAreaState,
    drive_state: DriveAreaState,
    status: Option<Status>,
    commands: Vec<AppCommand>,
    frames: u64,
    frames_at_report: u64,
    frames_reported_window: i64,
}

impl TapwrightApp {
    /// A new workbench. Nothing starts until the first frame (which gives
    /// the app its egui context).
    pub fn new(options: AppOptions) -> Self {
        let pick = match &options.source {
            StartSource::Demo => SourcePick::Demo,
            StartSource::Device(name) => SourcePick::Device(name.clone()),
        };
        // Five level readings a second keep the meter alive without
        // repainting more than needed.
        let settings = CaptureSettings {
            level_interval_ms: 200.0,
            ..CaptureSettings::default()
        };
        let drive_state = DriveAreaState::new(options.drive_output.clone());
        Self {
            options,
            area: Area::Listen,
            dark: true,
            show_help: false,
            session: ListenSession::default(),
            listen_view: ListenView::new(&settings),
            settings,
            a4_hz: DEFAULT_A4_HZ,
            label_set: 0,
            input: InputView {
                pick,
                state: SourceState::Starting,
                description: String::new(),
                sample_rate_hz: None,
                level: None,
                clipped_at: None,
                devices: Vec::new(),
                devices_problem: None,
            },
            capture: None,
            capture_generation: 0,
            fell_back_to_demo: false,
            jobs: Jobs::default(),
            ctx: None,
            build: None,
            build_path: None,
            build_unsaved: false,
            build_document: 0,
            build_generation: 0,
            save_conflict: None,
            close_prompt: false,
            close_after_save: false,
            close_confirmed: false,
            listen_part: None,
            ledger_state: LedgerAreaState::default(),
            air_state: AirAreaState::default(),
            stock_state: StockAreaState::default(),
            drive_state,
            status: None,
            commands: Vec::new(),
            frames: 0,
            frames_at_report: 0,
            frames_reported_window: 0,
        }
    }

    /// The pass being measured.
    pub fn session(&self) -> &ListenSession {
        &self.session
    }

    /// The current Listen result.
    pub fn pass(&self) -> Option<&PassResult> {
        self.session.pass()
    }

    /// The input source's state.
    pub fn input(&self) -> &InputView {
        &self.input
    }

    /// The status line.
    pub fn status(&self) -> Option<&Status> {
        self.status.as_ref()
    }

    /// The area shown.
    pub fn area(&self) -> Area {
        self.area
    }

    /// The Drive area's state (its tone).
    pub fn drive(&self) -> &DriveAreaState {
        &self.drive_state
    }

    /// The open build.
    pub fn build(&self) -> Option<&Build> {
        self.build.as_ref()
    }

    /// True when the open build has changes not saved to its file.
    pub fn build_unsaved(&self) -> bool {
        self.build_unsaved
    }

    /// Queues a command as if an area had pushed it; it is applied at the
    /// end of the next frame (for tests and for code driving the window).
    pub fn queue(&mut self, command: AppCommand) {
        self.commands.push(command);
    }

    /// The part whose labels Listen offers.
    pub fn listen_part(&self) -> Option<&str> {
        self.listen_part.as_deref()
    }

    /// True while background work (a file being read, a source being
    /// opened …) has not reported.
    pub fn is_busy(&self) -> bool {
        self.jobs.running() > 0
    }

    /// Draws one frame into `ui` (the whole window) and applies the commands
    /// it produced. eframe calls it through [`eframe::App::ui`]; tests call
    /// it directly.
    pub fn show(&mut self, ui: &mut egui::Ui) {
        if self.ctx.is_none() {
            self.first_frame(ui.ctx());
        }
        self.frames += 1;
        self.report_frame_rate();
        self.take_job_results();
        self.take_capture_events();
        self.take_dropped_files(ui.ctx());
        drive_area::each_frame(ui, &mut self.drive_state);
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

    /// With timing on, prints the frames drawn every 10 s (to check that an
    /// idle window does not repaint).
    fn report_frame_rate(&mut self) {
        let Some(started) = self.options.started_at else {
            return;
        };
        let window = (started.elapsed().as_secs() / 10) as i64;
        if window > self.frames_reported_window {
            eprintln!(
                "tapwright timing: {} frames in the last 10 s",
                self.frames - self.frames_at_report
            );
            self.frames_reported_window = window;
            self.frames_at_report = self.frames;
        }
    }

    fn first_frame(&mut self, ctx: &egui::Context) {
        self.ctx = Some(ctx.clone());
        self.jobs.set_context(ctx);
        set_text_sizes(ctx);
        ctx.set_theme(egui::ThemePreference::Dark);
        if let Some(started) = self.options.started_at {
            eprintln!(
                "tapwright timing: first frame {:.0} ms after start",
                started.elapsed().as_secs_f64() * 1000.0
            );
        }
        self.jobs.spawn("devices", jobs::list_devices);
        let pick = self.input.pick.clone();
        if pick == SourcePick::Demo {
            self.open_sample_build_if_wanted();
        }
        self.start_source(pick);
        if let Some(path) = self.options.build.clone() {
            self.commands.push(AppCommand::OpenBuild(path));
        }
    }

    /// Opens the bundled sample build when the options ask for it and no
    /// build is open or requested.
    fn open_sample_build_if_wanted(&mut self) {
        if !self.options.sample_build_with_demo
            || self.options.build.is_some()
            || self.build.is_some()
        {
            return;
        }
        match crate::demo::sample_build() {
            Ok(build) => self.replace_build(Some(build), None, false),
            Err(error) => self.set_error(sentence(&error.to_string())),
        }
    }

    // ----- news from threads -------------------------------------------

    fn take_job_results(&mut self) {
        for done in self.jobs.drain() {
            match done {
                JobDone::Devices(Ok(devices)) => {
                    self.input.devices = devices;
                    self.input.devices_problem = None;
                }
                JobDone::Devices(Err(error)) => {
                    self.input.devices.clear();
                    self.input.devices_problem = Some(sentence(&error.to_string()));
                }
                JobDone::CaptureStarted { generation, result } => {
                    if generation == self.capture_generation {
                        self.capture_opened(result);
                    }
                }
                JobDone::FileChosen {
                    purpose: FilePurpose::SaveBuildCopy,
                    path: None,
                } => self.close_after_save = false,
                JobDone::FileChosen { purpose, path } => {
                    if let Some(path) = path {
                        let command = match purpose {
                            FilePurpose::OpenRecording => ListenCommand::OpenRecording(path),
                            FilePurpose::SaveTaps => ListenCommand::SaveTaps(path),
                            FilePurpose::ExportPass => ListenCommand::ExportPass(path),
                            FilePurpose::SaveBuildCopy => {
                                self.commands.push(AppCommand::SaveBuildAs(path));
                                continue;
                            }
                        };
                        self.commands.push(AppCommand::Listen(command));
                    }
                }
                JobDone::RecordingAnalysed { path, result } => match result {
                    Ok(taps) => {
                        let kept = taps.iter().filter(|t| t.is_accepted()).count();
                        let count = taps.len();
                        self.session.replace_taps(taps);
                        self.listen_view.reset_plot = true;
                        self.input.state = SourceState::File(path.clone());
                        self.input.description = file_name(&path);
                        self.input.level = None;
                        self.set_message(format!(
                            "Opened {}: {count} taps, {kept} kept.",
                            path.display()
                        ));
                    }
                    Err(problem) => self.set_error(problem),
                },
                JobDone::TapsRemeasured(measured) => self.session.replace_measurements(measured),
                JobDone::Saved(Ok(text)) => self.set_message(text),
                JobDone::Saved(Err(problem)) => self.set_error(problem),
                JobDone::BuildLoaded { path, result } => match result {
                    Ok((build, fingerprint)) => {
                        self.set_message(format!("Opened the build \"{}\".", build.name));
                        self.jobs
                            .track_build_file(Some((path.clone(), fingerprint)));
                        self.replace_build(Some(build), Some(path), false);
                    }
                    Err(problem) => self.set_error(problem),
                },
                JobDone::BuildSaved {
                    path,
                    stamp,
                    result,
                    ..
                } => self.build_saved(path, stamp, result),
            }
        }
    }

    // ----- the open build and its file --------------------------------------

    /// Replaces the open build (opened, started, closed): a new document,
    /// so answers to saves of the old one no longer touch the window.
    fn replace_build(&mut self, build: Option<Build>, path: Option<PathBuf>, unsaved: bool) {
        self.build = build;
        self.build_path = path;
        self.build_unsaved = unsaved;
        self.build_document += 1;
        self.build_generation = 0;
        self.save_conflict = None;
        self.listen_part = None;
    }

    /// The open build changed: it is unsaved until a save of this snapshot
    /// (or a newer one) finishes.
    fn mark_build_changed(&mut self) {
        self.build_generation += 1;
        self.build_unsaved = true;
    }

    fn save_stamp(&self) -> SaveStamp {
        SaveStamp {
            document: self.build_document,
            generation: self.build_generation,
        }
    }

    /// Queues a save of the open build, as it is now, on the build saver.
    fn queue_build_save(&mut self, path: PathBuf, check: SaveCheck) {
        let Some(build) = self.build.clone() else {
            return;
        };
        let stamp = self.save_stamp();
        self.jobs.save_build(path, build, stamp, check);
    }

    /// A save finished. Only a save of the open build changes the window:
    /// its path is adopted (Save as…), and the unsaved mark clears only if
    /// the snapshot saved is the newest.
    fn build_saved(&mut self, path: PathBuf, stamp: SaveStamp, result: Result<(), SaveProblem>) {
        if stamp.document != self.build_document {
            if let Err(SaveProblem::Failed(problem) | SaveProblem::ChangedOnDisk(problem)) = result
            {
                self.set_error(problem);
            }
            return;
        }
        match result {
            Ok(()) => {
                self.set_message(format!("Saved the build to {}.", path.display()));
                if self.build_path.as_ref() != Some(&path) {
                    self.build_path = Some(path);
                }
                self.save_conflict = None;
                if stamp.generation == self.build_generation {
                    self.build_unsaved = false;
                    if self.close_after_save {
                        self.close_window_now();
                    }
                }
            }
            Err(SaveProblem::ChangedOnDisk(problem)) => {
                self.build_unsaved = true;
                self.close_after_save = false;
                self.save_conflict = Some(path);
                self.set_error(problem);
            }
            Err(SaveProblem::Failed(problem)) => {
                self.build_unsaved = true;
                self.close_after_save = false;
                self.set_error(problem);
            }
        }
    }

    /// True while the window waits for the maker's answer about a file that
    /// changed on disk.
    pub fn save_conflict(&self) -> Option<&Path> {
        self.save_conflict.as_deref()
    }

    /// True while the window asks whether to save before closing.
    pub fn close_prompt_shown(&self) -> bool {
        self.close_prompt
    }

    /// True once the maker agreed to close (or nothing was unsaved).
    pub fn close_confirmed(&self) -> bool {
        self.close_confirmed
    }

    /// A close request (window button, Alt+F4) with unsaved changes is
    /// held back and the maker asked first.
    fn hold_close_if_unsaved(&mut self, ctx: &egui::Context) {
        let asked = ctx.input(|i| i.viewport().close_requested());
        if !asked || self.close_confirmed {
            return;
        }
        if self.build.is_some() && self.build_unsaved {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.close_prompt = true;
        } else {
            self.close_confirmed = true;
        }
    }

    fn close_window_now(&mut self) {
        self.close_prompt = false;
        self.close_after_save = false;
        self.close_confirmed = true;
        if let Some(ctx) = &self.ctx {
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
    }

    fn choose_copy_path(&mut self) {
        let name = self
            .build
            .as_ref()
            .map(|b| format!("{} copy.ron", b.name))
            .unwrap_or_else(|| "build.ron".to_owned());
        self.jobs.spawn("dialog", move || {
            jobs::choose_file(FilePurpose::SaveBuildCopy, name)
        });
    }

    fn draw_close_prompt(&mut self, ctx: &egui::Context) {
        if !self.close_prompt {
            return;
        }
        let name = self
            .build
            .as_ref()
            .map(|b| b.name.clone())
            .unwrap_or_default();
        let has_file = self.build_path.is_some();
        let mut answer = None;
        let modal =
            egui::Modal::new(egui::Id::unique("close with unsaved changes")).show(ctx, |ui| {
                ui.heading("Unsaved changes");
                ui.label(format!(
                "The build \"{name}\" has changes that are not saved. Save them before closing?"
            ));
                ui.horizontal(|ui| {
                    let save_text = if has_file {
                        "Save and close"
                    } else {
                        "Save as… and close"
                    };
                    if ui.button(save_text).clicked() {
                        answer = Some(CloseAnswer::Save);
                    }
                    if ui.button("Close without saving").clicked() {
                        answer = Some(CloseAnswer::Discard);
                    }
                    if ui.button("Cancel").clicked() {
                        answer = Some(CloseAnswer::Cancel);
                    }
                });
            });
        if modal.should_close() && answer.is_none() {
            answer = Some(CloseAnswer::Cancel);
        }
        match answer {
            Some(CloseAnswer::Save) => {
                self.close_prompt = false;
                self.close_after_save = true;
                match self.build_path.clone() {
                    Some(path) => self.queue_build_save(path, SaveCheck::IfUnchanged),
                    None => self.choose_copy_path(),
                }
            }
            Some(CloseAnswer::Discard) => self.close_window_now(),
            Some(CloseAnswer::Cancel) => self.close_prompt = false,
            None => {}
        }
    }

    fn draw_conflict_prompt(&mut self, ctx: &egui::Context) {
        let Some(path) = self.save_conflict.clone() else {
            return;
        };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("build file changed on disk")).show(ctx, |ui| {
            ui.heading("The build file changed on disk");
            ui.label(format!(
                "{} was changed by another window or program since this window opened or \
                 last saved it. Nothing was written. What should happen to the changes here?",
                path.display()
            ));
            ui.horizontal(|ui| {
                if ui
                    .button("Reload from disk")
                    .on_hover_text("Open the file as it is now; the changes here are dropped")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Reload);
                }
                if ui
                    .button("Save as a copy…")
                    .on_hover_text("Keep both: the file stays, the build here goes to a new file")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Copy);
                }
                if ui
                    .button("Overwrite the file")
                    .on_hover_text("Replace the file with the build here (the other changes are lost; the old file is kept as .bak)")
                    .clicked()
                {
                    answer = Some(ConflictAnswer::Overwrite);
                }
                if ui.button("Decide later").clicked() {
                    answer = Some(ConflictAnswer::Later);
                }
            });
        });
        match answer {
            Some(ConflictAnswer::Reload) => {
                self.save_conflict = None;
                self.commands.push(AppCommand::OpenBuild(path));
            }
            Some(ConflictAnswer::Copy) => {
                self.save_conflict = None;
                self.choose_copy_path();
            }
            Some(ConflictAnswer::Overwrite) => {
                self.save_conflict = None;
                self.queue_build_save(path, SaveCheck::Overwrite);
            }
            Some(ConflictAnswer::Later) => self.save_conflict = None,
            None => {}
        }
    }

    fn capture_opened(&mut self, result: Result<CaptureHandle, crate::audio::AudioError>) {
        match result {
            Ok(handle) => {
                self.input.description = handle.description().to_owned();
                self.input.sample_rate_hz = Some(handle.sample_rate_hz());
                self.input.state = SourceState::Running;
                self.capture = Some(handle);
            }
            Err(error) => {
                let problem = sentence(&error.to_string());
                let may_fall_back = matches!(self.options.source, StartSource::Device(_))
                    && !self.fell_back_to_demo
                    && matches!(self.input.pick, SourcePick::Device(_));
                if may_fall_back {
                    self.fell_back_to_demo = true;
                    self.open_sample_build_if_wanted();
                    self.set_message(format!(
                        "No microphone could be opened ({}); playing the bundled demo recording instead.",
                        problem.trim_end_matches('.')
                    ));
                    self.start_source(SourcePick::Demo);
                } else {
                    self.input.state = SourceState::Failed(problem.clone());
                    self.set_error(problem);
                }
            }
        }
    }

    fn take_capture_events(&mut self) {
        let Some(handle) = &self.capture else {
            return;
        };
        let events: Vec<CaptureEvent> = handle.try_events().collect();
        for event in events {
            self.on_capture_event(event);
        }
    }

    fn on_capture_event(&mut self, event: CaptureEvent) {
        match event {
            CaptureEvent::SourceStarted {
                description,
                sample_rate_hz,
            } => {
                self.input.description = description;
                self.input.sample_rate_hz = Some(sample_rate_hz);
                self.input.state = SourceState::Running;
            }
            CaptureEvent::Level(level) => {
                if level.clipped {
                    self.input.clipped_at = Some(Instant::now());
                }
                self.input.level = Some(level);
            }
            CaptureEvent::TapStarted { .. } => {}
            CaptureEvent::Tap(tap) => {
                let first = tap.is_accepted() && self.session.pass().is_none();
                self.session.add_tap(tap);
                if first {
                    self.listen_view.reset_plot = true;
                }
            }
            CaptureEvent::Overrun {
                dropped_samples_total,
            } => self.set_error(format!(
                "Some sound was lost because the computer fell behind ({dropped_samples_total} samples so far)."
            )),
            CaptureEvent::Status { message } => self.set_message(sentence(&message)),
            CaptureEvent::DeviceLost { message } => {
                let text = sentence(&message);
                self.input.state = SourceState::Trouble(text.clone());
                self.set_error(text);
            }
            CaptureEvent::Retrying {
                attempt, delay_ms, ..
            } => {
                self.input.state = SourceState::Trouble(format!(
                    "Trying the input again in {:.1} s (attempt {attempt}).",
                    delay_ms as f64 / 1000.0
                ));
            }
            CaptureEvent::SourceEnded => {
                self.input.state = SourceState::Ended;
                self.input.level = None;
                if let Some(mut handle) = self.capture.take() {
                    handle.stop();
                }
            }
        }
    }

    fn take_dropped_files(&mut self, ctx: &egui::Context) {
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .filter(|p| !p.as_os_str().is_empty())
                .collect()
        });
        if let Some(path) = dropped.into_iter().next() {
            self.commands
                .push(AppCommand::Listen(ListenCommand::OpenRecording(path)));
        }
    }

    /// No busy loop: egui repaints when input arrives, when a capture or
    /// job thread calls `request_repaint`, and here only for the clip
    /// warning to go away.
    fn schedule_repaint(&self, ctx: &egui::Context) {
        if let Some(at) = self.input.clipped_at {
            let left = CLIP_WARNING_FOR.saturating_sub(at.elapsed());
            if !left.is_zero() {
                ctx.request_repaint_after(left);
            }
        }
    }

    // ----- drawing -------------------------------------------------------

    fn draw(&mut self, ui: &mut egui::Ui) {
        egui::Panel::top("top bar").show(ui, |ui| self.draw_top_bar(ui));
        egui::Panel::bottom("status line").show(ui, |ui| self.draw_status_line(ui));
        match self.area {
            Area::Listen => {
                let clip_warning = self
                    .input
                    .clipped_at
                    .is_some_and(|at| at.elapsed() < CLIP_WARNING_FOR);
                let label_choices = self.label_choices();
                let label_sets: Vec<&str> = LABEL_SETS.iter().map(|s| s.0).collect();
                let mut ctx = AreaContext {
                    pass: self.session.pass(),
                    pass_labels: self.session.mode_labels(),
                    build: self.build.as_ref(),
                    build_path: self.build_path.as_deref(),
                    build_unsaved: self.build_unsaved,
                    listen_part: self.listen_part.as_deref(),
                    a4_hz: self.a4_hz,
                    commands: &mut self.commands,
                };
                let facts = listen_area::ListenFacts {
                    session: &self.session,
                    input: &self.input,
                    settings: &self.settings,
                    clip_warning,
                    label_choices: &label_choices,
                    label_sets: &label_sets,
                    label_set: self.label_set,
                    busy: self.jobs.running() > 0,
                };
                listen_area::show(ui, &mut self.listen_view, &facts, &mut ctx);
            }
            Area::Ledger | Area::Air | Area::Stock | Area::Drive => {
                let area = self.area;
                let mut ctx = AreaContext {
                    pass: self.session.pass(),
                    pass_labels: self.session.mode_labels(),
                    build: self.build.as_ref(),
                    build_path: self.build_path.as_deref(),
                    build_unsaved: self.build_unsaved,
                    listen_part: self.listen_part.as_deref(),
                    a4_hz: self.a4_hz,
                    commands: &mut self.commands,
                };
                let ledger_state = &mut self.ledger_state;
                let air_state = &mut self.air_state;
                let drive_state = &mut self.drive_state;
                let stock_state = &mut self.stock_state;
                egui::CentralPanel::default().show(ui, |ui| match area {
                    Area::Ledger => ledger_area::show(ui, ledger_state, &mut ctx),
                    Area::Stock => stock_area::show(ui, stock_state, &mut ctx),
                    Area::Drive => {
                        drive_area::show(ui, drive_state, &mut ctx, ledger_state.selection())
                    }
                    _ => air_area::show(ui, air_state, &mut ctx),
                });
            }
        }
        if self.show_help {
            let mut open = true;
            egui::Window::new("Help and caution")
                .open(&mut open)
                .default_size([520.0, 420.0])
                .show(ui.ctx(), help::show);
            self.show_help = open;
        }
    }

    fn draw_top_bar(&mut self, ui: &mut egui::Ui) {
        ui.horizontal(|ui| {
            ui.heading("tapwright");
            ui.separator();
            for area in Area::ALL {
                if ui
                    .selectable_label(
                        self.area == area,
                        egui::RichText::new(area.title()).size(16.0),
                    )
                    .clicked()
                {
                    self.commands.push(AppCommand::ShowArea(area));
                }
            }
            ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                if ui.selectable_label(self.show_help, "Help").clicked() {
                    self.show_help = !self.show_help;
                }
                let theme_text = if self.dark {
                    "Light theme"
                } else {
                    "Dark theme"
                };
                if ui
                    .button(theme_text)
                    .on_hover_text("Switch between the dark and light themes")
                    .clicked()
                {
                    self.dark = !self.dark;
                    ui.ctx().set_theme(if self.dark {
                        egui::ThemePreference::Dark
                    } else {
                        egui::ThemePreference::Light
                    });
                }
                if let Some(build) = &self.build {
                    let unsaved = if self.build_unsaved { " (unsaved)" } else { "" };
                    ui.label(format!("Build: {}{unsaved}", build.name));
                }
            });
        });
    }

    fn draw_status_line(&mut self, ui: &mut egui::Ui) {
        const CAUTION_LINE: &str =
            "Keep sound levels low, tools guarded and dust extracted; see Help for the cautions.";
        ui.horizontal(|ui| {
            match &self.status {
                Some(status) if status.is_error => {
                    ui.colored_label(ui.visuals().error_fg_color, &status.text);
                }
                Some(status) => {
                    ui.label(&status.text);
                }
                None => {
                    ui.weak("Tap the plate near the microphone; taps and modes appear here.");
                }
            }
            if self.status.is_some() && ui.small_button("Dismiss").clicked() {
                self.status = None;
            }
            ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                ui.weak(CAUTION_LINE);
            });
        });
    }

    /// The labels Listen offers: the chosen part's, else the chosen preset
    /// set.
    fn label_choices(&self) -> Vec<String> {
        let from_part = self
            .listen_part
            .as_deref()
            .and_then(|name| self.build.as_ref()?.part(name))
            .map(|part| part.labels().to_vec());
        from_part.unwrap_or_else(|| {
            LABEL_SETS[self.label_set.min(LABEL_SETS.len() - 1)]
                .1
                .iter()
                .map(|s| (*s).to_owned())
                .collect()
        })
    }

    // ----- commands ------------------------------------------------------

    fn apply_commands(&mut self) {
        let commands = std::mem::take(&mut self.commands);
        for command in commands {
            self.apply(command);
        }
    }

    fn apply(&mut self, command: AppCommand) {
        match command {
            AppCommand::ShowArea(area) => self.area = area,
            AppCommand::NewBuild { name, family } => {
                let name = name.trim().to_owned();
                if name.is_empty() {
                    self.set_error("A new build needs a name.".to_owned());
                } else {
                    self.set_message(format!("Started the build \"{name}\"; save it to keep it."));
                    self.jobs.track_build_file(None);
                    self.replace_build(Some(Build::new(name, family)), None, true);
                }
            }
            AppCommand::OpenBuild(path) => self
                .jobs
                .spawn("open-build", move || jobs::load_build(path)),
            AppCommand::SaveBuild => match (&self.build, &self.build_path) {
                (Some(_), Some(path)) => {
                    let path = path.clone();
                    self.queue_build_save(path, SaveCheck::IfUnchanged);
                }
                (Some(_), None) => {
                    self.set_error("The build has no file yet: choose where to save it.".to_owned())
                }
                (None, _) => self.set_error("There is no open build to save.".to_owned()),
            },
            AppCommand::SaveBuildAs(path) => match &self.build {
                Some(_) => self.queue_build_save(path, SaveCheck::IfUnchanged),
                None => self.set_error("There is no open build to save.".to_owned()),
            },
            AppCommand::CloseBuild => {
                self.jobs.track_build_file(None);
                self.replace_build(None, None, false);
            }
            AppCommand::EditBuild { description, edit } => match self.build.as_mut() {
                Some(build) => match edit(build) {
                    Ok(text) => {
                        self.mark_build_changed();
                        if !text.is_empty() {
                            self.set_message(text);
                        }
                    }
                    Err(error) => self.set_error(format!(
                        "While {description}: {}",
                        sentence(&error.to_string())
                    )),
                },
                None => self.set_error("Open or start a build first.".to_owned()),
            },
            AppCommand::RecordPass {
                part,
                input,
                labels,
            } => self.record_pass(&part, input, &labels),
            AppCommand::SetListenPart(part) => self.listen_part = part,
            AppCommand::ShowMessage(text) => self.set_message(text),
            AppCommand::ShowError(text) => self.set_error(text),
            AppCommand::Listen(command) => self.apply_listen(command),
        }
    }

    fn record_pass(
        &mut self,
        part_name: &str,
        input: crate::ledger::PassInput,
        labels: &[Option<String>],
    ) {
        let Some(build) = self.build.as_mut() else {
            self.set_error("Open or start a build first.".to_owned());
            return;
        };
        let Some(part) = build.part_mut(part_name) else {
            self.set_error(format!("The build has no part named \"{part_name}\"."));
            return;
        };
        let frequencies: Vec<f64> = input.modes.iter().map(|m| m.frequency_hz).collect();
        let outcome = match part.record_pass(input) {
            Ok(outcome) => outcome,
            Err(error) => {
                self.set_error(sentence(&error.to_string()));
                return;
            }
        };
        // The ledger sorts the modes by frequency; find each labelled one.
        let mut problems = Vec::new();
        if let Some(pass) = part.pass(outcome.pass_number) {
            let stored: Vec<f64> = pass.modes().iter().map(|m| m.frequency_hz).collect();
            for (frequency_hz, label) in frequencies.iter().zip(labels) {
                let Some(label) = label else { continue };
                let Some(index) = stored.iter().position(|f| f == frequency_hz) else {
                    continue;
                };
                let added = part.add_label(label.clone());
                if let Err(error) =
                    added.and_then(|()| part.set_label(outcome.pass_number, index, Some(label)))
                {
                    problems.push(sentence(&error.to_string()));
                }
            }
        }
        self.mark_build_changed();
        let autosave = self.build_path.clone().filter(|_| self.build.is_some());
        match problems.first() {
            Some(problem) => self.set_error(problem.clone()),
            None if autosave.is_some() => self.set_message(format!(
                "Recorded pass {} of \"{part_name}\"; saving the build.",
                outcome.pass_number
            )),
            None => self.set_message(format!(
                "Recorded pass {} of \"{part_name}\"; save the build to keep it.",
                outcome.pass_number
            )),
        }
        // Autosave after every recorded pass once the build has a file.
        if let Some(path) = autosave {
            self.queue_build_save(path, SaveCheck::IfUnchanged);
        }
    }

    fn apply_listen(&mut self, command: ListenCommand) {
        match command {
            ListenCommand::ChooseSource(pick) => {
                self.session.clear();
                self.start_source(pick);
            }
            ListenCommand::RefreshDevices => self.jobs.spawn("devices", jobs::list_devices),
            ListenCommand::SetSettings(settings) => {
                self.session.set_max_modes(settings.analysis.max_modes);
                if settings.analysis != self.settings.analysis {
                    // The taps already heard are measured again in the new
                    // band; the trigger settings only apply to new taps.
                    let records = self.session.measured_records();
                    if !records.is_empty() {
                        let analysis = settings.analysis.clone();
                        self.jobs
                            .spawn("remeasure", move || jobs::remeasure_taps(records, analysis));
                    }
                }
                if let Some(handle) = &self.capture {
                    if handle.set_settings(settings.clone()).is_err() {
                        self.set_error(
                            "The input has stopped; the new settings apply when it starts again."
                                .to_owned(),
                        );
                    }
                }
                self.settings = settings;
            }
            ListenCommand::SetTapsToAverage(count) => self.session.set_taps_to_average(count),
            ListenCommand::SetTapLeftOut {
                tap_index,
                left_out,
            } => {
                self.session.set_left_out(tap_index, left_out);
            }
            ListenCommand::SetModeLabel { mode_index, label } => {
                self.session.set_label(mode_index, label);
            }
            ListenCommand::NewPass => {
                self.session.clear();
                self.listen_view.reset_plot = true;
                self.set_message("Started a new pass.".to_owned());
            }
            ListenCommand::OpenRecording(path) => self.open_recording(path),
            ListenCommand::ChooseRecordingFile => {
                self.jobs.spawn("dialog", || {
                    jobs::choose_file(FilePurpose::OpenRecording, String::new())
                });
            }
            ListenCommand::ChooseSaveTapsFile => {
                self.jobs.spawn("dialog", || {
                    jobs::choose_file(FilePurpose::SaveTaps, "taps.wav".to_owned())
                });
            }
            ListenCommand::SaveTaps(path) => match self.session.kept_taps_as_recording(0.5) {
                Some(recording) => self
                    .jobs
                    .spawn("save-wav", move || jobs::save_wav(path, recording)),
                None => self.set_error("There are no kept taps to save yet.".to_owned()),
            },
            ListenCommand::ChooseExportFile => {
                self.jobs.spawn("dialog", || {
                    jobs::choose_file(FilePurpose::ExportPass, "pass.json".to_owned())
                });
            }
            ListenCommand::ExportPass(path) => match export::pass_json(&self.session, self.a4_hz) {
                Some(text) => self
                    .jobs
                    .spawn("export", move || jobs::save_text(path, text, "the pass")),
                None => self
                    .set_error("There is no pass to export yet: tap the plate first.".to_owned()),
            },
            ListenCommand::SetA4(a4_hz) => {
                if a4_hz.is_finite() && (380.0..=480.0).contains(&a4_hz) {
                    self.a4_hz = a4_hz;
                } else {
                    self.set_error(format!("A4 of {a4_hz} Hz is outside 380 to 480 Hz."));
                }
            }
            ListenCommand::SetLabelSet(index) => self.label_set = index.min(LABEL_SETS.len() - 1),
        }
    }

    fn open_recording(&mut self, path: PathBuf) {
        if path.as_os_str().is_empty() {
            self.set_error("Type the path of a WAV file first.".to_owned());
            return;
        }
        self.stop_capture();
        self.input.state = SourceState::Starting;
        self.input.description = file_name(&path);
        let trigger = self.settings.trigger.clone();
        let analysis = self.settings.analysis.clone();
        self.set_message(format!("Reading {} …", path.display()));
        self.jobs.spawn("open-wav", move || {
            jobs::analyse_recording(path, trigger, analysis)
        });
    }

    fn stop_capture(&mut self) {
        self.capture_generation += 1;
        if let Some(mut handle) = self.capture.take() {
            handle.stop();
        }
        self.input.level = None;
    }

    fn start_source(&mut self, pick: SourcePick) {
        self.stop_capture();
        self.input.pick = pick.clone();
        self.input.state = SourceState::Starting;
        self.input.sample_rate_hz = None;
        let source = match &pick {
            SourcePick::Demo => match crate::demo::demo_recording() {
                Ok(recording) => {
                    for (frequency_hz, label) in DEMO_LABELS {
                        self.session.remember_label(frequency_hz, label);
                    }
                    self.input.description = "demo recording (invented violin top)".to_owned();
                    SourceChoice::Replay {
                        recording,
                        pacing: self.options.demo_pacing,
                        looped: false,
                    }
                }
                Err(error) => {
                    let text = sentence(&error.to_string());
                    self.input.state = SourceState::Failed(text.clone());
                    self.set_error(text);
                    return;
                }
            },
            SourcePick::Device(name) => {
                self.input.description = name.clone().unwrap_or_else(|| "default input".to_owned());
                SourceChoice::Device(name.clone())
            }
        };
        let generation = self.capture_generation;
        let settings = self.settings.clone();
        let notify = self.repaint_hook();
        self.jobs.spawn("capture", move || {
            jobs::start_capture(generation, source, settings, notify)
        });
    }

    /// Called by the capture worker after each event: wakes the window
    /// within [`NEWS_REPAINT_DELAY`], so a burst of events costs one frame.
    fn repaint_hook(&self) -> crate::audio::Notify {
        let ctx = self.ctx.clone();
        Arc::new(move || {
            if let Some(ctx) = &ctx {
                ctx.request_repaint_after(NEWS_REPAINT_DELAY);
            }
        })
    }

    fn set_message(&mut self, text: String) {
        self.status = Some(Status {
            text,
            is_error: false,
        });
    }

    fn set_error(&mut self, text: String) {
        self.status = Some(Status {
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
        self.drive_state.stop_and_close();
    }
}

impl Drop for TapwrightApp {
    fn drop(&mut self) {
        self.stop_capture();
    }
}

/// The maker's answer to "save before closing?".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum CloseAnswer {
    Save,
    Discard,
    Cancel,
}

/// The maker's answer to "the file changed on disk".
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum ConflictAnswer {
    Reload,
    Copy,
    Overwrite,
    Later,
}

/// Labels shown on the demo plate's modes as an example, if the analysis
/// finds modes there: the invented plate's mode 2 and mode 5 (src/demo.rs).
const DEMO_LABELS: [(f64, &str); 2] = [(168.0, "mode 2"), (338.0, "mode 5")];

/// Longest wait between news from the capture worker and the frame that
/// shows it. Events closer together than this share one frame.
const NEWS_REPAINT_DELAY: Duration = Duration::from_millis(60);

/// How long the clip warning stays after the input clipped.
const CLIP_WARNING_FOR: Duration = Duration::from_secs(2);

/// Slightly larger text than egui's default, for a bench a step away.
fn set_text_sizes(ctx: &egui::Context) {
    ctx.all_styles_mut(|style| {
        use egui::{FontFamily, FontId, TextStyle};
        style
            .text_styles
            .insert(TextStyle::Body, FontId::new(14.5, FontFamily::Proportional));
        style.text_styles.insert(
            TextStyle::Button,
            FontId::new(14.5, FontFamily::Proportional),
        );
        style.text_styles.insert(
            TextStyle::Monospace,
            FontId::new(13.5, FontFamily::Monospace),
        );
        style.text_styles.insert(
            TextStyle::Heading,
            FontId::new(20.0, FontFamily::Proportional),
        );
        style.text_styles.insert(
            TextStyle::Small,
            FontId::new(11.5, FontFamily::Proportional),
        );
        style.spacing.item_spacing = egui::vec2(8.0, 5.0);
    });
}

fn file_name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string())
}
