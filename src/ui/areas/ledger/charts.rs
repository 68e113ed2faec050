//! The charts of a part: each labelled mode's frequency against the pass
//! number and against the mass (with its target as a dashed line and, on
//! the mass chart, the forecast point with its band), and the stored spectra
//! of chosen passes overlaid on a logarithmic frequency axis.

use std::collections::BTreeSet;

use eframe::egui::{self, Color32};
use egui_plot::{HLine, Legend, Line, LineStyle, MarkerShape, Plot, Points};

use crate::ledger::Part;

use super::LedgerAreaState;
use crate::text::num;
use crate::ui::widgets::spectrum_plot::{frequency_label, log_frequency_marks};

/// Which chart is shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum ChartKind {
    /// Frequency against pass number.
    #[default]
    AgainstPass,
    /// Frequency against mass.
    AgainstMass,
    /// Spectra of chosen passes.
    Spectra,
}

impl ChartKind {
    const ALL: [ChartKind; 3] = [Self::AgainstPass, Self::AgainstMass, Self::Spectra];

    fn title(self) -> &'static str {
        match self {
            Self::AgainstPass => "Modes by pass",
            Self::AgainstMass => "Modes by mass",
            Self::Spectra => "Spectra",
        }
    }
}

const CHART_HEIGHT: f32 = 280.0;

/// A colour per series, readable on both themes.
fn colour(index: usize) -> Color32 {
    const PALETTE: [Color32; 6] = [
        Color32::from_rgb(86, 170, 255),
        Color32::from_rgb(255, 160, 60),
        Color32::from_rgb(90, 200, 120),
        Color32::from_rgb(230, 90, 120),
        Color32::from_rgb(180, 130, 250),
        Color32::from_rgb(200, 190, 70),
    ];
    PALETTE[index % PALETTE.len()]
}

/// The chart chooser and the chart.
pub fn charts(ui: &mut egui::Ui, state: &mut LedgerAreaState, part: &Part) {
    ui.horizontal(|ui| {
        ui.strong("Charts");
        for kind in ChartKind::ALL {
            ui.selectable_value(&mut state.chart, kind, kind.title());
        }
    });
    if part.passes().is_empty() {
        ui.weak("The charts fill in as passes are recorded.");
        return;
    }
    match state.chart {
        ChartKind::AgainstPass | ChartKind::AgainstMass => {
            mode_chart(ui, part, state.chart == ChartKind::AgainstMass)
        }
        ChartKind::Spectra => {
            let chosen = state
                .overlay
                .entry(part.name().to_owned())
                .or_insert_with(|| default_overlay(part));
            spectra_chart(ui, part, chosen);
        }
    }
}

fn mode_chart(ui: &mut egui::Ui, part: &Part, by_mass: bool) {
    let labels = part.labels_in_use();
    if labels.is_empty() {
        ui.weak("No labelled modes yet to chart.");
        return;
    }
    let x_title = if by_mass { "Mass (g)" } else { "Pass" };
    let forecasts = part.forecasts();
    let id = if by_mass {
        "modes by mass"
    } else {
        "modes by pass"
    };
    let mut plot = Plot::new((id, part.name()))
        .height(CHART_HEIGHT)
        .legend(Legend::default())
        .x_axis_label(x_title)
        .y_axis_label("Frequency (Hz)")
        .allow_scroll(false);
    if !by_mass {
        plot = plot.x_axis_formatter(|mark, _| {
            if (mark.value - mark.value.round()).abs() < 1e-6 && mark.value >= 1.0 {
                format!("{:.0}", mark.value)
            } else {
                String::new()
            }
        });
    }
    plot.show(ui, |plot_ui| {
        for (index, label) in labels.iter().enumerate() {
            let history = part.label_history(label);
            let points: Vec<[f64; 2]> = history
                .iter()
                .map(|p| {
                    let x = if by_mass {
                        p.mass_g
                    } else {
                        f64::from(p.pass_number)
                    };
                    [x, p.frequency_hz]
                })
                .filter(|p| p[0].is_finite() && p[1].is_finite())
                .collect();
            let colour = colour(index);
            plot_ui.line(Line::new(*label, points.clone()).color(colour).width(1.6));
            plot_ui.points(
                Points::new(*label, points)
                    .color(colour)
                    .radius(3.5)
                    .filled(true)
                    .shape(MarkerShape::Circle),
            );
            if let Some(target_hz) = part.targets().get(*label) {
                plot_ui.hline(
                    HLine::new("", *target_hz)
                        .color(colour.gamma_multiply(0.8))
                        .style(LineStyle::dashed_loose())
                        .width(1.0),
                );
            }
            if by_mass {
                if let Some(f) = forecasts.iter().find(|f| f.label == *label) {
                    forecast_marks(plot_ui, colour, f);
                }
            }
        }
    });
    if by_mass {
        ui.weak(
            "Dashed lines: targets. Hollow marks: where each forecast lands, with its mass band.",
        );
    } else {
        ui.weak("Dashed lines: targets.");
    }
}

fn forecast_marks(plot_ui: &mut egui_plot::PlotUi, colour: Color32, f: &crate::ledger::Forecast) {
    let (low, high) = f.target_mass_range_g;
    let finite = [f.target_mass_g, f.target_hz, low, high]
        .iter()
        .all(|v| v.is_finite());
    if !finite {
        return;
    }
    // No name: the marks stay out of the legend, beside their mode's line.
    let name = String::new();
    plot_ui.points(
        Points::new(name.clone(), vec![[f.target_mass_g, f.target_hz]])
            .color(colour)
            .radius(5.0)
            .filled(false)
            .shape(MarkerShape::Diamond),
    );
    plot_ui.line(
        Line::new(name.clone(), vec![[low, f.target_hz], [high, f.target_hz]])
            .color(colour)
            .width(3.0),
    );
    plot_ui.line(
        Line::new(
            name,
            vec![[f.now_mass_g, f.now_hz], [f.target_mass_g, f.target_hz]],
        )
        .color(colour.gamma_multiply(0.7))
        .style(LineStyle::dotted_dense())
        .width(1.0),
    );
}

/// First and latest passes with a spectrum.
fn default_overlay(part: &Part) -> BTreeSet<u32> {
    let with: Vec<u32> = part
        .passes()
        .iter()
        .filter(|p| p.spectrum.is_some())
        .map(|p| p.number())
        .collect();
    with.first()
        .into_iter()
        .chain(with.last())
        .copied()
        .collect()
}

fn spectra_chart(ui: &mut egui::Ui, part: &Part, chosen: &mut BTreeSet<u32>) {
    let with_spectrum: Vec<u32> = part
        .passes()
        .iter()
        .filter(|p| p.spectrum.is_some())
        .map(|p| p.number())
        .collect();
    if with_spectrum.is_empty() {
        ui.weak("No pass of this part kept its spectrum.");
        return;
    }
    ui.horizontal_wrapped(|ui| {
        ui.label("Show:");
        for number in &with_spectrum {
            let mut on = chosen.contains(number);
            if ui
                .checkbox(&mut on, format!("pass {number}"))
                .on_hover_text("Overlay this pass's spectrum")
                .changed()
            {
                if on {
                    chosen.insert(*number);
                } else {
                    chosen.remove(number);
                }
            }
        }
    });
    let (mut low_hz, mut high_hz) = (f64::INFINITY, 0.0f64);
    let mut top_db = f64::NEG_INFINITY;
    let mut curves = Vec::new();
    for (index, pass) in part.passes().iter().enumerate() {
        let Some(spectrum) = pass.spectrum.as_ref() else {
            continue;
        };
        if !chosen.contains(&pass.number()) {
            continue;
        }
        low_hz = low_hz.min(f64::from(spectrum.low_hz()));
        high_hz = high_hz.max(f64::from(spectrum.high_hz()));
        let points: Vec<[f64; 2]> = spectrum
            .points()
            .map(|(f, db)| [f64::from(f).log10(), f64::from(db)])
            .filter(|p| p[0].is_finite() && p[1].is_finite())
            .collect();
        top_db = points.iter().map(|p| p[1]).fold(top_db, f64::max);
        curves.push((index, pass.number(), points));
    }
    if curves.is_empty() {
        ui.weak("Tick a pass above to see its spectrum.");
        return;
    }
    let top_db = (top_db / 10.0).ceil() * 10.0 + 5.0;
    let (low_hz, high_hz) = if low_hz.is_finite() && high_hz > low_hz {
        (low_hz, high_hz)
    } else {
        (40.0, 4000.0)
    };
    Plot::new(("pass spectra", part.name()))
        .height(CHART_HEIGHT)
        .legend(Legend::default())
        .default_x_bounds(low_hz.log10(), high_hz.log10())
        .default_y_bounds(top_db - 70.0, top_db)
        .x_grid_spacer(log_frequency_marks)
        .x_axis_formatter(|mark, _| frequency_label(10f64.powf(mark.value)))
        .x_axis_label("Frequency (Hz)")
        .y_axis_label("Level (dB)")
        .label_formatter(|hover| {
            let x = match hover {
                egui_plot::HoverPosition::NearDataPoint { position, .. } => position.x,
                egui_plot::HoverPosition::Elsewhere { position } => position.x,
            };
            let hz = 10f64.powf(x);
            hz.is_finite().then(|| format!("{} Hz", num(hz, 1)))
        })
        .allow_scroll(false)
        .show(ui, |plot_ui| {
            for (index, number, points) in curves {
                plot_ui.line(
                    Line::new(format!("pass {number}"), points)
                        .color(colour(index))
                        .width(1.3),
                );
            }
        });
    ui.weak("Each pass's averaged spectrum as it was kept with the pass.");
}
