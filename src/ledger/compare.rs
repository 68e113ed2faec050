//! Top against back: mode 5 / mode 2 of each free plate (in its latest pass
//! that has both labels) and the interval between the two plates' mode 5.
//! Shown in the Ledger area and in the build report.

use super::model::{Build, Part, PartKind};

/// Mode 5 and mode 2 of a plate in its latest pass that has both.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlateModes {
    /// The pass used.
    pub pass_number: u32,
    /// Mode 2, Hz.
    pub mode2_hz: f64,
    /// Mode 5, Hz.
    pub mode5_hz: f64,
}

impl PlateModes {
    /// Mode 5 / mode 2.
    pub fn ratio(&self) -> f64 {
        self.mode5_hz / self.mode2_hz
    }
}

/// Mode 2 and mode 5 of `part`'s latest pass that has both labels.
pub fn plate_modes(part: &Part) -> Option<PlateModes> {
    part.passes().iter().rev().find_map(|pass| {
        Some(PlateModes {
            pass_number: pass.number(),
            mode2_hz: pass.mode_labelled("mode 2")?.frequency_hz,
            mode5_hz: pass.mode_labelled("mode 5")?.frequency_hz,
        })
    })
}

/// Semitones from the top's mode 5 to the back's: 12·log2(f_back/f_top).
pub fn mode5_interval_semitones(top: &PlateModes, back: &PlateModes) -> f64 {
    12.0 * (back.mode5_hz / top.mode5_hz).log2()
}

/// The first top plate and the first back plate of a build, when it has
/// both.
pub fn top_and_back(build: &Build) -> Option<(&Part, &Part)> {
    let first_of = |kind: PartKind| build.parts().iter().find(|p| *p.kind() == kind);
    Some((
        first_of(PartKind::TopPlate)?,
        first_of(PartKind::BackPlate)?,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_back_a_whole_tone_above_is_two_semitones() {
        // Equal temperament: a whole tone is a frequency ratio of 2^(2/12)
        // (definition of the semitone, common practice, no source).
        let top = PlateModes {
            pass_number: 1,
            mode2_hz: 170.0,
            mode5_hz: 340.0,
        };
        let back = PlateModes {
            mode5_hz: 340.0 * 2f64.powf(2.0 / 12.0),
            ..top
        };
        assert!((mode5_interval_semitones(&top, &back) - 2.0).abs() < 1e-9);
        assert!((top.ratio() - 2.0).abs() < 1e-12);
    }
}
