//! Schema version 2: the build-file layout before the stock list, kept here
//! only so that version-2 files still load. Do not change these types;
//! change the migration instead.
//!
//! Version 2 differs from version 3 in one way: a build had no `stock`
//! (wood samples graded from bar taps); it migrates to an empty list.
//!
//! Only the build itself changed, so the parts and the cavity geometry are
//! read with the current types, which have kept the version-2 layout. A
//! later version that changes them must freeze copies of them here first.

use serde::Deserialize;

use super::model::{Build, Family, Part, SCHEMA_VERSION};
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
    parts: Vec<Part>,
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
        parts: old.parts,
        air: old.air,
        stock: Vec::new(),
    }
}
