//! The pass table of a part (one row per pass: time, mass, mean thickness,
//! each labelled mode's frequency and its change against the previous and
//! the first pass in Hz, % and cents, and the note), and under it the chosen
//! pass's modes, where labels are confirmed or changed.

use eframe::egui;

use crate::ledger::{FrequencyChange, LedgerError, Part, Pass};

use super::{try_edit, LedgerAreaState, Note};
use crate::text::{date_text, num, parse_optional_number, signed};
use crate::ui::context::AreaContext;

/// Tallest the table grows before it scrolls, points.
const TABLE_MAX_HEIGHT: f32 = 320.0;

/// "−2.21 Hz −1.29 % −22 ct".
pub fn change_text(change: &FrequencyChange) -> String {
    format!(
        "{} Hz {}% {} ct",
        signed(change.hz, 2),
        signed(change.percent, 2),
        signed(change.cents, 0)
    )
}

/// The pass table.
pub fn pass_table(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    ctx: &mut AreaContext,
) {
    ui.strong("Passes");
    if part.passes().is_empty() {
        ui.weak(
            "No passes yet. Tap the part in Listen, then record the result as pass 1 with \
             the form on the left.",
        );
        return;
    }
    let labels: Vec<&str> = part.labels_in_use();
    if labels.is_empty() {
        ui.weak(
            "No mode carries a label yet: choose a pass below and name its modes, so the \
             table can follow them.",
        );
    }
    egui::ScrollArea::both()
        .id_salt("pass table scroll")
        .max_height(TABLE_MAX_HEIGHT)
        .auto_shrink([false, true])
        .show(ui, |ui| {
            egui::Grid::new("pass table")
                .striped(true)
                .num_columns(5 + labels.len())
                .min_col_width(40.0)
                .spacing([14.0, 4.0])
                .show(ui, |ui| {
                    ui.strong("Pass");
                    ui.strong("Time (UTC)");
                    ui.strong("Mass");
                    ui.strong("Thickness").on_hover_text(
                        "Mean of the pass's thickness readings (point to a value to see them)",
                    );
                    for label in &labels {
                        ui.strong(*label);
                    }
                    ui.strong("Note");
                    ui.end_row();
                    for pass in part.passes().iter().rev() {
                        pass_row(ui, state, part, pass, &labels, ctx);
                        ui.end_row();
                    }
                });
        });
    ui.weak(
        "Newest pass first. Under each frequency: its change against the previous pass, then \
         against the first pass (Hz, %, cents).",
    );
    if let Some(note) = &state.table_note {
        note.show(ui);
    }
}

fn pass_row(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    pass: &Pass,
    labels: &[&str],
    ctx: &mut AreaContext,
) {
    let number = pass.number();
    let chosen = state.selected_pass == Some(number);
    if ui
        .selectable_label(chosen, format!("Pass {number}"))
        .on_hover_text("Show this pass's modes, to confirm or change their labels")
        .clicked()
    {
        state.selected_pass = if chosen { None } else { Some(number) };
    }
    let when = date_text(&pass.time.to_string());
    let (day, time) = when.split_once(' ').unwrap_or((when.as_str(), ""));
    ui.vertical(|ui| {
        ui.add(egui::Label::new(egui::RichText::new(day).monospace()).extend());
        ui.add(egui::Label::new(egui::RichText::new(time).monospace().size(11.5)).extend());
    });
    ui.monospace(format!("{} g", num(pass.mass_g, 2)));
    match pass.mean_thickness_mm() {
        Some(mm) => ui
            .monospace(format!("{} mm", num(mm, 2)))
            .on_hover_text(readings_text(pass)),
        None => ui.weak("–"),
    };
    for label in labels {
        ui.vertical(|ui| {
            label_cell(ui, state, part, pass, label, ctx);
        });
    }
    let note = if pass.note.is_empty() {
        "–"
    } else {
        pass.note.as_str()
    };
    ui.add(egui::Label::new(note).wrap())
        .on_hover_text(air_text(pass));
}

fn label_cell(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    pass: &Pass,
    label: &str,
    ctx: &mut AreaContext,
) {
    let Some(change) = part.change(label, pass.number()) else {
        ui.weak("–");
        return;
    };
    let needs_confirmation = pass
        .mode_labelled(label)
        .is_some_and(|m| m.label_needs_confirmation());
    ui.horizontal(|ui| {
        ui.monospace(format!("{} Hz", num(change.frequency_hz, 2)));
        if needs_confirmation {
            ui.colored_label(ui.visuals().warn_fg_color, "to confirm")
                .on_hover_text(
                    "Carried over from the last pass without certainty: confirm it, or \
                     choose the pass and move the label",
                );
            let name = format!("Confirm {label} in pass {}", pass.number());
            if ui.small_button("Confirm").accessible_name(name).clicked() {
                confirm(state, part, pass, label, ctx);
            }
        }
    });
    let small = |ui: &mut egui::Ui, against: &str, change: &Option<FrequencyChange>| {
        if let Some(c) = change {
            ui.add(
                egui::Label::new(egui::RichText::new(change_text(c)).monospace().size(11.5))
                    .extend(),
            )
            .on_hover_text(format!(
                "{label}: change against {against} (pass {})",
                c.from_pass
            ));
        }
    };
    small(ui, "the previous pass", &change.vs_previous);
    small(ui, "the first pass", &change.vs_first);
}

fn confirm(
    state: &mut LedgerAreaState,
    part: &Part,
    pass: &Pass,
    label: &str,
    ctx: &mut AreaContext,
) {
    let Some(index) = pass
        .modes()
        .iter()
        .position(|m| m.label_name() == Some(label))
    else {
        return;
    };
    let (part_name, number, label) = (part.name().to_owned(), pass.number(), label.to_owned());
    let result = try_edit(ctx, "confirming a label", move |build| {
        let part = build
            .part_mut(&part_name)
            .ok_or_else(|| crate::ledger::LedgerError::NoSuchPart(part_name.clone()))?;
        part.confirm_label(number, index)?;
        Ok(format!("Confirmed {label} in pass {number}."))
    });
    state.table_note = result.err().map(Note::error);
}

fn readings_text(pass: &Pass) -> String {
    pass.thickness
        .iter()
        .map(|r| format!("{}: {} mm", r.point, num(r.thickness_mm, 2)))
        .collect::<Vec<_>>()
        .join("\n")
}

fn air_text(pass: &Pass) -> String {
    let mut bits = Vec::new();
    if let Some(t) = pass.air_temp_c {
        bits.push(format!("{} °C", num(t, 1)));
    }
    if let Some(rh) = pass.relative_humidity_pct {
        bits.push(format!("{} % RH", num(rh, 0)));
    }
    if bits.is_empty() {
        "No air conditions recorded".to_owned()
    } else {
        format!("Air: {}", bits.join(", "))
    }
}

/// The chosen pass: its modes with their labels (confirm, move, clear, or
/// put a label on an unlabelled mode), its readings and air.
/// A recorded pass's mass and note being corrected (a mistyped weight
/// would throw every forecast off).
#[derive(Clone, Debug, PartialEq)]
pub struct PassEdit {
    part: String,
    number: u32,
    mass_text: String,
    note: String,
}

fn pass_edit_form(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    pass: &Pass,
    ctx: &mut AreaContext,
) {
    let number = pass.number();
    let editing = state
        .pass_edit
        .as_ref()
        .is_some_and(|e| e.part == part.name() && e.number == number);
    if !editing {
        if ui.small_button("Correct the mass or note").clicked() {
            state.pass_edit = Some(PassEdit {
                part: part.name().to_owned(),
                number,
                mass_text: num(pass.mass_g, 2),
                note: pass.note.clone(),
            });
        }
        return;
    }
    let Some(edit) = state.pass_edit.as_mut() else {
        return;
    };
    let mut done = false;
    ui.horizontal(|ui| {
        let label = ui.label("Corrected mass (g)");
        ui.add(egui::TextEdit::singleline(&mut edit.mass_text).desired_width(70.0))
            .labelled_by(label.id);
        let label = ui.label("Corrected note");
        ui.add(egui::TextEdit::singleline(&mut edit.note).desired_width(220.0))
            .labelled_by(label.id);
    });
    ui.horizontal(|ui| {
        if ui
            .button(format!("Save the changes to pass {number}"))
            .clicked()
        {
            state.table_note = Some(match apply_pass_edit(edit, ctx) {
                Ok(()) => {
                    done = true;
                    Note::info(format!(
                        "Pass {number} corrected; save the build to keep it."
                    ))
                }
                Err(problem) => Note::error(problem),
            });
        }
        if ui.button("Cancel").clicked() {
            done = true;
        }
    });
    if done {
        state.pass_edit = None;
    }
}

fn apply_pass_edit(edit: &PassEdit, ctx: &mut AreaContext) -> Result<(), String> {
    let mass_g = parse_optional_number("The mass", &edit.mass_text)?
        .filter(|m| *m > 0.0)
        .ok_or_else(|| "The mass must be a number of grams above 0.".to_owned())?;
    let (part, number, note) = (edit.part.clone(), edit.number, edit.note.trim().to_owned());
    try_edit(ctx, "correcting the pass", move |build| {
        let pass = build
            .part_mut(&part)
            .and_then(|p| p.pass_mut(number))
            .ok_or_else(|| LedgerError::NoSuchPart(part.clone()))?;
        pass.mass_g = mass_g;
        pass.note = note.clone();
        build.validate()?;
        Ok(String::new())
    })
}

pub fn pass_details(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    ctx: &mut AreaContext,
) {
    let Some(pass) = state.selected_pass.and_then(|n| part.pass(n)) else {
        return;
    };
    let number = pass.number();
    ui.add_space(4.0);
    ui.horizontal_wrapped(|ui| {
        ui.strong(format!("Pass {number}: modes and labels"));
        ui.weak(format!(
            "{} · {} g · {}",
            date_text(&pass.time.to_string()),
            num(pass.mass_g, 2),
            air_text(pass)
        ));
        if ui
            .small_button("Close")
            .accessible_name("Close the pass")
            .clicked()
        {
            state.selected_pass = None;
        }
    });
    if !pass.thickness.is_empty() {
        ui.weak(format!(
            "Thickness: {}",
            readings_text(pass).replace('\n', "; ")
        ));
    }
    pass_edit_form(ui, state, part, pass, ctx);
    if pass.modes().is_empty() {
        ui.weak("This pass has no modes.");
        return;
    }
    let mut change = None;
    egui::Grid::new(("pass modes", number))
        .striped(true)
        .num_columns(6)
        .show(ui, |ui| {
            for title in ["Frequency", "Q", "Level", "Spread", "Label", ""] {
                ui.strong(title);
            }
            ui.end_row();
            for (index, mode) in pass.modes().iter().enumerate() {
                ui.monospace(format!("{} Hz", num(mode.frequency_hz, 2)));
                ui.monospace(num(mode.q, 0));
                ui.monospace(format!("{} dB", num(mode.level_db, 1)));
                ui.monospace(format!("±{} Hz", num(mode.spread_hz, 2)));
                let current = mode.label_name().map(str::to_owned);
                let name = format!(
                    "Label of the mode at {} Hz in pass {number}",
                    num(mode.frequency_hz, 2)
                );
                let response = egui::ComboBox::from_id_salt(("ledger mode label", number, index))
                    .selected_text(current.clone().unwrap_or_else(|| "–".to_owned()))
                    .width(120.0)
                    .show_ui(ui, |ui| {
                        if ui.selectable_label(current.is_none(), "no label").clicked() {
                            change = Some((index, None));
                        }
                        for label in part.labels() {
                            if ui
                                .selectable_label(current.as_deref() == Some(label), label)
                                .clicked()
                            {
                                change = Some((index, Some(label.clone())));
                            }
                        }
                    });
                let _ = response.response.accessible_name(name);
                if mode.label_needs_confirmation() {
                    let label = mode.label_name().unwrap_or_default();
                    if ui
                        .small_button("Confirm")
                        .accessible_name(format!(
                            "Confirm {label} on the mode at {} Hz",
                            num(mode.frequency_hz, 2)
                        ))
                        .clicked()
                    {
                        confirm(state, part, pass, label, ctx);
                    }
                } else {
                    ui.label("");
                }
                ui.end_row();
            }
        });
    if part.labels().is_empty() {
        ui.weak("This part has no labels yet: name a mode in Listen before recording.");
    }
    if let Some((index, label)) = change {
        let part_name = part.name().to_owned();
        let text = match &label {
            Some(l) => format!("Put {l} on the mode in pass {number}."),
            None => format!("Took the label off a mode of pass {number}."),
        };
        let result = try_edit(ctx, "changing a label", move |build| {
            let part = build
                .part_mut(&part_name)
                .ok_or_else(|| crate::ledger::LedgerError::NoSuchPart(part_name.clone()))?;
            part.set_label(number, index, label.as_deref())?;
            Ok(text.clone())
        });
        state.table_note = result.err().map(Note::error);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn change_reads_in_hz_percent_and_cents() {
        let change = FrequencyChange {
            from_pass: 1,
            hz: -2.214,
            percent: -1.294,
            cents: -22.4,
        };
        assert_eq!(
            change_text(&change),
            "\u{2212}2.21 Hz \u{2212}1.29% \u{2212}22 ct"
        );
    }
}
