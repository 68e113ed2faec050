//! The Ledger area of the workbench window, driven through its
//! accessibility tree with egui_kittest (no GPU, no display): a sample build
//! with its parts, pass table, changes and forecasts; a new build with a part
//! and a pass recorded from the Listen result; a target and its forecast;
//! saving, closing and opening again; labels to confirm; refusals inline.

mod common;
use common::*;

use std::path::Path;

use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::demo::SAMPLE_BUILDS;
use tapwright::ledger::{store, Build};
use tapwright::ui::{AppCommand, TapwrightApp};

fn build(harness: &Harness<'_, TapwrightApp>) -> Build {
    harness.state().build().cloned().expect("an open build")
}

/// How the area writes numbers: fixed decimals, true minus sign.
fn on_screen(value: f64, decimals: usize) -> String {
    format!("{value:.decimals$}").replace('-', "\u{2212}")
}

fn signed_on_screen(value: f64, decimals: usize) -> String {
    format!("{value:+.decimals$}").replace('-', "\u{2212}")
}

fn open_sample_violin(harness: &mut Harness<'_, TapwrightApp>) {
    click(harness, "Ledger");
    click(harness, "Sample builds");
    click(harness, SAMPLE_BUILDS[0].title);
    harness.run_ok();
    assert!(build(harness).name.contains("Wren"));
}

#[test]
fn a_sample_build_shows_its_parts_changes_forecasts_and_top_against_back() {
    let mut harness = harness_with(demo_options());
    harness.run_ok();
    open_sample_violin(&mut harness);
    let violin = build(&harness);
    let top = violin.part("Top").expect("the sample's top");
    let back = violin.part("Back").expect("the sample's back");
    harness.get_by_label("Top — top plate, 7 passes");
    harness.get_by_label("Back — back plate, 7 passes");
    harness.get_by_label_contains("Body — assembled body");

    // Mode 5 in the latest pass of the top, and its change against the
    // previous and the first pass, worked out here from the stored modes
    // (cents: 1200·log2(f/f_ref), the definition of the cent).
    let f = |pass: u32| {
        top.pass(pass)
            .and_then(|p| p.mode_labelled("mode 5"))
            .map(|m| m.frequency_hz)
            .unwrap()
    };
    let (f1, f6, f7) = (f(1), f(6), f(7));
    harness.get_by_label(&format!("{} Hz", on_screen(f7, 2)));
    let change = |from: f64| {
        format!(
            "{} Hz {}% {} ct",
            signed_on_screen(f7 - from, 2),
            signed_on_screen(100.0 * (f7 / from - 1.0), 2),
            signed_on_screen(1200.0 * (f7 / from).log2(), 0)
        )
    };
    harness.get_by_label(&change(f6));
    harness.get_by_label(&change(f1));

    // The sample sets targets on the top; its forecasts are shown in words.
    let forecast = top.forecast("mode 5").expect("a forecast for mode 5");
    harness.get_by_label_contains(&format!(
        "mode 5: remove about {} g",
        on_screen(forecast.mass_to_remove_g, 1)
    ));
    // Both targets (mode 2 and mode 5) use the fit over the 7 passes.
    assert_eq!(
        harness
            .query_all_by_label_contains("fitted to this part's own 7 passes")
            .count(),
        2
    );

    // Top against back: the mode 5 interval in semitones,
    // 12·log2(f_back/f_top) (equal temperament).
    let back5 = back
        .latest_pass()
        .and_then(|p| p.mode_labelled("mode 5"))
        .unwrap()
        .frequency_hz;
    let semitones = 12.0 * (back5 / f7).log2();
    harness.get_by_label_contains(&format!(
        "Mode 5 interval: {} semitones",
        signed_on_screen(semitones, 2)
    ));

    // Another part: its own table.
    click(&mut harness, "Body — assembled body, 1 pass");
    let a0_hz = violin
        .part("Body")
        .and_then(|p| p.pass(1))
        .and_then(|p| p.mode_labelled("A0"))
        .expect("the sample body's A0")
        .frequency_hz;
    harness.get_by_label(&format!("{} Hz", on_screen(a0_hz, 2)));
    harness.get_by_label("Target for B1\u{2212} (Hz)");
    // The spectra of chosen passes.
    click(&mut harness, "Top — top plate, 7 passes");
    click(&mut harness, "Spectra");
    // First and latest overlaid at first (tick box and legend entry each).
    assert_eq!(harness.query_all_by_label("pass 1").count(), 2);
    assert_eq!(harness.query_all_by_label("pass 7").count(), 2);
    // Ticking pass 3 adds its curve (and its legend entry).
    assert_eq!(harness.query_all_by_label("pass 3").count(), 1);
    click(&mut harness, "pass 3");
    assert_eq!(harness.query_all_by_label("pass 3").count(), 2);
}

#[test]
fn a_new_build_gets_a_part_a_recorded_pass_a_target_and_comes_back_after_reopening() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("bench violin.ron");

    let mut harness = harness_with(demo_options());
    demo_finished(&mut harness);
    click(&mut harness, "Ledger");
    harness.get_by_label("No build is open");

    click(&mut harness, "New build…");
    type_into(&mut harness, "Build name", "Invented violin No. 3");
    click(&mut harness, "Start the build");
    assert_eq!(build(&harness).name, "Invented violin No. 3");
    harness.get_by_label("unsaved changes");

    click(&mut harness, "Add a part…");
    click(&mut harness, "Add the part");
    assert_eq!(build(&harness).parts().len(), 1);
    harness.get_by_label("Top — top plate, 0 passes");
    assert_eq!(harness.state().listen_part(), Some("Top"));

    // Record the Listen result (the demo plate, with its mode 2 and mode 5
    // labelled) as pass 1 with a mass, a thickness reading and a note.
    type_into(&mut harness, "Mass (g)", "71.5");
    click(&mut harness, "Add a reading");
    type_into(&mut harness, "Point 1", "centre");
    type_into(&mut harness, "Thickness at point 1 (mm)", "2,8");
    type_into(&mut harness, "Note", "first look");
    click(&mut harness, "Record pass 1");
    harness.run_ok();
    let recorded = build(&harness);
    let pass = recorded.part("Top").unwrap().pass(1).expect("pass 1");
    assert_eq!(pass.mass_g, 71.5);
    assert_eq!(pass.thickness.len(), 1);
    assert_eq!(pass.thickness[0].thickness_mm, 2.8);
    assert_eq!(pass.note, "first look");
    assert!(pass.spectrum.is_some(), "the averaged spectrum is kept");
    let mode5_hz = pass.mode_labelled("mode 5").expect("mode 5").frequency_hz;
    // The demo plate's mode 5 is at 338 Hz (src/demo.rs, invented plate).
    assert!((mode5_hz - 338.0).abs() < 1.0);
    harness.get_by_label("Recorded pass 1 of \"Top\" (71.50 g).");
    harness.get_by_label("Pass 1");
    harness.get_by_label("71.50 g");
    harness.get_by_label(&format!("{} Hz", on_screen(mode5_hz, 2)));

    // A target, and its forecast: with one pass the uniform-thinning rule
    // f ∝ m gives m_target = m·f_target/f (thin-plate scaling, Fletcher &
    // Rossing, The Physics of Musical Instruments, ch. 3).
    type_into(&mut harness, "Target for mode 5 (Hz)", "330");
    click(&mut harness, "Set the target for mode 5");
    assert_eq!(
        build(&harness).part("Top").unwrap().targets().get("mode 5"),
        Some(&330.0)
    );
    let remove_g = 71.5 * (1.0 - 330.0 / mode5_hz);
    harness.get_by_label_contains(&format!(
        "mode 5: remove about {} g",
        on_screen(remove_g, 1)
    ));
    harness.get_by_label_contains("uniform-thinning rule");
    harness.get_by_label_contains("only 1 pass so far");
    harness.get_by_label_contains("Mean thickness from 2.80 mm");

    // Save to a typed path.
    type_into(&mut harness, "File path", &path.display().to_string());
    click(&mut harness, "Save here");
    step_until(&mut harness, "the save", |app| !app.is_busy());
    harness.run_ok();
    harness.get_by_label("all changes saved");
    let on_disk = store::load(&path).unwrap();
    assert_eq!(on_disk.part("Top").unwrap().passes().len(), 1);

    // A second pass is saved with the build at once (the build has a file).
    type_into(&mut harness, "Mass (g)", "70");
    click(&mut harness, "Record pass 2");
    step_until(&mut harness, "the save after the pass", |app| {
        !app.is_busy()
    });
    harness.run_ok();
    let on_disk = store::load(&path).unwrap();
    assert_eq!(on_disk.part("Top").unwrap().passes().len(), 2);
    harness.get_by_label_contains("Labels carried over:");

    // Close the build, then close the window and open it again on the file.
    click(&mut harness, "Close build");
    assert!(harness.state().build().is_none());
    harness.get_by_label("No build is open");
    drop(harness);

    let mut harness = opened_on_build(&path);
    click(&mut harness, "Ledger");
    harness.get_by_label("Invented violin No. 3");
    harness.get_by_label("Top — top plate, 2 passes");
    harness.get_by_label("70.00 g");
    harness.get_by_label("71.50 g");
    harness.get_by_label("first look");
    harness.get_by_label_contains("mode 5: remove about");
    let reopened = build(&harness);
    assert_eq!(reopened, on_disk);
    assert_eq!(
        harness
            .get_by_label("Target for mode 5 (Hz)")
            .value()
            .as_deref(),
        Some("330.0")
    );
}

#[test]
fn a_label_to_confirm_is_marked_confirmed_and_moved() {
    let mut harness = harness_with(demo_options());
    harness.run_ok();
    click(&mut harness, "Ledger");
    // The violin sample with the top's mode 1 in pass 7 (its 7th mode 1
    // label) marked as needing confirmation.
    let marker = "(name: \"mode 1\", needs_confirmation: false)";
    let text = SAMPLE_BUILDS[0].text;
    let at = text
        .match_indices(marker)
        .nth(6)
        .expect("pass 7's mode 1")
        .0;
    let changed = format!(
        "{}(name: \"mode 1\", needs_confirmation: true){}",
        &text[..at],
        &text[at + marker.len()..]
    );
    let sample = store::from_ron_text(&changed, Path::new("changed.ron")).unwrap();
    let top = sample.part("Top").unwrap();
    assert!(top
        .pass(7)
        .unwrap()
        .mode_labelled("mode 1")
        .unwrap()
        .label_needs_confirmation());
    harness.state_mut().queue(AppCommand::NewBuild {
        name: sample.name.clone(),
        family: sample.family(),
    });
    harness.state_mut().queue(AppCommand::EditBuild {
        description: "loading the test build".into(),
        edit: Box::new(move |b| {
            *b = sample;
            Ok(String::new())
        }),
    });
    harness.run_ok();

    harness.get_by_label("to confirm");
    click(&mut harness, "Confirm mode 1 in pass 7");
    let confirmed = build(&harness);
    let mode = confirmed
        .part("Top")
        .unwrap()
        .pass(7)
        .unwrap()
        .mode_labelled("mode 1")
        .unwrap()
        .clone();
    assert!(!mode.label_needs_confirmation());
    assert!(harness.query_by_label("to confirm").is_none());

    // Take the label off that mode through the pass's mode list.
    click(&mut harness, "Pass 7");
    click(
        &mut harness,
        &format!(
            "Label of the mode at {} Hz in pass 7",
            on_screen(mode.frequency_hz, 2)
        ),
    );
    click(&mut harness, "no label");
    let after = build(&harness);
    assert!(after
        .part("Top")
        .unwrap()
        .pass(7)
        .unwrap()
        .mode_labelled("mode 1")
        .is_none());
}

#[test]
fn refusals_are_one_sentence_beside_the_form() {
    let mut harness = harness_with(demo_options());
    harness.run_ok();
    open_sample_violin(&mut harness);

    // A second part named "Top" (the form starts empty for a fourth part).
    click(&mut harness, "Add a part…");
    type_into(&mut harness, "Part name", "Top");
    click(&mut harness, "Add the part");
    harness.get_by_label("The build already has a part named \"Top\".");
    assert_eq!(build(&harness).parts().len(), 3);

    // A target that is not a number.
    type_into(&mut harness, "Target for mode 1 (Hz)", "abc");
    click(&mut harness, "Set the target for mode 1");
    harness.get_by_label("The target for mode 1 \"abc\" is not a number.");

    // A CSV path where a build file is expected.
    type_into(&mut harness, "File path", "/tmp/not-a-build.csv");
    click(&mut harness, "Open this file");
    harness.get_by_label_contains("but this needs a .ron file.");
}

#[test]
fn the_latest_pass_and_a_part_can_be_taken_out_after_asking() {
    let mut harness = demo_harness();
    harness.run_ok();
    open_sample_violin(&mut harness);
    click(&mut harness, "Top — top plate, 7 passes");
    let top_passes = |h: &Harness<'_, TapwrightApp>| build(h).part("Top").map(|p| p.passes().len());
    assert_eq!(top_passes(&harness), Some(7));

    // Asking first: "No" keeps everything.
    click(&mut harness, "Undo the latest pass");
    harness.get_by_label("Take pass 7 out of \"Top\"?");
    click(&mut harness, "No, keep it");
    assert_eq!(top_passes(&harness), Some(7));

    click(&mut harness, "Undo the latest pass");
    click(&mut harness, "Yes, take it out");
    assert_eq!(top_passes(&harness), Some(6));
    assert!(harness.state().build_unsaved());

    click(&mut harness, "Top — top plate, 6 passes");
    click(&mut harness, "Remove this part");
    click(&mut harness, "Yes, take it out");
    assert_eq!(top_passes(&harness), None);
    assert!(build(&harness).part("Back").is_some());
}

#[test]
fn a_mistyped_mass_can_be_corrected() {
    let mut harness = demo_harness();
    harness.run_ok();
    open_sample_violin(&mut harness);
    click(&mut harness, "Top — top plate, 7 passes");
    click(&mut harness, "Pass 7");
    click(&mut harness, "Correct the mass or note");
    harness
        .get_by_label("Corrected mass (g)")
        .set_text_value_accesskit("0");
    harness.run_ok();
    click(&mut harness, "Save the changes to pass 7");
    // Refused inline; the build keeps its mass.
    harness.get_by_label("The mass must be a number of grams above 0.");
    harness
        .get_by_label("Corrected mass (g)")
        .set_text_value_accesskit("66.9");
    harness
        .get_by_label("Corrected note")
        .set_text_value_accesskit("Reweighed on the bench scale.");
    harness.run_ok();
    click(&mut harness, "Save the changes to pass 7");
    let top = build(&harness).part("Top").unwrap().clone();
    let pass = top.pass(7).unwrap();
    assert_eq!(pass.mass_g, 66.9);
    assert_eq!(pass.note, "Reweighed on the bench scale.");
}

/// "Save report here" writes the build report of the open build to the
/// typed path (off the window's thread), with every part and the stock,
/// and says so; a path of another kind is refused in one sentence.
#[test]
fn the_build_report_is_saved_from_the_ledger() {
    let folder = tempfile::tempdir().expect("temporary folder");
    let path = folder.path().join("wren report.html");
    let mut harness = harness_with(demo_options());
    harness.run_ok();
    open_sample_violin(&mut harness);
    harness.get_by_label("Save report…");

    type_into(&mut harness, "File path", &path.display().to_string());
    click(&mut harness, "Save report here");
    let deadline = std::time::Instant::now() + PATIENCE;
    while harness
        .query_by_label_contains("Wrote the build report to")
        .is_none()
    {
        assert!(std::time::Instant::now() < deadline, "no report note");
        harness.step();
        std::thread::sleep(std::time::Duration::from_millis(5));
    }
    let html = std::fs::read_to_string(&path).expect("the report was written");
    let violin = build(&harness);
    assert!(html.starts_with("<!DOCTYPE html>"), "{}", &html[..40]);
    for part in violin.parts() {
        assert!(html.contains(&format!("data-part=\"{}\"", part.name())));
    }
    for sample in violin.stock() {
        assert!(html.contains(&sample.name), "{}", sample.name);
    }

    let mut harness = harness_with(demo_options());
    harness.run_ok();
    open_sample_violin(&mut harness);
    type_into(&mut harness, "File path", "/tmp/wren.csv");
    click(&mut harness, "Save report here");
    harness.get_by_label_contains("but this needs a .html file");
}
