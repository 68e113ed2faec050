//! Schema version 3: the build-file layout before shape maps, kept here
//! only so that version-3 files still load. Do not change these types;
//! change the migration instead.
//!
//! Version 3 differs from version 4 in one way: a pass had no
//! `shape_map` (mode shapes from roving taps); it migrates to `None`.
//!
//! The build, its parts and passes are frozen here; what a pass holds
//! (thickness readings, mode records, the stored spectrum), the stock list
//! and the cavity geometry are read with the current types, which have
//! kept the version-3 layout. A later version that changes them must
//! freeze copies of them here first.

use std::collections::BTreeMap;

use serde::Deserialize;

use super::model::{
    Build, Family, Part, PartKind, Pass, PassModeRecord, ThicknessReading, SCHEMA_VERSION,
};
use super::spectrum::StoredSpectrum;
use super::stock::StockSample;
use super::time::Timestamp;
use crate::acoustics::CavityGeometry;

#[derive(Deserialize)]
#[serde(rename = "Build", deny_unknown_fields)]
pub(super) struct BuildV3 {
    #[allow(dead_code)]
    schema_version: u32,
    name: String,
    family: Family,
    notes: String,
    created: Timestamp,
    parts: Vec<PartV3>,
    #[serde(default)]
    air: Option<CavityGeometry>,
    stock: Vec<StockSample>,
}

/// A part in the version-3 layout (also read by `schema_v2`, whose parts
/// had the same layout).
#[derive(Deserialize)]
#[serde(rename = "Part", deny_unknown_fields)]
pub(super) struct PartV3 {
    name: String,
    kind: PartKind,
    wood_species: Option<String>,
    outline_length_mm: Option<f64>,
    outline_width_mm: Option<f64>,
    labels: Vec<String>,
    targets: BTreeMap<String, f64>,
    passes: Vec<PassV3>,
}

#[derive(Deserialize)]
#[serde(rename = "Pass", deny_unknown_fields)]
struct PassV3 {
    number: u32,
    time: Timestamp,
    mass_g: f64,
    thickness: Vec<ThicknessReading>,
    air_temp_c: Option<f64>,
    relative_humidity_pct: Option<f64>,
    note: String,
    modes: Vec<PassModeRecord>,
    spectrum: Option<StoredSpectrum>,
}

/// Turns a version-3 build into the current layout. The result still has to
/// pass [`Build::validate`].
pub(super) fn migrate(old: BuildV3) -> Build {
    Build {
        schema_version: SCHEMA_VERSION,
        name: old.name,
        family: old.family,
        notes: old.notes,
        created: old.created,
        parts: old.parts.into_iter().map(migrate_part).collect(),
        air: old.air,
        stock: old.stock,
    }
}

/// A version-3 (or version-2) part in the current layout.
pub(super) fn migrate_part(part: PartV3) -> Part {
    Part {
        name: part.name,
        kind: part.kind,
        wood_species: part.wood_species,
        outline_length_mm: part.outline_length_mm,
        outline_width_mm: part.outline_width_mm,
        labels: part.labels,
        targets: part.targets,
        passes: part.passes.into_iter().map(migrate_pass).collect(),
    }
}

fn migrate_pass(pass: PassV3) -> Pass {
    Pass {
        number: pass.number,
        time: pass.time,
        mass_g: pass.mass_g,
        thickness: pass.thickness,
        air_temp_c: pass.air_temp_c,
        relative_humidity_pct: pass.relative_humidity_pct,
        note: pass.note,
        modes: pass.modes,
        spectrum: pass.spectrum,
        shape_map: None,
    }
}
