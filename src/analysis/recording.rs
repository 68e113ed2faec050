//! From samples to taps to a pass, written once: [`TapGatherer`] is the one
//! loop "trigger → analyse" that every source goes through (the capture
//! worker for the window and `tapwright listen`, a file opened in the
//! window, `tapwright analyze`), and [`Tap`] is the one form a tap takes
//! from the trigger to the screen.
//!
//! [`RecordingAnalyzer`] gathers a whole recording block by block and
//! combines its taps into a pass ([`analyze_recording`] for samples held in
//! memory), so a long file never has to fit in memory.

use serde::{Deserialize, Serialize};

use super::aggregate::{aggregate_taps, PassResult};
use super::modal::{AnalysisSettings, TapAnalysis, TapAnalyzer};
use super::tap_finder::{FoundTap, RejectReason, TapTrigger, TriggerEvent, TriggerSettings};

/// One tap, numbered, timed and (if the trigger accepted it) measured.
#[derive(Clone, Debug, PartialEq)]
pub struct Tap {
    /// 1-based, in order of time (accepted and rejected taps share the
    /// numbering).
    pub index: usize,
    /// Time of the strike from the start of the recording or source.
    pub onset_s: f64,
    /// Loudest envelope level, dB full scale.
    pub peak_dbfs: f64,
    /// Sample rate of the record.
    pub sample_rate_hz: u32,
    /// Why the trigger rejected the tap, if it did.
    pub rejected: Option<RejectReason>,
    /// The measurement (accepted taps only).
    pub analysis: Option<TapAnalysis>,
    /// The raw record, where the gatherer was asked to keep it (the window
    /// saves and measures again; `analyze` drops it at once, so memory
    /// holds only the measurements however long the file).
    pub record: Option<FoundTap>,
}

impl Tap {
    /// True when the trigger accepted the tap and it was measured.
    pub fn is_accepted(&self) -> bool {
        self.rejected.is_none() && self.analysis.is_some()
    }
}

/// What the gatherer reports, in the order things happened.
#[derive(Clone, Debug, PartialEq)]
pub enum Gathered {
    /// A strike was heard; its record is being taken. The [`Gathered::Tap`]
    /// with the same index follows (a too-quiet rise has no start).
    Started {
        /// The tap's number.
        index: usize,
        /// Time of the strike, seconds from the start.
        onset_s: f64,
    },
    /// A finished tap.
    Tap(Tap),
}

/// The one loop from samples to taps: the streaming [`TapTrigger`] finds
/// each strike, and each finished tap is numbered and, if accepted,
/// measured at once by the [`TapAnalyzer`].
#[derive(Debug)]
pub struct TapGatherer {
    trigger: TapTrigger,
    analyzer: TapAnalyzer,
    sample_rate_hz: u32,
    events: Vec<TriggerEvent>,
    taps_seen: usize,
    keep_records: bool,
}

impl TapGatherer {
    /// A gatherer for a source at `sample_rate_hz`; taps are numbered from
    /// 1 and their records kept.
    pub fn new(
        trigger: &TriggerSettings,
        analysis: &AnalysisSettings,
        sample_rate_hz: u32,
    ) -> Self {
        let fs = f64::from(sample_rate_hz);
        Self {
            trigger: TapTrigger::new(trigger.clone(), fs),
            analyzer: TapAnalyzer::new(analysis.clone(), fs),
            sample_rate_hz,
            events: Vec::with_capacity(8),
            taps_seen: 0,
            keep_records: true,
        }
    }

    /// Numbers the taps that follow from `taps_seen + 1` (a source opened
    /// again after a loss continues the numbering).
    pub fn numbering_from(mut self, taps_seen: usize) -> Self {
        self.taps_seen = taps_seen;
        self
    }

    /// Drops each tap's record once it is measured (see [`Tap::record`]).
    pub fn without_records(mut self) -> Self {
        self.keep_records = false;
        self
    }

    /// New trigger settings, without losing the noise floor; a record
    /// under way finishes with the new length.
    pub fn set_trigger_settings(&mut self, settings: &TriggerSettings) {
        self.trigger.set_settings(settings.clone());
    }

    /// New analysis settings for the taps that follow.
    pub fn set_analysis_settings(&mut self, settings: &AnalysisSettings) {
        self.analyzer.set_settings(settings.clone());
    }

    /// Samples per second.
    pub fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// Taps finished so far (accepted and rejected).
    pub fn taps_seen(&self) -> usize {
        self.taps_seen
    }

    /// The trigger's noise floor, dB full scale (None while it warms up).
    pub fn floor_dbfs(&self) -> Option<f64> {
        self.trigger.floor_dbfs()
    }

    /// True while a tap is being recorded.
    pub fn is_recording(&self) -> bool {
        self.trigger.is_recording()
    }

    /// Feeds the next samples; what they finished goes to `out` in order.
    pub fn push(&mut self, samples: &[f32], out: &mut Vec<Gathered>) {
        self.trigger.push(samples, &mut self.events);
        self.take_events(out);
    }

    /// Ends the stream: a record under way is finished as it is (too short
    /// if it is shorter than the minimum).
    pub fn finish(&mut self, out: &mut Vec<Gathered>) {
        self.trigger.finish(&mut self.events);
        self.take_events(out);
    }

    fn take_events(&mut self, out: &mut Vec<Gathered>) {
        let fs = f64::from(self.sample_rate_hz);
        for event in self.events.drain(..) {
            match event {
                TriggerEvent::Started { onset_sample } => out.push(Gathered::Started {
                    index: self.taps_seen + 1,
                    onset_s: onset_sample as f64 / fs,
                }),
                TriggerEvent::Tap(found) => {
                    self.taps_seen += 1;
                    let analysis = found
                        .rejected
                        .is_none()
                        .then(|| self.analyzer.analyze(&found));
                    out.push(Gathered::Tap(Tap {
                        index: self.taps_seen,
                        onset_s: found.onset_sample() as f64 / fs,
                        peak_dbfs: found.peak_dbfs,
                        sample_rate_hz: self.sample_rate_hz,
                        rejected: found.rejected,
                        analysis,
                        record: self.keep_records.then_some(found),
                    }));
                }
            }
        }
    }
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
    pub taps: Vec<Tap>,
    pub pass: PassResult,
}

impl RecordingReport {
    pub fn taps_used(&self) -> usize {
        self.taps.iter().filter(|t| t.rejected.is_none()).count()
    }

    pub fn rejected(&self) -> Vec<RejectedTap> {
        rejected_taps(&self.taps)
    }
}

/// The rejected taps among `taps`, with their reasons.
pub fn rejected_taps(taps: &[Tap]) -> Vec<RejectedTap> {
    taps.iter()
        .filter_map(|t| {
            t.rejected.map(|reason| RejectedTap {
                index: t.index,
                reason,
            })
        })
        .collect()
}

/// The pass made of every accepted tap among `taps`.
pub fn pass_of_taps(taps: &[Tap], max_modes: usize) -> PassResult {
    aggregate_taps(taps.iter().filter_map(|t| t.analysis.as_ref()), max_modes)
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
/// block by block (a long file read from disk): the taps are gathered as
/// the blocks come, and by default each record is dropped once measured,
/// so memory holds the tap under way and the measurements, however long
/// the recording.
#[derive(Debug)]
pub struct RecordingAnalyzer {
    gatherer: TapGatherer,
    max_modes: usize,
    gathered: Vec<Gathered>,
    taps: Vec<Tap>,
    samples_seen: u64,
}

impl RecordingAnalyzer {
    /// Recordings are made at whole-number rates; `sample_rate_hz` is
    /// rounded to one.
    pub fn new(
        trigger: &TriggerSettings,
        analysis: &AnalysisSettings,
        sample_rate_hz: f64,
    ) -> Self {
        let rate = sample_rate_hz.round() as u32;
        Self {
            gatherer: TapGatherer::new(trigger, analysis, rate).without_records(),
            max_modes: analysis.max_modes,
            gathered: Vec::new(),
            taps: Vec::new(),
            samples_seen: 0,
        }
    }

    /// Keeps each tap's record (the window lists the taps of a file and
    /// may save or measure them again).
    pub fn keeping_records(mut self) -> Self {
        self.gatherer.keep_records = true;
        self
    }

    /// Feeds the next samples of the recording.
    pub fn push(&mut self, samples: &[f32]) {
        self.samples_seen += samples.len() as u64;
        self.gatherer.push(samples, &mut self.gathered);
        self.keep_finished_taps();
    }

    /// Taps found so far, in time order.
    pub fn taps(&self) -> &[Tap] {
        &self.taps
    }

    /// Ends the recording (a tap under way is closed as it is) and combines
    /// the accepted taps.
    pub fn finish(mut self) -> RecordingReport {
        self.gatherer.finish(&mut self.gathered);
        self.keep_finished_taps();
        let sample_rate_hz = f64::from(self.gatherer.sample_rate_hz());
        RecordingReport {
            sample_rate_hz,
            duration_s: self.samples_seen as f64 / sample_rate_hz,
            pass: pass_of_taps(&self.taps, self.max_modes),
            taps: self.taps,
        }
    }

    fn keep_finished_taps(&mut self) {
        self.taps
            .extend(self.gathered.drain(..).filter_map(|g| match g {
                Gathered::Tap(tap) => Some(tap),
                Gathered::Started { .. } => None,
            }));
    }
}
