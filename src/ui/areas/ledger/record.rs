//! Recording the current Listen result as a new pass of the chosen part:
//! a small form (mass required; thickness readings at named points, air
//! temperature, relative humidity and a note optional), then the
//! `RecordPass` command, and afterwards what happened to the labels
//! (carried over, to be confirmed, not found).

use eframe::egui;

use crate::ledger::{Part, PassInput, PassOutcome, ThicknessReading};

use super::Note;
use crate::text::units::{convert_typed, parse_optional_in};
use crate::text::{number_text, parse_optional_number, sentence, Units};
use crate::ui::commands::{AppCommand, Area};
use crate::ui::context::AreaContext;

/// One thickness reading being typed (in the form's length unit).
#[derive(Clone, Debug, Default, PartialEq)]
struct ReadingRow {
    point: String,
    thickness: String,
}

/// The record form and what the last recording did.
#[derive(Clone, Debug, Default)]
pub struct RecordForm {
    /// The part the typed point names were taken from.
    part: Option<String>,
    /// The units the values are typed in (the maker's, followed when they
    /// change).
    units: Units,
    mass: String,
    readings: Vec<ReadingRow>,
    air_temp: String,
    relative_humidity_pct: String,
    note: String,
    /// The form's refusal, or the outcome of the last recording.
    message: Option<Note>,
    /// Extra lines of the outcome (labels).
    outcome_lines: Vec<Note>,
    /// A recording sent to the app, not yet seen in the build.
    awaiting: Option<Awaiting>,
}

/// A recording sent to the app.
#[derive(Clone, Debug)]
struct Awaiting {
    part: String,
    mass_g: f64,
    /// What recording did on a copy of the part (labels carried over).
    preview: PassOutcome,
    /// Frames since the command was pushed.
    frames: u32,
}

/// Called every frame: once the recorded pass shows in the build, says
/// what happened to the labels.
pub fn follow_up(form: &mut RecordForm, ctx: &AreaContext) {
    let Some(awaiting) = form.awaiting.as_mut() else {
        return;
    };
    let number = awaiting.preview.pass_number;
    let recorded = ctx
        .build
        .and_then(|b| b.part(&awaiting.part))
        .and_then(|p| p.pass(number));
    match recorded {
        Some(pass) => {
            let awaiting = awaiting.clone();
            form.awaiting = None;
            form.message = Some(Note::info(format!(
                "Recorded pass {number} of \"{}\" ({}).",
                awaiting.part,
                ctx.units.mass.text(awaiting.mass_g)
            )));
            let labelled: Vec<&str> = pass.modes().iter().filter_map(|m| m.label_name()).collect();
            let to_confirm = pass.labels_to_confirm();
            let carried: Vec<&str> = awaiting
                .preview
                .carried
                .iter()
                .map(|c| c.label.as_str())
                .collect();
            form.outcome_lines = outcome_lines(
                &carried,
                &labelled,
                &to_confirm,
                &awaiting.preview.not_found,
            );
        }
        None => {
            awaiting.frames += 1;
            if awaiting.frames > 2 {
                form.awaiting = None;
                form.message = Some(Note::error(
                    "The pass was not recorded; the status line at the bottom says why.",
                ));
            }
        }
    }
}

fn outcome_lines(
    carried: &[&str],
    labelled: &[&str],
    to_confirm: &[&str],
    not_found: &[String],
) -> Vec<Note> {
    let mut lines = Vec::new();
    if carried.is_empty() {
        lines.push(Note::info(
            "No labels were carried over from earlier passes.",
        ));
    } else {
        lines.push(Note::info(format!(
            "Labels carried over: {}.",
            carried.join(", ")
        )));
    }
    let from_listen: Vec<&str> = labelled
        .iter()
        .filter(|l| !carried.contains(l))
        .copied()
        .collect();
    if !from_listen.is_empty() {
        lines.push(Note::info(format!(
            "Labels chosen in Listen: {}.",
            from_listen.join(", ")
        )));
    }
    if !to_confirm.is_empty() {
        lines.push(Note {
            text: format!(
                "To confirm (marked in the table): {}.",
                to_confirm.join(", ")
            ),
            is_error: true,
        });
    }
    let missing: Vec<&str> = not_found
        .iter()
        .map(String::as_str)
        .filter(|l| !labelled.contains(l))
        .collect();
    if !missing.is_empty() {
        lines.push(Note::info(format!(
            "Not found in this pass: {}.",
            missing.join(", ")
        )));
    }
    lines
}

/// The form.
pub fn record_form(ui: &mut egui::Ui, form: &mut RecordForm, part: &Part, ctx: &mut AreaContext) {
    let next = part.passes().len() + 1;
    ui.strong(format!("Record pass {next} of \"{}\"", part.name()));
    if form.part.as_deref() != Some(part.name()) {
        take_points_from(form, part);
    }
    follow_units(form, ctx.units);
    let units = form.units;
    match ctx.pass {
        Some(pass) => {
            let labelled = ctx.pass_labels.iter().flatten().count();
            ui.label(format!(
                "From Listen: {} taps averaged, {} modes ({labelled} labelled).",
                pass.taps_used,
                pass.modes.len()
            ));
        }
        None => {
            ui.weak("There is no Listen result yet: tap the part in Listen first.");
            if ui.button("Go to Listen").clicked() {
                ctx.push(AppCommand::ShowArea(Area::Listen));
            }
        }
    }
    egui::Grid::new("record grid")
        .num_columns(2)
        .show(ui, |ui| {
            field_row(
                ui,
                &format!("Mass ({})", units.mass.symbol()),
                &mut form.mass,
                "required",
                90.0,
            );
            field_row(
                ui,
                &format!("Air temperature ({})", units.temperature.symbol()),
                &mut form.air_temp,
                "optional",
                90.0,
            );
            field_row(
                ui,
                "Relative humidity (%)",
                &mut form.relative_humidity_pct,
                "optional",
                90.0,
            );
            field_row(ui, "Note", &mut form.note, "what was done", 130.0);
        });
    readings_editor(ui, form);
    let can_record = ctx.pass.is_some();
    let clicked = ui
        .add_enabled(can_record, egui::Button::new(format!("Record pass {next}")))
        .on_hover_text("Adds the Listen result, with these values, as a new pass of this part")
        .clicked();
    if clicked {
        match record(form, part, ctx) {
            Ok(()) => {}
            Err(problem) => {
                form.message = Some(Note::error(problem));
                form.outcome_lines.clear();
            }
        }
    }
    if form.awaiting.is_some() {
        ui.spinner();
    }
    if let Some(message) = &form.message {
        message.show(ui);
    }
    for line in &form.outcome_lines {
        line.show(ui);
    }
}

fn field_row(ui: &mut egui::Ui, label: &str, text: &mut String, hint: &str, width: f32) {
    let label = ui.label(label);
    ui.add(
        egui::TextEdit::singleline(text)
            .hint_text(hint)
            .desired_width(width),
    )
    .labelled_by(label.id);
    ui.end_row();
}

/// Starts the readings with the point names of the part's latest pass.
fn take_points_from(form: &mut RecordForm, part: &Part) {
    form.part = Some(part.name().to_owned());
    form.readings = part
        .latest_pass()
        .map(|pass| {
            pass.thickness
                .iter()
                .map(|r| ReadingRow {
                    point: r.point.clone(),
                    thickness: String::new(),
                })
                .collect()
        })
        .unwrap_or_default();
    form.message = None;
    form.outcome_lines.clear();
}

/// Rewrites what is typed in the form's units into `units`.
fn follow_units(form: &mut RecordForm, units: Units) {
    let old = form.units;
    convert_typed(&mut form.mass, old.mass, units.mass);
    convert_typed(&mut form.air_temp, old.temperature, units.temperature);
    for row in &mut form.readings {
        convert_typed(&mut row.thickness, old.length, units.length);
    }
    form.units = units;
}

fn readings_editor(ui: &mut egui::Ui, form: &mut RecordForm) {
    let symbol = form.units.length.symbol();
    ui.label(format!("Thickness readings ({symbol})"));
    let mut remove = None;
    for (index, row) in form.readings.iter_mut().enumerate() {
        let n = index + 1;
        ui.horizontal(|ui| {
            ui.add(
                egui::TextEdit::singleline(&mut row.point)
                    .hint_text("point")
                    .desired_width(120.0),
            )
            .accessible_name(format!("Point {n}"));
            ui.add(
                egui::TextEdit::singleline(&mut row.thickness)
                    .hint_text(symbol)
                    .desired_width(60.0),
            )
            .accessible_name(format!("Thickness at point {n} ({symbol})"));
            if ui
                .small_button("Remove")
                .accessible_name(format!("Remove reading {n}"))
                .clicked()
            {
                remove = Some(index);
            }
        });
    }
    if let Some(index) = remove {
        form.readings.remove(index);
    }
    if ui.small_button("Add a reading").clicked() {
        form.readings.push(ReadingRow::default());
    }
}

/// The typed values (in the form's units) as a check-ready pass input in
/// the ledger's mm, g and °C (modes left empty).
fn typed_values(form: &RecordForm) -> Result<(f64, PassInput), String> {
    let units = form.units;
    let mass_g = parse_optional_in(units.mass, "The mass", &form.mass)?.ok_or_else(|| {
        format!(
            "Type the part's mass in {} first.",
            units.mass.plural_name()
        )
    })?;
    if mass_g <= 0.0 {
        let symbol = units.mass.symbol();
        return Err(format!(
            "The mass is {} {symbol}; it must be more than 0 {symbol}.",
            number_text(units.mass.from_g(mass_g))
        ));
    }
    let mut input = PassInput::new(mass_g, Vec::new());
    for (index, row) in form.readings.iter().enumerate() {
        let point = row.point.trim();
        let typed = row.thickness.trim();
        if point.is_empty() && typed.is_empty() {
            continue;
        }
        let what = if point.is_empty() {
            format!("The thickness of reading {}", index + 1)
        } else {
            format!("The thickness at \"{point}\"")
        };
        let Some(thickness_mm) = parse_optional_in(units.length, &what, typed)? else {
            continue;
        };
        let point = if point.is_empty() {
            format!("point {}", index + 1)
        } else {
            point.to_owned()
        };
        input.thickness.push(ThicknessReading {
            point,
            thickness_mm,
        });
    }
    input.air_temp_c = parse_optional_in(units.temperature, "The air temperature", &form.air_temp)?;
    input.relative_humidity_pct =
        parse_optional_number("The relative humidity", &form.relative_humidity_pct)?;
    input.note = form.note.trim().to_owned();
    Ok((mass_g, input))
}

fn record(form: &mut RecordForm, part: &Part, ctx: &mut AreaContext) -> Result<(), String> {
    let (mass_g, typed) = typed_values(form)?;
    let Some(AppCommand::RecordPass {
        part: part_name,
        mut input,
        labels,
    }) = ctx.record_pass_command(part.name(), mass_g)
    else {
        return Err(
            "There is no Listen result to record: tap the part in Listen first.".to_owned(),
        );
    };
    input.thickness = typed.thickness;
    input.air_temp_c = typed.air_temp_c;
    input.relative_humidity_pct = typed.relative_humidity_pct;
    input.note = typed.note;
    // Try it on a copy first: a refusal is shown here, in the ledger's words.
    let preview = part
        .clone()
        .record_pass(input.clone())
        .map_err(|e| sentence(&e.to_string()))?;
    ctx.push(AppCommand::RecordPass {
        part: part_name.clone(),
        input,
        labels,
    });
    // The app saves the build after a recorded pass when it has a file.
    form.awaiting = Some(Awaiting {
        part: part_name,
        mass_g,
        preview,
        frames: 0,
    });
    form.message = None;
    form.outcome_lines.clear();
    form.mass.clear();
    form.note.clear();
    for row in &mut form.readings {
        row.thickness.clear();
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn form(mass: &str) -> RecordForm {
        RecordForm {
            mass: mass.to_owned(),
            ..RecordForm::default()
        }
    }

    #[test]
    fn mass_is_required_and_positive() {
        assert!(typed_values(&form("")).unwrap_err().contains("mass"));
        assert!(typed_values(&form("0")).unwrap_err().contains("0 g"));
        assert!(typed_values(&form("-2")).is_err());
        assert_eq!(typed_values(&form("71,5")).expect("test value").0, 71.5);
    }

    #[test]
    fn readings_keep_their_points_and_skip_empty_rows() {
        let mut f = form("70");
        f.readings = vec![
            ReadingRow {
                point: "centre".into(),
                thickness: "2.6".into(),
            },
            ReadingRow::default(),
            ReadingRow {
                point: "upper bout".into(),
                thickness: String::new(),
            },
        ];
        let (_, input) = typed_values(&f).expect("test value");
        assert_eq!(input.thickness.len(), 1);
        assert_eq!(input.thickness[0].point, "centre");
        f.readings[0].thickness = "thin".into();
        assert!(typed_values(&f).unwrap_err().contains("centre"));
    }

    #[test]
    fn values_typed_in_inches_ounces_and_fahrenheit_are_kept_in_mm_g_and_celsius() {
        let mut f = form("2.5");
        f.air_temp = "68".into();
        f.readings = vec![ReadingRow {
            point: "centre".into(),
            thickness: "0.118".into(),
        }];
        f.units = Units::imperial();
        let (mass_g, input) = typed_values(&f).expect("test value");
        // 1 oz = 28.349523125 g, 1 in = 25.4 mm, 68 °F = 20 °C (exact
        // definitions).
        assert!((mass_g - 70.873_807_812_5).abs() < 1e-9, "{mass_g}");
        assert!((input.thickness[0].thickness_mm - 2.9972).abs() < 1e-12);
        assert!((input.air_temp_c.expect("typed") - 20.0).abs() < 1e-12);
        // Switching the form to metric rewrites what is typed.
        follow_units(&mut f, Units::metric());
        assert_eq!(f.mass, "70.8738");
        assert_eq!(f.readings[0].thickness, "2.9972");
        assert_eq!(f.air_temp, "20");
        assert!(typed_values(&form("0")).unwrap_err().contains("0 g"));
        let mut zero = form("0");
        zero.units = Units::imperial();
        assert!(typed_values(&zero).unwrap_err().contains("0 oz"), "ounces");
    }

    #[test]
    fn outcome_names_carried_confirmed_and_missing_labels() {
        let lines = outcome_lines(
            &["mode 2"],
            &["mode 2", "mode 5"],
            &["mode 2"],
            &["mode 1".to_owned()],
        );
        let text: Vec<&str> = lines.iter().map(|l| l.text.as_str()).collect();
        assert_eq!(
            text,
            [
                "Labels carried over: mode 2.",
                "Labels chosen in Listen: mode 5.",
                "To confirm (marked in the table): mode 2.",
                "Not found in this pass: mode 1.",
            ]
        );
    }
}
