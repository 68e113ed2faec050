//! `tapwright ledger FILE.ron`: prints a build's parts, passes, labelled
//! modes (with their change against the previous and the first pass) and
//! the forecasts of parts with targets; `--csv` writes the pass table instead.

use std::path::PathBuf;

use super::output::write_stdout;
use crate::ledger::{csv, store, Build, Forecast, FrequencyChange, Part, Pass, PassChange};
use crate::text::forecast;

/// Arguments of `tapwright ledger`.
#[derive(Debug, clap::Args)]
pub struct LedgerArgs {
    /// The build file (RON) to show.
    pub file: PathBuf,
    /// Write the pass table as CSV to standard output instead of the report.
    #[arg(long)]
    pub csv: bool,
}

/// Loads the build and prints the report (or the CSV table).
pub fn run(args: &LedgerArgs) -> anyhow::Result<()> {
    let build = store::load(&args.file)?;
    let text = if args.csv {
        csv::pass_table(&build)
    } else {
        report(&build)
    };
    write_stdout(&text)
}

/// The text report of a build.
pub fn report(build: &Build) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "Build: {} ({}, created {})\n",
        one_line(&build.name),
        build.family().name(),
        build.created
    ));
    if !build.notes.trim().is_empty() {
        out.push_str(&format!("Notes: {}\n", one_line(&build.notes)));
    }
    if build.parts().is_empty() {
        out.push_str("\nNo parts yet.\n");
    }
    for part in build.parts() {
        out.push('\n');
        part_report(&mut out, part);
    }
    out
}

fn part_report(out: &mut String, part: &Part) {
    let mut about = vec![part.kind().describe().to_string()];
    if let Some(species) = &part.wood_species {
        about.push(species.clone());
    }
    if let (Some(length), Some(width)) = (part.outline_length_mm, part.outline_width_mm) {
        about.push(format!("outline {length:.0} × {width:.0} mm"));
    }
    out.push_str(&format!("{} ({})\n", part.name(), about.join("; ")));
    out.push_str(&format!("  labels: {}\n", part.labels().join(", ")));
    if part.passes().is_empty() {
        out.push_str("  no passes yet\n");
    }
    let label_width = part
        .labels()
        .iter()
        .map(|l| l.chars().count())
        .max()
        .unwrap_or(0);
    for (pass, changes) in part.passes().iter().zip(part.all_changes()) {
        pass_report(out, pass, &changes, label_width);
    }
    let forecasts = part.forecasts();
    if !part.targets().is_empty() {
        out.push_str("  Targets and forecasts\n");
    }
    for (label, target_hz) in part.targets() {
        match forecasts.iter().find(|f| &f.label == label) {
            Some(forecast) => forecast_report(out, forecast),
            None => out.push_str(&format!(
                "    {label} → {target_hz:.2} Hz: no pass has this label yet\n"
            )),
        }
    }
}

fn pass_report(out: &mut String, pass: &Pass, changes: &[PassChange], label_width: usize) {
    let mut line = format!(
        "  Pass {}  {}  {:.2} g",
        pass.number(),
        pass.time,
        pass.mass_g
    );
    if let Some(mean) = pass.mean_thickness_mm() {
        let count = pass.thickness.len();
        let readings = if count == 1 { "reading" } else { "readings" };
        line.push_str(&format!(
            "  mean thickness {mean:.2} mm ({count} {readings})"
        ));
    }
    if let Some(temp_c) = pass.air_temp_c {
        line.push_str(&format!("  {temp_c:.1} °C"));
    }
    if let Some(rh) = pass.relative_humidity_pct {
        line.push_str(&format!("  {rh:.0} % RH"));
    }
    out.push_str(&line);
    out.push('\n');
    if !pass.note.trim().is_empty() {
        out.push_str(&format!("      note: {}\n", one_line(&pass.note)));
    }
    let mut unlabelled = 0;
    for mode in pass.modes() {
        let Some(label) = mode.label_name() else {
            unlabelled += 1;
            continue;
        };
        let flag = if mode.label_needs_confirmation() {
            " (to confirm)"
        } else {
            ""
        };
        let mut line = format!(
            "      {label:<label_width$}  {:8.2} Hz{flag}",
            mode.frequency_hz
        );
        if let Some(change) = changes.iter().find(|c| c.label == label) {
            if let Some(previous) = change.vs_previous {
                line.push_str(&format!(
                    "   vs pass {}: {}",
                    previous.from_pass,
                    change_text(&previous)
                ));
            }
            if let Some(first) = change
                .vs_first
                .filter(|f| Some(f.from_pass) != change.vs_previous.map(|p| p.from_pass))
            {
                line.push_str(&format!(
                    "   vs pass {}: {}",
                    first.from_pass,
                    change_text(&first)
                ));
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    if unlabelled > 0 {
        let modes = if unlabelled == 1 { "mode" } else { "modes" };
        out.push_str(&format!("      ({unlabelled} unlabelled {modes})\n"));
    }
}

fn change_text(change: &FrequencyChange) -> String {
    format!(
        "{:+.2} Hz {:+.2} % {:+.0} cents",
        change.hz, change.percent, change.cents
    )
}

fn forecast_report(out: &mut String, f: &Forecast) {
    let (low, high) = f.mass_to_remove_range_g;
    out.push_str(&format!(
        "    {} → {:.2} Hz: now {:.2} Hz at {:.2} g (pass {}); remove {:.1} g (range {:.1} to {:.1} g) to reach {:.1} g\n",
        f.label, f.target_hz, f.now_hz, f.now_mass_g, f.from_pass, f.mass_to_remove_g, low, high, f.target_mass_g
    ));
    if let Some(t) = &f.thickness {
        out.push_str(&format!(
            "      mean thickness {:.2} → {:.2} mm ({:+.2} mm, range {:+.2} to {:+.2} mm)\n",
            t.mean_now_mm, t.mean_target_mm, t.change_mm, t.change_range_mm.0, t.change_range_mm.1
        ));
    }
    out.push_str(&format!(
        "      method: {}\n",
        forecast::method_text(&f.method, f.from_pass)
    ));
    for warning in &f.warnings {
        out.push_str(&format!(
            "      warning: {}\n",
            forecast::warning_text(warning)
        ));
    }
}

fn one_line(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}
