//! The maker's units in the workbench window, driven through its
//! accessibility tree with egui_kittest (no GPU, no display): choosing
//! inches, ounces and °F, typing a pass in them, saving and reopening in
//! millimetres and grams (nothing lost beyond the shown precision); the
//! preference kept between runs in a temporary configuration folder, and a
//! damaged preferences file; the Air and Stock areas in inches.
//!
//! Conversions checked against the exact definitions (1 in = 25.4 mm,
//! 1 oz = 28.349523125 g, °F = °C × 9/5 + 32; international yard and pound
//! agreement, 1959).

mod common;
use common::*;

use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::acoustics::estimate_cavity;
use tapwright::ledger::{store, Family, PartKind};
use tapwright::text::Units;
use tapwright::ui::preferences::FILE_NAME;
use tapwright::ui::{AppCommand, AppOptions, TapwrightApp};

const MM_PER_INCH: f64 = 25.4;
const GRAMS_PER_OUNCE: f64 = 28.349_523_125;

/// The top bar's units button.
fn units_button(harness: &Harness<'_, TapwrightApp>) -> String {
    format!("Units: {}", harness.state().units().name())
}

/// Opens the Units window from the top bar, picks one of the two sets and
/// closes the window again (it would cover the area under it).
fn choose_units(harness: &mut Harness<'_, TapwrightApp>, set: &str) {
    let button = units_button(harness);
    click(harness, &button);
    click(harness, set);
    step_until(harness, "the units to apply", |app| !app.is_busy());
    let button = units_button(harness);
    click(harness, &button);
}

#[test]
fn a_pass_typed_in_inches_ounces_and_fahrenheit_reopens_in_millimetres_and_grams() {
    let folder = tempfile::tempdir().expect("temp folder");
    let path = folder.path().join("inches.ron");
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    queue_build_with_part(
        harness.state_mut(),
        ("Invented guitar No. 2", Family::Guitar),
        ("Top", PartKind::TopPlate),
        "",
    );
    harness
        .state_mut()
        .queue(AppCommand::SetListenPart(Some("Top".into())));
    harness.run_ok();
    choose_units(&mut harness, "All imperial");
    assert_eq!(harness.state().units(), Units::imperial());
    harness.get_by_label("Units: imperial");

    click(&mut harness, "Ledger");
    type_into(&mut harness, "Mass (oz)", "2.5");
    type_into(&mut harness, "Air temperature (°F)", "68");
    click(&mut harness, "Add a reading");
    type_into(&mut harness, "Point 1", "centre");
    type_into(&mut harness, "Thickness at point 1 (in)", "0.118");
    click(&mut harness, "Record pass 1");
    harness.get_by_label("Recorded pass 1 of \"Top\" (2.500 oz).");
    harness.get_by_label("2.500 oz");
    harness.get_by_label("0.118 in");
    type_into(&mut harness, "File path", &path.display().to_string());
    click(&mut harness, "Save here");
    step_until(&mut harness, "the save", |app| {
        !app.is_busy() && path.exists()
    });

    // The file keeps grams, millimetres and °C, exactly as typed.
    let pass = store::load(&path).expect("saved build");
    let pass = pass
        .part("Top")
        .and_then(|p| p.pass(1))
        .expect("pass 1")
        .clone();
    assert!(
        (pass.mass_g - 2.5 * GRAMS_PER_OUNCE).abs() < 1e-9,
        "{}",
        pass.mass_g
    );
    assert!((pass.thickness[0].thickness_mm - 0.118 * MM_PER_INCH).abs() < 1e-12);
    assert!((pass.air_temp_c.expect("typed") - 20.0).abs() < 1e-12);
    drop(harness);

    // Another run, in the default metric units, on the same file.
    let mut harness = opened_on_build(&path);
    assert_eq!(harness.state().units(), Units::metric());
    click(&mut harness, "Ledger");
    // 2.5 oz = 70.87 g and 0.118 in = 3.00 mm at the decimals shown.
    harness.get_by_label("70.87 g");
    harness.get_by_label("3.00 mm");
    click(&mut harness, "Pass 1");
    harness.get_by_label_contains("Air: 20.0 °C");
    // And back in inches the numbers typed come back.
    choose_units(&mut harness, "All imperial");
    harness.get_by_label("2.500 oz");
    harness.get_by_label("0.118 in");
    harness.get_by_label_contains("Air: 68.0 °F");
}

#[test]
fn a_form_being_typed_follows_a_change_of_units() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    queue_build_with_part(
        harness.state_mut(),
        ("Invented violin No. 8", Family::Violin),
        ("Back", PartKind::BackPlate),
        "",
    );
    harness.run_ok();
    click(&mut harness, "Ledger");
    type_into(&mut harness, "Mass (g)", "100");
    choose_units(&mut harness, "All imperial");
    // 100 g = 3.5274 oz, to the digits that bring 100 g back.
    assert_eq!(field_value(&harness, "Mass (oz)"), "3.5274");
    choose_units(&mut harness, "All metric");
    assert_eq!(field_value(&harness, "Mass (g)"), "100");
}

#[test]
fn the_units_are_kept_between_runs_in_the_configuration_folder() {
    let config = tempfile::tempdir().expect("temp folder");
    let options = || AppOptions {
        preferences_folder: Some(config.path().to_path_buf()),
        ..demo_options()
    };
    let mut harness = harness_with(options());
    harness.run_ok();
    assert_eq!(harness.state().units(), Units::metric());
    choose_units(&mut harness, "All imperial");
    let file = config.path().join(FILE_NAME);
    step_until(&mut harness, "the preferences file", |app| {
        !app.is_busy() && file.exists()
    });
    // Only the file is in the folder: written whole, no temporary left.
    assert_eq!(std::fs::read_dir(config.path()).expect("folder").count(), 1);
    drop(harness);

    let mut harness = harness_with(options());
    harness.run_ok();
    assert_eq!(harness.state().units(), Units::imperial());
    harness.get_by_label("Units: imperial");
    assert!(harness.state().status().is_none());
    // One kind changed on its own.
    let button = units_button(&harness);
    click(&mut harness, &button);
    click(&mut harness, "grams (g)");
    step_until(&mut harness, "the save", |app| !app.is_busy());
    drop(harness);
    let harness = harness_with(options());
    let units = harness.state().units();
    assert_eq!(units.mass, tapwright::text::MassUnit::Gram);
    assert_eq!(units.length, tapwright::text::LengthUnit::Inch);
    assert_eq!(units.name(), "mixed");
}

#[test]
fn a_damaged_preferences_file_gives_metric_units_and_one_sentence() {
    let config = tempfile::tempdir().expect("temp folder");
    let file = config.path().join(FILE_NAME);
    std::fs::write(&file, "(units: (length: Cubit)").expect("write");
    let mut harness = harness_with(AppOptions {
        preferences_folder: Some(config.path().to_path_buf()),
        ..demo_options()
    });
    harness.run_ok();
    assert_eq!(harness.state().units(), Units::metric());
    let status = harness.state().status().expect("a status").clone();
    assert!(status.is_error);
    assert!(status.text.contains(FILE_NAME), "{}", status.text);
    assert!(
        status.text.ends_with('.') && !status.text.contains('\n'),
        "one sentence: {}",
        status.text
    );
    // The file is left for the maker; choosing units writes a good one.
    assert_eq!(
        std::fs::read_to_string(&file).expect("read"),
        "(units: (length: Cubit)"
    );
    choose_units(&mut harness, "All imperial");
    step_until(&mut harness, "the new file", |app| !app.is_busy());
    let (kept, problem) = tapwright::ui::preferences::load(config.path());
    assert_eq!(problem, None);
    assert_eq!(kept.units, Units::imperial());
}

#[test]
fn the_air_area_in_inches_gives_the_same_frequency() {
    use tapwright::ui::areas::air::form::GeometryDraft;
    let hz_of = |draft: &GeometryDraft| {
        let geometry = draft.to_geometry().expect("a body");
        let hz = estimate_cavity(&geometry)
            .expect("an estimate")
            .helmholtz_hz;
        format!("{hz:.1} Hz")
    };
    let mut harness = demo_harness();
    harness.run_ok();
    click(&mut harness, "Air");
    let mut draft = GeometryDraft::default();
    let metric_hz = hz_of(&draft);
    harness.get_by_label(&metric_hz);
    choose_units(&mut harness, "All imperial");
    // The violin-like body's slots, 70 × 8 mm, in inches; its 2 L in in³,
    // each to the digits that bring the metric number back.
    assert_eq!(field_value(&harness, "Opening 1 length"), "2.755906");
    assert_eq!(field_value(&harness, "Opening 1 mean width"), "0.3149606");
    assert_eq!(field_value(&harness, "Air temperature"), "68");
    assert_eq!(field_value(&harness, "Volume"), "122.0475");
    draft.follow_units(Units::imperial());
    assert_eq!(hz_of(&draft), metric_hz, "the same body");
    harness.get_by_label(&metric_hz);
    // 5.60 cm² = 0.868 in² (1 in² = 6.4516 cm²).
    assert_eq!(harness.query_all_by_label("0.868 in²").count(), 2);
    harness.get_by_label("Per °F warmer air");
    // A slot typed in inches: 3 in × 0.3 in is 76.2 × 7.62 mm.
    set_field(&mut harness, "Opening 2 length", "3");
    set_field(&mut harness, "Opening 2 mean width", "0.3");
    let mut geometry = draft.to_geometry().expect("a body");
    geometry.openings[1] = tapwright::acoustics::Opening::Slot {
        length_mm: 76.2,
        mean_width_mm: 7.62,
    };
    let estimate = estimate_cavity(&geometry).expect("an estimate");
    harness.get_by_label(&format!("{:.1} Hz", estimate.helmholtz_hz));
}

#[test]
fn a_stock_bar_typed_in_inches_and_ounces_has_the_same_figures() {
    let mut harness = demo_harness();
    harness.run_ok();
    choose_units(&mut harness, "All imperial");
    click(&mut harness, "Stock");
    // An invented spruce bar: 12 × 1 × 0.375 in, 1.2 oz, 560 Hz.
    set_field(&mut harness, "Along-grain length", "12");
    set_field(&mut harness, "Along-grain width", "1");
    set_field(&mut harness, "Along-grain thickness", "0.375");
    set_field(&mut harness, "Along-grain mass", "1.2");
    set_field(&mut harness, "Along-grain first flexural", "560");
    let bar = tapwright::acoustics::stock::BarSample {
        length_mm: 12.0 * MM_PER_INCH,
        width_mm: MM_PER_INCH,
        thickness_mm: 0.375 * MM_PER_INCH,
        mass_g: 1.2 * GRAMS_PER_OUNCE,
        flexural_hz: Some(560.0),
        second_flexural_hz: None,
        longitudinal_hz: None,
    };
    let figures = tapwright::acoustics::stock::bar_figures(&bar).expect("a valid bar");
    harness.get_by_label(&format!("{:.0} kg/m³", figures.density_kg_m3));
    harness.get_by_label(&format!("{:.0} m/s", figures.speed_of_sound_m_s));
    // In metric the same bar reads in mm and g.
    choose_units(&mut harness, "All metric");
    assert_eq!(field_value(&harness, "Along-grain length"), "304.8");
    assert_eq!(field_value(&harness, "Along-grain mass"), "34.0194");
    harness.get_by_label(&format!("{:.0} kg/m³", figures.density_kg_m3));
}
