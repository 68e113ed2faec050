//! Pitch naming: nearest twelve-tone equal-tempered note and the offset in
//! cents, with an adjustable reference A4.

use serde::{Deserialize, Serialize};

/// Standard tuning frequency (ISO 16:1975).
pub const DEFAULT_A4_HZ: f64 = 440.0;

const NOTE_NAMES: [&str; 12] = [
    "C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B",
];

/// The nearest equal-tempered note to a frequency.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Pitch {
    /// Note name with octave number, scientific pitch notation ("A4", "C#5").
    pub note: String,
    /// Offset from that note in cents, in [-50, 50).
    pub cents: f64,
    /// MIDI note number of that note (A4 = 69).
    pub midi_note: i32,
}

/// Cents from `reference_hz` to `frequency_hz`: 1200·log2(f/f_ref).
pub fn cents_between(reference_hz: f64, frequency_hz: f64) -> f64 {
    1200.0 * (frequency_hz / reference_hz).log2()
}

/// Frequency of a MIDI note number for the given A4.
pub fn midi_note_hz(midi_note: i32, a4_hz: f64) -> f64 {
    a4_hz * 2f64.powf(f64::from(midi_note - 69) / 12.0)
}

/// Names the nearest equal-tempered note. Returns `None` for frequencies that
/// are not finite and positive, or an A4 that is not.
pub fn nearest_note(frequency_hz: f64, a4_hz: f64) -> Option<Pitch> {
    let valid = |x: f64| x.is_finite() && x > 0.0;
    if !valid(frequency_hz) || !valid(a4_hz) {
        return None;
    }
    let semitones_from_a4 = 12.0 * (frequency_hz / a4_hz).log2();
    // Round half up so that the cents land in [-50, 50).
    let nearest = (semitones_from_a4 + 0.5).floor();
    let midi_note = 69 + nearest as i32;
    let cents = 100.0 * (semitones_from_a4 - nearest);
    let name = NOTE_NAMES[midi_note.rem_euclid(12) as usize];
    let octave = midi_note.div_euclid(12) - 1;
    Some(Pitch {
        note: format!("{name}{octave}"),
        cents,
        midi_note,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a4_is_440_and_middle_c_is_c4() {
        // ISO 16:1975: A4 = 440 Hz; MIDI 60 is C4 (common practice, no source).
        let a = nearest_note(440.0, DEFAULT_A4_HZ).expect("valid");
        assert_eq!(a.note, "A4");
        assert!(a.cents.abs() < 1e-9);
        let c = nearest_note(261.625_565, DEFAULT_A4_HZ).expect("valid");
        assert_eq!(c.note, "C4");
        assert!(c.cents.abs() < 1e-3);
    }

    #[test]
    fn cents_stay_in_half_open_range() {
        for i in 0..2000 {
            let f = 30.0 * 1.0017f64.powi(i);
            let p = nearest_note(f, 440.0).expect("valid");
            assert!((-50.0..50.0).contains(&p.cents), "{f} -> {p:?}");
            let back = midi_note_hz(p.midi_note, 440.0) * 2f64.powf(p.cents / 1200.0);
            assert!((back - f).abs() < 1e-9 * f);
        }
    }

    #[test]
    fn rejects_nonsense() {
        assert!(nearest_note(0.0, 440.0).is_none());
        assert!(nearest_note(f64::NAN, 440.0).is_none());
        assert!(nearest_note(100.0, -1.0).is_none());
    }
}
