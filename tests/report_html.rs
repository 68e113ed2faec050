//! The build report: the report of each sample build is valid HTML (parsed
//! with html5ever through scraper, no parse errors), holds every pass and
//! one SVG chart per labelled mode of each part, and one drawing per
//! labelled mode of each pass that keeps a shape map; user text is
//! escaped; the `report` command writes the file whole and answers bad
//! input with one sentence and exit code 2.

use std::path::Path;
use std::process::{Command, Output};

use scraper::{Html, Selector};
use tapwright::acoustics::{CavityGeometry, Opening};
use tapwright::ledger::{
    store, Build, Family, MeasuredMode, PartKind, PassInput, StoredModeShape, StoredShapeMap,
    StoredTapPoint, Timestamp,
};
use tapwright::report::{build_report_html, ReportSettings};
use tapwright::shapes::{tap_grid, Outline, OutlineShape};
use tapwright::text::Units;

const SAMPLES: [&str; 2] = [
    "sample_sessions/violin_wren.ron",
    "sample_sessions/guitar_larkspur.ron",
];

fn settings() -> ReportSettings {
    ReportSettings {
        a4_hz: 440.0,
        made: Timestamp::from_unix_seconds(1_718_000_000),
        units: Units::metric(),
    }
}

fn sample(file: &str) -> Build {
    store::load(&Path::new(env!("CARGO_MANIFEST_DIR")).join(file)).expect("sample loads")
}

fn select(selector: &str) -> Selector {
    Selector::parse(selector).expect("test selector")
}

/// Parses `html` as a whole document and fails on any parse error.
fn parse_without_errors(html: &str) -> Html {
    let document = Html::parse_document(html);
    assert!(
        document.errors.is_empty(),
        "parse errors: {:?}",
        document.errors
    );
    document
}

fn tapwright(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("tapwright runs")
}

#[test]
fn each_sample_report_is_valid_html_with_every_pass_and_a_chart_per_labelled_mode() {
    for file in SAMPLES {
        let build = sample(file);
        let html = build_report_html(&build, &settings());
        let document = parse_without_errors(&html);
        assert_eq!(
            document.select(&select("section.part")).count(),
            build.parts().len(),
            "{file}"
        );
        for part in build.parts() {
            let section = document
                .select(&select("section.part"))
                .find(|s| s.value().attr("data-part") == Some(part.name()))
                .unwrap_or_else(|| panic!("{file}: no section for {}", part.name()));
            let passes: Vec<u32> = section
                .select(&select("tbody.pass"))
                .filter_map(|p| p.value().attr("data-pass")?.parse().ok())
                .collect();
            let expected: Vec<u32> = part.passes().iter().map(|p| p.number()).collect();
            assert_eq!(passes, expected, "{file}, {}", part.name());
            // Every labelled mode of every pass has its row.
            let mode_rows = section.select(&select("tbody.pass tr.mode")).count();
            let labelled: usize = part
                .passes()
                .iter()
                .map(|p| p.modes().iter().filter(|m| m.label.is_some()).count())
                .sum();
            assert_eq!(mode_rows, labelled, "{file}, {}", part.name());
            let charted: Vec<String> = section
                .select(&select("figure.mode-chart"))
                .filter(|f| f.select(&select("svg")).count() == 1)
                .filter_map(|f| f.value().attr("data-label").map(str::to_owned))
                .collect();
            assert_eq!(charted, part.labels_in_use(), "{file}, {}", part.name());
        }
        // No script, no link to anything outside the file.
        assert_eq!(document.select(&select("script")).count(), 0);
        assert_eq!(document.select(&select("link, img, iframe")).count(), 0);
        assert!(!html.contains("http://") || only_svg_namespace(&html));
        assert!(!html.contains("https://"));
    }
}

/// The only address allowed is the SVG namespace name, which is not fetched.
fn only_svg_namespace(html: &str) -> bool {
    html.matches("http://").count() == html.matches("http://www.w3.org/2000/svg").count()
}

#[test]
fn the_violin_report_shows_changes_forecasts_top_against_back_and_cautions() {
    let build = sample(SAMPLES[0]);
    let html = build_report_html(&build, &settings());
    let document = parse_without_errors(&html);
    let text: String = document.root_element().text().collect();
    let top = build.part("Top").expect("sample has a top");
    // The change of mode 5 in the latest pass against the first, as the
    // ledger computes it, appears in the table (cents, true minus sign).
    let latest = top.latest_pass().expect("passes").number();
    let change = top.change("mode 5", latest).expect("mode 5 labelled");
    let first = change.vs_first.expect("more than one pass");
    let cents = format!("{:+.0}", first.cents).replace('-', "\u{2212}");
    assert!(text.contains(&cents), "{cents}");
    for expected in [
        "Targets and forecasts",
        "Top against back",
        "Mode 5 interval",
        "Air check",
        "Cautions",
        "Wood dust",
        "85 dB(A)",
    ] {
        assert!(text.contains(expected), "missing {expected}");
    }
    let forecast = top.forecast("mode 5").expect("the top has a mode 5 target");
    let remove = format!("{:.1}", forecast.mass_to_remove_g).replace('-', "\u{2212}");
    assert!(text.contains(&remove), "{remove}");
    // Print rules: a page size margin and page breaks between parts.
    assert!(html.contains("@page"));
    assert!(html.contains("break-before: page"));
}

#[test]
fn user_text_is_escaped_in_the_page_and_in_the_charts() {
    let mut build = Build::new("<script>alert(1)</script> & \"Co\"", Family::Other);
    build.notes = "</p><script>x()</script>".to_owned();
    let part = build
        .add_part(
            "<img src=x onerror=y>",
            PartKind::Custom("<b>bar</b>".into()),
        )
        .expect("test value");
    part.add_label("<svg onload=z>").expect("test value");
    for (mass_g, hz) in [(50.0, 300.0), (48.0, 290.0)] {
        let mut input = PassInput::new(
            mass_g,
            vec![MeasuredMode {
                frequency_hz: hz,
                q: 40.0,
                level_db: -20.0,
                spread_hz: 0.5,
            }],
        );
        input.note = "<i>thinned</i>".to_owned();
        part.record_pass(input).expect("test value");
    }
    part.set_label(1, 0, Some("<svg onload=z>"))
        .expect("test value");
    let html = build_report_html(&build, &settings());
    let document = parse_without_errors(&html);
    assert_eq!(document.select(&select("script")).count(), 0);
    assert_eq!(document.select(&select("img, b, i")).count(), 0);
    // Only the chart makes an <svg>, none comes from the label.
    assert_eq!(document.select(&select("svg")).count(), 1);
    assert!(!html.contains("<svg onload"));
    let text: String = document.root_element().text().collect();
    assert!(text.contains("<script>alert(1)</script> & \"Co\""));
    assert!(text.contains("<i>thinned</i>"));
    let title: String = document
        .select(&select("title"))
        .flat_map(|t| t.text())
        .collect();
    assert!(title.contains("<script>"), "{title}");
}

#[test]
fn the_air_check_compares_a_measured_a0_with_the_estimate() {
    let mut build = sample(SAMPLES[0]);
    // Invented body: 2.0 L, two slender slots (an f-hole pair, roughly).
    build.air = Some(CavityGeometry::new(
        2.0e-3,
        vec![
            Opening::Slot {
                length_mm: 70.0,
                mean_width_mm: 8.0,
            },
            Opening::Slot {
                length_mm: 70.0,
                mean_width_mm: 8.0,
            },
        ],
    ));
    let estimate = tapwright::acoustics::estimate_cavity(build.air.as_ref().expect("set"))
        .expect("valid geometry");
    let html = build_report_html(&build, &settings());
    let document = parse_without_errors(&html);
    let text: String = document.root_element().text().collect();
    let estimate_text = format!("{:.1} Hz", estimate.helmholtz_hz);
    assert!(text.contains(&estimate_text), "{estimate_text}");
    let has_body_a0 = build
        .parts()
        .iter()
        .filter(|p| *p.kind() == PartKind::AssembledBody)
        .any(|p| {
            p.passes()
                .iter()
                .any(|pass| pass.mode_labelled("A0").is_some())
        });
    assert!(has_body_a0, "the sample body has an A0");
    assert!(text.contains("Measured A0"));
    assert!(text.contains("Measured − estimated"));
}

#[test]
fn the_report_command_writes_the_file_and_refuses_bad_input() {
    let folder = tempfile::tempdir().expect("test value");
    let out_path = folder.path().join("wren.html");
    let out_text = out_path.to_str().expect("utf-8 path");
    let out = tapwright(&["report", SAMPLES[0], "-o", out_text]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let written = std::fs::read_to_string(&out_path).expect("report written");
    parse_without_errors(&written);
    // Only the report is left in the folder (no stray temporary file).
    assert_eq!(std::fs::read_dir(folder.path()).expect("dir").count(), 1);

    let missing = tapwright(&["report", "no/such/build.ron", "-o", out_text]);
    let no_folder = folder.path().join("none").join("r.html");
    let bad_output = tapwright(&[
        "report",
        SAMPLES[0],
        "-o",
        no_folder.to_str().expect("utf-8"),
    ]);
    let folder_as_output = tapwright(&[
        "report",
        SAMPLES[0],
        "-o",
        folder.path().to_str().expect("utf-8"),
    ]);
    for (what, out) in [
        ("missing build", &missing),
        ("missing folder", &bad_output),
        ("folder as output", &folder_as_output),
    ] {
        assert_eq!(out.status.code(), Some(2), "{what}");
        assert!(out.stdout.is_empty(), "{what}");
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(stderr.trim_end().lines().count(), 1, "{what}: {stderr}");
        assert!(stderr.starts_with("tapwright: "), "{what}: {stderr}");
    }
    assert!(String::from_utf8_lossy(&missing.stderr).contains("no/such/build.ron"));
    assert!(String::from_utf8_lossy(&bad_output.stderr).contains("r.html"));
    // The failed runs left the earlier report as it was.
    assert_eq!(
        std::fs::read_to_string(&out_path).expect("still there"),
        written
    );
}

/// The stock samples of the sample violin appear with the figures the
/// acoustics layer gives for each bar (ASTM E1876 flexural modulus,
/// density, speed of sound), one table row per bar.
#[test]
fn the_stock_samples_are_in_the_report() {
    let build = sample("sample_sessions/violin_wren.ron");
    assert!(!build.stock().is_empty(), "the sample violin has stock");
    let html = build_report_html(&build, &settings());
    let document = parse_without_errors(&html);
    let rows: Vec<String> = document
        .select(&select("table.stock tbody tr:not(.weak)"))
        .map(|row| row.text().collect::<Vec<_>>().join("|"))
        .collect();
    let bars: usize = build
        .stock()
        .iter()
        .map(|s| usize::from(s.along_grain.is_some()) + usize::from(s.cross_grain.is_some()))
        .sum();
    assert_eq!(rows.len(), bars, "{rows:?}");
    for sample in build.stock() {
        let figures = sample
            .along_figures()
            .expect("an along-grain bar")
            .expect("valid figures");
        let expected = format!("{:.2}", figures.youngs_modulus_gpa());
        assert!(
            rows.iter()
                .any(|r| r.contains(&sample.name) && r.contains(&expected)),
            "{} with E {expected} GPa in {rows:?}",
            sample.name
        );
    }
}

/// A map of three modes over a 5 × 9 grid on a violin outline: a ring
/// (labelled mode 5), a twist (labelled mode 2) and one without a label.
/// Shapes written here from simple functions (not measured).
fn ring_and_twist_map() -> StoredShapeMap {
    let shape = OutlineShape::typical_violin();
    let outline = Outline::new(shape).expect("typical violin");
    let grid = tap_grid(&outline, 5, 9).expect("a 5 × 9 grid");
    let ring = |x: f64, y: f64| {
        let r = ((x / 90.0).powi(2) + ((y - 178.0) / 150.0).powi(2)).sqrt();
        (std::f64::consts::PI * r).cos()
    };
    let twist = |x: f64, y: f64| x * (y - 178.0);
    let bend = |_: f64, y: f64| ((y - 178.0) / 178.0).powi(2) - 0.3;
    let mode = |f: &dyn Fn(f64, f64) -> f64, hz: f64, label: Option<&str>| {
        let raw: Vec<f64> = grid.iter().map(|p| f(p.x_mm, p.y_mm)).collect();
        let peak = raw.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let values: Vec<f64> = raw.iter().map(|v| v / peak).collect();
        // Points near zero get a larger uncertainty: their sign is not
        // certain there.
        let uncertainties = values
            .iter()
            .map(|v| if v.abs() < 0.05 { 0.05 } else { 0.01 })
            .collect();
        StoredModeShape {
            frequency_hz: hz,
            q: 50.0,
            label: label.map(str::to_owned),
            spreads: vec![0.01; values.len()],
            values,
            uncertainties,
            quality: 0.98,
        }
    };
    StoredShapeMap {
        outline: shape,
        points: grid
            .iter()
            .map(|p| StoredTapPoint {
                name: p.name.clone(),
                x_mm: p.x_mm,
                y_mm: p.y_mm,
                taps: 2,
            })
            .collect(),
        modes: vec![
            mode(&twist, 150.0, Some("mode 2")),
            mode(&bend, 240.0, None),
            mode(&ring, 333.0, Some("mode 5")),
        ],
    }
}

#[test]
fn a_pass_with_a_shape_map_gets_a_drawing_of_each_labelled_mode() {
    let mut build = sample(SAMPLES[0]);
    let map = ring_and_twist_map();
    let points = map.points.len();
    let top = build.part_mut("Top").expect("sample has a top");
    let latest = top.latest_pass().expect("passes").number();
    top.pass_mut(latest).expect("latest pass").shape_map = Some(map);
    build.validate().expect("the map fits the build");
    let html = build_report_html(&build, &settings());
    let document = parse_without_errors(&html);
    assert!(only_svg_namespace(&html));
    let passes: Vec<_> = document.select(&select("div.shape-pass")).collect();
    assert_eq!(passes.len(), 1, "one pass keeps a map");
    assert_eq!(
        passes[0].value().attr("data-pass"),
        Some(latest.to_string().as_str())
    );
    // The two labelled modes are drawn, the unlabelled one is not.
    let figures: Vec<_> = document.select(&select("figure.shape-map")).collect();
    let labels: Vec<&str> = figures
        .iter()
        .filter_map(|f| f.value().attr("data-label"))
        .collect();
    assert_eq!(labels, ["mode 2", "mode 5"]);
    for figure in &figures {
        let svg = figure.select(&select("svg")).next().expect("an SVG");
        let markup = svg.html();
        // Outline and at least one nodal line; a dot and its ring at every
        // tap point; colour bands.
        assert!(
            markup.matches("<polyline").count() >= 2,
            "{}",
            &markup[..200]
        );
        assert_eq!(markup.matches("<circle").count(), 2 * points);
        assert!(markup.matches("<rect").count() > 100);
        // Small enough to print many (bands are merged along each row).
        assert!(markup.len() < 150_000, "{} bytes", markup.len());
    }
    let caption: String = figures[1]
        .select(&select("figcaption"))
        .next()
        .expect("caption")
        .text()
        .collect();
    assert_eq!(caption, "mode 5 · 333.0 Hz · quality 0.98");
    // The ring's sign changes across its nodal line: both colour ends are
    // used for the dots (blue and orange of the shape scale).
    let ring = figures[1].html();
    assert!(
        ring.contains("#1C4E96") && ring.contains("#A84A0C"),
        "dot colours"
    );
    // Points near the nodal line are drawn hollow grey.
    assert!(ring.contains("#EBEBEB"));
}

#[test]
fn a_build_without_shape_maps_has_no_shape_section() {
    let html = build_report_html(&sample(SAMPLES[0]), &settings());
    let document = parse_without_errors(&html);
    assert_eq!(document.select(&select("div.shape-pass")).count(), 0);
    assert!(!html.contains("Mode shapes"));
}

/// The violin sample's report in inches, ounces and °F: the pass heads,
/// the overview, the forecasts and the charts' mass axis; the same build
/// file (kept in mm and g) underneath. 1 oz = 28.349523125 g and 1 in =
/// 25.4 mm exactly.
#[test]
fn the_report_in_imperial_units() {
    let build = sample(SAMPLES[0]);
    let imperial = ReportSettings {
        units: Units::imperial(),
        ..settings()
    };
    let html = build_report_html(&build, &imperial);
    let document = parse_without_errors(&html);
    let text: String = document.root_element().text().collect();
    let top = build.part("Top").expect("a top");
    let latest = top.latest_pass().expect("passes");
    let ounces = format!("{:.3} oz", latest.mass_g / 28.349_523_125);
    assert!(text.contains(&ounces), "{ounces}");
    let mean_in = latest.mean_thickness_mm().expect("readings") / 25.4;
    assert!(
        text.contains(&format!("mean thickness {mean_in:.3} in")),
        "{mean_in}"
    );
    for expected in [
        "Outline (in)",
        "Mass first → latest (oz)",
        "Remove (oz)",
        "Thickness (in)",
    ] {
        assert!(text.contains(expected), "missing {expected}");
    }
    assert!(html.contains("Mass (oz)"), "the charts' mass axis");
    assert!(!html.contains("Mass (g)"));
    let grams = format!("{:.2} g", latest.mass_g);
    assert!(!text.contains(&grams), "no grams left: {grams}");
    // The metric report of the same build keeps grams.
    let metric: String = parse_without_errors(&build_report_html(&build, &settings()))
        .root_element()
        .text()
        .collect();
    assert!(metric.contains(&grams));
}

#[test]
fn the_report_command_takes_units() {
    let folder = tempfile::tempdir().expect("test value");
    let out_path = folder.path().join("wren.html");
    let out_text = out_path.to_str().expect("utf-8 path");
    let out = tapwright(&["report", SAMPLES[0], "-o", out_text, "--units", "imperial"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let written = std::fs::read_to_string(&out_path).expect("report written");
    assert!(written.contains("Mass first → latest (oz)"));
    let refused = tapwright(&["report", SAMPLES[0], "-o", out_text, "--units", "cubits"]);
    assert_eq!(refused.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&refused.stderr);
    assert_eq!(stderr.trim_end().lines().count(), 1, "{stderr}");
    assert!(stderr.contains("--units"), "{stderr}");
}
