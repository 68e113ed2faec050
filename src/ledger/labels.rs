//! Preset label sets: the trade's names for the modes a maker usually
//! follows, per tradition (`model::preset_labels` picks the set for a
//! family and part kind).
//!
//! Names are spelled as the trade spells them (README.md, "The workbench"): the
//! violin-family free-plate numbering "mode 1", "mode 2", "mode 5"; the
//! guitar-family top modes "monopole", "cross-dipole", "long-dipole"; the
//! closed violin-family body's "A0", "CBR", "B1−", "B1+" (with a Unicode minus
//! sign, U+2212, in "B1−"); the closed guitar body's "A0", "top T(1,1)",
//! "back T(1,1)".

/// Violin-family free plate (top or back).
pub const VIOLIN_FREE_PLATE: &[&str] = &["mode 1", "mode 2", "mode 5"];
/// Guitar-family free plate (top, and by the same mode shapes the back).
pub const GUITAR_FREE_PLATE: &[&str] = &["monopole", "cross-dipole", "long-dipole"];
/// Closed violin-family body.
pub const VIOLIN_BODY: &[&str] = &["A0", "CBR", "B1\u{2212}", "B1+"];
/// Closed guitar-family body.
pub const GUITAR_BODY: &[&str] = &["A0", "top T(1,1)", "back T(1,1)"];

/// The tradition a family's labels come from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tradition {
    /// Violin, viola, cello: free-plate numbering and the corpus modes.
    ViolinFamily,
    /// Guitar, ukulele and mandolin (plucked, flat or lightly arched tops).
    GuitarFamily,
    /// No preset labels; the maker names the modes.
    Unlabelled,
}

#[cfg(test)]
mod tests {
    use crate::ledger::{preset_labels, Family, PartKind};

    #[test]
    fn trade_spellings_are_exact() {
        // Trade terms as the trade spells them (common practice, no source).
        assert_eq!(
            preset_labels(Family::Viola, &PartKind::TopPlate),
            ["mode 1", "mode 2", "mode 5"]
        );
        assert_eq!(
            preset_labels(Family::Guitar, &PartKind::TopPlate),
            ["monopole", "cross-dipole", "long-dipole"]
        );
        let body = preset_labels(Family::Cello, &PartKind::AssembledBody);
        assert_eq!(body, ["A0", "CBR", "B1−", "B1+"]);
        assert!(
            body[2].contains('\u{2212}'),
            "B1− must use the Unicode minus"
        );
        assert_eq!(
            preset_labels(Family::Ukulele, &PartKind::AssembledBody),
            ["A0", "top T(1,1)", "back T(1,1)"]
        );
        assert!(preset_labels(Family::Other, &PartKind::TopPlate).is_empty());
        assert!(preset_labels(Family::Violin, &PartKind::Custom("neck".into())).is_empty());
    }
}
