//! Roving taps over a synthetic violin-shaped free plate: the shapes found
//! from the taps match the plate model's.
//!
//! The plate: a free violin-shaped spruce plate (the plate model of
//! `shapes::plate`, itself checked in `shapes_plate_model`), graduated from
//! 3.3 mm in the middle to 2.6 mm at the edge. Taps at the 45 points of a
//! 5 × 9 grid, three at each, with a random delay of the modal sound after
//! the click up to 0.5 ms, a half-sine force pulse of 0.4 ms, a faint
//! click, tap strengths varying by ±10 % and room noise 40 dB below the
//! loudest sample (the synthetic taps of `shapes::synthetic`).

use tapwright::shapes::synthetic::{synthesize_roving_taps, HeardMode, RovingTapSettings};
use tapwright::shapes::{
    estimate_shapes, modal_assurance, roving_trigger_settings, tap_grid, taps_in_recording, Edges,
    Outline, OutlineShape, PlateMaterial, PlateModel, PointTaps, ShapeSettings, TapPoint,
};

/// Modes put into the taps (the first five are checked).
const MODES_HEARD: usize = 8;
/// Q of each mode (wood, common practice, no source).
const QS: [f64; MODES_HEARD] = [45.0, 55.0, 60.0, 50.0, 65.0, 60.0, 55.0, 70.0];
/// How each mode reaches the microphone (invented, signs mixed).
const COUPLINGS: [f64; MODES_HEARD] = [0.6, 1.0, -0.8, 0.7, -1.0, 0.5, 0.6, -0.4];

struct Plate {
    grid: Vec<TapPoint>,
    frequencies_hz: Vec<f64>,
    /// shapes[k][p], largest magnitude 1 over the grid.
    shapes: Vec<Vec<f64>>,
}

fn test_plate() -> Plate {
    let outline = Outline::new(OutlineShape::typical_violin()).unwrap();
    let material = PlateMaterial {
        modulus_across_pa: 11.0e9 / 13.0,
        shear_modulus_pa: 0.92e9,
        ..PlateMaterial::typical_spruce()
    };
    let thickness = |x: f64, y: f64| {
        let r2 = (x / 103.0).powi(2) + ((y - 178.0) / 178.0).powi(2);
        3.3 - 0.7 * r2.min(1.0)
    };
    let model = PlateModel::solve(&outline, &material, &thickness, Edges::Free, 14).unwrap();
    let grid = tap_grid(&outline, 5, 9).unwrap();
    let shapes = (0..MODES_HEARD)
        .map(|k| {
            let values: Vec<f64> = grid
                .iter()
                .map(|p| model.shape_at(k, p.x_mm, p.y_mm))
                .collect();
            let peak = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            values.iter().map(|v| v / peak).collect()
        })
        .collect();
    Plate {
        grid,
        frequencies_hz: model.modes()[..MODES_HEARD]
            .iter()
            .map(|m| m.frequency_hz)
            .collect(),
        shapes,
    }
}

/// Per checked mode: MAC against the model, the points (|truth| > 0.3)
/// with the wrong sign, the points anywhere whose sign is shown as certain
/// but is wrong, and the strong points shown as uncertain.
struct Recovery {
    macs: Vec<f64>,
    wrong_signs: Vec<Vec<String>>,
    certain_but_wrong: Vec<Vec<String>>,
    strong_marked_uncertain: Vec<Vec<String>>,
}

fn recover(plate: &Plate, settings: &RovingTapSettings) -> Recovery {
    let heard: Vec<HeardMode> = (0..MODES_HEARD)
        .map(|k| HeardMode {
            frequency_hz: plate.frequencies_hz[k],
            q: QS[k],
            coupling: COUPLINGS[k],
        })
        .collect();
    let taps = synthesize_roving_taps(&heard, &plate.shapes, settings);
    let fs = settings.sample_rate_hz;
    let points: Vec<PointTaps> = plate
        .grid
        .iter()
        .zip(&taps.recordings)
        .map(|(point, recording)| {
            let found = taps_in_recording(recording, fs, &roving_trigger_settings());
            assert_eq!(
                found.accepted.len(),
                settings.taps_per_point,
                "point {}: {:?}",
                point.name,
                found.rejected
            );
            PointTaps {
                point: point.clone(),
                taps: found.accepted,
            }
        })
        .collect();
    let map = estimate_shapes(&points, fs, &ShapeSettings::default()).unwrap();
    let mut recovery = Recovery {
        macs: Vec::new(),
        wrong_signs: Vec::new(),
        certain_but_wrong: Vec::new(),
        strong_marked_uncertain: Vec::new(),
    };
    for k in 0..5 {
        let truth_hz = plate.frequencies_hz[k];
        let found = map
            .modes
            .iter()
            .find(|m| (m.frequency_hz / truth_hz - 1.0).abs() < 0.005)
            .unwrap_or_else(|| panic!("mode {} at {truth_hz:.1} Hz not found", k + 1));
        let truth = &plate.shapes[k];
        let mac = modal_assurance(&found.values, truth);
        let dot: f64 = found.values.iter().zip(truth).map(|(a, b)| a * b).sum();
        let names = |keep: &dyn Fn(usize) -> bool| -> Vec<String> {
            plate
                .grid
                .iter()
                .enumerate()
                .filter(|&(p, _)| keep(p))
                .map(|(_, point)| point.name.clone())
                .collect()
        };
        let wrong = names(&|p| {
            truth[p].abs() > 0.3 && (found.values[p] * dot).signum() != truth[p].signum()
        });
        let nodal = names(&|p| {
            !found.is_uncertain(p) && (found.values[p] * dot).signum() != truth[p].signum()
        });
        let strong = names(&|p| truth[p].abs() > 0.3 && found.is_uncertain(p));
        eprintln!(
            "mode {}: {:.2} Hz (model {truth_hz:.2}), MAC {mac:.4}, quality {:.3}, wrong signs {wrong:?}, certain but wrong {nodal:?}",
            k + 1,
            found.frequency_hz,
            found.quality
        );
        recovery.macs.push(mac);
        recovery.wrong_signs.push(wrong);
        recovery.certain_but_wrong.push(nodal);
        recovery.strong_marked_uncertain.push(strong);
    }
    recovery
}

fn check(recovery: &Recovery) {
    for k in 0..5 {
        assert!(
            recovery.macs[k] >= 0.95,
            "mode {}: MAC {}",
            k + 1,
            recovery.macs[k]
        );
        assert!(
            recovery.wrong_signs[k].is_empty(),
            "mode {}: wrong sign at {:?}",
            k + 1,
            recovery.wrong_signs[k]
        );
        assert!(
            recovery.strong_marked_uncertain[k].is_empty(),
            "mode {}: strong points marked uncertain: {:?}",
            k + 1,
            recovery.strong_marked_uncertain[k]
        );
    }
}

#[test]
fn shapes_of_the_first_five_modes_come_back_from_three_taps_per_point() {
    let plate = test_plate();
    let recovery = recover(&plate, &RovingTapSettings::default());
    check(&recovery);
    // Points near a nodal line give values near zero; where the sign is
    // shown as certain it is right.
    assert!(
        recovery.certain_but_wrong.iter().all(Vec::is_empty),
        "{:?}",
        recovery.certain_but_wrong
    );
}

#[test]
fn shapes_come_back_from_two_taps_per_point_and_other_noise() {
    let plate = test_plate();
    let settings = RovingTapSettings {
        taps_per_point: 2,
        sample_rate_hz: 16_000.0,
        strength_spread: 0.2,
        seed: 77,
        ..RovingTapSettings::default()
    };
    check(&recover(&plate, &settings));
}
