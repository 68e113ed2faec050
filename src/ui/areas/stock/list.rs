//! The build's stock list in the Stock area: a table sorted by the figure
//! the maker chooses and a scatter plot of speed of sound or Young's
//! modulus against density. Figures stay SI (kg/m³, GPa, m/s) with their
//! units shown; a sample's bars are given in the maker's units on hover.

use eframe::egui;
use egui_plot::{Legend, MarkerShape, Plot, Points};

use crate::acoustics::stock::BarFigures;
use crate::ledger::StockSample;
use crate::text::{num, Units};
use crate::ui::commands::AppCommand;
use crate::ui::context::AreaContext;

use super::{load_sample, StockAreaState};

/// Height of the scatter plot, points.
const PLOT_HEIGHT: f32 = 300.0;

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
    pub const ALL: [SortBy; 5] = [
        SortBy::RadiationRatio,
        SortBy::Density,
        SortBy::Modulus,
        SortBy::SpeedOfSound,
        SortBy::Name,
    ];

    pub fn title(self) -> &'static str {
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

/// The stock list: sort order, table and scatter plot.
pub(super) fn stock_list(ui: &mut egui::Ui, state: &mut StockAreaState, ctx: &mut AreaContext) {
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
    stock_table(ui, &rows, ctx.units, (&mut edit, &mut remove));
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

/// The table; a row's Edit or Remove lands in `edit` or `remove`.
fn stock_table(
    ui: &mut egui::Ui,
    rows: &[Row],
    units: Units,
    (edit, remove): (&mut Option<StockSample>, &mut Option<String>),
) {
    egui::Grid::new("stock table")
        .num_columns(10)
        .striped(true)
        .spacing([8.0, 3.0])
        .show(ui, |ui| {
            for (title, hover) in [
                ("Sample", "Hover a name for its source note and its bars"),
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
                    .on_hover_text(sample_hover_text(row.sample, units));
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

/// A sample's source note and its bars in the maker's units.
fn sample_hover_text(sample: &StockSample, units: Units) -> String {
    let mut lines = Vec::new();
    if !sample.source_note.trim().is_empty() {
        lines.push(sample.source_note.clone());
    }
    for (grain, bar) in [
        ("Along the grain", sample.along_grain.as_ref()),
        ("Across the grain", sample.cross_grain.as_ref()),
    ] {
        if let Some(bar) = bar {
            let sizes = (bar.length_mm, bar.width_mm, bar.thickness_mm);
            lines.push(format!("{grain}: {}", units.bar_text(sizes, bar.mass_g)));
        }
    }
    lines.join("\n")
}
