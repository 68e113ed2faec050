//! Small reusable pieces of the window.

use eframe::egui::{self, Color32, Rect, Sense, Stroke};

use crate::audio::InputLevel;

/// Lowest level the meter shows, dB full scale.
const METER_FLOOR_DBFS: f64 = -80.0;

/// The input level meter: an RMS bar with a peak tick, the noise floor as a
/// thin line, numbers underneath and a clip warning.
pub fn level_meter(ui: &mut egui::Ui, level: Option<&InputLevel>, clip_warning: bool) {
    let width = ui.available_width().min(300.0);
    let (rect, response) = ui.allocate_exact_size(egui::vec2(width, 16.0), Sense::hover());
    let text = match level {
        Some(l) => format!("RMS {:.1} dBFS · peak {:.1} dBFS", l.rms_dbfs, l.peak_dbfs)
            .replace('-', "\u{2212}"),
        None => "no input level".to_owned(),
    };
    response.widget_info(|| {
        egui::WidgetInfo::labeled(egui::Role::Meter, true, format!("Input level: {text}"))
    });
    let painter = ui.painter_at(rect);
    let visuals = ui.visuals();
    painter.rect_filled(rect, 3.0, visuals.extreme_bg_color);
    if let Some(level) = level {
        let x_of = |dbfs: f64| {
            let t = ((dbfs - METER_FLOOR_DBFS) / -METER_FLOOR_DBFS).clamp(0.0, 1.0) as f32;
            rect.left() + t * rect.width()
        };
        let rms_colour = if level.rms_dbfs > -6.0 {
            Color32::from_rgb(230, 160, 40)
        } else {
            Color32::from_rgb(60, 180, 90)
        };
        let bar = Rect::from_min_max(rect.min, egui::pos2(x_of(level.rms_dbfs), rect.max.y));
        painter.rect_filled(bar, 3.0, rms_colour);
        let peak_x = x_of(level.peak_dbfs);
        let peak_colour = if level.clipped {
            Color32::from_rgb(230, 50, 50)
        } else {
            visuals.strong_text_color()
        };
        painter.line_segment(
            [
                egui::pos2(peak_x, rect.top()),
                egui::pos2(peak_x, rect.bottom()),
            ],
            Stroke::new(2.0, peak_colour),
        );
        if let Some(floor) = level.floor_dbfs {
            let x = x_of(floor);
            painter.line_segment(
                [
                    egui::pos2(x, rect.top() + 3.0),
                    egui::pos2(x, rect.bottom() - 3.0),
                ],
                Stroke::new(1.0, visuals.weak_text_color()),
            );
        }
    }
    painter.rect_stroke(
        rect,
        3.0,
        Stroke::new(1.0, visuals.widgets.noninteractive.bg_stroke.color),
        egui::StrokeKind::Inside,
    );
    ui.label(text);
    if clip_warning {
        ui.colored_label(
            ui.visuals().error_fg_color,
            "The input clipped: tap more softly or turn the input gain down.",
        );
    } else if level.is_some_and(|l| l.recording) {
        ui.weak("Recording a tap …");
    }
}
