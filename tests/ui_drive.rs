//! The Drive area of the workbench window, driven through its accessibility
//! tree with egui_kittest (no GPU, no display): the controls and the
//! caution are there, a mode is picked from Listen and from the Ledger, a
//! start without an output device says why in one sentence, and a tone on
//! the virtual output starts, stops on Escape, and fades out when the
//! window goes.

mod common;
use common::*;

use std::time::Duration;

use eframe::egui;
use egui::accesskit::Role;
use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::audio::tone::{DEFAULT_LEVEL_CAP_DB, DEFAULT_LEVEL_DB};
use tapwright::audio::{OutputChoice, ToneState};
use tapwright::ui::{AppOptions, Area, TapwrightApp};

fn drive_harness(options: AppOptions) -> Harness<'static, TapwrightApp> {
    let mut harness = harness_with(options);
    harness.run_ok();
    harness.get_by_label("Drive").click();
    harness.run_ok();
    assert_eq!(harness.state().area(), Area::Drive);
    harness
}

fn virtual_options() -> AppOptions {
    AppOptions {
        drive_output: OutputChoice::Virtual {
            sample_rate_hz: 48_000,
        },
        ..demo_options()
    }
}

fn field_value(harness: &Harness<'_, TapwrightApp>, label: &str) -> String {
    harness
        .get_by_label(label)
        .value()
        .unwrap_or_else(|| panic!("the field {label} has no value"))
}

fn tone_state(app: &TapwrightApp) -> Option<ToneState> {
    app.drive().tone_state()
}

#[test]
fn the_controls_and_the_caution_are_there() {
    let harness = drive_harness(virtual_options());
    for label in [
        "Frequency",
        "Fine tune",
        "Sweep width",
        "Sweep period",
        "Level cap",
        "Start",
        "Stop",
    ] {
        harness.get_by_label(label);
    }
    harness.get_by_role_and_label(Role::Slider, "Level");
    harness.get_by_label_contains("Loud tones damage hearing and loudspeakers");
    harness.get_by_label_contains("follow your local rules");
    let settings = harness.state().drive().settings();
    assert_eq!(settings.level_cap_db, DEFAULT_LEVEL_CAP_DB);
    assert_eq!(settings.level_db, DEFAULT_LEVEL_DB);
    assert!(settings.level_db <= settings.level_cap_db);
    harness.get_by_label("No tone.");
}

#[test]
fn a_mode_is_picked_from_listen_and_from_the_ledger() {
    let mut harness = harness_with(AppOptions {
        sample_build_with_demo: true,
        ..virtual_options()
    });
    demo_finished(&mut harness);
    harness.get_by_label("Drive").click();
    harness.run_ok();

    // From Listen: the demo's mode 5 (labelled by the app on the demo).
    let pass = harness.state().pass().cloned().expect("the demo pass");
    let labels = harness.state().session().mode_labels().to_vec();
    let index = labels
        .iter()
        .position(|l| l.as_deref() == Some("mode 5"))
        .expect("mode 5 labelled on the demo");
    let mode5_hz = pass.modes[index].frequency_hz;
    harness
        .get_by_label(&format!("Drive at {mode5_hz:.1} Hz (mode 5)"))
        .click();
    harness.run_ok();
    assert_eq!(field_value(&harness, "Frequency"), format!("{mode5_hz:.2}"));
    assert_eq!(harness.state().drive().settings().frequency_hz, mode5_hz);
    harness.get_by_label("Frequency: mode 5 from Listen.");

    // From the Ledger: the sample build's first part, latest pass.
    let build = harness.state().build().cloned().expect("the sample build");
    let part = &build.parts()[0];
    let pass = part.passes().last().expect("a pass");
    let title = format!("{}, pass {}", part.name(), pass.number());
    harness.get_by_label(&title);
    let mode = pass
        .modes()
        .iter()
        .find(|m| m.label_name().is_some())
        .expect("a labelled mode");
    let label = mode.label_name().expect("label");
    harness
        .get_by_label(&format!("Drive at {:.1} Hz ({label})", mode.frequency_hz))
        .click();
    harness.run_ok();
    assert_eq!(
        field_value(&harness, "Frequency"),
        format!("{:.2}", mode.frequency_hz)
    );
    harness.get_by_label(&format!("Frequency: {label} from {title}."));
}

#[test]
fn a_typed_frequency_is_used_and_a_bad_one_refused_in_a_sentence() {
    let mut harness = drive_harness(virtual_options());
    let field = harness.get_by_label("Frequency");
    field.set_text_value_accesskit("233.3");
    harness.run_ok();
    assert_eq!(harness.state().drive().settings().frequency_hz, 233.3);
    harness
        .get_by_label("Frequency")
        .set_text_value_accesskit("loud");
    harness.run_ok();
    harness.get_by_label("\"loud\" is not a frequency in Hz.");
    harness
        .get_by_label("Frequency")
        .set_text_value_accesskit("3");
    harness.run_ok();
    harness.get_by_label_contains("A drive frequency of 3 Hz is outside 20 to 20000 Hz.");
}

#[test]
fn start_without_an_output_device_says_why_in_one_sentence() {
    let mut harness = drive_harness(AppOptions {
        drive_output: OutputChoice::Device(Some("no such loudspeaker 97".to_owned())),
        ..demo_options()
    });
    harness.get_by_label("Start").click();
    step_until(&mut harness, "the output to fail", |app| {
        !app.drive().is_opening() && app.drive().note().is_some()
    });
    harness.get_by_label_contains("no such loudspeaker 97");
    let sentence = harness
        .state()
        .drive()
        .note()
        .unwrap_or_default()
        .to_owned();
    assert!(
        sentence.starts_with("No output device is called 'no such loudspeaker 97'"),
        "{sentence}"
    );
    assert!(
        sentence.ends_with('.') && !sentence.contains('\n'),
        "{sentence:?}"
    );
    assert_eq!(tone_state(harness.state()), None);
    harness.get_by_label("No tone.");
}

#[test]
fn a_tone_starts_stops_on_escape_and_starts_again() {
    let mut harness = drive_harness(virtual_options());
    harness.get_by_label("Start").click();
    step_until(&mut harness, "the tone to reach its level", |app| {
        tone_state(app) == Some(ToneState::Steady)
    });
    harness.get_by_label_contains("Playing: 200.00 Hz, \u{2212}30.0 dBFS, on virtual output");

    harness.key_press(egui::Key::Escape);
    harness.run_ok();
    harness.get_by_label("Stopped: the tone fades out.");
    step_until(&mut harness, "the fade-out", |app| {
        matches!(
            tone_state(app),
            Some(ToneState::FadingOut | ToneState::Silent) | None
        )
    });
    // Once faded out, the output is closed.
    step_until(&mut harness, "the output to close", |app| {
        tone_state(app).is_none()
    });
    harness.get_by_label("No tone.");

    // Start again, and Escape from another area stops it too.
    harness.get_by_label("Start").click();
    step_until(&mut harness, "the tone again", |app| {
        tone_state(app) == Some(ToneState::Steady)
    });
    harness.get_by_label("Listen").click();
    harness.run_ok();
    harness.key_press(egui::Key::Escape);
    harness.run_ok();
    step_until(&mut harness, "the output to close", |app| {
        tone_state(app).is_none()
    });
}

#[test]
fn closing_the_window_fades_the_tone_out() {
    let mut harness = drive_harness(virtual_options());
    harness.get_by_label("Start").click();
    step_until(&mut harness, "the tone to reach its level", |app| {
        tone_state(app) == Some(ToneState::Steady)
    });
    let controls = harness.state().drive().controls().expect("an open output");
    let frames_before = controls.frames_rendered();
    drop(harness);
    // The app went only after the fade-out (12 000 frames at 48 kHz) and
    // the tail had been rendered.
    assert_eq!(controls.state(), ToneState::Silent);
    assert!(controls.is_finished());
    assert!(controls.frames_rendered() > frames_before + 12_000);
    // And the output thread has stopped rendering.
    let frames_closed = controls.frames_rendered();
    std::thread::sleep(Duration::from_millis(50));
    assert_eq!(controls.frames_rendered(), frames_closed);
}
