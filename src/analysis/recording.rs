//! A whole recording at once: find the taps, measure the accepted ones,
//! combine them into a pass. Used by `tapwright analyze`, the WAV replay and
//! the window when a file is opened.

use serde::{Deserialize, Serialize};

use super::aggregate::{aggregate_taps, PassResult};
use super::modal::{AnalysisSettings, TapAnalysis, TapAnalyzer};
use super::tap_finder::{find_taps, RejectReason, TriggerSettings};

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

/// Finds, measures and combines every tap of a recording.
pub fn analyze_recording(
    samples: &[f32],
    sample_rate_hz: f64,
    trigger: &TriggerSettings,
    analysis: &AnalysisSettings,
) -> RecordingReport {
    let mut analyzer = TapAnalyzer::new(analysis.clone(), sample_rate_hz);
    let taps: Vec<TapRecord> = find_taps(samples, sample_rate_hz, trigger)
        .into_iter()
        .enumerate()
        .map(|(i, tap)| TapRecord {
            index: i + 1,
            onset_s: tap.onset_sample() as f64 / sample_rate_hz,
            peak_dbfs: tap.peak_dbfs,
            rejected: tap.rejected,
            analysis: tap.rejected.is_none().then(|| analyzer.analyze(&tap)),
        })
        .collect();
    let pass = aggregate_taps(
        taps.iter().filter_map(|t| t.analysis.as_ref()),
        analysis.max_modes,
    );
    RecordingReport {
        sample_rate_hz,
        duration_s: samples.len() as f64 / sample_rate_hz,
        taps,
        pass,
    }
}
