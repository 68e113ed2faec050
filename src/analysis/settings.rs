//! What to look for in a tap: the band searched, how many modes, how far a
//! candidate peak must stand out, the range of Q kept.

use serde::{Deserialize, Serialize};

/// What to look for in a tap.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AnalysisSettings {
    /// Lowest frequency of interest.
    pub band_low_hz: f64,
    /// Highest frequency of interest.
    pub band_high_hz: f64,
    /// At most this many modes per tap (the strongest).
    pub max_modes: usize,
    /// A candidate peak must stand this far above the room noise (measured
    /// before the strike) at its frequency.
    pub min_above_floor_db: f64,
    /// A candidate peak must stand this far above the dips that separate it
    /// from higher peaks.
    pub min_prominence_db: f64,
    /// Modes with Q outside this range are dropped as artefacts.
    pub min_q: f64,
    pub max_q: f64,
}

impl Default for AnalysisSettings {
    fn default() -> Self {
        Self {
            band_low_hz: 40.0,
            band_high_hz: 4000.0,
            max_modes: 16,
            min_above_floor_db: 15.0,
            min_prominence_db: 6.0,
            min_q: 3.0,
            max_q: 3000.0,
        }
    }
}
