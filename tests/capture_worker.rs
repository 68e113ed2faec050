//! The capture worker without any audio device: recordings replayed,
//! synthetic taps, and a scripted "device" that fails in the ways real ones
//! do. Nothing here measures speed; waits have generous limits only so a
//! hang fails instead of blocking the suite.

use std::sync::mpsc::RecvTimeoutError;
use std::time::{Duration, Instant};

use tapwright::analysis::synth::SynthMode;
use tapwright::analysis::{
    analyze_recording, AnalysisSettings, RejectReason, Tap, TriggerSettings,
};
use tapwright::audio::{
    AudioError, CaptureEvent, CaptureHandle, CaptureSettings, Direction, OpenSource, Pacing,
    SampleGenerator, SampleSource, SourceChoice, SourceRead, SyntheticGenerator, SyntheticStrike,
    SyntheticTaps,
};

/// Longest any test waits for one event before calling it a hang.
const HANG_LIMIT: Duration = Duration::from_secs(30);

fn plate_modes() -> Vec<SynthMode> {
    vec![
        SynthMode::new(172.0, 45.0, 0.10),
        SynthMode::new(341.0, 60.0, 0.16),
        SynthMode::new(515.0, 50.0, 0.06),
    ]
}

fn taps_at(
    strikes: &[(f64, f64)],
    length_s: Option<f64>,
    repeat_every_s: Option<f64>,
) -> SyntheticTaps {
    SyntheticTaps {
        sample_rate_hz: 48_000,
        modes: plate_modes(),
        strikes: strikes
            .iter()
            .map(|&(at_s, strength)| SyntheticStrike { at_s, strength })
            .collect(),
        repeat_every_s,
        length_s,
        noise_rms: 3e-4,
        seed: 11,
    }
}

/// Collects events until `done` says so, the source ends, or a hang.
fn collect_until(
    handle: &CaptureHandle,
    mut done: impl FnMut(&[CaptureEvent]) -> bool,
) -> Vec<CaptureEvent> {
    let mut events = Vec::new();
    loop {
        match handle.events().recv_timeout(HANG_LIMIT) {
            Ok(event) => {
                let ended = matches!(event, CaptureEvent::SourceEnded);
                events.push(event);
                if ended || done(&events) {
                    return events;
                }
            }
            Err(RecvTimeoutError::Timeout) => {
                panic!("no event for {HANG_LIMIT:?}; so far: {}", summary(&events))
            }
            Err(RecvTimeoutError::Disconnected) => return events,
        }
    }
}

fn summary(events: &[CaptureEvent]) -> String {
    events
        .iter()
        .filter(|e| !matches!(e, CaptureEvent::Level(_)))
        .map(|e| match e {
            CaptureEvent::SourceStarted { .. } => "started".to_owned(),
            CaptureEvent::TapStarted { index, .. } => format!("tap{index}…"),
            CaptureEvent::Tap(Tap {
                index,
                rejected: None,
                ..
            }) => format!("tap{index} ok"),
            CaptureEvent::Tap(Tap {
                index,
                rejected: Some(reason),
                ..
            }) => format!("tap{index} {reason}"),
            CaptureEvent::Overrun {
                dropped_samples_total,
            } => format!("overrun {dropped_samples_total}"),
            CaptureEvent::DeviceLost { message } => format!("lost: {message}"),
            CaptureEvent::Retrying { attempt, .. } => format!("retry {attempt}"),
            CaptureEvent::Status { message } => format!("status: {message}"),
            CaptureEvent::SourceEnded => "ended".to_owned(),
            CaptureEvent::Level(_) => String::new(),
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// (index, rejected reason) of each finished tap, in arrival order.
fn tap_outcomes(events: &[CaptureEvent]) -> Vec<(usize, Option<RejectReason>)> {
    events
        .iter()
        .filter_map(|e| match e {
            CaptureEvent::Tap(Tap {
                index, rejected, ..
            }) => Some((*index, *rejected)),
            _ => None,
        })
        .collect()
}

/// Every tap event carries the next number, and each strike's
/// `TapStarted` comes before its finished tap (too-quiet taps have none).
fn assert_tap_order(events: &[CaptureEvent]) {
    let mut expected = 1;
    let mut started: Option<usize> = None;
    for event in events {
        match event {
            CaptureEvent::TapStarted { index, .. } => {
                assert_eq!(
                    *index,
                    expected,
                    "TapStarted out of order: {}",
                    summary(events)
                );
                assert!(
                    started.is_none(),
                    "two TapStarted in a row: {}",
                    summary(events)
                );
                started = Some(*index);
            }
            CaptureEvent::Tap(Tap { index, .. }) => {
                assert_eq!(*index, expected, "tap out of order: {}", summary(events));
                let quiet = matches!(
                    event,
                    CaptureEvent::Tap(Tap {
                        rejected: Some(RejectReason::TooQuiet),
                        ..
                    })
                );
                assert!(
                    quiet || started == Some(*index),
                    "tap {index} without TapStarted: {}",
                    summary(events)
                );
                started = None;
                expected += 1;
            }
            _ => {}
        }
    }
}

#[test]
fn replay_finds_every_tap_the_batch_analysis_finds() {
    let recording = tapwright::demo::demo_recording().expect("bundled demo recording");
    let settings = CaptureSettings::default();
    let batch = analyze_recording(
        &recording.samples,
        f64::from(recording.sample_rate_hz),
        &settings.trigger,
        &settings.analysis,
    );
    assert!(
        batch.taps.len() >= 5,
        "the demo recording should hold several taps"
    );

    let handle = CaptureHandle::start(
        SourceChoice::Replay {
            recording: recording.clone(),
            pacing: Pacing::AsFastAsPossible,
            looped: false,
        },
        settings,
        None,
    )
    .expect("start replay");
    let events = collect_until(&handle, |_| false);

    assert!(matches!(
        events.first(),
        Some(CaptureEvent::SourceStarted {
            sample_rate_hz: 48_000,
            ..
        })
    ));
    assert!(
        matches!(events.last(), Some(CaptureEvent::SourceEnded)),
        "{}",
        summary(&events)
    );
    assert!(
        !events
            .iter()
            .any(|e| matches!(e, CaptureEvent::Overrun { .. })),
        "lossless replay dropped samples"
    );
    assert_tap_order(&events);

    let live: Vec<(usize, Option<RejectReason>)> = tap_outcomes(&events);
    let expected: Vec<(usize, Option<RejectReason>)> =
        batch.taps.iter().map(|t| (t.index, t.rejected)).collect();
    assert_eq!(live, expected);
    // The demo's fourth strike bounces (see demo.rs): it must be rejected.
    assert_eq!(live[3], (4, Some(RejectReason::DoubleStrike)));

    // Same onsets and the same measurement as the batch analysis.
    for (event, batch_tap) in events.iter().filter(|e| e.is_tap()).zip(&batch.taps) {
        match event {
            CaptureEvent::Tap(Tap {
                onset_s,
                analysis: Some(analysis),
                ..
            }) => {
                assert!((onset_s - batch_tap.onset_s).abs() < 1e-9);
                let batch_analysis = batch_tap.analysis.as_ref().expect("batch analysis");
                assert_eq!(analysis.modes, batch_analysis.modes);
            }
            CaptureEvent::Tap(Tap {
                onset_s,
                analysis: None,
                ..
            }) => {
                assert!((onset_s - batch_tap.onset_s).abs() < 1e-9)
            }
            _ => unreachable!(),
        }
    }
}

#[test]
fn synthetic_taps_are_found_measured_and_rejected_for_the_right_reasons() {
    // A clean strike, one that clips, one that bounces, another clean one.
    let strikes = [(0.5, 1.0), (2.0, 12.0), (3.5, 1.0), (3.64, 0.8), (5.0, 0.9)];
    let handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps: taps_at(&strikes, Some(7.0), None),
            pacing: Pacing::AsFastAsPossible,
        },
        CaptureSettings::default(),
        None,
    )
    .expect("start synthetic");
    let events = collect_until(&handle, |_| false);
    assert_tap_order(&events);
    assert_eq!(
        tap_outcomes(&events),
        vec![
            (1, None),
            (2, Some(RejectReason::Clipped)),
            (3, Some(RejectReason::DoubleStrike)),
            (4, None)
        ],
        "{}",
        summary(&events)
    );
    for event in &events {
        if let CaptureEvent::Tap(Tap {
            analysis: Some(analysis),
            onset_s,
            ..
        }) = event
        {
            assert!(
                [0.5, 5.0].iter().any(|t| (onset_s - t).abs() < 0.003),
                "onset {onset_s}"
            );
            // The synthesised modes are the truth (analytic, no outside source).
            for truth in plate_modes() {
                let nearest = analysis
                    .modes
                    .iter()
                    .map(|m| m.frequency_hz)
                    .min_by(|a, b| {
                        (a - truth.frequency_hz)
                            .abs()
                            .total_cmp(&(b - truth.frequency_hz).abs())
                    })
                    .expect("modes found");
                assert!(
                    (nearest - truth.frequency_hz).abs() < 0.002 * truth.frequency_hz,
                    "{nearest} vs {truth:?}"
                );
            }
        }
    }
    // The level meter saw the clipped strike.
    assert!(events
        .iter()
        .any(|e| matches!(e, CaptureEvent::Level(level) if level.clipped)));
}

#[test]
fn slow_consumer_loses_no_tap_events() {
    // Short records and a tap every 0.25 s: far more events than the
    // channel holds, delivered as fast as the worker takes them.
    let settings = CaptureSettings {
        trigger: TriggerSettings {
            record_ms: 120.0,
            ..Default::default()
        },
        ..Default::default()
    };
    let taps = taps_at(&[(0.1, 1.0)], Some(100.0), Some(0.25));
    let handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps,
            pacing: Pacing::AsFastAsPossible,
        },
        settings,
        None,
    )
    .expect("start synthetic");
    // The consumer looks away long enough for the channel to fill up.
    std::thread::sleep(Duration::from_secs(3));
    let events = collect_until(&handle, |_| false);
    assert!(matches!(events.last(), Some(CaptureEvent::SourceEnded)));
    assert_tap_order(&events);
    let outcomes = tap_outcomes(&events);
    assert_eq!(outcomes.len(), 400, "{}", summary(&events));
    assert!(
        outcomes.iter().all(|(_, rejected)| rejected.is_none()),
        "{}",
        summary(&events)
    );
    assert!(!events
        .iter()
        .any(|e| matches!(e, CaptureEvent::Overrun { .. })));
}

#[test]
fn flooding_source_with_a_stalled_consumer_counts_the_overrun() {
    // Like the ALSA file plugin: samples arrive faster than real time and
    // the ring (0.1 s here) cannot hold them while the consumer is away.
    let settings = CaptureSettings {
        trigger: TriggerSettings {
            record_ms: 120.0,
            ..Default::default()
        },
        ring_capacity_s: 0.1,
        ..Default::default()
    };
    let taps = taps_at(&[(0.1, 1.0)], Some(200.0), Some(0.25));
    let mut handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps,
            pacing: Pacing::Flood,
        },
        settings,
        None,
    )
    .expect("start");
    std::thread::sleep(Duration::from_secs(2));
    let events = collect_until(&handle, |events| {
        events
            .iter()
            .any(|e| matches!(e, CaptureEvent::Overrun { .. }))
    });
    let dropped = events.iter().find_map(|e| match e {
        CaptureEvent::Overrun {
            dropped_samples_total,
        } => Some(*dropped_samples_total),
        _ => None,
    });
    assert!(
        dropped.is_some_and(|d| d > 0),
        "no overrun reported: {}",
        summary(&events)
    );
    handle.stop();
    let mut all = events;
    all.extend(handle.try_events());
    // Whatever was lost, the taps that were reported are whole and in order.
    assert_tap_order(&all);
    assert!(!handle.is_running());
}

#[test]
fn settings_change_while_running() {
    let settings = CaptureSettings {
        trigger: TriggerSettings {
            record_ms: 200.0,
            ..Default::default()
        },
        ..Default::default()
    };
    let taps = taps_at(&[(0.3, 1.0)], None, Some(0.6));
    let mut handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps,
            pacing: Pacing::RealTime,
        },
        settings.clone(),
        None,
    )
    .expect("start");
    let record_ms =
        |tap: &tapwright::analysis::FoundTap| (tap.samples.len() - tap.onset_index) as f64 / 48.0;

    let first = collect_until(&handle, |events| events.iter().any(|e| e.is_tap()));
    let first_tap = first.iter().find_map(|e| match e {
        CaptureEvent::Tap(Tap {
            record: Some(tap),
            analysis: Some(analysis),
            ..
        }) => Some((tap.clone(), analysis.clone())),
        _ => None,
    });
    let (tap, analysis) = first_tap.expect("first tap accepted");
    assert!((record_ms(&tap) - 200.0).abs() < 1.0);
    assert!(analysis
        .modes
        .iter()
        .any(|m| (m.frequency_hz - 172.0).abs() < 1.0));

    // Longer records, and a band that leaves out the lowest mode.
    let changed = CaptureSettings {
        trigger: TriggerSettings {
            record_ms: 300.0,
            ..Default::default()
        },
        analysis: AnalysisSettings {
            band_low_hz: 250.0,
            ..Default::default()
        },
        ..settings
    };
    handle.set_settings(changed).expect("worker running");
    let later = collect_until(&handle, |events| {
        events.iter().filter(|e| e.is_tap()).count() >= 3
    });
    let last = later.iter().rev().find_map(|e| match e {
        CaptureEvent::Tap(Tap {
            record: Some(tap),
            analysis: Some(analysis),
            ..
        }) => Some((tap.clone(), analysis.clone())),
        _ => None,
    });
    let (tap, analysis) = last.expect("a later tap accepted");
    assert!(
        (record_ms(&tap) - 300.0).abs() < 1.0,
        "record {} ms",
        record_ms(&tap)
    );
    assert!(
        analysis.modes.iter().all(|m| m.frequency_hz >= 250.0),
        "{:?}",
        analysis.modes
    );
    assert!(analysis
        .modes
        .iter()
        .any(|m| (m.frequency_hz - 341.0).abs() < 1.0));
    handle.stop();
}

#[test]
fn stop_and_drop_end_the_worker() {
    for use_drop in [false, true] {
        let taps = tapwright::demo::demo_plate_taps();
        let mut handle = CaptureHandle::start(
            SourceChoice::Synthetic {
                taps,
                pacing: Pacing::RealTime,
            },
            CaptureSettings::default(),
            None,
        )
        .expect("start");
        let events = collect_until(&handle, |events| {
            events.iter().any(|e| matches!(e, CaptureEvent::Level(_)))
        });
        assert!(events.iter().any(|e| matches!(e, CaptureEvent::Level(_))));
        assert!(handle.is_running());
        let (done, finished) = std::sync::mpsc::channel();
        std::thread::spawn(move || {
            if use_drop {
                drop(handle);
            } else {
                handle.stop();
                handle.stop(); // twice is harmless
                assert!(!handle.is_running());
            }
            let _ = done.send(());
        });
        assert!(
            finished.recv_timeout(HANG_LIMIT).is_ok(),
            "stopping hung (drop: {use_drop})"
        );
    }
}

#[test]
fn notify_is_called_for_events() {
    let count = std::sync::Arc::new(std::sync::atomic::AtomicUsize::new(0));
    let seen = std::sync::Arc::clone(&count);
    let notify: tapwright::audio::Notify = std::sync::Arc::new(move || {
        seen.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    });
    let mut handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps: taps_at(&[(0.5, 1.0)], Some(2.0), None),
            pacing: Pacing::AsFastAsPossible,
        },
        CaptureSettings::default(),
        Some(notify),
    )
    .expect("start");
    let events = collect_until(&handle, |_| false);
    // The worker calls notify just after it sends; joining it makes sure
    // the call for the last event has happened before counting.
    handle.stop();
    // Every event (those dropped aside, and none are here) was announced.
    assert_eq!(
        count.load(std::sync::atomic::Ordering::Relaxed),
        events.len()
    );
}

#[test]
fn empty_recording_is_refused_at_start() {
    let recording = tapwright::wav_io::MonoRecording {
        sample_rate_hz: 48_000,
        samples: Vec::new(),
    };
    let error = CaptureHandle::start(
        SourceChoice::Replay {
            recording,
            pacing: Pacing::RealTime,
            looped: false,
        },
        CaptureSettings::default(),
        None,
    )
    .expect_err("nothing to play");
    assert_eq!(error.to_string(), "the recording holds no samples");
}

// ---- A scripted device that fails the ways real ones do. ----

/// What one attempt to open the scripted device does.
#[derive(Debug)]
enum Attempt {
    Fail(AudioError),
    /// Delivers the samples, then is unplugged (Lost) or goes silent.
    Deliver {
        samples: Vec<f32>,
        then_lost: Option<String>,
    },
}

#[derive(Debug)]
struct ScriptedDevice {
    attempts: Vec<Attempt>,
}

impl OpenSource for ScriptedDevice {
    fn open(&mut self, _ring_capacity_s: f64) -> Result<Box<dyn SampleSource>, AudioError> {
        if self.attempts.is_empty() {
            return Err(AudioError::DeviceBusy {
                direction: Direction::Input,
                device: "scripted".to_owned(),
            });
        }
        match self.attempts.remove(0) {
            Attempt::Fail(error) => Err(error),
            Attempt::Deliver { samples, then_lost } => Ok(Box::new(ScriptedSource {
                samples,
                position: 0,
                then_lost,
            })),
        }
    }

    fn can_reopen(&self) -> bool {
        true
    }
}

struct ScriptedSource {
    samples: Vec<f32>,
    position: usize,
    then_lost: Option<String>,
}

impl SampleSource for ScriptedSource {
    fn description(&self) -> &str {
        "scripted device"
    }

    fn sample_rate_hz(&self) -> u32 {
        48_000
    }

    fn read(&mut self, out: &mut [f32], max_wait: Duration) -> SourceRead {
        let rest = &self.samples[self.position..];
        if !rest.is_empty() {
            let n = rest.len().min(out.len()).min(480);
            out[..n].copy_from_slice(&rest[..n]);
            self.position += n;
            return SourceRead::Samples(n);
        }
        match &self.then_lost {
            Some(message) => SourceRead::Lost(message.clone()),
            None => {
                std::thread::sleep(max_wait);
                SourceRead::Waiting
            }
        }
    }

    fn dropped_samples(&self) -> u64 {
        0
    }

    fn is_live(&self) -> bool {
        true
    }
}

fn one_tap_samples() -> Vec<f32> {
    let mut generator =
        SyntheticGenerator::new(taps_at(&[(0.5, 1.0)], Some(2.0), None)).expect("generator");
    let mut samples = vec![0.0; 96_000];
    let mut filled = 0;
    while filled < samples.len() {
        let n = generator.generate(&mut samples[filled..]);
        assert!(n > 0);
        filled += n;
    }
    samples
}

#[test]
fn lost_busy_and_silent_devices_are_retried_until_stopped() {
    let device = ScriptedDevice {
        attempts: vec![
            Attempt::Deliver {
                samples: one_tap_samples(),
                then_lost: Some("the scripted device was unplugged".to_owned()),
            },
            Attempt::Fail(AudioError::DeviceBusy {
                direction: Direction::Input,
                device: "scripted".to_owned(),
            }),
            Attempt::Deliver {
                samples: vec![0.0; 4800],
                then_lost: None,
            },
            Attempt::Deliver {
                samples: one_tap_samples(),
                then_lost: None,
            },
        ],
    };
    let mut handle = CaptureHandle::start(
        SourceChoice::Custom(Box::new(device)),
        CaptureSettings::default(),
        None,
    )
    .expect("start");
    assert_eq!(handle.description(), "scripted device");
    let events = collect_until(&handle, |events| tap_outcomes(events).len() >= 2);
    handle.stop();

    let story: Vec<String> = events
        .iter()
        .filter_map(|e| match e {
            CaptureEvent::SourceStarted { .. } => Some("started".to_owned()),
            CaptureEvent::Tap(Tap {
                index,
                rejected: None,
                ..
            }) => Some(format!("tap{index}")),
            CaptureEvent::DeviceLost { message } if message.contains("no sound has arrived") => {
                Some("silent".to_owned())
            }
            CaptureEvent::DeviceLost { message } if message.contains("unplugged") => {
                Some("unplugged".to_owned())
            }
            CaptureEvent::Retrying {
                attempt, reason, ..
            } if reason.contains("busy") => Some(format!("retry{attempt} busy")),
            CaptureEvent::Retrying { attempt, .. } => Some(format!("retry{attempt}")),
            _ => None,
        })
        .collect();
    assert_eq!(
        story,
        [
            "started",
            "tap1",
            "unplugged",
            "retry1",
            "retry2 busy",
            "started",
            "silent",
            "retry1",
            "started",
            "tap2",
        ],
        "{}",
        summary(&events)
    );
}

#[test]
fn a_device_that_cannot_open_fails_at_start() {
    let device = ScriptedDevice {
        attempts: vec![Attempt::Fail(AudioError::DeviceBusy {
            direction: Direction::Input,
            device: "mic".to_owned(),
        })],
    };
    let error = CaptureHandle::start(
        SourceChoice::Custom(Box::new(device)),
        CaptureSettings::default(),
        None,
    )
    .expect_err("busy");
    assert_eq!(
        error.to_string(),
        "the input device 'mic' is busy: another program may be using it"
    );
}

#[test]
fn quiet_synthetic_source_gives_levels_and_no_taps() {
    let start = Instant::now();
    let handle = CaptureHandle::start(
        SourceChoice::Synthetic {
            taps: SyntheticTaps::quiet(48_000, 0.5, 1e-3),
            pacing: Pacing::RealTime,
        },
        CaptureSettings::default(),
        None,
    )
    .expect("start");
    let events = collect_until(&handle, |_| false);
    assert!(
        start.elapsed() >= Duration::from_millis(450),
        "real-time pacing ran ahead"
    );
    assert!(tap_outcomes(&events).is_empty());
    let levels: Vec<f64> = events
        .iter()
        .filter_map(|e| match e {
            CaptureEvent::Level(level) => Some(level.rms_dbfs),
            _ => None,
        })
        .collect();
    // Steady noise moves the meter by less than 1 dB, so after the first
    // reading the worker stays quiet until a second has passed (50 ms
    // readings would otherwise be ten in half a second).
    assert!(!levels.is_empty() && levels.len() <= 2, "{levels:?}");
    // Gaussian noise of RMS 1e-3 is −60 dBFS (common practice, no source).
    assert!(
        levels.iter().all(|db| (db + 60.0).abs() < 1.5),
        "{levels:?}"
    );
}
