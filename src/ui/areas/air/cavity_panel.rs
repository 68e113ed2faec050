//! The first two columns of the Air area: the body as typed (volume,
//! openings, wall, end correction, air), the rigid-wall estimate, and the
//! solve the other way.

use eframe::egui;

use crate::acoustics::{
    estimate_cavity, solve_round_diameter_mm, solve_slot_length_mm, solve_volume_m3,
    speed_of_sound_m_s, CavityGeometry, EndCorrection, Opening, SpeedOfSoundModel,
};

use super::form::{GeometryDraft, OpeningDraft, OpeningKind, Preset, VolumeUnit};
use super::{AirAreaState, Checked};
use crate::text::{capitalised, note_text, num, number_text, parse_number, sentence, signed};

/// Width of a number field, points.
const FIELD_WIDTH: f32 = 72.0;

// ----- inputs ---------------------------------------------------------------

/// Draws the body's fields; true when the maker changed anything.
pub(super) fn inputs(ui: &mut egui::Ui, state: &mut AirAreaState) -> bool {
    let mut changed = false;
    ui.strong("Body and openings");
    ui.horizontal_wrapped(|ui| {
        ui.label("Start from");
        for preset in Preset::ALL {
            if ui
                .button(preset.name())
                .on_hover_text(preset.description())
                .clicked()
            {
                state.draft.apply_preset(preset);
                state.solve.fit_to(&state.draft);
                changed = true;
            }
        }
    });
    ui.add_space(2.0);
    let draft = &mut state.draft;
    egui::Grid::new("air body grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            let label = ui.label("Volume");
            ui.horizontal(|ui| {
                changed |= number_field(ui, &mut draft.volume)
                    .labelled_by(label.id)
                    .on_hover_text("The air inside the closed body")
                    .changed();
                let mut unit = draft.volume_unit;
                egui::ComboBox::from_id_salt("air volume unit")
                    .selected_text(unit.symbol())
                    .width(60.0)
                    .show_ui(ui, |ui| {
                        for choice in VolumeUnit::ALL {
                            ui.selectable_value(&mut unit, choice, choice.name());
                        }
                    })
                    .response
                    .accessible_name("Volume unit");
                if unit != draft.volume_unit {
                    draft.set_volume_unit(unit);
                    changed = true;
                }
            });
            ui.end_row();

            let label = ui.label("Wall thickness");
            ui.horizontal(|ui| {
                changed |= number_field(ui, &mut draft.thickness_mm)
                    .labelled_by(label.id)
                    .on_hover_text(
                        "Thickness of the top (or rim) at the openings; 0 for a thin wall",
                    )
                    .changed();
                ui.label("mm");
            });
            ui.end_row();
        });

    ui.add_space(4.0);
    changed |= openings_list(ui, draft);
    ui.add_space(4.0);
    changed |= end_correction_picker(ui, draft);
    ui.add_space(6.0);
    changed |= air_fields(ui, draft);
    changed
}

fn number_field(ui: &mut egui::Ui, text: &mut String) -> egui::Response {
    ui.add(egui::TextEdit::singleline(text).desired_width(FIELD_WIDTH))
}

fn openings_list(ui: &mut egui::Ui, draft: &mut GeometryDraft) -> bool {
    let mut changed = false;
    ui.label("Openings, in mm: diameter, or length × (mean) width");
    let mut remove = None;
    egui::Grid::new("air openings grid")
        .num_columns(6)
        .spacing([6.0, 4.0])
        .show(ui, |ui| {
            for (index, opening) in draft.openings.iter_mut().enumerate() {
                let number = index + 1;
                ui.label(format!("{number}."));
                let mut kind = opening.kind;
                egui::ComboBox::from_id_salt(("air opening kind", index))
                    .selected_text(kind.name())
                    .width(110.0)
                    .show_ui(ui, |ui| {
                        for choice in OpeningKind::ALL {
                            ui.selectable_value(&mut kind, choice, choice.name());
                        }
                    })
                    .response
                    .accessible_name(format!("Opening {number} shape"));
                if kind != opening.kind {
                    opening.set_kind(kind);
                    changed = true;
                }
                let (first_name, second_name) = opening.kind.size_names();
                // Each size in its own grid cell: a field inside a
                // horizontal cell is squeezed to the cell's width.
                changed |= number_field(ui, &mut opening.first_mm)
                    .accessible_name(format!("Opening {number} {first_name}"))
                    .on_hover_text(format!("{}, mm", capitalised(first_name)))
                    .changed();
                match second_name {
                    Some(second_name) => {
                        ui.label("×");
                        changed |= number_field(ui, &mut opening.second_mm)
                            .accessible_name(format!("Opening {number} {second_name}"))
                            .on_hover_text(format!("{}, mm", capitalised(second_name)))
                            .changed();
                    }
                    None => {
                        ui.label("");
                        ui.label("");
                    }
                }
                if ui
                    .small_button("Remove")
                    .accessible_name(format!("Remove opening {number}"))
                    .clicked()
                {
                    remove = Some(index);
                }
                ui.end_row();
            }
        });
    if let Some(index) = remove {
        draft.openings.remove(index);
        changed = true;
    }
    if draft.openings.is_empty() {
        ui.weak("No openings: a closed box has no Helmholtz resonance.");
    }
    ui.horizontal_wrapped(|ui| {
        ui.label("Add");
        if ui
            .small_button("round hole")
            .accessible_name("Add a round hole")
            .clicked()
        {
            draft.openings.push(OpeningDraft::round(50.0));
            changed = true;
        }
        if ui
            .small_button("oval")
            .accessible_name("Add an oval")
            .clicked()
        {
            draft
                .openings
                .push(OpeningDraft::from_opening(&Opening::Oval {
                    length_mm: 60.0,
                    width_mm: 40.0,
                }));
            changed = true;
        }
        if ui
            .small_button("slot (f-hole)")
            .accessible_name("Add a slot")
            .clicked()
        {
            draft.openings.push(OpeningDraft::slot(70.0, 8.0));
            changed = true;
        }
    });
    changed
}

fn end_correction_name(choice: EndCorrection) -> &'static str {
    match choice {
        EndCorrection::AcrossWall => "thin to thick wall",
        EndCorrection::Flanged => "flanged",
        EndCorrection::Unflanged => "unflanged",
        EndCorrection::ThinPlate => "thin plate",
    }
}

fn end_correction_explanation(choice: EndCorrection) -> &'static str {
    match choice {
        EndCorrection::AcrossWall => "Right for any wall: Rayleigh's thin-plate value at zero thickness (a round hole gives exactly K = 2a), moving to the flanged-pipe value (Norris & Sheng 1989) once the wall is thicker than the hole's half-width.",
        EndCorrection::Flanged => "The hole sits in a wide plate, as a sound hole in a top does: the air moving through it drags 0.82 × its radius of extra air on each side (Norris & Sheng 1989).",
        EndCorrection::Unflanged => "The hole ends in free air, like the open end of a tube: 0.61 × its radius of extra air on each side (Levine & Schwinger 1948).",
        EndCorrection::ThinPlate => "Rayleigh's value for a hole in a thin plate, π/4 × its radius on each side; at zero thickness a round hole gives exactly K = 2a.",
    }
}

fn end_correction_picker(ui: &mut egui::Ui, draft: &mut GeometryDraft) -> bool {
    let mut choice = draft.end_correction;
    ui.horizontal(|ui| {
        let label = ui.label("End correction");
        egui::ComboBox::from_id_salt("air end correction")
            .selected_text(end_correction_name(choice))
            .width(120.0)
            .show_ui(ui, |ui| {
                for option in EndCorrection::ALL {
                    ui.selectable_value(&mut choice, option, end_correction_name(option))
                        .on_hover_text(end_correction_explanation(option));
                }
            })
            .response
            .labelled_by(label.id);
    });
    ui.weak(end_correction_explanation(choice));
    let changed = choice != draft.end_correction;
    draft.end_correction = choice;
    changed
}

fn model_name(model: SpeedOfSoundModel) -> &'static str {
    match model {
        SpeedOfSoundModel::Cramer => "Cramer 1993",
        SpeedOfSoundModel::Iso9613 => "ISO 9613-1",
    }
}

fn air_fields(ui: &mut egui::Ui, draft: &mut GeometryDraft) -> bool {
    let mut changed = false;
    ui.strong("Air");
    let uses_humidity = draft.sound_model == SpeedOfSoundModel::Cramer;
    egui::Grid::new("air conditions grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            let rows: [(&str, &str, &mut String, bool); 3] = [
                ("Air temperature", "°C", &mut draft.temp_c, true),
                (
                    "Relative humidity",
                    "%",
                    &mut draft.relative_humidity_pct,
                    uses_humidity,
                ),
                (
                    "Air pressure",
                    "kPa",
                    &mut draft.pressure_kpa,
                    uses_humidity,
                ),
            ];
            for (name, unit, text, used) in rows {
                let label = ui.label(name);
                ui.horizontal(|ui| {
                    changed |= ui
                        .add_enabled(
                            used,
                            egui::TextEdit::singleline(text).desired_width(FIELD_WIDTH),
                        )
                        .labelled_by(label.id)
                        .changed();
                    ui.label(unit);
                    if !used {
                        ui.weak("not used by ISO 9613-1");
                    }
                });
                ui.end_row();
            }

            let label = ui.label("Speed of sound model");
            let mut model = draft.sound_model;
            egui::ComboBox::from_id_salt("air sound model")
                .selected_text(model_name(model))
                .width(120.0)
                .show_ui(ui, |ui| {
                    ui.selectable_value(&mut model, SpeedOfSoundModel::Cramer, "Cramer 1993")
                        .on_hover_text("Temperature, humidity, pressure and CO₂; 0 to 30 °C");
                    ui.selectable_value(&mut model, SpeedOfSoundModel::Iso9613, "ISO 9613-1")
                        .on_hover_text("Temperature only; −20 to 50 °C");
                })
                .response
                .labelled_by(label.id);
            if model != draft.sound_model {
                draft.sound_model = model;
                changed = true;
            }
            ui.end_row();
        });
    ui.weak(match draft.sound_model {
        SpeedOfSoundModel::Cramer => {
            "Cramer 1993: temperature, humidity and pressure, for 0 to 30 °C."
        }
        SpeedOfSoundModel::Iso9613 => "ISO 9613-1: temperature only, for −20 to 50 °C.",
    });
    changed
}

// ----- the estimate -----------------------------------------------------------

/// Draws the rigid-wall estimate, or the one sentence that says why there
/// is none.
pub(super) fn estimate(ui: &mut egui::Ui, draft: &GeometryDraft, checked: &Checked, a4_hz: f64) {
    ui.strong("Rigid-wall estimate");
    let speed = draft
        .air()
        .and_then(|air| speed_of_sound_m_s(&air, draft.sound_model).map_err(|e| e.to_string()));
    ui.horizontal(|ui| {
        ui.label("Speed of sound");
        match &speed {
            Ok(speed_m_s) => {
                ui.monospace(format!("{} m/s", num(*speed_m_s, 2)));
                ui.weak(format!("({})", model_name(draft.sound_model)));
            }
            Err(_) => {
                ui.weak("–");
            }
        }
    });
    let estimate = match &checked.estimate {
        Ok(estimate) => estimate,
        Err(message) => {
            ui.colored_label(ui.visuals().error_fg_color, message);
            if draft.sound_model == SpeedOfSoundModel::Cramer
                && message.contains("temperature")
                && message.contains("outside")
            {
                ui.weak("For air outside 0 to 30 °C, choose the ISO 9613-1 model.");
            }
            return;
        }
    };

    ui.add_space(4.0);
    egui::Grid::new("air conductance grid")
        .striped(true)
        .num_columns(5)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            for title in ["Opening", "Size", "Area", "Conductance", "Hz per mm"] {
                ui.strong(title);
            }
            ui.end_row();
            for (index, opening) in estimate.openings.iter().enumerate() {
                ui.label(format!("{}. {}", index + 1, opening.opening.kind()));
                ui.monospace(opening.opening.size_text());
                ui.monospace(format!("{} cm²", num(opening.area_m2 * 1e4, 2)));
                ui.monospace(format!("{} mm", num(opening.conductance_m * 1e3, 1)));
                let slope = estimate
                    .sensitivities
                    .hz_per_mm_of_opening
                    .get(index)
                    .copied()
                    .unwrap_or(f64::NAN);
                let size_name = match opening.opening {
                    Opening::Round { .. } => "diameter",
                    _ => "length",
                };
                ui.monospace(signed(slope, 2))
                    .on_hover_text(format!("Hz per mm of this opening's {size_name}"));
                ui.end_row();
            }
            ui.strong("Total");
            ui.label("");
            ui.monospace(format!(
                "{} cm²",
                num(
                    estimate.openings.iter().map(|o| o.area_m2).sum::<f64>() * 1e4,
                    2
                )
            ));
            ui.monospace(format!("{} mm", num(estimate.conductance_m * 1e3, 1)));
            ui.label("");
            ui.end_row();
        });
    ui.weak("Conductance K: how easily air moves through the opening (f grows with √K).");

    ui.add_space(6.0);
    ui.label("Helmholtz frequency (rigid walls)");
    ui.horizontal(|ui| {
        ui.label(
            egui::RichText::new(format!("{} Hz", num(estimate.helmholtz_hz, 1)))
                .size(26.0)
                .strong(),
        );
        ui.label(egui::RichText::new(note_text(estimate.helmholtz_hz, a4_hz)).size(16.0))
            .on_hover_text(format!("Nearest note, A4 = {} Hz", number_text(a4_hz)));
    });

    ui.add_space(4.0);
    ui.label("How it moves");
    let slopes = &estimate.sensitivities;
    egui::Grid::new("air sensitivity grid")
        .num_columns(2)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            ui.label("Per litre more volume");
            ui.monospace(format!("{} Hz", signed(slopes.hz_per_litre, 2)));
            ui.end_row();
            ui.label("Per °C warmer air");
            ui.monospace(format!("{} Hz", signed(slopes.hz_per_degree_c, 2)));
            ui.end_row();
            ui.label("Per mm thicker wall");
            ui.monospace(format!("{} Hz", signed(slopes.hz_per_mm_of_thickness, 2)));
            ui.end_row();
            for (index, slope) in slopes.hz_per_mm_of_opening.iter().enumerate() {
                let size_name = match estimate.openings.get(index).map(|o| o.opening) {
                    Some(Opening::Round { .. }) => "diameter",
                    _ => "length",
                };
                ui.label(format!("Per mm more {size_name} of opening {}", index + 1));
                ui.monospace(format!("{} Hz", signed(*slope, 2)));
                ui.end_row();
            }
        });
    ui.add_space(2.0);
    ui.weak("Rigid walls: a real body gives way, so its A0 usually lands lower. The coupled correction (right) measures by how much.");
}

// ----- the solve the other way ---------------------------------------------

/// What the inverse solve looks for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SolveFor {
    /// The diameter of a round hole.
    RoundDiameter,
    /// The length of a slot at a given mean width.
    SlotLength,
    /// The body's volume.
    Volume,
}

impl SolveFor {
    fn name(self) -> &'static str {
        match self {
            SolveFor::RoundDiameter => "round hole diameter",
            SolveFor::SlotLength => "slot length",
            SolveFor::Volume => "volume",
        }
    }
}

/// The inverse solve as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct SolveDraft {
    /// The target frequency, Hz, as typed.
    pub target_hz: String,
    /// What to look for.
    pub solve_for: SolveFor,
    /// The opening (index) the solved one takes the place of; None: an
    /// added opening.
    pub replaces: Option<usize>,
    /// The slot's mean width, mm, as typed.
    pub slot_width_mm: String,
}

impl Default for SolveDraft {
    /// Fits the default (violin-like) body: the second slot's length.
    fn default() -> Self {
        let mut solve = SolveDraft {
            target_hz: String::new(),
            solve_for: SolveFor::Volume,
            replaces: None,
            slot_width_mm: "8".to_owned(),
        };
        solve.fit_to(&GeometryDraft::default());
        solve
    }
}

impl SolveDraft {
    /// Picks a sensible thing to solve for this body: the last round hole's
    /// diameter, else the last slot's length at its width, else the volume.
    pub fn fit_to(&mut self, draft: &GeometryDraft) {
        let last_of = |kind| draft.openings.iter().rposition(|o| o.kind == kind);
        if let Some(index) = last_of(OpeningKind::Round) {
            self.solve_for = SolveFor::RoundDiameter;
            self.replaces = Some(index);
        } else if let Some(index) = last_of(OpeningKind::Slot) {
            self.solve_for = SolveFor::SlotLength;
            self.replaces = Some(index);
            self.slot_width_mm = draft.openings[index].second_mm.clone();
        } else {
            self.solve_for = SolveFor::Volume;
            self.replaces = None;
        }
    }
}

/// A solved value ready to apply.
enum Solved {
    Opening {
        index: Option<usize>,
        opening: Opening,
    },
    Volume {
        volume_m3: f64,
    },
}

/// Runs the solve; the answer and the frequency it gives (fed forward), or
/// one sentence.
fn run_solve(solve: &SolveDraft, draft: &GeometryDraft) -> Result<(Solved, f64), String> {
    let target_hz = parse_number("the target frequency", &solve.target_hz)?;
    let mut geometry = match solve.solve_for {
        // The volume is the unknown: a half-typed volume must not block it.
        SolveFor::Volume => {
            let mut with_volume = draft.clone();
            if parse_number("the volume", &with_volume.volume).is_err() {
                with_volume.volume_unit = VolumeUnit::Litre;
                with_volume.volume = "1".to_owned();
            }
            with_volume.to_geometry()?
        }
        _ => draft.to_geometry()?,
    };
    let acoustics = |e: crate::acoustics::AcousticsError| sentence(&e.to_string());
    let replaces = solve.replaces.filter(|&i| i < geometry.openings.len());
    let solved = match solve.solve_for {
        SolveFor::Volume => Solved::Volume {
            volume_m3: solve_volume_m3(&geometry, target_hz).map_err(acoustics)?,
        },
        SolveFor::RoundDiameter | SolveFor::SlotLength => {
            if let Some(index) = replaces {
                geometry.openings.remove(index);
            }
            let opening = if solve.solve_for == SolveFor::RoundDiameter {
                Opening::Round {
                    diameter_mm: solve_round_diameter_mm(&geometry, target_hz)
                        .map_err(acoustics)?,
                }
            } else {
                let width_mm = parse_number("the slot's mean width", &solve.slot_width_mm)?;
                Opening::Slot {
                    length_mm: solve_slot_length_mm(&geometry, width_mm, target_hz)
                        .map_err(acoustics)?,
                    mean_width_mm: width_mm,
                }
            };
            Solved::Opening {
                index: replaces,
                opening,
            }
        }
    };
    // Feed the answer, as it will be typed, forward.
    let mut applied = draft.clone();
    apply_solved(&mut applied, &solved);
    let achieved_hz = applied
        .to_geometry()
        .and_then(|g: CavityGeometry| estimate_cavity(&g).map_err(|e| e.to_string()))
        .map(|e| e.helmholtz_hz)
        .map_err(|e| sentence(&e))?;
    Ok((solved, achieved_hz))
}

fn apply_solved(draft: &mut GeometryDraft, solved: &Solved) {
    match solved {
        Solved::Opening { index, opening } => {
            let typed = OpeningDraft::from_opening(opening);
            match index.and_then(|i| draft.openings.get_mut(i)) {
                Some(slot) => *slot = typed,
                None => draft.openings.push(typed),
            }
        }
        Solved::Volume { volume_m3 } => draft.set_volume_m3(*volume_m3),
    }
}

/// Draws the solve the other way; true when the answer was applied.
pub(super) fn solve(ui: &mut egui::Ui, state: &mut AirAreaState) -> bool {
    let solve = &mut state.solve;
    ui.strong("Solve the other way");
    ui.weak("Which size gives the frequency you aim for? The other openings stay as they are.");
    egui::Grid::new("air solve grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            let label = ui.label("Target frequency");
            ui.horizontal(|ui| {
                ui.add(
                    egui::TextEdit::singleline(&mut solve.target_hz)
                        .desired_width(FIELD_WIDTH)
                        .hint_text("280"),
                )
                .labelled_by(label.id);
                ui.label("Hz");
            });
            ui.end_row();

            let label = ui.label("Find the");
            egui::ComboBox::from_id_salt("air solve for")
                .selected_text(solve.solve_for.name())
                .width(160.0)
                .show_ui(ui, |ui| {
                    for choice in [
                        SolveFor::RoundDiameter,
                        SolveFor::SlotLength,
                        SolveFor::Volume,
                    ] {
                        ui.selectable_value(&mut solve.solve_for, choice, choice.name());
                    }
                })
                .response
                .labelled_by(label.id);
            ui.end_row();

            if solve.solve_for != SolveFor::Volume {
                let label = ui.label("In place of");
                let count = state.draft.openings.len();
                if solve.replaces.is_some_and(|i| i >= count) {
                    solve.replaces = None;
                }
                let describe = |index: Option<usize>| match index {
                    Some(i) => format!("opening {}", i + 1),
                    None => "an added opening".to_owned(),
                };
                egui::ComboBox::from_id_salt("air solve replaces")
                    .selected_text(describe(solve.replaces))
                    .width(160.0)
                    .show_ui(ui, |ui| {
                        for index in (0..count).map(Some).chain([None]) {
                            ui.selectable_value(&mut solve.replaces, index, describe(index));
                        }
                    })
                    .response
                    .labelled_by(label.id);
                ui.end_row();
            }
            if solve.solve_for == SolveFor::SlotLength {
                let label = ui.label("Slot mean width");
                ui.horizontal(|ui| {
                    ui.add(
                        egui::TextEdit::singleline(&mut solve.slot_width_mm)
                            .desired_width(FIELD_WIDTH),
                    )
                    .labelled_by(label.id);
                    ui.label("mm");
                });
                ui.end_row();
            }
        });

    if solve.target_hz.trim().is_empty() {
        ui.weak("Type a target frequency to see the size that gives it.");
        return false;
    }
    let (solved, achieved_hz) = match run_solve(solve, &state.draft) {
        Ok(answer) => answer,
        Err(message) => {
            ui.colored_label(ui.visuals().error_fg_color, message);
            return false;
        }
    };
    let (answer, button) = match &solved {
        Solved::Opening { opening, .. } => match *opening {
            Opening::Round { diameter_mm } => (
                format!("Round hole Ø {} mm", num(diameter_mm, 2)),
                "Apply this diameter",
            ),
            Opening::Slot {
                length_mm,
                mean_width_mm,
            } => (
                format!(
                    "Slot {} × {} mm",
                    num(length_mm, 2),
                    number_text(mean_width_mm)
                ),
                "Apply this length",
            ),
            Opening::Oval { .. } => (opening.size_text(), "Apply this size"),
        },
        Solved::Volume { volume_m3 } => {
            let unit = state.draft.volume_unit;
            (
                format!(
                    "Volume {} {}",
                    number_text(volume_m3 / unit.m3_per_unit()),
                    unit.symbol()
                ),
                "Apply this volume",
            )
        }
    };
    let mut applied = false;
    ui.horizontal_wrapped(|ui| {
        ui.label(egui::RichText::new(answer).strong());
        ui.weak(format!("gives {} Hz", num(achieved_hz, 2)));
        if ui
            .button(button)
            .on_hover_text("Put this size into the body's fields")
            .clicked()
        {
            apply_solved(&mut state.draft, &solved);
            applied = true;
        }
    });
    applied
}
