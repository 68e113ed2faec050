//! The workbench window (being built).

pub mod air_area;
mod commands;
pub mod ledger_area;

pub use commands::{stored_spectrum_of, AppCommand, Area, AreaContext, BuildEdit};

/// Options for opening the window.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct WorkbenchOptions {
    /// Run on the bundled demo recording instead of a microphone.
    #[arg(long)]
    pub demo: bool,
}

/// Opens the workbench window and blocks until it is closed.
pub fn run_workbench(_options: &WorkbenchOptions) -> anyhow::Result<()> {
    anyhow::bail!("the window is not built yet; try `tapwright analyze assets/demo_plate_taps.wav`")
}
