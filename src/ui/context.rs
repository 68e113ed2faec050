//! What an area may read each frame: the [`AreaContext`] every area is
//! given (the pass being measured, the open build, the reference pitch,
//! the job runner and the list to push commands into), and the input's
//! state that the Listen area shows.

use std::path::{Path, PathBuf};
use std::time::Instant;

use crate::analysis::PassResult;
use crate::audio::{DeviceInfo, InputLevel};
use crate::ledger::{Build, MeasuredMode, PassInput, StoredSpectrum};
use crate::ui::commands::{AppCommand, SourcePick};
use crate::ui::jobs::Jobs;

/// What the current sound source is doing.
#[derive(Clone, Debug, PartialEq)]
pub enum SourceState {
    /// Being opened.
    Starting,
    /// Delivering sound.
    Running,
    /// Lost; the capture worker is trying again.
    Trouble(String),
    /// The demo recording played to its end.
    Ended,
    /// Showing a recording opened from a file.
    File(PathBuf),
    /// Could not be opened.
    Failed(String),
}

/// Input state the Listen area shows.
#[derive(Debug)]
pub struct InputView {
    /// The source chosen.
    pub pick: SourcePick,
    /// What it is doing.
    pub state: SourceState,
    /// Its name for display.
    pub description: String,
    /// Its sample rate, once open.
    pub sample_rate_hz: Option<u32>,
    /// The last level reading.
    pub level: Option<InputLevel>,
    /// When the input last clipped.
    pub clipped_at: Option<Instant>,
    /// Input devices found (empty until listed).
    pub devices: Vec<DeviceInfo>,
    /// Why devices could not be listed.
    pub devices_problem: Option<String>,
}

/// What an area is given each frame: read-only views of the app's state and
/// a list to push commands into.
pub struct AreaContext<'a> {
    /// The current Listen result (the pass being measured), if any taps
    /// have been kept.
    pub pass: Option<&'a PassResult>,
    /// The labels chosen in Listen, one per mode of `pass` (same order).
    pub pass_labels: &'a [Option<String>],
    /// The open build, if any.
    pub build: Option<&'a Build>,
    /// Where the open build lives on disk (None until first saved).
    pub build_path: Option<&'a Path>,
    /// True when the open build has changes not yet saved.
    pub build_unsaved: bool,
    /// The part whose labels Listen offers, if one is chosen.
    pub listen_part: Option<&'a str>,
    /// Reference pitch for note names, Hz.
    pub a4_hz: f64,
    /// The window's runner of background work, for an area's own jobs
    /// (file dialogs, exports, opening the drive output).
    pub jobs: &'a Jobs,
    /// Commands for the app, applied after all areas are drawn.
    pub commands: &'a mut Vec<AppCommand>,
}

impl AreaContext<'_> {
    /// Asks the app to do something (applied at the end of the frame).
    pub fn push(&mut self, command: AppCommand) {
        self.commands.push(command);
    }

    /// The Listen result as ledger modes, beside their labels; empty without
    /// a pass.
    pub fn measured_modes(&self) -> Vec<(MeasuredMode, Option<String>)> {
        let Some(pass) = self.pass else {
            return Vec::new();
        };
        pass.modes
            .iter()
            .enumerate()
            .map(|(i, m)| {
                let mode = MeasuredMode {
                    frequency_hz: m.frequency_hz,
                    q: m.q,
                    level_db: m.level_db,
                    spread_hz: m.spread_hz,
                };
                (mode, self.pass_labels.get(i).cloned().flatten())
            })
            .collect()
    }

    /// The frequency of the Listen mode labelled `label` ("A0"), if any.
    pub fn labelled_frequency_hz(&self, label: &str) -> Option<f64> {
        let pass = self.pass?;
        self.pass_labels
            .iter()
            .position(|l| l.as_deref() == Some(label))
            .and_then(|i| pass.modes.get(i))
            .map(|m| m.frequency_hz)
    }

    /// The Listen result's averaged spectrum in the ledger's stored form
    /// (`points` log-spaced points over `low_hz`..`high_hz`).
    pub fn stored_spectrum(
        &self,
        low_hz: f64,
        high_hz: f64,
        points: usize,
    ) -> Option<StoredSpectrum> {
        stored_spectrum_of(self.pass?, low_hz, high_hz, points)
    }

    /// A [`AppCommand::RecordPass`] for the Listen result on `part`, with
    /// the part's mass; None without a pass. The spectrum is kept over
    /// 40–4000 Hz at 1000 points.
    pub fn record_pass_command(&self, part: &str, mass_g: f64) -> Option<AppCommand> {
        self.pass?;
        let (modes, labels): (Vec<MeasuredMode>, Vec<Option<String>>) =
            self.measured_modes().into_iter().unzip();
        let mut input = PassInput::new(mass_g, modes);
        input.spectrum = self.stored_spectrum(40.0, 4000.0, 1000);
        Some(AppCommand::RecordPass {
            part: part.to_owned(),
            input,
            labels,
        })
    }
}

/// A pass's averaged spectrum as a ledger spectrum; None if it has none or
/// the range holds too few bins.
pub fn stored_spectrum_of(
    pass: &PassResult,
    low_hz: f64,
    high_hz: f64,
    points: usize,
) -> Option<StoredSpectrum> {
    let spectrum = pass.spectrum.as_ref()?;
    let curve = spectrum.log_spaced_db(low_hz, high_hz, points);
    let frequency_hz: Vec<f32> = curve.iter().map(|p| p.0 as f32).collect();
    let level_db: Vec<f32> = curve.iter().map(|p| p.1 as f32).collect();
    let points = points.min(crate::ledger::spectrum::MAX_SPECTRUM_POINTS);
    StoredSpectrum::resample_log(&frequency_hz, &level_db, points).ok()
}
