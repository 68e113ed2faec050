//! The acoustics layer against outside references (sources named beside
//! each check; see DEVELOPERS.md, "Sources").

use std::f64::consts::PI;

use tapwright::acoustics::cavity::helmholtz_frequency_hz;
use tapwright::acoustics::{
    coupled_correction, estimate_cavity, opening_conductance_m, solve_round_diameter_mm,
    solve_slot_length_mm, solve_volume_m3, speed_of_sound_m_s, AcousticsError, AirConditions,
    CavityGeometry, EndCorrection, Opening, SpeedOfSoundModel,
};

const ALL_END_CORRECTIONS: [EndCorrection; 4] = EndCorrection::ALL;

fn air(temp_c: f64, relative_humidity_pct: f64) -> AirConditions {
    AirConditions {
        temp_c,
        relative_humidity_pct,
        pressure_pa: 101_325.0,
        co2_ppm: 400.0,
    }
}

#[test]
fn cramer_1993_check_values() {
    // O. Cramer, J. Acoust. Soc. Am. 93(5):2510, 1993; check values computed
    // at 101 325 Pa and 400 ppm CO2 as listed in DEVELOPERS.md, "Sources".
    for (temp_c, rh, expected_m_s) in [
        (0.0, 0.0, 331.45),
        (20.0, 0.0, 343.36),
        (20.0, 50.0, 343.99),
    ] {
        let c = speed_of_sound_m_s(&air(temp_c, rh), SpeedOfSoundModel::Cramer).unwrap();
        assert!(
            (c - expected_m_s).abs() <= 0.05,
            "{temp_c} °C, {rh} % RH: {c} m/s, expected {expected_m_s}"
        );
    }
}

#[test]
fn iso_9613_1_at_20_c() {
    // ISO 9613-1:1993: c = 343.2·√(T/293.15), so 343.2 m/s at 20 °C.
    let c = speed_of_sound_m_s(&air(20.0, 50.0), SpeedOfSoundModel::Iso9613).unwrap();
    assert!((c - 343.2).abs() < 1e-9, "{c}");
    // And 331.3 m/s at 0 °C from the same form (343.2·√(273.15/293.15)).
    let c0 = speed_of_sound_m_s(&air(0.0, 50.0), SpeedOfSoundModel::Iso9613).unwrap();
    assert!((c0 - 343.2 * (273.15f64 / 293.15).sqrt()).abs() < 1e-9);
    assert!((c0 - 331.3).abs() < 0.05, "{c0}");
}

#[test]
fn round_hole_in_thin_wall_is_rayleigh_2a() {
    // Lord Rayleigh, The Theory of Sound II: K = 2a for a circular hole in a
    // very thin wall; DEVELOPERS.md, "Sources": πa²/(t + πa/2) returns 2a as t → 0.
    for diameter_mm in [5.0, 40.0, 86.0, 120.0] {
        let hole = Opening::Round { diameter_mm };
        let a_m = diameter_mm * 0.5e-3;
        let k = opening_conductance_m(&hole, 0.0, EndCorrection::ThinPlate);
        assert!((k - 2.0 * a_m).abs() < 1e-14, "{diameter_mm}: {k}");
        let k_thin = opening_conductance_m(&hole, 1e-9, EndCorrection::ThinPlate);
        assert!((k_thin - 2.0 * a_m).abs() < 1e-9 * a_m);
        // With thickness: exactly πa²/(t + πa/2) (DEVELOPERS.md, "Sources").
        let k_thick = opening_conductance_m(&hole, 3.0, EndCorrection::ThinPlate);
        let expected = PI * a_m * a_m / (3e-3 + PI * a_m / 2.0);
        assert!((k_thick - expected).abs() < 1e-12 * expected);
    }
}

#[test]
fn oval_with_equal_axes_equals_round_hole() {
    // K(0) = π/2, so πa/K(e) = 2a for a circle (DEVELOPERS.md, "Sources"; Rayleigh).
    for end_correction in ALL_END_CORRECTIONS {
        for thickness_mm in [0.0, 2.5, 10.0] {
            let round = Opening::Round { diameter_mm: 86.0 };
            let oval = Opening::Oval {
                length_mm: 86.0,
                width_mm: 86.0,
            };
            let k_round = opening_conductance_m(&round, thickness_mm, end_correction);
            let k_oval = opening_conductance_m(&oval, thickness_mm, end_correction);
            assert!((k_round - k_oval).abs() < 1e-12 * k_round);
        }
    }
}

/// K(e) by composite Simpson quadrature of ∫₀^{π/2} dθ/√(1 − e²sin²θ), an
/// evaluation independent of the arithmetic–geometric mean used in the code.
fn elliptic_k_by_quadrature(e_squared: f64) -> f64 {
    let steps = 20_000;
    let h = PI / 2.0 / steps as f64;
    let f = |theta: f64| 1.0 / (1.0 - e_squared * theta.sin().powi(2)).sqrt();
    let mut sum = f(0.0) + f(PI / 2.0);
    for i in 1..steps {
        let weight = if i % 2 == 1 { 4.0 } else { 2.0 };
        sum += weight * f(i as f64 * h);
    }
    sum * h / 3.0
}

#[test]
fn oval_matches_rayleigh_elliptic_formula() {
    // DEVELOPERS.md, "Sources": elliptical hole, thin wall, K = πa/K(e), e² = 1 − b²/a².
    for (length_mm, width_mm) in [(90.0, 60.0), (100.0, 20.0), (60.0, 90.0)] {
        let a_m = 0.5e-3 * f64::max(length_mm, width_mm);
        let b_m = 0.5e-3 * f64::min(length_mm, width_mm);
        let expected = PI * a_m / elliptic_k_by_quadrature(1.0 - (b_m / a_m).powi(2));
        let oval = Opening::Oval {
            length_mm,
            width_mm,
        };
        let k = opening_conductance_m(&oval, 0.0, EndCorrection::ThinPlate);
        assert!(
            (k - expected).abs() < 1e-9 * expected,
            "{length_mm}x{width_mm}: {k} vs {expected}"
        );
    }
}

#[test]
fn slender_oval_approaches_slot_formula() {
    // DEVELOPERS.md, "Sources": for a slender slot K ≈ πa/ln(4a/b), the b/a → 0 limit
    // of πa/K(e). The gap must shrink as the oval gets more slender.
    let mut previous_gap = f64::INFINITY;
    for ratio in [0.3, 0.1, 0.03, 0.01, 0.003] {
        let length_mm = 100.0;
        let width_mm = ratio * length_mm;
        let oval = Opening::Oval {
            length_mm,
            width_mm,
        };
        let slot = Opening::Slot {
            length_mm,
            mean_width_mm: width_mm,
        };
        let k_oval = opening_conductance_m(&oval, 0.0, EndCorrection::ThinPlate);
        let k_slot = opening_conductance_m(&slot, 0.0, EndCorrection::ThinPlate);
        let a_m = 0.05;
        let formula = PI * a_m / (4.0 * a_m / (0.5e-3 * width_mm)).ln();
        assert!((k_slot - formula).abs() < 1e-12 * formula);
        let gap = (k_oval - k_slot).abs() / k_slot;
        assert!(gap < previous_gap, "{ratio}: {gap} >= {previous_gap}");
        previous_gap = gap;
    }
    assert!(previous_gap < 1e-4, "{previous_gap}");
}

#[test]
fn conductances_add() {
    // DEVELOPERS.md, "Sources" (Rayleigh): well-separated openings' conductances add.
    let openings = vec![
        Opening::Round { diameter_mm: 40.0 },
        Opening::Oval {
            length_mm: 50.0,
            width_mm: 30.0,
        },
        Opening::Slot {
            length_mm: 70.0,
            mean_width_mm: 8.0,
        },
    ];
    let mut geometry = CavityGeometry::new(10e-3, openings.clone());
    geometry.wall_thickness_mm = 3.0;
    let all = estimate_cavity(&geometry).unwrap();
    let sum: f64 = openings
        .iter()
        .map(|opening| {
            let single = CavityGeometry {
                openings: vec![*opening],
                ..geometry.clone()
            };
            estimate_cavity(&single).unwrap().conductance_m
        })
        .sum();
    assert!((all.conductance_m - sum).abs() < 1e-15);
    // Two equal holes: √2 times the frequency of one (f ∝ √K).
    let one = CavityGeometry::new(2e-3, vec![Opening::Round { diameter_mm: 30.0 }]);
    let two = CavityGeometry::new(2e-3, vec![Opening::Round { diameter_mm: 30.0 }; 2]);
    let ratio =
        estimate_cavity(&two).unwrap().helmholtz_hz / estimate_cavity(&one).unwrap().helmholtz_hz;
    assert!((ratio - 2f64.sqrt()).abs() < 1e-12);
}

#[test]
fn helmholtz_hand_calculation() {
    // Hand calculation (no textbook worked example could be verified, so
    // this is our own arithmetic, done separately from the code):
    // V = 1 L, round hole Ø 20 mm (a = 10 mm) in a 10 mm wall, flanged
    // δ = 0.8216a per side (Norris & Sheng 1989), c = 343.2 m/s (ISO 9613-1,
    // 20 °C).
    //   K = πa²/(t + 2δ) = π·1e-4 / (0.01 + 0.016432) = 0.0118856 m
    //   f = c/(2π)·√(K/V) = 54.6218 · √11.8856 = 188.31 Hz
    let mut geometry = CavityGeometry::new(1e-3, vec![Opening::Round { diameter_mm: 20.0 }]);
    geometry.wall_thickness_mm = 10.0;
    geometry.end_correction = EndCorrection::Flanged;
    geometry.sound_model = SpeedOfSoundModel::Iso9613;
    let estimate = estimate_cavity(&geometry).unwrap();
    assert!(
        (estimate.conductance_m - 0.011_885_6).abs() < 1e-7,
        "{}",
        estimate.conductance_m
    );
    assert!(
        (estimate.helmholtz_hz - 188.31).abs() < 0.01,
        "{}",
        estimate.helmholtz_hz
    );
    // The same number from the bare formula f = (c/2π)·√(K/V) (Rayleigh).
    let bare = helmholtz_frequency_hz(343.2, estimate.conductance_m, 1e-3);
    assert!((bare - estimate.helmholtz_hz).abs() < 1e-9);
}

#[test]
fn guitar_case_is_plausible() {
    // DEVELOPERS.md, "Sources", computed example: 13 L, one round hole Ø 86 mm in a
    // 2.5 mm top, Cramer c at 20 °C 50 % RH: 133–141 Hz depending on the
    // end-correction model.
    for end_correction in [EndCorrection::Flanged, EndCorrection::ThinPlate] {
        let mut geometry = CavityGeometry::new(13e-3, vec![Opening::Round { diameter_mm: 86.0 }]);
        geometry.wall_thickness_mm = 2.5;
        geometry.end_correction = end_correction;
        let f = estimate_cavity(&geometry).unwrap().helmholtz_hz;
        assert!((133.0..=141.0).contains(&f), "{end_correction:?}: {f}");
    }
    // Unflanged (a hole ending in free air on both faces) has shorter end
    // corrections and so lands higher, outside that range: it does not
    // describe a sound hole in a top (our own reading, no source).
    let mut geometry = CavityGeometry::new(13e-3, vec![Opening::Round { diameter_mm: 86.0 }]);
    geometry.wall_thickness_mm = 2.5;
    geometry.end_correction = EndCorrection::Unflanged;
    assert!(estimate_cavity(&geometry).unwrap().helmholtz_hz > 141.0);
}

#[test]
fn violin_case_is_plausible() {
    // DEVELOPERS.md, "Sources", computed example: 2.0 L, two slender slots 70 × 8 mm,
    // thin wall, Cramer c at 20 °C 50 % RH: about 304 Hz.
    let slot = Opening::Slot {
        length_mm: 70.0,
        mean_width_mm: 8.0,
    };
    let mut geometry = CavityGeometry::new(2.0e-3, vec![slot, slot]);
    geometry.end_correction = EndCorrection::ThinPlate;
    let f = estimate_cavity(&geometry).unwrap().helmholtz_hz;
    assert!((f - 304.0).abs() < 1.5, "{f}");
    // A real violin's A0 is about 270–290 Hz (DEVELOPERS.md, "Sources", from memory):
    // the rigid-wall estimate must lie above it.
    assert!(f > 290.0);
}

#[test]
fn two_oscillator_worked_example() {
    // Christensen & Vistisen, JASA 68(3):758, 1980; worked example in
    // DEVELOPERS.md, "Sources": f− = 100, f+ = 200, f_c = 180 → f_h ≈ 132.7, f_t ≈ 150.8.
    let c = coupled_correction(100.0, 200.0, 180.0).unwrap();
    assert!((c.helmholtz_hz - 132.7).abs() < 0.05, "{}", c.helmholtz_hz);
    assert!((c.plate_hz - 150.8).abs() < 0.05, "{}", c.plate_hz);
    assert!((c.wall_pull_hz - (c.helmholtz_hz - 100.0)).abs() < 1e-12);
    assert!(c.wall_pull_cents < 0.0);
}

#[test]
fn two_oscillator_identities_hold() {
    // Christensen & Vistisen 1980 / Caldersmith 1978: f−² + f+² = f_h² + f_c²
    // and f−·f+ = f_h·f_t.
    for (minus, plus, sealed) in [
        (100.0, 200.0, 180.0),
        (98.0, 215.0, 190.0),
        (280.0, 480.0, 300.0),
    ] {
        let c = coupled_correction(minus, plus, sealed).unwrap();
        let sum_lhs = minus * minus + plus * plus;
        let sum_rhs = c.helmholtz_hz.powi(2) + sealed * sealed;
        assert!((sum_lhs - sum_rhs).abs() < 1e-9 * sum_lhs);
        assert!((minus * plus - c.helmholtz_hz * c.plate_hz).abs() < 1e-9 * minus * plus);
    }
}

#[test]
fn two_oscillator_recovers_a_forward_model() {
    // Forward model (Christensen & Vistisen 1980): the squared angular
    // frequencies of the coupled pair are the eigenvalues of the symmetric
    // matrix [[f_h², κ], [κ, f_c²]] with determinant f_h²·f_t², so
    // κ² = f_h²(f_c² − f_t²). Build f−, f+ from chosen f_h, f_t, f_c, then
    // invert them.
    for (f_h, f_t, f_c) in [
        (130.0, 150.0, 180.0),
        (105.0, 190.0, 215.0),
        (290.0, 420.0, 450.0),
    ] {
        let (d1, d2) = (f64::powi(f_h, 2), f64::powi(f_c, 2));
        let coupling_sq = d1 * (d2 - f64::powi(f_t, 2));
        let mean = 0.5 * (d1 + d2);
        let spread = (0.25 * (d1 - d2).powi(2) + coupling_sq).sqrt();
        let (minus, plus) = ((mean - spread).sqrt(), (mean + spread).sqrt());
        let c = coupled_correction(minus, plus, f_c).unwrap();
        assert!((c.helmholtz_hz - f_h).abs() < 1e-9 * f_h, "{c:?}");
        assert!((c.plate_hz - f_t).abs() < 1e-9 * f_t, "{c:?}");
    }
}

fn assert_reproduces(geometry: &CavityGeometry, target_hz: f64) {
    let f = estimate_cavity(geometry).unwrap().helmholtz_hz;
    assert!((f - target_hz).abs() < 0.01, "target {target_hz}, got {f}");
}

#[test]
fn inverse_solves_reproduce_the_target() {
    // Fed forward, each solved size gives the target within 0.01 Hz (issue 6).
    let mut guitar = CavityGeometry::new(13e-3, vec![]);
    guitar.wall_thickness_mm = 2.5;
    for target_hz in [80.0, 100.0, 121.7, 150.0] {
        let diameter_mm = solve_round_diameter_mm(&guitar, target_hz).unwrap();
        let mut full = guitar.clone();
        full.openings.push(Opening::Round { diameter_mm });
        assert_reproduces(&full, target_hz);
    }
    // A second f-hole beside a fixed one, on a 2 L violin at 25 °C.
    let fixed = Opening::Slot {
        length_mm: 70.0,
        mean_width_mm: 8.0,
    };
    let mut violin = CavityGeometry::new(2.0e-3, vec![fixed]);
    violin.wall_thickness_mm = 3.0;
    violin.air.temp_c = 25.0;
    for target_hz in [260.0, 280.0, 300.0] {
        let length_mm = solve_slot_length_mm(&violin, 7.0, target_hz).unwrap();
        let mut full = violin.clone();
        full.openings.push(Opening::Slot {
            length_mm,
            mean_width_mm: 7.0,
        });
        assert_reproduces(&full, target_hz);
    }
    // Volume with an oval and a round hole fixed.
    let mut body = CavityGeometry::new(
        f64::NAN,
        vec![
            Opening::Oval {
                length_mm: 90.0,
                width_mm: 60.0,
            },
            Opening::Round { diameter_mm: 25.0 },
        ],
    );
    body.wall_thickness_mm = 2.0;
    for target_hz in [95.0, 110.0, 130.0] {
        body.volume_m3 = solve_volume_m3(&body, target_hz).unwrap();
        assert_reproduces(&body, target_hz);
    }
}

#[test]
fn unreachable_target_is_one_clear_error() {
    let slot = Opening::Slot {
        length_mm: 70.0,
        mean_width_mm: 8.0,
    };
    let violin = CavityGeometry::new(2.0e-3, vec![slot, slot]);
    // Two f-holes already give about 298 Hz: adding a hole cannot lower it.
    let e = solve_round_diameter_mm(&violin, 250.0).unwrap_err();
    assert!(matches!(e, AcousticsError::TargetUnreachable { .. }));
    let message = e.to_string();
    assert!(
        message.contains("250 Hz") && !message.contains('\n'),
        "{message}"
    );
}

#[test]
fn nonsense_never_gives_nan() {
    let sizes = [f64::NAN, f64::INFINITY, -1.0, 0.0, 1e-3, 5.0, 86.0, 2000.0];
    let volumes = [f64::NAN, -1.0, 0.0, 1e-9, 2e-3, 13e-3, 5.0];
    for &volume_m3 in &volumes {
        for &size in &sizes {
            for opening in [
                Opening::Round { diameter_mm: size },
                Opening::Oval {
                    length_mm: size,
                    width_mm: 10.0,
                },
                Opening::Slot {
                    length_mm: 70.0,
                    mean_width_mm: size,
                },
            ] {
                let mut geometry = CavityGeometry::new(volume_m3, vec![opening]);
                geometry.wall_thickness_mm = size.min(50.0);
                if let Ok(estimate) = estimate_cavity(&geometry) {
                    assert!(estimate.helmholtz_hz.is_finite() && estimate.helmholtz_hz > 0.0);
                    assert!(estimate.sensitivities.hz_per_degree_c.is_finite());
                    assert!(estimate
                        .sensitivities
                        .hz_per_mm_of_opening
                        .iter()
                        .all(|v| v.is_finite()));
                }
            }
        }
    }
}
