//! The Air area: the cavity (Helmholtz) estimator with its openings, the
//! inverse solve, the coupled air/plate correction, and the air check of a
//! measured A0 against the estimate.
//!
//! Three columns: what the body is (volume, openings, wall, air), what the
//! rigid-wall model makes of it (conductances, Helmholtz frequency, slopes,
//! and the solve the other way), and what was measured (the coupled
//! correction, the air check, and keeping the geometry with the build).
//!
//! Everything is typed as text and recomputed every frame (the estimate
//! takes microseconds); a value that is not a number or that the acoustics
//! layer refuses shows as one sentence in place of the results, never as
//! NaN. The geometry is stored with the open build only when the maker
//! presses "Store in the build". When a build with a stored geometry is
//! opened and the maker has not typed anything here yet, that geometry is
//! loaded; otherwise "Use the build's geometry" loads it.

mod cavity_panel;
mod check_panel;
pub mod form;

use eframe::egui;

use crate::acoustics::{estimate_cavity, CavityEstimate, CavityGeometry};
use crate::ledger::{Build, Timestamp};

use crate::ui::context::AreaContext;
use form::GeometryDraft;

/// What the Air area remembers between frames (volume, openings, air
/// conditions being typed …). Owned by the app.
#[derive(Debug, Default)]
pub struct AirAreaState {
    /// The cavity as typed.
    pub draft: GeometryDraft,
    /// The solve the other way, as typed.
    pub solve: cavity_panel::SolveDraft,
    /// The coupled correction, as typed.
    pub coupled: check_panel::CoupledDraft,
    /// The air check, as chosen and typed.
    pub check: check_panel::CheckDraft,
    /// True once the maker changed the geometry here (typed, chose, used a
    /// preset or applied a solve) since the window opened or since the
    /// geometry was last loaded from or stored in a build.
    pub edited: bool,
    /// The build last seen (name and creation time), to notice a newly
    /// opened one.
    seen_build: Option<(String, Timestamp)>,
    /// A short note about the last load from a build.
    loaded_note: Option<String>,
}

/// The geometry as typed, checked: the estimate or one sentence.
pub(crate) struct Checked {
    /// The geometry read from the fields, if every field is a number.
    pub geometry: Option<CavityGeometry>,
    /// The estimate, or the sentence that says what is wrong.
    pub estimate: Result<CavityEstimate, String>,
}

impl Checked {
    fn of(draft: &GeometryDraft) -> Self {
        match draft.to_geometry() {
            Ok(geometry) => {
                let estimate =
                    estimate_cavity(&geometry).map_err(|e| crate::text::sentence(&e.to_string()));
                Checked {
                    geometry: Some(geometry),
                    estimate,
                }
            }
            Err(message) => Checked {
                geometry: None,
                estimate: Err(message),
            },
        }
    }
}

/// Draws the Air area.
pub fn show(ui: &mut egui::Ui, state: &mut AirAreaState, ctx: &mut AreaContext) {
    follow_build(state, ctx.build);
    let checked = Checked::of(&state.draft);

    egui::ScrollArea::both()
        .id_salt("air scroll")
        .auto_shrink([false, false])
        .show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.heading("Air");
                ui.weak("The body's air resonance (A0): estimate it from the geometry, and check it against a measurement.");
            });
            ui.add_space(4.0);
            // Three columns that fit a 1280-point window; narrower windows
            // scroll sideways rather than squeeze the tables.
            let total = ui.available_width().max(1180.0) - 40.0;
            let widths = [0.33 * total, 0.33 * total, 0.34 * total].map(f32::floor);
            ui.horizontal_top(|ui| {
                ui.vertical(|ui| {
                    ui.set_width(widths[0]);
                    if cavity_panel::inputs(ui, state) {
                        state.edited = true;
                        state.loaded_note = None;
                    }
                });
                ui.separator();
                ui.vertical(|ui| {
                    ui.set_width(widths[1]);
                    cavity_panel::estimate(ui, &state.draft, &checked, ctx.a4_hz);
                    ui.add_space(8.0);
                    ui.separator();
                    if cavity_panel::solve(ui, state) {
                        state.edited = true;
                        state.loaded_note = None;
                    }
                });
                ui.separator();
                ui.vertical(|ui| {
                    ui.set_width(widths[2]);
                    check_panel::coupled(ui, &mut state.coupled, &checked);
                    ui.add_space(8.0);
                    ui.separator();
                    check_panel::air_check(ui, &mut state.check, &checked, ctx);
                    ui.add_space(8.0);
                    ui.separator();
                    build_section(ui, state, &checked, ctx);
                });
            });
        });
}

/// Loads the geometry stored with a newly opened build, unless the maker
/// has typed something of their own here.
fn follow_build(state: &mut AirAreaState, build: Option<&Build>) {
    let key = build.map(|b| (b.name.clone(), b.created));
    if key == state.seen_build {
        return;
    }
    let is_new_build = match (&key, &state.seen_build) {
        (Some((_, created)), Some((_, seen_created))) => created != seen_created,
        (Some(_), None) => true,
        _ => false,
    };
    state.seen_build = key;
    if !is_new_build || state.edited {
        return;
    }
    if let Some(stored) = build.and_then(|b| b.air.as_ref()) {
        load_geometry(state, stored);
        state.loaded_note = Some("Loaded the geometry stored with the build.".to_owned());
    }
}

fn load_geometry(state: &mut AirAreaState, geometry: &CavityGeometry) {
    state.draft = GeometryDraft::from_geometry(geometry);
    state.solve.fit_to(&state.draft);
    state.edited = false;
}

/// Keeping the geometry with the open build, and taking it back.
fn build_section(
    ui: &mut egui::Ui,
    state: &mut AirAreaState,
    checked: &Checked,
    ctx: &mut AreaContext,
) {
    ui.strong("Keep with the build");
    let Some(build) = ctx.build else {
        ui.weak("Open or start a build in the Ledger area to keep this geometry with it.");
        return;
    };
    let current = checked
        .geometry
        .as_ref()
        .filter(|_| checked.estimate.is_ok());
    let stored = build.air.as_ref();
    let line = match (stored, current) {
        (None, _) => "No cavity geometry is stored in this build yet.",
        (Some(stored), Some(current)) if form::same_geometry(stored, current) => {
            "The build holds the geometry shown here."
        }
        (Some(_), _) => "The build holds a geometry that differs from the one shown here.",
    };
    ui.label(format!("Build: {}", build.name));
    ui.label(line);
    if let Some(note) = &state.loaded_note {
        ui.weak(note);
    }
    ui.horizontal_wrapped(|ui| {
        let store = ui
            .add_enabled(current.is_some(), egui::Button::new("Store in the build"))
            .on_hover_text("Keep this volume, these openings and this air with the build (save the build to keep it on disk)")
            .on_disabled_hover_text("The geometry has a problem: fix it first");
        if store.clicked() {
            if let Some(geometry) = current.cloned() {
                ctx.push(crate::ui::commands::AppCommand::EditBuild {
                    description: "storing the cavity geometry".to_owned(),
                    edit: Box::new(move |build| {
                        build.air = Some(geometry);
                        Ok("Stored the cavity geometry in the build; save the build to keep it.".to_owned())
                    }),
                });
                state.edited = false;
                state.loaded_note = None;
            }
        }
        if let Some(stored) = stored {
            if ui
                .button("Use the build's geometry")
                .on_hover_text("Replace the fields with the geometry stored in the build")
                .clicked()
            {
                let stored = stored.clone();
                load_geometry(state, &stored);
                state.loaded_note = Some("Loaded the geometry stored with the build.".to_owned());
            }
        }
    });
}
