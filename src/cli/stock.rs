//! `tapwright stock`: grade a sample bar of tonewood from its taps. A thin
//! layer over [`crate::acoustics::stock`].
//!
//! Numbers are read as text and parsed here, so that every bad value comes
//! back as one sentence naming its option. The whole report is built before
//! anything is printed: on an error stdout stays empty.

use anyhow::{anyhow, Result};
use serde_json::{json, Value};

use super::output::write_stdout;
use super::values::{parse_number, parse_optional};

use crate::acoustics::stock::{bar_figures, BarFigures, BarSample, StockError, WOOD_POISSON_RATIO};

/// Arguments of `tapwright stock`.
#[derive(Debug, clap::Args)]
#[command(
    about = "Grade a sample bar of tonewood: density, Young's modulus, speed of sound, radiation ratio.",
    after_help = "Examples:\n  tapwright stock --length-mm 300 --width-mm 25 --thickness-mm 10 --mass-g 33.75 --flexural-hz 560\n  tapwright stock --length-mm 300 --width-mm 25 --thickness-mm 10 --mass-g 33.75 --flexural-hz 560 --longitudinal-hz 8200 --json"
)]
pub struct StockArgs {
    /// Bar length, mm.
    #[arg(long, value_name = "MM", allow_hyphen_values = true)]
    pub length_mm: String,
    /// Bar width (the tapped face), mm.
    #[arg(long, value_name = "MM", allow_hyphen_values = true)]
    pub width_mm: String,
    /// Bar thickness (the direction it bends), mm; not more than the width.
    #[arg(long, value_name = "MM", allow_hyphen_values = true)]
    pub thickness_mm: String,
    /// Bar mass, g.
    #[arg(long, value_name = "G", allow_hyphen_values = true)]
    pub mass_g: String,
    /// First free–free flexural frequency, Hz (hold at 0.224 L from an end, tap the centre).
    #[arg(long, value_name = "HZ", allow_hyphen_values = true)]
    pub flexural_hz: Option<String>,
    /// Second free–free flexural frequency, Hz (a check of the first).
    #[arg(long, value_name = "HZ", allow_hyphen_values = true)]
    pub second_flexural_hz: Option<String>,
    /// First longitudinal frequency, Hz (hold at the middle, tap an end).
    #[arg(long, value_name = "HZ", allow_hyphen_values = true)]
    pub longitudinal_hz: Option<String>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Runs `tapwright stock`.
pub fn run(args: &StockArgs) -> Result<()> {
    let bar = parse_bar(args)?;
    let figures = bar_figures(&bar).map_err(explain)?;
    let text = if args.json {
        let mut text = serde_json::to_string_pretty(&report_json(&bar, &figures))?;
        text.push('\n');
        text
    } else {
        report_text(&figures)
    };
    write_stdout(&text)
}

fn parse_bar(args: &StockArgs) -> Result<BarSample> {
    let bar = BarSample {
        length_mm: parse_number("--length-mm", &args.length_mm)?,
        width_mm: parse_number("--width-mm", &args.width_mm)?,
        thickness_mm: parse_number("--thickness-mm", &args.thickness_mm)?,
        mass_g: parse_number("--mass-g", &args.mass_g)?,
        flexural_hz: parse_optional("--flexural-hz", &args.flexural_hz)?,
        second_flexural_hz: parse_optional("--second-flexural-hz", &args.second_flexural_hz)?,
        longitudinal_hz: parse_optional("--longitudinal-hz", &args.longitudinal_hz)?,
    };
    Ok(bar)
}

/// The acoustics layer's sentence, prefixed with the option it is about.
fn explain(error: StockError) -> anyhow::Error {
    let option = match &error {
        StockError::SizeOutOfRange { dimension, .. } => match *dimension {
            "length" => "--length-mm",
            "width" => "--width-mm",
            _ => "--thickness-mm",
        },
        StockError::MassOutOfRange { .. } | StockError::ImplausibleDensity { .. } => "--mass-g",
        StockError::FrequencyOutOfRange { what, .. } => match *what {
            "first flexural" => "--flexural-hz",
            "second flexural" => "--second-flexural-hz",
            _ => "--longitudinal-hz",
        },
        StockError::ThickerThanWide { .. } => "--thickness-mm",
        StockError::NotABar { .. } => "--length-mm",
        StockError::NoFrequency => "--flexural-hz or --longitudinal-hz",
        StockError::SecondWithoutFirst { .. } | StockError::SecondNotAboveFirst { .. } => {
            "--second-flexural-hz"
        }
    };
    anyhow!("{option}: {error}")
}

fn report_json(bar: &BarSample, figures: &BarFigures) -> Value {
    let mut value = json!({
        "length_mm": bar.length_mm,
        "width_mm": bar.width_mm,
        "thickness_mm": bar.thickness_mm,
        "mass_g": bar.mass_g,
        "density_kg_m3": figures.density_kg_m3,
        "youngs_modulus_gpa": figures.youngs_modulus_gpa(),
        "speed_of_sound_m_s": figures.speed_of_sound_m_s,
        "radiation_ratio": figures.radiation_ratio,
        "specific_modulus": figures.specific_modulus,
    });
    if let Some(flexural) = &figures.flexural {
        value["flexural"] = json!({
            "frequency_hz": bar.flexural_hz,
            "youngs_modulus_gpa": flexural.youngs_modulus_pa * 1e-9,
            "t1_correction": flexural.t1_correction,
            "poisson_ratio": flexural.poisson_ratio,
            "formula": flexural.formula,
        });
    }
    if let Some(check) = &figures.second_mode {
        value["second_flexural"] = json!({
            "frequency_hz": bar.second_flexural_hz,
            "ratio_to_first": check.ratio,
            "slender_bar_ratio": check.slender_ratio,
            "deviation_pct": check.deviation_pct,
            "consistent": check.consistent,
        });
    }
    if let Some(longitudinal) = &figures.longitudinal {
        value["longitudinal"] = json!({
            "frequency_hz": bar.longitudinal_hz,
            "youngs_modulus_gpa": longitudinal.youngs_modulus_pa * 1e-9,
            "formula": longitudinal.formula,
        });
    }
    value
}

fn report_text(figures: &BarFigures) -> String {
    let mut lines = vec![format!(
        "density               {:>9.1} kg/m³",
        figures.density_kg_m3
    )];
    if let Some(flexural) = &figures.flexural {
        lines.push(format!(
            "E, flexural           {:>9.3} GPa   ({}, T1 = {:.4} at Poisson's ratio {WOOD_POISSON_RATIO})",
            flexural.youngs_modulus_pa * 1e-9,
            flexural.formula,
            flexural.t1_correction
        ));
    }
    if let Some(check) = &figures.second_mode {
        lines.push(format!(
            "second / first mode   {:>9.3}       (slender bar {:.3}, {:+.1} %{})",
            check.ratio,
            check.slender_ratio,
            check.deviation_pct,
            if check.consistent {
                ""
            } else {
                "; not a pair of flexural modes of a slender bar? check both"
            }
        ));
    }
    if let Some(longitudinal) = &figures.longitudinal {
        lines.push(format!(
            "E, longitudinal       {:>9.3} GPa   ({})",
            longitudinal.youngs_modulus_pa * 1e-9,
            longitudinal.formula
        ));
    }
    lines.push(format!(
        "speed of sound        {:>9.0} m/s",
        figures.speed_of_sound_m_s
    ));
    lines.push(format!(
        "radiation ratio c/ρ   {:>9.2} m⁴/(kg·s)",
        figures.radiation_ratio
    ));
    lines.push(format!(
        "specific modulus E/ρ  {:>9.2} GPa per g/cm³",
        figures.specific_modulus
    ));
    if figures.flexural.is_some() && figures.longitudinal.is_some() {
        lines.push("(speed of sound and ratios use the flexural E)".to_owned());
    }
    lines.push(String::new());
    lines.join("\n")
}
