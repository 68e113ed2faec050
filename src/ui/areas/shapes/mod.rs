//! The Shapes area: mode shapes from roving taps. The microphone stays in
//! one place while the maker taps the plate at every point of a grid;
//! each mode's signed shape over the plate, its nodal lines and a carving
//! guide come out of the taps (see `shapes`).
//!
//! Layout: across the top, opening a recorded set (a points file through
//! a dialog or a typed path, or the bundled demo set with one button); on
//! the left, the part, its outline and the grid, and the grid being tapped
//! (the point to tap next, progress, what became of each tap, any point
//! tapped again or cleared); in the middle, the map: its modes, the chosen
//! mode's shape and the carving guide, and keeping the map in the build.
//!
//! Taps come from the same capture worker and trigger as Listen: while the
//! grid listens, the shell hands them here ([`ShapesAreaState::take_live_tap`])
//! instead of to Listen's pass. Reading a set and working out a map run on
//! the window's job runner (`work`). Nothing here changes the build: the
//! map is kept through [`AppCommand::KeepShapeMap`].

mod carving_view;
mod keep;
mod map_view;
mod setup;
mod tapping;
mod work;

use std::path::PathBuf;

use eframe::egui;

use crate::analysis::Tap;
use crate::ledger::{labels, Build};
use crate::text::{sentence, LengthUnit};
use crate::ui::context::{AreaContext, InputView, SourceState};
use crate::ui::widgets::plate_view::{Marker, MarkerKind, Palette, PlateView};

use keep::KeepState;
use map_view::MapShown;
use setup::{OutlineKind, SetupForm};
use tapping::Tapping;
use work::{demo_set_path, DrawnMap, MapSource, ShapesJob, ShapesWork};

pub use keep::keep_in_pass;

/// The demo set's plate's modes 1, 2 and 5 (`shapes::demo_set`: about 90,
/// 151 and 333 Hz), labelled when the demo set is opened.
const DEMO_SET_LABELS: [(f64, &str); 3] = [(90.0, "mode 1"), (150.7, "mode 2"), (333.4, "mode 5")];

/// What the Shapes area remembers between frames. Owned by the app.
#[derive(Debug, Default)]
pub struct ShapesAreaState {
    setup: SetupForm,
    tapping: Option<Tapping>,
    shown: Option<MapShown>,
    work: ShapesWork,
    keep: KeepState,
    /// The points file path typed.
    path: String,
    /// A sentence beside the set bar, and whether it reports a problem.
    note: Option<(String, bool)>,
}

impl ShapesAreaState {
    /// True while a grid is listening for taps: the shell then hands every
    /// tap from the input to [`Self::take_live_tap`].
    pub fn wants_taps(&self) -> bool {
        self.tapping.as_ref().is_some_and(|t| t.listening)
    }

    /// A tap from the input, for the point to tap now.
    pub fn take_live_tap(&mut self, tap: Tap) {
        if let Some(tapping) = self.tapping.as_mut() {
            tapping.take_tap(tap);
        }
    }

    /// The progress of the grid being tapped ("12 of 45 points").
    pub fn tapping_progress(&self) -> Option<String> {
        self.tapping.as_ref().map(Tapping::progress_text)
    }

    /// The modes of the map shown (none without a map).
    pub fn map_shapes(&self) -> Vec<crate::shapes::ModeShape> {
        self.shown
            .as_ref()
            .map(|s| s.map.modes.iter().map(|m| m.shape.clone()).collect())
            .unwrap_or_default()
    }

    /// The tap points of the map shown, in its order.
    pub fn map_points(&self) -> Vec<crate::shapes::TapPoint> {
        self.shown
            .as_ref()
            .map(|s| s.map.points.clone())
            .unwrap_or_default()
    }
}

/// What the Shapes area reads besides its context: the input.
pub struct ShapesFacts<'a> {
    pub input: &'a InputView,
}

/// Draws the Shapes area.
pub fn show(
    ui: &mut egui::Ui,
    state: &mut ShapesAreaState,
    facts: &ShapesFacts,
    ctx: &mut AreaContext,
) {
    take_results(state, ctx);
    map_finished_grid(state, ctx);
    let unit = ctx.units.length;
    egui::Panel::top("shapes set bar").show(ui, |ui| set_bar(ui, state, ctx));
    egui::Panel::left("shapes side")
        .resizable(true)
        .default_size(330.0)
        .size_range(280.0..=480.0)
        .show(ui, |ui| {
            egui::ScrollArea::vertical()
                .id_salt("shapes side scroll")
                .show(ui, |ui| side_panel(ui, state, facts, ctx, unit));
        });
    egui::CentralPanel::default().show(ui, |ui| {
        egui::ScrollArea::vertical()
            .id_salt("shapes central scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| central(ui, state, facts, ctx, unit));
    });
}

// ----- background work -------------------------------------------------------

fn take_results(state: &mut ShapesAreaState, ctx: &AreaContext) {
    for job in state.work.take() {
        match job {
            ShapesJob::FileChosen(Some(path)) => {
                state.path = path.display().to_string();
                open_set(state, ctx, MapSource::Set(path.clone()), path);
            }
            ShapesJob::FileChosen(None) => {
                state.note = Some((
                    "No file was chosen. If no dialog appeared, type the path of the points file instead.".to_owned(),
                    false,
                ));
            }
            ShapesJob::Mapped { result, .. } => match result {
                Ok(map) => show_map(state, ctx, *map),
                Err(problem) => state.note = Some((sentence(&problem), true)),
            },
        }
    }
}

/// Puts a new map on screen with its labels: the demo plate's own, or
/// those of the chosen part's latest pass.
fn show_map(state: &mut ShapesAreaState, ctx: &AreaContext, map: DrawnMap) {
    let frequencies: Vec<f64> = map.modes.iter().map(|m| m.shape.frequency_hz).collect();
    let anchors: Vec<(f64, String)> = if map.source == MapSource::DemoSet {
        DEMO_SET_LABELS
            .iter()
            .map(|(hz, label)| (*hz, (*label).to_owned()))
            .collect()
    } else {
        chosen_part(state, ctx.build)
            .and_then(|p| p.latest_pass())
            .map(keep::pass_anchors)
            .unwrap_or_default()
    };
    let labels = keep::labels_near(&frequencies, &anchors);
    let taps: usize = map.taps_used.iter().sum();
    let left_out: usize = map.rejected.iter().map(Vec::len).sum();
    state.note = Some((
        format!(
            "Mapped {}: {} modes over {} points from {taps} taps{}.",
            map.source.describe(),
            map.modes.len(),
            map.points.len(),
            if left_out > 0 {
                format!(" ({left_out} left out by the trigger)")
            } else {
                String::new()
            }
        ),
        false,
    ));
    state.shown = Some(MapShown::new(map, labels));
}

fn chosen_part<'b>(
    state: &ShapesAreaState,
    build: Option<&'b Build>,
) -> Option<&'b crate::ledger::Part> {
    build?.part(state.setup.part.as_deref()?)
}

/// When every point of the grid has its taps, the map is worked out.
fn map_finished_grid(state: &mut ShapesAreaState, ctx: &AreaContext) {
    let Some(tapping) = state.tapping.as_mut() else {
        return;
    };
    if tapping.complete_unmapped {
        tapping.complete_unmapped = false;
        map_grid(state, ctx);
    }
}

fn map_grid(state: &mut ShapesAreaState, ctx: &AreaContext) {
    let Some(tapping) = state.tapping.as_ref() else {
        return;
    };
    match (tapping.survey.point_taps(), tapping.sample_rate_hz) {
        (Some(points), Some(rate)) => {
            state
                .work
                .map_taps(ctx.jobs, points, rate, tapping.outline.clone());
        }
        _ => {
            state.note = Some((
                "Every point needs at least one good tap before the shapes can be worked out."
                    .to_owned(),
                true,
            ));
        }
    }
}

fn open_set(state: &mut ShapesAreaState, ctx: &AreaContext, source: MapSource, path: PathBuf) {
    match state.setup.outline() {
        Ok(outline) => {
            state.note = None;
            state.work.map_set(ctx.jobs, source, path, outline);
        }
        Err(problem) => state.note = Some((format!("Check the outline first: {problem}"), true)),
    }
}

fn open_demo_set(state: &mut ShapesAreaState, ctx: &AreaContext, unit: LengthUnit) {
    let Some(path) = demo_set_path() else {
        state.note = Some((
            "The demo set (assets/roving_violin_top/points.csv) is not beside this program; open it from the tapwright sources.".to_owned(),
            true,
        ));
        return;
    };
    // The demo set was tapped over a violin outline of typical size.
    state
        .setup
        .set_outline(crate::shapes::OutlineShape::typical_violin(), unit);
    // The typed path stays the maker's own: the note names the demo set.
    open_set(state, ctx, MapSource::DemoSet, path);
}

// ----- the set bar ---------------------------------------------------------------

fn set_bar(ui: &mut egui::Ui, state: &mut ShapesAreaState, ctx: &mut AreaContext) {
    let unit = ctx.units.length;
    ui.add_space(4.0);
    ui.horizontal_wrapped(|ui| {
        ui.strong("Recorded set");
        if ui
            .button("Open points file…")
            .on_hover_text("A CSV with the header point,x_mm,y_mm,file and one recording per tap point beside it")
            .clicked()
        {
            state.work.choose_points_file(ctx.jobs);
        }
        let label = ui.label("Points file");
        let field = ui
            .add(
                egui::TextEdit::singleline(&mut state.path)
                    .hint_text("/path/to/points.csv")
                    .desired_width(300.0),
            )
            .labelled_by(label.id);
        let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
        if ui.button("Open this file").clicked() || entered {
            let typed = state.path.trim().to_owned();
            if typed.is_empty() {
                state.note = Some(("Type the path of a points file first.".to_owned(), true));
            } else {
                let path = PathBuf::from(typed);
                open_set(state, ctx, MapSource::Set(path.clone()), path);
            }
        }
        if ui
            .button("Open the demo set")
            .on_hover_text("45 points of an invented violin top, tapped twice each: see a map without a microphone")
            .clicked()
        {
            open_demo_set(state, ctx, unit);
        }
        if let Some(what) = &state.work.mapping {
            ui.spinner();
            ui.label(format!("Working out the shapes of {what} …"));
        }
    });
    if let Some((text, is_error)) = state.note.clone() {
        let dismissed = ui
            .horizontal_wrapped(|ui| {
                if is_error {
                    ui.colored_label(ui.visuals().error_fg_color, &text);
                } else {
                    ui.label(&text);
                }
                ui.small_button("OK")
                    .accessible_name("Dismiss the message")
                    .clicked()
            })
            .inner;
        if dismissed {
            state.note = None;
        }
    }
    ui.add_space(2.0);
}

// ----- the side panel ------------------------------------------------------------

fn side_panel(
    ui: &mut egui::Ui,
    state: &mut ShapesAreaState,
    facts: &ShapesFacts,
    ctx: &mut AreaContext,
    unit: LengthUnit,
) {
    ui.add_space(4.0);
    ui.strong("Part, outline and grid");
    let locked = state.tapping.is_some();
    setup::setup_form(ui, &mut state.setup, ctx.build, unit, locked);
    ui.separator();
    input_line(ui, facts.input);
    let drawing_size = egui::vec2(ui.available_width(), 340.0);
    match state.tapping.as_mut() {
        None => match state.setup.outline_and_grid() {
            Ok((outline, grid)) => {
                if ui
                        .button("Start tapping the grid")
                        .on_hover_text("Taps from the input go to the grid's points, one after the other, instead of to Listen")
                        .clicked()
                    {
                        match Tapping::new(outline, grid, state.setup.taps_per_point) {
                            Ok(tapping) => state.tapping = Some(tapping),
                            Err(problem) => state.note = Some((problem, true)),
                        }
                        return;
                    }
                grid_preview(ui, &outline, &grid, unit, drawing_size);
            }
            Err(problem) => {
                ui.colored_label(ui.visuals().error_fg_color, problem);
            }
        },
        Some(tapping) => {
            let mut stop = false;
            let mut map_now = false;
            tapping_section(ui, tapping, unit, drawing_size, &mut stop, &mut map_now);
            if map_now {
                map_grid(state, ctx);
            }
            if stop {
                state.tapping = None;
            }
        }
    }
}

/// Where the taps come from, and a warning when nothing can come.
fn input_line(ui: &mut egui::Ui, input: &InputView) {
    let running = matches!(input.state, SourceState::Running);
    ui.label(format!("Input: {}", input.description));
    if !running {
        let why = match &input.state {
            SourceState::Starting => "it is being opened".to_owned(),
            SourceState::Ended => "the demo recording has ended".to_owned(),
            SourceState::File(_) => "Listen shows a recording opened from a file".to_owned(),
            SourceState::Trouble(t) | SourceState::Failed(t) => t.trim_end_matches('.').to_owned(),
            SourceState::Running => String::new(),
        };
        ui.colored_label(
            ui.visuals().warn_fg_color,
            format!("No live taps can arrive ({why}). Choose a microphone in Listen, or open the demo set above."),
        );
    }
}

fn grid_preview(
    ui: &mut egui::Ui,
    outline: &crate::shapes::Outline,
    grid: &[crate::shapes::TapPoint],
    unit: LengthUnit,
    size: egui::Vec2,
) {
    let markers: Vec<Marker> = grid
        .iter()
        .map(|p| {
            let hover = format!(
                "{}: across {}, along {}",
                p.name,
                unit.size_text(p.x_mm),
                unit.size_text(p.y_mm)
            );
            Marker::at(p, MarkerKind::Plain, hover)
        })
        .collect();
    ui.weak(format!(
        "{} tap points, visited row by row from the upper end (row 1) and back along the next row; columns lettered from the bass side (left).",
        grid.len()
    ));
    PlateView {
        outline,
        field: None,
        lines: &[],
        markers: &markers,
        palette: Palette::Shape,
        description: format!("The grid of {} tap points", grid.len()),
    }
    .show(ui, size);
}

fn tapping_section(
    ui: &mut egui::Ui,
    tapping: &mut Tapping,
    unit: LengthUnit,
    size: egui::Vec2,
    stop: &mut bool,
    map_now: &mut bool,
) {
    let next = tapping
        .survey
        .points()
        .get(tapping.survey.current())
        .map(|p| p.name.clone())
        .unwrap_or_default();
    if tapping.listening {
        ui.heading(format!("Tap point {next}"));
    } else {
        ui.heading("Not listening");
    }
    let (done, all) = tapping.survey.progress();
    ui.add(
        egui::ProgressBar::new(done as f32 / all.max(1) as f32)
            .text(tapping.progress_text())
            .desired_width(ui.available_width().min(300.0)),
    );
    if let Some(text) = tapping.refused_text() {
        ui.weak(text);
    }
    for news in &tapping.news {
        if news.refused {
            ui.colored_label(ui.visuals().warn_fg_color, &news.text);
        } else {
            ui.label(&news.text);
        }
    }
    // The controls above the drawing, so they stay in sight on a low
    // window.
    tapping::point_controls(ui, tapping);
    ui.horizontal_wrapped(|ui| {
        let (text, hover) = if tapping.listening {
            ("Pause", "Taps go to Listen again until you go on")
        } else {
            ("Listen again", "Taps go to the grid's point to tap now")
        };
        if ui.button(text).on_hover_text(hover).clicked() {
            tapping.listening = !tapping.listening;
        }
        let ready = tapping.survey.point_taps().is_some();
        if ui
            .add_enabled(ready, egui::Button::new("Work out the shapes"))
            .on_disabled_hover_text("Every point needs at least one good tap first")
            .clicked()
        {
            *map_now = true;
        }
        if ui
            .button("Stop and forget the grid")
            .on_hover_text("Forget this grid's taps; the map shown stays")
            .clicked()
        {
            *stop = true;
        }
    });
    tapping::grid_drawing(ui, tapping, unit, size);
}

// ----- the middle ------------------------------------------------------------------

fn central(
    ui: &mut egui::Ui,
    state: &mut ShapesAreaState,
    facts: &ShapesFacts,
    ctx: &mut AreaContext,
    unit: LengthUnit,
) {
    let label_choices = label_choices(state, ctx.build);
    let part = state.setup.part.clone();
    let Some(shown) = state.shown.as_mut() else {
        introduction(ui, facts.input);
        return;
    };
    ui.horizontal_wrapped(|ui| {
        ui.heading(format!("Map of {}", shown.map.source.describe()));
        ui.label(map_summary(&shown.map));
    });
    let outside = shown.map.points_outside();
    if outside > 0 {
        ui.colored_label(
            ui.visuals().warn_fg_color,
            format!(
                "{outside} of {} points lie outside the outline: check the outline's kind and size on the left, then open the set again.",
                shown.map.points.len()
            ),
        );
    }
    let height = (ui.available_height() - 230.0).clamp(260.0, 460.0);
    ui.horizontal_top(|ui| {
        ui.vertical(|ui| {
            ui.set_width(285.0);
            map_view::mode_list(ui, shown, &label_choices);
            ui.add_space(6.0);
            keep::keep_section(ui, &mut state.keep, shown, part.as_deref(), ctx);
        });
        ui.separator();
        let column_width = ((ui.available_width() - 40.0) / 2.0).max(220.0);
        ui.vertical(|ui| {
            ui.set_width(column_width);
            map_view::shape_panel(ui, shown, unit, egui::vec2(column_width, height));
        });
        ui.separator();
        ui.vertical(|ui| {
            ui.set_width(column_width);
            carving_view::carving_panel(ui, shown, egui::vec2(column_width, height));
        });
    });
}

fn map_summary(map: &DrawnMap) -> String {
    let taps: usize = map.taps_used.iter().sum();
    let mut text = format!(
        "{} modes · {} points · {taps} taps used · recorded at {} Hz",
        map.modes.len(),
        map.points.len(),
        map.sample_rate_hz
    );
    let left_out: Vec<String> = map
        .points
        .iter()
        .zip(&map.rejected)
        .flat_map(|(p, reasons)| reasons.iter().map(move |r| format!("{} ({r})", p.name)))
        .collect();
    if !left_out.is_empty() {
        text.push_str(&format!(
            " · left out by the trigger: {}",
            left_out.join(", ")
        ));
    }
    text
}

/// The labels offered for the map's modes: the chosen part's, else the
/// trade's free-plate labels of the outline's family.
fn label_choices(state: &ShapesAreaState, build: Option<&Build>) -> Vec<String> {
    if let Some(part) = chosen_part(state, build) {
        if !part.labels().is_empty() {
            return part.labels().to_vec();
        }
    }
    let preset = match state.setup.kind {
        OutlineKind::Guitar => labels::GUITAR_FREE_PLATE,
        OutlineKind::Violin | OutlineKind::Rectangle => labels::VIOLIN_FREE_PLATE,
    };
    preset.iter().map(|s| (*s).to_owned()).collect()
}

fn introduction(ui: &mut egui::Ui, input: &InputView) {
    ui.add_space(16.0);
    ui.heading("Shapes: see the nodal lines without sand");
    ui.label(
        "Keep the microphone in one place near the plate and tap the plate at every point of a grid. \
         Each mode sounds louder or softer, in one sense or the other, depending on where it is tapped, \
         so the taps together give each mode's shape over the plate: its nodal lines, and where thinning \
         would move it most.",
    );
    ui.label(
        "Choose the part, its outline and the grid on the left, press Start tapping the grid, and tap the \
         point shown (two to four good taps each); or open a recorded set above.",
    );
    if !matches!(input.state, SourceState::Running) {
        ui.label("No microphone is listening now: Open the demo set above shows a map of an invented violin top.");
    }
    ui.add_space(8.0);
    ui.colored_label(ui.visuals().warn_fg_color, crate::shapes::CARVING_CAUTION);
}
