//! Combining the accepted taps of a pass: each mode's median frequency and
//! Q with their spread across taps, and the power-averaged display spectrum.

use serde::{Deserialize, Serialize};

use super::modal::{Mode, TapAnalysis};
use super::spectrum::DisplaySpectrum;

/// One mode of a pass, combined over the taps that showed it. Its fields,
/// in this order, are written by `analyze --json`, `listen --json` and the
/// window's pass export (`text::pass_json`; README.md, "Machine-readable
/// output").
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PassMode {
    /// Median over taps.
    pub frequency_hz: f64,
    /// Median over taps.
    pub q: f64,
    /// Median over taps, dB full scale.
    pub level_db: f64,
    /// Median over taps.
    pub prominence_db: f64,
    /// Half the range of the frequency over taps (0 for one tap).
    pub spread_hz: f64,
    /// Half the range of Q over taps.
    pub q_spread: f64,
    /// How many taps showed the mode.
    pub taps_seen: usize,
}

/// A pass: the combined modes and the averaged spectrum.
#[derive(Clone, Debug, PartialEq)]
pub struct PassResult {
    /// Sorted by frequency.
    pub modes: Vec<PassMode>,
    /// Power average of the taps' display spectra.
    pub spectrum: Option<DisplaySpectrum>,
    /// Taps combined.
    pub taps_used: usize,
}

/// Two taps' estimates of one mode differ by less than this (relative):
/// about 7 cents, far more than a held plate drifts between taps and far
/// less than the spacing of distinct low modes.
const SAME_MODE_RELATIVE: f64 = 0.004;

/// Combines taps into a pass. A mode is kept when most of the taps (more
/// than half) showed it: a resonance of the plate rings in every tap, while
/// what the strike or the room left in one tap's fit does not come back;
/// `max_modes` keeps the loudest.
pub fn aggregate_taps<'a>(
    taps: impl IntoIterator<Item = &'a TapAnalysis>,
    max_modes: usize,
) -> PassResult {
    let taps: Vec<&TapAnalysis> = taps.into_iter().collect();
    let spectrum = DisplaySpectrum::power_average(taps.iter().map(|t| &t.spectrum));
    let mut all: Vec<(usize, &Mode)> = taps
        .iter()
        .enumerate()
        .flat_map(|(i, t)| t.modes.iter().map(move |m| (i, m)))
        .collect();
    all.sort_by(|a, b| a.1.frequency_hz.total_cmp(&b.1.frequency_hz));
    let needed = taps.len() / 2 + 1;
    let mut modes: Vec<PassMode> = cluster_by_frequency(&all)
        .into_iter()
        .filter_map(|cluster| combine(&cluster))
        .filter(|m| m.taps_seen >= needed)
        .collect();
    modes.sort_by(|a, b| b.level_db.total_cmp(&a.level_db));
    modes.truncate(max_modes);
    modes.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
    PassResult {
        modes,
        spectrum,
        taps_used: taps.len(),
    }
}

/// Splits frequency-sorted (tap, mode) pairs where consecutive modes differ
/// by more than `SAME_MODE_RELATIVE`.
fn cluster_by_frequency<'a>(sorted: &[(usize, &'a Mode)]) -> Vec<Vec<(usize, &'a Mode)>> {
    let mut clusters: Vec<Vec<(usize, &Mode)>> = Vec::new();
    for &(tap, mode) in sorted {
        let joins = clusters
            .last()
            .and_then(|c| c.last())
            .is_some_and(|(_, prev)| {
                mode.frequency_hz - prev.frequency_hz <= SAME_MODE_RELATIVE * mode.frequency_hz
            });
        match clusters.last_mut() {
            Some(cluster) if joins => cluster.push((tap, mode)),
            _ => clusters.push(vec![(tap, mode)]),
        }
    }
    clusters
}

/// Median and half-range of a cluster, one estimate per tap (the loudest, if
/// a tap gave two).
fn combine(cluster: &[(usize, &Mode)]) -> Option<PassMode> {
    let mut per_tap: Vec<&Mode> = Vec::new();
    let mut taps: Vec<usize> = cluster.iter().map(|(t, _)| *t).collect();
    taps.sort_unstable();
    taps.dedup();
    for tap in &taps {
        let loudest = cluster
            .iter()
            .filter(|(t, _)| t == tap)
            .map(|(_, m)| *m)
            .max_by(|a, b| a.amplitude.total_cmp(&b.amplitude))?;
        per_tap.push(loudest);
    }
    let pick = |f: fn(&Mode) -> f64| -> Vec<f64> { per_tap.iter().map(|m| f(m)).collect() };
    let frequencies = pick(|m| m.frequency_hz);
    let qs = pick(|m| m.q);
    Some(PassMode {
        frequency_hz: median(&frequencies),
        q: median(&qs),
        level_db: median(&pick(|m| m.level_db)),
        prominence_db: median(&pick(|m| m.prominence_db)),
        spread_hz: half_range(&frequencies),
        q_spread: half_range(&qs),
        taps_seen: per_tap.len(),
    })
}

/// Median of a non-empty list (mean of the middle two for even lengths).
pub fn median(values: &[f64]) -> f64 {
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    match n {
        0 => f64::NAN,
        _ if n % 2 == 1 => sorted[n / 2],
        _ => 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]),
    }
}

fn half_range(values: &[f64]) -> f64 {
    let max = values.iter().copied().fold(f64::MIN, f64::max);
    let min = values.iter().copied().fold(f64::MAX, f64::min);
    if values.is_empty() {
        0.0
    } else {
        0.5 * (max - min)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mode(frequency_hz: f64, q: f64, level_db: f64) -> Mode {
        Mode {
            frequency_hz,
            q,
            decay_per_s: std::f64::consts::PI * frequency_hz / q,
            amplitude: 10f64.powf(level_db / 20.0),
            level_db,
            prominence_db: 20.0,
        }
    }

    fn tap(modes: Vec<Mode>) -> TapAnalysis {
        TapAnalysis {
            modes,
            spectrum: DisplaySpectrum {
                bin_hz: 1.0,
                power: vec![1.0; 16],
            },
            sample_rate_hz: 48_000.0,
        }
    }

    #[test]
    fn medians_and_spread() {
        let taps = [
            tap(vec![mode(170.0, 40.0, -20.0), mode(345.0, 60.0, -10.0)]),
            tap(vec![
                mode(170.4, 42.0, -21.0),
                mode(345.6, 58.0, -11.0),
                mode(900.0, 30.0, -50.0),
            ]),
            tap(vec![mode(169.8, 41.0, -19.0), mode(344.7, 61.0, -12.0)]),
        ];
        let pass = aggregate_taps(&taps, 16);
        assert_eq!(pass.taps_used, 3);
        assert_eq!(pass.modes.len(), 2, "{:?}", pass.modes); // 900 Hz seen once of three
        assert!((pass.modes[0].frequency_hz - 170.0).abs() < 1e-9);
        assert!((pass.modes[0].spread_hz - 0.3).abs() < 1e-9);
        assert!((pass.modes[1].q - 60.0).abs() < 1e-9);
        assert_eq!(pass.modes[1].taps_seen, 3);
    }

    #[test]
    fn median_of_even_list() {
        assert_eq!(median(&[1.0, 4.0, 2.0, 3.0]), 2.5);
    }
}
