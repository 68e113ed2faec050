//! The Ledger area: the open build's parts and passes, tables, charts,
//! targets and forecasts.
//!
//! Placeholder with a stable interface: the ledger engineer replaces the
//! body of [`show`] and fills [`LedgerAreaState`]. The app calls [`show`]
//! every frame the Ledger area is visible, inside the central panel. Read
//! the app's state through [`AreaContext`]; change it only by pushing
//! [`AppCommand`](super::AppCommand)s (`NewBuild`, `OpenBuild`, `SaveBuild`,
//! `EditBuild`, `RecordPass` …) with `ctx.push(...)`.

use eframe::egui;

use super::AreaContext;

/// What the Ledger area remembers between frames (selection, chart view,
/// text being typed …). Owned by the app.
#[derive(Debug, Default)]
pub struct LedgerAreaState {}

/// Draws the Ledger area.
pub fn show(ui: &mut egui::Ui, state: &mut LedgerAreaState, ctx: &mut AreaContext) {
    let _ = (state, &ctx);
    ui.heading("Ledger");
    ui.label("This area is being built.");
}
