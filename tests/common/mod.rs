//! What the window tests share: the real app in a kittest harness on the
//! bundled demo recording, and bounded waits for background work.
#![allow(dead_code)] // each test file uses its own subset

use std::time::{Duration, Instant};

use eframe::egui;
use egui_kittest::Harness;
use tapwright::capture::Pacing;
use tapwright::ui::{AppOptions, SourceState, StartSource, TapwrightApp};

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

/// Waits until the demo recording has been played and analysed.
pub fn demo_finished(harness: &mut Harness<'_, TapwrightApp>) {
    step_until(harness, "the demo taps", |app| {
        app.input().state == SourceState::Ended && !app.is_busy()
    });
}
