//! Speed of the tap analysis: one 1 s tap at 48 kHz, a 5-tap file, and a
//! bare real FFT of the same length for comparison (the target is one tap
//! within a small multiple, ≤ 10×, of that FFT). The ratio is printed, and
//! so is the worst tap of the real-strike corpus (`tests/data/real`) as a
//! ratio to one real FFT of its own record (target ≤ 20×).

#[path = "../tests/real/mod.rs"]
mod real;

use std::hint::black_box;
use std::time::Instant;

use criterion::{criterion_group, Criterion};
use realfft::RealFftPlanner;
use tapwright::analysis::synth::{add_modes, contact_pulse, NoiseGenerator};
use tapwright::analysis::{
    analyze_recording, find_taps, AnalysisSettings, TapAnalyzer, TriggerSettings,
};
use tapwright::demo::demo_plate_modes;

const FS: f64 = 48_000.0;

/// A 1 s record of the demo plate: 5 ms before the strike, then the decay.
fn one_tap_record() -> Vec<f32> {
    let mut x = vec![0.0; 48_240];
    contact_pulse(&mut x, FS, 240, 0.8, 0.08);
    add_modes(&mut x, FS, 240, &demo_plate_modes());
    let mut noise = NoiseGenerator::new(1);
    x.iter()
        .map(|&v| (v + 3e-4 * noise.gaussian()) as f32)
        .collect()
}

fn five_tap_file() -> Vec<f32> {
    let mut x = vec![0.0; (8.0 * FS) as usize];
    for i in 0..5 {
        let start = ((0.5 + 1.5 * i as f64) * FS) as usize;
        contact_pulse(&mut x, FS, start, 0.8, 0.08);
        add_modes(&mut x, FS, start, &demo_plate_modes());
    }
    let mut noise = NoiseGenerator::new(2);
    x.iter()
        .map(|&v| (v + 3e-4 * noise.gaussian()) as f32)
        .collect()
}

/// The fastest of repeated runs: on a machine shared with other work, the
/// run least disturbed by it (preemption lengthens a long run more often
/// than a short one, which biases a ratio of medians upward).
fn fastest(times: Vec<f64>) -> f64 {
    times.into_iter().fold(f64::INFINITY, f64::min)
}

fn seconds_of(f: &mut impl FnMut()) -> f64 {
    let t = Instant::now();
    f();
    t.elapsed().as_secs_f64()
}

/// The tap and the FFT are timed in alternation, so that a slower stretch
/// of a shared machine slows both and leaves the ratio alone.
fn print_ratio() {
    let record = one_tap_record();
    let mut analyzer = TapAnalyzer::new(AnalysisSettings::default(), FS);
    let mut tap = || drop(black_box(analyzer.analyze_record(&record, 240)));
    let mut ffts: Vec<_> = [48_000usize, 65_536]
        .into_iter()
        .map(|len| {
            let fft = RealFftPlanner::<f32>::new().plan_fft_forward(len);
            let input = vec![0.1f32; len];
            let output = fft.make_output_vec();
            (len, fft, input, output)
        })
        .collect();
    let (mut tap_s, mut fft_s) = (Vec::new(), vec![Vec::new(); ffts.len()]);
    for _ in 0..201 {
        tap_s.push(seconds_of(&mut tap));
        for ((_, fft, input, output), times) in ffts.iter_mut().zip(&mut fft_s) {
            times.push(seconds_of(&mut || {
                let _ = fft.process(input, output);
            }));
        }
    }
    let tap_s = fastest(tap_s);
    for ((len, ..), times) in ffts.iter().zip(fft_s) {
        let fft_s = fastest(times);
        println!(
            "one 1 s tap: {:.3} ms; bare real FFT of {len}: {:.3} ms; ratio {:.1}x",
            tap_s * 1e3,
            fft_s * 1e3,
            tap_s / fft_s
        );
    }
}

/// Every accepted tap of every corpus file, timed (fastest of `REPEATS`)
/// in alternation with a real FFT of its record's length; prints the
/// worst ratio and the median one.
fn print_corpus_ratio() {
    const REPEATS: usize = 15;
    let mut ratios: Vec<(f64, String, f64)> = Vec::new();
    for sample in real::load_corpus() {
        let fs = sample.sample_rate_hz;
        let file = real::three_strikes(&sample, 1);
        let taps = find_taps(&file, fs, &real::trigger_settings());
        let mut analyzer = TapAnalyzer::new(real::analysis_settings(), fs);
        for tap in taps.iter().filter(|t| t.rejected.is_none()) {
            let len = tap.samples.len();
            let fft = RealFftPlanner::<f32>::new().plan_fft_forward(len);
            let mut input = tap.samples.clone();
            let mut output = fft.make_output_vec();
            let (mut tap_s, mut fft_s) = (Vec::new(), Vec::new());
            for _ in 0..REPEATS {
                tap_s.push(seconds_of(&mut || drop(black_box(analyzer.analyze(tap)))));
                fft_s.push(seconds_of(&mut || {
                    let _ = fft.process(&mut input, &mut output);
                }));
            }
            let tap_s = fastest(tap_s);
            ratios.push((tap_s / fastest(fft_s), sample.file.clone(), tap_s));
        }
    }
    ratios.sort_by(|a, b| a.0.total_cmp(&b.0));
    if let Some((worst, file, tap_s)) = ratios.last() {
        let (middle, ..) = &ratios[ratios.len() / 2];
        println!(
            "real corpus, {} taps: worst tap {:.3} ms ({file}), {worst:.1}x one real FFT of its record; median tap {middle:.1}x",
            ratios.len(),
            tap_s * 1e3
        );
    }
}

fn benches(c: &mut Criterion) {
    let record = one_tap_record();
    let mut analyzer = TapAnalyzer::new(AnalysisSettings::default(), FS);
    c.bench_function("analyze one 1 s tap (7 modes, 48 kHz)", |b| {
        b.iter(|| black_box(analyzer.analyze_record(black_box(&record), 240)))
    });
    let file = five_tap_file();
    c.bench_function("analyze a 5-tap 8 s file", |b| {
        b.iter(|| {
            black_box(analyze_recording(
                black_box(&file),
                FS,
                &TriggerSettings::default(),
                &AnalysisSettings::default(),
            ))
        })
    });
    let fft = RealFftPlanner::<f32>::new().plan_fft_forward(48_000);
    let mut input = vec![0.1f32; 48_000];
    let mut output = fft.make_output_vec();
    c.bench_function("bare real FFT, 48000 points", |b| {
        b.iter(|| {
            let _ = fft.process(black_box(&mut input), &mut output);
        })
    });
}

criterion_group!(analysis, benches);

fn main() {
    // `cargo test --all-targets` runs this binary without `--bench`: then
    // criterion only checks that each benchmark runs, and so do we.
    if std::env::args().any(|a| a == "--bench") {
        print_ratio();
        print_corpus_ratio();
    }
    analysis();
    Criterion::default().configure_from_args().final_summary();
}
