//! The Units window, opened from the top bar: millimetres or inches, grams
//! or ounces, °C or °F, litres or cubic inches, one row each, and the two
//! usual sets at one click. The choice applies to every area and to the
//! build report at once; build files keep mm, g, °C and m³ whatever is
//! chosen.

use std::path::Path;

use eframe::egui;

use crate::text::{LengthUnit, MassUnit, TemperatureUnit, Units, VolumeUnit};

/// Draws the window while `open`; returns the units the maker chose this
/// frame, if they changed.
pub(super) fn show(
    ctx: &egui::Context,
    open: &mut bool,
    units: Units,
    kept_in: Option<&Path>,
) -> Option<Units> {
    let mut chosen = units;
    egui::Window::new("Units")
        .open(open)
        .resizable(false)
        .collapsible(false)
        .default_pos([760.0, 60.0])
        .show(ctx, |ui| {
            ui.horizontal(|ui| {
                if ui.button("All metric").clicked() {
                    chosen = Units::metric();
                }
                if ui.button("All imperial").clicked() {
                    chosen = Units::imperial();
                }
            });
            ui.add_space(4.0);
            egui::Grid::new("units grid")
                .num_columns(3)
                .spacing([10.0, 6.0])
                .show(ui, |ui| {
                    row(
                        ui,
                        "Length and thickness",
                        &mut chosen.length,
                        &LengthUnit::ALL.map(|u| (u, length_name(u))),
                    );
                    row(
                        ui,
                        "Mass",
                        &mut chosen.mass,
                        &MassUnit::ALL.map(|u| (u, mass_name(u))),
                    );
                    row(
                        ui,
                        "Temperature",
                        &mut chosen.temperature,
                        &TemperatureUnit::ALL.map(|u| (u, temperature_name(u))),
                    );
                    row(
                        ui,
                        "Volume",
                        &mut chosen.volume,
                        &VolumeUnit::ALL.map(|u| (u, volume_name(u))),
                    );
                });
            ui.add_space(4.0);
            ui.weak(
                "Fields, tables, charts and the build report follow this choice; build \
                 files always keep millimetres, grams, °C and litres.",
            );
            match kept_in {
                Some(folder) => ui.weak(format!("Kept for next time in {}.", folder.display())),
                None => ui.weak("Not kept after this window closes."),
            };
        });
    (chosen != units).then_some(chosen)
}

/// One row: the quantity and a radio button per unit.
fn row<U: Copy + PartialEq>(ui: &mut egui::Ui, name: &str, value: &mut U, choices: &[(U, &str)]) {
    ui.label(name);
    for (unit, text) in choices {
        ui.radio_value(value, *unit, *text)
            .on_hover_text(format!("{name} in {text}"));
    }
    ui.end_row();
}

fn length_name(unit: LengthUnit) -> &'static str {
    match unit {
        LengthUnit::Millimetre => "millimetres (mm)",
        LengthUnit::Inch => "inches (in)",
    }
}

fn mass_name(unit: MassUnit) -> &'static str {
    match unit {
        MassUnit::Gram => "grams (g)",
        MassUnit::Ounce => "ounces (oz)",
    }
}

fn temperature_name(unit: TemperatureUnit) -> &'static str {
    match unit {
        TemperatureUnit::Celsius => "°C",
        TemperatureUnit::Fahrenheit => "°F",
    }
}

fn volume_name(unit: VolumeUnit) -> &'static str {
    match unit {
        VolumeUnit::Litre => "litres (L)",
        VolumeUnit::CubicInch => "cubic inches (in³)",
    }
}
