//! The pass being measured in Listen: the taps heard so far (kept, rejected
//! or left out by the maker), the combined result of the kept ones, and the
//! labels the maker put on its modes. No drawing here; the Listen area reads
//! it and changes it through commands.

use std::collections::BTreeSet;

use crate::analysis::{
    aggregate_taps, AnalysisSettings, DisplaySpectrum, FoundTap, PassResult, RecordingAnalyzer,
    RejectReason, Tap, TapAnalysis, TriggerSettings,
};
use crate::wav_io::{WavError, WavStream};

/// Frames read from a file at a time: the file is judged as it streams in,
/// so only the tap records stay in memory, however long it is.
const FILE_BLOCK_FRAMES: usize = 65_536;

/// A label stays on a mode after the pass is recombined if the mode moved
/// by less than this (relative): about 35 cents, well under the spacing of
/// the low modes a maker labels.
const LABEL_FOLLOW_RELATIVE: f64 = 0.02;

/// The taps of a WAV file read block by block, as the window lists them
/// (records kept, for saving and measuring again).
pub fn taps_of_stream(
    stream: &mut WavStream,
    trigger: &TriggerSettings,
    analysis: &AnalysisSettings,
) -> Result<Vec<Tap>, WavError> {
    let fs = f64::from(stream.sample_rate_hz());
    let mut gathering = RecordingAnalyzer::new(trigger, analysis, fs).keeping_records();
    let mut block = Vec::new();
    while stream.read_block(&mut block, FILE_BLOCK_FRAMES)? > 0 {
        gathering.push(&block);
    }
    Ok(gathering.finish().taps)
}

/// A label the maker put on a mode, remembered by the mode's frequency so it
/// can follow the mode when taps are added or left out.
#[derive(Clone, Debug, PartialEq)]
struct LabelAnchor {
    frequency_hz: f64,
    label: String,
}

/// The pass being measured.
#[derive(Debug)]
pub struct ListenSession {
    taps: Vec<Tap>,
    /// The numbers of the taps the maker left out by hand.
    left_out: BTreeSet<usize>,
    taps_to_average: usize,
    max_modes: usize,
    pass: Option<PassResult>,
    averaged: Vec<usize>,
    anchors: Vec<LabelAnchor>,
    mode_labels: Vec<Option<String>>,
    generation: u64,
}

impl Default for ListenSession {
    fn default() -> Self {
        Self::new(8, 16)
    }
}

impl ListenSession {
    /// An empty pass averaging the last `taps_to_average` kept taps and
    /// keeping at most `max_modes` modes.
    pub fn new(taps_to_average: usize, max_modes: usize) -> Self {
        Self {
            taps: Vec::new(),
            left_out: BTreeSet::new(),
            taps_to_average: taps_to_average.max(1),
            max_modes: max_modes.max(1),
            pass: None,
            averaged: Vec::new(),
            anchors: Vec::new(),
            mode_labels: Vec::new(),
            generation: 0,
        }
    }

    /// Every tap heard, oldest first.
    pub fn taps(&self) -> &[Tap] {
        &self.taps
    }

    /// True if the maker left the tap with this number out by hand.
    pub fn is_left_out(&self, tap_index: usize) -> bool {
        self.left_out.contains(&tap_index)
    }

    /// True if the tap may go into the pass (measured, not rejected, not
    /// left out).
    pub fn is_kept(&self, tap: &Tap) -> bool {
        tap.is_accepted() && !self.is_left_out(tap.index)
    }

    /// Why the tap is out of the pass, if it is.
    pub fn reason_out(&self, tap: &Tap) -> Option<RejectReason> {
        if self.is_left_out(tap.index) {
            Some(RejectReason::LeftOut)
        } else {
            tap.rejected
        }
    }

    /// The combined result of the kept taps (None until one is kept).
    pub fn pass(&self) -> Option<&PassResult> {
        self.pass.as_ref()
    }

    /// One optional label per mode of [`Self::pass`].
    pub fn mode_labels(&self) -> &[Option<String>] {
        &self.mode_labels
    }

    /// Changes each time the pass is recombined (for caches of drawings).
    pub fn generation(&self) -> u64 {
        self.generation
    }

    /// How many of the latest kept taps are averaged.
    pub fn taps_to_average(&self) -> usize {
        self.taps_to_average
    }

    /// True if the tap with this number is in the current average.
    pub fn is_averaged(&self, tap_index: usize) -> bool {
        self.averaged.contains(&tap_index)
    }

    /// The display spectrum of the latest kept tap.
    pub fn latest_spectrum(&self) -> Option<&DisplaySpectrum> {
        self.taps
            .iter()
            .rev()
            .find(|t| self.is_kept(t))
            .and_then(|t| t.analysis.as_ref())
            .map(|a| &a.spectrum)
    }

    /// Adds a tap (accepted or rejected) and recombines.
    pub fn add_tap(&mut self, tap: Tap) {
        self.taps.push(tap);
        self.recombine();
    }

    /// Replaces all taps (a recording was opened) and recombines. Labels
    /// are kept and follow the modes where they can.
    pub fn replace_taps(&mut self, taps: Vec<Tap>) {
        self.taps = taps;
        self.left_out.clear();
        self.recombine();
    }

    /// Leaves a tap out (`left_out`) or takes it back. Returns false if no
    /// tap has that number.
    pub fn set_left_out(&mut self, tap_index: usize, left_out: bool) -> bool {
        if !self.taps.iter().any(|t| t.index == tap_index) {
            return false;
        }
        if left_out {
            self.left_out.insert(tap_index);
        } else {
            self.left_out.remove(&tap_index);
        }
        self.recombine();
        true
    }

    /// Changes how many of the latest kept taps are averaged (at least 1).
    pub fn set_taps_to_average(&mut self, count: usize) {
        self.taps_to_average = count.max(1);
        self.recombine();
    }

    /// The records of the measured taps, to measure again with new analysis
    /// settings: (tap number, record, sample rate).
    pub fn measured_records(&self) -> Vec<(usize, FoundTap, u32)> {
        self.taps
            .iter()
            .filter(|t| t.analysis.is_some())
            .filter_map(|t| Some((t.index, t.record.clone()?, t.sample_rate_hz)))
            .collect()
    }

    /// Puts new measurements on the taps with those numbers (taps that have
    /// gone meanwhile are skipped) and recombines.
    pub fn replace_measurements(&mut self, measured: Vec<(usize, TapAnalysis)>) {
        for (index, analysis) in measured {
            if let Some(tap) = self
                .taps
                .iter_mut()
                .find(|t| t.index == index && t.analysis.is_some())
            {
                tap.analysis = Some(analysis);
            }
        }
        self.recombine();
    }

    /// Changes how many modes a pass keeps.
    pub fn set_max_modes(&mut self, count: usize) {
        self.max_modes = count.max(1);
        self.recombine();
    }

    /// Starts a new pass: forgets the taps. Labels are kept, so the next
    /// pass of the same part shows them on the same modes.
    pub fn clear(&mut self) {
        self.taps.clear();
        self.left_out.clear();
        self.recombine();
    }

    /// Puts `label` on mode `mode_index` (taking it off any other mode), or
    /// clears the mode's label with None. Returns false if there is no such
    /// mode.
    pub fn set_label(&mut self, mode_index: usize, label: Option<String>) -> bool {
        let Some(mode) = self.pass.as_ref().and_then(|p| p.modes.get(mode_index)) else {
            return false;
        };
        let frequency_hz = mode.frequency_hz;
        let label = label.map(|l| l.trim().to_owned()).filter(|l| !l.is_empty());
        self.anchors
            .retain(|a| !near(a.frequency_hz, frequency_hz) && Some(&a.label) != label.as_ref());
        if let Some(label) = label {
            self.anchors.push(LabelAnchor {
                frequency_hz,
                label,
            });
        }
        self.place_labels();
        true
    }

    /// Remembers a label for whatever mode turns up within 2 % of
    /// `frequency_hz` (used to show the demo plate's known modes labelled).
    pub fn remember_label(&mut self, frequency_hz: f64, label: &str) {
        self.anchors
            .retain(|a| a.label != label && !near(a.frequency_hz, frequency_hz));
        self.anchors.push(LabelAnchor {
            frequency_hz,
            label: label.to_owned(),
        });
        self.place_labels();
    }

    /// The taps in the average, oldest first.
    fn averaged_taps(&self) -> Vec<&Tap> {
        let kept: Vec<&Tap> = self.taps.iter().filter(|t| self.is_kept(t)).collect();
        let skip = kept.len().saturating_sub(self.taps_to_average);
        kept.into_iter().skip(skip).collect()
    }

    fn recombine(&mut self) {
        let averaged = self.averaged_taps();
        let indices: Vec<usize> = averaged.iter().map(|t| t.index).collect();
        let pass = if averaged.is_empty() {
            None
        } else {
            Some(aggregate_taps(
                averaged.iter().filter_map(|t| t.analysis.as_ref()),
                self.max_modes,
            ))
        };
        self.averaged = indices;
        self.pass = pass;
        self.generation += 1;
        self.place_labels();
    }

    /// Puts each remembered label on the nearest mode within reach; a mode
    /// takes at most one label (the nearest anchor wins).
    fn place_labels(&mut self) {
        let modes = self.pass.as_ref().map_or(&[][..], |p| &p.modes[..]);
        let mut labels: Vec<Option<String>> = vec![None; modes.len()];
        let mut distance: Vec<f64> = vec![f64::INFINITY; modes.len()];
        for anchor in &self.anchors {
            let nearest = modes
                .iter()
                .enumerate()
                .map(|(i, m)| (i, (m.frequency_hz / anchor.frequency_hz).ln().abs()))
                .min_by(|a, b| a.1.total_cmp(&b.1));
            if let Some((i, d)) = nearest {
                if d <= LABEL_FOLLOW_RELATIVE && d < distance[i] {
                    labels[i] = Some(anchor.label.clone());
                    distance[i] = d;
                }
            }
        }
        self.mode_labels = labels;
    }

    /// The kept taps' records laid end to end with `gap_s` of silence
    /// between them (and before the first), for saving as WAV. None if no
    /// tap is kept or their rates differ.
    pub fn kept_taps_as_recording(&self, gap_s: f64) -> Option<crate::wav_io::MonoRecording> {
        let kept: Vec<&FoundTap> = self
            .taps
            .iter()
            .filter(|t| self.is_kept(t))
            .filter_map(|t| t.record.as_ref())
            .collect();
        let rate = self.taps.iter().find(|t| self.is_kept(t))?.sample_rate_hz;
        if self
            .taps
            .iter()
            .any(|t| self.is_kept(t) && t.sample_rate_hz != rate)
        {
            return None;
        }
        let gap = vec![0.0f32; (gap_s.max(0.0) * f64::from(rate)) as usize];
        let mut samples = gap.clone();
        for record in kept {
            samples.extend_from_slice(&record.samples);
            samples.extend_from_slice(&gap);
        }
        Some(crate::wav_io::MonoRecording {
            sample_rate_hz: rate,
            samples,
        })
    }
}

fn near(a_hz: f64, b_hz: f64) -> bool {
    (a_hz / b_hz).ln().abs() <= LABEL_FOLLOW_RELATIVE
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo_taps() -> Vec<Tap> {
        let recording = crate::demo::synthesize_demo_plate();
        let fs = f64::from(recording.sample_rate_hz);
        let mut gathering = RecordingAnalyzer::new(
            &TriggerSettings::default(),
            &AnalysisSettings::default(),
            fs,
        )
        .keeping_records();
        gathering.push(&recording.samples);
        gathering.finish().taps
    }

    fn mode_near(session: &ListenSession, hz: f64) -> Option<usize> {
        session
            .pass()?
            .modes
            .iter()
            .position(|m| (m.frequency_hz - hz).abs() < 3.0)
    }

    #[test]
    fn leaving_a_tap_out_changes_the_average_and_taking_it_back_restores_it() {
        let mut session = ListenSession::default();
        session.replace_taps(demo_taps());
        let all = session.pass().expect("test value").clone();
        let first_kept = session
            .taps()
            .iter()
            .find(|t| session.is_kept(t))
            .expect("test value")
            .index;
        assert!(session.set_left_out(first_kept, true));
        let fewer = session.pass().expect("test value").clone();
        assert_eq!(fewer.taps_used + 1, all.taps_used);
        assert_ne!(fewer.spectrum, all.spectrum);
        assert!(session.set_left_out(first_kept, false));
        assert_eq!(session.pass().expect("test value"), &all);
    }

    #[test]
    fn a_label_follows_its_mode_when_the_pass_is_recombined() {
        let mut session = ListenSession::default();
        session.replace_taps(demo_taps());
        // The demo plate's mode 5 is at 338 Hz (src/demo.rs, invented plate).
        let i = mode_near(&session, 338.0).expect("mode near 338 Hz");
        assert!(session.set_label(i, Some("mode 5".into())));
        let first_kept = session
            .taps()
            .iter()
            .find(|t| session.is_kept(t))
            .expect("test value")
            .index;
        session.set_left_out(first_kept, true);
        let j = mode_near(&session, 338.0).expect("test value");
        assert_eq!(session.mode_labels()[j].as_deref(), Some("mode 5"));
        assert_eq!(session.mode_labels().iter().flatten().count(), 1);
    }

    #[test]
    fn a_label_moves_rather_than_doubles() {
        let mut session = ListenSession::default();
        session.replace_taps(demo_taps());
        let a = mode_near(&session, 168.0).expect("test value");
        let b = mode_near(&session, 338.0).expect("test value");
        session.set_label(a, Some("mode 5".into()));
        session.set_label(b, Some("mode 5".into()));
        assert_eq!(session.mode_labels()[a], None);
        assert_eq!(session.mode_labels()[b].as_deref(), Some("mode 5"));
        session.set_label(b, None);
        assert!(session.mode_labels().iter().all(Option::is_none));
    }

    #[test]
    fn only_the_latest_taps_are_averaged() {
        let mut session = ListenSession::default();
        session.replace_taps(demo_taps());
        session.set_taps_to_average(2);
        assert_eq!(session.pass().expect("test value").taps_used, 2);
        let kept: Vec<usize> = session
            .taps()
            .iter()
            .filter(|t| session.is_kept(t))
            .map(|t| t.index)
            .collect();
        assert!(!session.is_averaged(kept[0]));
        assert!(session.is_averaged(*kept.last().expect("test value")));
    }

    #[test]
    fn clearing_forgets_the_taps() {
        let mut session = ListenSession::default();
        session.replace_taps(demo_taps());
        assert!(session.kept_taps_as_recording(0.5).is_some());
        session.clear();
        assert!(session.pass().is_none());
        assert!(session.taps().is_empty());
        assert!(session.kept_taps_as_recording(0.5).is_none());
    }
}
