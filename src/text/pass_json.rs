//! A pass's modes as JSON: the one shape that `analyze --json`, `listen
//! --json` and the window's "Export pass as JSON" write (the fields are
//! described in README.md, "Machine-readable output").

use serde::Serialize;

use crate::analysis::pitch::nearest_note;
use crate::analysis::PassMode;

/// One mode of a pass, with its nearest note.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ModeJson {
    pub frequency_hz: f64,
    pub q: f64,
    pub level_db: f64,
    pub prominence_db: f64,
    pub spread_hz: f64,
    pub q_spread: f64,
    pub taps_seen: usize,
    /// The nearest equal-tempered note ("E4"), empty when there is none.
    pub note: String,
    /// Cents from that note, in [−50, 50); 0 when there is no note.
    pub cents: f64,
}

impl ModeJson {
    /// `mode` with its note against `a4_hz`.
    pub fn new(mode: &PassMode, a4_hz: f64) -> Self {
        let pitch = nearest_note(mode.frequency_hz, a4_hz);
        Self {
            frequency_hz: mode.frequency_hz,
            q: mode.q,
            level_db: mode.level_db,
            prominence_db: mode.prominence_db,
            spread_hz: mode.spread_hz,
            q_spread: mode.q_spread,
            taps_seen: mode.taps_seen,
            note: pitch.as_ref().map(|p| p.note.clone()).unwrap_or_default(),
            cents: pitch.map(|p| p.cents).unwrap_or(0.0),
        }
    }
}

/// Every mode of a pass, in its order.
pub fn modes_json(modes: &[PassMode], a4_hz: f64) -> Vec<ModeJson> {
    modes.iter().map(|m| ModeJson::new(m, a4_hz)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample_mode() -> ModeJson {
        ModeJson {
            frequency_hz: 330.0,
            q: 50.0,
            level_db: -20.0,
            prominence_db: 12.0,
            spread_hz: 0.1,
            q_spread: 2.0,
            taps_seen: 3,
            note: "E4".to_owned(),
            cents: 1.96,
        }
    }

    /// The fields README.md lists for each mode, in its order.
    const README_FIELDS: [&str; 9] = [
        "frequency_hz",
        "q",
        "level_db",
        "prominence_db",
        "spread_hz",
        "q_spread",
        "taps_seen",
        "note",
        "cents",
    ];

    #[test]
    fn a_mode_has_the_fields_the_readme_lists_in_its_order() {
        let text = serde_json::to_string(&sample_mode()).expect("test value");
        let places: Vec<usize> = README_FIELDS
            .iter()
            .map(|key| {
                text.find(&format!("\"{key}\":"))
                    .unwrap_or_else(|| panic!("{key} missing in {text}"))
            })
            .collect();
        assert!(places.windows(2).all(|w| w[0] < w[1]), "{text}");
        assert_eq!(text.matches("\":").count(), README_FIELDS.len(), "{text}");
    }
}
