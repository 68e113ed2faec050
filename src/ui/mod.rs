//! The workbench window: eframe (glow renderer) with five areas, Listen,
//! Ledger, Air, Stock and Drive.
//!
//! - `shell/`: the frame loop and command dispatch, the open document, the
//!   input, the window's own background jobs; it owns all the state.
//! - `areas/`: one module per area. Each reads an [`AreaContext`] and
//!   pushes [`AppCommand`]s; none imports another area or the shell.
//! - `widgets/`: pieces more than one area draws (level meter, spectrum
//!   plot).
//! - `commands`, `context`: what areas may ask and read; `session`: the
//!   pass being measured; `jobs`: the one runner of background work;
//!   `dialogs`: the file dialogs.

pub mod areas;
pub mod commands;
pub mod context;
mod dialogs;
mod jobs;
pub mod session;
mod shell;
pub mod widgets;

pub use commands::{AppCommand, Area, BuildEdit, ListenCommand, SourcePick};
pub use context::{stored_spectrum_of, AreaContext, InputView, SourceState};
pub use session::ListenSession;
pub use shell::{
    run_workbench, AppOptions, StartSource, Status, TapwrightApp, WorkbenchOptions, LABEL_SETS,
};
