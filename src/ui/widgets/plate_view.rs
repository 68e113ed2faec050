//! A plate drawn to scale: its outline, optionally a coloured field over
//! it (a mode's shape or a carving guide, as a texture), lines (nodal
//! lines) and markers at the tap points. Shared by the Shapes area and the
//! Ledger's side-by-side view.
//!
//! The plate keeps its aspect ratio: one scale for both axes, the upper
//! end (the neck, largest `y_mm`) at the top, the bass side (negative
//! `x_mm`) on the left. Colours come from the diverging scales the build
//! report uses too ([`Palette`], defined in `report::shapes`): blue
//! through a warm white to orange for a shape, green through white to
//! purple for a carving guide.

use eframe::egui::{self, Color32, ColorImage, Pos2, Rect, Sense, Stroke, TextureHandle};

use crate::shapes::{Outline, Polyline, Raster, TapPoint, CERTAIN_SIGN_UNCERTAINTIES};
use crate::text::{num, signed, LengthUnit};

/// Pixels of the field image per mm of plate (a violin plate is about
/// 206 × 356 px).
pub const FIELD_PIXELS_PER_MM: f64 = 1.0;

pub use crate::report::shapes::Palette;

/// The colour of `t` on `palette` (see [`Palette::rgb`]).
pub fn colour(palette: Palette, t: f64) -> Color32 {
    let [r, g, b] = palette.rgb(t);
    Color32::from_rgb(r, g, b)
}

/// An image of `raster` over the outline's bounding box, coloured by
/// `palette` at value / `scale` (clamped), transparent outside the
/// outline. Values between nodes are interpolated bilinearly over the
/// nodes that hold a number; where none of the four does (a carving
/// guide's unmapped band), the plate is light grey.
pub fn field_image(outline: &Outline, raster: &Raster, palette: Palette, scale: f64) -> ColorImage {
    let half = outline.max_half_width_mm();
    let length = outline.length_mm();
    let width_px = ((2.0 * half * FIELD_PIXELS_PER_MM).ceil() as usize).max(1);
    let height_px = ((length * FIELD_PIXELS_PER_MM).ceil() as usize).max(1);
    let scale = if scale.is_finite() && scale > 0.0 {
        scale
    } else {
        1.0
    };
    let mut pixels = Vec::with_capacity(width_px * height_px);
    for row in 0..height_px {
        let y_mm = length * (1.0 - (row as f64 + 0.5) / height_px as f64);
        for column in 0..width_px {
            let x_mm = 2.0 * half * ((column as f64 + 0.5) / width_px as f64) - half;
            let colour = if outline.contains(x_mm, y_mm) {
                colour(palette, sample_raster(raster, x_mm, y_mm) / scale)
            } else {
                Color32::TRANSPARENT
            };
            pixels.push(colour);
        }
    }
    ColorImage::new([width_px, height_px], pixels)
}

/// The raster's value at (x, y), interpolated between its four nearest
/// nodes, leaving out nodes that hold no number; NaN if none does.
fn sample_raster(raster: &Raster, x_mm: f64, y_mm: f64) -> f64 {
    if raster.columns < 2 || raster.rows < 2 {
        return f64::NAN;
    }
    let u = ((x_mm - raster.x0_mm) / raster.step_mm).clamp(0.0, (raster.columns - 1) as f64);
    let v = ((y_mm - raster.y0_mm) / raster.step_mm).clamp(0.0, (raster.rows - 1) as f64);
    let (c0, r0) = (
        (u.floor() as usize).min(raster.columns - 2),
        (v.floor() as usize).min(raster.rows - 2),
    );
    let (fu, fv) = (u - c0 as f64, v - r0 as f64);
    let mut sum = 0.0;
    let mut weights = 0.0;
    for (dc, dr, weight) in [
        (0, 0, (1.0 - fu) * (1.0 - fv)),
        (1, 0, fu * (1.0 - fv)),
        (0, 1, (1.0 - fu) * fv),
        (1, 1, fu * fv),
    ] {
        let value = raster.values[(r0 + dr) * raster.columns + c0 + dc];
        if value.is_finite() {
            sum += weight * value;
            weights += weight;
        }
    }
    if weights > 1e-9 {
        sum / weights
    } else {
        f64::NAN
    }
}

/// What a marker at a tap point shows.
#[derive(Clone, Debug, PartialEq)]
pub enum MarkerKind {
    /// A map's value at the point (−1…+1), its spread over the taps, and
    /// whether its sign is certain.
    Value {
        value: f64,
        spread: f64,
        certain: bool,
    },
    /// A point of a grid being tapped: good taps so far, taps wanted, and
    /// whether it is the point to tap now.
    Survey {
        taps: usize,
        wanted: usize,
        current: bool,
    },
    /// Only where the point is.
    Plain,
}

/// A marker at a tap point, with the text shown when the pointer rests on
/// it.
#[derive(Clone, Debug, PartialEq)]
pub struct Marker {
    pub x_mm: f64,
    pub y_mm: f64,
    pub kind: MarkerKind,
    /// The point's name, drawn beside the current point of a grid.
    pub name: String,
    pub hover: String,
}

impl Marker {
    /// A marker of `kind` at `point`, named after it.
    pub fn at(point: &TapPoint, kind: MarkerKind, hover: String) -> Self {
        Self {
            x_mm: point.x_mm,
            y_mm: point.y_mm,
            kind,
            name: point.name.clone(),
            hover,
        }
    }
}

/// A map's values at its tap points as markers: the dot's size is the
/// value's size, a ring around it adds the spread over the point's taps,
/// and a point whose sign is not certain (within
/// [`CERTAIN_SIGN_UNCERTAINTIES`] uncertainties of zero, near a nodal line)
/// is a hollow grey dot. `taps` (one per point) is said on hover if given.
pub fn value_markers(
    points: &[TapPoint],
    values: &[f64],
    spreads: &[f64],
    uncertainties: &[f64],
    taps: Option<&[usize]>,
    unit: LengthUnit,
) -> Vec<Marker> {
    points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let value = values.get(i).copied().unwrap_or(f64::NAN);
            let spread = spreads.get(i).copied().unwrap_or(0.0);
            let uncertainty = uncertainties.get(i).copied().unwrap_or(f64::INFINITY);
            let certain = value.abs() >= CERTAIN_SIGN_UNCERTAINTIES * uncertainty;
            let sign_note = if certain {
                "sign certain"
            } else {
                "sign not certain: near a nodal line"
            };
            let taps_note = taps
                .and_then(|t| t.get(i))
                .map(|n| format!(" over {n} tap{}", if *n == 1 { "" } else { "s" }))
                .unwrap_or_default();
            let kind = MarkerKind::Value {
                value: if value.is_finite() { value } else { 0.0 },
                spread,
                certain,
            };
            let hover = format!(
                "{}: {} (spread {}{taps_note}; uncertainty {}), {sign_note}. Across {}, along {}.",
                p.name,
                signed(value, 2),
                num(spread, 2),
                num(uncertainty, 2),
                unit.size_text(p.x_mm),
                unit.size_text(p.y_mm)
            );
            Marker::at(p, kind, hover)
        })
        .collect()
}

/// One plate to draw.
pub struct PlateView<'a> {
    /// The outline.
    pub outline: &'a Outline,
    /// A field over the outline's bounding box (see [`field_image`]).
    pub field: Option<&'a TextureHandle>,
    /// Lines in mm (nodal lines), drawn dark over the field.
    pub lines: &'a [Polyline],
    /// Markers at the tap points.
    pub markers: &'a [Marker],
    /// Colours of value markers.
    pub palette: Palette,
    /// What the drawing is, for screen readers and tests.
    pub description: String,
}

/// What happened to a drawn plate.
pub struct PlateResponse {
    pub response: egui::Response,
    /// The marker clicked, if any.
    pub clicked_marker: Option<usize>,
}

/// Millimetres to screen points for one drawing.
#[derive(Clone, Copy, Debug)]
struct Frame {
    /// Screen position of x = 0, y = 0 (the centre of the lower end).
    origin: Pos2,
    /// Points per mm (the same along and across).
    scale: f32,
}

impl Frame {
    fn to_screen(self, x_mm: f64, y_mm: f64) -> Pos2 {
        egui::pos2(
            self.origin.x + self.scale * x_mm as f32,
            self.origin.y - self.scale * y_mm as f32,
        )
    }
}

/// Room left around the plate, points.
const MARGIN: f32 = 8.0;
/// How near a click must fall to a marker, points.
const CLICK_REACH: f32 = 12.0;

impl PlateView<'_> {
    /// Draws the plate as large as fits in `max_size`, keeping its aspect
    /// ratio.
    pub fn show(self, ui: &mut egui::Ui, max_size: egui::Vec2) -> PlateResponse {
        let half = self.outline.max_half_width_mm() as f32;
        let length = self.outline.length_mm() as f32;
        let scale = ((max_size.x - 2.0 * MARGIN) / (2.0 * half))
            .min((max_size.y - 2.0 * MARGIN) / length)
            .max(0.05);
        let size = egui::vec2(
            2.0 * half * scale + 2.0 * MARGIN,
            length * scale + 2.0 * MARGIN,
        );
        let (rect, response) = ui.allocate_exact_size(size, Sense::click());
        let description = self.description.clone();
        response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Image, true, &description));
        let frame = Frame {
            origin: egui::pos2(rect.center().x, rect.bottom() - MARGIN),
            scale,
        };
        let painter = ui.painter_at(rect.expand(2.0));
        let plate_rect = Rect::from_min_max(
            frame.to_screen(-f64::from(half), f64::from(length)),
            frame.to_screen(f64::from(half), 0.0),
        );
        let boundary: Vec<Pos2> = self
            .outline
            .boundary(96)
            .iter()
            .map(|p| frame.to_screen(p[0], p[1]))
            .collect();
        match self.field {
            Some(texture) => {
                painter.image(
                    texture.id(),
                    plate_rect,
                    Rect::from_min_max(egui::pos2(0.0, 0.0), egui::pos2(1.0, 1.0)),
                    Color32::WHITE,
                );
            }
            None => {
                painter.add(outline_fill(
                    self.outline,
                    frame,
                    ui.visuals().faint_bg_color,
                ));
            }
        }
        let line_colour = Color32::from_rgb(20, 20, 20);
        for line in self.lines {
            let points: Vec<Pos2> = line.iter().map(|p| frame.to_screen(p[0], p[1])).collect();
            painter.add(egui::Shape::line(points, Stroke::new(2.2, line_colour)));
        }
        painter.add(egui::Shape::closed_line(
            boundary,
            Stroke::new(1.5, ui.visuals().strong_text_color()),
        ));
        for marker in self.markers {
            draw_marker(&painter, ui, frame, marker, self.palette);
        }
        let hovered = response
            .hover_pos()
            .and_then(|pos| nearest_marker(self.markers, frame, pos));
        let clicked_marker = if response.clicked() {
            response
                .interact_pointer_pos()
                .and_then(|pos| nearest_marker(self.markers, frame, pos))
        } else {
            None
        };
        let response = match hovered {
            Some(index) => response.on_hover_text(&self.markers[index].hover),
            None => response,
        };
        PlateResponse {
            response,
            clicked_marker,
        }
    }
}

/// The outline filled with `colour`: the plate is one interval across at
/// every `y`, so it is a stack of trapezoids (each convex).
fn outline_fill(outline: &Outline, frame: Frame, colour: Color32) -> egui::Shape {
    let mut right: Vec<[f64; 2]> = outline
        .boundary(96)
        .into_iter()
        .filter(|p| p[0] >= 0.0)
        .collect();
    right.sort_by(|a, b| a[1].total_cmp(&b[1]));
    let mut mesh = egui::Mesh::default();
    for pair in right.windows(2) {
        let base = mesh.vertices.len() as u32;
        for [x, y] in [
            [-pair[0][0], pair[0][1]],
            [pair[0][0], pair[0][1]],
            [pair[1][0], pair[1][1]],
            [-pair[1][0], pair[1][1]],
        ] {
            mesh.colored_vertex(frame.to_screen(x, y), colour);
        }
        mesh.add_triangle(base, base + 1, base + 2);
        mesh.add_triangle(base, base + 2, base + 3);
    }
    egui::Shape::mesh(mesh)
}

fn draw_marker(
    painter: &egui::Painter,
    ui: &egui::Ui,
    frame: Frame,
    marker: &Marker,
    palette: Palette,
) {
    let centre = frame.to_screen(marker.x_mm, marker.y_mm);
    let dark = Color32::from_rgb(25, 25, 25);
    match marker.kind {
        MarkerKind::Value {
            value,
            spread,
            certain,
        } => {
            let size = value.abs().min(1.0) as f32;
            let radius = 2.5 + 5.5 * size;
            let spread_radius = 2.5 + 5.5 * (value.abs() + spread).min(1.5) as f32;
            if certain {
                painter.circle_filled(
                    centre,
                    radius,
                    colour(palette, if value >= 0.0 { 1.0 } else { -1.0 }),
                );
                painter.circle_stroke(centre, radius, Stroke::new(1.0, dark));
            } else {
                painter.circle_filled(centre, radius.max(3.5), Color32::from_rgb(235, 235, 235));
                painter.circle_stroke(
                    centre,
                    radius.max(3.5),
                    Stroke::new(1.5, Color32::from_rgb(90, 90, 90)),
                );
                let d = 2.0;
                painter.line_segment(
                    [centre + egui::vec2(-d, -d), centre + egui::vec2(d, d)],
                    Stroke::new(1.2, Color32::from_rgb(90, 90, 90)),
                );
            }
            if spread_radius > radius + 0.5 {
                painter.circle_stroke(centre, spread_radius, Stroke::new(1.0, dark));
            }
        }
        MarkerKind::Plain => {
            painter.circle_filled(centre, 2.5, Color32::from_gray(205));
            painter.circle_stroke(centre, 2.5, Stroke::new(1.0, dark));
        }
        MarkerKind::Survey {
            taps,
            wanted,
            current,
        } => {
            let weak = ui.visuals().weak_text_color();
            let done = Color32::from_rgb(60, 160, 95);
            if taps >= wanted {
                painter.circle_filled(centre, 5.0, done);
            } else if taps > 0 {
                painter.circle_stroke(centre, 5.0, Stroke::new(2.0, done));
                painter.circle_filled(centre, 2.0, done);
            } else {
                painter.circle_stroke(centre, 5.0, Stroke::new(1.2, weak));
            }
            if current {
                let accent = Color32::from_rgb(240, 180, 30);
                painter.circle_stroke(centre, 11.0, Stroke::new(3.0, accent));
                painter.text(
                    centre + egui::vec2(14.0, -10.0),
                    egui::Align2::LEFT_BOTTOM,
                    &marker.name,
                    egui::FontId::proportional(15.0),
                    ui.visuals().strong_text_color(),
                );
            }
        }
    }
}

fn nearest_marker(markers: &[Marker], frame: Frame, pos: Pos2) -> Option<usize> {
    markers
        .iter()
        .enumerate()
        .map(|(i, m)| (i, frame.to_screen(m.x_mm, m.y_mm).distance(pos)))
        .filter(|&(_, d)| d <= CLICK_REACH)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(i, _)| i)
}

/// A legend for a diverging scale: a bar from −1 to +1 with a few words
/// under each end, and a sentence under it.
pub fn legend(ui: &mut egui::Ui, palette: Palette, left: &str, middle: &str, right: &str) {
    let width = ui.available_width().min(260.0);
    let (rect, response) = ui.allocate_exact_size(egui::vec2(width, 30.0), Sense::hover());
    let description = format!("Colour scale: {left}, {middle}, {right}");
    response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Image, true, &description));
    let bar = Rect::from_min_size(rect.min, egui::vec2(width, 12.0));
    let steps = 64;
    let step = bar.width() / steps as f32;
    for i in 0..steps {
        let t = -1.0 + 2.0 * (f64::from(i) + 0.5) / f64::from(steps);
        let x = bar.left() + step * i as f32;
        let cell = Rect::from_min_max(
            egui::pos2(x, bar.top()),
            egui::pos2(x + step + 0.5, bar.bottom()),
        );
        ui.painter().rect_filled(cell, 0.0, colour(palette, t));
    }
    ui.painter().line_segment(
        [bar.center_top(), bar.center_bottom()],
        Stroke::new(1.0, Color32::from_rgb(20, 20, 20)),
    );
    let font = egui::TextStyle::Small.resolve(ui.style());
    let colour = ui.visuals().text_color();
    ui.painter().text(
        bar.left_bottom() + egui::vec2(0.0, 2.0),
        egui::Align2::LEFT_TOP,
        left,
        font.clone(),
        colour,
    );
    ui.painter().text(
        bar.right_bottom() + egui::vec2(0.0, 2.0),
        egui::Align2::RIGHT_TOP,
        right,
        font,
        colour,
    );
    ui.weak(middle);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::OutlineShape;

    #[test]
    fn a_field_image_keeps_the_plate_s_proportions_and_is_clear_outside() {
        let outline = Outline::new(OutlineShape::typical_violin()).expect("test value");
        let raster = Raster::sample_with(&outline, 4.0, |x, _| x / 103.0);
        let image = field_image(&outline, &raster, Palette::Shape, 1.0);
        assert_eq!(image.size, [206, 356]);
        // A corner of the bounding box is off the plate; the middle of the
        // lower bout is on it, near zero (x = 0), so near white.
        assert_eq!(image.pixels[0], Color32::TRANSPARENT);
        let centre = image.pixels[300 * 206 + 103];
        assert!(centre.r() > 220 && centre.b() > 220, "{centre:?}");
        // The bass side (left, x < 0) is blue, the treble side orange.
        let left = image.pixels[300 * 206 + 20];
        let right = image.pixels[300 * 206 + 185];
        assert!(left.b() > left.r() && right.r() > right.b());
    }
}
