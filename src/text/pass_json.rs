//! A pass's modes as JSON: the one shape that `analyze --json`, `listen
//! --json` and the window's "Export pass as JSON" write (the fields are
//! described in README.md, "Machine-readable output").

use serde::Serialize;

use crate::analysis::pitch::nearest_note;
use crate::analysis::PassMode;

/// One mode of a pass, with its nearest note: the pass's own fields
/// ([`PassMode`], written as they are) and then `note` and `cents`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ModeJson {
    #[serde(flatten)]
    pub mode: PassMode,
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
            mode: mode.clone(),
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
pub(crate) mod tests {
    use super::*;

    pub(crate) fn sample_mode() -> ModeJson {
        // 330 Hz against A4 = 440 Hz is E4 + 1.96 cents (12-TET, ISO 16).
        let json = serde_json::json!({
            "frequency_hz": 330.0, "q": 50.0, "level_db": -20.0, "prominence_db": 12.0,
            "spread_hz": 0.1, "q_spread": 2.0, "taps_seen": 3,
        });
        let mode: PassMode = serde_json::from_value(json).expect("a pass mode");
        let made = ModeJson::new(&mode, 440.0);
        assert_eq!(made.note, "E4");
        assert!((made.cents - 1.955).abs() < 0.001, "{}", made.cents);
        made
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
