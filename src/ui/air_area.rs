//! The Air area: the cavity (Helmholtz) estimator with openings, the
//! coupled air/plate correction, and the air check against a measured A0.
//!
//! Placeholder with a stable interface: the acoustics engineer replaces the
//! body of [`show`] and fills [`AirAreaState`]. The app calls [`show`] every
//! frame the Air area is visible, inside the central panel. A measured A0
//! is available as `ctx.labelled_frequency_hz("A0")` (from the Listen
//! result) or from the open build (`ctx.build`).

use eframe::egui;

use super::AreaContext;

/// What the Air area remembers between frames (volume, openings, air
/// conditions being typed …). Owned by the app.
#[derive(Debug, Default)]
pub struct AirAreaState {}

/// Draws the Air area.
pub fn show(ui: &mut egui::Ui, state: &mut AirAreaState, ctx: &mut AreaContext) {
    let _ = (state, &ctx);
    ui.heading("Air");
    ui.label("This area is being built.");
}
