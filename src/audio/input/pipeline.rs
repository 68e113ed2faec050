//! What the capture worker does with each block of samples: the level
//! meter, the tap trigger and the per-tap analysis. Kept apart from the
//! thread so the benchmark and the tests can run it directly.

use std::time::{Instant, SystemTime};

use super::events::{CaptureEvent, InputLevel};
use crate::analysis::{TapAnalyzer, TapTrigger, TriggerEvent};
use crate::audio::settings::CaptureSettings;

/// Full-scale fraction the level meter calls clipped (the trigger's rule).
const CLIP_LEVEL: f32 = 0.99;

/// Level meter, trigger and analyser for one source at one sample rate.
#[derive(Debug)]
pub struct TapPipeline {
    sample_rate_hz: u32,
    settings: CaptureSettings,
    trigger: TapTrigger,
    analyzer: TapAnalyzer,
    trigger_events: Vec<TriggerEvent>,
    taps_seen: usize,
    level_sum_sq: f64,
    level_peak: f32,
    level_count: usize,
    level_clipped: bool,
}

impl TapPipeline {
    /// A pipeline at `sample_rate_hz`; tap numbers continue from
    /// `taps_seen` (0 for a fresh start, the old count after a reconnection).
    pub fn new(settings: &CaptureSettings, sample_rate_hz: u32, taps_seen: usize) -> Self {
        let fs = f64::from(sample_rate_hz);
        Self {
            sample_rate_hz,
            trigger: TapTrigger::new(settings.trigger.clone(), fs),
            analyzer: TapAnalyzer::new(settings.analysis.clone(), fs),
            settings: settings.clone(),
            trigger_events: Vec::with_capacity(8),
            taps_seen,
            level_sum_sq: 0.0,
            level_peak: 0.0,
            level_count: 0,
            level_clipped: false,
        }
    }

    /// Applies new settings without losing the noise floor; a record under
    /// way finishes with the new length.
    pub fn set_settings(&mut self, settings: &CaptureSettings) {
        if settings.trigger != self.settings.trigger {
            self.trigger.set_settings(settings.trigger.clone());
        }
        if settings.analysis != self.settings.analysis {
            self.analyzer.set_settings(settings.analysis.clone());
        }
        self.settings = settings.clone();
    }

    /// The settings in force.
    pub fn settings(&self) -> &CaptureSettings {
        &self.settings
    }

    /// Samples per second.
    pub fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// Taps finished so far (accepted and rejected).
    pub fn taps_seen(&self) -> usize {
        self.taps_seen
    }

    /// Feeds samples; tap events (started, accepted with analysis,
    /// rejected) go to `out` in order.
    pub fn process(&mut self, samples: &[f32], out: &mut Vec<CaptureEvent>) {
        self.measure_level(samples);
        self.trigger.push(samples, &mut self.trigger_events);
        self.turn_trigger_events_into(out);
    }

    /// Ends the stream: a record under way is finished as it is (too short
    /// if it is shorter than the minimum).
    pub fn finish(&mut self, out: &mut Vec<CaptureEvent>) {
        self.trigger.finish(&mut self.trigger_events);
        self.turn_trigger_events_into(out);
    }

    /// The level since the last call, or None if no sample came in.
    pub fn take_level(&mut self) -> Option<InputLevel> {
        if self.level_count == 0 {
            return None;
        }
        let mean_square = self.level_sum_sq / self.level_count as f64;
        let level = InputLevel {
            rms_dbfs: 10.0 * (mean_square + 1e-16).log10(),
            peak_dbfs: 20.0 * (f64::from(self.level_peak) + 1e-8).log10(),
            clipped: self.level_clipped,
            floor_dbfs: self.trigger.floor_dbfs(),
            recording: self.trigger.is_recording(),
        };
        self.level_sum_sq = 0.0;
        self.level_peak = 0.0;
        self.level_count = 0;
        self.level_clipped = false;
        Some(level)
    }

    fn measure_level(&mut self, samples: &[f32]) {
        let mut sum_sq = 0.0f32;
        let mut peak = self.level_peak;
        for &x in samples {
            sum_sq += x * x;
            peak = peak.max(x.abs());
        }
        self.level_sum_sq += f64::from(sum_sq);
        self.level_peak = peak;
        self.level_clipped |= peak >= CLIP_LEVEL;
        self.level_count += samples.len();
    }

    fn turn_trigger_events_into(&mut self, out: &mut Vec<CaptureEvent>) {
        let fs = f64::from(self.sample_rate_hz);
        for event in self.trigger_events.drain(..) {
            match event {
                TriggerEvent::Started { onset_sample } => out.push(CaptureEvent::TapStarted {
                    index: self.taps_seen + 1,
                    onset_s: onset_sample as f64 / fs,
                }),
                TriggerEvent::Tap(tap) => {
                    self.taps_seen += 1;
                    let index = self.taps_seen;
                    let onset_s = tap.onset_sample() as f64 / fs;
                    match tap.rejected {
                        Some(reason) => out.push(CaptureEvent::TapRejected {
                            index,
                            onset_s,
                            time: SystemTime::now(),
                            finished_at: Instant::now(),
                            sample_rate_hz: self.sample_rate_hz,
                            tap,
                            reason,
                        }),
                        None => {
                            let analysis = self.analyzer.analyze(&tap);
                            out.push(CaptureEvent::TapAccepted {
                                index,
                                onset_s,
                                time: SystemTime::now(),
                                finished_at: Instant::now(),
                                sample_rate_hz: self.sample_rate_hz,
                                tap,
                                analysis,
                            });
                        }
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn level_of_a_full_scale_square() {
        let mut pipeline = TapPipeline::new(&CaptureSettings::default(), 48_000, 0);
        let mut out = Vec::new();
        let samples: Vec<f32> = (0..4800)
            .map(|i| if i % 2 == 0 { 0.5 } else { -0.5 })
            .collect();
        pipeline.process(&samples, &mut out);
        let level = pipeline.take_level().expect("level");
        // A ±0.5 square has RMS 0.5: −6.02 dBFS (common practice, no source).
        assert!((level.rms_dbfs + 6.0206).abs() < 0.01, "{level:?}");
        assert!((level.peak_dbfs + 6.0206).abs() < 0.01);
        assert!(!level.clipped);
        assert!(pipeline.take_level().is_none());
        pipeline.process(&[0.0, 0.995, 0.0], &mut out);
        assert!(pipeline.take_level().expect("level").clipped);
        assert!(out.is_empty());
    }
}
