//! `tapwright air` end to end: the built binary, its text and JSON output,
//! and one clear sentence with exit code 2 for each kind of bad input.

use std::process::{Command, Output};

fn air(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tapwright"))
        .arg("air")
        .args(args)
        .output()
        .expect("the tapwright binary runs")
}

fn stdout(output: &Output) -> String {
    String::from_utf8_lossy(&output.stdout).into_owned()
}

fn stderr(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

fn json(args: &[&str]) -> serde_json::Value {
    let mut all = args.to_vec();
    all.push("--json");
    let output = air(&all);
    assert!(output.status.success(), "{}", stderr(&output));
    serde_json::from_slice(&output.stdout).expect("valid JSON")
}

#[test]
fn guitar_table() {
    let output = air(&[
        "--volume-l",
        "13",
        "--opening",
        "round:86",
        "--thickness-mm",
        "2.5",
    ]);
    assert!(output.status.success(), "{}", stderr(&output));
    let text = stdout(&output);
    assert!(text.contains("Helmholtz frequency"), "{text}");
    assert!(text.contains("343.99 m/s"), "{text}");
    // Default end correction, 2.5 mm top (t = 0.058a, close to Rayleigh's
    // orifice): K = πa²/(t + 2δ) with δ = 0.7874a gives 138.1 Hz, inside
    // DEVELOPERS.md ("Sources"): 133–141 Hz for the sourced end-correction models.
    assert!(text.contains("138.1"), "{text}");
    assert!(stderr(&output).is_empty());
}

/// The default end correction reaches Rayleigh's thin-wall value: a round
/// hole of radius a in a wall of vanishing thickness has K = 2a (Rayleigh,
/// The Theory of Sound, vol. II). 40 mm hole, 0.01 mm wall, 1 L, 10 °C dry.
#[test]
fn thin_wall_round_hole_is_rayleigh_2a_by_default() {
    let v = json(&[
        "--volume-l",
        "1",
        "--opening",
        "round:40",
        "--thickness-mm",
        "0.01",
        "--temp-c",
        "10",
        "--rh",
        "0",
    ]);
    let conductance_m = v["conductance_m"].as_f64().expect("conductance_m");
    assert!(
        (conductance_m / 0.040 - 1.0).abs() < 0.005,
        "K = {conductance_m} m, 2a = 0.040 m"
    );
}

#[test]
fn json_has_the_promised_fields() {
    let v = json(&[
        "--volume-cm3",
        "2000",
        "--opening",
        "slot:70x8",
        "--opening",
        "slot:70x8",
        "--end-correction",
        "thin-plate",
    ]);
    let c = v["speed_of_sound_m_s"].as_f64().unwrap();
    assert!((c - 343.99).abs() < 0.05, "{c}");
    let openings = v["openings"].as_array().unwrap();
    assert_eq!(openings.len(), 2);
    assert_eq!(openings[0]["kind"], "slot");
    assert_eq!(openings[0]["length_mm"], 70.0);
    let each = openings[0]["conductance_m"].as_f64().unwrap();
    let total = v["conductance_m"].as_f64().unwrap();
    assert!((total - 2.0 * each).abs() < 1e-12);
    // DEVELOPERS.md, "Sources": about 304 Hz for the thin-wall violin case.
    let f = v["helmholtz_hz"].as_f64().unwrap();
    assert!((f - 304.0).abs() < 1.5, "{f}");
    assert!(v["note"].is_string() && v["cents"].is_number());
    let s = &v["sensitivities"];
    assert!(s["hz_per_litre"].as_f64().unwrap() < 0.0);
    assert!(s["hz_per_degree_c"].as_f64().unwrap() > 0.0);
    assert_eq!(s["hz_per_mm_of_opening"].as_array().unwrap().len(), 2);
}

#[test]
fn volume_units_agree() {
    // 1 in³ = 16.387064 cm³ exactly (2.54 cm per inch by definition).
    let litres = json(&["--volume-l", "1.6387064", "--opening", "round:40"]);
    let inches = json(&["--volume-in3", "100", "--opening", "round:40"]);
    let a = litres["helmholtz_hz"].as_f64().unwrap();
    let b = inches["helmholtz_hz"].as_f64().unwrap();
    assert!((a - b).abs() < 1e-9, "{a} {b}");
}

#[test]
fn solve_round_slot_and_volume() {
    let v = json(&[
        "--volume-l",
        "13",
        "--thickness-mm",
        "2.5",
        "--target-hz",
        "100",
        "--solve",
        "round",
    ]);
    assert_eq!(v["solved"]["unit"], "mm");
    assert!((v["helmholtz_hz"].as_f64().unwrap() - 100.0).abs() < 0.01);
    assert!(v["solved"]["value"].as_f64().unwrap() > 20.0);

    let v = json(&[
        "--volume-l",
        "2",
        "--opening",
        "slot:70x8",
        "--target-hz",
        "290",
        "--solve",
        "slot",
        "--slot-width-mm",
        "7",
    ]);
    assert!((v["helmholtz_hz"].as_f64().unwrap() - 290.0).abs() < 0.01);
    assert_eq!(v["openings"].as_array().unwrap().len(), 2);

    let v = json(&[
        "--opening",
        "round:86",
        "--thickness-mm",
        "2.5",
        "--target-hz",
        "120",
        "--solve",
        "volume",
    ]);
    assert!((v["helmholtz_hz"].as_f64().unwrap() - 120.0).abs() < 0.01);
    assert_eq!(v["solved"]["unit"], "L");
}

#[test]
fn coupled_and_air_check() {
    // Christensen & Vistisen 1980, worked example in DEVELOPERS.md, "Sources".
    let v = json(&["--coupled", "100,200,180", "--measured-a0-hz", "100"]);
    assert!((v["coupled"]["helmholtz_hz"].as_f64().unwrap() - 132.7).abs() < 0.05);
    assert!((v["coupled"]["plate_hz"].as_f64().unwrap() - 150.8).abs() < 0.05);
    assert!(v["air_check"]["difference_hz"].as_f64().unwrap() < 0.0);
    assert!(v.get("helmholtz_hz").is_none());

    let v = json(&[
        "--volume-l",
        "13",
        "--opening",
        "round:86",
        "--measured-a0-hz",
        "100",
    ]);
    let estimate = v["helmholtz_hz"].as_f64().unwrap();
    let check = &v["air_check"];
    assert!((check["difference_hz"].as_f64().unwrap() - (100.0 - estimate)).abs() < 1e-9);
    let cents = 1200.0 * (100.0 / estimate).log2();
    assert!((check["difference_cents"].as_f64().unwrap() - cents).abs() < 1e-9);

    let output = air(&["--coupled", "100,200,180"]);
    assert!(output.status.success(), "{}", stderr(&output));
    assert!(stdout(&output).contains("132.66"));
}

/// Runs a bad command; checks exit 2, nothing on stdout, one line on stderr
/// that mentions `expected`.
fn assert_refused(args: &[&str], expected: &str) {
    let output = air(args);
    let err = stderr(&output);
    assert_eq!(output.status.code(), Some(2), "{args:?}: {err}");
    assert!(
        output.stdout.is_empty(),
        "{args:?}: stdout {}",
        stdout(&output)
    );
    assert_eq!(err.trim_end().lines().count(), 1, "{args:?}: {err}");
    assert!(err.starts_with("tapwright: "), "{err}");
    assert!(err.contains(expected), "{args:?}: {err} lacks {expected}");
}

#[test]
fn bad_input_is_one_sentence_and_exit_2() {
    let hole = ["--opening", "round:86"];
    let with_hole = |extra: &[&'static str]| -> Vec<&'static str> {
        let mut v = vec!["--volume-l", "13"];
        v.extend_from_slice(&hole);
        v.extend_from_slice(extra);
        v
    };
    assert_refused(&["--opening", "round:86"], "--volume-l");
    assert_refused(
        &[
            "--volume-l",
            "13",
            "--volume-cm3",
            "13000",
            "--opening",
            "round:86",
        ],
        "only once",
    );
    assert_refused(&["--volume-l", "0", "--opening", "round:86"], "--volume-l");
    assert_refused(&["--volume-l", "-2", "--opening", "round:86"], "-2 L");
    assert_refused(
        &["--volume-cm3", "0.1", "--opening", "round:5"],
        "--volume-cm3",
    );
    assert_refused(&["--volume-l", "5000", "--opening", "round:86"], "5000 L");
    assert_refused(
        &["--volume-l", "abc", "--opening", "round:86"],
        "\"abc\" is not a number",
    );
    assert_refused(
        &["--volume-l", "nan", "--opening", "round:86"],
        "--volume-l",
    );
    assert_refused(&["--volume-l", "13"], "--opening");
    assert_refused(
        &["--volume-l", "13", "--opening", "hex:5"],
        "round, oval or slot",
    );
    assert_refused(
        &["--volume-l", "13", "--opening", "oval:90"],
        "--opening oval:90",
    );
    assert_refused(
        &["--volume-l", "13", "--opening", "round:0"],
        "diameter 0 mm",
    );
    assert_refused(&["--volume-l", "13", "--opening", "round:1500"], "1500 mm");
    assert_refused(
        &["--volume-l", "13", "--opening", "slot:8x70"],
        "mean width",
    );
    assert_refused(&["--volume-l", "1", "--opening", "round:300"], "can hold");
    assert_refused(&with_hole(&["--thickness-mm", "-1"]), "--thickness-mm");
    assert_refused(&with_hole(&["--temp-c", "40"]), "--temp-c");
    assert_refused(&with_hole(&["--rh", "120"]), "--rh");
    assert_refused(&with_hole(&["--pressure-kpa", "10"]), "--pressure-kpa");
    assert_refused(
        &with_hole(&["--end-correction", "wavy"]),
        "--end-correction",
    );
    assert_refused(&with_hole(&["--sound-model", "guess"]), "--sound-model");
    assert_refused(&with_hole(&["--a4", "0"]), "--a4");
    assert_refused(&with_hole(&["--target-hz", "100"]), "--solve");
    assert_refused(&with_hole(&["--solve", "round"]), "--target-hz");
    assert_refused(
        &with_hole(&["--target-hz", "100", "--solve", "round"]),
        "--target-hz",
    );
    assert_refused(
        &with_hole(&["--target-hz", "100", "--solve", "slot"]),
        "--slot-width-mm",
    );
    assert_refused(
        &with_hole(&["--target-hz", "100", "--solve", "neck"]),
        "--solve",
    );
    assert_refused(
        &with_hole(&["--target-hz", "100", "--solve", "volume"]),
        "--solve volume",
    );
    assert_refused(&with_hole(&["--slot-width-mm", "7"]), "--slot-width-mm");
    assert_refused(&["--coupled", "200,100,150"], "--coupled");
    assert_refused(&["--coupled", "100,200,250"], "between");
    assert_refused(&["--coupled", "100,200"], "--coupled");
    assert_refused(&with_hole(&["--measured-a0-hz", "-5"]), "--measured-a0-hz");
}

#[test]
fn the_air_is_checked_even_when_only_the_coupled_correction_is_asked_for() {
    // -300 °C is below absolute zero (−273.15 °C, SI definition of the
    // kelvin); it must never be taken in silence.
    assert_refused(
        &["--coupled", "100,200,180", "--temp-c", "-300"],
        "--temp-c",
    );
    assert_refused(&["--coupled", "100,200,180", "--rh", "140"], "--rh");
    assert_refused(
        &[
            "--volume-l",
            "13",
            "--opening",
            "round:86",
            "--temp-c",
            "-300",
            "--sound-model",
            "iso9613",
        ],
        "--temp-c",
    );
    // The same correction with sensible air still works.
    let output = air(&["--coupled", "100,200,180", "--temp-c", "22"]);
    assert_eq!(output.status.code(), Some(0), "{}", stderr(&output));
}
