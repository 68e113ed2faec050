//! A roving-tap session in progress, for the window: the point to tap
//! next, the good taps kept at each point (2 to 4), any point tapped again
//! at will, and progress. Pure state: the window feeds it the trigger's
//! taps and draws what it says.

use super::estimate::PointTaps;
use super::grid::TapPoint;
use crate::analysis::{FoundTap, RejectReason};

/// Fewest and most good taps a point may be asked for.
pub const TAPS_PER_POINT: std::ops::RangeInclusive<usize> = 2..=4;

/// Why a session cannot start.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SurveyError {
    /// Fewer than two points.
    #[error("a roving-tap session needs at least two tap points, not {0}")]
    TooFewPoints(usize),
    /// A tap count outside 2 to 4.
    #[error("{0} taps per point is outside 2 to 4")]
    TapsPerPoint(usize),
}

/// What became of a tap given to the session.
#[derive(Clone, Debug, PartialEq)]
pub enum TapOutcome {
    /// Left out by the trigger's rules; the point stays.
    Rejected(RejectReason),
    /// Kept; the point wants more.
    Kept {
        /// The point.
        point: usize,
    },
    /// Kept, and the point has all it wants; the session moved on.
    MovedOn {
        /// The point just finished.
        finished: usize,
        /// The point to tap now.
        next: usize,
    },
    /// Kept, and every point has all it wants.
    Complete,
}

/// A session over a list of tap points (in visiting order).
#[derive(Clone, Debug, PartialEq)]
pub struct Survey {
    points: Vec<TapPoint>,
    taps: Vec<Vec<FoundTap>>,
    current: usize,
    taps_wanted: usize,
}

impl Survey {
    /// A new session: `taps_wanted` good taps (2 to 4) at each point.
    pub fn new(points: Vec<TapPoint>, taps_wanted: usize) -> Result<Self, SurveyError> {
        if points.len() < 2 {
            return Err(SurveyError::TooFewPoints(points.len()));
        }
        if !TAPS_PER_POINT.contains(&taps_wanted) {
            return Err(SurveyError::TapsPerPoint(taps_wanted));
        }
        let taps = vec![Vec::new(); points.len()];
        Ok(Self {
            points,
            taps,
            current: 0,
            taps_wanted,
        })
    }

    /// The points, in visiting order.
    pub fn points(&self) -> &[TapPoint] {
        &self.points
    }

    /// The point to tap now.
    pub fn current(&self) -> usize {
        self.current
    }

    /// The good taps kept at point `index` (empty for no such point).
    pub fn taps_at(&self, index: usize) -> &[FoundTap] {
        self.taps.get(index).map_or(&[], Vec::as_slice)
    }

    /// Good taps wanted at each point.
    pub fn taps_wanted(&self) -> usize {
        self.taps_wanted
    }

    /// Points that have all their taps, and all points.
    pub fn progress(&self) -> (usize, usize) {
        let done = self
            .taps
            .iter()
            .filter(|t| t.len() >= self.taps_wanted)
            .count();
        (done, self.points.len())
    }

    /// True when every point has all its taps.
    pub fn is_complete(&self) -> bool {
        self.progress().0 == self.points.len()
    }

    /// Taps point `index` next (again, if it is done: its next taps replace
    /// the oldest). Ignores an index past the end.
    pub fn select(&mut self, index: usize) {
        if index < self.points.len() {
            self.current = index;
        }
    }

    /// Forgets the taps at point `index` and makes it the one to tap.
    pub fn clear_point(&mut self, index: usize) {
        if let Some(taps) = self.taps.get_mut(index) {
            taps.clear();
            self.current = index;
        }
    }

    /// Gives the session a tap found by the trigger at the current point.
    pub fn add_tap(&mut self, tap: FoundTap) -> TapOutcome {
        if let Some(reason) = tap.rejected {
            return TapOutcome::Rejected(reason);
        }
        let point = self.current;
        let taps = &mut self.taps[point];
        if taps.len() >= self.taps_wanted {
            taps.remove(0);
        }
        taps.push(tap);
        if taps.len() < self.taps_wanted {
            return TapOutcome::Kept { point };
        }
        match self.next_unfinished(point) {
            Some(next) => {
                self.current = next;
                TapOutcome::MovedOn {
                    finished: point,
                    next,
                }
            }
            None => TapOutcome::Complete,
        }
    }

    /// The points and their taps for [`super::estimate_shapes`], once
    /// every point has at least one good tap.
    pub fn point_taps(&self) -> Option<Vec<PointTaps>> {
        if self.taps.iter().any(Vec::is_empty) {
            return None;
        }
        Some(
            self.points
                .iter()
                .zip(&self.taps)
                .map(|(point, taps)| PointTaps {
                    point: point.clone(),
                    taps: taps.clone(),
                })
                .collect(),
        )
    }

    /// The first point after `from` (in visiting order, wrapping) that
    /// still wants taps.
    fn next_unfinished(&self, from: usize) -> Option<usize> {
        let n = self.points.len();
        (1..=n)
            .map(|step| (from + step) % n)
            .find(|&i| self.taps[i].len() < self.taps_wanted)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tap(rejected: Option<RejectReason>, marker: u64) -> FoundTap {
        FoundTap {
            start_sample: marker,
            onset_index: 0,
            samples: vec![0.0; 4],
            peak_dbfs: -20.0,
            floor_dbfs: -70.0,
            rejected,
        }
    }

    fn points(n: usize) -> Vec<TapPoint> {
        (0..n)
            .map(|i| TapPoint::new(format!("P{i}"), 0.0, i as f64))
            .collect()
    }

    #[test]
    fn a_session_walks_the_points_and_lets_any_be_tapped_again() {
        assert_eq!(Survey::new(points(1), 2), Err(SurveyError::TooFewPoints(1)));
        assert_eq!(Survey::new(points(3), 5), Err(SurveyError::TapsPerPoint(5)));
        let mut survey = Survey::new(points(3), 2).unwrap();
        assert_eq!(
            survey.add_tap(tap(Some(RejectReason::Clipped), 1)),
            TapOutcome::Rejected(RejectReason::Clipped)
        );
        assert_eq!(survey.add_tap(tap(None, 2)), TapOutcome::Kept { point: 0 });
        assert_eq!(
            survey.add_tap(tap(None, 3)),
            TapOutcome::MovedOn {
                finished: 0,
                next: 1
            }
        );
        assert_eq!(survey.progress(), (1, 3));
        assert!(survey.point_taps().is_none());
        // Jump ahead to the last point, then back: the walk fills the gap.
        survey.select(2);
        survey.add_tap(tap(None, 4));
        assert_eq!(
            survey.add_tap(tap(None, 5)),
            TapOutcome::MovedOn {
                finished: 2,
                next: 1
            }
        );
        survey.add_tap(tap(None, 6));
        assert_eq!(survey.add_tap(tap(None, 7)), TapOutcome::Complete);
        assert!(survey.is_complete());
        // Tapping a finished point again replaces its oldest tap.
        survey.select(0);
        survey.add_tap(tap(None, 8));
        let kept: Vec<u64> = survey.taps_at(0).iter().map(|t| t.start_sample).collect();
        assert_eq!(kept, vec![3, 8]);
        // Clearing a point makes it the one to tap, and the map waits.
        survey.clear_point(1);
        assert_eq!(survey.current(), 1);
        assert!(survey.point_taps().is_none());
        survey.add_tap(tap(None, 9));
        let ready = survey.point_taps().unwrap();
        assert_eq!(ready.len(), 3);
        assert_eq!(ready[1].taps.len(), 1);
    }
}
