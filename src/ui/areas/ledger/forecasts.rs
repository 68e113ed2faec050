//! Targets and forecasts of a part: a target frequency per label (set or
//! cleared through `Part::set_target`), and for each target the forecast in
//! plain sentences (`text::forecast`): the mass to remove with its band, the
//! thickness change when the pass has readings, the method, and any warning.

use eframe::egui;

use crate::ledger::{LedgerError, Part};

use super::{try_edit, LedgerAreaState, Note};
use crate::text::forecast::forecast_lines;
use crate::text::{num, parse_optional_number};
use crate::ui::context::AreaContext;

/// The targets table and the forecasts.
pub fn targets_and_forecasts(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    ctx: &mut AreaContext,
) {
    ui.strong("Targets and forecasts");
    if part.labels().is_empty() {
        ui.weak("This part has no labels; targets are set per labelled mode.");
        return;
    }
    egui::Grid::new(("targets", part.name()))
        .num_columns(4)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            for label in part.labels() {
                target_row(ui, state, part, label, ctx);
                ui.end_row();
            }
        });
    if let Some(note) = &state.target_note {
        note.show(ui);
    }
    let forecasts = part.forecasts();
    if forecasts.is_empty() {
        if part.targets().is_empty() {
            ui.weak("Set a target to see how much more wood to take off.");
        } else {
            ui.weak("A forecast appears once a pass carries the label of a target.");
        }
        return;
    }
    for forecast in &forecasts {
        ui.add_space(4.0);
        for (text, is_warning) in forecast_lines(forecast) {
            let label = if is_warning {
                egui::Label::new(egui::RichText::new(text).color(ui.visuals().warn_fg_color))
            } else {
                egui::Label::new(text)
            };
            ui.add(label.wrap());
        }
    }
    ui.weak("Forecasts assume the part is thinned evenly; the band is a guide, not a promise.");
}

fn target_row(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    part: &Part,
    label: &str,
    ctx: &mut AreaContext,
) {
    ui.label(label);
    let key = (part.name().to_owned(), label.to_owned());
    let current = part.targets().get(label).copied();
    let text = state
        .target_text
        .entry(key.clone())
        .or_insert_with(|| current.map(|hz| num(hz, 1)).unwrap_or_default());
    let field = ui
        .add(
            egui::TextEdit::singleline(text)
                .hint_text("Hz")
                .desired_width(70.0),
        )
        .accessible_name(format!("Target for {label} (Hz)"));
    let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
    let set = ui
        .small_button("Set")
        .accessible_name(format!("Set the target for {label}"))
        .clicked()
        || entered;
    let clear = ui
        .add_enabled(current.is_some(), egui::Button::new("Clear").small())
        .accessible_name(format!("Clear the target for {label}"))
        .clicked();
    if set {
        let typed = text.clone();
        let result = match parse_optional_number(&format!("The target for {label}"), &typed) {
            Ok(Some(hz)) => set_target(ctx, part, label, Some(hz)),
            Ok(None) => Err(format!("Type a target frequency for {label} in Hz first.")),
            Err(problem) => Err(problem),
        };
        state.target_note = result.err().map(Note::error);
    }
    if clear {
        state.target_text.insert(key, String::new());
        state.target_note = set_target(ctx, part, label, None).err().map(Note::error);
    }
    if let Some(hz) = current {
        ui.weak(format!("target {} Hz", num(hz, 1)));
    }
}

fn set_target(
    ctx: &mut AreaContext,
    part: &Part,
    label: &str,
    target_hz: Option<f64>,
) -> Result<(), String> {
    let (part_name, label) = (part.name().to_owned(), label.to_owned());
    try_edit(ctx, "setting a target", move |build| {
        let part = build
            .part_mut(&part_name)
            .ok_or_else(|| LedgerError::NoSuchPart(part_name.clone()))?;
        part.set_target(&label, target_hz)?;
        Ok(match target_hz {
            Some(hz) => format!("Target for {label} of \"{part_name}\": {} Hz.", num(hz, 1)),
            None => format!("Cleared the target for {label} of \"{part_name}\"."),
        })
    })
}
