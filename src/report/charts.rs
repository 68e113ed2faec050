//! The report's charts: for one labelled mode of one part, its frequency
//! against the pass number (left) and against the part's mass (right), as
//! one inline SVG drawn by plotters' SVG backend. The target is a dashed
//! line; on the mass chart the forecast is a hollow mark at the target mass
//! with its mass band as a bar, joined to the latest pass by a dotted line.
//!
//! plotters' SVG backend writes text as `<text>` elements and estimates
//! label widths itself, so no font file is needed; the browser draws the
//! text with its own sans-serif font.

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::ledger::{Forecast, LabelPoint};
use crate::text::MassUnit;

/// Width and height of one mode's SVG, px (both panels). Scaled down to the
/// page width by the style sheet.
pub const CHART_SIZE_PX: (u32, u32) = (880, 300);

const FONT: &str = "sans-serif";
const GRID: RGBColor = RGBColor(225, 225, 225);
const TARGET: RGBColor = RGBColor(120, 120, 120);

/// A colour per label, dark enough to print on white.
pub fn series_colour(index: usize) -> RGBColor {
    const PALETTE: [RGBColor; 6] = [
        RGBColor(31, 100, 180),
        RGBColor(200, 100, 20),
        RGBColor(30, 130, 70),
        RGBColor(180, 40, 80),
        RGBColor(110, 70, 170),
        RGBColor(120, 110, 20),
    ];
    PALETTE[index % PALETTE.len()]
}

/// What one mode's chart shows.
pub struct ModeChart<'a> {
    /// The label (drawn escaped by the backend).
    pub label: &'a str,
    /// Where the label stood in each pass that has it.
    pub history: &'a [LabelPoint],
    /// The label's target, Hz.
    pub target_hz: Option<f64>,
    /// The forecast towards that target.
    pub forecast: Option<&'a Forecast>,
    /// The series colour.
    pub colour: RGBColor,
    /// The unit of the mass axis.
    pub mass_unit: MassUnit,
}

/// The SVG text of one mode's chart; the problem as a sentence if plotters
/// refuses to draw it.
pub fn mode_chart_svg(chart: &ModeChart) -> Result<String, String> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, CHART_SIZE_PX).into_drawing_area();
        draw_both(&root, chart)
            .map_err(|e| format!("the chart of \"{}\" could not be drawn: {e}", chart.label))?;
        root.present()
            .map_err(|e| format!("the chart of \"{}\" could not be drawn: {e}", chart.label))?;
    }
    Ok(svg)
}

type DrawResult = Result<(), DrawingAreaErrorKind<std::io::Error>>;

fn draw_both(root: &DrawingArea<SVGBackend, Shift>, chart: &ModeChart) -> DrawResult {
    root.fill(&WHITE)?;
    let (left, right) = root.split_horizontally(CHART_SIZE_PX.0 / 2);
    let (low_hz, high_hz) = frequency_range_hz(chart);
    by_pass(&left, chart, low_hz..high_hz)?;
    by_mass(&right, chart, low_hz..high_hz)
}

/// The frequency axis: every point, the target and the forecast, padded.
fn frequency_range_hz(chart: &ModeChart) -> (f64, f64) {
    let mut values: Vec<f64> = chart.history.iter().map(|p| p.frequency_hz).collect();
    values.extend(chart.target_hz);
    let (low, high) = padded_range(&values, 0.08, 1.0);
    (low, high)
}

/// The mass axis in the chart's unit: every pass and the forecast's band,
/// padded to at least 0.5 g.
fn mass_range(chart: &ModeChart) -> (f64, f64) {
    let mut values: Vec<f64> = chart.history.iter().map(|p| p.mass_g).collect();
    if let Some(f) = usable_forecast(chart) {
        values.extend([
            f.target_mass_g,
            f.target_mass_range_g.0,
            f.target_mass_range_g.1,
        ]);
    }
    let unit = chart.mass_unit;
    let values: Vec<f64> = values.into_iter().map(|g| unit.from_g(g)).collect();
    padded_range(&values, 0.06, unit.from_g(0.5))
}

/// min..max of the finite `values`, widened by `fraction` of the span on
/// each side, and to at least `min_span` in all.
fn padded_range(values: &[f64], fraction: f64, min_span: f64) -> (f64, f64) {
    let finite = values.iter().copied().filter(|v| v.is_finite());
    let (low, high) = finite.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
        (lo.min(v), hi.max(v))
    });
    if !low.is_finite() {
        return (0.0, 1.0);
    }
    let span = (high - low).max(min_span);
    let centre = 0.5 * (low + high);
    let half = 0.5 * span * (1.0 + 2.0 * fraction);
    (centre - half, centre + half)
}

fn usable_forecast<'a>(chart: &ModeChart<'a>) -> Option<&'a Forecast> {
    chart.forecast.filter(|f| {
        [
            f.target_mass_g,
            f.target_hz,
            f.target_mass_range_g.0,
            f.target_mass_range_g.1,
        ]
        .iter()
        .all(|v| v.is_finite() && *v > 0.0)
    })
}

fn by_pass(
    area: &DrawingArea<SVGBackend, Shift>,
    chart: &ModeChart,
    hz: std::ops::Range<f64>,
) -> DrawResult {
    let last_pass = chart
        .history
        .iter()
        .map(|p| p.pass_number)
        .max()
        .unwrap_or(1)
        .max(1);
    let passes = f64::from(last_pass);
    let mut plot = ChartBuilder::on(area)
        .caption(format!("{} by pass", chart.label), (FONT, 17))
        .margin(10)
        .x_label_area_size(36)
        .y_label_area_size(56)
        .build_cartesian_2d(0.5..passes + 0.5, hz.clone())?;
    plot.configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GRID)
        .x_labels(usize::try_from(last_pass).unwrap_or(1).min(12) + 1)
        .x_label_formatter(&|x| whole_number_label(*x))
        .y_label_formatter(&|y| format!("{y:.0}"))
        .x_desc("Pass")
        .y_desc("Frequency (Hz)")
        .label_style((FONT, 13))
        .draw()?;
    let points: Vec<(f64, f64)> = chart
        .history
        .iter()
        .map(|p| (f64::from(p.pass_number), p.frequency_hz))
        .collect();
    draw_track(&mut plot, &points, chart.colour)?;
    if let Some(target_hz) = chart.target_hz {
        draw_target(&mut plot, 0.5..passes + 0.5, target_hz)?;
    }
    Ok(())
}

fn by_mass(
    area: &DrawingArea<SVGBackend, Shift>,
    chart: &ModeChart,
    hz: std::ops::Range<f64>,
) -> DrawResult {
    let unit = chart.mass_unit;
    let (low, high) = mass_range(chart);
    let x_title = format!("Mass ({})", unit.symbol());
    let decimals = unit.estimate_decimals();
    let mut plot = ChartBuilder::on(area)
        .caption(format!("{} by mass", chart.label), (FONT, 17))
        .margin(10)
        .x_label_area_size(36)
        .y_label_area_size(56)
        .build_cartesian_2d(low..high, hz.clone())?;
    plot.configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GRID)
        .x_labels(6)
        .x_label_formatter(&|m| format!("{m:.decimals$}"))
        .y_label_formatter(&|y| format!("{y:.0}"))
        .x_desc(x_title)
        .y_desc("Frequency (Hz)")
        .label_style((FONT, 13))
        .draw()?;
    let points: Vec<(f64, f64)> = chart
        .history
        .iter()
        .map(|p| (unit.from_g(p.mass_g), p.frequency_hz))
        .collect();
    draw_track(&mut plot, &points, chart.colour)?;
    if let Some(target_hz) = chart.target_hz {
        draw_target(&mut plot, low..high, target_hz)?;
    }
    if let Some(f) = usable_forecast(chart) {
        draw_forecast(&mut plot, f, chart.colour, unit)?;
    }
    Ok(())
}

type Plot<'a, 'b, X> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<X, plotters::coord::types::RangedCoordf64>>;

fn draw_track<X>(plot: &mut Plot<'_, '_, X>, points: &[(f64, f64)], colour: RGBColor) -> DrawResult
where
    X: Ranged<ValueType = f64>,
{
    plot.draw_series(LineSeries::new(
        points.iter().copied(),
        colour.stroke_width(2),
    ))?;
    plot.draw_series(points.iter().map(|&p| Circle::new(p, 4, colour.filled())))?;
    Ok(())
}

fn draw_target<X>(plot: &mut Plot<'_, '_, X>, x: std::ops::Range<f64>, target_hz: f64) -> DrawResult
where
    X: Ranged<ValueType = f64>,
{
    plot.draw_series(DashedLineSeries::new(
        [(x.start, target_hz), (x.end, target_hz)],
        8,
        5,
        TARGET.stroke_width(1),
    ))?;
    Ok(())
}

fn draw_forecast<X>(
    plot: &mut Plot<'_, '_, X>,
    f: &Forecast,
    colour: RGBColor,
    unit: MassUnit,
) -> DrawResult
where
    X: Ranged<ValueType = f64>,
{
    let (low_g, high_g) = f.target_mass_range_g;
    let mass = |g: f64| unit.from_g(g);
    plot.draw_series(LineSeries::new(
        [(mass(low_g), f.target_hz), (mass(high_g), f.target_hz)],
        colour.mix(0.45).stroke_width(6),
    ))?;
    plot.draw_series(DashedLineSeries::new(
        [
            (mass(f.now_mass_g), f.now_hz),
            (mass(f.target_mass_g), f.target_hz),
        ],
        3,
        3,
        colour.stroke_width(1),
    ))?;
    plot.draw_series(std::iter::once(Circle::new(
        (mass(f.target_mass_g), f.target_hz),
        6,
        colour.stroke_width(2),
    )))?;
    Ok(())
}

/// "3" for 3.0, nothing between whole numbers.
fn whole_number_label(x: f64) -> String {
    if (x - x.round()).abs() < 1e-6 && x >= 1.0 {
        format!("{x:.0}")
    } else {
        String::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn points() -> Vec<LabelPoint> {
        [(1, 85.0, 380.0), (2, 82.0, 366.0), (3, 79.5, 355.0)]
            .iter()
            .map(|&(pass_number, mass_g, frequency_hz)| LabelPoint {
                pass_number,
                mass_g,
                frequency_hz,
            })
            .collect()
    }

    #[test]
    fn a_chart_is_one_svg_with_both_panels_and_escaped_text() {
        let history = points();
        let svg = mode_chart_svg(&ModeChart {
            label: "<b>odd</b>",
            history: &history,
            target_hz: Some(340.0),
            forecast: None,
            colour: series_colour(0),
            mass_unit: MassUnit::Gram,
        })
        .expect("test value");
        assert!(svg.starts_with("<svg"), "{}", &svg[..40]);
        assert_eq!(svg.matches("<svg").count(), 1);
        assert!(svg.contains("&lt;b&gt;odd&lt;/b&gt; by pass"));
        assert!(svg.contains("&lt;b&gt;odd&lt;/b&gt; by mass"));
        assert!(!svg.contains("<b>"));
        assert!(svg.contains("Mass (g)"));
    }

    #[test]
    fn ranges_hold_every_value_and_are_never_empty() {
        let (low, high) = padded_range(&[340.0, 380.0], 0.1, 1.0);
        assert!(low < 340.0 && high > 380.0);
        let (low, high) = padded_range(&[100.0], 0.1, 1.0);
        assert!(low < 100.0 && high > 100.0);
        assert_eq!(padded_range(&[f64::NAN], 0.1, 1.0), (0.0, 1.0));
    }
}
