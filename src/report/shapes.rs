//! The report's shape drawings: for each pass that keeps a shape map, each
//! labelled mode's shape over the part's outline, as one inline SVG drawn
//! by plotters' SVG backend (like the charts): the fitted surface in
//! colour bands of a diverging scale, the nodal lines (black), the outline,
//! and the value at each tap point (a dot sized by the value, in its
//! sign's colour; a hollow grey dot where the sign is not certain).
//!
//! The colour scales are defined here, once, for the report and the
//! window alike ([`Palette`]): blue through a warm white to orange for a
//! shape, green through white to purple for a carving guide (our own
//! colours). In both the two ends lie on opposite sides of the
//! blue–yellow axis, which the common (red–green) colour blindness keeps.

use maud::{html, Markup, PreEscaped};
use plotters::prelude::*;

use crate::ledger::{Part, Pass, StoredModeShape, StoredShapeMap};
use crate::shapes::{ModeDrawing, Outline, CERTAIN_SIGN_UNCERTAINTIES};
use crate::text::num;

/// Height of one drawing, px (its width follows the outline). Scaled to
/// the page by the style sheet.
pub const DRAWING_HEIGHT_PX: u32 = 300;
/// Raster steps along the plate: bands 3 mm high on a violin plate.
const STEPS_ALONG: f64 = 120.0;
/// Colour bands on each side of zero.
const BANDS_PER_SIGN: i32 = 4;
/// Room around the plate, px.
const MARGIN_PX: u32 = 6;

/// A diverging colour scale: −1 at one end, 0 in the middle, +1 at the
/// other.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Palette {
    /// A mode's shape: blue (−), warm white (0), orange (+).
    Shape,
    /// A carving guide: green (thinning lowers the mode), white, purple
    /// (thinning raises it).
    Carving,
}

impl Palette {
    /// Stops from −1 to +1, evenly spaced.
    fn stops(self) -> [[u8; 3]; 5] {
        match self {
            Palette::Shape => [
                [28, 78, 150],
                [120, 165, 212],
                [246, 243, 236],
                [238, 160, 82],
                [168, 74, 12],
            ],
            Palette::Carving => [
                [27, 110, 50],
                [128, 186, 132],
                [244, 244, 240],
                [190, 160, 210],
                [110, 45, 130],
            ],
        }
    }

    /// The colour of `t` (clamped to −1…+1); not a number gives a mid
    /// grey, apart from every colour of either scale.
    pub fn rgb(self, t: f64) -> [u8; 3] {
        if !t.is_finite() {
            return [150, 150, 150];
        }
        let stops = self.stops();
        let position = (t.clamp(-1.0, 1.0) + 1.0) * 2.0;
        let index = (position.floor() as usize).min(3);
        let f = position - index as f64;
        let mix = |a: u8, b: u8| (f64::from(a) + (f64::from(b) - f64::from(a)) * f).round() as u8;
        let (a, b) = (stops[index], stops[index + 1]);
        [mix(a[0], b[0]), mix(a[1], b[1]), mix(a[2], b[2])]
    }
}

/// The section of a part: its passes' maps, each labelled mode drawn;
/// nothing when no pass keeps a map.
pub fn shape_section(part: &Part) -> Markup {
    let mapped: Vec<(&Pass, &StoredShapeMap)> = part
        .passes()
        .iter()
        .filter_map(|pass| Some((pass, pass.shape_map.as_ref()?)))
        .collect();
    if mapped.is_empty() {
        return html! {};
    }
    html! {
        h3 { "Mode shapes" }
        p.weak {
            "From roving taps over a grid with the microphone in one place. Colour: how the plate moves, blue one way and orange the other (which is which is arbitrary), white still; black lines: nodal lines; dots: the value at each tap point; hollow grey dots: sign not certain (near a nodal line)."
        }
        @for (pass, map) in mapped {
            @let labelled: Vec<&StoredModeShape> = map.modes.iter().filter(|m| m.label.is_some()).collect();
            div.shape-pass data-pass=(pass.number()) {
                h4 { "Pass " (pass.number()) " · " (map.points.len()) " tap points" }
                @if labelled.is_empty() {
                    p.weak { "No mode of this map is labelled yet." }
                }
                @for mode in labelled {
                    @let label = mode.label.as_deref().unwrap_or_default();
                    figure.shape-map data-label=(label) {
                        @match shape_svg(map, mode) {
                            Ok(svg) => { (PreEscaped(svg)) }
                            Err(problem) => { p.warning { (problem) } }
                        }
                        figcaption {
                            (label) " · " (num(mode.frequency_hz, 1)) " Hz · quality " (num(mode.quality, 2))
                        }
                    }
                }
            }
        }
    }
}

/// A mode of a kept map fitted over its outline, about `STEPS_ALONG`
/// raster steps along the plate (the report's drawings and the Ledger's
/// side-by-side view); the core's words if it cannot be.
pub fn stored_mode_drawing(
    map: &StoredShapeMap,
    mode: &StoredModeShape,
) -> Result<(Outline, ModeDrawing), String> {
    let outline = Outline::new(map.outline).map_err(|e| e.to_string())?;
    let step_mm = (outline.length_mm() / STEPS_ALONG).max(0.5);
    let drawing = ModeDrawing::new(
        &outline,
        &map.tap_points(),
        &mode.values,
        &mode.uncertainties,
        step_mm,
    )
    .map_err(|e| e.to_string())?;
    Ok((outline, drawing))
}

/// One mode of a map as SVG; the problem as a sentence if it cannot be
/// drawn.
pub fn shape_svg(map: &StoredShapeMap, mode: &StoredModeShape) -> Result<String, String> {
    let (outline, drawing) = stored_mode_drawing(map, mode).map_err(|e| {
        format!(
            "the shape at {} Hz cannot be drawn: {e}",
            num(mode.frequency_hz, 1)
        )
    })?;
    let half = outline.max_half_width_mm();
    let length = outline.length_mm();
    let plate_height = f64::from(DRAWING_HEIGHT_PX - 2 * MARGIN_PX);
    let width = (plate_height * 2.0 * half / length).ceil() as u32 + 2 * MARGIN_PX;
    let mut svg = String::new();
    {
        let root =
            SVGBackend::with_string(&mut svg, (width, DRAWING_HEIGHT_PX)).into_drawing_area();
        draw(&root, &outline, &drawing, map, mode)
            .map_err(|e| format!("the shape could not be drawn: {e}"))?;
        root.present()
            .map_err(|e| format!("the shape could not be drawn: {e}"))?;
    }
    Ok(svg)
}

type DrawResult = Result<(), DrawingAreaErrorKind<std::io::Error>>;

fn draw(
    root: &DrawingArea<SVGBackend, plotters::coord::Shift>,
    outline: &Outline,
    drawing: &ModeDrawing,
    map: &StoredShapeMap,
    mode: &StoredModeShape,
) -> DrawResult {
    root.fill(&WHITE)?;
    let half = outline.max_half_width_mm();
    let inner = root.margin(MARGIN_PX, MARGIN_PX, MARGIN_PX, MARGIN_PX);
    let mut plot =
        ChartBuilder::on(&inner).build_cartesian_2d(-half..half, 0.0..outline.length_mm())?;
    plot.draw_series(bands(outline, drawing))?;
    for line in &drawing.nodal_lines {
        let points: Vec<(f64, f64)> = line.iter().map(|p| (p[0], p[1])).collect();
        plot.draw_series(std::iter::once(PathElement::new(
            points,
            BLACK.stroke_width(2),
        )))?;
    }
    let mut edge: Vec<(f64, f64)> = outline.boundary(64).iter().map(|p| (p[0], p[1])).collect();
    edge.extend(edge.first().copied());
    plot.draw_series(std::iter::once(PathElement::new(
        edge,
        RGBColor(60, 60, 60).stroke_width(1),
    )))?;
    for (i, point) in map.points.iter().enumerate() {
        let value = mode.values.get(i).copied().unwrap_or(0.0);
        let uncertainty = mode.uncertainties.get(i).copied().unwrap_or(f64::INFINITY);
        let at = (point.x_mm, point.y_mm);
        let radius = (2.0 + 4.0 * value.abs().min(1.0)).round() as i32;
        if value.abs() >= CERTAIN_SIGN_UNCERTAINTIES * uncertainty {
            let [r, g, b] = Palette::Shape.rgb(value.signum());
            plot.draw_series([
                Circle::new(at, radius, RGBColor(r, g, b).filled()),
                Circle::new(at, radius, BLACK.stroke_width(1)),
            ])?;
        } else {
            plot.draw_series([
                Circle::new(at, radius.max(3), RGBColor(235, 235, 235).filled()),
                Circle::new(at, radius.max(3), RGBColor(90, 90, 90).stroke_width(1)),
            ])?;
        }
    }
    Ok(())
}

/// The surface in colour bands: each raster row split into runs of one
/// band, each run a rectangle cut at the outline's edge.
fn bands(outline: &Outline, drawing: &ModeDrawing) -> Vec<Rectangle<(f64, f64)>> {
    let raster = &drawing.raster;
    let peak = raster.peak_inside();
    let peak = if peak > 0.0 { peak } else { 1.0 };
    let band_of = |v: f64| ((v / peak).clamp(-1.0, 1.0) * f64::from(BANDS_PER_SIGN)).round() as i32;
    let half_step = raster.step_mm / 2.0;
    let mut rectangles = Vec::new();
    for row in 0..raster.rows {
        let [_, y] = raster.node_mm(0, row);
        let edge = outline
            .half_width_mm((y - half_step).max(0.0))
            .max(outline.half_width_mm((y + half_step).min(outline.length_mm())))
            .max(outline.half_width_mm(y));
        if edge <= 0.0 {
            continue;
        }
        let mut column = 0;
        while column < raster.columns {
            let band = band_of(raster.values[row * raster.columns + column]);
            let start = column;
            while column + 1 < raster.columns
                && band_of(raster.values[row * raster.columns + column + 1]) == band
            {
                column += 1;
            }
            let left = (raster.node_mm(start, row)[0] - half_step).max(-edge);
            let right = (raster.node_mm(column, row)[0] + half_step).min(edge);
            column += 1;
            if right <= left {
                continue;
            }
            let [r, g, b] = Palette::Shape.rgb(f64::from(band) / f64::from(BANDS_PER_SIGN));
            let bottom = (y - half_step).max(0.0);
            let top = (y + half_step).min(outline.length_mm());
            rectangles.push(Rectangle::new(
                [(left, bottom), (right, top)],
                RGBColor(r, g, b).filled(),
            ));
        }
    }
    rectangles
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_scales_run_from_one_end_through_white_to_the_other() {
        for palette in [Palette::Shape, Palette::Carving] {
            let middle = palette.rgb(0.0);
            assert!(middle.iter().all(|&c| c > 230), "{middle:?}");
            let (low, high) = (palette.rgb(-1.0), palette.rgb(1.0));
            assert_eq!(palette.rgb(-7.0), low);
            assert_eq!(palette.rgb(3.0), high);
            // Each end is dark, and lighter towards the middle.
            let lightness = |c: [u8; 3]| {
                0.3 * f64::from(c[0]) + 0.59 * f64::from(c[1]) + 0.11 * f64::from(c[2])
            };
            assert!(lightness(low) < 140.0 && lightness(high) < 140.0);
            assert!(lightness(palette.rgb(-0.5)) - lightness(low) > 40.0);
            assert!(lightness(palette.rgb(0.5)) - lightness(high) > 40.0);
            // The ends lie on opposite sides of the blue–yellow axis, which
            // red–green colour blindness keeps (common practice, no source).
            let blue_yellow =
                |c: [u8; 3]| f64::from(c[2]) - (f64::from(c[0]) + f64::from(c[1])) / 2.0;
            assert!(blue_yellow(low) * blue_yellow(high) < 0.0);
        }
        assert_eq!(Palette::Shape.rgb(f64::NAN), [150, 150, 150]);
    }
}
