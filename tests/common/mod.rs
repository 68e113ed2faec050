//! What the tests share. Here: every tap of a recording found and measured
//! with the default settings; the real app in a kittest harness on the
//! bundled demo recording, bounded waits for background work, a new build
//! with one part, and typing into a form field. In `alsa`: the end-to-end
//! ALSA set-up.
#![allow(dead_code)] // each test file uses its own subset

#[cfg(target_os = "linux")]
pub mod alsa;

use std::time::{Duration, Instant};

use eframe::egui;
use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::analysis::{analyze_recording, AnalysisSettings, RecordingReport, TriggerSettings};
use tapwright::audio::Pacing;
use tapwright::ledger::{Family, PartKind};
use tapwright::ui::{AppCommand, AppOptions, SourceState, StartSource, TapwrightApp};

/// Upper bound on waiting for background work, so a broken build fails
/// instead of hanging (not a speed check).
pub const PATIENCE: Duration = Duration::from_secs(60);

/// The real app with these options, 1280×800, no display or GPU.
pub fn harness_with(options: AppOptions) -> Harness<'static, TapwrightApp> {
    Harness::builder()
        .with_size(egui::vec2(1280.0, 800.0))
        .build_ui_state(
            |ui, app: &mut TapwrightApp| app.show(ui),
            TapwrightApp::new(options),
        )
}

/// The bundled demo recording, delivered as fast as the capture worker
/// takes it (no sound device needed).
pub fn demo_options() -> AppOptions {
    AppOptions {
        source: StartSource::Demo,
        demo_pacing: Pacing::AsFastAsPossible,
        ..AppOptions::default()
    }
}

/// The real app on the demo recording.
pub fn demo_harness() -> Harness<'static, TapwrightApp> {
    harness_with(demo_options())
}

/// Steps frames until `done`, failing after [`PATIENCE`].
pub fn step_until(
    harness: &mut Harness<'_, TapwrightApp>,
    what: &str,
    done: impl Fn(&TapwrightApp) -> bool,
) {
    let deadline = Instant::now() + PATIENCE;
    while !done(harness.state()) {
        assert!(Instant::now() < deadline, "gave up waiting for {what}");
        harness.step();
        std::thread::sleep(Duration::from_millis(5));
    }
    harness.run_ok();
}

/// Types `path` into the window's Path field and opens it, as a maker
/// would; returns once the recording is read and measured.
pub fn open_by_path(harness: &mut Harness<'_, TapwrightApp>, path: &std::path::Path) {
    let field = harness.get_by_label("Path");
    field.focus();
    field.type_text(&path.display().to_string());
    harness.run_ok();
    harness.get_by_label("Open").click();
    let expected = SourceState::File(path.to_path_buf());
    step_until(harness, "the opened recording", |app| {
        app.input().state == expected && !app.is_busy()
    });
}

/// The real app on the demo recording with the build file at `path`
/// opened at start, once it has loaded.
pub fn opened_on_build(path: &std::path::Path) -> Harness<'static, TapwrightApp> {
    let mut harness = harness_with(AppOptions {
        build: Some(path.to_path_buf()),
        ..demo_options()
    });
    step_until(&mut harness, "the build to load", |app| {
        app.build().is_some() && !app.is_busy()
    });
    harness
}

/// Waits until the demo recording has been played and analysed.
pub fn demo_finished(harness: &mut Harness<'_, TapwrightApp>) {
    step_until(harness, "the demo taps", |app| {
        app.input().state == SourceState::Ended && !app.is_busy()
    });
}

/// Clicks the widget labelled `label` and lets the frame settle.
pub fn click(harness: &mut Harness<'_, TapwrightApp>, label: &str) {
    harness.get_by_label(label).click();
    harness.run_ok();
}

/// Types `text` into the field labelled `label`, key by key (as a maker
/// would; [`set_field`] replaces the value at once).
pub fn type_into(harness: &mut Harness<'_, TapwrightApp>, label: &str, text: &str) {
    let field = harness.get_by_label(label);
    field.focus();
    field.type_text(text);
    harness.run_ok();
}

/// Replaces the text of the field labelled `label`.
pub fn set_field(harness: &mut Harness<'_, TapwrightApp>, label: &str, text: &str) {
    harness.get_by_label(label).set_text_value_accesskit(text);
    harness.run_ok();
}

/// The text in the field labelled `label`.
pub fn field_value(harness: &Harness<'_, TapwrightApp>, label: &str) -> String {
    harness
        .get_by_label(label)
        .value()
        .unwrap_or_else(|| panic!("the field {label} has no value"))
}

/// Queues a new build with one part, as the Ledger area would; `done` is
/// the sentence the edit reports.
pub fn queue_build_with_part(
    app: &mut TapwrightApp,
    (name, family): (&str, Family),
    (part, kind): (&'static str, PartKind),
    done: &'static str,
) {
    app.queue(AppCommand::NewBuild {
        name: name.into(),
        family,
    });
    app.queue(AppCommand::EditBuild {
        description: format!("adding the {part}"),
        edit: Box::new(move |build| {
            build.add_part(part, kind.clone())?;
            Ok(done.into())
        }),
    });
}

/// Every tap of a recording found, measured and combined with the default
/// trigger and analysis settings.
pub fn analyze_with_defaults(samples: &[f32], sample_rate_hz: f64) -> RecordingReport {
    analyze_recording(
        samples,
        sample_rate_hz,
        &TriggerSettings::default(),
        &AnalysisSettings::default(),
    )
}
