//! The spectrum plot: the pass's power-averaged spectrum on a logarithmic
//! frequency axis in dB, the latest tap faintly behind it, and a marker with
//! frequency and label on each mode. The plot's x coordinate is log10 of the
//! frequency; the axis marks are written back in Hz.

use eframe::egui::{self, Color32};
use egui_plot::{GridInput, GridMark, Line, MarkerShape, Plot, PlotPoint, Points, Text};

use crate::analysis::pitch::nearest_note;
use crate::analysis::{DisplaySpectrum, PassResult};

/// Points drawn per curve (log-spaced, each the loudest bin of its stretch).
const CURVE_POINTS: usize = 900;
/// dB shown below the loudest point when the view is reset.
const RANGE_DB: f64 = 80.0;

/// The curves of one state of the pass, kept between frames.
#[derive(Debug)]
pub struct Curves {
    /// What they were made from: session generation and band.
    pub key: (u64, u64, u64),
    /// The averaged spectrum, (log10 Hz, dB).
    pub average: Vec<[f64; 2]>,
    /// The latest tap, (log10 Hz, dB).
    pub latest: Vec<[f64; 2]>,
    /// Top of the default view, dB.
    pub top_db: f64,
}

impl Curves {
    /// Makes the curves of a pass over a band.
    pub fn new(
        key: (u64, u64, u64),
        pass: Option<&PassResult>,
        latest: Option<&DisplaySpectrum>,
        band_hz: (f64, f64),
    ) -> Self {
        let (low_hz, high_hz) = band_hz;
        let curve = |s: &DisplaySpectrum| -> Vec<[f64; 2]> {
            s.log_spaced_db(low_hz, high_hz, CURVE_POINTS)
                .into_iter()
                .map(|(f, db)| [f.log10(), db])
                .collect()
        };
        let average = pass
            .and_then(|p| p.spectrum.as_ref())
            .map(curve)
            .unwrap_or_default();
        let latest = latest.map(curve).unwrap_or_default();
        let top_db = average
            .iter()
            .chain(&latest)
            .map(|p| p[1])
            .fold(f64::NEG_INFINITY, f64::max);
        let top_db = if top_db.is_finite() {
            (top_db / 10.0).ceil() * 10.0 + 5.0
        } else {
            0.0
        };
        Self {
            key,
            average,
            latest,
            top_db,
        }
    }
}

/// What the plot shows.
pub struct PlotInput<'a> {
    /// The pass (averaged spectrum and modes).
    pub pass: Option<&'a PassResult>,
    /// Its curves.
    pub curves: &'a Curves,
    /// Labels beside the pass's modes.
    pub labels: &'a [Option<String>],
    /// The analysis band (low, high), Hz: the default view.
    pub band_hz: (f64, f64),
    /// Reference pitch.
    pub a4_hz: f64,
    /// Height of the plot, points.
    pub height: f32,
    /// Reset zoom and pan.
    pub reset: bool,
}

/// Where the pointer is in the plot.
#[derive(Clone, Debug, PartialEq)]
pub struct CursorReadout {
    /// Frequency under the pointer, Hz.
    pub frequency_hz: f64,
    /// Averaged level there, dB (None without a pass).
    pub level_db: Option<f64>,
    /// Nearest note and cents.
    pub note: Option<(String, f64)>,
}

impl CursorReadout {
    /// "Cursor 338.2 Hz · E4 +12 ct · −41.0 dB".
    pub fn text(&self) -> String {
        let mut text = format!("Cursor {:.1} Hz", self.frequency_hz);
        if let Some((note, cents)) = &self.note {
            text.push_str(&format!(" · {note} {cents:+.0} ct"));
        }
        if let Some(level) = self.level_db {
            text.push_str(&format!(" · {level:.1} dB"));
        }
        text.replace('-', "\u{2212}")
    }
}

/// Draws the plot; returns the cursor readout while the pointer is over it.
pub fn show(ui: &mut egui::Ui, input: &PlotInput) -> Option<CursorReadout> {
    let (low_hz, high_hz) = input.band_hz;
    let top_db = input.curves.top_db;

    let dark = ui.visuals().dark_mode;
    let main_colour = if dark {
        Color32::from_rgb(110, 190, 255)
    } else {
        Color32::from_rgb(20, 90, 170)
    };
    let faint_colour = if dark {
        Color32::from_rgba_unmultiplied(200, 200, 200, 70)
    } else {
        Color32::from_rgba_unmultiplied(60, 60, 60, 70)
    };
    let marker_colour = if dark {
        Color32::from_rgb(255, 190, 80)
    } else {
        Color32::from_rgb(190, 100, 0)
    };

    let mut plot = Plot::new("spectrum")
        .height(input.height)
        .default_x_bounds(low_hz.log10(), high_hz.log10())
        .default_y_bounds(top_db - RANGE_DB, top_db)
        .x_grid_spacer(log_frequency_marks)
        .x_axis_formatter(|mark, _range| frequency_label(10f64.powf(mark.value)))
        .y_axis_formatter(|mark, _range| format!("{:.0}", mark.value))
        .x_axis_label("Frequency (Hz)")
        .y_axis_label("Level (dB)")
        .label_formatter(|_| None)
        .allow_boxed_zoom(true)
        .show_crosshair(true);
    if input.reset {
        plot = plot.reset();
    }
    let markers: Vec<(f64, f64, String)> = input
        .pass
        .map(|pass| {
            pass.modes
                .iter()
                .enumerate()
                .map(|(i, m)| {
                    let level = pass
                        .spectrum
                        .as_ref()
                        .map_or(m.level_db, |s| peak_near(s, m.frequency_hz));
                    let mut text = format!("{:.1}", m.frequency_hz);
                    if let Some(Some(label)) = input.labels.get(i) {
                        text = format!("{label}\n{text}");
                    }
                    (m.frequency_hz, level, text)
                })
                .collect()
        })
        .unwrap_or_default();

    let response = plot.show(ui, |plot_ui| {
        if !input.curves.latest.is_empty() {
            let points = input.curves.latest.clone();
            plot_ui.line(
                Line::new("latest tap", points)
                    .color(faint_colour)
                    .width(1.0)
                    .allow_hover(false),
            );
        }
        if !input.curves.average.is_empty() {
            let points = input.curves.average.clone();
            plot_ui.line(
                Line::new("pass average", points)
                    .color(main_colour)
                    .width(1.6)
                    .allow_hover(false),
            );
        }
        for (frequency_hz, level_db, text) in &markers {
            let x = frequency_hz.log10();
            plot_ui.points(
                Points::new(format!("mode {text}"), vec![[x, *level_db]])
                    .shape(MarkerShape::Down)
                    .radius(5.0)
                    .filled(true)
                    .color(marker_colour)
                    .allow_hover(false),
            );
            plot_ui.text(
                Text::new(
                    format!("mode label {text}"),
                    PlotPoint::new(x, level_db + 2.5),
                    text.as_str(),
                )
                .color(marker_colour)
                .anchor(egui::Align2::CENTER_BOTTOM)
                .allow_hover(false),
            );
        }
        plot_ui.pointer_coordinate()
    });
    let pointer = response.inner?;
    if !response.response.hovered() {
        return None;
    }
    let frequency_hz = 10f64.powf(pointer.x);
    if !frequency_hz.is_finite() {
        return None;
    }
    let level_db = input
        .pass
        .and_then(|p| p.spectrum.as_ref())
        .map(|s| s.level_db_at_hz(frequency_hz));
    Some(CursorReadout {
        frequency_hz,
        level_db,
        note: nearest_note(frequency_hz, input.a4_hz).map(|p| (p.note, p.cents)),
    })
}

/// The loudest bin within ±1 % of a frequency (where the curve's peak is).
fn peak_near(spectrum: &DisplaySpectrum, frequency_hz: f64) -> f64 {
    let low = spectrum.bin_of_hz(frequency_hz * 0.99);
    let high = spectrum.bin_of_hz(frequency_hz * 1.01);
    (low..=high)
        .map(|i| spectrum.level_db(i))
        .fold(f64::NEG_INFINITY, f64::max)
}

/// Grid marks at 1, 2, 5 × 10ⁿ Hz (strong at decades), and at every
/// integer multiple when zoomed in far.
pub(crate) fn log_frequency_marks(input: GridInput) -> Vec<GridMark> {
    let (min, max) = input.bounds;
    if !(min.is_finite() && max.is_finite()) || max <= min {
        return Vec::new();
    }
    let span_decades = max - min;
    let steps: &[f64] = if span_decades > 1.2 {
        &[1.0, 2.0, 5.0]
    } else if span_decades > 0.4 {
        &[1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]
    } else {
        &[
            1.0, 1.1, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2.0, 2.5, 3.0, 3.5, 4.0, 4.5, 5.0,
            6.0, 7.0, 8.0, 9.0,
        ]
    };
    let mut marks = Vec::new();
    let first_decade = min.floor() as i32 - 1;
    let last_decade = max.ceil() as i32;
    for decade in first_decade..=last_decade {
        for (k, step) in steps.iter().enumerate() {
            let value = (step * 10f64.powi(decade)).log10();
            if value < min || value > max {
                continue;
            }
            // Thicker lines for decades; the step size only ranks them.
            let step_size = if k == 0 { 1.0 } else { 0.1 };
            marks.push(GridMark { value, step_size });
        }
    }
    marks
}

/// "50", "200", "1k", "2.5k".
pub(crate) fn frequency_label(frequency_hz: f64) -> String {
    if frequency_hz >= 1000.0 {
        let k = frequency_hz / 1000.0;
        if (k - k.round()).abs() < 1e-6 {
            format!("{k:.0}k")
        } else {
            format!("{k:.1}k")
        }
    } else {
        format!("{frequency_hz:.0}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frequency_labels_read_naturally() {
        assert_eq!(frequency_label(50.0), "50");
        assert_eq!(frequency_label(1000.0), "1k");
        assert_eq!(frequency_label(2500.0), "2.5k");
    }

    #[test]
    fn wide_views_get_one_two_five_marks() {
        let marks = log_frequency_marks(GridInput {
            bounds: (40f64.log10(), 4000f64.log10()),
            base_step_size: 0.01,
        });
        let hz: Vec<f64> = marks.iter().map(|m| 10f64.powf(m.value).round()).collect();
        assert!(hz.contains(&50.0) && hz.contains(&100.0) && hz.contains(&2000.0));
        assert!(!hz.contains(&30.0));
    }
}
