//! `tapwright stock` end to end: the built binary, its table and JSON, and
//! one sentence with exit code 2 for bad values.

use std::process::{Command, Output};

fn stock(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .arg("stock")
        .args(args)
        .output()
        .expect("the tapwright binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

const SPRUCE: [&str; 10] = [
    "--length-mm",
    "300",
    "--width-mm",
    "25",
    "--thickness-mm",
    "10",
    "--mass-g",
    "33.75",
    "--flexural-hz",
    "560",
];

#[test]
fn json_has_the_promised_fields() {
    let mut args = SPRUCE.to_vec();
    args.extend(["--longitudinal-hz", "8150", "--json"]);
    let out = stock(&args);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("valid JSON");
    // ASTM E1876 worked example (see tests/acoustics_stock.rs): 10.909 GPa;
    // density 450 kg/m³; longitudinal E = 4 ρ L² f² = 10.760 GPa.
    assert!((v["density_kg_m3"].as_f64().unwrap() - 450.0).abs() < 1e-9);
    assert!((v["youngs_modulus_gpa"].as_f64().unwrap() - 10.909_164).abs() < 1e-5);
    let c = v["speed_of_sound_m_s"].as_f64().unwrap();
    assert!((c - (10.909_164e9_f64 / 450.0).sqrt()).abs() < 0.01);
    assert!((v["radiation_ratio"].as_f64().unwrap() - c / 450.0).abs() < 1e-6);
    assert!((v["specific_modulus"].as_f64().unwrap() - 10.909_164 / 0.45).abs() < 1e-4);
    assert!(v["flexural"]["formula"]
        .as_str()
        .unwrap()
        .contains("ASTM E1876"));
    assert!(v["longitudinal"]["formula"]
        .as_str()
        .unwrap()
        .contains("4 rho L^2 f^2"));
    assert!((v["longitudinal"]["youngs_modulus_gpa"].as_f64().unwrap() - 10.760_445).abs() < 1e-6);
    assert!(v.get("second_flexural").is_none());
}

#[test]
fn the_table_names_the_formula() {
    let out = stock(&SPRUCE);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let table = text(&out.stdout);
    assert!(table.contains("10.909 GPa"), "{table}");
    assert!(table.contains("ASTM E1876"), "{table}");
    assert!(table.contains("450.0 kg/m³"), "{table}");
}

#[test]
fn bad_values_give_one_sentence_and_exit_code_2() {
    let cases: &[(&[&str], &str)] = &[
        (&["--width-mm", "0"], "--width-mm"),
        (&["--mass-g", "-2"], "--mass-g"),
        (&["--thickness-mm", "40"], "thick"),
        (&["--flexural-hz", "abc"], "not a number"),
        (&["--flexural-hz", "0"], "--flexural-hz"),
    ];
    for (change, needle) in cases {
        let mut args: Vec<&str> = SPRUCE.to_vec();
        let at = args.iter().position(|a| *a == change[0]).unwrap();
        args[at + 1] = change[1];
        let out = stock(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(out.stdout.is_empty());
        let stderr = text(&out.stderr);
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(stderr.contains(needle), "{stderr} should contain {needle}");
    }
    let out = stock(&SPRUCE[..8]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("neither"));
}

#[test]
fn units_change_the_bar_line_only_and_json_stays_si() {
    let metric = stock(&SPRUCE);
    let mut args = SPRUCE.to_vec();
    args.extend(["--units", "imperial"]);
    let imperial = stock(&args);
    assert!(imperial.status.success(), "{}", text(&imperial.stderr));
    let (metric, imperial) = (text(&metric.stdout), text(&imperial.stdout));
    assert!(
        metric.contains("300.0 × 25.0 × 10.0 mm, 33.75 g"),
        "{metric}"
    );
    // 300 mm = 11.81 in, 25 mm = 0.98 in, 10 mm = 0.39 in, 33.75 g =
    // 1.190 oz (1 in = 25.4 mm, 1 oz = 28.349523125 g).
    assert!(
        imperial.contains("11.81 × 0.98 × 0.39 in, 1.190 oz"),
        "{imperial}"
    );
    // Density, modulus and speed stay SI, the same in both.
    assert_eq!(
        metric.lines().skip(1).collect::<Vec<_>>(),
        imperial.lines().skip(1).collect::<Vec<_>>()
    );
    args.push("--json");
    let json: serde_json::Value = serde_json::from_slice(&stock(&args).stdout).expect("valid JSON");
    assert_eq!(json["length_mm"], 300.0);
    assert_eq!(json["mass_g"], 33.75);
    // A system that is neither is one sentence.
    let mut bad = SPRUCE.to_vec();
    bad.extend(["--units", "cubits"]);
    let out = stock(&bad);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains("--units") && err.contains("cubits"), "{err}");
}
