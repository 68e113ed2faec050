//! Saving a build from the window, driven with egui_kittest (no display):
//! saves queued one after the other leave the newest snapshot on disk and
//! clear the unsaved mark only for it; a file changed by another writer is
//! never overwritten without asking; closing with unsaved changes asks.

mod common;
use common::*;

use std::path::Path;

use eframe::egui;
use egui_kittest::kittest::Queryable;
use egui_kittest::Harness;
use tapwright::ledger::{store, Build, Family, PartKind};
use tapwright::ui::{AppCommand, TapwrightApp};

/// An invented build saved at `path`.
fn saved_build(path: &Path, notes: &str) -> Build {
    let mut build = Build::new("Saving bench", Family::Violin);
    build
        .add_part("Top", PartKind::TopPlate)
        .expect("test value");
    build.notes = notes.to_owned();
    store::save(path, &build).expect("test value");
    build
}

fn set_notes(app: &mut TapwrightApp, notes: String) {
    app.queue(AppCommand::EditBuild {
        description: "changing the notes".into(),
        edit: Box::new(move |b| {
            b.notes = notes;
            Ok(String::new())
        }),
    });
}

fn notes_on_disk(path: &Path) -> String {
    store::load(path).expect("the file loads whole").notes
}

#[test]
fn saves_queued_together_leave_the_newest_snapshot() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("ordered.ron");
    saved_build(&path, "start");
    let mut harness = opened_on_build(&path);
    for round in 0..5 {
        // Twenty changes, each followed by a save, in one frame.
        for i in 0..20 {
            set_notes(harness.state_mut(), format!("round {round} change {i}"));
            harness.state_mut().queue(AppCommand::SaveBuild);
        }
        harness.step();
        step_until(&mut harness, "the saves", |app| !app.is_busy());
        assert_eq!(notes_on_disk(&path), format!("round {round} change 19"));
        assert!(!harness.state().build_unsaved());
    }
    // A change after the save was asked for keeps the mark.
    harness.state_mut().queue(AppCommand::SaveBuild);
    set_notes(harness.state_mut(), "after the save".into());
    harness.step();
    step_until(&mut harness, "the save", |app| !app.is_busy());
    assert_eq!(notes_on_disk(&path), "round 4 change 19");
    assert!(
        harness.state().build_unsaved(),
        "the newest change is not on disk"
    );
    assert!(harness.state().save_conflict().is_none());
}

#[test]
fn a_file_changed_by_another_writer_is_not_overwritten_without_asking() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("two windows.ron");
    saved_build(&path, "start");
    let mut harness = opened_on_build(&path);

    // Another window (or a copy tool) writes the file.
    saved_build(&path, "written elsewhere");
    set_notes(harness.state_mut(), "written here".into());
    harness.state_mut().queue(AppCommand::SaveBuild);
    harness.step();
    step_until(&mut harness, "the refused save", |app| !app.is_busy());
    harness.run_ok();
    assert_eq!(notes_on_disk(&path), "written elsewhere");
    assert_eq!(harness.state().save_conflict(), Some(path.as_path()));
    assert!(harness.state().build_unsaved());
    harness.get_by_label("The build file changed on disk");
    let status = harness.state().status().expect("a status").text.clone();
    assert!(status.contains("two windows.ron"), "{status}");

    // The maker chooses to overwrite.
    harness.get_by_label("Overwrite the file").click();
    harness.run_ok();
    step_until(&mut harness, "the overwrite", |app| !app.is_busy());
    assert_eq!(notes_on_disk(&path), "written here");
    assert!(!harness.state().build_unsaved());
    assert!(harness.state().save_conflict().is_none());

    // Later saves check against what this window wrote: accepted.
    set_notes(harness.state_mut(), "and again".into());
    harness.state_mut().queue(AppCommand::SaveBuild);
    harness.step();
    step_until(&mut harness, "the next save", |app| !app.is_busy());
    assert_eq!(notes_on_disk(&path), "and again");
    assert!(harness.state().save_conflict().is_none());

    // Another outside change, and this time the maker reloads.
    saved_build(&path, "second outside change");
    set_notes(harness.state_mut(), "lost on reload".into());
    harness.state_mut().queue(AppCommand::SaveBuild);
    harness.step();
    step_until(&mut harness, "the refused save", |app| !app.is_busy());
    harness.run_ok();
    harness.get_by_label("Reload from disk").click();
    harness.run_ok();
    step_until(&mut harness, "the reload", |app| !app.is_busy());
    let reloaded = harness.state().build().expect("a build").notes.clone();
    assert_eq!(reloaded, "second outside change");
    assert!(!harness.state().build_unsaved());
    assert_eq!(notes_on_disk(&path), "second outside change");
}

fn ask_to_close(harness: &mut Harness<'_, TapwrightApp>) {
    harness
        .input_mut()
        .viewports
        .entry(egui::ViewportId::ROOT)
        .or_default()
        .events
        .push(egui::ViewportEvent::Close);
    harness.step();
    harness.run_ok();
}

#[test]
fn closing_with_unsaved_changes_asks_first() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("closing.ron");
    saved_build(&path, "start");
    let mut harness = opened_on_build(&path);

    // Nothing unsaved: the window may close.
    ask_to_close(&mut harness);
    assert!(!harness.state().close_prompt_shown());
    assert!(harness.state().close_confirmed());
    drop(harness);

    let mut harness = opened_on_build(&path);
    set_notes(harness.state_mut(), "not yet saved".into());
    harness.run_ok();
    ask_to_close(&mut harness);
    assert!(harness.state().close_prompt_shown());
    assert!(!harness.state().close_confirmed());
    harness.get_by_label("Unsaved changes");
    click(&mut harness, "Cancel");
    assert!(!harness.state().close_prompt_shown());
    assert!(!harness.state().close_confirmed());

    ask_to_close(&mut harness);
    click(&mut harness, "Save and close");
    step_until(&mut harness, "the save before closing", |app| {
        !app.is_busy()
    });
    harness.run_ok();
    assert_eq!(notes_on_disk(&path), "not yet saved");
    assert!(harness.state().close_confirmed());
    drop(harness);

    let mut harness = opened_on_build(&path);
    set_notes(harness.state_mut(), "thrown away".into());
    harness.run_ok();
    ask_to_close(&mut harness);
    click(&mut harness, "Close without saving");
    assert!(harness.state().close_confirmed());
    assert_eq!(notes_on_disk(&path), "not yet saved");
}
