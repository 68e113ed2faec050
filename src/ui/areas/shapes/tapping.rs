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
            complete_unmapped: false,
        })
    }

    fn point_name(&self, index: usize) -> &str {
        self.survey
            .points()
            .get(index)
            .map_or("?", |p| p.name.as_str())
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
            self.tell(
                format!("A tap at {name} came without its sound and was not counted."),
                true,
            );
            return;
        };
        record.rejected = tap.rejected;
        match self.sample_rate_hz {
            Some(rate) if rate != tap.sample_rate_hz => {
                self.tell(
                    format!(
                        "A tap at {name} came at {} Hz, the grid's first taps at {rate} Hz; it was not counted (start the grid again after changing the input).",
                        tap.sample_rate_hz
                    ),
                    true,
                );
                return;
            }
            _ => self.sample_rate_hz = Some(tap.sample_rate_hz),
        }
        let wanted = self.survey.taps_wanted();
        match self.survey.add_tap(record) {
            TapOutcome::Rejected(reason) => self.tell(
                format!(
                    "A tap at {name} was left out: {reason} ({}). Tap {name} again.",
                    reason.advice()
                ),
                true,
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
            Marker {
                x_mm: p.x_mm,
                y_mm: p.y_mm,
                kind: MarkerKind::Survey {
                    taps,
                    wanted,
                    current: i == current,
                },
                name: p.name.clone(),
                hover: format!(
                    "{}: {taps} of {wanted} good taps (across {}, along {}); click to tap it next",
                    p.name,
                    unit.size_text(p.x_mm),
                    unit.size_text(p.y_mm)
                ),
            }
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
