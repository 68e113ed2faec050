//! The parts of the build: the list to pick from, the form that adds one,
//! and the comparison of the top against the back (mode 5 interval and the
//! mode 5 / mode 2 ratio of each plate).

use eframe::egui;

use crate::ledger::compare::{mode5_interval_semitones, plate_modes, top_and_back};
use crate::ledger::{Build, LedgerError, Part, PartKind};

use super::{try_edit, LedgerAreaState, Note};
use crate::text::{num, parse_optional_number, signed};
use crate::ui::commands::AppCommand;
use crate::ui::context::AreaContext;

/// The kinds offered when adding a part.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum KindChoice {
    /// Top plate.
    #[default]
    Top,
    /// Back plate.
    Back,
    /// Assembled body.
    Body,
    /// A part the maker names.
    Other,
}

impl KindChoice {
    const ALL: [KindChoice; 4] = [Self::Top, Self::Back, Self::Body, Self::Other];

    fn text(self) -> &'static str {
        match self {
            Self::Top => "top plate",
            Self::Back => "back plate",
            Self::Body => "assembled body",
            Self::Other => "other (named below)",
        }
    }

    fn default_name(self) -> &'static str {
        match self {
            Self::Top => "Top",
            Self::Back => "Back",
            Self::Body => "Body",
            Self::Other => "",
        }
    }
}

/// The add-part form.
#[derive(Clone, Debug, Default)]
pub struct AddPartForm {
    open: bool,
    name: String,
    kind: KindChoice,
    custom_kind: String,
    wood: String,
    length_mm: String,
    width_mm: String,
}

/// Something to take out of the build, once the maker confirms.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Removal {
    /// The latest pass of the part (a pass recorded by mistake).
    LatestPass { part: String, pass: u32 },
    /// The whole part with all its passes.
    Part(String),
}

impl Removal {
    fn question(&self) -> String {
        match self {
            Self::LatestPass { part, pass } => format!("Take pass {pass} out of \"{part}\"?"),
            Self::Part(part) => format!("Remove \"{part}\" and all its passes?"),
        }
    }
}

/// "Undo the latest pass" and "Remove this part", each asking first. The
/// change is an ordinary build edit: it marks the build unsaved, and the
/// previous file stays as it was until the maker saves.
fn removal_buttons(
    ui: &mut egui::Ui,
    pending: &mut Option<Removal>,
    note: &mut Option<Note>,
    part: &Part,
    ctx: &mut AreaContext,
) {
    if let Some(removal) = pending.clone() {
        ui.label(removal.question());
        ui.horizontal(|ui| {
            if ui.button("Yes, take it out").clicked() {
                *note = Some(apply_removal(&removal, ctx));
                *pending = None;
            }
            if ui.button("No, keep it").clicked() {
                *pending = None;
            }
        });
        return;
    }
    ui.horizontal(|ui| {
        if let Some(latest) = part.latest_pass() {
            if ui.small_button("Undo the latest pass").clicked() {
                *pending = Some(Removal::LatestPass {
                    part: part.name().to_owned(),
                    pass: latest.number(),
                });
            }
        }
        if ui.small_button("Remove this part").clicked() {
            *pending = Some(Removal::Part(part.name().to_owned()));
        }
    });
}

fn apply_removal(removal: &Removal, ctx: &mut AreaContext) -> Note {
    let outcome = match removal.clone() {
        Removal::LatestPass { part, pass } => {
            try_edit(ctx, "taking out the latest pass", move |build| {
                let found = build
                    .part_mut(&part)
                    .ok_or_else(|| LedgerError::NoSuchPart(part.clone()))?;
                match found.latest_pass().map(|p| p.number()) {
                    Some(latest) if latest == pass => {
                        found.remove_latest_pass();
                        Ok(format!(
                            "Took pass {pass} out of \"{part}\"; save to keep the change."
                        ))
                    }
                    _ => Ok(format!(
                        "Pass {pass} of \"{part}\" is no longer the latest; nothing was taken out."
                    )),
                }
            })
        }
        Removal::Part(part) => try_edit(ctx, "removing the part", move |build| {
            build.remove_part(&part)?;
            Ok(format!("Removed \"{part}\"; save to keep the change."))
        }),
    };
    match outcome {
        Ok(()) => Note::info(match removal {
            Removal::LatestPass { pass, .. } => format!("Pass {pass} taken out."),
            Removal::Part(part) => format!("\"{part}\" removed."),
        }),
        Err(problem) => Note::error(problem),
    }
}

/// The list of parts, with the add-part form under it.
pub fn part_list(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    build: &Build,
    ctx: &mut AreaContext,
) {
    ui.strong("Parts");
    if build.parts().is_empty() {
        ui.weak("No parts yet.");
    }
    for part in build.parts() {
        let chosen = state.selected_part.as_deref() == Some(part.name());
        let passes = part.passes().len();
        let text = format!(
            "{} — {}, {passes} pass{}",
            part.name(),
            part.kind().describe(),
            if passes == 1 { "" } else { "es" }
        );
        if ui
            .selectable_label(chosen, text)
            .on_hover_text(part_summary(part))
            .clicked()
            && !chosen
        {
            state.selected_part = Some(part.name().to_owned());
            state.selected_pass = None;
            state.table_note = None;
            state.target_note = None;
            // Listen offers this part's labels from now on.
            ctx.push(AppCommand::SetListenPart(Some(part.name().to_owned())));
        }
    }
    if ctx.listen_part.is_some() && ctx.listen_part != state.selected_part.as_deref() {
        if let Some(part) = ctx.listen_part {
            ui.weak(format!("Listen offers the labels of \"{part}\"."));
        }
    }
    if let Some(part) = state
        .selected_part
        .as_deref()
        .and_then(|name| build.part(name))
    {
        removal_buttons(
            ui,
            &mut state.pending_removal,
            &mut state.part_note,
            part,
            ctx,
        );
    }
    ui.add_space(4.0);
    add_part_form(ui, state, build, ctx);
    if let Some(note) = &state.part_note {
        note.show(ui);
    }
}

fn add_part_form(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    build: &Build,
    ctx: &mut AreaContext,
) {
    let form = &mut state.add_part;
    if !form.open {
        if ui.button("Add a part…").clicked() {
            form.open = true;
            form.kind = first_missing_kind(build);
            form.name = form.kind.default_name().to_owned();
            state.part_note = None;
        }
        return;
    }
    ui.strong("Add a part");
    let previous_kind = form.kind;
    egui::ComboBox::new("new part kind", "Kind of part")
        .selected_text(form.kind.text())
        .show_ui(ui, |ui| {
            for kind in KindChoice::ALL {
                ui.selectable_value(&mut form.kind, kind, kind.text());
            }
        });
    if form.kind != previous_kind && form.name == previous_kind.default_name() {
        form.name = form.kind.default_name().to_owned();
    }
    egui::Grid::new("new part grid")
        .num_columns(2)
        .show(ui, |ui| {
            text_row(ui, "Part name", &mut form.name, "Top");
            if form.kind == KindChoice::Other {
                text_row(ui, "What it is", &mut form.custom_kind, "bass bar");
            }
            text_row(ui, "Wood species", &mut form.wood, "spruce (optional)");
            text_row(ui, "Outline length (mm)", &mut form.length_mm, "optional");
            text_row(ui, "Outline width (mm)", &mut form.width_mm, "optional");
        });
    let mut add = false;
    let mut cancel = false;
    ui.horizontal(|ui| {
        add = ui.button("Add the part").clicked();
        cancel = ui.button("Cancel").clicked();
    });
    if cancel {
        *form = AddPartForm::default();
        state.part_note = None;
    } else if add {
        match add_part_edit(form) {
            Ok(edit) => match try_edit(ctx, "adding a part", edit) {
                Ok(()) => {
                    state.selected_part = Some(form.name.trim().to_owned());
                    state.selected_pass = None;
                    ctx.push(AppCommand::SetListenPart(Some(form.name.trim().to_owned())));
                    state.part_note = Some(Note::info(format!(
                        "Added \"{}\". Tap it in Listen, then record the pass here.",
                        form.name.trim()
                    )));
                    *form = AddPartForm::default();
                }
                Err(problem) => state.part_note = Some(Note::error(problem)),
            },
            Err(problem) => state.part_note = Some(Note::error(problem)),
        }
    }
}

fn text_row(ui: &mut egui::Ui, label: &str, text: &mut String, hint: &str) {
    let label = ui.label(label);
    ui.add(
        egui::TextEdit::singleline(text)
            .hint_text(hint)
            .desired_width(150.0),
    )
    .labelled_by(label.id);
    ui.end_row();
}

/// The kind a maker most likely adds next: top, then back, then body.
fn first_missing_kind(build: &Build) -> KindChoice {
    let has = |kind: &PartKind| build.parts().iter().any(|p| p.kind() == kind);
    if !has(&PartKind::TopPlate) {
        KindChoice::Top
    } else if !has(&PartKind::BackPlate) {
        KindChoice::Back
    } else if !has(&PartKind::AssembledBody) {
        KindChoice::Body
    } else {
        KindChoice::Other
    }
}

type PartEdit = Box<dyn Fn(&mut Build) -> Result<String, LedgerError> + Send>;

/// The edit that adds the part in the form, or the first typed value that
/// is wrong.
fn add_part_edit(form: &AddPartForm) -> Result<PartEdit, String> {
    let name = form.name.trim().to_owned();
    let kind = match form.kind {
        KindChoice::Top => PartKind::TopPlate,
        KindChoice::Back => PartKind::BackPlate,
        KindChoice::Body => PartKind::AssembledBody,
        KindChoice::Other => {
            let what = form.custom_kind.trim();
            let what = if what.is_empty() { name.as_str() } else { what };
            PartKind::Custom(what.to_owned())
        }
    };
    let wood = Some(form.wood.trim().to_owned()).filter(|w| !w.is_empty());
    let length_mm = positive_or_none(&form.length_mm, "The outline length")?;
    let width_mm = positive_or_none(&form.width_mm, "The outline width")?;
    Ok(Box::new(move |build: &mut Build| {
        let part = build.add_part(name.clone(), kind.clone())?;
        part.wood_species = wood.clone();
        part.outline_length_mm = length_mm;
        part.outline_width_mm = width_mm;
        Ok(format!("Added the part \"{name}\"."))
    }))
}

fn positive_or_none(text: &str, what: &str) -> Result<Option<f64>, String> {
    match parse_optional_number(what, text)? {
        Some(value) if value <= 0.0 => Err(format!(
            "{what} is {value} mm; it must be a positive number."
        )),
        other => Ok(other),
    }
}

/// "top plate · spruce · 356 × 207 mm · 7 passes · labels: mode 1, mode 2".
pub fn part_summary(part: &Part) -> String {
    let mut bits = vec![part.kind().describe().to_owned()];
    if let Some(wood) = &part.wood_species {
        bits.push(wood.clone());
    }
    match (part.outline_length_mm, part.outline_width_mm) {
        (Some(l), Some(w)) => bits.push(format!("{} × {} mm", num(l, 0), num(w, 0))),
        (Some(l), None) => bits.push(format!("{} mm long", num(l, 0))),
        (None, Some(w)) => bits.push(format!("{} mm wide", num(w, 0))),
        (None, None) => {}
    }
    let passes = part.passes().len();
    bits.push(format!(
        "{passes} pass{}",
        if passes == 1 { "" } else { "es" }
    ));
    if part.labels().is_empty() {
        bits.push("no labels yet (name modes in Listen)".to_owned());
    } else {
        bits.push(format!("labels: {}", part.labels().join(", ")));
    }
    bits.join(" · ")
}

/// The top-against-back block.
pub fn top_against_back(ui: &mut egui::Ui, build: &Build) {
    ui.strong("Top against back");
    let Some((top, back)) = top_and_back(build) else {
        ui.weak("Needs a top plate and a back plate.");
        return;
    };
    let (top_modes, back_modes) = (plate_modes(top), plate_modes(back));
    for (part, modes) in [(top, top_modes), (back, back_modes)] {
        match modes {
            Some(m) => {
                ui.label(format!(
                    "{}: mode 5 / mode 2 = {} ({} / {} Hz, pass {})",
                    part.name(),
                    num(m.ratio(), 2),
                    num(m.mode5_hz, 1),
                    num(m.mode2_hz, 1),
                    m.pass_number
                ));
            }
            None => {
                ui.weak(format!(
                    "{}: no pass has both mode 2 and mode 5 labelled.",
                    part.name()
                ));
            }
        }
    }
    if let (Some(t), Some(b)) = (top_modes, back_modes) {
        let semitones = mode5_interval_semitones(&t, &b);
        let direction = if semitones >= 0.0 { "above" } else { "below" };
        ui.label(format!(
            "Mode 5 interval: {} semitones (the back's mode 5 is {} semitones {} the top's)",
            signed(semitones, 2),
            num(semitones.abs(), 2),
            direction
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn outline_must_be_positive() {
        assert!(positive_or_none("-3", "The outline length").is_err());
        assert_eq!(positive_or_none("", "x"), Ok(None));
        assert_eq!(positive_or_none("356", "x"), Ok(Some(356.0)));
    }
}
