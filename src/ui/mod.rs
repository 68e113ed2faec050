//! The workbench window: eframe (glow renderer) with four areas, Listen,
//! Ledger, Air and Stock.
//!
//! Shape: [`TapwrightApp`] owns the state (the pass being measured, the
//! input, the open build, each area's view state). Each frame it drains the
//! news from its threads (capture events, finished jobs), draws the areas,
//! and then applies the [`AppCommand`]s the areas pushed. Audio, analysis of
//! opened files, file dialogs and saves run on other threads; the capture
//! worker wakes the window through a repaint hook, so an idle window does not
//! repaint.

pub mod air_area;
mod app;
mod commands;
mod export;
mod help;
mod jobs;
pub mod ledger_area;
mod listen_area;
mod session;
mod spectrum_plot;
pub mod stock_area;
mod widgets;

use std::path::PathBuf;
use std::time::Instant;

pub use app::{AppOptions, InputView, SourceState, StartSource, Status, TapwrightApp, LABEL_SETS};
pub use commands::{
    stored_spectrum_of, AppCommand, Area, AreaContext, BuildEdit, ListenCommand, SourcePick,
};
pub use export::pass_json;
pub use listen_area::note_text;
pub use session::{ListenSession, TapEntry};

/// Options for opening the window.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct WorkbenchOptions {
    /// Run on the bundled demo recording instead of a microphone.
    #[arg(long)]
    pub demo: bool,
    /// Listen to this input device (a name or id from `tapwright devices`)
    /// instead of the system default.
    #[arg(long, value_name = "NAME", conflicts_with = "demo")]
    pub device: Option<String>,
    /// Open this build file (RON) in the Ledger.
    #[arg(long, value_name = "FILE.ron")]
    pub build: Option<PathBuf>,
}

/// Opens the workbench window and blocks until it is closed. Set
/// `TAPWRIGHT_TIMING=1` to print the time from start to the first frame.
pub fn run_workbench(options: &WorkbenchOptions) -> anyhow::Result<()> {
    let started_at = Instant::now();
    let timing = std::env::var("TAPWRIGHT_TIMING").is_ok_and(|v| !v.is_empty() && v != "0");
    let app_options = AppOptions {
        source: if options.demo {
            StartSource::Demo
        } else {
            StartSource::Device(options.device.clone())
        },
        build: options.build.clone(),
        sample_build_with_demo: true,
        started_at: timing.then_some(started_at),
        ..AppOptions::default()
    };
    let native_options = eframe::NativeOptions {
        viewport: eframe::egui::ViewportBuilder::default()
            .with_title("tapwright")
            .with_app_id("tapwright")
            .with_inner_size([1280.0, 800.0])
            .with_min_inner_size([960.0, 640.0])
            .with_drag_and_drop(true),
        // glow: a lighter build than wgpu, and it runs on old or software
        // OpenGL (see DEVELOPERS.md).
        renderer: eframe::Renderer::Glow,
        ..Default::default()
    };
    eframe::run_native(
        "tapwright",
        native_options,
        Box::new(move |_cc| Ok(Box::new(TapwrightApp::new(app_options)))),
    )
    .map_err(|error| anyhow::anyhow!("cannot open the window: {error}"))
}
