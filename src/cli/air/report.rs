//! The `air` report as text (in the maker's units) and as JSON.

use super::*;

pub(super) fn report_json(report: &AirReport) -> Value {
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

pub(super) fn report_text(report: &AirReport, units: Units) -> String {
    let mut lines: Vec<String> = Vec::new();
    if let (Some(geometry), Some(estimate)) = (&report.geometry, &report.estimate) {
        lines.extend(estimate_lines(geometry, estimate, report.a4_hz, units));
    }
    if let Some(solved) = &report.solved {
        lines.push(String::new());
        lines.push(format!(
            "Solved: {} {} gives {:.2} Hz (target {} Hz)",
            solved.what,
            solved_text(solved, units),
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

/// "82.345 mm", "3.242 in", "2.1 L", "128 in³": a solved size in `units`.
fn solved_text(solved: &Solved, units: Units) -> String {
    if solved.unit == "L" {
        let volume = units.volume;
        format!(
            "{} {}",
            num(volume.from_m3(solved.stored), volume.decimals() + 1),
            volume.symbol()
        )
    } else {
        let length = units.length;
        format!(
            "{} {}",
            num(length.from_mm(solved.stored), 3),
            length.symbol()
        )
    }
}

/// A stored value as typed in `unit`, with the unit: "20 °C", "2.5 mm".
fn with_unit<U: Unit>(unit: U, stored: f64) -> String {
    format!("{} {}", field_text(unit, stored), unit.symbol())
}

fn estimate_lines(
    geometry: &CavityGeometry,
    estimate: &CavityEstimate,
    a4_hz: f64,
    units: Units,
) -> Vec<String> {
    let air = &geometry.air;
    let temperature = with_unit(units.temperature, air.temp_c);
    let air_text = match geometry.sound_model {
        SpeedOfSoundModel::Cramer => format!(
            "{temperature}, {} % RH, {} kPa",
            air.relative_humidity_pct,
            air.pressure_pa / 1e3
        ),
        SpeedOfSoundModel::Iso9613 => temperature,
    };
    let length = units.length;
    let (step_mm, step_name) = length.slope_step();
    // Areas, conductances and slopes to 0.01 in mm, 0.001 in inches.
    let decimals = length.thickness_decimals();
    let area_unit = length.area_symbol();
    let area = |m2: f64| num(length.area_from_m2(m2), length.area_decimals());
    let mut lines = vec![
        "Cavity estimate (rigid walls)".to_string(),
        format!(
            "  air      {air_text}: speed of sound {:.2} m/s ({})",
            estimate.speed_of_sound_m_s,
            geometry.sound_model.name()
        ),
        format!(
            "  body     {}, wall {} at the openings, {} end correction",
            with_unit(units.volume, geometry.volume_m3),
            with_unit(length, geometry.wall_thickness_mm),
            geometry.end_correction.name()
        ),
        String::new(),
        format!(
            "  {:<3} {:<6} {:<18} {:>9} {:>16} {:>15}",
            "#",
            "kind",
            "size",
            format!("area {area_unit}"),
            format!("conductance {}", length.symbol()),
            format!("Hz per {step_name}")
        ),
    ];
    for (index, (opening, hz_per_mm)) in estimate
        .openings
        .iter()
        .zip(&estimate.sensitivities.hz_per_mm_of_opening)
        .enumerate()
    {
        let size = length.opening_text(opening.opening.is_round(), &opening.opening.sizes_mm());
        lines.push(format!(
            "  {:<3} {:<6} {:<18} {:>9} {:>16} {:>15.3}",
            index + 1,
            opening.opening.kind(),
            size,
            area(opening.area_m2),
            num(length.from_mm(opening.conductance_m * 1e3), decimals),
            hz_per_mm * step_mm
        ));
    }
    lines.push(format!(
        "  {:<3} {:<6} {:<18} {:>9} {:>16}",
        "",
        "total",
        "",
        area(geometry.total_area_m2()),
        num(length.from_mm(estimate.conductance_m * 1e3), decimals)
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
    let (volume_step_l, volume_step) = units.volume.slope_step();
    lines.push(format!(
        "  sensitivity          {:+.2} Hz per {volume_step}, {:+.3} Hz per {}, {:+.2} Hz per {step_name} of wall thickness",
        s.hz_per_litre * volume_step_l,
        units.temperature.per_degree(s.hz_per_degree_c),
        units.temperature.symbol(),
        s.hz_per_mm_of_thickness * step_mm
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
