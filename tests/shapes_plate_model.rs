//! The plate model against closed forms and published tables: a simply
//! supported rectangle (isotropic and orthotropic) and a free square plate.

use std::f64::consts::PI;

use tapwright::shapes::{Edges, Outline, OutlineShape, PlateMaterial, PlateModel};

fn rectangle(width_mm: f64, length_mm: f64) -> Outline {
    Outline::new(OutlineShape::Rectangle {
        length_mm,
        width_mm,
    })
    .unwrap()
}

#[test]
fn simply_supported_rectangle_matches_the_closed_form() {
    // ω = π²(m²/a² + n²/b²)·√(D/ρh): Leissa, Vibration of Plates, NASA
    // SP-160 (1969), ch. 4.
    let (a, b, h) = (0.2, 0.3, 2.0e-3);
    let material = PlateMaterial::isotropic(2700.0, 70e9, 0.3);
    let model = PlateModel::solve(
        &rectangle(a * 1e3, b * 1e3),
        &material,
        &|_, _| h * 1e3,
        Edges::SimplySupported,
        14,
    )
    .unwrap();
    let d = 70e9 * h.powi(3) / (12.0 * (1.0 - 0.09));
    let mut exact: Vec<f64> = (1..6)
        .flat_map(|m| (1..6).map(move |n| (m as f64, n as f64)))
        .map(|(m, n)| PI * PI * (m * m / (a * a) + n * n / (b * b)) * (d / (2700.0 * h)).sqrt())
        .map(|omega| omega / (2.0 * PI))
        .collect();
    exact.sort_by(f64::total_cmp);
    for (mode, expected) in model.modes().iter().zip(&exact).take(8) {
        assert!(
            (mode.frequency_hz / expected - 1.0).abs() < 1e-5,
            "{} vs {expected} Hz",
            mode.frequency_hz
        );
    }
}

#[test]
fn simply_supported_orthotropic_rectangle_matches_the_closed_form() {
    // The sine product solves D₁₁w,ₓₓₓₓ + 2(D₁₂ + 2D₆₆)w,ₓₓᵧᵧ + D₂₂w,ᵧᵧᵧᵧ
    // = ρhω²w exactly: ω = π²√((D₁₁(m/a)⁴ + 2(D₁₂+2D₆₆)(m/a)²(n/b)²
    // + D₂₂(n/b)⁴)/ρh) (Leissa 1969, ch. 11, orthotropic plates).
    let (a, b, h_mm) = (0.2, 0.4, 3.0);
    let spruce = PlateMaterial::typical_spruce();
    let model = PlateModel::solve(
        &rectangle(a * 1e3, b * 1e3),
        &spruce,
        &|_, _| h_mm,
        Edges::SimplySupported,
        16,
    )
    .unwrap();
    let d = spruce.bending_stiffness(h_mm);
    let rho_h = spruce.density_kg_m3 * h_mm * 1e-3;
    let mut exact: Vec<f64> = (1..8)
        .flat_map(|m| (1..8).map(move |n| (m as f64 / a, n as f64 / b)))
        .map(|(p, q)| {
            let stiffness = d.across * p.powi(4)
                + 2.0 * (d.coupling + 2.0 * d.twist) * p * p * q * q
                + d.along * q.powi(4);
            PI * PI * (stiffness / rho_h).sqrt() / (2.0 * PI)
        })
        .collect();
    exact.sort_by(f64::total_cmp);
    for (mode, expected) in model.modes().iter().zip(&exact).take(8) {
        assert!(
            (mode.frequency_hz / expected - 1.0).abs() < 1e-4,
            "{} vs {expected} Hz",
            mode.frequency_hz
        );
    }
}

#[test]
fn free_square_plate_matches_leissas_frequency_parameters() {
    // λ = ωa²√(ρh/D) of a completely free square plate, ν = 0.3:
    // 13.468, 19.596, 24.270, 34.801 (twice), 61.093 — the converged values
    // for Leissa's free square plate (Vibration of Plates, 1969, ch. 4;
    // from memory). Checked also against a published upper bound: Barton's
    // beam-function Ritz values 13.49, 19.79, 24.43, 35.02, 35.02 (M. V.
    // Barton, J. Appl. Mech. 18:129, 1951, as quoted in the Code_Aster
    // validation case SDLS01); a Ritz estimate from a richer basis must lie
    // at or below them.
    let (a, h) = (0.25, 2.0e-3);
    let material = PlateMaterial::isotropic(7850.0, 200e9, 0.3);
    let model = PlateModel::solve(
        &rectangle(a * 1e3, a * 1e3),
        &material,
        &|_, _| h * 1e3,
        Edges::Free,
        16,
    )
    .unwrap();
    let d = 200e9 * h.powi(3) / (12.0 * (1.0 - 0.09));
    let to_lambda = |f: f64| 2.0 * PI * f * a * a * (7850.0 * h / d).sqrt();
    let expected = [13.468, 19.596, 24.270, 34.801, 34.801, 61.093];
    let upper_bounds = [13.49, 19.79, 24.43, 35.02, 35.02];
    let found: Vec<f64> = model
        .modes()
        .iter()
        .take(6)
        .map(|m| to_lambda(m.frequency_hz))
        .collect();
    for (lambda, expected) in found.iter().zip(expected) {
        assert!(
            (lambda / expected - 1.0).abs() < 1e-3,
            "{found:?} vs {expected}"
        );
    }
    for (lambda, bound) in found.iter().zip(upper_bounds) {
        assert!(*lambda <= bound * (1.0 + 1e-4), "{found:?} above {bound}");
    }
}

#[test]
fn an_arch_stiffens_the_ring_mode_far_more_than_the_twisting_mode() {
    // A shallow shell (Marguerre) over the demo's violin outline: with no
    // arch it is the flat plate; arching raises the ring mode (the middle
    // against the rim, which must stretch an arched plate) much more than
    // the twisting mode (which need not): the reason a carved violin
    // plate's mode 5 lies near an octave above its mode 2 (C. M. Hutchins,
    // Scientific American 245(4), 1981; references.md). And the arched
    // model has converged: degree 14 (the demo's) and 16 agree within 2 %.
    use tapwright::shapes::demo_set::{demo_material, demo_plate, demo_thickness_mm, DEMO_ARCH};
    use tapwright::shapes::{modal_assurance, Arch};
    let arched = demo_plate().unwrap();
    let outline = &arched.outline;
    let thickness = |x: f64, y: f64| demo_thickness_mm(outline, x, y);
    let solve = |arch: Option<&Arch>, degree: usize| {
        PlateModel::solve_arched(
            outline,
            &demo_material(),
            &thickness,
            arch,
            Edges::Free,
            degree,
        )
        .unwrap()
    };
    let flat = solve(None, 14);
    let no_arch = solve(Some(&Arch { height_mm: 0.0 }), 14);
    for k in 0..5 {
        assert_eq!(
            flat.modes()[k].frequency_hz,
            no_arch.modes()[k].frequency_hz
        );
    }
    let finer = solve(Some(&DEMO_ARCH), 16);
    for k in 0..5 {
        let (coarse, fine) = (
            arched.model.modes()[k].frequency_hz,
            finer.modes()[k].frequency_hz,
        );
        assert!(
            (coarse / fine - 1.0).abs() < 0.02,
            "mode {}: {coarse} vs {fine}",
            k + 1
        );
    }
    // Each arched mode's flat counterpart: the flat mode of most alike shape.
    let on_grid = |model: &PlateModel, k: usize| -> Vec<f64> {
        arched
            .grid
            .iter()
            .map(|p| model.shape_at(k, p.x_mm, p.y_mm))
            .collect()
    };
    let raise = |k: usize| {
        let shape = on_grid(&arched.model, k);
        let twin = (0..10)
            .max_by(|&a, &b| {
                modal_assurance(&on_grid(&flat, a), &shape)
                    .total_cmp(&modal_assurance(&on_grid(&flat, b), &shape))
            })
            .unwrap();
        arched.model.modes()[k].frequency_hz / flat.modes()[twin].frequency_hz
    };
    let (twisting, ring) = (raise(0), raise(4));
    eprintln!("arching raises mode 1 × {twisting:.2}, mode 5 × {ring:.2}");
    assert!(twisting < 1.5, "{twisting}");
    assert!(ring > 1.6 * twisting, "{ring} vs {twisting}");
}
