//! The Stock area of the workbench window, driven through its
//! accessibility tree with egui_kittest (no GPU, no display): a sample
//! typed in, a frequency filled from a Listen mode, the figures read back
//! and checked against `tapwright::acoustics::stock`, bad input as one
//! sentence, and the sample kept in the build's stock list.

mod common;
use common::*;

use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::acoustics::stock::{bar_figures, BarSample};
use tapwright::ledger::Family;
use tapwright::ui::{AppCommand, Area, TapwrightApp};

/// The demo recording heard, a new build open, the Stock area shown.
fn stock_harness() -> Harness<'static, TapwrightApp> {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    harness.state_mut().queue(AppCommand::NewBuild {
        name: "Stock test".into(),
        family: Family::Violin,
    });
    harness.run_ok();
    harness.get_by_label("Stock").click();
    harness.run_ok();
    assert_eq!(harness.state().area(), Area::Stock);
    harness
}

#[test]
fn a_sample_with_a_frequency_from_listen_shows_its_figures_and_is_kept() {
    let mut harness = stock_harness();
    // The tap instructions for each bar mode are on screen.
    harness.get_by_label_contains("0.224 × its length");
    harness.get_by_label_contains("tap one end face");

    set_field(&mut harness, "Sample name", "wedge 1");
    set_field(&mut harness, "Sample species", "spruce");
    set_field(&mut harness, "Along-grain length", "300");
    set_field(&mut harness, "Along-grain width", "25");
    set_field(&mut harness, "Along-grain thickness", "10");
    set_field(&mut harness, "Along-grain mass", "33.75");

    // The first Listen mode is picked by default; fill the flexural
    // frequency from it.
    let listen_hz = harness.state().session().pass().expect("demo pass").modes[0].frequency_hz;
    harness
        .get_by_label("Use the picked Listen mode for the Along-grain first flexural")
        .click();
    harness.run_ok();
    let filled = field_value(&harness, "Along-grain first flexural");
    assert_eq!(filled, format!("{listen_hz:.2}"));

    let bar = BarSample {
        length_mm: 300.0,
        width_mm: 25.0,
        thickness_mm: 10.0,
        mass_g: 33.75,
        flexural_hz: Some(filled.parse().unwrap()),
        second_flexural_hz: None,
        longitudinal_hz: None,
    };
    let figures = bar_figures(&bar).unwrap();
    harness.get_by_label(&format!("{:.0} kg/m³", figures.density_kg_m3));
    harness.get_by_label_contains(&format!("{:.2} GPa", figures.youngs_modulus_gpa()));
    harness.get_by_label(&format!("{:.0} m/s", figures.speed_of_sound_m_s));
    harness.get_by_label(&format!("{:.2} m⁴/(kg·s)", figures.radiation_ratio));

    // A cross-grain bar thicker than wide: one sentence, no figures.
    set_field(&mut harness, "Cross-grain length", "120");
    set_field(&mut harness, "Cross-grain width", "5");
    set_field(&mut harness, "Cross-grain thickness", "25");
    set_field(&mut harness, "Cross-grain mass", "6.75");
    set_field(&mut harness, "Cross-grain first flexural", "490");
    harness.get_by_label_contains("25 mm thick but only 5 mm wide");
    // Swapped, it is a bar, and the along/across ratio appears.
    set_field(&mut harness, "Cross-grain width", "25");
    set_field(&mut harness, "Cross-grain thickness", "5");
    let across = bar_figures(&BarSample {
        length_mm: 120.0,
        width_mm: 25.0,
        thickness_mm: 5.0,
        mass_g: 6.75,
        flexural_hz: Some(490.0),
        second_flexural_hz: None,
        longitudinal_hz: None,
    })
    .unwrap();
    let ratio = figures.youngs_modulus_pa / across.youngs_modulus_pa;
    harness.get_by_label(&format!("E along / E across: {ratio:.1}"));

    // The button sits below the fold of an 800-point window.
    harness.get_by_label("Keep in the build").scroll_to_me();
    harness.run_ok();
    harness.get_by_label("Keep in the build").click();
    harness.run_ok();
    let build = harness.state().build().expect("a build");
    assert_eq!(build.stock().len(), 1, "{:?}", harness.state().status());
    let kept = &build.stock()[0];
    assert_eq!(kept.name, "wedge 1");
    assert_eq!(kept.along_grain.as_ref(), Some(&bar));
    // The stock list shows it.
    harness.get_by_label("Stock list");
    assert!(harness.query_all_by_label("wedge 1").count() >= 1);
}
