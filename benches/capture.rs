//! Capture worker costs.
//!
//! 1. Armed with no taps: the worker's per-block work (level meter and tap
//!    trigger, `TapPipeline::process` in 2048-sample blocks as the worker
//!    reads them) on 60 s of quiet synthetic input, as fast as possible;
//!    reported as CPU time per second of audio (target: under 2 % of one
//!    core). Single-threaded, so wall time is CPU time.
//! 2. From the end of a tap's record to its event: the work done when the
//!    last sample of a record arrives (closing the record and measuring the
//!    tap), and end to end through the threads with a real-time synthetic
//!    source: the time from the moment the record's last sample was due to
//!    the moment the consumer received the tap event (target: under 20 ms).
//!
//! `cargo bench --bench capture` (add `-- --quick` for a short run). Under
//! `cargo test` the benchmarks run once each and the real-time part is
//! shortened.

use std::hint::black_box;
use std::time::{Duration, Instant};

use criterion::Criterion;
use tapwright::analysis::synth::SynthMode;
use tapwright::analysis::{FoundTap, Tap, TapAnalyzer};
use tapwright::audio::{
    CaptureEvent, CaptureHandle, CaptureSettings, Pacing, SampleGenerator, SourceChoice,
    SyntheticGenerator, SyntheticStrike, SyntheticTaps, TapPipeline,
};

const FS: u32 = 48_000;
const QUIET_SECONDS: f64 = 60.0;
/// The worker's block size (READ_CHUNK in src/audio/input/worker.rs).
const BLOCK: usize = 2048;

fn generate(taps: SyntheticTaps) -> Vec<f32> {
    let length = (taps.length_s.unwrap_or(1.0) * f64::from(taps.sample_rate_hz)) as usize;
    let mut generator = SyntheticGenerator::new(taps).expect("valid synthetic source");
    let mut samples = vec![0.0f32; length];
    let mut filled = 0;
    while filled < length {
        let n = generator.generate(&mut samples[filled..]);
        if n == 0 {
            break;
        }
        filled += n;
    }
    samples.truncate(filled);
    samples
}

/// Runs the pipeline over `samples` the way the worker does; returns the
/// number of events (none expected for quiet input).
fn run_pipeline(samples: &[f32]) -> usize {
    let mut pipeline = TapPipeline::new(&CaptureSettings::default(), FS, 0);
    let mut events = Vec::new();
    let level_every = (FS / 20) as usize; // 50 ms
    let mut since_level = 0;
    for block in samples.chunks(BLOCK) {
        pipeline.process(block, &mut events);
        since_level += block.len();
        if since_level >= level_every {
            since_level = 0;
            black_box(pipeline.take_level());
        }
    }
    events.len()
}

fn plate_modes() -> Vec<SynthMode> {
    vec![
        SynthMode::new(172.0, 45.0, 0.10),
        SynthMode::new(341.0, 60.0, 0.16),
        SynthMode::new(515.0, 50.0, 0.06),
        SynthMode::new(780.0, 55.0, 0.04),
    ]
}

/// One clean 1 s tap record as the trigger makes it.
fn one_found_tap() -> FoundTap {
    let taps = SyntheticTaps {
        sample_rate_hz: FS,
        modes: plate_modes(),
        strikes: vec![SyntheticStrike {
            at_s: 1.0,
            strength: 1.0,
        }],
        repeat_every_s: None,
        length_s: Some(2.5),
        noise_rms: 3e-4,
        seed: 5,
    };
    let samples = generate(taps);
    let found = tapwright::analysis::find_taps(&samples, f64::from(FS), &Default::default());
    found
        .into_iter()
        .next()
        .expect("the synthetic tap is found")
}

/// Time from each record's last sample being due to its event arriving,
/// through the real threads with a real-time source.
fn end_to_end_latencies(tap_count: usize) -> Vec<(Duration, Duration)> {
    let spacing_s = 1.5;
    let taps = SyntheticTaps {
        sample_rate_hz: FS,
        modes: plate_modes(),
        strikes: vec![SyntheticStrike {
            at_s: 0.5,
            strength: 1.0,
        }],
        repeat_every_s: Some(spacing_s),
        length_s: Some(spacing_s * tap_count as f64 + 0.2),
        noise_rms: 3e-4,
        seed: 6,
    };
    let started = Instant::now();
    let handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps,
            pacing: Pacing::RealTime,
        },
        CaptureSettings::default(),
        None,
    )
    .expect("start the synthetic source");
    // Two clocks for when a record's last sample was due: from before the
    // source was started (overstates: includes starting the threads), and
    // from when the worker announced the open source (understates by the
    // time that message took). The truth lies between.
    let mut announced = None;
    let mut latencies = Vec::new();
    while let Ok(event) = handle.events().recv_timeout(Duration::from_secs(10)) {
        let received = Instant::now();
        match event {
            CaptureEvent::SourceStarted { .. } => announced = Some(received),
            CaptureEvent::Tap(Tap {
                record: Some(tap),
                sample_rate_hz,
                ..
            }) => {
                let record_end = tap.start_sample + tap.samples.len() as u64;
                let after = Duration::from_secs_f64(record_end as f64 / f64::from(sample_rate_hz));
                let upper = received.saturating_duration_since(started + after);
                let lower =
                    received.saturating_duration_since(announced.unwrap_or(started) + after);
                latencies.push((lower, upper));
            }
            CaptureEvent::SourceEnded => break,
            _ => {}
        }
    }
    latencies
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let benchmarking = args.iter().any(|a| a == "--bench") && !args.iter().any(|a| a == "--test");
    let mut criterion = Criterion::default().configure_from_args();

    let quiet = generate(SyntheticTaps::quiet(FS, QUIET_SECONDS, 3e-4));
    let mut group = criterion.benchmark_group("capture");
    group.sample_size(10);
    group.bench_function("armed_no_taps_60s_quiet", |b| {
        b.iter(|| black_box(run_pipeline(black_box(&quiet))))
    });
    let tap = one_found_tap();
    let mut analyzer = TapAnalyzer::new(Default::default(), f64::from(FS));
    group.sample_size(30);
    group.bench_function("tap_record_end_to_event_work", |b| {
        b.iter(|| black_box(analyzer.analyze(black_box(&tap))))
    });
    group.finish();
    criterion.final_summary();

    // The figures, measured directly for the note.
    let runs = if benchmarking { 5 } else { 1 };
    let mut best = Duration::MAX;
    for _ in 0..runs {
        let start = Instant::now();
        let events = run_pipeline(&quiet);
        best = best.min(start.elapsed());
        assert_eq!(events, 0, "quiet input must give no tap events");
    }
    let per_audio_second = best.as_secs_f64() / QUIET_SECONDS;
    println!(
        "armed, no taps: {:.1} ms of CPU for {QUIET_SECONDS:.0} s of audio = {:.3} ms per audio second = {:.3} % of one core (target < 2 %)",
        best.as_secs_f64() * 1e3,
        per_audio_second * 1e3,
        per_audio_second * 100.0
    );

    let mut analysis_times: Vec<Duration> = (0..runs * 4)
        .map(|_| {
            let start = Instant::now();
            black_box(analyzer.analyze(&tap));
            start.elapsed()
        })
        .collect();
    analysis_times.sort();
    println!(
        "work at the end of a record (measure one 1 s tap): median {:.2} ms",
        analysis_times[analysis_times.len() / 2].as_secs_f64() * 1e3
    );

    let tap_count = if benchmarking { 8 } else { 2 };
    let latencies = end_to_end_latencies(tap_count);
    let mut lower: Vec<Duration> = latencies.iter().map(|l| l.0).collect();
    let mut upper: Vec<Duration> = latencies.iter().map(|l| l.1).collect();
    lower.sort();
    upper.sort();
    if let (Some(low_max), Some(up_max)) = (lower.last(), upper.last()) {
        let ms = |d: &Duration| d.as_secs_f64() * 1e3;
        println!(
            "record end to tap event, real-time source through ring, worker and channel ({} taps): median {:.1}–{:.1} ms, max {:.1}–{:.1} ms (lower–upper clock; target < 20 ms)",
            lower.len(),
            ms(&lower[lower.len() / 2]),
            ms(&upper[upper.len() / 2]),
            ms(low_max),
            ms(up_max)
        );
    } else {
        println!("record end to tap event: no tap arrived (the synthetic source should give {tap_count})");
    }
}
