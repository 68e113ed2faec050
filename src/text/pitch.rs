//! A frequency as a musician reads it: the nearest equal-tempered note and
//! how many cents off it is.

use crate::analysis::pitch::nearest_note;

use super::numbers::signed;

/// "E4 −17 ct", or "–" when the frequency has no note.
pub fn note_text(frequency_hz: f64, a4_hz: f64) -> String {
    match nearest_note(frequency_hz, a4_hz) {
        Some(pitch) => format!("{} {} ct", pitch.note, signed(pitch.cents, 0)),
        None => "–".to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn notes_read_with_signed_cents() {
        // 12-TET against A4 = 440 Hz (ISO 16): 330 Hz is E4 + 1.96 ct.
        assert_eq!(note_text(330.0, 440.0), "E4 +2 ct");
        assert_eq!(note_text(436.0, 440.0), "A4 \u{2212}16 ct");
        assert_eq!(note_text(0.0, 440.0), "–");
    }
}
