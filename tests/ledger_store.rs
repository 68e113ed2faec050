//! Build files: round trip, crash safety, bad files, old schema versions.

use std::fs;
use std::path::{Path, PathBuf};

use proptest::prelude::*;
use tapwright::acoustics::{CavityGeometry, Opening};
use tapwright::ledger::store::{self, StoreError};
use tapwright::ledger::{
    Build, Family, MeasuredMode, PartKind, PassInput, StoredSpectrum, ThicknessReading, Timestamp,
};

fn mode(frequency_hz: f64) -> MeasuredMode {
    MeasuredMode {
        frequency_hz,
        q: 42.5,
        level_db: -21.25,
        spread_hz: 0.75,
    }
}

/// A small, fixed build with a bit of everything.
fn example_build() -> Build {
    let mut build = Build::new("Example \"No. 3\", with a comma", Family::Violin);
    build.created = Timestamp::from_unix_seconds(1_650_000_000);
    build.notes = "two\nlines".into();
    let top = build.add_part("Top", PartKind::TopPlate).unwrap();
    top.wood_species = Some("spruce".into());
    for (i, mass_g) in [84.0, 80.5, 77.25].into_iter().enumerate() {
        let fall = (mass_g / 84.0f64).powf(0.5);
        let mut input = PassInput::new(
            mass_g,
            vec![mode(170.0 * fall), mode(250.0 * fall), mode(360.0 * fall)],
        );
        input.time = Timestamp::from_unix_seconds(1_650_000_000 + 3600 * i as i64);
        input.thickness = vec![
            ThicknessReading {
                point: "centre".into(),
                thickness_mm: 3.2 * mass_g / 84.0,
            },
            ThicknessReading {
                point: "upper bout, bass".into(),
                thickness_mm: 2.9 * mass_g / 84.0,
            },
        ];
        input.air_temp_c = Some(21.5);
        input.relative_humidity_pct = Some(45.0);
        input.spectrum = Some(
            StoredSpectrum::on_log_axis(40.0, 4000.0, vec![-50.0, -20.5, -33.33, -60.0]).unwrap(),
        );
        top.record_pass(input).unwrap();
        if i == 0 {
            top.set_label(1, 0, Some("mode 2")).unwrap();
            top.set_label(1, 2, Some("mode 5")).unwrap();
        }
    }
    top.set_target("mode 5", Some(340.0)).unwrap();
    build.add_part("Body", PartKind::AssembledBody).unwrap();
    let f_hole = Opening::Slot {
        length_mm: 70.0,
        mean_width_mm: 8.0,
    };
    build.air = Some(CavityGeometry::new(2.0e-3, vec![f_hole, f_hole]));
    build
}

fn write_file(folder: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = folder.join(name);
    fs::write(&path, bytes).unwrap();
    path
}

#[test]
fn save_then_load_gives_the_same_build_and_keeps_a_backup() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("example.ron");
    let first = example_build();
    store::save(&path, &first).unwrap();
    assert_eq!(store::load(&path).unwrap(), first);
    assert!(
        !store::backup_path(&path).exists(),
        "no backup before a second save"
    );
    let first_bytes = fs::read(&path).unwrap();

    let mut second = first.clone();
    second.notes = "changed".into();
    store::save(&path, &second).unwrap();
    assert_eq!(store::load(&path).unwrap(), second);
    assert_eq!(fs::read(store::backup_path(&path)).unwrap(), first_bytes);
    assert_eq!(
        store::backup_path(&path).file_name().unwrap(),
        "example.ron.bak"
    );
    let leftovers: Vec<_> = fs::read_dir(folder.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".saving"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}

#[test]
fn a_crash_between_write_and_rename_leaves_the_old_file_whole() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("crash.ron");
    let old = example_build();
    store::save(&path, &old).unwrap();
    let old_bytes = fs::read(&path).unwrap();

    let mut new = old.clone();
    new.name = "after the crash".into();
    let staged = store::stage(&path, &new).unwrap();
    let temp_path = staged.temp_path().to_path_buf();
    // A crash: no destructor runs, the temporary file stays, no rename.
    std::mem::forget(staged);
    assert!(temp_path.exists());
    assert_eq!(fs::read(&path).unwrap(), old_bytes);
    assert_eq!(store::load(&path).unwrap(), old);

    // A half-written temporary file from another crash also stays around.
    write_file(
        folder.path(),
        ".crash.ron.XXXXXX.saving",
        b"(schema_version: 2, name: \"half",
    );

    // The next save and load work despite the leftovers.
    store::save(&path, &new).unwrap();
    assert_eq!(store::load(&path).unwrap(), new);
    assert_eq!(fs::read(store::backup_path(&path)).unwrap(), old_bytes);
}

#[test]
fn dropping_a_staged_save_changes_nothing() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("drop.ron");
    store::save(&path, &example_build()).unwrap();
    let before = fs::read(&path).unwrap();
    let staged = store::stage(&path, &Build::new("other", Family::Guitar)).unwrap();
    let temp_path = staged.temp_path().to_path_buf();
    drop(staged);
    assert!(!temp_path.exists());
    assert_eq!(fs::read(&path).unwrap(), before);
}

/// Loads a bad file and checks the error and that the bytes are unchanged.
fn load_bad(name: &str, bytes: &[u8]) -> (StoreError, String) {
    let folder = tempfile::tempdir().unwrap();
    let path = write_file(folder.path(), name, bytes);
    let error = store::load(&path).unwrap_err();
    assert_eq!(
        fs::read(&path).unwrap(),
        bytes,
        "load must not touch {name}"
    );
    let message = error.to_string();
    assert!(message.contains(name), "error names the file: {message}");
    assert!(!message.contains('\n'), "one line: {message}");
    (error, message)
}

#[test]
fn bad_files_give_clear_errors_and_stay_byte_identical() {
    let good = store::to_ron_text(&example_build()).unwrap();

    let (error, _) = load_bad("empty.ron", b"");
    assert!(matches!(error, StoreError::Empty { .. }));
    let (error, _) = load_bad("blank.ron", b"  \n\t\n");
    assert!(matches!(error, StoreError::Empty { .. }));

    let truncated = &good.as_bytes()[..good.len() / 2];
    let (error, message) = load_bad("truncated.ron", truncated);
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");
    assert!(message.contains("line "), "{message}");
    assert!(message.contains("ends before"), "{message}");

    let corrupt = good.replacen("mass_g: ", "mass_g: :", 1);
    let (error, message) = load_bad("corrupt.ron", corrupt.as_bytes());
    let StoreError::Syntax { line, column, .. } = error else {
        panic!("{message}")
    };
    let expected_line = corrupt
        .lines()
        .position(|l| l.contains("mass_g: :"))
        .unwrap()
        + 1;
    assert_eq!(line, expected_line, "{message}");
    assert!(column > 1);

    let wrong_type = good.replacen("mass_g: 84.0", "mass_g: \"heavy\"", 1);
    let (error, message) = load_bad("wrong_type.ron", wrong_type.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");

    let (error, _) = load_bad("binary.ron", &[0x28, 0xff, 0xfe, 0x00, 0x29]);
    assert!(matches!(error, StoreError::NotText { .. }));

    let future = good.replacen("schema_version: 4", "schema_version: 5", 1);
    let (error, message) = load_bad("future.ron", future.as_bytes());
    assert!(matches!(
        error,
        StoreError::UnsupportedVersion { found: 5, .. }
    ));
    assert!(message.contains("version 5"), "{message}");

    let zero = good.replacen("schema_version: 4", "schema_version: 0", 1);
    let (error, _) = load_bad("zero.ron", zero.as_bytes());
    assert!(matches!(
        error,
        StoreError::NoVersion { .. } | StoreError::UnsupportedVersion { .. }
    ));

    let unversioned = good.replacen("schema_version: 4,", "", 1);
    let (error, _) = load_bad("unversioned.ron", unversioned.as_bytes());
    assert!(matches!(error, StoreError::NoVersion { .. }));

    let (error, _) = load_bad("not_a_build.ron", b"[1, 2, 3]");
    assert!(matches!(error, StoreError::Syntax { .. }));

    let misspelt = good.replacen("air_temp_c:", "air_temperature:", 1);
    let (error, message) = load_bad("misspelt.ron", misspelt.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");

    let renumbered = good.replacen("number: 2,", "number: 5,", 1);
    let (error, message) = load_bad("renumbered.ron", renumbered.as_bytes());
    assert!(matches!(error, StoreError::Invalid { .. }), "{message}");

    let unknown_label = good.replacen("name: \"mode 5\"", "name: \"mode 9\"", 1);
    let (error, message) = load_bad("unknown_label.ron", unknown_label.as_bytes());
    assert!(matches!(error, StoreError::Invalid { .. }), "{message}");
    assert!(message.contains("mode 9"), "{message}");

    let negative_mass = good.replacen("mass_g: 84.0", "mass_g: -84.0", 1);
    let (error, _) = load_bad("negative_mass.ron", negative_mass.as_bytes());
    assert!(matches!(error, StoreError::Invalid { .. }));

    let garbage_after = format!("{good}(extra)");
    let (error, _) = load_bad("trailing.ron", garbage_after.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }));
}

#[test]
fn a_missing_file_is_a_read_error() {
    let folder = tempfile::tempdir().unwrap();
    let error = store::load(&folder.path().join("nowhere.ron")).unwrap_err();
    assert!(matches!(error, StoreError::Read { .. }));
    assert!(error.to_string().contains("nowhere.ron"));
}

#[test]
fn an_invalid_build_is_not_saved_and_the_old_file_survives() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("guarded.ron");
    let mut build = example_build();
    store::save(&path, &build).unwrap();
    let before = fs::read(&path).unwrap();
    build.part_mut("Top").unwrap().pass_mut(2).unwrap().mass_g = f64::NAN;
    let error = store::save(&path, &build).unwrap_err();
    assert!(matches!(error, StoreError::RefusedToSave { .. }), "{error}");
    assert_eq!(fs::read(&path).unwrap(), before);
}

#[test]
fn saving_into_a_missing_folder_fails_cleanly() {
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("no such folder").join("b.ron");
    let error = store::save(&path, &example_build()).unwrap_err();
    assert!(matches!(error, StoreError::Write { .. }), "{error}");
}

#[test]
fn schema_version_1_files_are_migrated() {
    // tests/fixtures/ledger_v1_viola_top.ron was written by hand in the
    // version-1 layout and is frozen.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ledger_v1_viola_top.ron");
    let before = fs::read(&path).unwrap();
    let build = store::load(&path).unwrap();
    assert_eq!(fs::read(&path).unwrap(), before);

    assert_eq!(build.schema_version(), 4);
    assert!(build.stock().is_empty());
    assert_eq!(build.name, "Small viola, first of two");
    assert_eq!(build.family(), Family::Viola);
    let top = build.part("Top").unwrap();
    assert_eq!(top.labels(), ["mode 1", "mode 2", "mode 5", "ring"]);
    assert_eq!(top.targets().get("mode 5"), Some(&300.0));
    let first = top.pass(1).unwrap();
    assert_eq!(
        first.thickness,
        [ThicknessReading {
            point: tapwright::ledger::schema_v1::V1_THICKNESS_POINT.into(),
            thickness_mm: 3.4
        }]
    );
    assert!(first.spectrum.is_none());
    assert_eq!(first.mode_labelled("mode 5").unwrap().frequency_hz, 331.7);
    assert!(first.modes().iter().all(|m| !m.label_needs_confirmation()));
    let second = top.pass(2).unwrap();
    assert!(second.thickness.is_empty());
    assert_eq!(second.time.to_string(), "2021-10-03T14:40:00Z");
    assert_eq!(second.note, "Scraped the \"upper\" bouts, then the flanks.");
    assert_eq!(build.part("Body").unwrap().labels()[2], "B1\u{2212}");

    // Once migrated, it saves as the current version and reloads unchanged.
    let folder = tempfile::tempdir().unwrap();
    let copy = folder.path().join("viola.ron");
    store::save(&copy, &build).unwrap();
    assert!(fs::read_to_string(&copy)
        .unwrap()
        .contains("schema_version: 4"));
    assert_eq!(store::load(&copy).unwrap(), build);

    let minimal =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ledger_v1_minimal.ron");
    let bare = store::load(&minimal).unwrap();
    assert_eq!(bare.family(), Family::Other);
    assert!(bare.parts().is_empty());
}

#[test]
fn schema_version_2_files_are_migrated() {
    // tests/fixtures/ledger_v2_cello_back.ron was written by hand in the
    // version-2 layout (no stock list) and is frozen.
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ledger_v2_cello_back.ron");
    let before = fs::read(&path).unwrap();
    let build = store::load(&path).unwrap();
    assert_eq!(fs::read(&path).unwrap(), before, "loading never writes");
    assert_eq!(build.schema_version(), 4);
    assert_eq!(build.name, "Cello (fixture)");
    assert_eq!(build.family(), Family::Cello);
    assert!(build.stock().is_empty());
    assert!(build.air.is_none());
    let back = build.part("Back").unwrap();
    assert_eq!(back.targets().get("mode 5"), Some(&150.0));
    let pass = back.pass(1).unwrap();
    assert_eq!(pass.mass_g, 812.5);
    assert!(pass.modes()[1].label_needs_confirmation());

    let folder = tempfile::tempdir().unwrap();
    let copy = folder.path().join("cello.ron");
    store::save(&copy, &build).unwrap();
    let text = fs::read_to_string(&copy).unwrap();
    assert!(text.contains("schema_version: 4"), "{text}");
    assert!(text.contains("stock: []"), "{text}");
    assert_eq!(store::load(&copy).unwrap(), build);
}

#[test]
fn a_version_2_file_with_a_stock_list_is_refused_and_a_version_3_file_needs_one() {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ledger_v2_cello_back.ron");
    let v2 = fs::read_to_string(&path).unwrap();
    let mixed = v2.replacen("    air: None,\n", "    air: None,\n    stock: [],\n", 1);
    assert_ne!(mixed, v2);
    let (error, message) = load_bad("mixed_v2.ron", mixed.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");
    let unlisted = v2.replacen("schema_version: 2", "schema_version: 3", 1);
    let (error, message) = load_bad("v3_no_stock.ron", unlisted.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");
}

#[test]
fn stock_samples_survive_a_round_trip_and_bad_ones_are_refused() {
    use tapwright::acoustics::stock::BarSample;
    use tapwright::ledger::StockSample;
    let bar = BarSample {
        length_mm: 300.0,
        width_mm: 25.0,
        thickness_mm: 10.0,
        mass_g: 33.75,
        flexural_hz: Some(560.0),
        second_flexural_hz: None,
        longitudinal_hz: Some(8150.0),
    };
    let mut build = tapwright::ledger::Build::new("Stock", Family::Violin);
    let sample = StockSample {
        name: "wedge".into(),
        species: "spruce".into(),
        source_note: "invented".into(),
        along_grain: Some(bar.clone()),
        cross_grain: None,
    };
    build.put_stock_sample(sample.clone()).unwrap();
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("stock.ron");
    store::save(&path, &build).unwrap();
    assert_eq!(store::load(&path).unwrap(), build);

    let mut thick = bar.clone();
    thick.thickness_mm = 40.0;
    let bad = StockSample {
        along_grain: Some(thick),
        ..sample.clone()
    };
    let problem = build.put_stock_sample(bad).unwrap_err().to_string();
    assert!(problem.contains("40 mm thick"), "{problem}");
    assert_eq!(build.stock().len(), 1);
    build.remove_stock_sample("wedge").unwrap();
    assert!(build.stock().is_empty());
}

#[test]
fn a_version_1_file_with_a_version_2_field_is_refused() {
    let text = "(schema_version: 1, name: \"x\", family: Other, notes: \"\", created: \"2020-01-01T00:00:00Z\", parts: [(name: \"p\", kind: TopPlate, wood_species: None, outline_length_mm: None, outline_width_mm: None, labels: [], targets: {}, passes: [(number: 1, time: \"2020-01-01T00:00:00Z\", mass_g: 1.0, thickness: [], air_temp_c: None, relative_humidity_pct: None, note: \"\", modes: [])])])";
    let (error, message) = load_bad("mixed.ron", text.as_bytes());
    assert!(matches!(error, StoreError::Syntax { .. }), "{message}");
}

// ---- property test: any build the commands can make survives a round trip.

#[derive(Clone, Debug)]
struct PassPlan {
    mass_g: f64,
    unix_seconds: i64,
    modes: Vec<(f64, f64, f64, f64)>,
    thickness: Vec<(String, f64)>,
    air_temp_c: Option<f64>,
    relative_humidity_pct: Option<f64>,
    note: String,
    spectrum: Option<(f32, f32, Vec<f32>)>,
    labels: Vec<(usize, usize)>,
}

#[derive(Clone, Debug)]
struct PartPlan {
    name: String,
    kind: PartKind,
    species: Option<String>,
    outline_mm: (Option<f64>, Option<f64>),
    user_label: Option<String>,
    passes: Vec<PassPlan>,
    targets: Vec<(usize, f64)>,
}

fn finite() -> impl Strategy<Value = f64> {
    prop_oneof![-1.0e6..1.0e6, proptest::num::f64::NORMAL, Just(0.0)]
}

fn positive() -> impl Strategy<Value = f64> {
    prop_oneof![
        1.0e-3..1.0e5,
        proptest::num::f64::POSITIVE.prop_filter("finite", |x| x.is_finite())
    ]
}

/// Masses and thicknesses up to the model's upper limits (100 kg, 100 mm).
fn at_most(most: f64) -> impl Strategy<Value = f64> {
    prop_oneof![
        1.0e-3..most,
        Just(most),
        proptest::num::f64::POSITIVE.prop_filter("in range", move |x| *x <= most)
    ]
}

fn pass_plan() -> impl Strategy<Value = PassPlan> {
    (
        at_most(100_000.0),
        -2_208_988_800i64..253_402_300_799,
        prop::collection::vec((positive(), positive(), finite(), finite()), 0..6),
        prop::collection::vec((any::<String>(), at_most(100.0)), 0..4),
        prop::option::of(-40.0..60.0f64),
        prop::option::of(0.0..=100.0f64),
        any::<String>(),
        prop::option::of((
            1.0f32..100.0,
            200.0f32..20_000.0,
            prop::collection::vec(-200.0f32..200.0, 2..40),
        )),
        prop::collection::vec((0usize..6, 0usize..8), 0..4),
    )
        .prop_map(
            |(
                mass_g,
                unix_seconds,
                modes,
                thickness,
                air_temp_c,
                relative_humidity_pct,
                note,
                spectrum,
                labels,
            )| {
                PassPlan {
                    mass_g,
                    unix_seconds,
                    modes,
                    thickness,
                    air_temp_c,
                    relative_humidity_pct,
                    note,
                    spectrum,
                    labels,
                }
            },
        )
}

fn part_plan() -> impl Strategy<Value = PartPlan> {
    let kind = prop_oneof![
        Just(PartKind::TopPlate),
        Just(PartKind::BackPlate),
        Just(PartKind::AssembledBody),
        any::<String>().prop_map(PartKind::Custom),
    ];
    (
        any::<String>(),
        kind,
        prop::option::of(any::<String>()),
        (prop::option::of(positive()), prop::option::of(positive())),
        prop::option::of("[a-z ]{1,12}"),
        prop::collection::vec(pass_plan(), 0..5),
        prop::collection::vec((0usize..8, positive()), 0..3),
    )
        .prop_map(
            |(name, kind, species, outline_mm, user_label, passes, targets)| PartPlan {
                name,
                kind,
                species,
                outline_mm,
                user_label,
                passes,
                targets,
            },
        )
}

fn build_from(
    name: String,
    family: Family,
    created: i64,
    notes: String,
    parts: Vec<PartPlan>,
) -> Build {
    let mut build = Build::new(name, family);
    build.created = Timestamp::from_unix_seconds(created);
    build.notes = notes;
    for (index, plan) in parts.into_iter().enumerate() {
        let part = build
            .add_part(format!("{index}: {}", plan.name), plan.kind)
            .unwrap();
        part.wood_species = plan.species;
        part.outline_length_mm = plan.outline_mm.0;
        part.outline_width_mm = plan.outline_mm.1;
        if let Some(label) = plan.user_label {
            if !label.trim().is_empty() {
                part.add_label(label).unwrap();
            }
        }
        for pass in plan.passes {
            let mut thickness: Vec<ThicknessReading> = Vec::new();
            for (point, thickness_mm) in pass.thickness {
                if !thickness.iter().any(|r| r.point == point) {
                    thickness.push(ThicknessReading {
                        point,
                        thickness_mm,
                    });
                }
            }
            let modes = pass
                .modes
                .iter()
                .map(|&(frequency_hz, q, level_db, spread_hz)| MeasuredMode {
                    frequency_hz,
                    q,
                    level_db,
                    spread_hz,
                })
                .collect();
            let mut input = PassInput::new(pass.mass_g, modes);
            input.time = Timestamp::from_unix_seconds(pass.unix_seconds);
            input.thickness = thickness;
            input.air_temp_c = pass.air_temp_c;
            input.relative_humidity_pct = pass.relative_humidity_pct;
            input.note = pass.note;
            input.spectrum = pass
                .spectrum
                .map(|(low, high, levels)| StoredSpectrum::on_log_axis(low, high, levels).unwrap());
            let number = part.record_pass(input).unwrap().pass_number;
            let labels = part.labels().to_vec();
            let mode_count = part.pass(number).unwrap().modes().len();
            for (mode_index, label_index) in pass.labels {
                if mode_index < mode_count && !labels.is_empty() {
                    let label = &labels[label_index % labels.len()];
                    part.set_label(number, mode_index, Some(label)).unwrap();
                }
            }
        }
        let labels = part.labels().to_vec();
        for (label_index, hz) in plan.targets {
            if !labels.is_empty() {
                part.set_target(&labels[label_index % labels.len()], Some(hz))
                    .unwrap();
            }
        }
    }
    build
}

fn any_build() -> impl Strategy<Value = Build> {
    (
        any::<String>(),
        prop::sample::select(Family::ALL.to_vec()),
        -2_208_988_800i64..253_402_300_799,
        any::<String>(),
        prop::collection::vec(part_plan(), 0..4),
    )
        .prop_map(|(name, family, created, notes, parts)| {
            build_from(name, family, created, notes, parts)
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]

    #[test]
    fn round_trip_through_a_file_is_identical(build in any_build()) {
        prop_assert!(build.validate().is_ok());
        let folder = tempfile::tempdir().unwrap();
        let path = folder.path().join("round.ron");
        store::save(&path, &build).unwrap();
        let loaded = store::load(&path).unwrap();
        prop_assert_eq!(&loaded, &build);
        // Saving the loaded build writes the very same text.
        prop_assert_eq!(store::to_ron_text(&loaded).unwrap(), fs::read_to_string(&path).unwrap());
    }
}

#[cfg(unix)]
#[test]
fn saved_files_get_ordinary_permissions_and_keep_changed_ones() {
    use std::os::unix::fs::PermissionsExt;
    let folder = tempfile::tempdir().unwrap();
    let ordinary = write_file(folder.path(), "plain.txt", b"x");
    let path = folder.path().join("perm.ron");
    store::save(&path, &example_build()).unwrap();
    let mode = |p: &Path| fs::metadata(p).unwrap().permissions().mode() & 0o777;
    assert_eq!(
        mode(&path),
        mode(&ordinary),
        "same as any new file under this umask"
    );
    fs::set_permissions(&path, fs::Permissions::from_mode(0o640)).unwrap();
    store::save(&path, &example_build()).unwrap();
    assert_eq!(mode(&path), 0o640);
    assert_eq!(mode(&store::backup_path(&path)), 0o640);
}
