//! The demo builds in `sample_sessions/`, made with tapwright's own model.
//!
//! `TAPWRIGHT_REGENERATE_SAMPLES=1 cargo test --test sample_sessions`
//! rewrites the files from the generator below. Without it, the test checks
//! that the committed files load, hold plausible numbers, and equal what the
//! generator makes, so they stay in step with the model.
//!
//! Everything here is invented: the maker, the instruments and the numbers
//! (chosen inside the typical ranges of DEVELOPERS.md, "Sources").

use std::path::{Path, PathBuf};

use tapwright::acoustics::stock::BarSample;
use tapwright::ledger::store;
use tapwright::ledger::{
    Build, Family, MeasuredMode, Part, PartKind, PassInput, StockSample, StoredSpectrum,
    ThicknessReading, Timestamp,
};

const VIOLIN_FILE: &str = "sample_sessions/violin_wren.ron";
const GUITAR_FILE: &str = "sample_sessions/guitar_larkspur.ron";

/// Small fixed offsets (cents) so the demo series are not perfectly smooth.
const WIGGLE_CENTS: [f64; 9] = [0.0, 2.1, -1.4, 3.0, -2.2, 0.8, -1.1, 1.7, -2.6];

/// Rounds to `decimals` places; divides by the power of ten so the file
/// shows the short decimal ("0.69", not "0.6900000000000001").
fn round_to(value: f64, decimals: i32) -> f64 {
    let scale = 10f64.powi(decimals);
    (value * scale).round() / scale
}

/// A mode that follows f = f_start·(m/m_start)^k, rounded to 0.01 Hz.
#[derive(Clone, Copy)]
struct ModeTrack {
    label: Option<&'static str>,
    start_hz: f64,
    exponent: f64,
    q: f64,
    level_db: f64,
}

const fn track(
    label: Option<&'static str>,
    start_hz: f64,
    exponent: f64,
    q: f64,
    level_db: f64,
) -> ModeTrack {
    ModeTrack {
        label,
        start_hz,
        exponent,
        q,
        level_db,
    }
}

fn frequency_at(
    track: &ModeTrack,
    start_mass_g: f64,
    mass_g: f64,
    step: usize,
    offset: usize,
) -> f64 {
    let wiggle = WIGGLE_CENTS[(step + offset) % WIGGLE_CENTS.len()];
    let hz =
        track.start_hz * (mass_g / start_mass_g).powf(track.exponent) * 2f64.powf(wiggle / 1200.0);
    round_to(hz, 2)
}

/// A smooth synthetic spectrum: one resonance curve per mode over a floor.
fn spectrum(modes: &[MeasuredMode], low_hz: f32, high_hz: f32, points: usize) -> StoredSpectrum {
    let (ln_low, ln_high) = (f64::from(low_hz).ln(), f64::from(high_hz).ln());
    let levels = (0..points)
        .map(|i| {
            let f = (ln_low + (ln_high - ln_low) * i as f64 / (points - 1) as f64).exp();
            let power: f64 = modes
                .iter()
                .map(|m| {
                    let detune = 2.0 * m.q * (f - m.frequency_hz) / m.frequency_hz;
                    10f64.powf(m.level_db / 10.0) / (1.0 + detune * detune)
                })
                .sum::<f64>()
                + 1e-6;
            (10.0 * power.log10()) as f32
        })
        .collect();
    StoredSpectrum::on_log_axis(low_hz, high_hz, levels).unwrap()
}

struct Series<'a> {
    part_name: &'a str,
    masses_g: &'a [f64],
    tracks: &'a [ModeTrack],
    thickness_points: &'a [(&'a str, f64)],
    first_time: Timestamp,
    notes: &'a [&'a str],
    spectrum_range_hz: (f32, f32),
    offset: usize,
}

/// Records a thinning series on a part the way a maker would: labels set by
/// hand on pass 1, carried over afterwards (and checked), and confirmed
/// except on the latest pass.
fn record_series(build: &mut Build, series: &Series) {
    let start_mass_g = series.masses_g[0];
    let last_step = series.masses_g.len() - 1;
    for (step, &mass_g) in series.masses_g.iter().enumerate() {
        let modes: Vec<MeasuredMode> = series
            .tracks
            .iter()
            .enumerate()
            .map(|(i, t)| MeasuredMode {
                frequency_hz: frequency_at(t, start_mass_g, mass_g, step, series.offset + i),
                q: round_to(t.q * (1.0 + 0.02 * WIGGLE_CENTS[(step + i) % 9] / 3.0), 1),
                level_db: round_to(t.level_db + 0.3 * WIGGLE_CENTS[(step + 2 * i) % 9], 1),
                spread_hz: round_to(0.3 + 0.002 * t.start_hz, 2),
            })
            .collect();
        let mut input = PassInput::new(mass_g, modes.clone());
        input.time =
            Timestamp::from_unix_seconds(series.first_time.unix_seconds() + step as i64 * 93_600);
        input.thickness = series
            .thickness_points
            .iter()
            .map(|&(point, start_mm)| ThicknessReading {
                point: point.to_string(),
                thickness_mm: round_to(start_mm * (mass_g / start_mass_g).powf(0.95), 2),
            })
            .collect();
        input.air_temp_c = Some(round_to(20.5 + 0.4 * WIGGLE_CENTS[step % 9], 1));
        input.relative_humidity_pct = Some(round_to(46.0 + WIGGLE_CENTS[(step + 4) % 9], 0));
        input.note = series
            .notes
            .get(step)
            .copied()
            .unwrap_or_default()
            .to_string();
        let (low_hz, high_hz) = series.spectrum_range_hz;
        input.spectrum = Some(spectrum(&modes, low_hz, high_hz, 400));
        let part = build.part_mut(series.part_name).unwrap();
        let outcome = part.record_pass(input).unwrap();
        let pass_number = outcome.pass_number;
        for (index, t) in series.tracks.iter().enumerate() {
            let Some(label) = t.label else { continue };
            if step == 0 {
                part.set_label(pass_number, index, Some(label)).unwrap();
                continue;
            }
            let mode = part.pass(pass_number).unwrap().mode_labelled(label);
            let placed_hz = mode.map(|m| m.frequency_hz);
            assert_eq!(
                placed_hz,
                Some(modes[index].frequency_hz),
                "carry-over of {label} in {}",
                series.part_name
            );
            if step != last_step {
                part.confirm_label(pass_number, index).unwrap();
            }
        }
    }
}

/// One measured pass of an assembled body, labelled by hand.
fn record_body(
    part: &mut Part,
    mass_g: f64,
    time: Timestamp,
    note: &str,
    modes: &[(Option<&str>, f64, f64, f64)],
) {
    let measured: Vec<MeasuredMode> = modes
        .iter()
        .map(|&(_, frequency_hz, q, level_db)| MeasuredMode {
            frequency_hz,
            q,
            level_db,
            spread_hz: round_to(0.2 + 0.003 * frequency_hz, 2),
        })
        .collect();
    let mut input = PassInput::new(mass_g, measured.clone());
    input.time = time;
    input.air_temp_c = Some(21.0);
    input.relative_humidity_pct = Some(44.0);
    input.note = note.to_string();
    input.spectrum = Some(spectrum(&measured, 40.0, 2000.0, 400));
    let number = part.record_pass(input).unwrap().pass_number;
    for (index, &(label, ..)) in modes.iter().enumerate() {
        part.set_label(number, index, label).unwrap();
    }
}

fn violin() -> Build {
    let mut build = Build::new("Violin \"Wren\" (demo)", Family::Violin);
    build.created = Timestamp::from_utc(2024, 3, 4, 8, 30, 0).unwrap();
    build.notes = "Invented demo build by an invented maker, Oskar Threlfall-Umber. \
                   Spruce top with the bass bar fitted, one-piece maple back."
        .into();
    let top = build.add_part("Top", PartKind::TopPlate).unwrap();
    top.wood_species = Some("spruce".into());
    top.outline_length_mm = Some(356.0);
    top.outline_width_mm = Some(207.0);
    let back = build.add_part("Back", PartKind::BackPlate).unwrap();
    back.wood_species = Some("maple".into());
    back.outline_length_mm = Some(357.0);
    back.outline_width_mm = Some(208.0);
    build.add_part("Body", PartKind::AssembledBody).unwrap();

    record_series(
        &mut build,
        &Series {
            part_name: "Top",
            masses_g: &[85.4, 82.1, 78.9, 75.6, 72.8, 70.1, 67.6],
            tracks: &[
                track(Some("mode 1"), 101.0, 0.35, 32.0, -30.0),
                track(Some("mode 2"), 186.0, 0.40, 45.0, -22.0),
                track(None, 252.0, 0.45, 28.0, -34.0),
                track(Some("mode 5"), 381.0, 0.42, 58.0, -18.0),
                track(None, 468.0, 0.50, 40.0, -31.0),
            ],
            thickness_points: &[
                ("centre", 3.55),
                ("upper bout", 3.05),
                ("C-bout", 3.20),
                ("lower bout", 3.10),
            ],
            first_time: Timestamp::from_utc(2024, 3, 6, 9, 0, 0).unwrap(),
            notes: &[
                "Arching finished, graduated to about 3.5 mm.",
                "Took the lower bouts down.",
                "Upper bouts and flanks.",
                "Evened the C-bouts.",
                "Centre strip thinned.",
                "Light scraping all over.",
                "Final pass before the f-holes.",
            ],
            spectrum_range_hz: (40.0, 2000.0),
            offset: 0,
        },
    );
    record_series(
        &mut build,
        &Series {
            part_name: "Back",
            masses_g: &[121.5, 118.2, 115.0, 111.6, 108.9, 106.3, 104.0],
            tracks: &[
                track(Some("mode 1"), 116.0, 0.38, 40.0, -29.0),
                track(Some("mode 2"), 196.0, 0.44, 52.0, -21.0),
                track(None, 280.0, 0.40, 35.0, -33.0),
                track(Some("mode 5"), 399.0, 0.48, 65.0, -17.0),
            ],
            thickness_points: &[
                ("centre", 4.60),
                ("upper bout", 2.90),
                ("C-bout", 3.10),
                ("lower bout", 2.80),
            ],
            first_time: Timestamp::from_utc(2024, 3, 16, 10, 0, 0).unwrap(),
            notes: &[
                "Roughed out.",
                "",
                "Lower bouts.",
                "Upper bouts.",
                "",
                "Around the centre.",
                "Scraped.",
            ],
            spectrum_range_hz: (40.0, 2000.0),
            offset: 3,
        },
    );
    let body = build.part_mut("Body").unwrap();
    record_body(
        body,
        262.0,
        Timestamp::from_utc(2024, 4, 2, 15, 0, 0).unwrap(),
        "Closed box in the white, no neck.",
        &[
            (Some("A0"), 276.5, 18.0, -16.0),
            (Some("CBR"), 407.9, 35.0, -27.0),
            (Some("B1\u{2212}"), 463.4, 30.0, -19.0),
            (None, 494.0, 25.0, -30.0),
            (Some("B1+"), 540.8, 28.0, -18.5),
        ],
    );
    let top = build.part_mut("Top").unwrap();
    top.set_target("mode 5", Some(340.0)).unwrap();
    top.set_target("mode 2", Some(168.0)).unwrap();
    build
        .part_mut("Back")
        .unwrap()
        .set_target("mode 5", Some(365.0))
        .unwrap();
    add_violin_stock(&mut build);
    build
}

/// Two invented wood samples for the violin: sizes, masses and frequencies
/// are made up to land in the usual range of spruce and maple.
fn add_violin_stock(build: &mut Build) {
    let bar = |length_mm, width_mm, thickness_mm, mass_g, flexural_hz, longitudinal_hz| BarSample {
        length_mm,
        width_mm,
        thickness_mm,
        mass_g,
        flexural_hz: Some(flexural_hz),
        second_flexural_hz: None,
        longitudinal_hz,
    };
    let mut along = bar(300.0, 25.0, 10.0, 33.8, 560.0, Some(8150.0));
    along.second_flexural_hz = Some(1534.0);
    build
        .put_stock_sample(StockSample {
            name: "Top wedge A".into(),
            species: "spruce".into(),
            source_note: "Invented: offcut of the top wedge, air-dried six years.".into(),
            along_grain: Some(along),
            cross_grain: Some(bar(120.0, 25.0, 5.0, 6.8, 490.0, None)),
        })
        .unwrap();
    build
        .put_stock_sample(StockSample {
            name: "Back billet 2".into(),
            species: "maple".into(),
            source_note: "Invented: end of the one-piece back billet.".into(),
            along_grain: Some(bar(300.0, 25.0, 10.0, 46.5, 481.0, None)),
            cross_grain: Some(bar(120.0, 25.0, 5.0, 9.3, 555.0, None)),
        })
        .unwrap();
}

fn guitar() -> Build {
    let mut build = Build::new("Guitar \"Larkspur\" (demo)", Family::Guitar);
    build.created = Timestamp::from_utc(2024, 5, 20, 7, 45, 0).unwrap();
    build.notes = "Invented demo build by an invented maker, Oskar Threlfall-Umber. \
                   Braced spruce top, tapped free before closing the box."
        .into();
    let top = build.add_part("Top", PartKind::TopPlate).unwrap();
    top.wood_species = Some("spruce".into());
    top.outline_length_mm = Some(490.0);
    top.outline_width_mm = Some(370.0);
    build.add_part("Body", PartKind::AssembledBody).unwrap();
    record_series(
        &mut build,
        &Series {
            part_name: "Top",
            masses_g: &[214.0, 208.5, 203.0, 197.0, 191.5, 186.0],
            tracks: &[
                track(None, 128.0, 0.70, 30.0, -32.0),
                track(Some("monopole"), 196.0, 0.85, 38.0, -17.0),
                track(Some("cross-dipole"), 302.0, 0.80, 45.0, -24.0),
                track(Some("long-dipole"), 452.0, 0.75, 50.0, -27.0),
            ],
            thickness_points: &[("centre", 2.70), ("lower bout", 2.55), ("upper bout", 2.60)],
            first_time: Timestamp::from_utc(2024, 5, 22, 9, 0, 0).unwrap(),
            notes: &[
                "Braces glued, not yet shaped.",
                "Tapered the fan braces.",
                "Scalloped the lower braces.",
                "Thinned the lower bout edge.",
                "Lightened the upper transverse brace.",
                "Final shaping.",
            ],
            spectrum_range_hz: (40.0, 1000.0),
            offset: 5,
        },
    );
    let body = build.part_mut("Body").unwrap();
    record_body(
        body,
        1180.0,
        Timestamp::from_utc(2024, 6, 10, 14, 0, 0).unwrap(),
        "Box closed, binding on, no neck.",
        &[
            (Some("A0"), 101.5, 12.0, -14.0),
            (Some("top T(1,1)"), 203.2, 22.0, -15.0),
            (Some("back T(1,1)"), 238.6, 25.0, -22.0),
            (None, 305.0, 30.0, -28.0),
        ],
    );
    build
        .part_mut("Top")
        .unwrap()
        .set_target("monopole", Some(170.0))
        .unwrap();
    build
}

fn repo_path(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(relative)
}

fn regenerating() -> bool {
    std::env::var("TAPWRIGHT_REGENERATE_SAMPLES").is_ok_and(|v| v == "1")
}

/// Writes the file when regenerating; otherwise loads the committed file and
/// checks it equals the generator's build, value for value and byte for byte.
fn check_or_write(relative: &str, generated: &Build) -> Build {
    let path = repo_path(relative);
    if regenerating() {
        store::save(&path, generated).unwrap();
        let _ = std::fs::remove_file(store::backup_path(&path));
    }
    let loaded = store::load(&path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        &loaded, generated,
        "{relative} is out of date: run with TAPWRIGHT_REGENERATE_SAMPLES=1"
    );
    let text = std::fs::read_to_string(&path).unwrap();
    assert_eq!(
        text,
        store::to_ron_text(generated).unwrap(),
        "{relative} text differs from the generator's"
    );
    loaded
}

fn frequencies(part: &Part, label: &str) -> Vec<f64> {
    part.label_history(label)
        .iter()
        .map(|p| p.frequency_hz)
        .collect()
}

fn assert_falls(part: &Part, label: &str) {
    let f = frequencies(part, label);
    assert!(
        f.len() == part.passes().len(),
        "{label} in every pass of {}",
        part.name()
    );
    assert!(
        f.windows(2).all(|w| w[1] < w[0]),
        "{label} falls pass by pass: {f:?}"
    );
}

fn assert_within(what: &str, value: f64, low: f64, high: f64) {
    assert!(
        (low..=high).contains(&value),
        "{what} = {value}, expected {low}–{high}"
    );
}

#[test]
fn violin_sample_is_current_and_plausible() {
    let build = check_or_write(VIOLIN_FILE, &violin());
    let top = build.part("Top").unwrap();
    let back = build.part("Back").unwrap();
    for part in [top, back] {
        assert!((6..=8).contains(&part.passes().len()));
        for label in ["mode 1", "mode 2", "mode 5"] {
            assert_falls(part, label);
        }
        let masses: Vec<f64> = part.passes().iter().map(|p| p.mass_g).collect();
        assert!(masses.windows(2).all(|w| w[1] < w[0]));
    }
    // Typical values (DEVELOPERS.md, "Sources"): free top mode 5 about 320–370 Hz at
    // 60–75 g, mode 2 about 150–180 Hz; free back mode 5 about 340–390 Hz at
    // 95–120 g; mode 5 near an octave above mode 2 (Hutchins, Sci. Am. 1981).
    let top_last = top.latest_pass().unwrap();
    let back_last = back.latest_pass().unwrap();
    assert_within("top mass g", top_last.mass_g, 60.0, 75.0);
    assert_within(
        "top mode 5 Hz",
        top_last.mode_labelled("mode 5").unwrap().frequency_hz,
        320.0,
        370.0,
    );
    assert_within(
        "top mode 2 Hz",
        top_last.mode_labelled("mode 2").unwrap().frequency_hz,
        150.0,
        180.0,
    );
    assert_within("back mass g", back_last.mass_g, 95.0, 120.0);
    assert_within(
        "back mode 5 Hz",
        back_last.mode_labelled("mode 5").unwrap().frequency_hz,
        340.0,
        390.0,
    );
    for last in [top_last, back_last] {
        let ratio = last.mode_labelled("mode 5").unwrap().frequency_hz
            / last.mode_labelled("mode 2").unwrap().frequency_hz;
        assert_within("mode 5 / mode 2", ratio, 1.8, 2.2);
    }
    // The invented stock samples land in the handbook's range: USDA Forest
    // Products Laboratory, Wood Handbook (FPL-GTR-190, 2010), ch. 5, Table
    // 5-3a, at 12 % moisture content: Sitka spruce specific gravity 0.40
    // (density about 450 kg/m³ at 12 %), MOE about 10.8 GPa; sugar maple
    // specific gravity 0.63, MOE about 12.6 GPa (MOE values from memory).
    // Ranges are widened to cover the spread between trees.
    let stock = build.stock();
    assert_eq!(stock.len(), 2);
    let spruce = stock[0].along_figures().unwrap().unwrap();
    assert_within("spruce density", spruce.density_kg_m3, 380.0, 480.0);
    assert_within("spruce E GPa", spruce.youngs_modulus_gpa(), 9.0, 13.0);
    let maple = stock[1].along_figures().unwrap().unwrap();
    assert_within("maple density", maple.density_kg_m3, 550.0, 700.0);
    assert_within("maple E GPa", maple.youngs_modulus_gpa(), 9.5, 13.0);
    // Along/across ratios: common practice, no source (spruce about
    // 10–20, maple about 5–10).
    assert_within(
        "spruce grain ratio",
        stock[0].grain_ratio().unwrap(),
        8.0,
        20.0,
    );
    assert_within(
        "maple grain ratio",
        stock[1].grain_ratio().unwrap(),
        4.0,
        12.0,
    );
    // Closed violin body (DEVELOPERS.md, "Sources", from memory): A0 270–290, CBR
    // 380–430, B1− 440–490, B1+ 510–570 Hz.
    let body = build.part("Body").unwrap().latest_pass().unwrap();
    for (label, low, high) in [
        ("A0", 270.0, 290.0),
        ("CBR", 380.0, 430.0),
        ("B1−", 440.0, 490.0),
        ("B1+", 510.0, 570.0),
    ] {
        assert_within(
            label,
            body.mode_labelled(label).unwrap().frequency_hz,
            low,
            high,
        );
    }
    // Targets give forecasts that ask for a little more wood, from a fit.
    for (part, label) in [(top, "mode 5"), (top, "mode 2"), (back, "mode 5")] {
        let forecast = part.forecast(label).unwrap();
        assert!(
            forecast.mass_to_remove_g > 0.0 && forecast.mass_to_remove_g < 10.0,
            "{forecast:?}"
        );
        assert!(matches!(
            forecast.method,
            tapwright::ledger::ForecastMethod::FittedExponent { .. }
        ));
        assert!(forecast.thickness.is_some());
    }
}

#[test]
fn guitar_sample_is_current_and_plausible() {
    let build = check_or_write(GUITAR_FILE, &guitar());
    let top = build.part("Top").unwrap();
    assert!(top.passes().len() >= 5);
    for label in ["monopole", "cross-dipole", "long-dipole"] {
        assert_falls(top, label);
    }
    // Guitar body (DEVELOPERS.md, "Sources", from memory; Fletcher & Rossing 1998,
    // ch. 9): A0 about 90–110 Hz, main top mode about 180–230 Hz.
    let body = build.part("Body").unwrap().latest_pass().unwrap();
    assert_within(
        "A0",
        body.mode_labelled("A0").unwrap().frequency_hz,
        90.0,
        110.0,
    );
    assert_within(
        "top T(1,1)",
        body.mode_labelled("top T(1,1)").unwrap().frequency_hz,
        180.0,
        230.0,
    );
    let forecast = top.forecast("monopole").unwrap();
    assert!(forecast.mass_to_remove_g > 0.0, "{forecast:?}");
}
