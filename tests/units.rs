//! The maker's units at the ledger level: passes typed in inches, ounces
//! and °F (read by `text::units`, the window's one rule), kept in a build
//! file in mm, g and °C, and read back. Shown again in the units they were
//! typed in they read as typed; shown in mm, g and °C they read as the exact
//! conversion of what was typed, rounded to the shown decimals: nothing is
//! lost beyond the shown precision.
//!
//! Conversions against the exact definitions: 1 in = 25.4 mm and
//! 1 oz = 28.349523125 g (international yard and pound agreement, 1959);
//! °C = (°F − 32) × 5/9.

use proptest::prelude::*;
use tapwright::ledger::{store, Build, Family, PartKind, PassInput, ThicknessReading};
use tapwright::text::units::parse_in;
use tapwright::text::{LengthUnit, MassUnit, TemperatureUnit};

/// One pass as a maker in inches, ounces and °F types it (hundredths of
/// text: "0.118", "2.406", "68.5").
#[derive(Clone, Debug)]
struct Typed {
    thickness_in: String,
    mass_oz: String,
    temp_f: String,
}

fn typed() -> impl Strategy<Value = Typed> {
    (30u32..=400, 500u32..=12_000, 400i32..=1_000).prop_map(|(thou, milli_oz, tenth_f)| Typed {
        thickness_in: format!("{}.{:03}", thou / 1000, thou % 1000),
        mass_oz: format!("{}.{:03}", milli_oz / 1000, milli_oz % 1000),
        temp_f: format!("{}.{}", tenth_f / 10, tenth_f % 10),
    })
}

/// Records the typed pass on a new build, saves it and loads it again.
fn through_a_file(typed: &Typed) -> Build {
    let thickness_mm =
        parse_in(LengthUnit::Inch, "the thickness", &typed.thickness_in).expect("a typed number");
    let mass_g = parse_in(MassUnit::Ounce, "the mass", &typed.mass_oz).expect("a typed number");
    let temp_c = parse_in(
        TemperatureUnit::Fahrenheit,
        "the air temperature",
        &typed.temp_f,
    )
    .expect("a typed number");
    let mut build = Build::new("Invented guitar in inches", Family::Guitar);
    let part = build.add_part("Top", PartKind::TopPlate).expect("a part");
    let mut input = PassInput::new(mass_g, Vec::new());
    input.thickness.push(ThicknessReading {
        point: "centre".into(),
        thickness_mm,
    });
    input.air_temp_c = Some(temp_c);
    part.record_pass(input).expect("a valid pass");
    let folder = tempfile::tempdir().expect("temp folder");
    let path = folder.path().join("inches.ron");
    store::save(&path, &build).expect("saved");
    store::load(&path).expect("loaded")
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn typed_in_inches_reopened_in_millimetres_loses_nothing_beyond_the_shown_precision(
        typed in typed()
    ) {
        let build = through_a_file(&typed);
        let pass = build.part("Top").and_then(|p| p.pass(1)).expect("pass 1");
        let thickness_mm = pass.thickness[0].thickness_mm;
        let temp_c = pass.air_temp_c.expect("kept");

        // In the units typed: exactly the text typed.
        prop_assert_eq!(
            LengthUnit::Inch.thickness_text(thickness_mm),
            format!("{} in", typed.thickness_in)
        );
        prop_assert_eq!(MassUnit::Ounce.text(pass.mass_g), format!("{} oz", typed.mass_oz));
        prop_assert_eq!(
            TemperatureUnit::Fahrenheit.text(temp_c),
            format!("{} °F", typed.temp_f).replace('-', "\u{2212}")
        );

        // In mm, g and °C: the exact conversion, to the shown decimals.
        let inches: f64 = typed.thickness_in.parse().expect("typed");
        let ounces: f64 = typed.mass_oz.parse().expect("typed");
        let fahrenheit: f64 = typed.temp_f.parse().expect("typed");
        prop_assert_eq!(
            LengthUnit::Millimetre.thickness_text(thickness_mm),
            format!("{:.2} mm", inches * 25.4)
        );
        prop_assert_eq!(
            MassUnit::Gram.text(pass.mass_g),
            format!("{:.2} g", ounces * 28.349_523_125)
        );
        prop_assert_eq!(
            TemperatureUnit::Celsius.text(temp_c),
            format!("{:.1} °C", (fahrenheit - 32.0) * 5.0 / 9.0).replace('-', "\u{2212}")
        );
        // And the stored values are the typed ones to a part in 10¹².
        prop_assert!((thickness_mm - inches * 25.4).abs() <= 1e-12 * thickness_mm);
        prop_assert!((pass.mass_g - ounces * 28.349_523_125).abs() <= 1e-12 * pass.mass_g);
    }
}

#[test]
fn the_build_file_holds_millimetres_and_grams_whatever_was_typed() {
    let typed = Typed {
        thickness_in: "0.125".into(),
        mass_oz: "2.000".into(),
        temp_f: "68.0".into(),
    };
    let build = through_a_file(&typed);
    let text = store::to_ron_text(&build).expect("RON");
    // 0.125 in = 3.175 mm, 2 oz = 56.69904625 g, 68 °F = 20 °C, exactly.
    assert!(text.contains("thickness_mm: 3.175"), "{text}");
    assert!(text.contains("mass_g: 56.69904625"), "{text}");
    assert!(text.contains("air_temp_c: Some(20.0)"), "{text}");
}
