//! The Ledger area: the open build's parts and passes, tables, charts,
//! targets and forecasts.
//!
//! Layout: a build bar across the top (new, open, sample builds, save, save
//! as, CSV export, and a typed file path for each); on the left the build's
//! details, its parts, the form that records the Listen result as a new pass,
//! and the top-against-back comparison; in the middle the chosen part's pass
//! table, the chosen pass's modes (labels to confirm or change), the charts,
//! and the targets with their forecasts.
//!
//! Nothing here changes the build: every change is an [`AppCommand`]
//! (`NewBuild`, `OpenBuild`, `SaveBuild`, `EditBuild`, `RecordPass` …)
//! pushed into the [`AreaContext`]. Edits are first tried on a copy of the
//! build, so a refusal (the ledger's own sentence) is shown beside the form
//! that caused it rather than only in the status line. File dialogs, CSV
//! writing and the report run on the window's job runner
//! (see `files`).

mod charts;
mod files;
mod forecasts;
mod parts;
mod record;
mod table;

use std::collections::{BTreeSet, HashMap};

use eframe::egui;

use crate::demo::SAMPLE_BUILDS;
use crate::ledger::{Build, Family, LedgerError, Part};
use crate::text::{capitalised, date_text, sentence};
use crate::ui::commands::AppCommand;
use crate::ui::context::AreaContext;

/// What the Ledger area remembers between frames (selection, chart view,
/// text being typed …). Owned by the app.
#[derive(Debug, Default)]
pub struct LedgerAreaState {
    /// The part shown in the middle.
    selected_part: Option<String>,
    /// The pass whose modes are shown under the table.
    selected_pass: Option<u32>,
    /// The path typed in the build bar.
    file_path: String,
    /// The new-build form, while open.
    new_build: Option<NewBuildForm>,
    /// An action that would drop unsaved changes, waiting for the maker's
    /// word.
    pending_replace: Option<Replace>,
    /// The build-details form (name, family, notes) being edited.
    details: Option<DetailsForm>,
    /// The add-part form.
    add_part: parts::AddPartForm,
    /// A removal waiting for the maker's word.
    pending_removal: Option<parts::Removal>,
    /// The mass and note of a recorded pass being corrected.
    pass_edit: Option<table::PassEdit>,
    /// The record-a-pass form.
    record: record::RecordForm,
    /// Target frequencies being typed, per (part, label).
    target_text: HashMap<(String, String), String>,
    /// Which chart is shown.
    chart: charts::ChartKind,
    /// Passes whose spectra are overlaid, per part (None: the default
    /// choice, first and latest).
    overlay: HashMap<String, BTreeSet<u32>>,
    /// Sentences shown beside the build bar, the parts, the table and the
    /// targets.
    bar_note: Option<Note>,
    part_note: Option<Note>,
    table_note: Option<Note>,
    target_note: Option<Note>,
    /// Dialogs and CSV writes running on other threads.
    files: files::FileJobs,
}

impl LedgerAreaState {
    /// The part chosen, and the pass chosen in its table (None: no row).
    pub fn selection(&self) -> (Option<&str>, Option<u32>) {
        (self.selected_part.as_deref(), self.selected_pass)
    }
}

/// A sentence shown inline, and whether it reports a problem.
#[derive(Clone, Debug, PartialEq)]
struct Note {
    text: String,
    is_error: bool,
}

impl Note {
    fn info(text: impl Into<String>) -> Self {
        Self {
            text: text.into(),
            is_error: false,
        }
    }

    fn error(text: impl AsRef<str>) -> Self {
        Self {
            text: sentence(text.as_ref()),
            is_error: true,
        }
    }

    fn show(&self, ui: &mut egui::Ui) {
        if self.is_error {
            ui.colored_label(ui.visuals().error_fg_color, &self.text);
        } else {
            ui.label(&self.text);
        }
    }
}

/// The new-build form.
#[derive(Clone, Debug)]
struct NewBuildForm {
    name: String,
    family: Family,
}

/// The build-details form.
#[derive(Clone, Debug)]
struct DetailsForm {
    name: String,
    family: Family,
    notes: String,
}

/// Something that replaces or closes the open build.
#[derive(Clone, Debug)]
enum Replace {
    New { name: String, family: Family },
    Open(std::path::PathBuf),
    OpenDialog,
    Sample(usize),
    Close,
}

/// Draws the Ledger area.
pub fn show(ui: &mut egui::Ui, state: &mut LedgerAreaState, ctx: &mut AreaContext) {
    state.files.take_results(&mut state.bar_note, ctx);
    record::follow_up(&mut state.record, ctx);
    keep_selection_valid(state, ctx.build);

    egui::Panel::top("ledger build bar").show(ui, |ui| {
        build_bar(ui, state, ctx);
    });
    let Some(build) = ctx.build else {
        egui::CentralPanel::default().show(ui, |ui| {
            no_build(ui);
        });
        return;
    };
    egui::Panel::left("ledger side")
        .resizable(true)
        .default_size(305.0)
        .size_range(260.0..=460.0)
        .show(ui, |ui| {
            egui::ScrollArea::vertical()
                .id_salt("ledger side scroll")
                .show(ui, |ui| {
                    side_panel(ui, state, build, ctx);
                });
        });
    egui::CentralPanel::default().show(ui, |ui| {
        egui::ScrollArea::vertical()
            .id_salt("ledger central scroll")
            .auto_shrink([false, false])
            .show(ui, |ui| {
                central(ui, state, build, ctx);
            });
    });
}

/// Forgets a chosen part or pass that the build no longer has, and picks
/// the first part when none is chosen.
fn keep_selection_valid(state: &mut LedgerAreaState, build: Option<&Build>) {
    let Some(build) = build else {
        state.selected_part = None;
        state.selected_pass = None;
        return;
    };
    let part_known = state
        .selected_part
        .as_deref()
        .is_some_and(|name| build.part(name).is_some());
    if !part_known {
        state.selected_part = build.parts().first().map(|p| p.name().to_owned());
        state.selected_pass = None;
    }
    let pass_known = state
        .selected_part
        .as_deref()
        .and_then(|name| build.part(name))
        .zip(state.selected_pass)
        .is_some_and(|(part, number)| part.pass(number).is_some());
    if !pass_known {
        state.selected_pass = None;
    }
}

fn no_build(ui: &mut egui::Ui) {
    ui.add_space(24.0);
    ui.vertical_centered(|ui| {
        ui.heading("No build is open");
        ui.label(
            "A build is one instrument in the making: its parts (top, back, body …) and \
             the passes measured on each.",
        );
        ui.label(
            "Start a new build, open a build file, or look at a sample build from the \
             bar above.",
        );
    });
}

// ----- the build bar -------------------------------------------------------

fn build_bar(ui: &mut egui::Ui, state: &mut LedgerAreaState, ctx: &mut AreaContext) {
    ui.add_space(4.0);
    ui.horizontal_wrapped(|ui| match ctx.build {
        Some(build) => {
            ui.heading(&build.name);
            ui.label(format!(
                "{} · started {}",
                capitalised(build.family().name()),
                date_text(&build.created.to_string())
            ));
            if ctx.build_unsaved {
                ui.colored_label(ui.visuals().warn_fg_color, "unsaved changes");
            } else if ctx.build_path.is_some() {
                ui.weak("all changes saved");
            }
            match ctx.build_path {
                Some(path) => ui.weak(format!("File: {}", path.display())),
                None => ui.weak("not saved to a file yet (Save as… keeps it)"),
            };
        }
        None => {
            ui.heading("Ledger");
            ui.weak("no build open");
        }
    });
    ui.horizontal_wrapped(|ui| {
        if ui.button("New build…").clicked() {
            state.new_build = Some(NewBuildForm {
                name: String::new(),
                family: Family::Violin,
            });
        }
        if ui
            .button("Open build…")
            .on_hover_text("Choose a build file (.ron) in a file dialog")
            .clicked()
        {
            ask_replace(state, ctx, Replace::OpenDialog);
        }
        let mut sample = None;
        ui.menu_button("Sample builds", |ui| {
            for (index, sample_build) in SAMPLE_BUILDS.iter().enumerate() {
                if ui.button(sample_build.title).clicked() {
                    sample = Some(index);
                    ui.close();
                }
            }
        })
        .response
        .on_hover_text("Invented demo builds shipped with tapwright, to look around");
        if let Some(index) = sample {
            ask_replace(state, ctx, Replace::Sample(index));
        }
        let has_build = ctx.build.is_some();
        ui.add_enabled_ui(has_build, |ui| {
            if ui
                .button("Save")
                .on_hover_text("Save the build to its file")
                .clicked()
            {
                if ctx.build_path.is_some() {
                    ctx.push(AppCommand::SaveBuild);
                } else {
                    state.bar_note = Some(Note::error(
                        "The build has no file yet: use Save as…, or type a path below and \
                         press Save here",
                    ));
                }
            }
            if ui.button("Save as…").clicked() {
                let name = ctx.build.map(|b| b.name.clone()).unwrap_or_default();
                state.files.choose_save_path(ctx.jobs, &name);
            }
            if ui
                .button("Export CSV…")
                .on_hover_text("Write the pass table of every part as a CSV file")
                .clicked()
            {
                if let Some(build) = ctx.build {
                    state.files.choose_csv_path(ctx.jobs, build);
                }
            }
            if ui
                .button("Save report…")
                .on_hover_text(
                    "Write the build report: one web page with every pass, the charts, \
                     targets, forecasts and the air check, to print or give to the client",
                )
                .clicked()
            {
                if let Some(build) = ctx.build {
                    state.files.choose_report_path(ctx.jobs, build, ctx.a4_hz);
                }
            }
            if ui.button("Close build").clicked() {
                ask_replace(state, ctx, Replace::Close);
            }
        });
        if state.files.is_busy() {
            ui.spinner();
        }
    });
    ui.horizontal_wrapped(|ui| {
        let label = ui.label("File path");
        let field = ui
            .add(
                egui::TextEdit::singleline(&mut state.file_path)
                    .hint_text("/path/to/build.ron, table.csv or report.html")
                    .desired_width(360.0),
            )
            .labelled_by(label.id);
        let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
        if ui.button("Open this file").clicked() || entered {
            match typed_path(&state.file_path, "ron") {
                Ok(path) => ask_replace(state, ctx, Replace::Open(path)),
                Err(problem) => state.bar_note = Some(Note::error(problem)),
            }
        }
        let has_build = ctx.build.is_some();
        ui.add_enabled_ui(has_build, |ui| {
            if ui.button("Save here").clicked() {
                match typed_path(&state.file_path, "ron") {
                    Ok(path) => {
                        state.bar_note = None;
                        ctx.push(AppCommand::SaveBuildAs(path));
                    }
                    Err(problem) => state.bar_note = Some(Note::error(problem)),
                }
            }
            if ui.button("Export CSV here").clicked() {
                match (typed_path(&state.file_path, "csv"), ctx.build) {
                    (Ok(path), Some(build)) => state.files.export_csv(ctx.jobs, build, path),
                    (Err(problem), _) => state.bar_note = Some(Note::error(problem)),
                    _ => {}
                }
            }
            if ui.button("Save report here").clicked() {
                match (typed_path(&state.file_path, "html"), ctx.build) {
                    (Ok(path), Some(build)) => {
                        state.files.export_report(ctx.jobs, build, path, ctx.a4_hz)
                    }
                    (Err(problem), _) => state.bar_note = Some(Note::error(problem)),
                    _ => {}
                }
            }
        });
    });
    new_build_form(ui, state, ctx);
    replace_question(ui, state, ctx);
    if let Some(note) = state.bar_note.clone() {
        let dismissed = ui
            .horizontal(|ui| {
                note.show(ui);
                ui.small_button("OK")
                    .accessible_name("Dismiss the message")
                    .clicked()
            })
            .inner;
        if dismissed {
            state.bar_note = None;
        }
    }
    ui.add_space(2.0);
}

/// A typed path, with `extension` added when it has none; refuses an empty
/// path or another extension (so a CSV never lands on a build file).
fn typed_path(text: &str, extension: &str) -> Result<std::path::PathBuf, String> {
    let text = text.trim();
    if text.is_empty() {
        return Err("Type a file path first.".to_owned());
    }
    let mut path = std::path::PathBuf::from(text);
    match path.extension().and_then(|e| e.to_str()) {
        None => {
            path.set_extension(extension);
            Ok(path)
        }
        Some(found) if found.eq_ignore_ascii_case(extension) => Ok(path),
        Some(found) => Err(format!(
            "{} ends in .{found}, but this needs a .{extension} file.",
            path.display()
        )),
    }
}

fn new_build_form(ui: &mut egui::Ui, state: &mut LedgerAreaState, ctx: &mut AreaContext) {
    let Some(form) = state.new_build.as_mut() else {
        return;
    };
    let mut start = false;
    let mut cancel = false;
    ui.horizontal_wrapped(|ui| {
        ui.strong("New build:");
        let label = ui.label("Build name");
        let field = ui
            .add(
                egui::TextEdit::singleline(&mut form.name)
                    .hint_text("Violin No. 12")
                    .desired_width(220.0),
            )
            .labelled_by(label.id);
        family_picker(ui, "Family", "new build family", &mut form.family);
        start = ui.button("Start the build").clicked()
            || (field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter)));
        cancel = ui.button("Cancel").clicked();
    });
    if cancel {
        state.new_build = None;
    } else if start {
        let name = form.name.trim().to_owned();
        if name.is_empty() {
            state.bar_note = Some(Note::error("A new build needs a name."));
        } else {
            let family = form.family;
            state.new_build = None;
            ask_replace(state, ctx, Replace::New { name, family });
        }
    }
}

fn family_picker(ui: &mut egui::Ui, label: &str, id: &str, family: &mut Family) {
    egui::ComboBox::new(id, label)
        .selected_text(capitalised(family.name()))
        .show_ui(ui, |ui| {
            for choice in Family::ALL {
                ui.selectable_value(family, choice, capitalised(choice.name()));
            }
        });
}

/// Runs `action` at once, or asks first when it would drop unsaved changes.
fn ask_replace(state: &mut LedgerAreaState, ctx: &mut AreaContext, action: Replace) {
    let would_lose = ctx.build.is_some() && ctx.build_unsaved;
    if would_lose {
        state.pending_replace = Some(action);
    } else {
        do_replace(state, ctx, action);
    }
}

fn replace_question(ui: &mut egui::Ui, state: &mut LedgerAreaState, ctx: &mut AreaContext) {
    let Some(action) = state.pending_replace.clone() else {
        return;
    };
    let name = ctx.build.map(|b| b.name.clone()).unwrap_or_default();
    ui.horizontal_wrapped(|ui| {
        ui.colored_label(
            ui.visuals().warn_fg_color,
            format!("\"{name}\" has unsaved changes; they will be lost."),
        );
        if ui.button("Discard the changes and go on").clicked() {
            state.pending_replace = None;
            do_replace(state, ctx, action);
        }
        if ui.button("Keep working on it").clicked() {
            state.pending_replace = None;
        }
    });
}

fn do_replace(state: &mut LedgerAreaState, ctx: &mut AreaContext, action: Replace) {
    state.bar_note = None;
    match action {
        Replace::New { name, family } => {
            state.selected_part = None;
            ctx.push(AppCommand::NewBuild { name, family });
        }
        Replace::Open(path) => {
            state.selected_part = None;
            ctx.push(AppCommand::OpenBuild(path));
        }
        Replace::OpenDialog => state.files.choose_build_to_open(ctx.jobs),
        Replace::Sample(index) => match load_sample(index) {
            Ok(build) => {
                state.selected_part = None;
                let title = build.name.clone();
                ctx.push(AppCommand::NewBuild {
                    name: build.name.clone(),
                    family: build.family(),
                });
                ctx.push(AppCommand::EditBuild {
                    description: "opening the sample build".to_owned(),
                    edit: Box::new(move |open: &mut Build| {
                        *open = build;
                        Ok(format!(
                            "Opened the sample build \"{title}\"; it has no file, so use \
                             Save as… to keep your own copy."
                        ))
                    }),
                });
            }
            Err(problem) => state.bar_note = Some(Note::error(problem)),
        },
        Replace::Close => {
            state.selected_part = None;
            ctx.push(AppCommand::CloseBuild);
        }
    }
}

// ----- the side panel ------------------------------------------------------

fn side_panel(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    build: &Build,
    ctx: &mut AreaContext,
) {
    ui.add_space(4.0);
    build_details(ui, state, build, ctx);
    ui.separator();
    parts::part_list(ui, state, build, ctx);
    ui.separator();
    parts::top_against_back(ui, build);
    if let Some(part) = selected_part(state, build) {
        ui.separator();
        record::record_form(ui, &mut state.record, part, ctx);
    }
}

fn build_details(
    ui: &mut egui::Ui,
    state: &mut LedgerAreaState,
    build: &Build,
    ctx: &mut AreaContext,
) {
    let Some(form) = state.details.as_mut() else {
        ui.strong("Notes");
        if build.notes.trim().is_empty() {
            ui.weak("No notes yet.");
        } else {
            ui.label(&build.notes);
        }
        if ui.small_button("Edit name, family and notes").clicked() {
            state.details = Some(DetailsForm {
                name: build.name.clone(),
                family: build.family(),
                notes: build.notes.clone(),
            });
        }
        return;
    };
    ui.strong("Build details");
    let label = ui.label("Name of the build");
    ui.add(egui::TextEdit::singleline(&mut form.name).desired_width(f32::INFINITY))
        .labelled_by(label.id);
    family_picker(ui, "Instrument family", "details family", &mut form.family);
    let label = ui.label("Notes on the build");
    ui.add(
        egui::TextEdit::multiline(&mut form.notes)
            .desired_rows(3)
            .desired_width(f32::INFINITY),
    )
    .labelled_by(label.id);
    let (keep, cancel) = ui
        .horizontal(|ui| {
            (
                ui.button("Keep these details").clicked(),
                ui.button("Cancel").clicked(),
            )
        })
        .inner;
    {
        if keep {
            let (name, family, notes) =
                (form.name.trim().to_owned(), form.family, form.notes.clone());
            let result = try_edit(ctx, "changing the build's details", move |b| {
                if name.is_empty() {
                    return Err(LedgerError::EmptyName("the build"));
                }
                b.name = name.clone();
                b.set_family(family);
                b.notes = notes.clone();
                Ok("Changed the build's details.".to_owned())
            });
            match result {
                Ok(()) => state.details = None,
                Err(problem) => state.part_note = Some(Note::error(problem)),
            }
        } else if cancel {
            state.details = None;
        }
    }
}

fn selected_part<'b>(state: &LedgerAreaState, build: &'b Build) -> Option<&'b Part> {
    build.part(state.selected_part.as_deref()?)
}

// ----- the middle ----------------------------------------------------------

fn central(ui: &mut egui::Ui, state: &mut LedgerAreaState, build: &Build, ctx: &mut AreaContext) {
    let Some(part) = selected_part(state, build) else {
        ui.heading("No parts yet");
        ui.label(
            "Add a part on the left (top plate, back plate, assembled body, or one you \
             name), then record passes on it from the Listen result.",
        );
        return;
    };
    ui.horizontal_wrapped(|ui| {
        ui.heading(part.name());
        ui.label(parts::part_summary(part));
    });
    table::pass_table(ui, state, part, ctx);
    table::pass_details(ui, state, part, ctx);
    ui.separator();
    let width = ui.available_width();
    if width > 900.0 {
        ui.horizontal_top(|ui| {
            ui.vertical(|ui| {
                ui.set_width(width * 0.58);
                charts::charts(ui, state, part);
            });
            ui.separator();
            ui.vertical(|ui| {
                forecasts::targets_and_forecasts(ui, state, part, ctx);
            });
        });
    } else {
        charts::charts(ui, state, part);
        ui.separator();
        forecasts::targets_and_forecasts(ui, state, part, ctx);
    }
}

// ----- helpers shared by the submodules ------------------------------------

/// Sample build `index` (in menu order), or the sentence to show.
fn load_sample(index: usize) -> Result<Build, String> {
    let sample = SAMPLE_BUILDS
        .get(index)
        .ok_or_else(|| format!("There is no sample build number {}.", index + 1))?;
    sample.load().map_err(|e| e.to_string())
}

/// Tries `edit` on a copy of the open build; if the ledger accepts it, asks
/// the app to make the same change. Returns the ledger's refusal as one
/// sentence.
fn try_edit<F>(ctx: &mut AreaContext, description: &str, edit: F) -> Result<(), String>
where
    F: Fn(&mut Build) -> Result<String, LedgerError> + Send + 'static,
{
    let Some(build) = ctx.build else {
        return Err("Open or start a build first.".to_owned());
    };
    let mut trial = build.clone();
    edit(&mut trial).map_err(|e| sentence(&e.to_string()))?;
    ctx.push(AppCommand::EditBuild {
        description: description.to_owned(),
        edit: Box::new(edit),
    });
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_sample_build_loads() {
        for index in 0..SAMPLE_BUILDS.len() {
            let build = load_sample(index).expect("test value");
            assert!(!build.parts().is_empty());
        }
        assert!(load_sample(SAMPLE_BUILDS.len()).is_err());
    }

    #[test]
    fn typed_paths_get_their_extension_and_refuse_another() {
        assert_eq!(
            typed_path(" /tmp/violin ", "ron").expect("test value"),
            std::path::PathBuf::from("/tmp/violin.ron")
        );
        assert!(typed_path("/tmp/violin.ron", "csv").is_err());
        assert!(typed_path("  ", "ron").is_err());
        assert!(typed_path("/tmp/a.CSV", "csv").is_ok());
    }
}
