//! The bundled demo recording is exactly what the generator in
//! `tapwright::demo` makes (set TAPWRIGHT_REGENERATE_ASSETS=1 to rewrite it),
//! and the analysis finds the invented plate's modes in it.

use std::path::Path;

use tapwright::analysis::{analyze_recording, AnalysisSettings, RejectReason, TriggerSettings};
use tapwright::demo::{
    demo_plate_modes, demo_recording, synthesize_demo_plate, DEMO_WAV_BYTES, DEMO_WAV_NAME,
};
use tapwright::wav_io::write_mono;

#[test]
fn bundled_recording_matches_generator() {
    let generated = synthesize_demo_plate();
    let dir = tempfile::tempdir().unwrap();
    let fresh = dir.path().join(DEMO_WAV_NAME);
    write_mono(&fresh, generated.sample_rate_hz, &generated.samples, true).unwrap();
    let fresh_bytes = std::fs::read(&fresh).unwrap();
    if std::env::var("TAPWRIGHT_REGENERATE_ASSETS").as_deref() == Ok("1") {
        let target = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("assets")
            .join(DEMO_WAV_NAME);
        std::fs::write(&target, &fresh_bytes).unwrap();
        eprintln!("rewrote {}", target.display());
        return;
    }
    assert!(
        fresh_bytes == DEMO_WAV_BYTES,
        "assets/{DEMO_WAV_NAME} differs from the generator; run with TAPWRIGHT_REGENERATE_ASSETS=1 and rebuild"
    );
}

#[test]
fn demo_shows_the_invented_plate() {
    let recording = demo_recording().unwrap();
    let report = analyze_recording(
        &recording.samples,
        f64::from(recording.sample_rate_hz),
        &TriggerSettings::default(),
        &AnalysisSettings::default(),
    );
    assert_eq!(report.taps.len(), 6, "{:?}", report.rejected());
    assert_eq!(report.rejected().len(), 1);
    assert_eq!(report.rejected()[0].reason, RejectReason::DoubleStrike);
    for truth in demo_plate_modes() {
        let found = report
            .pass
            .modes
            .iter()
            .find(|m| (m.frequency_hz - truth.frequency_hz).abs() < 0.5)
            .unwrap_or_else(|| {
                panic!(
                    "{} Hz missing from {:?}",
                    truth.frequency_hz, report.pass.modes
                )
            });
        // The generator jitters each tap's frequencies by ±0.02 %.
        assert!(
            (found.frequency_hz / truth.frequency_hz - 1.0).abs() < 3e-4,
            "{found:?}"
        );
        assert!(
            (found.q / truth.q - 1.0).abs() < 0.1,
            "{found:?} vs Q {}",
            truth.q
        );
    }
}
