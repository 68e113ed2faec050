//! Build files under stress: two writers on one file, saves racing each
//! other, symbolic links, interrupted saves, and inputs that are not build
//! files at all (named pipes, devices, huge or deeply nested files).

use std::fs;
use std::path::Path;
use std::time::{Duration, SystemTime};

use tapwright::ledger::store::{self, DiskFingerprint, StoreError};
use tapwright::ledger::{Build, Family, MeasuredMode, PartKind, PassInput, ThicknessReading};

fn mode(frequency_hz: f64) -> MeasuredMode {
    MeasuredMode {
        frequency_hz,
        q: 40.0,
        level_db: -20.0,
        spread_hz: 0.5,
    }
}

/// An invented build with `passes` passes on one top plate.
fn build_with_passes(passes: usize) -> Build {
    let mut build = Build::new("Saving test", Family::Violin);
    let top = build
        .add_part("Top", PartKind::TopPlate)
        .expect("test value");
    for i in 0..passes {
        let mass_g = 90.0 - i as f64 * 0.5;
        let mut input = PassInput::new(mass_g, vec![mode(180.0 - i as f64), mode(350.0)]);
        input.thickness = vec![ThicknessReading {
            point: "centre".into(),
            thickness_mm: 3.0,
        }];
        top.record_pass(input).expect("test value");
    }
    build
}

fn passes_in(path: &Path) -> usize {
    let build = store::load(path).expect("the file loads whole");
    build.part("Top").expect("test value").passes().len()
}

fn saving_leftovers(folder: &Path) -> Vec<String> {
    fs::read_dir(folder)
        .expect("test value")
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".saving"))
        .collect()
}

#[test]
fn a_second_writer_is_detected_and_nothing_is_overwritten() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("shared.ron");
    store::save(&path, &build_with_passes(1)).expect("test value");
    // Two windows open the same file.
    let (mut in_a, seen_by_a) = store::load_with_fingerprint(&path).expect("test value");
    let (mut in_b, seen_by_b) = store::load_with_fingerprint(&path).expect("test value");
    assert_eq!(seen_by_a, seen_by_b);
    // A records two passes and saves.
    for _ in 0..2 {
        let top = in_a.part_mut("Top").expect("test value");
        top.record_pass(PassInput::new(80.0, vec![mode(170.0)]))
            .expect("test value");
    }
    let after_a = store::save_checked(&path, &in_a, Some(&seen_by_a)).expect("test value");
    assert_eq!(passes_in(&path), 3);
    // B records one and saves: refused, A's passes stay on disk.
    let top = in_b.part_mut("Top").expect("test value");
    top.record_pass(PassInput::new(81.0, vec![mode(171.0)]))
        .expect("test value");
    let refused = store::save_checked(&path, &in_b, Some(&seen_by_b)).unwrap_err();
    assert!(
        matches!(refused, StoreError::ChangedOnDisk { .. }),
        "{refused}"
    );
    let message = refused.to_string();
    assert!(message.contains("shared.ron"), "{message}");
    assert!(message.contains("another window or program"), "{message}");
    assert_eq!(passes_in(&path), 3);
    assert!(saving_leftovers(folder.path()).is_empty());
    // A saves again from what it wrote: accepted.
    let top = in_a.part_mut("Top").expect("test value");
    top.record_pass(PassInput::new(79.0, vec![mode(169.0)]))
        .expect("test value");
    let again = store::save_checked(&path, &in_a, Some(&after_a)).expect("test value");
    assert_eq!(passes_in(&path), 4);
    assert_eq!(
        DiskFingerprint::of_file(&path).expect("test value"),
        Some(again)
    );
    // B chooses to overwrite (no expected fingerprint): its build wins.
    store::save_checked(&path, &in_b, None).expect("test value");
    assert_eq!(passes_in(&path), 2);
}

#[test]
fn a_file_deleted_meanwhile_counts_as_changed() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("gone.ron");
    store::save(&path, &build_with_passes(1)).expect("test value");
    let (build, seen) = store::load_with_fingerprint(&path).expect("test value");
    fs::remove_file(&path).expect("test value");
    let refused = store::save_checked(&path, &build, Some(&seen)).unwrap_err();
    assert!(matches!(refused, StoreError::ChangedOnDisk { .. }));
    assert!(!path.exists());
}

#[test]
fn saves_racing_from_many_threads_always_leave_one_whole_file() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("raced.ron");
    let builds: Vec<Build> = (1..=8).map(build_with_passes).collect();
    for _ in 0..5 {
        std::thread::scope(|scope| {
            for build in &builds {
                let path = &path;
                scope.spawn(move || store::save(path, build).expect("every save succeeds"));
            }
        });
        let passes = passes_in(&path);
        assert!((1..=8).contains(&passes), "{passes}");
        assert!(saving_leftovers(folder.path()).is_empty());
    }
}

#[cfg(unix)]
#[test]
fn saving_through_a_symbolic_link_updates_the_real_file() {
    let folder = tempfile::tempdir().expect("test value");
    let real_folder = folder.path().join("builds");
    fs::create_dir(&real_folder).expect("test value");
    let real = real_folder.join("violin.ron");
    store::save(&real, &build_with_passes(1)).expect("test value");
    let link = folder.path().join("current.ron");
    std::os::unix::fs::symlink("builds/violin.ron", &link).expect("test value");

    let (build, seen) = store::load_with_fingerprint(&link).expect("test value");
    let mut build = build;
    let top = build.part_mut("Top").expect("test value");
    top.record_pass(PassInput::new(85.0, vec![mode(175.0)]))
        .expect("test value");
    store::save_checked(&link, &build, Some(&seen)).expect("test value");

    assert!(fs::symlink_metadata(&link)
        .expect("test value")
        .file_type()
        .is_symlink());
    assert_eq!(passes_in(&real), 2);
    assert_eq!(passes_in(&link), 2);
    // The backup sits beside the real file, and no temporary file is left.
    assert!(real_folder.join("violin.ron.bak").exists());
    assert!(saving_leftovers(folder.path()).is_empty());
    assert!(saving_leftovers(&real_folder).is_empty());

    // A link to a file that does not exist yet: the file is created there.
    let dangling = folder.path().join("next.ron");
    std::os::unix::fs::symlink("builds/next.ron", &dangling).expect("test value");
    store::save(&dangling, &build).expect("test value");
    assert_eq!(passes_in(&real_folder.join("next.ron")), 2);
    assert!(fs::symlink_metadata(&dangling)
        .expect("test value")
        .file_type()
        .is_symlink());
}

#[test]
fn stale_temporary_files_are_removed_and_fresh_ones_kept() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("tidy.ron");
    let stale = folder.path().join(".tidy.ron.a1b2c3.saving");
    let fresh = folder.path().join(".tidy.ron.d4e5f6.saving");
    let other = folder.path().join(".other.ron.g7h8i9.saving");
    for file in [&stale, &fresh, &other] {
        fs::write(file, "(half a build").expect("test value");
    }
    let an_hour_ago = SystemTime::now() - Duration::from_secs(3600);
    for file in [&stale, &other] {
        fs::File::options()
            .write(true)
            .open(file)
            .and_then(|f| f.set_modified(an_hour_ago))
            .expect("test value");
    }
    store::save(&path, &build_with_passes(1)).expect("test value");
    assert!(!stale.exists(), "an interrupted save's file is removed");
    assert!(
        fresh.exists(),
        "a save that may be running now is left alone"
    );
    assert!(other.exists(), "another build's files are left alone");
}

fn refused_quickly(path: &Path) -> String {
    let (sender, receiver) = std::sync::mpsc::channel();
    let owned = path.to_path_buf();
    std::thread::spawn(move || {
        let _ = sender.send(store::load(&owned).map(|_| ()));
    });
    let result = receiver
        .recv_timeout(Duration::from_secs(20))
        .expect("load returns instead of hanging");
    result.unwrap_err().to_string()
}

#[cfg(unix)]
#[test]
fn named_pipes_devices_and_folders_are_refused_without_hanging() {
    let folder = tempfile::tempdir().expect("test value");
    let pipe = folder.path().join("pipe.ron");
    let made = std::process::Command::new("mkfifo")
        .arg(&pipe)
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    let message = refused_quickly(&pipe);
    assert!(message.contains("pipe.ron"), "{message}");
    assert!(message.contains("named pipe"), "{message}");

    let message = refused_quickly(Path::new("/dev/zero"));
    assert!(message.contains("/dev/zero"), "{message}");
    assert!(message.contains("device"), "{message}");

    let message = refused_quickly(folder.path());
    assert!(message.contains("folder"), "{message}");
}

#[test]
fn a_file_over_the_size_limit_is_refused_unread() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("huge.ron");
    // A sparse file: 257 MB long, no disk used.
    fs::File::create(&path)
        .and_then(|f| f.set_len((store::MAX_BUILD_FILE_MB + 1) * 1024 * 1024))
        .expect("test value");
    let message = refused_quickly(&path);
    assert!(message.contains("huge.ron"), "{message}");
    assert!(message.contains("256 MB"), "{message}");
}

#[test]
fn a_byte_order_mark_is_accepted() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("bom.ron");
    let build = build_with_passes(2);
    let text = store::to_ron_text(&build).expect("test value");
    fs::write(&path, format!("\u{feff}{text}")).expect("test value");
    assert_eq!(store::load(&path).expect("loads"), build);
}

fn load_edited(name: &str, edit: impl Fn(String) -> String) -> String {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join(name);
    let text = store::to_ron_text(&build_with_passes(2)).expect("test value");
    let edited = edit(text.clone());
    assert_ne!(edited, text, "the edit applies");
    fs::write(&path, &edited).expect("test value");
    let message = store::load(&path).unwrap_err().to_string();
    assert!(message.contains(name), "{message}");
    message
}

#[test]
fn impossible_values_are_refused_with_a_sentence() {
    let message = load_edited("negative_q.ron", |t| t.replacen("q: 40.0", "q: -40.0", 1));
    assert!(message.contains("Q is -40"), "{message}");

    let message = load_edited("zero_q.ron", |t| t.replacen("q: 40.0", "q: 0.0", 1));
    assert!(message.contains("Q is 0"), "{message}");

    let message = load_edited("thick.ron", |t| {
        t.replacen("thickness_mm: 3.0", "thickness_mm: 1e308", 1)
    });
    assert!(message.contains("thickness"), "{message}");
    assert!(!message.contains("inf"), "{message}");

    let message = load_edited("heavy.ron", |t| {
        t.replacen("mass_g: 90.0", "mass_g: 1e300", 1)
    });
    assert!(message.contains("mass"), "{message}");
}

#[test]
fn deep_nesting_is_a_plain_sentence() {
    let folder = tempfile::tempdir().expect("test value");
    let path = folder.path().join("deep.ron");
    // Brackets nested 10 000 deep in a field before the version.
    let text = format!(
        "(extra: {}{}, schema_version: 2)",
        "[".repeat(10_000),
        "]".repeat(10_000)
    );
    fs::write(&path, text).expect("test value");
    let error = store::load(&path).unwrap_err();
    let message = error.to_string();
    assert!(matches!(error, StoreError::TooDeep { .. }), "{message}");
    assert!(message.contains("deep.ron"), "{message}");
    assert!(!message.contains("recursion_limit"), "{message}");
    assert!(!message.contains("serde_stacker"), "{message}");
}

#[test]
fn all_changes_in_one_walk_match_change_for_every_labelled_mode() {
    let mut compared = 0;
    for file in [
        "sample_sessions/violin_wren.ron",
        "sample_sessions/guitar_larkspur.ron",
    ] {
        let build = store::load(Path::new(file)).expect("the sample loads");
        for part in build.parts() {
            let all = part.all_changes();
            assert_eq!(all.len(), part.passes().len());
            for (pass, changes) in part.passes().iter().zip(&all) {
                let labelled: Vec<&str> =
                    pass.modes().iter().filter_map(|m| m.label_name()).collect();
                assert_eq!(changes.len(), labelled.len());
                for (change, label) in changes.iter().zip(labelled) {
                    assert_eq!(Some(change), part.change(label, pass.number()).as_ref());
                    compared += 1;
                }
            }
        }
    }
    assert!(compared > 20, "{compared}");
}
