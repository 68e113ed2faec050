//! Schema version 2: the build-file layout before the stock list, kept here
//! only so that version-2 files still load. Do not change these types;
//! change the migration instead.
//!
//! Version 2 differs from version 3 in one way: a build had no `stock`
//! (wood samples graded from bar taps); it migrates to an empty list.
//!
//! Only the build itself changed, so the parts are read with the frozen
//! version-3 part (`schema_v3::PartV3`, the same layout) and the cavity
//! geometry with the current type, which has kept the version-2 layout. A
//! later version that changes it must freeze a copy of it here first.

use serde::Deserialize;

use super::model::{Build, Family, SCHEMA_VERSION};
use super::schema_v3::{migrate_part, PartV3};
use super::time::Timestamp;
use crate::acoustics::CavityGeometry;

#[derive(Deserialize)]
#[serde(rename = "Build", deny_unknown_fields)]
pub(super) struct BuildV2 {
    #[allow(dead_code)]
    schema_version: u32,
    name: String,
    family: Family,
    notes: String,
    created: Timestamp,
    parts: Vec<PartV3>,
    #[serde(default)]
    air: Option<CavityGeometry>,
}

/// Turns a version-2 build into the current layout. The result still has to
/// pass [`Build::validate`].
pub(super) fn migrate(old: BuildV2) -> Build {
    Build {
        schema_version: SCHEMA_VERSION,
        name: old.name,
        family: old.family,
        notes: old.notes,
        created: old.created,
        parts: old.parts.into_iter().map(migrate_part).collect(),
        air: old.air,
        stock: Vec::new(),
    }
}
