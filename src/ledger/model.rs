//! The build, its parts and their passes, and the commands that change them.
//!
//! Invariants kept by the types and commands (and checked again by
//! [`Build::validate`] when a file is loaded or saved): part names are
//! non-empty and unique within a build; passes are numbered 1, 2, 3 ... in
//! order within a part; masses, thicknesses and mode frequencies are finite
//! and positive; every mode label is one of the part's labels and is used at
//! most once per pass; targets belong to known labels.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::carry_over::{self, CarriedLabel};
use super::forecast::{self, Forecast, HistoryPoint};
use super::labels::{Tradition, GUITAR_BODY, GUITAR_FREE_PLATE, VIOLIN_BODY, VIOLIN_FREE_PLATE};
use super::shape_map::StoredShapeMap;
use super::spectrum::StoredSpectrum;
use super::stock::StockSample;
use super::time::Timestamp;
use super::LedgerError;
use crate::acoustics::CavityGeometry;
use crate::analysis::pitch::cents_between;

/// The schema version this code writes. Versions 1 to 3 are still read
/// (see `schema_v1`, `schema_v2` and `schema_v3`, migrated on load by
/// `store::load`).
pub const SCHEMA_VERSION: u32 = 4;

/// Instrument family of a build; chooses the preset label sets.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Family {
    /// Violin.
    Violin,
    /// Viola.
    Viola,
    /// Cello.
    Cello,
    /// Guitar (classical or steel-string).
    Guitar,
    /// Mandolin.
    Mandolin,
    /// Ukulele.
    Ukulele,
    /// Anything else; no preset labels.
    Other,
}

impl Family {
    /// Every family, in the order a chooser should list them.
    pub const ALL: [Family; 7] = [
        Family::Violin,
        Family::Viola,
        Family::Cello,
        Family::Guitar,
        Family::Mandolin,
        Family::Ukulele,
        Family::Other,
    ];

    /// Lower-case English name ("violin").
    pub fn name(self) -> &'static str {
        match self {
            Family::Violin => "violin",
            Family::Viola => "viola",
            Family::Cello => "cello",
            Family::Guitar => "guitar",
            Family::Mandolin => "mandolin",
            Family::Ukulele => "ukulele",
            Family::Other => "other",
        }
    }
}

/// What a part is.
#[derive(Clone, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum PartKind {
    /// The top (belly, soundboard), measured free.
    TopPlate,
    /// The back, measured free.
    BackPlate,
    /// The closed body (corpus).
    AssembledBody,
    /// Anything else, named by the maker ("bass bar", "neck blank").
    Custom(String),
}

impl PartKind {
    /// Lower-case English description ("top plate", or the custom name).
    pub fn describe(&self) -> &str {
        match self {
            PartKind::TopPlate => "top plate",
            PartKind::BackPlate => "back plate",
            PartKind::AssembledBody => "assembled body",
            PartKind::Custom(name) => name,
        }
    }
}

/// One instrument in the making. One RON file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Build {
    pub(super) schema_version: u32,
    /// The build's name ("Violin No. 12").
    pub name: String,
    pub(super) family: Family,
    /// Free notes.
    pub notes: String,
    /// When the build was started.
    pub created: Timestamp,
    pub(super) parts: Vec<Part>,
    /// The body's cavity (volume, openings, air) for the air check, once
    /// the maker has entered it. Files written before this field load with
    /// `None`.
    #[serde(default)]
    pub air: Option<CavityGeometry>,
    /// The wood samples graded for this build (since schema version 3).
    pub(super) stock: Vec<StockSample>,
}

/// A thickness measured at one named point of a plate.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThicknessReading {
    /// Where ("centre", "upper bout bass side").
    pub point: String,
    /// Thickness, mm.
    pub thickness_mm: f64,
}

/// The label on a mode.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModeLabel {
    /// One of the part's labels.
    pub name: String,
    /// True when carry-over placed the label without being sure; the maker
    /// should confirm it (or move it).
    pub needs_confirmation: bool,
}

/// A mode as measured, before the ledger labels it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct MeasuredMode {
    /// Centre frequency, Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
    /// Peak level, dB.
    pub level_db: f64,
    /// Spread of the frequency across the pass's taps, Hz.
    pub spread_hz: f64,
}

/// A mode of a recorded pass, with its label if it has one.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PassModeRecord {
    /// Centre frequency, Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
    /// Peak level, dB.
    pub level_db: f64,
    /// Spread of the frequency across the pass's taps, Hz.
    pub spread_hz: f64,
    /// The label, if any.
    pub label: Option<ModeLabel>,
}

impl PassModeRecord {
    /// The label's name, if labelled.
    pub fn label_name(&self) -> Option<&str> {
        self.label.as_ref().map(|l| l.name.as_str())
    }

    /// True when labelled but not yet confirmed.
    pub fn label_needs_confirmation(&self) -> bool {
        self.label.as_ref().is_some_and(|l| l.needs_confirmation)
    }
}

/// One measured state of a part.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Pass {
    pub(super) number: u32,
    /// When the pass was measured.
    pub time: Timestamp,
    /// Mass of the part, g.
    pub mass_g: f64,
    /// Thickness readings, in the order taken.
    pub thickness: Vec<ThicknessReading>,
    /// Air temperature, °C.
    pub air_temp_c: Option<f64>,
    /// Relative humidity, % (0–100).
    pub relative_humidity_pct: Option<f64>,
    /// Free note ("scraped the upper bouts").
    pub note: String,
    pub(super) modes: Vec<PassModeRecord>,
    /// The averaged spectrum, for overlays.
    pub spectrum: Option<StoredSpectrum>,
    /// The mode shapes from roving taps, if the pass was tapped over a
    /// grid (since schema version 4).
    pub shape_map: Option<StoredShapeMap>,
}

/// Everything needed to record a new pass.
#[derive(Clone, Debug, PartialEq)]
pub struct PassInput {
    /// When the pass was measured.
    pub time: Timestamp,
    /// Mass of the part, g (finite, positive).
    pub mass_g: f64,
    /// Thickness readings (point names unique).
    pub thickness: Vec<ThicknessReading>,
    /// Air temperature, °C.
    pub air_temp_c: Option<f64>,
    /// Relative humidity, %.
    pub relative_humidity_pct: Option<f64>,
    /// Free note.
    pub note: String,
    /// The modes found, in any order (stored sorted by frequency).
    pub modes: Vec<MeasuredMode>,
    /// The averaged spectrum, if kept.
    pub spectrum: Option<StoredSpectrum>,
    /// The shape map, if the pass was tapped over a grid.
    pub shape_map: Option<StoredShapeMap>,
}

impl PassInput {
    /// A pass measured now with only a mass and modes; fill the other fields
    /// as needed.
    pub fn new(mass_g: f64, modes: Vec<MeasuredMode>) -> Self {
        Self {
            time: Timestamp::now(),
            mass_g,
            thickness: Vec::new(),
            air_temp_c: None,
            relative_humidity_pct: None,
            note: String::new(),
            modes,
            spectrum: None,
            shape_map: None,
        }
    }
}

/// What recording a pass did with the labels.
#[derive(Clone, Debug, PartialEq)]
pub struct PassOutcome {
    /// Number given to the new pass.
    pub pass_number: u32,
    /// Labels carried over from earlier passes, with where they landed.
    pub carried: Vec<CarriedLabel>,
    /// Labels placed but flagged for the maker to confirm.
    pub needs_confirmation: Vec<String>,
    /// Labels of earlier passes with no mode near their expected frequency.
    pub not_found: Vec<String>,
}

/// A change of a labelled mode's frequency between two passes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FrequencyChange {
    /// The pass compared against.
    pub from_pass: u32,
    /// Change, Hz (negative when the mode fell).
    pub hz: f64,
    /// Change, % of the earlier frequency.
    pub percent: f64,
    /// Change, cents (1200·log2(f/f_ref)).
    pub cents: f64,
}

impl FrequencyChange {
    fn between(from_pass: u32, from_hz: f64, to_hz: f64) -> Self {
        Self {
            from_pass,
            hz: to_hz - from_hz,
            percent: 100.0 * (to_hz / from_hz - 1.0),
            cents: cents_between(from_hz, to_hz),
        }
    }
}

/// A labelled mode in one pass and how it moved.
#[derive(Clone, Debug, PartialEq)]
pub struct PassChange {
    /// The label.
    pub label: String,
    /// The pass.
    pub pass_number: u32,
    /// Frequency in this pass, Hz.
    pub frequency_hz: f64,
    /// Against the latest earlier pass that has this label.
    pub vs_previous: Option<FrequencyChange>,
    /// Against the first pass that has this label.
    pub vs_first: Option<FrequencyChange>,
}

/// One of a label's appearances, for charts (frequency against pass and mass).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LabelPoint {
    /// Pass number.
    pub pass_number: u32,
    /// Mass at that pass, g.
    pub mass_g: f64,
    /// Frequency of the labelled mode, Hz.
    pub frequency_hz: f64,
}

/// A part of a build: its description, labels, targets and passes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Part {
    pub(super) name: String,
    pub(super) kind: PartKind,
    /// Wood species ("spruce", "maple").
    pub wood_species: Option<String>,
    /// Outline length, mm.
    pub outline_length_mm: Option<f64>,
    /// Outline width (widest), mm.
    pub outline_width_mm: Option<f64>,
    pub(super) labels: Vec<String>,
    pub(super) targets: BTreeMap<String, f64>,
    pub(super) passes: Vec<Pass>,
}

impl Build {
    /// A new, empty build, created now.
    pub fn new(name: impl Into<String>, family: Family) -> Self {
        Self {
            schema_version: SCHEMA_VERSION,
            name: name.into(),
            family,
            notes: String::new(),
            created: Timestamp::now(),
            parts: Vec::new(),
            air: None,
            stock: Vec::new(),
        }
    }

    /// The schema version of this build (always [`SCHEMA_VERSION`] in memory;
    /// older files are migrated when loaded).
    pub fn schema_version(&self) -> u32 {
        self.schema_version
    }

    /// The instrument family.
    pub fn family(&self) -> Family {
        self.family
    }

    /// Changes the family; each part gains the preset labels of the new
    /// family that it lacks (no label is removed, so no pass loses one).
    pub fn set_family(&mut self, family: Family) {
        self.family = family;
        for part in &mut self.parts {
            for label in preset_labels(family, &part.kind) {
                if !part.labels.iter().any(|l| l == label) {
                    part.labels.push((*label).to_string());
                }
            }
        }
    }

    /// The parts, in the order added.
    pub fn parts(&self) -> &[Part] {
        &self.parts
    }

    /// The part named `name`.
    pub fn part(&self, name: &str) -> Option<&Part> {
        self.parts.iter().find(|p| p.name == name)
    }

    /// The part named `name`, to change it.
    pub fn part_mut(&mut self, name: &str) -> Option<&mut Part> {
        self.parts.iter_mut().find(|p| p.name == name)
    }

    /// Adds a part with the preset labels for its kind and this build's
    /// family. Fails on an empty or already used name.
    pub fn add_part(
        &mut self,
        name: impl Into<String>,
        kind: PartKind,
    ) -> Result<&mut Part, LedgerError> {
        let name = name.into();
        self.check_new_part_name(&name)?;
        let labels = preset_labels(self.family, &kind)
            .iter()
            .map(|l| (*l).to_string())
            .collect();
        let index = self.parts.len();
        self.parts.push(Part {
            name,
            kind,
            wood_species: None,
            outline_length_mm: None,
            outline_width_mm: None,
            labels,
            targets: BTreeMap::new(),
            passes: Vec::new(),
        });
        Ok(&mut self.parts[index])
    }

    /// Renames a part. Fails if `old` is unknown or `new` empty or taken.
    pub fn rename_part(&mut self, old: &str, new: impl Into<String>) -> Result<(), LedgerError> {
        let new = new.into();
        if old == new {
            return Ok(());
        }
        self.check_new_part_name(&new)?;
        let part = self
            .part_mut(old)
            .ok_or_else(|| LedgerError::NoSuchPart(old.to_string()))?;
        part.name = new;
        Ok(())
    }

    /// Removes a part and all its passes; returns it.
    pub fn remove_part(&mut self, name: &str) -> Result<Part, LedgerError> {
        let index = self
            .parts
            .iter()
            .position(|p| p.name == name)
            .ok_or_else(|| LedgerError::NoSuchPart(name.to_string()))?;
        Ok(self.parts.remove(index))
    }

    fn check_new_part_name(&self, name: &str) -> Result<(), LedgerError> {
        if name.trim().is_empty() {
            return Err(LedgerError::EmptyName("a part"));
        }
        if self.part(name).is_some() {
            return Err(LedgerError::DuplicatePart(name.to_string()));
        }
        Ok(())
    }

    /// Checks every invariant listed in the module documentation; the first
    /// problem found is returned. `store::load` and `store::save` call it.
    pub fn validate(&self) -> Result<(), LedgerError> {
        if self.schema_version != SCHEMA_VERSION {
            return Err(LedgerError::Invalid(format!(
                "the build has schema version {} but this code keeps version {SCHEMA_VERSION}",
                self.schema_version
            )));
        }
        for (index, part) in self.parts.iter().enumerate() {
            if part.name.trim().is_empty() {
                return Err(LedgerError::EmptyName("a part"));
            }
            if self.parts[..index].iter().any(|p| p.name == part.name) {
                return Err(LedgerError::DuplicatePart(part.name.clone()));
            }
            part.validate()?;
        }
        super::stock::validate_stock(&self.stock)
    }
}

impl Part {
    /// The part's name (unique within its build).
    pub fn name(&self) -> &str {
        &self.name
    }

    /// What the part is.
    pub fn kind(&self) -> &PartKind {
        &self.kind
    }

    /// The labels offered for this part: the preset set for its kind and the
    /// build's family, then any the maker added.
    pub fn labels(&self) -> &[String] {
        &self.labels
    }

    /// Target frequency per label, Hz.
    pub fn targets(&self) -> &BTreeMap<String, f64> {
        &self.targets
    }

    /// The passes, pass 1 first.
    pub fn passes(&self) -> &[Pass] {
        &self.passes
    }

    /// Pass number `number` (1-based).
    pub fn pass(&self, number: u32) -> Option<&Pass> {
        let index = usize::try_from(number).ok()?.checked_sub(1)?;
        self.passes.get(index)
    }

    /// Pass number `number`, to edit its time, mass, thickness, air, note or
    /// spectrum. Its number and modes change only through the part's
    /// commands. (`store::save` refuses a build whose values became invalid.)
    pub fn pass_mut(&mut self, number: u32) -> Option<&mut Pass> {
        let index = usize::try_from(number).ok()?.checked_sub(1)?;
        self.passes.get_mut(index)
    }

    /// The latest pass.
    pub fn latest_pass(&self) -> Option<&Pass> {
        self.passes.last()
    }

    /// Adds a label of the maker's own. Adding a label the part already has
    /// does nothing.
    pub fn add_label(&mut self, label: impl Into<String>) -> Result<(), LedgerError> {
        let label = label.into();
        if label.trim().is_empty() {
            return Err(LedgerError::EmptyName("a label"));
        }
        if !self.labels.contains(&label) {
            self.labels.push(label);
        }
        Ok(())
    }

    /// Records a new pass: checks the input, sorts its modes by frequency,
    /// carries the labels of earlier passes over to them (see
    /// `carry_over`), and appends it with the next number.
    pub fn record_pass(&mut self, input: PassInput) -> Result<PassOutcome, LedgerError> {
        let pass_number = self.next_pass_number()?;
        let where_ = format!("part \"{}\", new pass {pass_number}", self.name);
        check_pass_values(
            &where_,
            input.mass_g,
            &input.thickness,
            input.air_temp_c,
            input.relative_humidity_pct,
        )?;
        for mode in &input.modes {
            check_mode_values(&where_, mode)?;
        }
        if let Some(map) = &input.shape_map {
            map.validate(&where_, &self.labels)?;
        }
        let mut measured = input.modes;
        measured.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
        let frequencies: Vec<f64> = measured.iter().map(|m| m.frequency_hz).collect();
        let carry =
            carry_over::carry_labels(&self.passes, &self.labels, input.mass_g, &frequencies);
        let mut modes: Vec<PassModeRecord> = measured
            .iter()
            .map(|m| PassModeRecord {
                frequency_hz: m.frequency_hz,
                q: m.q,
                level_db: m.level_db,
                spread_hz: m.spread_hz,
                label: None,
            })
            .collect();
        for carried in &carry.carried {
            modes[carried.mode_index].label = Some(ModeLabel {
                name: carried.label.clone(),
                needs_confirmation: !carried.confident,
            });
        }
        self.passes.push(Pass {
            number: pass_number,
            time: input.time,
            mass_g: input.mass_g,
            thickness: input.thickness,
            air_temp_c: input.air_temp_c,
            relative_humidity_pct: input.relative_humidity_pct,
            note: input.note,
            modes,
            spectrum: input.spectrum,
            shape_map: input.shape_map,
        });
        let needs_confirmation = carry
            .carried
            .iter()
            .filter(|c| !c.confident)
            .map(|c| c.label.clone())
            .collect();
        Ok(PassOutcome {
            pass_number,
            carried: carry.carried,
            needs_confirmation,
            not_found: carry.not_found,
        })
    }

    /// Removes the latest pass (to undo a recording); returns it.
    pub fn remove_latest_pass(&mut self) -> Option<Pass> {
        self.passes.pop()
    }

    /// Puts `label` on mode `mode_index` of pass `pass_number` (confirmed),
    /// taking it off any other mode of that pass; `None` clears the mode's
    /// label. The label must be one of [`Part::labels`].
    pub fn set_label(
        &mut self,
        pass_number: u32,
        mode_index: usize,
        label: Option<&str>,
    ) -> Result<(), LedgerError> {
        if let Some(name) = label {
            self.check_known_label(name)?;
        }
        let part_name = self.name.clone();
        let pass = self.pass_mut(pass_number).ok_or(LedgerError::NoSuchPass {
            part: part_name,
            pass: pass_number,
        })?;
        if mode_index >= pass.modes.len() {
            return Err(LedgerError::NoSuchMode {
                pass: pass_number,
                index: mode_index,
            });
        }
        if let Some(name) = label {
            for mode in &mut pass.modes {
                if mode.label_name() == Some(name) {
                    mode.label = None;
                }
            }
        }
        pass.modes[mode_index].label = label.map(|name| ModeLabel {
            name: name.to_string(),
            needs_confirmation: false,
        });
        Ok(())
    }

    /// Marks the label on mode `mode_index` of pass `pass_number` as
    /// confirmed. Fails if there is no such mode or it has no label.
    pub fn confirm_label(
        &mut self,
        pass_number: u32,
        mode_index: usize,
    ) -> Result<(), LedgerError> {
        let part_name = self.name.clone();
        let pass = self.pass_mut(pass_number).ok_or(LedgerError::NoSuchPass {
            part: part_name,
            pass: pass_number,
        })?;
        match pass
            .modes
            .get_mut(mode_index)
            .and_then(|m| m.label.as_mut())
        {
            Some(label) => {
                label.needs_confirmation = false;
                Ok(())
            }
            None => Err(LedgerError::NoSuchMode {
                pass: pass_number,
                index: mode_index,
            }),
        }
    }

    /// Sets (or with `None` clears) the target frequency of a label, Hz.
    pub fn set_target(&mut self, label: &str, target_hz: Option<f64>) -> Result<(), LedgerError> {
        self.check_known_label(label)?;
        match target_hz {
            Some(hz) => {
                check_positive(&format!("target of \"{label}\""), "Hz", hz)?;
                self.targets.insert(label.to_string(), hz);
            }
            None => {
                self.targets.remove(label);
            }
        }
        Ok(())
    }

    /// Forecast of the mass (and thickness) still to remove for `label` to
    /// reach its target; `None` without a target or without a pass where the
    /// label appears. See `forecast` for the method.
    pub fn forecast(&self, label: &str) -> Option<Forecast> {
        let target_hz = *self.targets.get(label)?;
        let history: Vec<HistoryPoint> = self
            .passes
            .iter()
            .filter_map(|pass| {
                let mode = pass.mode_labelled(label)?;
                Some(HistoryPoint {
                    pass_number: pass.number,
                    mass_g: pass.mass_g,
                    frequency_hz: mode.frequency_hz,
                    mean_thickness_mm: pass.mean_thickness_mm(),
                })
            })
            .collect();
        let latest_pass = self.passes.last().map_or(0, |p| p.number);
        forecast::forecast(label, target_hz, &history, latest_pass)
    }

    /// Forecasts for every label with a target and a history.
    pub fn forecasts(&self) -> Vec<Forecast> {
        self.targets
            .keys()
            .filter_map(|l| self.forecast(l))
            .collect()
    }

    /// Where `label` stood in each pass that has it.
    pub fn label_history(&self, label: &str) -> Vec<LabelPoint> {
        self.passes
            .iter()
            .filter_map(|pass| {
                pass.mode_labelled(label).map(|mode| LabelPoint {
                    pass_number: pass.number,
                    mass_g: pass.mass_g,
                    frequency_hz: mode.frequency_hz,
                })
            })
            .collect()
    }

    /// How `label` moved in pass `pass_number` against the previous and the
    /// first pass that have it; `None` if that pass lacks the label.
    pub fn change(&self, label: &str, pass_number: u32) -> Option<PassChange> {
        let history = self.label_history(label);
        let position = history.iter().position(|p| p.pass_number == pass_number)?;
        let now = history[position];
        let against = |earlier: &LabelPoint| {
            FrequencyChange::between(earlier.pass_number, earlier.frequency_hz, now.frequency_hz)
        };
        Some(PassChange {
            label: label.to_string(),
            pass_number,
            frequency_hz: now.frequency_hz,
            vs_previous: position.checked_sub(1).map(|i| against(&history[i])),
            vs_first: (position > 0).then(|| against(&history[0])),
        })
    }

    /// What [`Part::change`] gives for every labelled mode of every pass,
    /// in one walk over the passes (linear in their number, where calling
    /// `change` for each would be quadratic): one list per pass, in pass
    /// order, its labelled modes in mode order.
    pub fn all_changes(&self) -> Vec<Vec<PassChange>> {
        let mut first: std::collections::HashMap<&str, (u32, f64)> = Default::default();
        let mut previous: std::collections::HashMap<&str, (u32, f64)> = Default::default();
        let mut all = Vec::with_capacity(self.passes.len());
        for pass in &self.passes {
            let mut changes = Vec::new();
            for mode in &pass.modes {
                let Some(label) = mode.label_name() else {
                    continue;
                };
                let now_hz = mode.frequency_hz;
                let against = |(from_pass, from_hz): (u32, f64)| {
                    FrequencyChange::between(from_pass, from_hz, now_hz)
                };
                let before = previous.get(label).copied();
                changes.push(PassChange {
                    label: label.to_string(),
                    pass_number: pass.number,
                    frequency_hz: now_hz,
                    vs_previous: before.map(against),
                    vs_first: before.and(first.get(label).copied()).map(against),
                });
                previous.insert(label, (pass.number, now_hz));
                first.entry(label).or_insert((pass.number, now_hz));
            }
            all.push(changes);
        }
        all
    }

    /// The labels used in any pass, in the order of [`Part::labels`].
    pub fn labels_in_use(&self) -> Vec<&str> {
        self.labels
            .iter()
            .filter(|l| self.passes.iter().any(|p| p.mode_labelled(l).is_some()))
            .map(String::as_str)
            .collect()
    }

    fn next_pass_number(&self) -> Result<u32, LedgerError> {
        u32::try_from(self.passes.len() + 1)
            .map_err(|_| LedgerError::Invalid("too many passes".into()))
    }

    fn check_known_label(&self, label: &str) -> Result<(), LedgerError> {
        if self.labels.iter().any(|l| l == label) {
            Ok(())
        } else {
            Err(LedgerError::UnknownLabel {
                part: self.name.clone(),
                label: label.to_string(),
            })
        }
    }

    fn validate(&self) -> Result<(), LedgerError> {
        let where_part = format!("part \"{}\"", self.name);
        for (what, value) in [
            ("outline length", self.outline_length_mm),
            ("outline width", self.outline_width_mm),
        ] {
            if let Some(mm) = value {
                check_positive(&format!("{where_part}: {what}"), "mm", mm)?;
            }
        }
        for (index, label) in self.labels.iter().enumerate() {
            if label.trim().is_empty() {
                return Err(LedgerError::EmptyName("a label"));
            }
            if self.labels[..index].contains(label) {
                return Err(LedgerError::Invalid(format!(
                    "{where_part}: label \"{label}\" is listed twice"
                )));
            }
        }
        for (label, &hz) in &self.targets {
            self.check_known_label(label)?;
            check_positive(&format!("{where_part}: target of \"{label}\""), "Hz", hz)?;
        }
        for (index, pass) in self.passes.iter().enumerate() {
            if usize::try_from(pass.number).ok() != Some(index + 1) {
                return Err(LedgerError::Invalid(format!(
                    "{where_part}: pass {} is stored in place {}; passes must be numbered 1, 2, 3 ... in order",
                    pass.number,
                    index + 1
                )));
            }
            self.validate_pass(pass)?;
        }
        Ok(())
    }

    fn validate_pass(&self, pass: &Pass) -> Result<(), LedgerError> {
        let where_ = format!("part \"{}\", pass {}", self.name, pass.number);
        check_pass_values(
            &where_,
            pass.mass_g,
            &pass.thickness,
            pass.air_temp_c,
            pass.relative_humidity_pct,
        )?;
        for (index, mode) in pass.modes.iter().enumerate() {
            let measured = MeasuredMode {
                frequency_hz: mode.frequency_hz,
                q: mode.q,
                level_db: mode.level_db,
                spread_hz: mode.spread_hz,
            };
            check_mode_values(&where_, &measured)?;
            if let Some(name) = mode.label_name() {
                self.check_known_label(name)?;
                if pass.modes[..index]
                    .iter()
                    .any(|m| m.label_name() == Some(name))
                {
                    return Err(LedgerError::Invalid(format!(
                        "{where_}: label \"{name}\" is on two modes"
                    )));
                }
            }
        }
        if let Some(map) = &pass.shape_map {
            map.validate(&where_, &self.labels)?;
        }
        Ok(())
    }
}

impl Pass {
    /// The pass number within its part (1-based).
    pub fn number(&self) -> u32 {
        self.number
    }

    /// The modes, lowest frequency first.
    pub fn modes(&self) -> &[PassModeRecord] {
        &self.modes
    }

    /// The mode carrying `label`, if any.
    pub fn mode_labelled(&self, label: &str) -> Option<&PassModeRecord> {
        self.modes.iter().find(|m| m.label_name() == Some(label))
    }

    /// Mean of the thickness readings, mm; `None` without readings.
    pub fn mean_thickness_mm(&self) -> Option<f64> {
        mean_thickness_mm(&self.thickness)
    }
}

/// Mean of some thickness readings, mm.
pub fn mean_thickness_mm(readings: &[ThicknessReading]) -> Option<f64> {
    if readings.is_empty() {
        return None;
    }
    Some(readings.iter().map(|r| r.thickness_mm).sum::<f64>() / readings.len() as f64)
}

fn check_positive(what: &str, unit: &'static str, value: f64) -> Result<(), LedgerError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(LedgerError::NotPositive {
            what: what.to_string(),
            value,
            unit,
        })
    }
}

/// Thicker than any plate or body wall (a block of wood is not graduated).
const MAX_THICKNESS_MM: f64 = 100.0;

/// Heavier than any part of a stringed instrument (a double bass body is a
/// few kilograms).
const MAX_MASS_G: f64 = 100_000.0;

fn check_at_most(what: &str, unit: &'static str, value: f64, most: f64) -> Result<(), LedgerError> {
    if value <= most {
        Ok(())
    } else {
        Err(LedgerError::Invalid(format!(
            "{what} is {value} {unit}; more than {most} {unit} cannot be a reading of a plate"
        )))
    }
}

fn check_finite(what: &str, value: f64) -> Result<(), LedgerError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(LedgerError::Invalid(format!(
            "{what} is {value}, not a number"
        )))
    }
}

fn check_pass_values(
    where_: &str,
    mass_g: f64,
    thickness: &[ThicknessReading],
    air_temp_c: Option<f64>,
    relative_humidity_pct: Option<f64>,
) -> Result<(), LedgerError> {
    check_positive(&format!("{where_}: mass"), "g", mass_g)?;
    check_at_most(&format!("{where_}: mass"), "g", mass_g, MAX_MASS_G)?;
    for (index, reading) in thickness.iter().enumerate() {
        let what = format!("{where_}: thickness at \"{}\"", reading.point);
        check_positive(&what, "mm", reading.thickness_mm)?;
        check_at_most(&what, "mm", reading.thickness_mm, MAX_THICKNESS_MM)?;
        if thickness[..index].iter().any(|r| r.point == reading.point) {
            return Err(LedgerError::Invalid(format!(
                "{where_}: thickness point \"{}\" is read twice",
                reading.point
            )));
        }
    }
    if let Some(temp_c) = air_temp_c {
        check_finite(&format!("{where_}: air temperature"), temp_c)?;
    }
    if let Some(rh) = relative_humidity_pct {
        if !(0.0..=100.0).contains(&rh) {
            return Err(LedgerError::Invalid(format!(
                "{where_}: relative humidity {rh} % is outside 0–100 %"
            )));
        }
    }
    Ok(())
}

fn check_mode_values(where_: &str, mode: &MeasuredMode) -> Result<(), LedgerError> {
    check_positive(
        &format!("{where_}: mode frequency"),
        "Hz",
        mode.frequency_hz,
    )?;
    if !(mode.q.is_finite() && mode.q > 0.0) {
        return Err(LedgerError::Invalid(format!(
            "{where_}: mode Q is {}; a Q must be a positive number",
            mode.q
        )));
    }
    check_finite(&format!("{where_}: mode level"), mode.level_db)?;
    check_finite(&format!("{where_}: mode spread"), mode.spread_hz)
}

// ----- preset labels, stock and carry-over of the build -------------------

impl Family {
    /// Which preset label tradition this family uses. Mandolins are put with
    /// the guitar family: a design choice, since their top modes are usually
    /// named like a guitar's (common practice, no source).
    pub fn tradition(self) -> Tradition {
        match self {
            Family::Violin | Family::Viola | Family::Cello => Tradition::ViolinFamily,
            Family::Guitar | Family::Mandolin | Family::Ukulele => Tradition::GuitarFamily,
            Family::Other => Tradition::Unlabelled,
        }
    }
}

/// The preset labels for a part of a build of `family`; empty for a
/// user-named part or the `Other` family.
pub fn preset_labels(family: Family, kind: &PartKind) -> &'static [&'static str] {
    match (family.tradition(), kind) {
        (Tradition::ViolinFamily, PartKind::TopPlate | PartKind::BackPlate) => VIOLIN_FREE_PLATE,
        (Tradition::GuitarFamily, PartKind::TopPlate | PartKind::BackPlate) => GUITAR_FREE_PLATE,
        (Tradition::ViolinFamily, PartKind::AssembledBody) => VIOLIN_BODY,
        (Tradition::GuitarFamily, PartKind::AssembledBody) => GUITAR_BODY,
        _ => &[],
    }
}

impl Build {
    /// The stock samples, in the order added.
    pub fn stock(&self) -> &[StockSample] {
        &self.stock
    }

    /// Adds a stock sample, or replaces the one with the same name. Fails
    /// if the sample breaks a rule.
    pub fn put_stock_sample(&mut self, sample: StockSample) -> Result<(), LedgerError> {
        sample.validate()?;
        match self.stock.iter_mut().find(|s| s.name == sample.name) {
            Some(existing) => *existing = sample,
            None => self.stock.push(sample),
        }
        Ok(())
    }

    /// Removes the stock sample named `name`; returns it.
    pub fn remove_stock_sample(&mut self, name: &str) -> Result<StockSample, LedgerError> {
        let index = self
            .stock
            .iter()
            .position(|s| s.name == name)
            .ok_or_else(|| {
                LedgerError::Invalid(format!("the build has no stock sample named \"{name}\""))
            })?;
        Ok(self.stock.remove(index))
    }
}

impl carry_over::EarlierPass for Pass {
    fn mass_g(&self) -> f64 {
        self.mass_g
    }

    fn labelled_hz(&self, label: &str) -> Option<f64> {
        self.mode_labelled(label).map(|m| m.frequency_hz)
    }
}
