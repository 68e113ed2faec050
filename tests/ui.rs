//! The workbench window, driven through its accessibility tree with
//! egui_kittest (no GPU, no display): the real app on the demo recording,
//! taps and modes, labels, leaving a tap out, opening a WAV by path, errors.

mod common;
use common::*;

use eframe::egui;
use egui_kittest::kittest::Queryable;
use tapwright::analysis::synth::{add_modes, NoiseGenerator, SynthMode};
use tapwright::audio::Pacing;
use tapwright::ledger::{Family, PartKind};
use tapwright::ui::{AppCommand, AppOptions, SourceState, StartSource, TapwrightApp};

fn mode_near(app: &TapwrightApp, frequency_hz: f64) -> Option<(usize, f64)> {
    app.pass()?
        .modes
        .iter()
        .enumerate()
        .find(|(_, m)| (m.frequency_hz - frequency_hz).abs() < 1.0)
        .map(|(i, m)| (i, m.frequency_hz))
}

#[test]
fn demo_taps_and_modes_appear_in_the_lists() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);

    // Six strikes, the fourth a double strike (src/demo.rs: invented plate,
    // strike schedule known exactly).
    for n in 1..=6 {
        harness.get_by_label(&format!("Tap {n}"));
    }
    harness.get_by_label("double strike");
    assert!(
        harness.query_by_label("Leave tap 4 out").is_none(),
        "a rejected tap cannot be left out"
    );
    harness.get_by_label("5 taps averaged");

    // Every mode of the invented plate is found within 1 Hz and shown in the
    // mode list (truth: tapwright::demo::demo_plate_modes, the generator's
    // own values).
    for truth in tapwright::demo::demo_plate_modes() {
        let (_, found_hz) = mode_near(harness.state(), truth.frequency_hz)
            .unwrap_or_else(|| panic!("no mode near {} Hz", truth.frequency_hz));
        harness.get_by_label(&format!("{found_hz:.1} Hz"));
    }
    assert!(!harness
        .query_all_by_label_contains("338.")
        .collect::<Vec<_>>()
        .is_empty());

    // The demo shows the invented plate's mode 2 and mode 5 labelled, as an
    // example, on the modes found there.
    let app = harness.state();
    let labels = app.session().mode_labels();
    assert_eq!(
        labels[mode_near(app, 168.0).unwrap().0].as_deref(),
        Some("mode 2")
    );
    assert_eq!(
        labels[mode_near(app, 338.0).unwrap().0].as_deref(),
        Some("mode 5")
    );
    assert_eq!(labels.iter().flatten().count(), 2);
}

#[test]
fn a_mode_gets_a_label_from_the_set_or_typed() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let (index, hz) = mode_near(harness.state(), 92.0).expect("the lowest mode of the demo plate");

    harness
        .get_by_label(&format!("Label of the mode at {hz:.1} Hz"))
        .click();
    harness.run_ok();
    harness.get_by_label("mode 1").click();
    harness.run_ok();
    assert_eq!(
        harness.state().session().mode_labels()[index].as_deref(),
        Some("mode 1")
    );
    let picker_name = format!("Label of the mode at {hz:.1} Hz");
    let picker = harness.get_by_label(&picker_name);
    assert_eq!(picker.value().as_deref(), Some("mode 1"));

    // An own label, typed.
    let (other, other_hz) = mode_near(harness.state(), 243.0).expect("the 243 Hz mode");
    harness
        .get_by_label(&format!("Label of the mode at {other_hz:.1} Hz"))
        .click();
    harness.run_ok();
    let field = harness.get_by_label("Own label");
    field.focus();
    field.type_text("ring-ish");
    harness.run_ok();
    harness.get_by_label("Use this label").click();
    harness.run_ok();
    let labels = harness.state().session().mode_labels();
    assert_eq!(labels[other].as_deref(), Some("ring-ish"));
    assert_eq!(labels[index].as_deref(), Some("mode 1"));

    // Clearing a label.
    harness.get_by_label(&picker_name).click();
    harness.run_ok();
    harness.get_by_label("no label").click();
    harness.run_ok();
    assert_eq!(harness.state().session().mode_labels()[index], None);
}

#[test]
fn leaving_a_tap_out_changes_the_average_and_taking_it_back_restores_it() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let before = harness.state().pass().cloned().expect("a pass");
    assert_eq!(before.taps_used, 5);

    harness.get_by_label("Leave tap 1 out").click();
    harness.run_ok();
    let fewer = harness.state().pass().cloned().expect("a pass");
    assert_eq!(fewer.taps_used, 4);
    assert_ne!(
        fewer.spectrum, before.spectrum,
        "the averaged spectrum must change"
    );
    harness.get_by_label("4 taps averaged");
    harness.get_by_label("left out");

    harness.get_by_label("Take tap 1 back").click();
    harness.run_ok();
    assert_eq!(harness.state().pass(), Some(&before));
    harness.get_by_label("5 taps averaged");
}

/// Three taps on an invented two-mode part (150 Hz, Q 40; 420 Hz, Q 60),
/// written as a WAV file.
fn write_two_mode_taps(path: &std::path::Path) {
    let rate = 44_100u32;
    let fs = f64::from(rate);
    let mut samples = vec![0.0f64; (4.5 * fs) as usize];
    let modes = [
        SynthMode::new(150.0, 40.0, 0.2),
        SynthMode::new(420.0, 60.0, 0.12),
    ];
    for start_s in [0.5, 1.9, 3.3] {
        add_modes(&mut samples, fs, (start_s * fs) as usize, &modes);
    }
    let mut noise = NoiseGenerator::new(7);
    let samples: Vec<f32> = samples
        .iter()
        .map(|x| (x + 2e-4 * noise.gaussian()) as f32)
        .collect();
    tapwright::wav_io::write_mono(path, rate, &samples, false).unwrap();
}

#[test]
fn a_wav_file_opened_by_typed_path_shows_its_modes() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("two modes.wav");
    write_two_mode_taps(&path);

    let mut harness = demo_harness();
    harness.run_ok();
    open_by_path(&mut harness, &path);

    let app = harness.state();
    assert_eq!(app.session().taps().len(), 3);
    let (_, low) = mode_near(app, 150.0).expect("the 150 Hz mode");
    let (_, high) = mode_near(app, 420.0).expect("the 420 Hz mode");
    harness.get_by_label(&format!("{low:.1} Hz"));
    harness.get_by_label(&format!("{high:.1} Hz"));
    harness.get_by_label("3 taps averaged");
}

#[test]
fn a_file_that_is_not_a_recording_gives_one_clear_sentence() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("notes.wav");
    std::fs::write(&path, "these are notes, not sound").unwrap();

    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let field = harness.get_by_label("Path");
    field.focus();
    field.type_text(&path.display().to_string());
    harness.run_ok();
    harness.get_by_label("Open").click();
    step_until(&mut harness, "the error", |app| {
        app.status().is_some_and(|s| s.is_error) && !app.is_busy()
    });
    let status = harness.state().status().unwrap().text.clone();
    assert!(
        status.contains("notes.wav"),
        "the message names the file: {status}"
    );
    assert!(
        status.ends_with('.') && !status.contains('\n'),
        "one sentence: {status}"
    );
    harness.get_by_label(&status);
    // The demo's pass is still there.
    assert_eq!(harness.state().pass().map(|p| p.taps_used), Some(5));
}

#[test]
fn help_has_the_caution_note_and_the_theme_switches() {
    let mut harness = demo_harness();
    harness.run_ok();
    // A standing pointer to the cautions on every screen.
    harness.get_by_label_contains("see Help for the cautions");
    harness.get_by_label("Help").click();
    harness.run_ok();
    // NIOSH recommended exposure limit, 85 dBA over 8 h; IARC Group 1 for
    // wood dust (IARC Monographs vol. 62 and 100C).
    harness.get_by_label_contains("85 dB(A)");
    harness.get_by_label_contains("IARC Group 1");
    harness.get_by_label_contains("local workshop-safety rules");

    assert_eq!(harness.ctx.theme(), egui::Theme::Dark);
    harness.get_by_label("Light theme").click();
    harness.run_ok();
    assert_eq!(harness.ctx.theme(), egui::Theme::Light);
    harness.get_by_label("Dark theme");
}

#[test]
fn areas_switch_and_a_pass_goes_to_the_ledger_through_commands() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let (index, _) = mode_near(harness.state(), 338.0).expect("mode 5");

    harness.get_by_label("Ledger").click();
    harness.run_ok();
    assert_eq!(harness.state().area(), tapwright::ui::Area::Ledger);
    harness.get_by_label("Listen").click();
    harness.run_ok();

    let app = harness.state_mut();
    queue_build_with_part(
        app,
        ("Invented violin No. 1", Family::Violin),
        ("top", PartKind::TopPlate),
        "Added the top.",
    );
    app.queue(AppCommand::SetListenPart(Some("top".into())));
    harness.run_ok();
    harness.get_by_label("Labels from Invented violin No. 1: top");

    let app = harness.state_mut();
    app.queue(AppCommand::Listen(
        tapwright::ui::ListenCommand::SetModeLabel {
            mode_index: index,
            label: Some("mode 5".into()),
        },
    ));
    harness.run_ok();
    // The command an area builds from the Listen result.
    let app = harness.state();
    let pass = app.pass().unwrap();
    let labels = app.session().mode_labels().to_vec();
    let modes = pass
        .modes
        .iter()
        .map(|m| tapwright::ledger::MeasuredMode {
            frequency_hz: m.frequency_hz,
            q: m.q,
            level_db: m.level_db,
            spread_hz: m.spread_hz,
        })
        .collect();
    let input = tapwright::ledger::PassInput::new(71.5, modes);
    harness.state_mut().queue(AppCommand::RecordPass {
        part: "top".into(),
        input,
        labels,
    });
    harness.run_ok();
    let build = harness.state().build().expect("the build");
    let part = build.part("top").unwrap();
    assert_eq!(part.passes().len(), 1);
    let labelled = part.passes()[0]
        .mode_labelled("mode 5")
        .expect("mode 5 recorded");
    assert!((labelled.frequency_hz - 338.0).abs() < 1.0);
    harness.get_by_label("Build: Invented violin No. 1 (unsaved)");
}

#[test]
fn recorded_pass_is_saved_at_once_when_the_build_has_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("invented.ron");
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let app = harness.state_mut();
    queue_build_with_part(
        app,
        ("Invented viola", Family::Viola),
        ("back", PartKind::BackPlate),
        "",
    );
    app.queue(AppCommand::SaveBuildAs(path.clone()));
    harness.run_ok();
    step_until(&mut harness, "the first save", |app| {
        !app.is_busy() && path.exists()
    });
    let modes = harness
        .state()
        .pass()
        .unwrap()
        .modes
        .iter()
        .map(|m| tapwright::ledger::MeasuredMode {
            frequency_hz: m.frequency_hz,
            q: m.q,
            level_db: m.level_db,
            spread_hz: m.spread_hz,
        })
        .collect();
    let count = harness.state().pass().unwrap().modes.len();
    harness.state_mut().queue(AppCommand::RecordPass {
        part: "back".into(),
        input: tapwright::ledger::PassInput::new(104.0, modes),
        labels: vec![None; count],
    });
    harness.run_ok();
    step_until(&mut harness, "the autosave", |app| !app.is_busy());
    // Nobody pressed save: the file on disk already holds the pass.
    let on_disk = tapwright::ledger::store::load(&path).unwrap();
    let back = on_disk.part("back").unwrap();
    assert_eq!(back.passes().len(), 1);
    assert_eq!(back.passes()[0].mass_g, 104.0);
    harness.get_by_label("Build: Invented viola");
}

#[test]
fn the_demo_opens_with_the_sample_build_when_asked() {
    let mut harness = harness_with(AppOptions {
        source: StartSource::Demo,
        demo_pacing: Pacing::AsFastAsPossible,
        sample_build_with_demo: true,
        ..AppOptions::default()
    });
    harness.run_ok();
    let build = harness.state().build().expect("the sample build");
    assert!(build.parts().len() >= 2, "{:?}", build.parts().len());
    // Without the option (as in the other tests) nothing is opened.
    let plain = demo_harness();
    assert!(plain.state().build().is_none());
}

#[test]
fn a_new_band_measures_the_taps_already_heard_again() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    assert_eq!(harness.state().pass().unwrap().modes.len(), 7);
    let mut settings = tapwright::audio::CaptureSettings::default();
    settings.analysis.band_low_hz = 300.0;
    settings.analysis.band_high_hz = 600.0;
    harness.state_mut().queue(AppCommand::Listen(
        tapwright::ui::ListenCommand::SetSettings(settings),
    ));
    harness.run_ok();
    step_until(&mut harness, "the taps measured again", |app| {
        !app.is_busy() && app.pass().is_some_and(|p| p.modes.len() == 2)
    });
    let modes: Vec<f64> = harness
        .state()
        .pass()
        .unwrap()
        .modes
        .iter()
        .map(|m| m.frequency_hz)
        .collect();
    // The invented plate has 338 and 486 Hz in that band (src/demo.rs).
    assert!(
        (modes[0] - 338.0).abs() < 0.5 && (modes[1] - 486.0).abs() < 0.5,
        "{modes:?}"
    );
}

/// The app started on an input device that cannot be opened, so it falls
/// back to the demo recording (as it does without a sound card), in a
/// window of `size` points.
fn harness_without_a_microphone(size: egui::Vec2) -> egui_kittest::Harness<'static, TapwrightApp> {
    let mut harness = egui_kittest::Harness::builder()
        .with_size(size)
        .build_ui_state(
            |ui, app: &mut TapwrightApp| app.show(ui),
            TapwrightApp::new(AppOptions {
                source: StartSource::Device(Some("no such input device".into())),
                demo_pacing: Pacing::AsFastAsPossible,
                ..AppOptions::default()
            }),
        );
    step_until(&mut harness, "the demo after the fallback", |app| {
        app.input().pick == tapwright::ui::SourcePick::Demo
            && app.input().state == SourceState::Ended
            && !app.is_busy()
    });
    harness
}

/// Every "Leave out" button of the tap list lies inside the window.
/// (The demo's fourth tap is a double strike and has no button.)
fn leave_out_buttons_fit(harness: &egui_kittest::Harness<'_, TapwrightApp>, width: f32) {
    for n in [1, 2, 3, 5, 6] {
        let rect = harness.get_by_label(&format!("Leave tap {n} out")).rect();
        assert!(
            rect.max.x <= width && rect.min.x >= 0.0,
            "Leave tap {n} out at {rect:?} in a window {width} wide"
        );
    }
}

#[test]
fn without_a_microphone_the_status_line_is_one_short_line_that_fits() {
    let mut harness = harness_without_a_microphone(egui::vec2(1280.0, 800.0));
    let status = harness.state().status().expect("a status").clone();
    assert_eq!(
        status.text,
        "No microphone could be opened, so the bundled demo recording plays instead."
    );
    let reason = status.detail.clone().expect("the reason behind it");
    assert!(reason.contains("no such input device"), "{reason}");
    // The sentence and the standing pointer to the cautions sit side by
    // side in the window, neither under the other.
    let message = harness.get_by_label(&status.text).rect();
    let caution = harness
        .get_by_label_contains("see Help for the cautions")
        .rect();
    assert!(
        message.max.x <= caution.min.x,
        "{message:?} runs under {caution:?}"
    );
    assert!(caution.max.x <= 1280.0, "{caution:?}");
    assert!(
        (message.center().y - caution.center().y).abs() < 4.0,
        "one line"
    );
    // Help has the reason in full.
    click(&mut harness, "Help");
    harness.get_by_label_contains(&reason);
    // The tap list fits beside the mode list.
    click(&mut harness, "Help");
    leave_out_buttons_fit(&harness, 1280.0);
}

#[test]
fn a_long_message_is_cut_to_the_room_there_is_and_whole_on_hover() {
    let mut harness = demo_harness();
    demo_finished(&mut harness);
    let long = format!(
        "Opened /a/very/long/folder/{}/take.wav: 6 taps, 5 kept.",
        "deeper/".repeat(30)
    );
    harness
        .state_mut()
        .queue(AppCommand::ShowMessage(long.clone()));
    harness.run_ok();
    let message = harness.get_by_label(&long).rect();
    let caution = harness
        .get_by_label_contains("see Help for the cautions")
        .rect();
    assert!(
        message.max.x <= caution.min.x,
        "{message:?} against {caution:?}"
    );
    assert!(message.height() < 30.0, "one line: {message:?}");
}

#[test]
fn the_tap_list_fits_a_small_window_too() {
    let harness = harness_without_a_microphone(egui::vec2(960.0, 640.0));
    leave_out_buttons_fit(&harness, 960.0);
    let harness = harness_without_a_microphone(egui::vec2(1100.0, 700.0));
    leave_out_buttons_fit(&harness, 1100.0);
}

/// The invented plate of the encoded fixtures (tests/data/encoded/README.md):
/// two taps with modes at 168, 338, 486 and 712 Hz.
fn encoded_plate(name: &str) -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/encoded")
        .join(name)
}

fn shows_the_plate(harness: &mut egui_kittest::Harness<'_, TapwrightApp>, path: &std::path::Path) {
    let expected = SourceState::File(path.to_path_buf());
    step_until(harness, "the opened recording", |app| {
        app.input().state == expected && !app.is_busy()
    });
    let app = harness.state();
    assert_eq!(app.session().taps().len(), 2);
    for truth_hz in [168.0, 338.0, 486.0, 712.0] {
        let (_, found) = mode_near(app, truth_hz).unwrap_or_else(|| panic!("{truth_hz} Hz"));
        harness.get_by_label(&format!("{found:.1} Hz"));
    }
    harness.get_by_label("2 taps averaged");
}

#[test]
fn a_flac_recording_opened_by_typed_path_shows_its_taps() {
    let path = encoded_plate("plate.flac");
    let mut harness = demo_harness();
    harness.run_ok();
    harness
        .get_by_label("Or drop a recording on the window (WAV, FLAC, MP3, M4A, AIFF, CAF, Ogg).");
    let field = harness.get_by_label("Path");
    field.focus();
    field.type_text(&path.display().to_string());
    harness.run_ok();
    harness.get_by_label("Open").click();
    shows_the_plate(&mut harness, &path);
}

/// A file as the windowing system hands it over when dropped.
#[derive(Debug)]
struct DroppedFile(std::path::PathBuf);

impl egui::DroppedFile for DroppedFile {
    fn path(&self) -> &std::path::Path {
        &self.0
    }

    fn bytes(&self) -> Result<Vec<u8>, String> {
        std::fs::read(&self.0).map_err(|e| e.to_string())
    }
}

#[test]
fn a_phone_recording_dropped_on_the_window_shows_its_taps_and_a_text_file_is_named() {
    // Apple Lossless in M4A, as an iPhone's voice memo in lossless mode
    // writes it, with an upper-case ending.
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("PLATE.M4A");
    std::fs::copy(encoded_plate("plate_alac.m4a"), &path).unwrap();
    let mut harness = demo_harness();
    harness.run_ok();
    harness
        .input_mut()
        .dropped_files
        .push(std::sync::Arc::new(DroppedFile(path.clone())));
    harness.run_ok();
    shows_the_plate(&mut harness, &path);

    let notes = folder.path().join("notes.txt");
    std::fs::write(&notes, "not sound").unwrap();
    harness
        .input_mut()
        .dropped_files
        .push(std::sync::Arc::new(DroppedFile(notes)));
    harness.run_ok();
    let status = harness.state().status().expect("a status").clone();
    assert!(
        status.is_error && status.text.contains("notes.txt"),
        "{}",
        status.text
    );
    assert!(status.text.contains(".flac"), "{}", status.text);
}
