//! What the capture worker does with each block of samples: the level
//! meter, and the one tap gathering loop of the library
//! ([`TapGatherer`]: trigger, then the per-tap analysis). Kept apart from
//! the thread so the benchmark and the tests can run it directly.

use super::events::{CaptureEvent, InputLevel};
use crate::analysis::{Gathered, TapGatherer};
use crate::audio::settings::CaptureSettings;

/// Full-scale fraction the level meter calls clipped (the trigger's rule).
const CLIP_LEVEL: f32 = 0.99;

/// Level meter and tap gathering for one source at one sample rate.
#[derive(Debug)]
pub struct TapPipeline {
    settings: CaptureSettings,
    gatherer: TapGatherer,
    gathered: Vec<Gathered>,
    level_sum_sq: f64,
    level_peak: f32,
    level_count: usize,
    level_clipped: bool,
}

impl TapPipeline {
    /// A pipeline at `sample_rate_hz`; tap numbers continue from
    /// `taps_seen` (0 for a fresh start, the old count after a reconnection).
    pub fn new(settings: &CaptureSettings, sample_rate_hz: u32, taps_seen: usize) -> Self {
        Self {
            gatherer: TapGatherer::new(&settings.trigger, &settings.analysis, sample_rate_hz)
                .numbering_from(taps_seen),
            settings: settings.clone(),
            gathered: Vec::with_capacity(8),
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
            self.gatherer.set_trigger_settings(&settings.trigger);
        }
        if settings.analysis != self.settings.analysis {
            self.gatherer.set_analysis_settings(&settings.analysis);
        }
        self.settings = settings.clone();
    }

    /// The settings in force.
    pub fn settings(&self) -> &CaptureSettings {
        &self.settings
    }

    /// Samples per second.
    pub fn sample_rate_hz(&self) -> u32 {
        self.gatherer.sample_rate_hz()
    }

    /// Taps finished so far (accepted and rejected).
    pub fn taps_seen(&self) -> usize {
        self.gatherer.taps_seen()
    }

    /// Feeds samples; tap events (started, finished) go to `out` in order.
    pub fn process(&mut self, samples: &[f32], out: &mut Vec<CaptureEvent>) {
        self.measure_level(samples);
        self.gatherer.push(samples, &mut self.gathered);
        self.pass_on(out);
    }

    /// Ends the stream: a record under way is finished as it is (too short
    /// if it is shorter than the minimum).
    pub fn finish(&mut self, out: &mut Vec<CaptureEvent>) {
        self.gatherer.finish(&mut self.gathered);
        self.pass_on(out);
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
            floor_dbfs: self.gatherer.floor_dbfs(),
            recording: self.gatherer.is_recording(),
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

    fn pass_on(&mut self, out: &mut Vec<CaptureEvent>) {
        out.extend(self.gathered.drain(..).map(|gathered| match gathered {
            Gathered::Started { index, onset_s } => CaptureEvent::TapStarted { index, onset_s },
            Gathered::Tap(tap) => CaptureEvent::Tap(tap),
        }));
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
