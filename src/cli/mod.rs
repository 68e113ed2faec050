//! The command line: one thin subcommand per file, each a call into the
//! library. `main.rs` only calls [`run_from_env`].

mod air;
mod analyze;
mod devices;
mod drive;
mod ledger;
mod listen;
mod map;
mod measure;
pub mod output;
mod parse_error;
mod report;
mod stock;
mod tap_table;
mod values;

use std::process::ExitCode;

use clap::{CommandFactory, Parser, Subcommand};

use output::{note, StdoutClosed};

use crate::text::one_sentence;

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
    /// Find the taps in a recording (WAV, FLAC, MP3, M4A…) and measure the modes of each.
    Analyze(analyze::AnalyzeArgs),
    /// List the audio input devices.
    Devices(devices::DevicesArgs),
    /// Capture taps from an input device and report their modes.
    Listen(listen::ListenArgs),
    /// Show a build file: parts, passes, labelled modes, targets and forecasts.
    Ledger(ledger::LedgerArgs),
    /// Estimate a body's air resonance (A0) from its volume and openings.
    Air(air::AirArgs),
    /// Play a tone at a mode's frequency through a loudspeaker (Chladni patterns).
    Drive(drive::DriveArgs),
    /// Grade a sample bar of tonewood from its taps.
    Stock(stock::StockArgs),
    /// Write a build's report as one HTML file (passes, charts, forecasts, air check).
    Report(report::ReportArgs),
    /// Map mode shapes from taps at a grid of points (CSV of points and recordings).
    Map(map::MapArgs),
}

/// Parses the process arguments, runs the chosen subcommand (or opens the
/// window) and turns any error into one sentence on stderr and exit code 2.
/// A closed standard output (its reader went away) ends quietly with
/// success.
pub fn run_from_env() -> ExitCode {
    let args: Vec<std::ffi::OsString> = std::env::args_os().collect();
    let cli = match Cli::try_parse_from(&args) {
        Ok(cli) => cli,
        Err(error) => return parse_failure(&error, &args),
    };
    let outcome = match &cli.command {
        None => crate::ui::run_workbench(&cli.window),
        Some(Command::Analyze(args)) => analyze::run(args),
        Some(Command::Devices(args)) => devices::run(args),
        Some(Command::Listen(args)) => listen::run(args),
        Some(Command::Ledger(args)) => ledger::run(args),
        Some(Command::Air(args)) => air::run(args),
        Some(Command::Drive(args)) => drive::run(args),
        Some(Command::Stock(args)) => stock::run(args),
        Some(Command::Report(args)) => report::run(args),
        Some(Command::Map(args)) => map::run(args),
    };
    match outcome {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) if error.downcast_ref::<StdoutClosed>().is_some() => ExitCode::SUCCESS,
        Err(error) => {
            note(&format!("tapwright: {}", one_sentence(&error)));
            ExitCode::from(EXIT_BAD_INPUT)
        }
    }
}

/// `--help` and `--version` print as clap prints them (exit 0); every
/// other refusal is one sentence and exit code 2.
fn parse_failure(error: &clap::Error, args: &[std::ffi::OsString]) -> ExitCode {
    use clap::error::ErrorKind;
    match error.kind() {
        ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
            let _ = error.print();
            ExitCode::SUCCESS
        }
        _ => {
            let command = command_words(args);
            note(&format!(
                "tapwright: {}",
                parse_error::one_sentence(error, &command)
            ));
            ExitCode::from(EXIT_BAD_INPUT)
        }
    }
}

/// "tapwright analyze" when a subcommand was named, else "tapwright".
fn command_words(args: &[std::ffi::OsString]) -> String {
    let cli = Cli::command();
    let named = args.iter().skip(1).find_map(|arg| {
        let arg = arg.to_str()?;
        cli.get_subcommands()
            .find(|sub| sub.get_name() == arg)
            .map(|sub| sub.get_name().to_owned())
    });
    match named {
        Some(name) => format!("tapwright {name}"),
        None => "tapwright".to_owned(),
    }
}
