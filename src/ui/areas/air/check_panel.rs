//! The third column of the Air area: the coupled air/plate correction and
//! the air check of a measured A0 against the estimate.

use eframe::egui;

use crate::acoustics::{compare_with_measured, coupled_correction, CoupledCorrection};
use crate::analysis::pitch::cents_between;
use crate::ledger::{Build, PartKind};

use super::Checked;
use crate::text::{note_text, num, parse_number, sentence, signed};
use crate::ui::context::AreaContext;

/// Width of a number field, points.
const FIELD_WIDTH: f32 = 72.0;

// ----- coupled correction ---------------------------------------------------

/// The coupled correction as typed.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CoupledDraft {
    /// Lower coupled resonance with the hole open (A0), Hz.
    pub f_minus_hz: String,
    /// Upper coupled resonance with the hole open, Hz.
    pub f_plus_hz: String,
    /// Plate resonance with the hole sealed, Hz.
    pub f_sealed_hz: String,
}

impl CoupledDraft {
    fn is_empty(&self) -> bool {
        [&self.f_minus_hz, &self.f_plus_hz, &self.f_sealed_hz]
            .iter()
            .all(|t| t.trim().is_empty())
    }

    fn correction(&self) -> Result<CoupledCorrection, String> {
        let f_minus = parse_number("the lower coupled resonance f−", &self.f_minus_hz)?;
        let f_plus = parse_number("the upper coupled resonance f+", &self.f_plus_hz)?;
        let f_sealed = parse_number("the sealed-hole resonance f_c", &self.f_sealed_hz)?;
        coupled_correction(f_minus, f_plus, f_sealed).map_err(|e| sentence(&e.to_string()))
    }
}

/// Draws the coupled air/plate correction.
pub(super) fn coupled(ui: &mut egui::Ui, draft: &mut CoupledDraft, checked: &Checked) {
    ui.strong("Coupled air/plate correction");
    ui.weak(
        "Air and top act as two coupled oscillators (Christensen & Vistisen 1980). Tap the \
         closed body with the hole open (f−, the A0, and f+), then with the hole sealed (f_c): \
         the model gives the air alone in a rigid box, f_h, and the top alone, f_t. Most \
         useful on guitar-like bodies with one large hole.",
    );
    egui::Grid::new("air coupled grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            let rows = [
                ("f− hole open, lower", &mut draft.f_minus_hz),
                ("f+ hole open, upper", &mut draft.f_plus_hz),
                ("f_c hole sealed", &mut draft.f_sealed_hz),
            ];
            for (name, text) in rows {
                let label = ui.label(name);
                ui.horizontal(|ui| {
                    ui.add(egui::TextEdit::singleline(text).desired_width(FIELD_WIDTH))
                        .labelled_by(label.id);
                    ui.label("Hz");
                });
                ui.end_row();
            }
        });
    if draft.is_empty() {
        ui.weak("Type the three measured frequencies to see the correction.");
        return;
    }
    let correction = match draft.correction() {
        Ok(correction) => correction,
        Err(message) => {
            ui.colored_label(ui.visuals().error_fg_color, message);
            return;
        }
    };
    egui::Grid::new("air coupled result grid")
        .num_columns(2)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            ui.label("Air alone, rigid walls (f_h)");
            ui.monospace(format!("{} Hz", num(correction.helmholtz_hz, 1)));
            ui.end_row();
            ui.label("Top alone (f_t)");
            ui.monospace(format!("{} Hz", num(correction.plate_hz, 1)));
            ui.end_row();
            ui.label("The walls pull A0 down by");
            ui.monospace(format!(
                "{} Hz ({} cents)",
                num(correction.wall_pull_hz, 1),
                signed(correction.wall_pull_cents, 0)
            ));
            ui.end_row();
        });
    if let Ok(estimate) = &checked.estimate {
        let cents = cents_between(estimate.helmholtz_hz, correction.helmholtz_hz);
        ui.weak(format!(
            "The geometry estimate is {} Hz; f_h from the measurements is {} cents from it.",
            num(estimate.helmholtz_hz, 1),
            signed(cents, 0)
        ));
    }
}

// ----- air check ------------------------------------------------------------

/// Where the measured A0 comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum A0Source {
    /// The Listen result's mode labelled A0.
    Listen,
    /// An assembled-body pass of the open build.
    BuildPass,
    /// Typed by the maker.
    Typed,
}

/// The air check as chosen and typed.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CheckDraft {
    /// The source chosen; None until the maker picks one (then the first
    /// available is used).
    pub source: Option<A0Source>,
    /// The body pass chosen: part name and pass number.
    pub pass: Option<(String, u32)>,
    /// A typed A0, Hz.
    pub typed_a0_hz: String,
}

/// An A0 recorded in an assembled-body pass.
struct BodyA0 {
    part: String,
    pass_number: u32,
    frequency_hz: f64,
    air_temp_c: Option<f64>,
}

impl BodyA0 {
    fn text(&self) -> String {
        format!(
            "{}, pass {}: A0 {} Hz",
            self.part,
            self.pass_number,
            num(self.frequency_hz, 1)
        )
    }
}

fn body_a0s(build: Option<&Build>) -> Vec<BodyA0> {
    let Some(build) = build else {
        return Vec::new();
    };
    build
        .parts()
        .iter()
        .filter(|part| *part.kind() == PartKind::AssembledBody)
        .flat_map(|part| {
            part.passes().iter().filter_map(|pass| {
                pass.mode_labelled("A0").map(|mode| BodyA0 {
                    part: part.name().to_owned(),
                    pass_number: pass.number(),
                    frequency_hz: mode.frequency_hz,
                    air_temp_c: pass.air_temp_c,
                })
            })
        })
        .collect()
}

/// Draws the air check.
pub(super) fn air_check(
    ui: &mut egui::Ui,
    draft: &mut CheckDraft,
    checked: &Checked,
    ctx: &AreaContext,
) {
    ui.strong("Air check");
    let listen_a0 = ctx.labelled_frequency_hz("A0");
    let passes = body_a0s(ctx.build);
    let source = draft.source.unwrap_or(if listen_a0.is_some() {
        A0Source::Listen
    } else if !passes.is_empty() {
        A0Source::BuildPass
    } else {
        A0Source::Typed
    });
    let mut chosen = source;
    ui.label("Measured A0");
    ui.add_enabled_ui(listen_a0.is_some(), |ui| {
        let text = match listen_a0 {
            Some(hz) => format!("From Listen: {} Hz", num(hz, 1)),
            None => "From Listen (label a mode \"A0\" there)".to_owned(),
        };
        ui.radio_value(&mut chosen, A0Source::Listen, text)
            .on_hover_text("The mode labelled A0 in the Listen area's pass");
    });
    ui.add_enabled_ui(!passes.is_empty(), |ui| {
        let text = if ctx.build.is_some() {
            if passes.is_empty() {
                "From the build (no assembled-body pass with an A0 yet)"
            } else {
                "From an assembled-body pass of the build"
            }
        } else {
            "From the build (no build open)"
        };
        ui.radio_value(&mut chosen, A0Source::BuildPass, text);
    });
    if !passes.is_empty() {
        let latest = passes.last().map(|p| (p.part.clone(), p.pass_number));
        if draft.pass.as_ref().is_none_or(|(part, n)| {
            !passes
                .iter()
                .any(|p| &p.part == part && p.pass_number == *n)
        }) {
            draft.pass = latest;
        }
        let selected = passes
            .iter()
            .find(|p| draft.pass.as_ref() == Some(&(p.part.clone(), p.pass_number)));
        ui.horizontal(|ui| {
            ui.add_space(24.0);
            let label = ui.label("Pass");
            egui::ComboBox::from_id_salt("air check pass")
                .selected_text(selected.map_or_else(String::new, BodyA0::text))
                .width(220.0)
                .show_ui(ui, |ui| {
                    for pass in &passes {
                        let key = Some((pass.part.clone(), pass.pass_number));
                        if ui
                            .selectable_label(draft.pass == key, pass.text())
                            .clicked()
                        {
                            draft.pass = key;
                            chosen = A0Source::BuildPass;
                        }
                    }
                })
                .response
                .labelled_by(label.id);
        });
    }
    ui.horizontal(|ui| {
        ui.radio_value(&mut chosen, A0Source::Typed, "Typed");
        let field = ui
            .add(egui::TextEdit::singleline(&mut draft.typed_a0_hz).desired_width(FIELD_WIDTH))
            .accessible_name("Typed A0");
        if field.changed() {
            chosen = A0Source::Typed;
        }
        ui.label("Hz");
    });
    if chosen != source {
        draft.source = Some(chosen);
    }

    let measured: Result<(f64, Option<f64>), String> = match chosen {
        A0Source::Listen => listen_a0.map(|hz| (hz, None)).ok_or_else(|| {
            "Listen has no mode labelled A0: label one there, or choose another source.".to_owned()
        }),
        A0Source::BuildPass => passes
            .iter()
            .find(|p| draft.pass.as_ref() == Some(&(p.part.clone(), p.pass_number)))
            .map(|p| (p.frequency_hz, p.air_temp_c))
            .ok_or_else(|| {
                "The build has no assembled-body pass with a mode labelled A0.".to_owned()
            }),
        A0Source::Typed => {
            if draft.typed_a0_hz.trim().is_empty() {
                ui.weak("Type the measured A0 to compare it with the estimate.");
                return;
            }
            parse_number("the typed A0", &draft.typed_a0_hz).map(|hz| (hz, None))
        }
    };
    let (measured_hz, pass_temp_c) = match measured {
        Ok(value) => value,
        Err(message) => {
            ui.colored_label(ui.visuals().error_fg_color, message);
            return;
        }
    };
    let estimate = match &checked.estimate {
        Ok(estimate) => estimate,
        Err(_) => {
            ui.weak("The estimate has a problem (see the middle column), so there is nothing to compare with.");
            return;
        }
    };
    let check = match compare_with_measured(measured_hz, estimate.helmholtz_hz) {
        Ok(check) => check,
        Err(error) => {
            ui.colored_label(ui.visuals().error_fg_color, sentence(&error.to_string()));
            return;
        }
    };
    egui::Grid::new("air check grid")
        .num_columns(2)
        .spacing([10.0, 3.0])
        .show(ui, |ui| {
            ui.label("Measured A0");
            ui.monospace(format!(
                "{} Hz  {}",
                num(check.measured_hz, 1),
                note_text(check.measured_hz, ctx.a4_hz)
            ));
            ui.end_row();
            ui.label("Rigid-wall estimate");
            ui.monospace(format!(
                "{} Hz  {}",
                num(check.estimated_hz, 1),
                note_text(check.estimated_hz, ctx.a4_hz)
            ));
            ui.end_row();
            ui.label("Measured − estimated");
            ui.label(
                egui::RichText::new(format!(
                    "{} Hz, {} cents",
                    signed(check.difference_hz, 1),
                    signed(check.difference_cents, 0)
                ))
                .monospace()
                .strong(),
            );
            ui.end_row();
        });
    ui.weak(if check.difference_cents < 0.0 {
        "Below the rigid-wall estimate, as expected: the walls give way and pull A0 down."
    } else {
        "Above the rigid-wall estimate: check the volume and the openings, and that the mode labelled A0 is the air mode."
    });
    if let Some(temp_c) = pass_temp_c {
        let typed_c = estimate_temp_c(checked);
        if let Some(typed_c) = typed_c.filter(|t| (t - temp_c).abs() >= 1.0) {
            ui.weak(format!(
                "The pass was measured at {} °C and the estimate uses {} °C ({} Hz per °C).",
                num(temp_c, 1),
                num(typed_c, 1),
                signed(estimate.sensitivities.hz_per_degree_c, 2)
            ));
        }
    }
}

fn estimate_temp_c(checked: &Checked) -> Option<f64> {
    checked.geometry.as_ref().map(|g| g.air.temp_c)
}
