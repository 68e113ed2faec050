//! Shape maps in the build file (schema version 4): a round trip, the
//! upgrade of a frozen version-3 file, and bad values refused.

use std::fs;
use std::path::Path;

use tapwright::ledger::store::{self, StoreError};
use tapwright::ledger::{
    Build, Family, LedgerError, MeasuredMode, PartKind, PassInput, StoredModeShape, StoredShapeMap,
    StoredTapPoint, SCHEMA_VERSION,
};
use tapwright::shapes::OutlineShape;

fn mode(frequency_hz: f64) -> MeasuredMode {
    MeasuredMode {
        frequency_hz,
        q: 50.0,
        level_db: -20.0,
        spread_hz: 0.3,
    }
}

/// A small invented map: four points, two modes.
fn shape_map() -> StoredShapeMap {
    let points = [
        ("1A", -40.0, 300.0),
        ("1B", 40.0, 300.0),
        ("2A", -60.0, 80.0),
        ("2B", 60.0, 80.0),
    ];
    StoredShapeMap {
        outline: OutlineShape::typical_violin(),
        points: points
            .iter()
            .map(|&(name, x_mm, y_mm)| StoredTapPoint {
                name: name.to_string(),
                x_mm,
                y_mm,
                taps: 3,
            })
            .collect(),
        modes: vec![
            StoredModeShape {
                frequency_hz: 88.0,
                q: 40.0,
                label: Some("mode 1".into()),
                values: vec![1.0, -0.93, -0.71, 0.75],
                spreads: vec![0.01, 0.02, 0.015, 0.01],
                uncertainties: vec![0.01, 0.012, 0.01, 0.01],
                quality: 0.98,
            },
            StoredModeShape {
                frequency_hz: 170.0,
                q: 50.0,
                label: None,
                values: vec![0.4, 0.38, -1.0, -0.97],
                spreads: vec![0.0, 0.03, 0.02, 0.01],
                uncertainties: vec![0.02, 0.02, 0.02, 0.02],
                quality: 0.93,
            },
        ],
    }
}

fn build_with(map: StoredShapeMap) -> Result<Build, LedgerError> {
    let mut build = Build::new("Shape map test", Family::Violin);
    let part = build.add_part("Top", PartKind::TopPlate).unwrap();
    let mut input = PassInput::new(70.0, vec![mode(88.0), mode(170.0)]);
    input.shape_map = Some(map);
    part.record_pass(input)?;
    Ok(build)
}

#[test]
fn a_shape_map_survives_a_round_trip() {
    let build = build_with(shape_map()).unwrap();
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("top.ron");
    store::save(&path, &build).unwrap();
    let text = fs::read_to_string(&path).unwrap();
    assert!(text.contains(&format!("schema_version: {SCHEMA_VERSION}")));
    assert!(text.contains("shape_map: Some("), "{text}");
    assert!(text.contains("outline: Violin("), "{text}");
    let loaded = store::load(&path).unwrap();
    assert_eq!(loaded, build);
    let map = loaded
        .part("Top")
        .unwrap()
        .pass(1)
        .unwrap()
        .shape_map
        .as_ref()
        .unwrap();
    assert_eq!(map.mode_labelled("mode 1").unwrap().frequency_hz, 88.0);
    assert_eq!(map.tap_points()[3].name, "2B");
}

#[test]
fn a_version_3_file_is_upgraded_without_shape_maps() {
    // tests/fixtures/ledger_v3_violin_top.ron was written by hand in the
    // version-3 layout and is frozen.
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/ledger_v3_violin_top.ron");
    let before = fs::read(&path).unwrap();
    let build = store::load(&path).unwrap();
    assert_eq!(fs::read(&path).unwrap(), before, "loading never writes");
    assert_eq!(build.schema_version(), 4);
    assert_eq!(build.name, "Violin (version-3 fixture)");
    assert_eq!(build.stock().len(), 1);
    let top = build.part("Top").unwrap();
    assert_eq!(top.targets().get("mode 5"), Some(&345.0));
    assert_eq!(top.passes().len(), 2);
    assert!(top.passes().iter().all(|p| p.shape_map.is_none()));
    let first = top.pass(1).unwrap();
    assert_eq!(first.thickness.len(), 2);
    assert_eq!(first.spectrum.as_ref().unwrap().len(), 16);
    let second = top.pass(2).unwrap();
    assert_eq!(second.modes().len(), 4);
    assert!(second.modes()[1].label_needs_confirmation());
    assert_eq!(second.modes()[2].label_name(), None);

    let folder = tempfile::tempdir().unwrap();
    let copy = folder.path().join("top.ron");
    store::save(&copy, &build).unwrap();
    let text = fs::read_to_string(&copy).unwrap();
    assert!(text.contains("schema_version: 4"), "{text}");
    assert!(text.contains("shape_map: None"), "{text}");
    assert_eq!(store::load(&copy).unwrap(), build);
}

#[test]
fn a_version_3_file_with_a_shape_map_is_refused() {
    // A shape map in a file that says version 3 mixes two layouts.
    let build = build_with(shape_map()).unwrap();
    let text =
        store::to_ron_text(&build)
            .unwrap()
            .replacen("schema_version: 4", "schema_version: 3", 1);
    let folder = tempfile::tempdir().unwrap();
    let path = folder.path().join("mixed.ron");
    fs::write(&path, text).unwrap();
    let error = store::load(&path).unwrap_err();
    assert!(matches!(error, StoreError::Syntax { .. }), "{error}");
}

#[test]
fn bad_shape_maps_are_refused_with_one_sentence() {
    type Spoil = fn(&mut StoredShapeMap);
    let cases: [(&str, Spoil); 12] = [
        ("values lie from −1 to 1", |m| m.modes[0].values[1] = 1.5),
        ("values lie from −1 to 1", |m| {
            m.modes[1].values[0] = f64::NAN
        }),
        ("3 values for 4 tap points", |m| {
            m.modes[0].values.pop();
        }),
        ("must be numbers of 0 or more", |m| {
            m.modes[1].spreads[2] = -0.1
        }),
        ("must be numbers of 0 or more", |m| {
            m.modes[0].uncertainties[0] = f64::INFINITY
        }),
        ("it lies from 0 to 1", |m| m.modes[1].quality = 1.2),
        ("Q is 0", |m| m.modes[0].q = 0.0),
        ("\"mode 7\" is not one of the part's labels", |m| {
            m.modes[1].label = Some("mode 7".into())
        }),
        ("label \"mode 1\" is on two modes", |m| {
            m.modes[1].label = Some("mode 1".into())
        }),
        ("tap point \"1B\" is listed twice", |m| {
            m.points[0].name = "1B".into()
        }),
        ("tap point \"2A\" has no taps", |m| m.points[2].taps = 0),
        ("must be narrower than both bouts", |m| {
            m.outline = OutlineShape::Violin(tapwright::shapes::BoutWidths {
                length_mm: 356.0,
                upper_bout_mm: 168.0,
                waist_mm: 190.0,
                lower_bout_mm: 206.0,
            })
        }),
    ];
    let folder = tempfile::tempdir().unwrap();
    let good_text = store::to_ron_text(&build_with(shape_map()).unwrap()).unwrap();
    for (expected, spoil) in cases {
        // Refused when the pass is recorded ...
        let mut map = shape_map();
        spoil(&mut map);
        let error = build_with(map.clone()).unwrap_err().to_string();
        assert!(error.contains(expected), "{error} (expected {expected})");
        assert!(error.contains("shape map"), "{error}");
        assert_eq!(error.lines().count(), 1);
        // ... and when a file holding it is loaded (numbers a text editor
        // can write: NaN and infinity are left to the first check).
        let mut build = build_with(shape_map()).unwrap();
        build
            .part_mut("Top")
            .unwrap()
            .pass_mut(1)
            .unwrap()
            .shape_map = Some(map);
        if let Ok(text) = store::to_ron_text(&build) {
            let path = folder.path().join("bad.ron");
            fs::write(&path, &text).unwrap();
            if text != good_text {
                let error = store::load(&path).unwrap_err();
                assert!(matches!(error, StoreError::Invalid { .. }), "{error}");
                assert!(error.to_string().contains(expected), "{error}");
            }
        }
        // Never saved.
        let path = folder.path().join("never.ron");
        assert!(store::save(&path, &build).is_err());
        assert!(!path.exists());
    }
}
