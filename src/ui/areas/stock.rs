//! The Stock area: grading tonewood from bar taps before a plate is carved.
//!
//! Left: one sample as typed (name, species, where it came from, an
//! along-grain and a cross-grain bar with sizes, mass and the frequencies
//! heard), how to hold and tap each bar mode, a frequency taken from a
//! Listen mode with one click, and the figures worked out by
//! [`crate::acoustics::stock`]. Right: the build's stock list as a sorted
//! table and a scatter plot.
//!
//! Everything is recomputed every frame from the text; a value that is not
//! a number or that the acoustics layer refuses shows as one sentence in
//! place of the figures. The build changes only through
//! [`AppCommand::EditBuild`].

use eframe::egui;
use egui_plot::{Legend, MarkerShape, Plot, Points};

use crate::acoustics::stock::{bar_figures, BarFigures, BarMode, BarSample, WOOD_POISSON_RATIO};
use crate::ledger::StockSample;

use crate::text::{capitalised, num, parse_number, sentence};
use crate::ui::commands::AppCommand;
use crate::ui::context::AreaContext;

/// Width of a number field, points.
const FIELD_WIDTH: f32 = 64.0;
/// Height of the scatter plot, points.
const PLOT_HEIGHT: f32 = 300.0;

/// One bar as typed.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct BarDraft {
    /// Length, mm.
    pub length_mm: String,
    /// Width, mm.
    pub width_mm: String,
    /// Thickness, mm.
    pub thickness_mm: String,
    /// Mass, g.
    pub mass_g: String,
    /// First flexural frequency, Hz.
    pub flexural_hz: String,
    /// Second flexural frequency, Hz.
    pub second_flexural_hz: String,
    /// First longitudinal frequency, Hz.
    pub longitudinal_hz: String,
}

impl BarDraft {
    fn fields(&self) -> [&String; 7] {
        [
            &self.length_mm,
            &self.width_mm,
            &self.thickness_mm,
            &self.mass_g,
            &self.flexural_hz,
            &self.second_flexural_hz,
            &self.longitudinal_hz,
        ]
    }

    fn is_empty(&self) -> bool {
        self.fields().iter().all(|t| t.trim().is_empty())
    }

    fn frequency_mut(&mut self, mode: BarMode) -> &mut String {
        match mode {
            BarMode::Flexural => &mut self.flexural_hz,
            BarMode::SecondFlexural => &mut self.second_flexural_hz,
            BarMode::Longitudinal => &mut self.longitudinal_hz,
        }
    }

    /// The bar, None when nothing is typed, or one sentence.
    fn to_bar(&self, which: &str) -> Result<Option<BarSample>, String> {
        if self.is_empty() {
            return Ok(None);
        }
        let optional = |what: &str, text: &str| {
            if text.trim().is_empty() {
                Ok(None)
            } else {
                parse_number(&format!("the {which} {what}"), text).map(Some)
            }
        };
        Ok(Some(BarSample {
            length_mm: parse_number(&format!("the {which} length"), &self.length_mm)?,
            width_mm: parse_number(&format!("the {which} width"), &self.width_mm)?,
            thickness_mm: parse_number(&format!("the {which} thickness"), &self.thickness_mm)?,
            mass_g: parse_number(&format!("the {which} mass"), &self.mass_g)?,
            flexural_hz: optional("first flexural frequency", &self.flexural_hz)?,
            second_flexural_hz: optional("second flexural frequency", &self.second_flexural_hz)?,
            longitudinal_hz: optional("longitudinal frequency", &self.longitudinal_hz)?,
        }))
    }

    fn from_bar(bar: Option<&BarSample>) -> Self {
        let Some(bar) = bar else {
            return Self::default();
        };
        let number = |v: f64| format!("{v}");
        let optional = |v: Option<f64>| v.map(number).unwrap_or_default();
        Self {
            length_mm: number(bar.length_mm),
            width_mm: number(bar.width_mm),
            thickness_mm: number(bar.thickness_mm),
            mass_g: number(bar.mass_g),
            flexural_hz: optional(bar.flexural_hz),
            second_flexural_hz: optional(bar.second_flexural_hz),
            longitudinal_hz: optional(bar.longitudinal_hz),
        }
    }
}

/// How the stock table is sorted.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum SortBy {
    /// Highest radiation ratio first.
    #[default]
    RadiationRatio,
    /// Lightest first.
    Density,
    /// Stiffest along the grain first.
    Modulus,
    /// Fastest first.
    SpeedOfSound,
    /// By name.
    Name,
}

impl SortBy {
    const ALL: [SortBy; 5] = [
        SortBy::RadiationRatio,
        SortBy::Density,
        SortBy::Modulus,
        SortBy::SpeedOfSound,
        SortBy::Name,
    ];

    fn title(self) -> &'static str {
        match self {
            SortBy::RadiationRatio => "radiation ratio, highest first",
            SortBy::Density => "density, lightest first",
            SortBy::Modulus => "E along the grain, stiffest first",
            SortBy::SpeedOfSound => "speed of sound, fastest first",
            SortBy::Name => "name",
        }
    }
}

/// What the scatter plot shows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum PlotAxes {
    /// Speed of sound against density.
    #[default]
    SpeedAgainstDensity,
    /// Young's modulus against density.
    ModulusAgainstDensity,
}

/// What the Stock area remembers between frames. Owned by the app.
#[derive(Debug, Default)]
pub struct StockAreaState {
    /// The sample's name, as typed.
    pub name: String,
    /// Species, as typed.
    pub species: String,
    /// Where it came from, as typed.
    pub source_note: String,
    /// The along-grain bar, as typed.
    pub along: BarDraft,
    /// The cross-grain bar, as typed.
    pub across: BarDraft,
    /// The Listen mode picked (index into the Listen result's modes).
    pub listen_mode: Option<usize>,
    /// Table order.
    pub sort: SortBy,
    /// Scatter plot axes.
    pub axes: PlotAxes,
}

/// The figures of one typed bar: nothing typed, figures, or a sentence.
type Worked = Result<Option<BarFigures>, String>;

fn work_out(draft: &BarDraft, which: &str) -> Worked {
    match draft.to_bar(which)? {
        None => Ok(None),
        Some(bar) => bar_figures(&bar)
            .map(Some)
            .map_err(|e| sentence(&format!("{which} bar: {e}"))),
    }
}

/// Draws the Stock area.
pub fn show(ui: &mut egui::Ui, state: &mut StockAreaState, ctx: &mut AreaContext) {
    egui::ScrollArea::both()
        .id_salt("stock scroll")
        .auto_shrink([false, false])
        .show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.heading("Stock");
                ui.weak("Grade the wood before carving: tap sample bars cut from the billet and compare their stiffness, density and radiation ratio.");
            });
            ui.weak("Cutting sample bars: saws and planes are sharp and wood dust is a health hazard; see Help for the cautions and follow your workshop's rules.");
            ui.add_space(4.0);
            let total = ui.available_width().max(1180.0) - 30.0;
            let widths = [0.46 * total, 0.54 * total].map(f32::floor);
            ui.horizontal_top(|ui| {
                ui.vertical(|ui| {
                    ui.set_width(widths[0]);
                    sample_form(ui, state, ctx);
                });
                ui.separator();
                ui.vertical(|ui| {
                    ui.set_width(widths[1]);
                    stock_list(ui, state, ctx);
                });
            });
        });
}

// ----- the sample being typed -----------------------------------------------

fn sample_form(ui: &mut egui::Ui, state: &mut StockAreaState, ctx: &mut AreaContext) {
    ui.strong("Sample");
    egui::Grid::new("stock sample grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            for (name, text, width) in [
                ("Name", &mut state.name, 200.0),
                ("Species", &mut state.species, 200.0),
                ("Source", &mut state.source_note, 320.0),
            ] {
                ui.label(name);
                ui.add(egui::TextEdit::singleline(text).desired_width(width))
                    .accessible_name(format!("Sample {}", name.to_lowercase()));
                ui.end_row();
            }
        });
    ui.add_space(4.0);
    tap_instructions(ui);
    ui.add_space(4.0);
    let listen_hz = listen_mode_picker(ui, state, ctx);
    ui.add_space(4.0);
    let along = bar_section(ui, "Along-grain", &mut state.along, listen_hz);
    ui.add_space(6.0);
    let across = bar_section(ui, "Cross-grain", &mut state.across, listen_hz);
    if let (Ok(Some(along)), Ok(Some(across))) = (&along, &across) {
        ui.add_space(4.0);
        ui.label(
            egui::RichText::new(format!(
                "E along / E across: {}",
                num(crate::acoustics::stock::grain_ratio(along, across), 1)
            ))
            .strong(),
        );
    }
    ui.add_space(6.0);
    keep_in_build(ui, state, ctx, along.is_ok() && across.is_ok());
}

fn tap_instructions(ui: &mut egui::Ui) {
    egui::CollapsingHeader::new("How to hold and tap a bar")
        .default_open(true)
        .show(ui, |ui| {
            for mode in BarMode::ALL {
                ui.horizontal_wrapped(|ui| {
                    ui.strong(format!("{}:", capitalised(mode.name())));
                    ui.label(mode.tap_instructions());
                });
            }
        });
}

/// The Listen mode picker; returns the picked mode's frequency.
fn listen_mode_picker(
    ui: &mut egui::Ui,
    state: &mut StockAreaState,
    ctx: &AreaContext,
) -> Option<f64> {
    let modes: Vec<(f64, Option<String>)> = ctx
        .measured_modes()
        .into_iter()
        .map(|(mode, label)| (mode.frequency_hz, label))
        .collect();
    if modes.is_empty() {
        ui.weak("Tap a bar in the Listen area: its modes can then fill the frequencies here.");
        return None;
    }
    if state.listen_mode.is_none_or(|i| i >= modes.len()) {
        state.listen_mode = Some(0);
    }
    let picked = state.listen_mode.unwrap_or(0);
    let text = |(hz, label): &(f64, Option<String>)| match label {
        Some(label) => format!("{} Hz ({label})", num(*hz, 1)),
        None => format!("{} Hz", num(*hz, 1)),
    };
    ui.horizontal(|ui| {
        let label = ui.label("Listen mode");
        egui::ComboBox::from_id_salt("stock listen mode")
            .selected_text(text(&modes[picked]))
            .show_ui(ui, |ui| {
                for (index, mode) in modes.iter().enumerate() {
                    if ui.selectable_label(index == picked, text(mode)).clicked() {
                        state.listen_mode = Some(index);
                    }
                }
            })
            .response
            .labelled_by(label.id);
        ui.weak("then \"From Listen\" beside a frequency");
    });
    state
        .listen_mode
        .and_then(|i| modes.get(i))
        .map(|(hz, _)| *hz)
}

/// One bar's fields and figures; returns the figures (or the problem).
fn bar_section(
    ui: &mut egui::Ui,
    which: &str,
    draft: &mut BarDraft,
    listen_hz: Option<f64>,
) -> Worked {
    ui.strong(format!("{which} bar"));
    egui::Grid::new(("stock bar grid", which))
        .num_columns(4)
        .spacing([6.0, 4.0])
        .show(ui, |ui| {
            let sizes = [
                ("length", "mm", &mut draft.length_mm),
                ("width", "mm", &mut draft.width_mm),
                ("thickness", "mm", &mut draft.thickness_mm),
                ("mass", "g", &mut draft.mass_g),
            ];
            for (pair_index, (name, unit, text)) in sizes.into_iter().enumerate() {
                number_field(ui, which, name, unit, text);
                if pair_index % 2 == 1 {
                    ui.end_row();
                }
            }
        });
    for mode in BarMode::ALL {
        ui.horizontal(|ui| {
            let name = format!("{which} {}", mode.name());
            ui.label(format!("{} frequency", capitalised(mode.name())));
            ui.add(
                egui::TextEdit::singleline(draft.frequency_mut(mode)).desired_width(FIELD_WIDTH),
            )
            .accessible_name(name.clone());
            ui.label("Hz");
            let button = ui
                .add_enabled(listen_hz.is_some(), egui::Button::new("From Listen"))
                .accessible_name(format!("Use the picked Listen mode for the {name}"))
                .on_hover_text(mode.tap_instructions())
                .on_disabled_hover_text("Tap the bar in the Listen area first");
            if button.clicked() {
                if let Some(hz) = listen_hz {
                    *draft.frequency_mut(mode) = format!("{hz:.2}");
                }
            }
        });
    }
    let worked = work_out(draft, which);
    match &worked {
        Ok(None) => {
            ui.weak(format!(
                "Type the {} bar's sizes, mass and at least one frequency to see its figures.",
                which.to_lowercase()
            ));
        }
        Ok(Some(figures)) => figures_grid(ui, which, figures),
        Err(message) => {
            ui.colored_label(ui.visuals().error_fg_color, message);
        }
    }
    worked
}

fn number_field(ui: &mut egui::Ui, which: &str, name: &str, unit: &str, text: &mut String) {
    ui.label(capitalised(name));
    ui.horizontal(|ui| {
        ui.add(egui::TextEdit::singleline(text).desired_width(FIELD_WIDTH))
            .accessible_name(format!("{which} {name}"));
        ui.label(unit);
    });
}

fn figures_grid(ui: &mut egui::Ui, which: &str, figures: &BarFigures) {
    egui::Grid::new(("stock figures grid", which))
        .num_columns(2)
        .spacing([10.0, 2.0])
        .show(ui, |ui| {
            let mut row = |name: &str, value: String| {
                ui.label(name);
                ui.monospace(value);
                ui.end_row();
            };
            row(
                "Density",
                format!("{} kg/m³", num(figures.density_kg_m3, 0)),
            );
            if let Some(flexural) = &figures.flexural {
                row(
                    "E, flexural (ASTM E1876)",
                    format!(
                        "{} GPa  (T1 {}, μ {WOOD_POISSON_RATIO})",
                        num(flexural.youngs_modulus_pa * 1e-9, 2),
                        num(flexural.t1_correction, 4)
                    ),
                );
            }
            if let Some(longitudinal) = &figures.longitudinal {
                row(
                    "E, longitudinal",
                    format!("{} GPa", num(longitudinal.youngs_modulus_pa * 1e-9, 2)),
                );
            }
            row(
                "Speed of sound",
                format!("{} m/s", num(figures.speed_of_sound_m_s, 0)),
            );
            row(
                "Radiation ratio c/ρ",
                format!("{} m⁴/(kg·s)", num(figures.radiation_ratio, 2)),
            );
            row(
                "Specific modulus E/ρ",
                format!("{} GPa/(g/cm³)", num(figures.specific_modulus, 2)),
            );
            if let Some(check) = &figures.second_mode {
                row(
                    "Second / first flexural",
                    format!(
                        "{} (slender bar {})",
                        num(check.ratio, 3),
                        num(check.slender_ratio, 3)
                    ),
                );
            }
        });
    if let Some(check) = figures.second_mode.as_ref().filter(|c| !c.consistent) {
        ui.colored_label(
            ui.visuals().warn_fg_color,
            format!(
                "The second mode is {}% from where a slender bar puts it: check that both are flexural modes of this bar.",
                num(check.deviation_pct, 1)
            ),
        );
    }
    if figures.flexural.is_some() && figures.longitudinal.is_some() {
        ui.weak("Speed of sound and the ratios use the flexural E.");
    }
}

fn keep_in_build(
    ui: &mut egui::Ui,
    state: &mut StockAreaState,
    ctx: &mut AreaContext,
    figures_ok: bool,
) {
    if ctx.build.is_none() {
        ui.weak("Open or start a build in the Ledger area to keep samples in its stock list.");
        return;
    }
    let sample = draft_sample(state);
    let ready = figures_ok && sample.is_ok();
    ui.horizontal_wrapped(|ui| {
        let keep = ui
            .add_enabled(ready, egui::Button::new("Keep in the build"))
            .on_hover_text("Add this sample to the build's stock list (a sample of the same name is replaced); save the build to keep it on disk")
            .on_disabled_hover_text("Give the sample a name and at least one valid bar first");
        if keep.clicked() {
            if let Ok(sample) = sample.clone() {
                let name = sample.name.clone();
                ctx.push(AppCommand::EditBuild {
                    description: "keeping the stock sample".to_owned(),
                    edit: Box::new(move |build| {
                        build.put_stock_sample(sample)?;
                        Ok(format!("Kept stock sample \"{name}\" in the build."))
                    }),
                });
            }
        }
        if ui.button("Clear the form").clicked() {
            let keep_mode = state.listen_mode;
            *state = StockAreaState {
                listen_mode: keep_mode,
                sort: state.sort,
                axes: state.axes,
                ..StockAreaState::default()
            };
        }
    });
    if let Err(message) = &sample {
        if figures_ok {
            ui.weak(message);
        }
    }
}

fn draft_sample(state: &StockAreaState) -> Result<StockSample, String> {
    if state.name.trim().is_empty() {
        return Err("Give the sample a name to keep it in the build.".to_owned());
    }
    let along_grain = state.along.to_bar("along-grain")?;
    let cross_grain = state.across.to_bar("cross-grain")?;
    if along_grain.is_none() && cross_grain.is_none() {
        return Err("Type at least one bar to keep the sample.".to_owned());
    }
    Ok(StockSample {
        name: state.name.trim().to_owned(),
        species: state.species.trim().to_owned(),
        source_note: state.source_note.trim().to_owned(),
        along_grain,
        cross_grain,
    })
}

// ----- the build's stock list ------------------------------------------------

/// A stock sample with the figures the table and plot need.
struct Row<'a> {
    sample: &'a StockSample,
    along: Option<BarFigures>,
    across: Option<BarFigures>,
}

impl Row<'_> {
    /// The figures to compare samples by: along-grain, else cross-grain.
    fn main(&self) -> Option<&BarFigures> {
        self.along.as_ref().or(self.across.as_ref())
    }
}

fn rows(stock: &[StockSample], sort: SortBy) -> Vec<Row<'_>> {
    let mut rows: Vec<Row> = stock
        .iter()
        .map(|sample| Row {
            sample,
            along: sample.along_figures().and_then(Result::ok),
            across: sample.cross_figures().and_then(Result::ok),
        })
        .collect();
    let key = |row: &Row| -> f64 {
        let Some(f) = row.main() else {
            return f64::NEG_INFINITY;
        };
        match sort {
            SortBy::RadiationRatio => f.radiation_ratio,
            SortBy::Density => -f.density_kg_m3,
            SortBy::Modulus => row
                .along
                .as_ref()
                .map_or(f64::NEG_INFINITY, |a| a.youngs_modulus_pa),
            SortBy::SpeedOfSound => f.speed_of_sound_m_s,
            SortBy::Name => 0.0,
        }
    };
    if sort == SortBy::Name {
        rows.sort_by(|a, b| a.sample.name.cmp(&b.sample.name));
    } else {
        rows.sort_by(|a, b| key(b).total_cmp(&key(a)));
    }
    rows
}

fn stock_list(ui: &mut egui::Ui, state: &mut StockAreaState, ctx: &mut AreaContext) {
    ui.strong("Stock list");
    let Some(build) = ctx.build else {
        ui.weak("No build is open: the stock list belongs to a build (open or start one in the Ledger area).");
        return;
    };
    if build.stock().is_empty() {
        ui.weak(format!(
            "Build \"{}\" has no stock samples yet: type one on the left and keep it.",
            build.name
        ));
        return;
    }
    ui.horizontal(|ui| {
        let label = ui.label("Sort by");
        egui::ComboBox::from_id_salt("stock sort")
            .selected_text(state.sort.title())
            .show_ui(ui, |ui| {
                for sort in SortBy::ALL {
                    ui.selectable_value(&mut state.sort, sort, sort.title());
                }
            })
            .response
            .labelled_by(label.id);
    });
    let rows = rows(build.stock(), state.sort);
    let mut edit: Option<StockSample> = None;
    let mut remove: Option<String> = None;
    stock_table(ui, &rows, &mut edit, &mut remove);
    ui.weak("Figures from the along-grain bar (the cross-grain bar where there is no other); E across and the ratio need both bars.");
    ui.add_space(6.0);
    ui.horizontal(|ui| {
        ui.radio_value(
            &mut state.axes,
            PlotAxes::SpeedAgainstDensity,
            "Speed of sound against density",
        );
        ui.radio_value(
            &mut state.axes,
            PlotAxes::ModulusAgainstDensity,
            "E against density",
        );
    });
    scatter(ui, &rows, state.axes);
    if let Some(sample) = edit {
        load_sample(state, &sample);
    }
    if let Some(name) = remove {
        ctx.push(AppCommand::EditBuild {
            description: "removing the stock sample".to_owned(),
            edit: Box::new(move |build| {
                build.remove_stock_sample(&name)?;
                Ok(format!("Removed stock sample \"{name}\" from the build."))
            }),
        });
    }
}

fn stock_table(
    ui: &mut egui::Ui,
    rows: &[Row],
    edit: &mut Option<StockSample>,
    remove: &mut Option<String>,
) {
    egui::Grid::new("stock table")
        .num_columns(10)
        .striped(true)
        .spacing([8.0, 3.0])
        .show(ui, |ui| {
            for (title, hover) in [
                ("Sample", "Hover a name for its source note"),
                ("Species", ""),
                ("ρ kg/m³", "Density"),
                ("E GPa", "Young's modulus along the grain"),
                ("c m/s", "Speed of sound, √(E/ρ)"),
                ("c/ρ", "Radiation ratio, m⁴/(kg·s)"),
                ("E/ρ", "Specific modulus, GPa per g/cm³"),
                ("E across", "Young's modulus across the grain, GPa"),
                ("ratio", "E along / E across"),
                ("", ""),
            ] {
                let response = ui.strong(title);
                if !hover.is_empty() {
                    response.on_hover_text(hover);
                }
            }
            ui.end_row();
            let dash = || "–".to_owned();
            for row in rows {
                ui.label(&row.sample.name)
                    .on_hover_text(&row.sample.source_note);
                ui.label(&row.sample.species);
                let main = row.main();
                ui.monospace(main.map_or_else(dash, |f| num(f.density_kg_m3, 0)));
                ui.monospace(
                    row.along
                        .as_ref()
                        .map_or_else(dash, |f| num(f.youngs_modulus_gpa(), 2)),
                );
                ui.monospace(main.map_or_else(dash, |f| num(f.speed_of_sound_m_s, 0)));
                ui.monospace(main.map_or_else(dash, |f| num(f.radiation_ratio, 2)));
                ui.monospace(main.map_or_else(dash, |f| num(f.specific_modulus, 1)));
                ui.monospace(
                    row.across
                        .as_ref()
                        .map_or_else(dash, |f| num(f.youngs_modulus_gpa(), 3)),
                );
                ui.monospace(row.sample.grain_ratio().map_or_else(dash, |r| num(r, 1)));
                ui.horizontal(|ui| {
                    if ui
                        .small_button("Edit")
                        .on_hover_text("Load this sample into the form on the left")
                        .clicked()
                    {
                        *edit = Some(row.sample.clone());
                    }
                    if ui
                        .small_button("Remove")
                        .on_hover_text("Take this sample out of the build's stock list")
                        .clicked()
                    {
                        *remove = Some(row.sample.name.clone());
                    }
                });
                ui.end_row();
            }
        });
}

/// The plotted point of a row: density and the chosen figure.
fn point_of(row: &Row, axes: PlotAxes) -> Option<[f64; 2]> {
    let f = row.main()?;
    let y = match axes {
        PlotAxes::SpeedAgainstDensity => f.speed_of_sound_m_s,
        PlotAxes::ModulusAgainstDensity => f.youngs_modulus_gpa(),
    };
    Some([f.density_kg_m3, y])
}

/// Bounds that hold every point with a margin, so none sits on the edge.
fn padded_bounds(points: &[[f64; 2]]) -> Option<([f64; 2], [f64; 2])> {
    let first = points.first()?;
    let (mut low, mut high) = (*first, *first);
    for p in points {
        for axis in 0..2 {
            low[axis] = low[axis].min(p[axis]);
            high[axis] = high[axis].max(p[axis]);
        }
    }
    for axis in 0..2 {
        let span = (high[axis] - low[axis])
            .max(0.1 * high[axis].abs())
            .max(1e-9);
        low[axis] -= 0.2 * span;
        high[axis] += 0.2 * span;
    }
    Some((low, high))
}

fn scatter(ui: &mut egui::Ui, rows: &[Row], axes: PlotAxes) {
    let (x_title, y_title) = match axes {
        PlotAxes::SpeedAgainstDensity => ("Density (kg/m³)", "Speed of sound (m/s)"),
        PlotAxes::ModulusAgainstDensity => ("Density (kg/m³)", "Young's modulus (GPa)"),
    };
    let plot = Plot::new("stock scatter")
        .height(PLOT_HEIGHT)
        .legend(Legend::default().position(egui_plot::Corner::RightTop))
        .x_axis_label(x_title)
        .y_axis_label(y_title)
        .allow_scroll(false);
    let points: Vec<[f64; 2]> = rows.iter().filter_map(|r| point_of(r, axes)).collect();
    let plot = match padded_bounds(&points) {
        Some((low, high)) => plot
            .include_x(low[0])
            .include_x(high[0])
            .include_y(low[1])
            .include_y(high[1]),
        None => plot,
    };
    plot.show(ui, |plot_ui| {
        for (index, row) in rows.iter().enumerate() {
            let Some(point) = point_of(row, axes) else {
                continue;
            };
            plot_ui.points(
                Points::new(row.sample.name.clone(), vec![point])
                    .color(colour(index))
                    .radius(5.0)
                    .filled(true)
                    .shape(MarkerShape::Circle),
            );
        }
    });
}

fn colour(index: usize) -> egui::Color32 {
    const PALETTE: [egui::Color32; 6] = [
        egui::Color32::from_rgb(86, 170, 255),
        egui::Color32::from_rgb(255, 160, 60),
        egui::Color32::from_rgb(90, 200, 120),
        egui::Color32::from_rgb(230, 90, 120),
        egui::Color32::from_rgb(180, 130, 250),
        egui::Color32::from_rgb(200, 190, 70),
    ];
    PALETTE[index % PALETTE.len()]
}

fn load_sample(state: &mut StockAreaState, sample: &StockSample) {
    state.name = sample.name.clone();
    state.species = sample.species.clone();
    state.source_note = sample.source_note.clone();
    state.along = BarDraft::from_bar(sample.along_grain.as_ref());
    state.across = BarDraft::from_bar(sample.cross_grain.as_ref());
}
