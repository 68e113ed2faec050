//! `tapwright air`: the cavity (Helmholtz) estimate from body volume and
//! openings, the inverse solve, the coupled air/plate correction and the air
//! check against a measured A0. A thin layer over [`crate::acoustics`].
//!
//! Numbers and choices are read as text and parsed here, so that every bad
//! value comes back as one sentence naming its option (clap's own messages
//! span several lines). The whole report is built before anything is
//! printed: on an error stdout stays empty.

use anyhow::{anyhow, bail, Result};
use serde_json::{json, Map, Value};

use super::values::parse_number;
use crate::acoustics::{
    compare_with_measured, coupled_correction, estimate_cavity, solve_round_diameter_mm,
    solve_slot_length_mm, solve_volume_m3, AcousticsError, AirCheck, AirConditions, CavityEstimate,
    CavityGeometry, CoupledCorrection, EndCorrection, Opening, SpeedOfSoundModel, M3_PER_CM3,
    M3_PER_IN3, M3_PER_LITRE,
};
use crate::analysis::pitch::nearest_note;

/// Arguments of `tapwright air`. The option set is large, so it is boxed to
/// keep the subcommand enum small.
#[derive(Debug, clap::Args)]
#[command(
    about = "Estimate a body's air resonance (A0) from its volume and openings.",
    after_help = "Examples:\n  tapwright air --volume-l 13 --opening round:86 --thickness-mm 2.5\n  tapwright air --volume-l 2.0 --opening slot:70x8 --opening slot:70x8 --json\n  tapwright air --volume-l 13 --target-hz 100 --solve round --thickness-mm 2.5\n  tapwright air --coupled 100,200,180"
)]
pub struct AirArgs {
    /// The options themselves.
    #[command(flatten)]
    pub options: Box<AirOptions>,
}

/// Options of `tapwright air`.
#[derive(Debug, clap::Args)]
pub struct AirOptions {
    /// Air volume inside the body, litres.
    #[arg(long, value_name = "LITRES", allow_hyphen_values = true)]
    pub volume_l: Option<String>,
    /// Air volume inside the body, cubic centimetres.
    #[arg(long, value_name = "CM3", allow_hyphen_values = true)]
    pub volume_cm3: Option<String>,
    /// Air volume inside the body, cubic inches.
    #[arg(long, value_name = "IN3", allow_hyphen_values = true)]
    pub volume_in3: Option<String>,
    /// An opening, sizes in mm: round:DIAMETER, oval:LENGTHxWIDTH or
    /// slot:LENGTHxMEAN_WIDTH (an f-hole). Repeat for several openings.
    #[arg(long = "opening", value_name = "KIND:SIZE", allow_hyphen_values = true)]
    pub openings: Vec<String>,
    /// Wall (top) thickness at the openings, mm.
    #[arg(
        long,
        value_name = "MM",
        default_value = "0",
        allow_hyphen_values = true
    )]
    pub thickness_mm: String,
    /// End correction at the openings: across-wall (Rayleigh's orifice for a
    /// thin wall, the flanged pipe for a thick one), flanged, unflanged or
    /// thin-plate.
    #[arg(long, value_name = "MODEL", default_value = "across-wall")]
    pub end_correction: String,
    /// Air temperature, °C.
    #[arg(
        long,
        value_name = "C",
        default_value = "20",
        allow_hyphen_values = true
    )]
    pub temp_c: String,
    /// Relative humidity, percent.
    #[arg(
        long,
        value_name = "PERCENT",
        default_value = "50",
        allow_hyphen_values = true
    )]
    pub rh: String,
    /// Barometric pressure, kPa.
    #[arg(
        long,
        value_name = "KPA",
        default_value = "101.325",
        allow_hyphen_values = true
    )]
    pub pressure_kpa: String,
    /// Speed-of-sound formula: cramer (0–30 °C) or iso9613.
    #[arg(long, value_name = "MODEL", default_value = "cramer")]
    pub sound_model: String,
    /// Reference pitch for note names, Hz.
    #[arg(
        long,
        value_name = "HZ",
        default_value = "440",
        allow_hyphen_values = true
    )]
    pub a4: String,
    /// Print machine-readable JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Target Helmholtz frequency for --solve, Hz.
    #[arg(long, value_name = "HZ", allow_hyphen_values = true)]
    pub target_hz: Option<String>,
    /// What to solve for to reach --target-hz: round (the diameter of one
    /// more round hole), slot (the length of one more slot, see
    /// --slot-width-mm) or volume.
    #[arg(long, value_name = "WHAT")]
    pub solve: Option<String>,
    /// Mean width of the slot solved for with --solve slot, mm.
    #[arg(long, value_name = "MM", allow_hyphen_values = true)]
    pub slot_width_mm: Option<String>,
    /// Two-oscillator correction from the coupled pair with the hole open
    /// and the plate resonance with the hole sealed, Hz.
    #[arg(
        long,
        value_name = "F_MINUS,F_PLUS,F_SEALED",
        allow_hyphen_values = true
    )]
    pub coupled: Option<String>,
    /// Measured A0 to compare with the estimate, Hz.
    #[arg(long, value_name = "HZ", allow_hyphen_values = true)]
    pub measured_a0_hz: Option<String>,
}

/// What `--solve` looks for.
#[derive(Clone, Copy, Debug, PartialEq)]
enum SolveFor {
    RoundDiameter,
    SlotLength { mean_width_mm: f64 },
    Volume,
}

/// A solved size, for the report.
#[derive(Clone, Debug)]
struct Solved {
    target_hz: f64,
    what: &'static str,
    value: f64,
    unit: &'static str,
}

/// Everything the report shows; each part is present only when asked for.
struct AirReport {
    a4_hz: f64,
    geometry: Option<CavityGeometry>,
    estimate: Option<CavityEstimate>,
    solved: Option<Solved>,
    coupled: Option<CoupledCorrection>,
    check: Option<AirCheck>,
}

/// Runs `tapwright air`.
pub fn run(args: &AirArgs) -> Result<()> {
    let args = &*args.options;
    let report = build_report(args)?;
    let text = if args.json {
        let mut text = serde_json::to_string_pretty(&report_json(&report))?;
        text.push('\n');
        text
    } else {
        report_text(&report)
    };
    super::output::write_stdout(&text)
}

fn build_report(args: &AirOptions) -> Result<AirReport> {
    let a4_hz = parse_number("--a4", &args.a4)?;
    if !(100.0..=1000.0).contains(&a4_hz) {
        bail!("--a4: {a4_hz} Hz is not a reference pitch between 100 and 1000 Hz");
    }
    let solve = parse_solve(args)?;
    // The air is checked even when only --coupled is asked for, so a
    // temperature of -300 °C is never taken in silence.
    let (air, sound_model) = parse_air(args)?;
    air.validate(sound_model).map_err(|e| explain(e, args))?;
    let coupled = args
        .coupled
        .as_deref()
        .map(parse_coupled)
        .transpose()?
        .map(|(f_minus, f_plus, f_sealed)| {
            coupled_correction(f_minus, f_plus, f_sealed).map_err(|e| at_option("--coupled", e))
        })
        .transpose()?;
    let measured_a0_hz = args
        .measured_a0_hz
        .as_deref()
        .map(|text| parse_number("--measured-a0-hz", text))
        .transpose()?;

    let volume_m3 = parse_volume_m3(args)?;
    // --coupled alone needs no cavity; everything else does.
    let geometry_wanted =
        volume_m3.is_some() || !args.openings.is_empty() || solve.is_some() || coupled.is_none();

    let mut report = AirReport {
        a4_hz,
        geometry: None,
        estimate: None,
        solved: None,
        coupled,
        check: None,
    };
    if geometry_wanted {
        let (geometry, solved) = solve_geometry(args, (air, sound_model), volume_m3, solve)?;
        let estimate = estimate_cavity(&geometry).map_err(|e| explain(e, args))?;
        report.geometry = Some(geometry);
        report.estimate = Some(estimate);
        report.solved = solved;
    }
    if let Some(measured_hz) = measured_a0_hz {
        let estimated_hz = match (&report.estimate, &report.coupled) {
            (Some(estimate), _) => estimate.helmholtz_hz,
            (None, Some(coupled)) => coupled.helmholtz_hz,
            (None, None) => unreachable_without_estimate()?,
        };
        let check = compare_with_measured(measured_hz, estimated_hz)
            .map_err(|e| at_option("--measured-a0-hz", e))?;
        report.check = Some(check);
    }
    Ok(report)
}

/// Kept apart so the match above stays total without a panic.
fn unreachable_without_estimate() -> Result<f64> {
    bail!("--measured-a0-hz needs an estimate to compare with: give the body volume and openings, or --coupled")
}

/// Builds the geometry from the options and, with --solve, fills in the
/// solved size.
fn solve_geometry(
    args: &AirOptions,
    (air, sound_model): (AirConditions, SpeedOfSoundModel),
    volume_m3: Option<f64>,
    solve: Option<(SolveFor, f64)>,
) -> Result<(CavityGeometry, Option<Solved>)> {
    let openings = args
        .openings
        .iter()
        .map(|text| parse_opening(text))
        .collect::<Result<Vec<_>>>()?;
    let mut geometry = CavityGeometry {
        volume_m3: volume_m3.unwrap_or(f64::NAN),
        openings,
        wall_thickness_mm: parse_number("--thickness-mm", &args.thickness_mm)?,
        end_correction: parse_end_correction(&args.end_correction)?,
        air,
        sound_model,
    };
    let needs_volume = !matches!(solve, Some((SolveFor::Volume, _)));
    match (needs_volume, volume_m3.is_some()) {
        (true, false) => {
            bail!("give the body volume with one of --volume-l, --volume-cm3 or --volume-in3")
        }
        (false, true) => bail!(
            "--solve volume finds the volume itself: leave out --volume-l, --volume-cm3 and --volume-in3"
        ),
        _ => {}
    }
    let Some((solve_for, target_hz)) = solve else {
        if geometry.openings.is_empty() {
            bail!("--opening: give at least one opening, e.g. --opening round:86");
        }
        return Ok((geometry, None));
    };
    let explain_solve = |e: AcousticsError| explain(e, args);
    let solved = match solve_for {
        SolveFor::RoundDiameter => {
            let diameter_mm =
                solve_round_diameter_mm(&geometry, target_hz).map_err(explain_solve)?;
            geometry.openings.push(Opening::Round { diameter_mm });
            Solved {
                target_hz,
                what: "round hole diameter",
                value: diameter_mm,
                unit: "mm",
            }
        }
        SolveFor::SlotLength { mean_width_mm } => {
            let length_mm =
                solve_slot_length_mm(&geometry, mean_width_mm, target_hz).map_err(explain_solve)?;
            geometry.openings.push(Opening::Slot {
                length_mm,
                mean_width_mm,
            });
            Solved {
                target_hz,
                what: "slot length",
                value: length_mm,
                unit: "mm",
            }
        }
        SolveFor::Volume => {
            if geometry.openings.is_empty() {
                bail!(
                    "--opening: --solve volume needs at least one opening, e.g. --opening round:86"
                );
            }
            let volume_m3 = solve_volume_m3(&geometry, target_hz).map_err(explain_solve)?;
            geometry.volume_m3 = volume_m3;
            Solved {
                target_hz,
                what: "volume",
                value: volume_m3 / M3_PER_LITRE,
                unit: "L",
            }
        }
    };
    Ok((geometry, Some(solved)))
}

/// The air conditions and the speed-of-sound model from the options.
fn parse_air(args: &AirOptions) -> Result<(AirConditions, SpeedOfSoundModel)> {
    let air = AirConditions {
        temp_c: parse_number("--temp-c", &args.temp_c)?,
        relative_humidity_pct: parse_number("--rh", &args.rh)?,
        pressure_pa: parse_number("--pressure-kpa", &args.pressure_kpa)? * 1e3,
        ..AirConditions::default()
    };
    Ok((air, parse_sound_model(&args.sound_model)?))
}

/// Exactly one of the three volume options, in m³.
fn parse_volume_m3(args: &AirOptions) -> Result<Option<f64>> {
    let given: Vec<(&str, &String, f64)> = [
        ("--volume-l", &args.volume_l, M3_PER_LITRE),
        ("--volume-cm3", &args.volume_cm3, M3_PER_CM3),
        ("--volume-in3", &args.volume_in3, M3_PER_IN3),
    ]
    .into_iter()
    .filter_map(|(option, text, scale)| text.as_ref().map(|text| (option, text, scale)))
    .collect();
    match given.as_slice() {
        [] => Ok(None),
        [(option, text, scale)] => Ok(Some(parse_number(option, text)? * scale)),
        _ => {
            bail!("give the volume only once, with one of --volume-l, --volume-cm3 or --volume-in3")
        }
    }
}

/// "round:86", "oval:90x60", "slot:70x8" (sizes in mm; x, X or ×).
fn parse_opening(text: &str) -> Result<Opening> {
    let option = format!("--opening {text}");
    let (kind, sizes) = text.split_once(':').ok_or_else(|| {
        anyhow!("{option}: write the kind and size in mm as round:86, oval:90x60 or slot:70x8")
    })?;
    let parts: Vec<&str> = sizes.split(['x', 'X', '×']).collect();
    let kind = kind.trim().to_ascii_lowercase();
    match (kind.as_str(), parts.as_slice()) {
        ("round", [diameter]) => Ok(Opening::Round {
            diameter_mm: parse_number(&option, diameter)?,
        }),
        ("oval", [length, width]) => Ok(Opening::Oval {
            length_mm: parse_number(&option, length)?,
            width_mm: parse_number(&option, width)?,
        }),
        ("slot", [length, width]) => Ok(Opening::Slot {
            length_mm: parse_number(&option, length)?,
            mean_width_mm: parse_number(&option, width)?,
        }),
        ("round", _) => {
            bail!("{option}: a round opening takes one size, its diameter in mm, e.g. round:86")
        }
        ("oval", _) => bail!("{option}: an oval takes its length and width in mm, e.g. oval:90x60"),
        ("slot", _) => {
            bail!("{option}: a slot takes its length and mean width in mm, e.g. slot:70x8")
        }
        _ => bail!("{option}: the kind must be round, oval or slot"),
    }
}

fn parse_end_correction(text: &str) -> Result<EndCorrection> {
    EndCorrection::from_name(&text.trim().to_ascii_lowercase()).ok_or_else(|| {
        anyhow::anyhow!(
            "--end-correction: \"{text}\" is not one of across-wall, flanged, unflanged or thin-plate"
        )
    })
}

fn parse_sound_model(text: &str) -> Result<SpeedOfSoundModel> {
    match text.trim().to_ascii_lowercase().as_str() {
        "cramer" => Ok(SpeedOfSoundModel::Cramer),
        "iso9613" => Ok(SpeedOfSoundModel::Iso9613),
        _ => bail!("--sound-model: \"{text}\" is not one of cramer or iso9613"),
    }
}

/// --target-hz and --solve come together; --slot-width-mm only with slot.
fn parse_solve(args: &AirOptions) -> Result<Option<(SolveFor, f64)>> {
    let width = args.slot_width_mm.as_deref();
    let (target, what) = match (args.target_hz.as_deref(), args.solve.as_deref()) {
        (None, None) => {
            if width.is_some() {
                bail!("--slot-width-mm: only used with --solve slot");
            }
            return Ok(None);
        }
        (Some(_), None) => {
            bail!("--target-hz: say what to change with --solve round, slot or volume")
        }
        (None, Some(_)) => bail!("--solve: give the frequency to reach with --target-hz"),
        (Some(target), Some(what)) => (target, what),
    };
    let target_hz = parse_number("--target-hz", target)?;
    let solve_for = match what.trim().to_ascii_lowercase().as_str() {
        "round" => SolveFor::RoundDiameter,
        "volume" => SolveFor::Volume,
        "slot" => {
            let width = width.ok_or_else(|| {
                anyhow!("--solve slot: give the slot's mean width with --slot-width-mm")
            })?;
            SolveFor::SlotLength {
                mean_width_mm: parse_number("--slot-width-mm", width)?,
            }
        }
        _ => bail!("--solve: \"{what}\" is not one of round, slot or volume"),
    };
    if width.is_some() && !matches!(solve_for, SolveFor::SlotLength { .. }) {
        bail!("--slot-width-mm: only used with --solve slot");
    }
    Ok(Some((solve_for, target_hz)))
}

/// "100,200,180" → (f−, f+, f_c).
fn parse_coupled(text: &str) -> Result<(f64, f64, f64)> {
    let parts: Vec<&str> = text.split(',').collect();
    match parts.as_slice() {
        [minus, plus, sealed] => Ok((
            parse_number("--coupled", minus)?,
            parse_number("--coupled", plus)?,
            parse_number("--coupled", sealed)?,
        )),
        _ => bail!(
            "--coupled: give three frequencies in Hz, F_MINUS,F_PLUS,F_SEALED, e.g. 100,200,180"
        ),
    }
}

/// Prefixes a library error with the option it came from.
fn at_option(option: &str, error: AcousticsError) -> anyhow::Error {
    anyhow!("{option}: {error}")
}

/// Names the option behind a library error from the cavity model.
fn explain(error: AcousticsError, args: &AirOptions) -> anyhow::Error {
    let opening_text =
        |position: usize| args.openings.get(position - 1).cloned().unwrap_or_default();
    match &error {
        AcousticsError::TemperatureOutOfRange { model, .. } if *model == "cramer" => {
            anyhow!("--temp-c: {error} (--sound-model iso9613 accepts -20 to 50 °C)")
        }
        AcousticsError::TemperatureOutOfRange { .. } => at_option("--temp-c", error),
        AcousticsError::HumidityOutOfRange { .. } => at_option("--rh", error),
        AcousticsError::PressureOutOfRange { .. } => at_option("--pressure-kpa", error),
        AcousticsError::VolumeOutOfRange { .. } => {
            let option = if args.volume_cm3.is_some() {
                "--volume-cm3"
            } else if args.volume_in3.is_some() {
                "--volume-in3"
            } else {
                "--volume-l"
            };
            at_option(option, error)
        }
        AcousticsError::OpeningSizeOutOfRange { opening, .. }
        | AcousticsError::SlotNotSlender { opening, .. }
            if *opening <= args.openings.len() =>
        {
            at_option(&format!("--opening {}", opening_text(*opening)), error)
        }
        AcousticsError::OpeningSizeOutOfRange { .. } => at_option("--slot-width-mm", error),
        AcousticsError::ThicknessOutOfRange { .. } => at_option("--thickness-mm", error),
        AcousticsError::OpeningsTooLarge { .. } | AcousticsError::NoOpenings => {
            at_option("--opening", error)
        }
        AcousticsError::FrequencyOutOfRange { .. } | AcousticsError::TargetUnreachable { .. } => {
            at_option("--target-hz", error)
        }
        _ => anyhow!("{error}"),
    }
}

fn report_json(report: &AirReport) -> Value {
    let mut out = Map::new();
    out.insert("a4_hz".into(), json!(report.a4_hz));
    if let (Some(geometry), Some(estimate)) = (&report.geometry, &report.estimate) {
        let pitch = nearest_note(estimate.helmholtz_hz, report.a4_hz);
        let openings: Vec<Value> = estimate
            .openings
            .iter()
            .zip(&estimate.sensitivities.hz_per_mm_of_opening)
            .map(|(o, hz_per_mm)| {
                let mut entry = json!({
                    "kind": o.opening.kind(),
                    "size": o.opening.size_text(),
                    "area_cm2": o.area_m2 * 1e4,
                    "conductance_m": o.conductance_m,
                    "hz_per_mm": hz_per_mm,
                });
                if let Value::Object(map) = &mut entry {
                    for (key, value) in opening_sizes(&o.opening) {
                        map.insert(key.into(), json!(value));
                    }
                }
                entry
            })
            .collect();
        let s = &estimate.sensitivities;
        out.insert(
            "speed_of_sound_m_s".into(),
            json!(estimate.speed_of_sound_m_s),
        );
        out.insert("sound_model".into(), json!(geometry.sound_model.name()));
        out.insert(
            "air".into(),
            json!({
                "temp_c": geometry.air.temp_c,
                "relative_humidity_pct": geometry.air.relative_humidity_pct,
                "pressure_kpa": geometry.air.pressure_pa / 1e3,
                "co2_ppm": geometry.air.co2_ppm,
            }),
        );
        out.insert("volume_l".into(), json!(geometry.volume_l()));
        out.insert(
            "wall_thickness_mm".into(),
            json!(geometry.wall_thickness_mm),
        );
        out.insert(
            "end_correction".into(),
            json!(geometry.end_correction.name()),
        );
        out.insert("openings".into(), Value::Array(openings));
        out.insert("conductance_m".into(), json!(estimate.conductance_m));
        out.insert("helmholtz_hz".into(), json!(estimate.helmholtz_hz));
        out.insert("note".into(), json!(pitch.as_ref().map(|p| p.note.clone())));
        out.insert("cents".into(), json!(pitch.as_ref().map(|p| p.cents)));
        out.insert(
            "sensitivities".into(),
            json!({
                "hz_per_mm_of_opening": s.hz_per_mm_of_opening,
                "hz_per_litre": s.hz_per_litre,
                "hz_per_degree_c": s.hz_per_degree_c,
                "hz_per_mm_of_thickness": s.hz_per_mm_of_thickness,
            }),
        );
    }
    if let Some(solved) = &report.solved {
        out.insert(
            "solved".into(),
            json!({
                "target_hz": solved.target_hz,
                "what": solved.what,
                "value": solved.value,
                "unit": solved.unit,
            }),
        );
    }
    if let Some(coupled) = &report.coupled {
        out.insert("coupled".into(), json!(coupled));
    }
    if let Some(check) = &report.check {
        out.insert("air_check".into(), json!(check));
    }
    Value::Object(out)
}

/// Numeric sizes of an opening, named with their unit.
fn opening_sizes(opening: &Opening) -> Vec<(&'static str, f64)> {
    match *opening {
        Opening::Round { diameter_mm } => vec![("diameter_mm", diameter_mm)],
        Opening::Oval {
            length_mm,
            width_mm,
        } => vec![("length_mm", length_mm), ("width_mm", width_mm)],
        Opening::Slot {
            length_mm,
            mean_width_mm,
        } => vec![("length_mm", length_mm), ("mean_width_mm", mean_width_mm)],
    }
}

fn report_text(report: &AirReport) -> String {
    let mut lines: Vec<String> = Vec::new();
    if let (Some(geometry), Some(estimate)) = (&report.geometry, &report.estimate) {
        lines.extend(estimate_lines(geometry, estimate, report.a4_hz));
    }
    if let Some(solved) = &report.solved {
        lines.push(String::new());
        lines.push(format!(
            "Solved: {} {:.3} {} gives {:.2} Hz (target {} Hz)",
            solved.what,
            solved.value,
            solved.unit,
            report
                .estimate
                .as_ref()
                .map_or(f64::NAN, |e| e.helmholtz_hz),
            solved.target_hz
        ));
    }
    if let Some(coupled) = &report.coupled {
        if !lines.is_empty() {
            lines.push(String::new());
        }
        lines.push("Coupled air and top plate (two-oscillator model)".into());
        lines.push(format!(
            "  uncoupled Helmholtz (rigid walls)  {:8.2} Hz",
            coupled.helmholtz_hz
        ));
        lines.push(format!(
            "  uncoupled plate                    {:8.2} Hz",
            coupled.plate_hz
        ));
        lines.push(format!(
            "  walls pull A0 down by              {:8.2} Hz ({:+.0} cents)",
            coupled.wall_pull_hz, coupled.wall_pull_cents
        ));
    }
    if let Some(check) = &report.check {
        lines.push(String::new());
        let against = if report.estimate.is_some() {
            "rigid-wall estimate"
        } else {
            "uncoupled Helmholtz frequency"
        };
        lines.push(format!(
            "Air check: measured A0 {:.2} Hz against the {against} {:.2} Hz: {:+.2} Hz ({:+.0} cents)",
            check.measured_hz, check.estimated_hz, check.difference_hz, check.difference_cents
        ));
    }
    let mut text = lines.join("\n");
    text.push('\n');
    text
}

fn estimate_lines(geometry: &CavityGeometry, estimate: &CavityEstimate, a4_hz: f64) -> Vec<String> {
    let air = &geometry.air;
    let air_text = match geometry.sound_model {
        SpeedOfSoundModel::Cramer => format!(
            "{} °C, {} % RH, {} kPa",
            air.temp_c,
            air.relative_humidity_pct,
            air.pressure_pa / 1e3
        ),
        SpeedOfSoundModel::Iso9613 => format!("{} °C", air.temp_c),
    };
    let mut lines = vec![
        "Cavity estimate (rigid walls)".to_string(),
        format!(
            "  air      {air_text}: speed of sound {:.2} m/s ({})",
            estimate.speed_of_sound_m_s,
            geometry.sound_model.name()
        ),
        format!(
            "  body     {} L, wall {} mm at the openings, {} end correction",
            (geometry.volume_l() * 1e4).round() / 1e4,
            geometry.wall_thickness_mm,
            geometry.end_correction.name()
        ),
        String::new(),
        format!(
            "  {:<3} {:<6} {:<18} {:>9} {:>15} {:>10}",
            "#", "kind", "size", "area cm²", "conductance mm", "Hz per mm"
        ),
    ];
    for (index, (opening, hz_per_mm)) in estimate
        .openings
        .iter()
        .zip(&estimate.sensitivities.hz_per_mm_of_opening)
        .enumerate()
    {
        lines.push(format!(
            "  {:<3} {:<6} {:<18} {:>9.2} {:>15.2} {:>10.3}",
            index + 1,
            opening.opening.kind(),
            opening.opening.size_text(),
            opening.area_m2 * 1e4,
            opening.conductance_m * 1e3,
            hz_per_mm
        ));
    }
    lines.push(format!(
        "  {:<3} {:<6} {:<18} {:>9.2} {:>15.2}",
        "",
        "total",
        "",
        geometry.total_area_m2() * 1e4,
        estimate.conductance_m * 1e3
    ));
    lines.push(String::new());
    let note = match nearest_note(estimate.helmholtz_hz, a4_hz) {
        Some(pitch) => format!("{} {:+.0} cents, A4 = {a4_hz} Hz", pitch.note, pitch.cents),
        None => "no note".to_string(),
    };
    lines.push(format!(
        "  Helmholtz frequency  {:.2} Hz  ({note})",
        estimate.helmholtz_hz
    ));
    let s = &estimate.sensitivities;
    lines.push(format!(
        "  sensitivity          {:+.2} Hz per litre, {:+.3} Hz per °C, {:+.2} Hz per mm of wall thickness",
        s.hz_per_litre, s.hz_per_degree_c, s.hz_per_mm_of_thickness
    ));
    let orifice_limit = matches!(
        geometry.end_correction,
        EndCorrection::ThinPlate | EndCorrection::AcrossWall
    );
    if geometry.wall_thickness_mm == 0.0 && !orifice_limit {
        lines.push(format!(
            "  note                 with a 0 mm wall the {} end correction gives a round hole K = {:.2}a; --end-correction thin-plate gives Rayleigh's 2a",
            geometry.end_correction.name(),
            2.0 * std::f64::consts::PI / 4.0 / geometry.end_correction.per_side_over_radius(0.0)
        ));
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_openings() {
        assert_eq!(
            parse_opening("round:86").unwrap(),
            Opening::Round { diameter_mm: 86.0 }
        );
        assert_eq!(
            parse_opening("oval:90x60").unwrap(),
            Opening::Oval {
                length_mm: 90.0,
                width_mm: 60.0
            }
        );
        assert_eq!(
            parse_opening("slot:70×8").unwrap(),
            Opening::Slot {
                length_mm: 70.0,
                mean_width_mm: 8.0
            }
        );
        for bad in [
            "round",
            "round:",
            "hex:5",
            "oval:90",
            "slot:70x8x2",
            "round:nan",
        ] {
            let message = parse_opening(bad).unwrap_err().to_string();
            assert!(message.starts_with("--opening"), "{bad}: {message}");
        }
    }

    #[test]
    fn numbers_must_be_finite() {
        assert!(parse_number("--rh", "inf").is_err());
        assert!(parse_number("--rh", "abc").is_err());
        assert_eq!(parse_number("--rh", " 40 ").unwrap(), 40.0);
    }
}
