//! The frame around the areas: the top bar (areas, help, theme), the status
//! line, the area shown with the context it reads, the help window, text
//! sizes, dropped files, and when to draw again.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use eframe::egui;

use super::{help, PassState, Status, TapwrightApp, LABEL_SETS};
use crate::audio::{CaptureSettings, OutputChoice};
use crate::ui::areas::air::{self, AirAreaState};
use crate::ui::areas::drive::{self, DriveAreaState};
use crate::ui::areas::ledger::{self, LedgerAreaState};
use crate::ui::areas::listen::{self, ListenFacts, ListenView};
use crate::ui::areas::stock::{self, StockAreaState};
use crate::ui::commands::{AppCommand, Area, ListenCommand};
use crate::ui::context::AreaContext;
use crate::ui::jobs::Jobs;

use super::document::OpenDocument;

/// How long the clip warning stays after the input clipped.
pub(super) const CLIP_WARNING_FOR: Duration = Duration::from_secs(2);

/// What each area remembers between frames.
#[derive(Debug)]
pub(super) struct AreaStates {
    pub listen: ListenView,
    pub ledger: LedgerAreaState,
    pub air: AirAreaState,
    pub stock: StockAreaState,
    pub drive: DriveAreaState,
}

impl AreaStates {
    /// Fresh areas; the Drive area plays through `drive_output`.
    pub fn new(settings: &CaptureSettings, drive_output: OutputChoice) -> Self {
        Self {
            listen: ListenView::new(settings),
            ledger: LedgerAreaState::default(),
            air: AirAreaState::default(),
            stock: StockAreaState::default(),
            drive: DriveAreaState::new(drive_output),
        }
    }
}

/// The window's own state: the area shown, the theme, the help window and
/// the status line.
#[derive(Debug)]
pub(super) struct WindowView {
    pub area: Area,
    pub dark: bool,
    pub show_help: bool,
    pub status: Option<Status>,
}

impl Default for WindowView {
    fn default() -> Self {
        Self {
            area: Area::Listen,
            dark: true,
            show_help: false,
            status: None,
        }
    }
}

/// Frame counts for `TAPWRIGHT_TIMING=1` (to check that an idle window
/// does not repaint).
#[derive(Debug)]
pub(super) struct FrameTiming {
    started_at: Option<Instant>,
    frames: u64,
    frames_at_report: u64,
    reported_window: u64,
}

impl FrameTiming {
    /// Timing from `started_at`; None reports nothing.
    pub fn new(started_at: Option<Instant>) -> Self {
        Self {
            started_at,
            frames: 0,
            frames_at_report: 0,
            reported_window: 0,
        }
    }

    /// Prints the time from start to the first frame.
    pub fn first_frame(&self) {
        if let Some(started) = self.started_at {
            eprintln!(
                "tapwright timing: first frame {:.0} ms after start",
                started.elapsed().as_secs_f64() * 1000.0
            );
        }
    }

    /// Counts a frame; prints the frames drawn every 10 s.
    pub fn count_frame(&mut self) {
        self.frames += 1;
        let Some(started) = self.started_at else {
            return;
        };
        let window = started.elapsed().as_secs() / 10;
        if window > self.reported_window {
            eprintln!(
                "tapwright timing: {} frames in the last 10 s",
                self.frames - self.frames_at_report
            );
            self.reported_window = window;
            self.frames_at_report = self.frames;
        }
    }
}

/// What every area reads this frame, and the list it pushes commands into.
fn area_context<'a>(
    pass: &'a PassState,
    document: &'a OpenDocument,
    jobs: &'a Jobs,
    commands: &'a mut Vec<AppCommand>,
) -> AreaContext<'a> {
    AreaContext {
        pass: pass.session.pass(),
        pass_labels: pass.session.mode_labels(),
        build: document.build(),
        build_path: document.path(),
        build_unsaved: document.unsaved(),
        listen_part: pass.listen_part.as_deref(),
        a4_hz: pass.a4_hz,
        jobs,
        commands,
    }
}

impl TapwrightApp {
    pub(super) fn draw(&mut self, ui: &mut egui::Ui) {
        egui::Panel::top("top bar").show(ui, |ui| self.draw_top_bar(ui));
        egui::Panel::bottom("status line").show(ui, |ui| self.draw_status_line(ui));
        let label_choices = self.pass.label_choices(self.document.build());
        let busy = self.is_busy();
        let Self {
            pass,
            document,
            jobs,
            commands,
            areas,
            input,
            view,
            ..
        } = self;
        let mut ctx = area_context(pass, document, jobs, commands);
        match view.area {
            Area::Listen => {
                let label_sets: Vec<&str> = LABEL_SETS.iter().map(|s| s.0).collect();
                let facts = ListenFacts {
                    session: &pass.session,
                    input: &input.view,
                    settings: &input.settings,
                    clip_warning: input
                        .view
                        .clipped_at
                        .is_some_and(|at| at.elapsed() < CLIP_WARNING_FOR),
                    label_choices: &label_choices,
                    label_sets: &label_sets,
                    label_set: pass.label_set,
                    busy,
                };
                listen::show(ui, &mut areas.listen, &facts, &mut ctx);
            }
            area => {
                let AreaStates {
                    ledger: ledger_state,
                    air: air_state,
                    stock: stock_state,
                    drive: drive_state,
                    ..
                } = areas;
                egui::CentralPanel::default().show(ui, |ui| match area {
                    Area::Ledger => ledger::show(ui, ledger_state, &mut ctx),
                    Area::Stock => stock::show(ui, stock_state, &mut ctx),
                    Area::Drive => drive::show(ui, drive_state, &mut ctx, ledger_state.selection()),
                    Area::Air | Area::Listen => air::show(ui, air_state, &mut ctx),
                });
            }
        }
        if view.show_help {
            let mut open = true;
            egui::Window::new("Help and caution")
                .open(&mut open)
                .default_size([520.0, 420.0])
                .show(ui.ctx(), help::show);
            view.show_help = open;
        }
    }

    fn draw_top_bar(&mut self, ui: &mut egui::Ui) {
        ui.horizontal(|ui| {
            ui.heading("tapwright");
            ui.separator();
            for area in Area::ALL {
                if ui
                    .selectable_label(
                        self.view.area == area,
                        egui::RichText::new(area.title()).size(16.0),
                    )
                    .clicked()
                {
                    self.commands.push(AppCommand::ShowArea(area));
                }
            }
            ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                if ui.selectable_label(self.view.show_help, "Help").clicked() {
                    self.view.show_help = !self.view.show_help;
                }
                let theme_text = if self.view.dark {
                    "Light theme"
                } else {
                    "Dark theme"
                };
                if ui
                    .button(theme_text)
                    .on_hover_text("Switch between the dark and light themes")
                    .clicked()
                {
                    self.view.dark = !self.view.dark;
                    ui.ctx().set_theme(if self.view.dark {
                        egui::ThemePreference::Dark
                    } else {
                        egui::ThemePreference::Light
                    });
                }
                if let Some(build) = self.document.build() {
                    let unsaved = if self.document.unsaved() {
                        " (unsaved)"
                    } else {
                        ""
                    };
                    ui.label(format!("Build: {}{unsaved}", build.name));
                }
            });
        });
    }

    fn draw_status_line(&mut self, ui: &mut egui::Ui) {
        const CAUTION_LINE: &str =
            "Keep sound levels low, tools guarded and dust extracted; see Help for the cautions.";
        ui.horizontal(|ui| {
            match &self.view.status {
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
            if self.view.status.is_some() && ui.small_button("Dismiss").clicked() {
                self.view.status = None;
            }
            ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                ui.weak(CAUTION_LINE);
            });
        });
    }

    /// A WAV file dropped on the window is opened in Listen.
    pub(super) fn take_dropped_files(&mut self, ctx: &egui::Context) {
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
    pub(super) fn schedule_repaint(&self, ctx: &egui::Context) {
        if let Some(at) = self.input.view.clipped_at {
            let left = CLIP_WARNING_FOR.saturating_sub(at.elapsed());
            if !left.is_zero() {
                ctx.request_repaint_after(left);
            }
        }
    }
}

/// Slightly larger text than egui's default, for a bench a step away.
pub(super) fn set_text_sizes(ctx: &egui::Context) {
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
