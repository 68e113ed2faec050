//! The command line: one thin subcommand per file, each a call into the
//! library. `main.rs` only calls [`run_from_env`].

mod air;
mod analyze;
mod capture_cmds;
mod ledger_cmd;
mod measure;
mod report;
mod report_cmd;

use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Exit code for anything the user can fix: a bad file, a missing device,
/// impossible geometry.
pub const EXIT_BAD_INPUT: u8 = 2;

#[derive(Debug, Parser)]
#[command(
    name = "tapwright",
    version,
    about = "Tap-tone workbench for stringed-instrument makers.",
    long_about = "Tap-tone workbench for stringed-instrument makers.\n\nWith no subcommand, opens the workbench window.",
    args_conflicts_with_subcommands = true
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
    #[command(flatten)]
    pub window: crate::ui::WorkbenchOptions,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Find the taps in a WAV recording and measure the modes of each.
    Analyze(analyze::AnalyzeArgs),
    /// List the audio input devices.
    Devices(capture_cmds::DevicesArgs),
    /// Capture taps from an input device and report their modes.
    Listen(capture_cmds::ListenArgs),
    /// Show a build file: parts, passes, labelled modes, targets and forecasts.
    Ledger(ledger_cmd::LedgerArgs),
    /// Estimate a body's air resonance (A0) from its volume and openings.
    Air(air::AirArgs),
    /// Write a build's report as one HTML file (passes, charts, forecasts, air check).
    Report(report_cmd::ReportArgs),
}

/// Parses the process arguments, runs the chosen subcommand (or opens the
/// window) and turns any error into one sentence on stderr and exit code 2.
pub fn run_from_env() -> ExitCode {
    let cli = Cli::parse();
    let outcome = match &cli.command {
        None => crate::ui::run_workbench(&cli.window),
        Some(Command::Analyze(args)) => analyze::run(args),
        Some(Command::Devices(args)) => capture_cmds::run_devices(args),
        Some(Command::Listen(args)) => capture_cmds::run_listen(args),
        Some(Command::Ledger(args)) => ledger_cmd::run(args),
        Some(Command::Air(args)) => air::run(args),
        Some(Command::Report(args)) => report_cmd::run(args),
    };
    match outcome {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("tapwright: {}", one_sentence(&error));
            ExitCode::from(EXIT_BAD_INPUT)
        }
    }
}

/// Joins an error and its causes into one line: "reading x.wav: not a WAV file".
pub fn one_sentence(error: &anyhow::Error) -> String {
    let mut parts: Vec<String> = Vec::new();
    for cause in error.chain() {
        let text = cause.to_string();
        if !parts.iter().any(|p| p.contains(&text)) {
            parts.push(text);
        }
    }
    let mut sentence = parts.join(": ");
    if !sentence.ends_with('.') {
        sentence.push('.');
    }
    sentence
}
