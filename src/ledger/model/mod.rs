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

mod part;

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

    /// The labels placed by carry-over that the maker has yet to confirm,
    /// lowest frequency first.
    pub fn labels_to_confirm(&self) -> Vec<&str> {
        self.modes
            .iter()
            .filter(|m| m.label_needs_confirmation())
            .filter_map(|m| m.label_name())
            .collect()
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
