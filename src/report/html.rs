//! The report's HTML, one function per section. maud writes the markup and
//! escapes every value put into it (build and part names, notes, labels),
//! so user text can never become markup; only the SVG that plotters made
//! (whose text plotters escapes itself) and the fixed style sheet go in
//! unescaped.

use maud::{html, Markup, PreEscaped, DOCTYPE};

use crate::acoustics::{compare_with_measured, estimate_cavity, CavityGeometry};
use crate::ledger::compare::{mode5_interval_semitones, plate_modes, top_and_back};
use crate::ledger::{Build, Forecast, FrequencyChange, Part, PartKind, Pass};

use super::charts::{mode_chart_svg, series_colour, ModeChart};
use super::ReportSettings;
use crate::text::forecast::{caution_text, method_text};
use crate::text::{capitalised, date_text, note_text, num, signed};

/// The style sheet: screen and print (A4 and Letter both fit the 180 mm
/// text width; each part starts on a new page; rows and charts are not
/// split across pages).
const STYLE: &str = r#"
@page { margin: 14mm 13mm; }
:root { color: #1a1a1a; background: #fff; }
body { font: 10.5pt/1.4 "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; max-width: 180mm; margin: 0 auto; padding: 8mm 4mm; }
h1 { font-size: 20pt; margin: 0 0 2mm; }
h2 { font-size: 15pt; margin: 6mm 0 2mm; border-bottom: 1.5pt solid #1f64b4; padding-bottom: 1mm; }
h3 { font-size: 11.5pt; margin: 5mm 0 1.5mm; }
p { margin: 1mm 0 2mm; }
.meta { color: #444; }
.weak { color: #666; }
.warning { color: #8a4b00; }
table { border-collapse: collapse; width: 100%; font-size: 9pt; margin: 1mm 0 3mm; }
th, td { padding: 0.8mm 1.6mm; text-align: left; vertical-align: top; }
th { background: #eef2f7; font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tbody.pass { break-inside: avoid; page-break-inside: avoid; }
tbody.pass tr.mode td { white-space: nowrap; }
table.passes { font-size: 8.5pt; }
tbody.pass tr.pass-head td { background: #f6f6f6; border-top: 0.8pt solid #999; font-weight: 600; }
tbody.pass tr.pass-detail td { font-weight: normal; color: #444; }
table.facts td:first-child { width: 42%; color: #444; }
table.facts td { border-bottom: 0.4pt solid #ddd; }
figure.mode-chart { margin: 2mm 0 4mm; break-inside: avoid; page-break-inside: avoid; }
figure.mode-chart svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 8.5pt; color: #555; }
section.part { break-before: page; page-break-before: always; }
section.cautions { border: 0.8pt solid #c9a13b; background: #fffaf0; padding: 1mm 4mm; margin: 4mm 0; }
section.cautions li { margin: 1mm 0; }
footer { margin-top: 8mm; font-size: 8.5pt; color: #666; border-top: 0.4pt solid #ccc; padding-top: 2mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 9.5pt; }
  section.cautions { background: none; }
}
"#;

/// The whole document.
pub fn document(build: &Build, settings: &ReportSettings) -> Markup {
    html! {
        (DOCTYPE)
        html lang="en" {
            head {
                meta charset="utf-8";
                meta name="viewport" content="width=device-width, initial-scale=1";
                title { "Build report: " (build.name) }
                style { (PreEscaped(STYLE)) }
            }
            body {
                (build_header(build, settings))
                (cautions(build))
                (parts_overview(build))
                (top_against_back(build))
                (air_check(build, settings))
                (stock(build))
                @for part in build.parts() {
                    (part_section(part, settings))
                }
                (footer(settings))
            }
        }
    }
}

/// The build's wood samples, each bar with its figures (ASTM E1876 for the
/// flexural modulus; see `acoustics::stock`); nothing when there are none.
pub fn stock(build: &Build) -> Markup {
    if build.stock().is_empty() {
        return html! {};
    }
    html! {
        h2 { "Stock" }
        table.stock {
            thead {
                tr {
                    th { "Sample" } th { "Species" } th { "Bar" } th { "Density (kg/m³)" }
                    th { "E (GPa)" } th { "Speed of sound (m/s)" } th { "Radiation ratio" }
                }
            }
            tbody {
                @for sample in build.stock() {
                    @for (grain, figures) in [("along the grain", sample.along_figures()), ("across the grain", sample.cross_figures())] {
                        @if let Some(figures) = figures {
                            tr {
                                td { (sample.name) }
                                td { (sample.species) }
                                td { (grain) }
                                @match figures {
                                    Ok(f) => {
                                        td.num { (num(f.density_kg_m3, 0)) }
                                        td.num { (num(f.youngs_modulus_gpa(), 2)) }
                                        td.num { (num(f.speed_of_sound_m_s, 0)) }
                                        td.num { (num(f.radiation_ratio, 1)) }
                                    }
                                    Err(problem) => { td colspan="4" { (problem) } }
                                }
                            }
                        }
                    }
                    @if let Some(ratio) = sample.grain_ratio() {
                        tr.weak { td colspan="7" { (sample.name) ": along/across ratio of E " (num(ratio, 1)) } }
                    }
                    @if !sample.source_note.is_empty() {
                        tr.weak { td colspan="7" { (sample.name) ": " (sample.source_note) } }
                    }
                }
            }
        }
    }
}

/// Name, family, dates and notes.
pub fn build_header(build: &Build, settings: &ReportSettings) -> Markup {
    html! {
        header {
            h1 { (build.name) }
            p.meta {
                (capitalised(build.family().name())) " · started " (date_text(&build.created.to_string()))
                " · report made " (date_text(&settings.made.to_string()))
            }
            @if !build.notes.trim().is_empty() {
                p.notes { (build.notes) }
            }
        }
    }
}

/// Workshop safety, and what the forecasts and labels can and cannot say.
pub fn cautions(build: &Build) -> Markup {
    let to_confirm: usize = build
        .parts()
        .iter()
        .flat_map(|p| p.passes())
        .flat_map(|pass| pass.modes())
        .filter(|m| m.label_needs_confirmation())
        .count();
    html! {
        section.cautions {
            h2 { "Cautions" }
            ul {
                li { strong { "Loud sound. " } "Long exposure to sound above about 85 dB(A) risks lasting hearing damage (NIOSH recommended exposure limit). Tap gently; keep headphone and monitor levels low." }
                li { strong { "Sharp tools. " } "Gouges, planes, scrapers and knives used for graduation cause deep cuts. Clamp the work, cut away from your body, keep tools sharp." }
                li { strong { "Wood dust " } "is a recognised health hazard (IARC Group 1, carcinogenic to humans). Use dust extraction and a suitable mask when sanding or scraping." }
                li { "Forecasts assume the part is thinned evenly; their bands are a guide, not a promise. Measure again on the way to a target." }
                @if to_confirm > 0 {
                    li.warning { (to_confirm) " mode label" (plural(to_confirm)) " in this build " (if to_confirm == 1 { "was" } else { "were" }) " placed by carry-over and not yet confirmed (marked “to confirm”)." }
                }
            }
            p.weak { "Follow your local workshop-safety rules and professional practice; they take precedence over these notes." }
        }
    }
}

/// One line per part.
pub fn parts_overview(build: &Build) -> Markup {
    html! {
        h2 { "Parts" }
        @if build.parts().is_empty() {
            p.weak { "This build has no parts yet." }
        } @else {
            table.overview {
                thead { tr { th { "Part" } th { "Kind" } th { "Wood" } th.num { "Outline (mm)" } th.num { "Passes" } th.num { "Mass first → latest (g)" } } }
                tbody {
                    @for part in build.parts() {
                        tr {
                            td { (part.name()) }
                            td { (part.kind().describe()) }
                            td { (part.wood_species.as_deref().unwrap_or("–")) }
                            td.num { (outline_text(part)) }
                            td.num { (part.passes().len()) }
                            td.num { (mass_span_text(part)) }
                        }
                    }
                }
            }
        }
    }
}

/// Mode 5 / mode 2 of each plate and the mode 5 interval.
pub fn top_against_back(build: &Build) -> Markup {
    let Some((top, back)) = top_and_back(build) else {
        return html! {
            h2 { "Top against back" }
            p.weak { "Needs a top plate and a back plate." }
        };
    };
    let (top_modes, back_modes) = (plate_modes(top), plate_modes(back));
    html! {
        h2 { "Top against back" }
        table.facts {
            tbody {
                @for (part, modes) in [(top, top_modes), (back, back_modes)] {
                    tr {
                        td { (part.name()) }
                        td {
                            @match modes {
                                Some(m) => { "mode 5 / mode 2 = " (num(m.ratio(), 2)) " (" (num(m.mode5_hz, 1)) " / " (num(m.mode2_hz, 1)) " Hz, pass " (m.pass_number) ")" }
                                None => { span.weak { "no pass has both mode 2 and mode 5 labelled" } }
                            }
                        }
                    }
                }
                @if let (Some(t), Some(b)) = (top_modes, back_modes) {
                    @let semitones = mode5_interval_semitones(&t, &b);
                    tr {
                        td { "Mode 5 interval" }
                        td { (signed(semitones, 2)) " semitones (the back's mode 5 is " (num(semitones.abs(), 2)) " semitones " (if semitones >= 0.0 { "above" } else { "below" }) " the top's)" }
                    }
                }
            }
        }
    }
}

/// The cavity estimate from the stored geometry and, when an
/// assembled-body pass has an A0, the comparison with it.
pub fn air_check(build: &Build, settings: &ReportSettings) -> Markup {
    let Some(geometry) = &build.air else {
        return html! {
            h2 { "Air check" }
            p.weak { "No body volume and openings are stored with this build (enter them in the Air area to see the estimate here)." }
        };
    };
    html! {
        h2 { "Air check" }
        (air_estimate(build, geometry, settings))
    }
}

fn air_estimate(build: &Build, geometry: &CavityGeometry, settings: &ReportSettings) -> Markup {
    let estimate = match estimate_cavity(geometry) {
        Ok(estimate) => estimate,
        Err(problem) => {
            return html! { p.warning { "The stored geometry gives no estimate: " (problem) "." } }
        }
    };
    let measured = latest_body_a0(build);
    html! {
        table.facts {
            tbody {
                tr { td { "Air volume" } td { (num(geometry.volume_l(), 2)) " L" } }
                @for (index, opening) in estimate.openings.iter().enumerate() {
                    tr {
                        td { "Opening " (index + 1) }
                        td { (opening.opening.kind()) ", " (opening.opening.size_text()) ", " (num(opening.area_m2 * 1e4, 2)) " cm²" }
                    }
                }
                tr { td { "Wall thickness at the openings" } td { (num(geometry.wall_thickness_mm, 1)) " mm, " (geometry.end_correction.name()) " end correction" } }
                tr { td { "Air" } td { (num(geometry.air.temp_c, 1)) " °C, " (num(geometry.air.relative_humidity_pct, 0)) " % RH; speed of sound " (num(estimate.speed_of_sound_m_s, 1)) " m/s" } }
                tr { td { "Rigid-wall (Helmholtz) estimate" } td { strong { (num(estimate.helmholtz_hz, 1)) " Hz" } " " (note_text(estimate.helmholtz_hz, settings.a4_hz)) } }
                @if let Some((part, pass, a0_hz)) = &measured {
                    tr { td { "Measured A0" } td { (num(*a0_hz, 1)) " Hz " (note_text(*a0_hz, settings.a4_hz)) " (" (part) ", pass " (pass) ")" } }
                    @if let Ok(check) = compare_with_measured(*a0_hz, estimate.helmholtz_hz) {
                        tr {
                            td { "Measured − estimated" }
                            td { strong { (signed(check.difference_hz, 1)) " Hz, " (signed(check.difference_cents, 0)) " cents" } }
                        }
                        tr {
                            td {}
                            td.weak {
                                @if check.difference_cents < 0.0 {
                                    "Below the rigid-wall estimate, as expected: the walls give way and pull A0 down."
                                } @else {
                                    "Above the rigid-wall estimate: check the volume and the openings, and that the mode labelled A0 is the air mode."
                                }
                            }
                        }
                    }
                }
            }
        }
        @if measured.is_none() {
            p.weak { "No assembled-body pass has a mode labelled A0 yet, so there is no measured A0 to compare." }
        }
    }
}

/// The latest assembled-body pass with a mode labelled A0: part, pass, Hz.
fn latest_body_a0(build: &Build) -> Option<(String, u32, f64)> {
    build
        .parts()
        .iter()
        .filter(|part| *part.kind() == PartKind::AssembledBody)
        .flat_map(|part| {
            part.passes().iter().filter_map(move |pass| {
                let a0 = pass.mode_labelled("A0")?;
                Some((part.name().to_owned(), pass.number(), a0.frequency_hz))
            })
        })
        .last()
}

/// One part: its passes, its charts, its targets and forecasts.
pub fn part_section(part: &Part, settings: &ReportSettings) -> Markup {
    html! {
        section.part data-part=(part.name()) {
            h2 { (part.name()) }
            p.meta { (part_about(part)) }
            (pass_table(part, settings))
            (mode_charts(part))
            (targets_and_forecasts(part))
        }
    }
}

fn pass_table(part: &Part, settings: &ReportSettings) -> Markup {
    if part.passes().is_empty() {
        return html! { h3 { "Passes" } p.weak { "No passes recorded yet." } };
    }
    html! {
        h3 { "Passes" }
        table.passes {
            thead {
                tr {
                    th { "Mode" } th.num { "Hz" } th.num { "Q" } th { "Note" }
                    th.num colspan="3" { "vs previous pass" br; "Hz · % · cents" }
                    th.num colspan="3" { "vs first pass" br; "Hz · % · cents" }
                }
            }
            @for pass in part.passes() {
                (pass_rows(part, pass, settings))
            }
        }
    }
}

fn pass_rows(part: &Part, pass: &Pass, settings: &ReportSettings) -> Markup {
    let unlabelled: Vec<String> = pass
        .modes()
        .iter()
        .filter(|m| m.label.is_none())
        .map(|m| format!("{} Hz (Q {})", num(m.frequency_hz, 1), num(m.q, 0)))
        .collect();
    html! {
        tbody.pass data-pass=(pass.number()) {
            tr.pass-head {
                td colspan="10" {
                    "Pass " (pass.number()) " · " (date_text(&pass.time.to_string())) " · " (num(pass.mass_g, 2)) " g"
                    @if let Some(mean) = pass.mean_thickness_mm() { " · mean thickness " (num(mean, 2)) " mm" }
                    @if let Some(temp_c) = pass.air_temp_c { " · " (num(temp_c, 1)) " °C" }
                    @if let Some(rh) = pass.relative_humidity_pct { " · " (num(rh, 0)) " % RH" }
                }
            }
            @if !pass.thickness.is_empty() {
                tr.pass-detail { td colspan="10" { "Thickness (mm): " (thickness_text(pass)) } }
            }
            @if !pass.note.trim().is_empty() {
                tr.pass-detail { td colspan="10" { "Note: " (pass.note) } }
            }
            @for mode in pass.modes().iter().filter(|m| m.label.is_some()) {
                @let label = mode.label_name().unwrap_or_default();
                @let change = part.change(label, pass.number());
                tr.mode {
                    td { (label) @if mode.label_needs_confirmation() { span.warning { " (to confirm)" } } }
                    td.num { (num(mode.frequency_hz, 2)) }
                    td.num { (num(mode.q, 0)) }
                    td { (note_text(mode.frequency_hz, settings.a4_hz)) }
                    (change_cells(change.as_ref().and_then(|c| c.vs_previous)))
                    (change_cells(change.as_ref().and_then(|c| c.vs_first)))
                }
            }
            @if !unlabelled.is_empty() {
                tr.pass-detail { td colspan="10" { "Unlabelled: " (unlabelled.join(", ")) } }
            }
        }
    }
}

fn change_cells(change: Option<FrequencyChange>) -> Markup {
    html! {
        @match change {
            Some(c) => {
                td.num { (signed(c.hz, 2)) }
                td.num { (signed(c.percent, 2)) }
                td.num { (signed(c.cents, 0)) }
            }
            None => { td.num.weak colspan="3" { "–" } }
        }
    }
}

fn mode_charts(part: &Part) -> Markup {
    let labels = part.labels_in_use();
    if labels.is_empty() {
        return html! { h3 { "Charts" } p.weak { "No labelled modes yet to chart." } };
    }
    let forecasts = part.forecasts();
    html! {
        h3 { "Charts" }
        @for (index, label) in labels.iter().enumerate() {
            @let history = part.label_history(label);
            @let chart = ModeChart {
                label,
                history: &history,
                target_hz: part.targets().get(*label).copied(),
                forecast: forecasts.iter().find(|f| f.label == *label),
                colour: series_colour(index),
            };
            figure.mode-chart data-label=(label) {
                @match mode_chart_svg(&chart) {
                    Ok(svg) => { (PreEscaped(svg)) }
                    Err(problem) => { p.warning { (problem) } }
                }
                figcaption {
                    (label) " of " (part.name()) " against pass and mass."
                    @if chart.target_hz.is_some() { " Dashed: the target." }
                    @if chart.forecast.is_some() { " Ring and bar: where the forecast lands, with its mass band." }
                }
            }
        }
    }
}

fn targets_and_forecasts(part: &Part) -> Markup {
    if part.targets().is_empty() {
        return html! {};
    }
    let forecasts = part.forecasts();
    html! {
        h3 { "Targets and forecasts" }
        table.forecasts {
            thead {
                tr { th { "Mode" } th.num { "Target (Hz)" } th.num { "Now (Hz)" } th.num { "Mass now (g)" } th.num { "Remove (g)" } th.num { "Band (g)" } th { "Mean thickness" } }
            }
            tbody {
                @for (label, target_hz) in part.targets() {
                    @match forecasts.iter().find(|f| &f.label == label) {
                        Some(f) => { (forecast_row(f)) }
                        None => {
                            tr { td { (label) } td.num { (num(*target_hz, 1)) } td.weak colspan="5" { "no pass has this label yet" } }
                        }
                    }
                }
            }
        }
    }
}

fn forecast_row(f: &Forecast) -> Markup {
    let (low, high) = f.mass_to_remove_range_g;
    html! {
        tr {
            td { (f.label) }
            td.num { (num(f.target_hz, 1)) }
            td.num { (num(f.now_hz, 1)) " (pass " (f.from_pass) ")" }
            td.num { (num(f.now_mass_g, 1)) }
            td.num { strong { (num(f.mass_to_remove_g, 1)) } }
            td.num { (num(low, 1)) " to " (num(high, 1)) }
            td {
                @match &f.thickness {
                    Some(t) => { (num(t.mean_now_mm, 2)) " → " (num(t.mean_target_mm, 2)) " mm" }
                    None => { span.weak { "no readings" } }
                }
            }
        }
        tr.forecast-how {
            td {}
            td colspan="6" {
                span.weak { "How: " (method_text(&f.method, f.from_pass)) }
                @for warning in &f.warnings {
                    br;
                    span.warning { (caution_text(warning)) }
                }
            }
        }
    }
}

/// Where the report came from.
pub fn footer(settings: &ReportSettings) -> Markup {
    html! {
        footer {
            "Made by tapwright " (env!("CARGO_PKG_VERSION")) " on " (date_text(&settings.made.to_string()))
            " (UTC). Notes and cents against A4 = " (num(settings.a4_hz, 1)) " Hz, equal temperament."
        }
    }
}

// ----- small text helpers ---------------------------------------------------

fn part_about(part: &Part) -> String {
    let mut bits = vec![part.kind().describe().to_owned()];
    if let Some(wood) = &part.wood_species {
        bits.push(wood.clone());
    }
    if part.outline_length_mm.is_some() || part.outline_width_mm.is_some() {
        bits.push(format!("outline {} mm", outline_text(part)));
    }
    if part.labels().is_empty() {
        bits.push("no labels".to_owned());
    } else {
        bits.push(format!("labels: {}", part.labels().join(", ")));
    }
    bits.join(" · ")
}

fn outline_text(part: &Part) -> String {
    match (part.outline_length_mm, part.outline_width_mm) {
        (Some(l), Some(w)) => format!("{} × {}", num(l, 0), num(w, 0)),
        (Some(l), None) => format!("{} long", num(l, 0)),
        (None, Some(w)) => format!("{} wide", num(w, 0)),
        (None, None) => "–".to_owned(),
    }
}

fn mass_span_text(part: &Part) -> String {
    match (part.passes().first(), part.passes().last()) {
        (Some(first), Some(last)) if first.number() != last.number() => {
            format!("{} → {}", num(first.mass_g, 1), num(last.mass_g, 1))
        }
        (Some(only), _) => num(only.mass_g, 1),
        _ => "–".to_owned(),
    }
}

fn thickness_text(pass: &Pass) -> String {
    pass.thickness
        .iter()
        .map(|r| format!("{} {}", r.point, num(r.thickness_mm, 2)))
        .collect::<Vec<_>>()
        .join(", ")
}

fn plural(count: usize) -> &'static str {
    if count == 1 {
        ""
    } else {
        "s"
    }
}
