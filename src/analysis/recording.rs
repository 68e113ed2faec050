//! A whole recording: find the taps, measure the accepted ones, combine
//! them into a pass. [`analyze_recording`] takes the samples at once (the
//! window, tests); [`RecordingAnalyzer`] takes them block by block
//! (`tapwright analyze`, so a long file never has to fit in memory).

use serde::{Deserialize, Serialize};

use super::aggregate::{aggregate_taps, PassResult};
use super::modal::{AnalysisSettings, TapAnalysis, TapAnalyzer};
use super::tap_finder::{RejectReason, TapTrigger, TriggerEvent, TriggerSettings};

/// One tap of a recording.
#[derive(Clone, Debug, PartialEq)]
pub struct TapRecord {
    /// 1-based, in order of time.
    pub index: usize,
    /// Time of the strike from the start of the recording.
    pub onset_s: f64,
    /// Loudest envelope level, dB full scale.
    pub peak_dbfs: f64,
    /// Why the tap is left out, if it is.
    pub rejected: Option<RejectReason>,
    /// The measurement (accepted taps only).
    pub analysis: Option<TapAnalysis>,
}

/// A rejected tap for reports.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RejectedTap {
    pub index: usize,
    pub reason: RejectReason,
}

/// Everything found in a recording.
#[derive(Clone, Debug, PartialEq)]
pub struct RecordingReport {
    pub sample_rate_hz: f64,
    pub duration_s: f64,
    pub taps: Vec<TapRecord>,
    pub pass: PassResult,
}

impl RecordingReport {
    pub fn taps_used(&self) -> usize {
        self.taps.iter().filter(|t| t.rejected.is_none()).count()
    }

    pub fn rejected(&self) -> Vec<RejectedTap> {
        self.taps
            .iter()
            .filter_map(|t| {
                t.rejected.map(|reason| RejectedTap {
                    index: t.index,
                    reason,
                })
            })
            .collect()
    }
}

/// Finds, measures and combines every tap of a recording held in memory.
pub fn analyze_recording(
    samples: &[f32],
    sample_rate_hz: f64,
    trigger: &TriggerSettings,
    analysis: &AnalysisSettings,
) -> RecordingReport {
    let mut stream = RecordingAnalyzer::new(trigger, analysis, sample_rate_hz);
    stream.push(samples);
    stream.finish()
}

/// The same work as [`analyze_recording`] on a recording that arrives
/// block by block (a long file read from disk): the streaming
/// [`TapTrigger`] the capture worker uses finds the taps, each finished tap
/// is measured at once and its samples dropped, so memory holds the tap
/// under way and the measurements, however long the recording.
#[derive(Debug)]
pub struct RecordingAnalyzer {
    trigger: TapTrigger,
    analyzer: TapAnalyzer,
    max_modes: usize,
    events: Vec<TriggerEvent>,
    taps: Vec<TapRecord>,
    samples_seen: u64,
}

impl RecordingAnalyzer {
    pub fn new(
        trigger: &TriggerSettings,
        analysis: &AnalysisSettings,
        sample_rate_hz: f64,
    ) -> Self {
        Self {
            trigger: TapTrigger::new(trigger.clone(), sample_rate_hz),
            analyzer: TapAnalyzer::new(analysis.clone(), sample_rate_hz),
            max_modes: analysis.max_modes,
            events: Vec::new(),
            taps: Vec::new(),
            samples_seen: 0,
        }
    }

    /// Feeds the next samples of the recording.
    pub fn push(&mut self, samples: &[f32]) {
        self.samples_seen += samples.len() as u64;
        self.trigger.push(samples, &mut self.events);
        self.measure_finished_taps();
    }

    /// Taps found so far, in time order.
    pub fn taps(&self) -> &[TapRecord] {
        &self.taps
    }

    /// Ends the recording (a tap under way is closed as it is) and combines
    /// the accepted taps.
    pub fn finish(mut self) -> RecordingReport {
        self.trigger.finish(&mut self.events);
        self.measure_finished_taps();
        let sample_rate_hz = self.trigger.sample_rate_hz();
        let pass = aggregate_taps(
            self.taps.iter().filter_map(|t| t.analysis.as_ref()),
            self.max_modes,
        );
        RecordingReport {
            sample_rate_hz,
            duration_s: self.samples_seen as f64 / sample_rate_hz,
            taps: self.taps,
            pass,
        }
    }

    fn measure_finished_taps(&mut self) {
        let sample_rate_hz = self.trigger.sample_rate_hz();
        for event in self.events.drain(..) {
            let TriggerEvent::Tap(tap) = event else {
                continue;
            };
            let analysis = tap.rejected.is_none().then(|| self.analyzer.analyze(&tap));
            self.taps.push(TapRecord {
                index: self.taps.len() + 1,
                onset_s: tap.onset_sample() as f64 / sample_rate_hz,
                peak_dbfs: tap.peak_dbfs,
                rejected: tap.rejected,
                analysis,
            });
        }
    }
}
