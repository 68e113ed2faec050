//! Tapping a grid live: the session (`shapes::Survey`) fed by the same
//! capture worker and trigger as Listen, the point to tap next, what became
//! of each tap (a refused one with its reason, not counted), and the
//! controls to tap any point again or clear it.
//!
//! While the grid listens, the shell hands every tap here instead of to
//! Listen's pass ([`Tapping::take_tap`]).

use std::collections::VecDeque;

use eframe::egui;

use crate::analysis::Tap;
use crate::shapes::{Outline, Survey, TapOutcome, TapPoint};
use crate::text::LengthUnit;
use crate::ui::widgets::plate_view::{Marker, MarkerKind, Palette, PlateView};

/// Lines of tap news kept on screen.
const NEWS_LINES: usize = 4;

/// A grid being tapped.
#[derive(Debug)]
pub struct Tapping {
    pub survey: Survey,
    pub outline: Outline,
    /// True while taps from the input go to the grid.
    pub listening: bool,
    /// The input's rate, from the first tap.
    pub sample_rate_hz: Option<u32>,
    /// What became of the latest taps, newest first.
    pub news: VecDeque<News>,
    /// Every tap refused so far: the point and why.
    pub refused: Vec<(String, String)>,
    /// Every point has its taps: the map should be worked out.
    pub complete_unmapped: bool,
}

/// One line of tap news.
#[derive(Clone, Debug, PartialEq)]
pub struct News {
    pub text: String,
    pub refused: bool,
}

impl Tapping {
    /// A new session over `points`.
    pub fn new(
        outline: Outline,
        points: Vec<TapPoint>,
        taps_per_point: usize,
    ) -> Result<Self, String> {
        let survey = Survey::new(points, taps_per_point)
            .map_err(|e| crate::text::sentence(&e.to_string()))?;
        Ok(Self {
            survey,
            outline,
            listening: true,
            sample_rate_hz: None,
            news: VecDeque::new(),
            refused: Vec::new(),
            complete_unmapped: false,
        })
    }

    fn point_name(&self, index: usize) -> &str {
        self.survey
            .points()
            .get(index)
            .map_or("?", |p| p.name.as_str())
    }

    fn refuse(&mut self, point: &str, why: &str, text: String) {
        self.refused.push((point.to_owned(), why.to_owned()));
        self.tell(text, true);
    }

    fn tell(&mut self, text: String, refused: bool) {
        self.news.push_front(News { text, refused });
        self.news.truncate(NEWS_LINES);
    }

    /// A tap from the input, at the point to tap now. A tap the trigger
    /// refused is reported with its reason and not counted; so is a tap at
    /// another sample rate than the first.
    pub fn take_tap(&mut self, tap: Tap) {
        let here = self.survey.current();
        let name = self.point_name(here).to_owned();
        let Some(mut record) = tap.record else {
            self.refuse(
                &name,
                "no sound kept",
                format!("A tap at {name} came without its sound and was not counted."),
            );
            return;
        };
        record.rejected = tap.rejected;
        match self.sample_rate_hz {
            Some(rate) if rate != tap.sample_rate_hz => {
                self.refuse(
                    &name,
                    "another sample rate",
                    format!(
                        "A tap at {name} came at {} Hz, the grid's first taps at {rate} Hz; it was not counted (start the grid again after changing the input).",
                        tap.sample_rate_hz
                    ),
                );
                return;
            }
            _ => self.sample_rate_hz = Some(tap.sample_rate_hz),
        }
        let wanted = self.survey.taps_wanted();
        match self.survey.add_tap(record) {
            TapOutcome::Rejected(reason) => self.refuse(
                &name,
                reason.short_text(),
                format!(
                    "A tap at {name} was left out: {reason} ({}). Tap {name} again.",
                    reason.advice()
                ),
            ),
            TapOutcome::Kept { point } => {
                let count = self.survey.taps_at(point).len();
                self.tell(format!("Tap {count} of {wanted} at {name} kept."), false);
            }
            TapOutcome::MovedOn { next, .. } => {
                let next = self.point_name(next).to_owned();
                self.tell(format!("{name} is done; now tap {next}."), false);
            }
            TapOutcome::Complete => {
                self.tell(
                    format!("{name} is done, and with it every point: working out the shapes."),
                    false,
                );
                self.listening = false;
                self.complete_unmapped = true;
            }
        }
    }

    /// "31 of 45 points".
    pub fn progress_text(&self) -> String {
        let (done, all) = self.survey.progress();
        format!("{done} of {all} points")
    }

    /// "Not counted so far: 2A (clipped), 3C (double strike)", or None.
    pub fn refused_text(&self) -> Option<String> {
        if self.refused.is_empty() {
            return None;
        }
        let list: Vec<String> = self
            .refused
            .iter()
            .map(|(point, why)| format!("{point} ({why})"))
            .collect();
        Some(format!("Not counted so far: {}", list.join(", ")))
    }
}

/// The grid drawn with its points: done, begun, not yet, and the one to
/// tap now; a click on a point makes it the one to tap.
pub fn grid_drawing(
    ui: &mut egui::Ui,
    tapping: &mut Tapping,
    unit: LengthUnit,
    max_size: egui::Vec2,
) {
    let wanted = tapping.survey.taps_wanted();
    let current = tapping.survey.current();
    let markers: Vec<Marker> = tapping
        .survey
        .points()
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let taps = tapping.survey.taps_at(i).len();
            let kind = MarkerKind::Survey {
                taps,
                wanted,
                current: i == current,
            };
            let hover = format!(
                "{}: {taps} of {wanted} good taps (across {}, along {}); click to tap it next",
                p.name,
                unit.size_text(p.x_mm),
                unit.size_text(p.y_mm)
            );
            Marker::at(p, kind, hover)
        })
        .collect();
    let view = PlateView {
        outline: &tapping.outline,
        field: None,
        lines: &[],
        markers: &markers,
        palette: Palette::Shape,
        description: format!("The grid being tapped: {}", tapping.progress_text()),
    };
    if let Some(index) = view.show(ui, max_size).clicked_marker {
        tapping.survey.select(index);
        tapping.listening = true;
    }
}

/// The point chooser and its buttons: tap a point again, clear it.
pub fn point_controls(ui: &mut egui::Ui, tapping: &mut Tapping) {
    let names: Vec<String> = tapping
        .survey
        .points()
        .iter()
        .map(|p| p.name.clone())
        .collect();
    let mut chosen = tapping.survey.current();
    let wanted = tapping.survey.taps_wanted();
    ui.horizontal_wrapped(|ui| {
        egui::ComboBox::from_label("Point")
            .selected_text(names.get(chosen).map_or("", String::as_str))
            .show_ui(ui, |ui| {
                for (i, name) in names.iter().enumerate() {
                    let taps = tapping.survey.taps_at(i).len();
                    ui.selectable_value(&mut chosen, i, format!("{name} ({taps} of {wanted})"));
                }
            });
        if chosen != tapping.survey.current() {
            tapping.survey.select(chosen);
            tapping.listening = true;
        }
        if ui
            .button("Clear this point")
            .on_hover_text("Forget the taps kept at this point and tap it again")
            .clicked()
        {
            let name = names.get(chosen).cloned().unwrap_or_default();
            tapping.survey.clear_point(chosen);
            tapping.listening = true;
            tapping.tell(format!("Cleared {name}; tap it again."), false);
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::{FoundTap, RejectReason};
    use crate::shapes::OutlineShape;

    fn tap(rejected: Option<RejectReason>, sample_rate_hz: u32) -> Tap {
        Tap {
            index: 1,
            onset_s: 0.0,
            peak_dbfs: -20.0,
            sample_rate_hz,
            rejected,
            analysis: None,
            record: Some(FoundTap {
                start_sample: 0,
                onset_index: 0,
                samples: vec![0.0; 8],
                peak_dbfs: -20.0,
                floor_dbfs: -70.0,
                rejected,
            }),
        }
    }

    #[test]
    fn refused_taps_are_told_and_not_counted_and_the_last_point_ends_the_grid() {
        let outline = Outline::new(OutlineShape::Rectangle {
            length_mm: 300.0,
            width_mm: 200.0,
        })
        .expect("test value");
        let points = crate::shapes::tap_grid(&outline, 2, 1).expect("test value");
        let mut tapping = Tapping::new(outline, points, 2).expect("test value");
        tapping.take_tap(tap(Some(RejectReason::DoubleStrike), 48_000));
        assert_eq!(tapping.survey.taps_at(0).len(), 0);
        assert!(tapping.news[0].refused && tapping.news[0].text.contains("double strike"));
        tapping.take_tap(tap(None, 48_000));
        // Another rate than the first good tap's is refused.
        tapping.take_tap(tap(None, 44_100));
        assert_eq!(tapping.survey.taps_at(0).len(), 1);
        assert_eq!(
            tapping.refused_text().as_deref(),
            Some("Not counted so far: 1A (double strike), 1A (another sample rate)")
        );
        tapping.take_tap(tap(None, 48_000));
        assert_eq!(tapping.survey.current(), 1);
        assert_eq!(tapping.news[0].text, "1A is done; now tap 1B.");
        tapping.take_tap(tap(None, 48_000));
        tapping.take_tap(tap(None, 48_000));
        assert!(tapping.complete_unmapped && !tapping.listening);
        assert_eq!(tapping.progress_text(), "2 of 2 points");
    }
}
