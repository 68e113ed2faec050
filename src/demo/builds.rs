//! The sample builds shipped with tapwright (invented makers and
//! instruments, see `sample_sessions/`).
//!
//! They are compiled into the program (`include_str!`) rather than read
//! from `sample_sessions/` at run time: they then open from any working
//! folder and from an installed binary, and because the opened copy has no
//! file, neither Save nor the autosave after a recorded pass can write over
//! the shipped samples (the maker keeps a copy with Save as…).

use std::path::Path;

use crate::ledger::store::{from_ron_text, StoreError};
use crate::ledger::Build;

/// A demo build shipped with tapwright.
#[derive(Clone, Copy, Debug)]
pub struct SampleBuild {
    /// The name in the menu.
    pub title: &'static str,
    /// Where it lives in the repository (named in load errors).
    pub file: &'static str,
    /// The RON text.
    pub text: &'static str,
}

impl SampleBuild {
    /// The build, parsed.
    pub fn load(&self) -> Result<Build, StoreError> {
        from_ron_text(self.text, Path::new(self.file))
    }
}

/// The sample builds, in menu order; the first is the violin opened with
/// the demo recording.
pub const SAMPLE_BUILDS: [SampleBuild; 2] = [
    SampleBuild {
        title: "Violin \"Wren\" (tops, backs, body)",
        file: "sample_sessions/violin_wren.ron",
        text: include_str!("../../sample_sessions/violin_wren.ron"),
    },
    SampleBuild {
        title: "Guitar \"Larkspur\" (top series, body)",
        file: "sample_sessions/guitar_larkspur.ron",
        text: include_str!("../../sample_sessions/guitar_larkspur.ron"),
    },
];

/// The sample violin build opened with the demo recording.
pub fn sample_build() -> Result<Build, StoreError> {
    SAMPLE_BUILDS[0].load()
}
