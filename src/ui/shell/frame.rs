//! The frame around the areas: the top bar (areas, units, help, theme),
//! the status line, the area shown with the context it reads, the help and
//! units windows, text sizes, dropped files, and when to draw again.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use eframe::egui;

use super::status::StatusLine;
use super::{help, units_window, PassState, TapwrightApp, LABEL_SETS};
use crate::audio::{CaptureSettings, OutputChoice};
use crate::text::Units;
use crate::ui::areas::air::{self, AirAreaState};
use crate::ui::areas::drive::{self, DriveAreaState};
use crate::ui::areas::ledger::{self, LedgerAreaState};
use crate::ui::areas::listen::{self, ListenFacts, ListenView};
use crate::ui::areas::shapes::{self, ShapesAreaState, ShapesFacts};
use crate::ui::areas::stock::{self, StockAreaState};
use crate::ui::commands::{AppCommand, Area, ListenCommand};
use crate::ui::context::AreaContext;
use crate::ui::jobs::Jobs;
use crate::wav_io::READABLE_EXTENSIONS;

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
    pub shapes: ShapesAreaState,
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
            shapes: ShapesAreaState::default(),
        }
    }
}

/// The window's own state: the area shown, the theme, the help and units
/// windows and the status line.
#[derive(Debug)]
pub(super) struct WindowView {
    pub area: Area,
    pub dark: bool,
    pub show_help: bool,
    pub show_units: bool,
    pub status: StatusLine,
}

impl Default for WindowView {
    fn default() -> Self {
        Self {
            area: Area::Listen,
            dark: true,
            show_help: false,
            show_units: false,
            status: StatusLine::default(),
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
    (pass, units): (&'a PassState, Units),
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
        units,
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
        let units = self.units();
        let Self {
            pass,
            document,
            jobs,
            commands,
            areas,
            input,
            view,
            preferences,
            ..
        } = self;
        let mut ctx = area_context((pass, units), document, jobs, commands);
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
            Area::Shapes => {
                let facts = ShapesFacts { input: &input.view };
                egui::CentralPanel::default().show(ui, |ui| {
                    shapes::show(ui, &mut areas.shapes, &facts, &mut ctx);
                });
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
                    Area::Air | Area::Listen | Area::Shapes => air::show(ui, air_state, &mut ctx),
                });
            }
        }
        if view.show_help {
            let mut open = true;
            let recent: Vec<_> = view.status.recent().cloned().collect();
            egui::Window::new("Help and caution")
                .open(&mut open)
                .default_size([520.0, 420.0])
                .show(ui.ctx(), |ui| help::show(ui, &recent));
            view.show_help = open;
        }
        if view.show_units {
            let kept_in = preferences.folder.as_deref();
            let chosen = units_window::show(ui.ctx(), &mut view.show_units, units, kept_in);
            if let Some(units) = chosen {
                commands.push(AppCommand::SetUnits(units));
            }
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
                let units_text = format!("Units: {}", self.units().name());
                if ui
                    .selectable_label(self.view.show_units, units_text)
                    .on_hover_text(
                        "Millimetres or inches, grams or ounces, °C or °F, litres or cubic inches",
                    )
                    .clicked()
                {
                    self.view.show_units = !self.view.show_units;
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
        self.view.status.draw(ui);
    }

    /// A file dropped on the window: a recording is opened in Listen, a
    /// build file (.ron) in the Ledger; anything else is named in the
    /// status line.
    pub(super) fn take_dropped_files(&mut self, ctx: &egui::Context) {
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .filter(|p| !p.as_os_str().is_empty())
                .collect()
        });
        let Some(path) = dropped.into_iter().next() else {
            return;
        };
        match dropped_kind(&path) {
            Dropped::Recording => self
                .commands
                .push(AppCommand::Listen(ListenCommand::OpenRecording(path))),
            Dropped::Build => self.commands.push(AppCommand::OpenBuild(path)),
            Dropped::Other => self.set_error(format!(
                "{} is neither a recording ({}) nor a build file (.ron)",
                path.display(),
                READABLE_EXTENSIONS
                    .iter()
                    .map(|e| format!(".{e}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            )),
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

/// What a dropped file is taken for, by its name's ending (any case).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Dropped {
    Recording,
    Build,
    Other,
}

fn dropped_kind(path: &std::path::Path) -> Dropped {
    let extension = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .unwrap_or_default();
    if READABLE_EXTENSIONS.contains(&extension.as_str()) {
        Dropped::Recording
    } else if extension == "ron" {
        Dropped::Build
    } else {
        Dropped::Other
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dropped_files_are_taken_by_their_ending_in_any_case() {
        for name in [
            "taps.wav",
            "TAPS.WAV",
            "phone.m4a",
            "take.Flac",
            "x.MP3",
            "y.ogg",
        ] {
            assert_eq!(
                dropped_kind(std::path::Path::new(name)),
                Dropped::Recording,
                "{name}"
            );
        }
        assert_eq!(
            dropped_kind(std::path::Path::new("violin.RON")),
            Dropped::Build
        );
        for name in ["notes.txt", "report.html", "no ending"] {
            assert_eq!(
                dropped_kind(std::path::Path::new(name)),
                Dropped::Other,
                "{name}"
            );
        }
    }
}
