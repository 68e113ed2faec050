//! The modes of a roving-tap pass: every accepted tap at every point is
//! measured on its own (the library's per-tap analysis), and the modes are
//! gathered across all taps by frequency. Unlike a pass tapped at one
//! point, a mode here need not show in most taps: it vanishes at the points
//! on its nodal lines. So a mode is kept when it shows at a fair share of
//! the points, and its frequency and Q are the medians over the taps that
//! show it most strongly.

use crate::analysis::aggregate::median;
use crate::analysis::TapAnalysis;

/// Two taps' estimates of one mode differ by less than this (relative):
/// a little wider than the spread of one mode across taps, narrower than
/// the spacing of a plate's distinct low modes.
const SAME_MODE_RELATIVE: f64 = 0.005;

/// One mode of the pass, as the fixed pole of the amplitude fits.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct PassPole {
    pub frequency_hz: f64,
    pub q: f64,
    /// Amplitude decay rate, 1/s (πf/Q).
    pub decay_per_s: f64,
    /// Points at which some tap's analysis listed the mode.
    pub points_seen: usize,
}

/// One mode of one tap, with where it was tapped.
#[derive(Clone, Copy, Debug)]
struct Sighting {
    point: usize,
    tap: usize,
    frequency_hz: f64,
    q: f64,
    amplitude: f64,
}

/// The pass's modes from the per-tap analyses of every point
/// (`per_point[p]` holds point p's taps): modes seen at no fewer than
/// `min_points` points, the `max_modes` most widely seen (then loudest)
/// kept, lowest first.
pub(crate) fn pass_poles(
    per_point: &[Vec<TapAnalysis>],
    min_points: usize,
    max_modes: usize,
) -> Vec<PassPole> {
    let mut sightings: Vec<Sighting> = Vec::new();
    let mut tap_number = 0;
    for (point, taps) in per_point.iter().enumerate() {
        for tap in taps {
            sightings.extend(tap.modes.iter().map(|m| Sighting {
                point,
                tap: tap_number,
                frequency_hz: m.frequency_hz,
                q: m.q,
                amplitude: m.amplitude,
            }));
            tap_number += 1;
        }
    }
    sightings.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
    let mut poles: Vec<(PassPole, f64)> = clusters(&sightings)
        .into_iter()
        .filter_map(|cluster| combine(&cluster))
        .filter(|(pole, _)| pole.points_seen >= min_points.max(2))
        .collect();
    poles.sort_by(|a, b| {
        b.0.points_seen
            .cmp(&a.0.points_seen)
            .then(b.1.total_cmp(&a.1))
    });
    poles.truncate(max_modes);
    let mut poles: Vec<PassPole> = poles.into_iter().map(|(pole, _)| pole).collect();
    poles.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
    poles
}

/// Splits frequency-sorted sightings where neighbours differ by more than
/// [`SAME_MODE_RELATIVE`].
fn clusters(sorted: &[Sighting]) -> Vec<Vec<Sighting>> {
    let mut out: Vec<Vec<Sighting>> = Vec::new();
    for s in sorted {
        let joins = out.last().and_then(|c| c.last()).is_some_and(|prev| {
            s.frequency_hz - prev.frequency_hz <= SAME_MODE_RELATIVE * s.frequency_hz
        });
        match out.last_mut() {
            Some(cluster) if joins => cluster.push(*s),
            _ => out.push(vec![*s]),
        }
    }
    out
}

/// A cluster's pole: one sighting per tap (the loudest), then the medians
/// of frequency and Q over the louder half of them (weak sightings, near
/// a nodal line, are the least certain). Returns the pole and its median
/// amplitude.
fn combine(cluster: &[Sighting]) -> Option<(PassPole, f64)> {
    let mut per_tap: Vec<Sighting> = Vec::new();
    for s in cluster {
        match per_tap.iter_mut().find(|p| p.tap == s.tap) {
            Some(existing) if existing.amplitude >= s.amplitude => {}
            Some(existing) => *existing = *s,
            None => per_tap.push(*s),
        }
    }
    if per_tap.is_empty() {
        return None;
    }
    let mut points: Vec<usize> = per_tap.iter().map(|s| s.point).collect();
    points.sort_unstable();
    points.dedup();
    per_tap.sort_by(|a, b| b.amplitude.total_cmp(&a.amplitude));
    let louder = &per_tap[..per_tap.len().div_ceil(2)];
    let frequency_hz = median(&louder.iter().map(|s| s.frequency_hz).collect::<Vec<_>>());
    let q = median(&louder.iter().map(|s| s.q).collect::<Vec<_>>());
    let amplitude = median(&per_tap.iter().map(|s| s.amplitude).collect::<Vec<_>>());
    Some((
        PassPole {
            frequency_hz,
            q,
            decay_per_s: std::f64::consts::PI * frequency_hz / q,
            points_seen: points.len(),
        },
        amplitude,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{DisplaySpectrum, Mode};

    fn tap(modes: &[(f64, f64)]) -> TapAnalysis {
        TapAnalysis {
            modes: modes
                .iter()
                .map(|&(frequency_hz, amplitude)| Mode {
                    frequency_hz,
                    q: 50.0,
                    decay_per_s: std::f64::consts::PI * frequency_hz / 50.0,
                    amplitude,
                    level_db: 20.0 * amplitude.log10(),
                    prominence_db: 20.0,
                })
                .collect(),
            spectrum: DisplaySpectrum {
                bin_hz: 1.0,
                power: vec![0.0; 4],
            },
            sample_rate_hz: 24_000.0,
        }
    }

    #[test]
    fn a_mode_missing_at_its_nodal_points_is_kept_and_one_off_peaks_are_not() {
        // 100 Hz everywhere; 250 Hz at three of five points (nodal at two);
        // a one-off 400 Hz peak in one tap.
        let per_point = vec![
            vec![
                tap(&[(100.0, 0.1), (250.2, 0.05)]),
                tap(&[(100.1, 0.1), (250.0, 0.05)]),
            ],
            vec![tap(&[(99.9, 0.1)]), tap(&[(100.0, 0.1), (400.0, 0.01)])],
            vec![tap(&[(100.0, 0.1), (249.9, 0.02)])],
            vec![tap(&[(100.05, 0.1)])],
            vec![tap(&[(100.0, 0.1), (250.1, 0.04)])],
        ];
        let poles = pass_poles(&per_point, 2, 8);
        assert_eq!(poles.len(), 2, "{poles:?}");
        assert!((poles[0].frequency_hz - 100.0).abs() < 0.06);
        assert_eq!(poles[0].points_seen, 5);
        assert!((poles[1].frequency_hz - 250.05).abs() < 0.11);
        assert_eq!(poles[1].points_seen, 3);
        assert!(
            (poles[1].decay_per_s - std::f64::consts::PI * poles[1].frequency_hz / 50.0).abs()
                < 1e-9
        );
        // Asking for three points drops nothing; for four drops 250 Hz.
        assert_eq!(pass_poles(&per_point, 4, 8).len(), 1);
        // The widest seen are kept first.
        assert_eq!(pass_poles(&per_point, 2, 1)[0].points_seen, 5);
    }
}
