//! Turning a pass measured by the analysis engine into what the ledger
//! keeps: its modes and a log-spaced copy of its averaged spectrum.

use crate::analysis::spectrum::power_to_db;
use crate::analysis::{DisplaySpectrum, PassResult};

use super::model::{MeasuredMode, PassInput};
use super::spectrum::StoredSpectrum;

/// Lowest frequency kept in a stored spectrum, Hz.
pub const STORED_LOW_HZ: f64 = 20.0;
/// Highest frequency kept in a stored spectrum, Hz (less if the recording's
/// spectrum ends lower).
pub const STORED_HIGH_HZ: f64 = 5000.0;
/// Points kept in a stored spectrum: enough for overlays (2000 points over
/// the 8 octaves from 20 Hz to 5 kHz are about 5 cents apart).
pub const STORED_POINTS: usize = 2000;

/// The modes of an analysed pass, as the ledger records them (frequency,
/// Q, level and spread; prominence and tap counts are not kept).
pub fn modes_from_analysis(result: &PassResult) -> Vec<MeasuredMode> {
    result
        .modes
        .iter()
        .map(|m| MeasuredMode {
            frequency_hz: m.frequency_hz,
            q: m.q,
            level_db: m.level_db,
            spread_hz: m.spread_hz,
        })
        .collect()
}

/// The averaged spectrum decimated to [`STORED_POINTS`] log-spaced points
/// between [`STORED_LOW_HZ`] and [`STORED_HIGH_HZ`], keeping the loudest
/// bin near each point so peaks survive. `None` if too few bins lie in range.
pub fn spectrum_from_analysis(spectrum: &DisplaySpectrum) -> Option<StoredSpectrum> {
    let (frequencies, levels): (Vec<f32>, Vec<f32>) = (1..spectrum.power.len())
        .map(|bin| (spectrum.frequency_hz(bin), bin))
        .filter(|&(hz, _)| (STORED_LOW_HZ..=STORED_HIGH_HZ).contains(&hz))
        .map(|(hz, bin)| (hz as f32, power_to_db(spectrum.power[bin]) as f32))
        .unzip();
    if frequencies.len() < 2 {
        return None;
    }
    let points = STORED_POINTS.min(frequencies.len());
    StoredSpectrum::resample_log(&frequencies, &levels, points).ok()
}

impl PassInput {
    /// A pass measured now from the analysis engine's result and the mass
    /// the maker weighed; add thickness, air and note as needed.
    pub fn from_analysis(mass_g: f64, result: &PassResult) -> Self {
        let mut input = PassInput::new(mass_g, modes_from_analysis(result));
        input.spectrum = result.spectrum.as_ref().and_then(spectrum_from_analysis);
        input
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::PassMode;

    #[test]
    fn a_pass_result_becomes_modes_and_a_stored_spectrum() {
        // 0.5 Hz bins up to 8 kHz, a floor at -80 dB and one peak at 350 Hz.
        let mut power = vec![1e-8f32; 16_001];
        power[700] = 1e-2;
        let display = DisplaySpectrum { bin_hz: 0.5, power };
        let result = PassResult {
            modes: vec![PassMode {
                frequency_hz: 350.2,
                q: 55.0,
                level_db: -20.0,
                prominence_db: 30.0,
                spread_hz: 0.4,
                q_spread: 2.0,
                taps_seen: 4,
            }],
            spectrum: Some(display),
            taps_used: 4,
        };
        let input = PassInput::from_analysis(72.5, &result);
        assert_eq!(input.mass_g, 72.5);
        assert_eq!(
            input.modes,
            [MeasuredMode {
                frequency_hz: 350.2,
                q: 55.0,
                level_db: -20.0,
                spread_hz: 0.4
            }]
        );
        let stored = input.spectrum.unwrap();
        assert_eq!(stored.len(), STORED_POINTS);
        assert!((f64::from(stored.low_hz()) - STORED_LOW_HZ).abs() < 0.5);
        assert!((f64::from(stored.high_hz()) - STORED_HIGH_HZ).abs() < 0.5);
        let (peak_hz, peak_db) =
            stored
                .points()
                .fold((0.0, f32::MIN), |a, p| if p.1 > a.1 { p } else { a });
        assert_eq!(peak_db, -20.0);
        assert!((peak_hz / 350.0 - 1.0).abs() < 0.005, "{peak_hz}");
    }

    #[test]
    fn a_result_without_spectrum_keeps_none() {
        let result = PassResult {
            modes: Vec::new(),
            spectrum: None,
            taps_used: 0,
        };
        assert!(PassInput::from_analysis(10.0, &result).spectrum.is_none());
        let tiny = DisplaySpectrum {
            bin_hz: 4000.0,
            power: vec![1.0; 3],
        };
        assert!(spectrum_from_analysis(&tiny).is_none());
    }
}
