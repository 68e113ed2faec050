//! Everything needed to draw one mode's map over the outline: the fitted
//! surface, its raster (for a coloured map with a diverging scale) and its
//! nodal lines. Works alike for a map just measured ([`super::ModeShape`])
//! and one kept in a build (values and uncertainties per point).

use super::contour::{zero_lines, Polyline};
use super::grid::TapPoint;
use super::outline::Outline;
use super::surface::{FittedSurface, Raster, SurfaceError, DEFAULT_SMOOTHING};

/// A floor under the uncertainties when they become weights, so one very
/// certain point cannot rule the surface (a twentieth of the peak).
const UNCERTAINTY_FLOOR: f64 = 0.05;

/// Weights for a surface through values with these uncertainties:
/// 1/(u² + floor²). Points near a nodal line, with large uncertainties,
/// pull less.
pub fn weights_from_uncertainties(uncertainties: &[f64]) -> Vec<f64> {
    uncertainties
        .iter()
        .map(|u| {
            let u = if u.is_finite() { *u } else { 1.0 };
            1.0 / (u * u + UNCERTAINTY_FLOOR * UNCERTAINTY_FLOOR)
        })
        .collect()
}

/// One mode ready to draw.
#[derive(Clone, Debug, PartialEq)]
pub struct ModeDrawing {
    /// The smooth surface through the points.
    pub surface: FittedSurface,
    /// The surface sampled over the outline.
    pub raster: Raster,
    /// Where the surface is zero, cut at the outline, mm.
    pub nodal_lines: Vec<Polyline>,
}

impl ModeDrawing {
    /// Fits, samples every `step_mm` and finds the nodal lines.
    pub fn new(
        outline: &Outline,
        points: &[TapPoint],
        values: &[f64],
        uncertainties: &[f64],
        step_mm: f64,
    ) -> Result<Self, SurfaceError> {
        let positions: Vec<[f64; 2]> = points.iter().map(|p| [p.x_mm, p.y_mm]).collect();
        let weights = weights_from_uncertainties(uncertainties);
        if weights.len() != values.len() {
            return Err(SurfaceError::Counts {
                points: points.len(),
                values: values.len(),
                weights: weights.len(),
            });
        }
        let surface = FittedSurface::fit(outline, &positions, values, &weights, DEFAULT_SMOOTHING)?;
        let raster = Raster::sample(outline, &surface, step_mm);
        let nodal_lines = zero_lines(&raster, outline);
        Ok(Self {
            surface,
            raster,
            nodal_lines,
        })
    }
}
