//! The bar formulas of `acoustics::stock` against outside values: ASTM
//! E1876's published flexural formula (a worked example computed by hand),
//! Euler–Bernoulli beam theory, the longitudinal bar formula, and handbook
//! values of spruce and maple.

use tapwright::acoustics::stock::{
    astm_e1876_t1, bar_density_kg_m3, bar_figures, flexural_modulus_pa, longitudinal_modulus_pa,
    BarSample, StockError, SLENDER_SECOND_TO_FIRST, WOOD_POISSON_RATIO,
};

fn relative_error(value: f64, expected: f64) -> f64 {
    (value / expected - 1.0).abs()
}

fn bar(length_mm: f64, width_mm: f64, thickness_mm: f64, mass_g: f64) -> BarSample {
    BarSample {
        length_mm,
        width_mm,
        thickness_mm,
        mass_g,
        flexural_hz: None,
        second_flexural_hz: None,
        longitudinal_hz: None,
    }
}

#[test]
fn flexural_modulus_matches_a_worked_example_of_astm_e1876() {
    // ASTM E1876, "Standard Test Method for Dynamic Young's Modulus, Shear
    // Modulus, and Poisson's Ratio by Impulse Excitation of Vibration",
    // rectangular bar: E = 0.9465 (m f² / b)(L³ / t³) T1, with
    // T1 = 1 + 6.585 (1 + 0.0752 μ + 0.8109 μ²)(t/L)² − 0.868 (t/L)⁴
    //      − 8.340 (1 + 0.2023 μ + 2.173 μ²)(t/L)⁴
    //        / (1 + 6.338 (1 + 0.1408 μ + 1.536 μ²)(t/L)²).
    // Worked by hand (a desk calculator, not this code) for L = 300 mm,
    // b = 25 mm, t = 10 mm, m = 33.75 g, f = 560 Hz, μ = 0.37:
    //   t/L = 1/30; T1 = 1.0083174;
    //   m f² / b = 33.75 × 313 600 / 25 = 423 360; (L/t)³ = 27 000;
    //   E = 0.9465 × 423 360 × 27 000 × 1.0083174 = 10.909 164 GPa.
    let flexural = flexural_modulus_pa(300.0, 25.0, 10.0, 33.75, 560.0, 0.37);
    assert!((flexural.t1_correction - 1.008_317_4).abs() < 1e-7);
    assert!(relative_error(flexural.youngs_modulus_pa, 10.909_164e9) < 1e-6);
    // The same bar through the checked path gives the same E.
    let mut sample = bar(300.0, 25.0, 10.0, 33.75);
    sample.flexural_hz = Some(560.0);
    assert_eq!(WOOD_POISSON_RATIO, 0.37);
    let figures = bar_figures(&sample).unwrap();
    assert!(relative_error(figures.youngs_modulus_pa, 10.909_164e9) < 1e-6);
}

#[test]
fn t1_for_slender_bars_is_the_standards_short_form() {
    // ASTM E1876: for L/t ≥ 20, T1 = 1 + 6.585 (t/L)² may be used. At
    // L/t = 20 the full form at μ = 0 differs from it only by the (t/L)⁴
    // terms (under 1e-4), and at μ = 0.37 by the μ terms (under 0.3 %).
    let short = 1.0 + 6.585 * 0.05 * 0.05;
    let at_zero = astm_e1876_t1(0.05, 0.0);
    assert!((at_zero - short).abs() < 1e-4, "{at_zero} vs {short}");
    let full = astm_e1876_t1(0.05, 0.37);
    assert!(
        full > short && relative_error(full, short) < 3e-3,
        "{full} vs {short}"
    );
    // The Poisson's ratio assumed for wood matters little at L/t = 10:
    // 0.3 against 0.45 moves T1 by less than 0.7 % (a claim of the module).
    let spread = astm_e1876_t1(0.1, 0.45) / astm_e1876_t1(0.1, 0.3) - 1.0;
    assert!(spread.abs() < 0.007, "{spread}");
}

#[test]
fn the_astm_constant_is_euler_bernoulli_theory_for_a_slender_bar() {
    // Euler–Bernoulli beam theory, free–free bar: f₁ = (β₁L)² / (2π L²) ·
    // √(E I / (ρ A)), β₁L = 4.730041 and β₂L = 7.853205 (the roots of
    // cos βL cosh βL = 1; textbook values, e.g. Blevins, Formulas for
    // Natural Frequency and Mode Shape, 1979, from memory). Synthesize the
    // frequency of a very slender bar (L/t = 200, T1 ≈ 1) and recover E.
    let (length_m, width_m, thickness_m): (f64, f64, f64) = (1.0, 0.02, 0.005);
    let (e_pa, density): (f64, f64) = (10.0e9, 450.0);
    let area = width_m * thickness_m;
    let inertia = width_m * thickness_m.powi(3) / 12.0;
    let beta1 = 4.730_041_f64;
    let f1 = beta1 * beta1 / (2.0 * std::f64::consts::PI * length_m * length_m)
        * (e_pa * inertia / (density * area)).sqrt();
    let mass_g = density * area * length_m * 1e3;
    let recovered = flexural_modulus_pa(1000.0, 20.0, 5.0, mass_g, f1, 0.37);
    assert!(relative_error(recovered.youngs_modulus_pa, e_pa) < 5e-4);
    // Second mode over first: (β₂/β₁)².
    let beta2 = 7.853_205_f64;
    assert!((SLENDER_SECOND_TO_FIRST - (beta2 / beta1).powi(2)).abs() < 1e-5);
}

#[test]
fn longitudinal_modulus_and_density() {
    // Free bar, first longitudinal mode: half a wavelength along the bar,
    // f = c / 2L, c = √(E/ρ), so E = 4 ρ L² f² (textbook physics).
    // 300 × 25 × 10 mm, 33.75 g: ρ = 0.03375 kg / 75 cm³ = 450 kg/m³.
    let density = bar_density_kg_m3(300.0, 25.0, 10.0, 33.75);
    assert!((density - 450.0).abs() < 1e-9);
    // E = 4 × 450 × 0.09 × 8150² = 10.760 445 GPa (by hand).
    let e = longitudinal_modulus_pa(density, 300.0, 8150.0);
    assert!(relative_error(e, 10.760_445e9) < 1e-9);
    let mut sample = bar(300.0, 25.0, 10.0, 33.75);
    sample.longitudinal_hz = Some(8150.0);
    let figures = bar_figures(&sample).unwrap();
    assert!(figures.flexural.is_none());
    let longitudinal = figures.longitudinal.as_ref().unwrap();
    assert!(relative_error(longitudinal.youngs_modulus_pa, 10.760_445e9) < 1e-9);
    // c = 2 L f exactly for the longitudinal mode.
    assert!((figures.speed_of_sound_m_s - 2.0 * 0.3 * 8150.0).abs() < 1e-6);
    assert!((figures.radiation_ratio - 4890.0 / 450.0).abs() < 1e-9);
    assert!((figures.specific_modulus - 10.760_445 / 0.45).abs() < 1e-6);
}

#[test]
fn handbook_spruce_and_maple_give_the_expected_figures() {
    // USDA Forest Products Laboratory, Wood Handbook (FPL-GTR-190, 2010),
    // ch. 5, Table 5-3a, 12 % moisture content: Sitka spruce specific
    // gravity 0.40 (seen in an FPL table), MOE 10.8 GPa (from memory);
    // sugar maple specific gravity 0.63, MOE 12.6 GPa (from memory). The
    // handbook's specific gravity is oven-dry mass over volume at 12 %, so
    // the density at 12 % is about 1.12 × 1000 × SG: 448 and 706 kg/m³.
    // Forward: the frequency such a bar gives (Euler–Bernoulli, T1 from
    // the standard), then back through the checked path.
    for (name, density, e_pa, c_range, ratio_range) in [
        (
            "Sitka spruce",
            448.0,
            10.8e9,
            (4700.0, 5100.0),
            (10.0, 12.0),
        ),
        ("sugar maple", 706.0, 12.6e9, (4000.0, 4500.0), (5.5, 6.5)),
    ] {
        let (l, b, t) = (300.0_f64, 25.0_f64, 10.0_f64);
        let mass_g = density * l * b * t * 1e-6;
        let t1 = astm_e1876_t1(t / l, WOOD_POISSON_RATIO);
        let f = (e_pa * b / (0.9465 * mass_g * (l / t).powi(3) * t1)).sqrt();
        let mut sample = bar(l, b, t, mass_g);
        sample.flexural_hz = Some(f);
        let figures = bar_figures(&sample).unwrap();
        assert!(
            relative_error(figures.youngs_modulus_pa, e_pa) < 1e-9,
            "{name}"
        );
        // Speed of sound and radiation ratio of these woods along the
        // grain: spruce about 5000 m/s and 11 m⁴/(kg·s), maple about
        // 4200 m/s and 6 (computed from the handbook values above).
        let c = figures.speed_of_sound_m_s;
        assert!((c_range.0..=c_range.1).contains(&c), "{name}: c = {c}");
        let rr = figures.radiation_ratio;
        assert!(
            (ratio_range.0..=ratio_range.1).contains(&rr),
            "{name}: c/ρ = {rr}"
        );
        // A plausible bar frequency for a 300 mm sample: common practice,
        // no source (a few hundred hertz).
        assert!((300.0..=800.0).contains(&f), "{name}: {f} Hz");
    }
}

#[test]
fn the_second_mode_checks_the_first() {
    let mut sample = bar(300.0, 25.0, 10.0, 33.75);
    sample.flexural_hz = Some(560.0);
    sample.second_flexural_hz = Some(560.0 * 2.73);
    let check = bar_figures(&sample).unwrap().second_mode.unwrap();
    assert!(check.consistent);
    assert!((check.ratio - 2.73).abs() < 1e-12);
    sample.second_flexural_hz = Some(560.0 * 2.0);
    assert!(
        !bar_figures(&sample)
            .unwrap()
            .second_mode
            .unwrap()
            .consistent
    );
    sample.second_flexural_hz = Some(500.0);
    assert!(matches!(
        bar_figures(&sample),
        Err(StockError::SecondNotAboveFirst { .. })
    ));
}

#[test]
fn bad_bars_are_refused_with_one_sentence() {
    let mut sample = bar(300.0, 25.0, 10.0, 33.75);
    sample.flexural_hz = Some(560.0);
    let cases: Vec<(BarSample, &str)> = vec![
        (
            BarSample {
                width_mm: 0.0,
                ..sample.clone()
            },
            "width 0 mm",
        ),
        (
            BarSample {
                mass_g: -3.0,
                ..sample.clone()
            },
            "mass -3 g",
        ),
        (
            BarSample {
                thickness_mm: 30.0,
                ..sample.clone()
            },
            "30 mm thick",
        ),
        (
            BarSample {
                length_mm: 20.0,
                thickness_mm: 5.0,
                ..sample.clone()
            },
            "20 mm long",
        ),
        (
            BarSample {
                mass_g: 3000.0,
                ..sample.clone()
            },
            "density",
        ),
        (
            BarSample {
                flexural_hz: Some(0.0),
                ..sample.clone()
            },
            "first flexural frequency 0 Hz",
        ),
        (
            BarSample {
                flexural_hz: None,
                ..sample.clone()
            },
            "neither",
        ),
    ];
    for (bad, needle) in cases {
        let message = bar_figures(&bad).unwrap_err().to_string();
        assert!(message.contains(needle), "{message} should name {needle}");
        assert_eq!(message.matches(". ").count(), 0, "one sentence: {message}");
        assert!(!message.contains('\n'));
    }
}
