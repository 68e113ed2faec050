//! Load and save of a large build: 200 passes with 2000-point spectra.
//! Targets (issue "The build ledger"): each under 50 ms, file under 5 MB.
//! The file size is printed before the timings.

use std::hint::black_box;

use criterion::{criterion_group, criterion_main, Criterion};
use tapwright::ledger::{
    store, Build, Family, MeasuredMode, PartKind, PassInput, StoredSpectrum, ThicknessReading,
    Timestamp,
};

const PASSES_PER_PART: usize = 100;
const SPECTRUM_POINTS: usize = 2000;

/// A pseudo-random ripple in [-1, 1] so levels are not all alike.
fn ripple(seed: &mut u64) -> f64 {
    *seed = seed
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    (*seed >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
}

fn spectrum(modes: &[MeasuredMode], seed: &mut u64) -> StoredSpectrum {
    let (low_hz, high_hz) = (20.0f64, 5000.0f64);
    let levels = (0..SPECTRUM_POINTS)
        .map(|i| {
            let f = low_hz * (high_hz / low_hz).powf(i as f64 / (SPECTRUM_POINTS - 1) as f64);
            let power: f64 = modes
                .iter()
                .map(|m| {
                    let detune = 2.0 * m.q * (f - m.frequency_hz) / m.frequency_hz;
                    10f64.powf(m.level_db / 10.0) / (1.0 + detune * detune)
                })
                .sum::<f64>()
                + 1e-7;
            (10.0 * power.log10() + 0.8 * ripple(seed)) as f32
        })
        .collect();
    StoredSpectrum::on_log_axis(low_hz as f32, high_hz as f32, levels).expect("valid spectrum")
}

/// Two plates of 100 passes each, 8 modes, 5 thickness readings and a
/// 2000-point spectrum per pass.
fn large_build() -> Build {
    let mut build = Build::new("Benchmark violin", Family::Violin);
    build.created = Timestamp::from_unix_seconds(1_700_000_000);
    let mut seed = 1;
    for (name, kind, start_mass_g) in [
        ("Top", PartKind::TopPlate, 95.0),
        ("Back", PartKind::BackPlate, 130.0),
    ] {
        let part = build.add_part(name, kind).expect("new part");
        for pass in 0..PASSES_PER_PART {
            let mass_g = start_mass_g * (1.0 - 0.003 * pass as f64);
            let fall = (mass_g / start_mass_g).powf(0.45);
            let modes: Vec<MeasuredMode> = [98.0, 181.0, 247.0, 371.0, 455.0, 530.0, 610.0, 720.0]
                .iter()
                .map(|&f| MeasuredMode {
                    frequency_hz: f * fall * (1.0 + 0.001 * ripple(&mut seed)),
                    q: 40.0 + 10.0 * ripple(&mut seed),
                    level_db: -25.0 + 5.0 * ripple(&mut seed),
                    spread_hz: 0.5 + 0.2 * ripple(&mut seed),
                })
                .collect();
            let mut input = PassInput::new(mass_g, modes.clone());
            input.time = Timestamp::from_unix_seconds(1_700_000_000 + 3600 * pass as i64);
            input.thickness = ["centre", "upper bout", "C-bout", "lower bout", "edge"]
                .iter()
                .map(|p| ThicknessReading {
                    point: (*p).to_string(),
                    thickness_mm: 3.0 * mass_g / start_mass_g + 0.1 * ripple(&mut seed),
                })
                .collect();
            input.air_temp_c = Some(20.0 + ripple(&mut seed));
            input.relative_humidity_pct = Some(45.0 + 5.0 * ripple(&mut seed));
            input.note = format!("pass {pass}: scraped the bouts");
            input.spectrum = Some(spectrum(&modes, &mut seed));
            let number = part.record_pass(input).expect("valid pass").pass_number;
            if number == 1 {
                for (index, label) in [(0, "mode 1"), (1, "mode 2"), (3, "mode 5")] {
                    part.set_label(1, index, Some(label)).expect("known label");
                }
            }
        }
        part.set_target("mode 5", Some(300.0)).expect("known label");
    }
    build
}

fn load_and_save(c: &mut Criterion) {
    let build = large_build();
    let folder = tempfile::tempdir().expect("temporary folder");
    let path = folder.path().join("large.ron");
    store::save(&path, &build).expect("first save");
    let bytes = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
    let passes: usize = build.parts().iter().map(|p| p.passes().len()).sum();
    println!(
        "ledger: {passes} passes with {SPECTRUM_POINTS}-point spectra: file {:.2} MB ({bytes} bytes; target under 5 MB)",
        bytes as f64 / 1e6
    );
    assert_eq!(store::load(&path).expect("load"), build);

    c.bench_function("ledger load (200 passes, spectra)", |b| {
        b.iter(|| store::load(black_box(&path)).expect("load"))
    });
    c.bench_function("ledger save (200 passes, spectra, with backup)", |b| {
        b.iter(|| store::save(black_box(&path), black_box(&build)).expect("save"))
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = load_and_save
}
criterion_main!(benches);
