//! The window and `tapwright analyze` on the same real recording: a real
//! strike of the corpus (`tests/data/real/`, the FluidR3 sound font's
//! marimba, xylophone and wood block; see its README) made into the
//! issue's file (three copies, 0.3 s of quiet before each, faint room
//! noise), written as a WAV, opened in the window by its path as a maker
//! would, and given to the binary. Both go through the same gathering loop
//! (`analysis::TapGatherer`) with the same default settings, so the window
//! must list the same taps, refuse the same ones for the same reasons, and
//! list the same modes, value for value.

mod common;
mod real;

use common::*;

use egui_kittest::kittest::Queryable;
use std::path::Path;
use std::process::Command;

/// A bar, a wood block and a xylophone bar, of different channels.
const FILES: [&str; 3] = [
    "marimba_c4_left.wav",
    "wood_block_low_left.wav",
    "xylophone_fs4_right.wav",
];

fn analyze_json(path: &Path) -> serde_json::Value {
    let out = Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .arg("analyze")
        .arg(path)
        .arg("--json")
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn the_window_lists_what_analyze_lists_for_a_real_file() {
    let corpus = real::load_corpus();
    let folder = tempfile::tempdir().unwrap();
    for name in FILES {
        let sample = corpus.iter().find(|s| s.file == name).unwrap();
        let path = folder.path().join(name);
        let samples = real::three_strikes(sample, 1);
        tapwright::wav_io::write_mono(&path, sample.sample_rate_hz as u32, &samples, true).unwrap();
        let cli = analyze_json(&path);

        let mut harness = demo_harness();
        harness.run_ok();
        open_by_path(&mut harness, &path);
        let app = harness.state();

        let taps = app.session().taps();
        assert_eq!(
            taps.len() as u64,
            cli["taps_found"].as_u64().unwrap(),
            "{name}"
        );
        let kept = taps.iter().filter(|t| app.session().is_kept(t)).count();
        assert_eq!(kept as u64, cli["taps_used"].as_u64().unwrap(), "{name}");
        let refused: Vec<serde_json::Value> = taps
            .iter()
            .filter_map(|t| {
                t.rejected
                    .map(|reason| serde_json::json!({ "index": t.index, "reason": reason }))
            })
            .collect();
        assert_eq!(
            serde_json::Value::from(refused),
            cli["taps_rejected"],
            "{name}"
        );

        let window_modes = &app.pass().expect("a pass").modes;
        let cli_modes = cli["modes"].as_array().unwrap();
        assert!(!cli_modes.is_empty(), "{name}");
        assert_eq!(window_modes.len(), cli_modes.len(), "{name}");
        for (shown, printed) in window_modes.iter().zip(cli_modes) {
            let shown = serde_json::to_value(shown).unwrap();
            for (field, value) in shown.as_object().unwrap() {
                // serde_json reads a printed float back to within one unit
                // in the last place (exactly only with its float_roundtrip
                // feature): equal to 1e-12, not bit for bit.
                let (a, b) = (printed[field].as_f64(), value.as_f64());
                let same = match (a, b) {
                    (Some(a), Some(b)) => (a - b).abs() <= 1e-12 * a.abs().max(b.abs()),
                    _ => &printed[field] == value,
                };
                assert!(
                    same,
                    "{name}: {field} {value} in the window, {} printed",
                    printed[field]
                );
            }
        }
        // What the maker reads: each mode's frequency in the list.
        for mode in window_modes {
            harness.get_by_label(&format!("{:.1} Hz", mode.frequency_hz));
        }
    }
}
