//! Schema version 1: the first build-file layout, kept frozen here only so
//! that old files still load. Do not change these types; change the
//! migration instead.
//!
//! Version 1 differs from version 2 in three small ways:
//! - a pass kept a single `thickness_mm: Option<f64>` instead of named
//!   thickness readings; it migrates to one reading at the point
//!   [`V1_THICKNESS_POINT`];
//! - a mode's `label` was a plain `Option<String>` with no confirmation flag;
//!   labels migrate as confirmed;
//! - passes kept no spectrum.

use std::collections::BTreeMap;

use serde::Deserialize;

use super::model::{
    Build, Family, ModeLabel, Part, PartKind, Pass, PassModeRecord, ThicknessReading,
    SCHEMA_VERSION,
};
use super::time::Timestamp;

/// Point name given to a version-1 pass's single thickness reading.
pub const V1_THICKNESS_POINT: &str = "unnamed point";

#[derive(Deserialize)]
#[serde(rename = "Build", deny_unknown_fields)]
pub(super) struct BuildV1 {
    #[allow(dead_code)]
    schema_version: u32,
    name: String,
    family: FamilyV1,
    notes: String,
    created: Timestamp,
    parts: Vec<PartV1>,
}

#[derive(Deserialize)]
enum FamilyV1 {
    Violin,
    Viola,
    Cello,
    Guitar,
    Mandolin,
    Ukulele,
    Other,
}

#[derive(Deserialize)]
enum PartKindV1 {
    TopPlate,
    BackPlate,
    AssembledBody,
    Custom(String),
}

#[derive(Deserialize)]
#[serde(rename = "Part", deny_unknown_fields)]
struct PartV1 {
    name: String,
    kind: PartKindV1,
    wood_species: Option<String>,
    outline_length_mm: Option<f64>,
    outline_width_mm: Option<f64>,
    labels: Vec<String>,
    targets: BTreeMap<String, f64>,
    passes: Vec<PassV1>,
}

#[derive(Deserialize)]
#[serde(rename = "Pass", deny_unknown_fields)]
struct PassV1 {
    number: u32,
    time: Timestamp,
    mass_g: f64,
    thickness_mm: Option<f64>,
    air_temp_c: Option<f64>,
    relative_humidity_pct: Option<f64>,
    note: String,
    modes: Vec<ModeV1>,
}

#[derive(Deserialize)]
#[serde(rename = "PassModeRecord", deny_unknown_fields)]
struct ModeV1 {
    frequency_hz: f64,
    q: f64,
    level_db: f64,
    spread_hz: f64,
    label: Option<String>,
}

/// Turns a version-1 build into the current layout. The result still has to
/// pass [`Build::validate`].
pub(super) fn migrate(old: BuildV1) -> Build {
    Build {
        schema_version: SCHEMA_VERSION,
        name: old.name,
        family: migrate_family(old.family),
        notes: old.notes,
        created: old.created,
        parts: old.parts.into_iter().map(migrate_part).collect(),
        air: None,
        stock: Vec::new(),
    }
}

fn migrate_family(family: FamilyV1) -> Family {
    match family {
        FamilyV1::Violin => Family::Violin,
        FamilyV1::Viola => Family::Viola,
        FamilyV1::Cello => Family::Cello,
        FamilyV1::Guitar => Family::Guitar,
        FamilyV1::Mandolin => Family::Mandolin,
        FamilyV1::Ukulele => Family::Ukulele,
        FamilyV1::Other => Family::Other,
    }
}

fn migrate_part(part: PartV1) -> Part {
    let kind = match part.kind {
        PartKindV1::TopPlate => PartKind::TopPlate,
        PartKindV1::BackPlate => PartKind::BackPlate,
        PartKindV1::AssembledBody => PartKind::AssembledBody,
        PartKindV1::Custom(name) => PartKind::Custom(name),
    };
    Part {
        name: part.name,
        kind,
        wood_species: part.wood_species,
        outline_length_mm: part.outline_length_mm,
        outline_width_mm: part.outline_width_mm,
        labels: part.labels,
        targets: part.targets,
        passes: part.passes.into_iter().map(migrate_pass).collect(),
    }
}

fn migrate_pass(pass: PassV1) -> Pass {
    let thickness = pass
        .thickness_mm
        .map(|mm| ThicknessReading {
            point: V1_THICKNESS_POINT.to_string(),
            thickness_mm: mm,
        })
        .into_iter()
        .collect();
    let modes = pass
        .modes
        .into_iter()
        .map(|m| PassModeRecord {
            frequency_hz: m.frequency_hz,
            q: m.q,
            level_db: m.level_db,
            spread_hz: m.spread_hz,
            label: m.label.map(|name| ModeLabel {
                name,
                needs_confirmation: false,
            }),
        })
        .collect();
    Pass {
        number: pass.number,
        time: pass.time,
        mass_g: pass.mass_g,
        thickness,
        air_temp_c: pass.air_temp_c,
        relative_humidity_pct: pass.relative_humidity_pct,
        note: pass.note,
        modes,
        spectrum: None,
        shape_map: None,
    }
}
