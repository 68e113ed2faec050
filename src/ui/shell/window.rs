//! Opening the native window: the command-line options of the window, the
//! eframe start-up (glow renderer), and one plain sentence when there is no
//! display to open it on.

use std::path::PathBuf;
use std::time::Instant;

use super::{AppOptions, StartSource, TapwrightApp};

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
    if cfg!(target_os = "linux") && display_variables().is_empty() {
        anyhow::bail!("{NO_DISPLAY_ADVICE}");
    }
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
    .map_err(|error| window_error(&error.to_string()))
}

/// What to do when there is no display to open the window on.
const NO_DISPLAY_ADVICE: &str = "no display found: set DISPLAY to open the window, or use the command-line subcommands (see tapwright --help)";

/// The display variables that are set, as "DISPLAY=:0".
fn display_variables() -> Vec<String> {
    ["DISPLAY", "WAYLAND_DISPLAY", "WAYLAND_SOCKET"]
        .into_iter()
        .filter_map(|name| {
            let value = std::env::var(name).ok().filter(|v| !v.is_empty())?;
            Some(format!("{name}={value}"))
        })
        .collect()
}

/// One plain sentence for a window that would not open: the windowing
/// library's message without its source-file location, and, when it could
/// not reach the display, what to do about it.
fn window_error(message: &str) -> anyhow::Error {
    let detail = without_source_location(message);
    let lower = detail.to_lowercase();
    if lower.contains("x server") || lower.contains("display") || lower.contains("wayland") {
        anyhow::anyhow!(
            "no display found at {}: set DISPLAY to a running display to open the window, or use the command-line subcommands (see tapwright --help)",
            display_variables().join(", ")
        )
    } else {
        anyhow::anyhow!("cannot open the window: {}", detail.trim_end_matches('.'))
    }
}

/// "winit EventLoopError: os error at /path/src/x.rs:788: Failed to open
/// connection" → "Failed to open connection".
fn without_source_location(message: &str) -> &str {
    match message.find(".rs:") {
        Some(at) => {
            let rest = &message[at + 4..];
            let after_line = rest.trim_start_matches(|c: char| c.is_ascii_digit());
            after_line.trim_start_matches(':').trim()
        }
        None => message,
    }
}
