//! A smooth surface through a mode's values at the tap points, and the
//! surface sampled on a raster over the outline.
//!
//! The surface is a smoothing thin-plate fit in a polynomial space: among
//! the products of Legendre polynomials up to a total degree that suits
//! the number of points, the one that minimises
//! Σᵢ wᵢ(s(pᵢ) − vᵢ)²/Σwᵢ + λ·A·∫(s,ₓₓ² + 2s,ₓᵧ² + s,ᵧᵧ²) dA over the
//! outline (A its area, which makes λ free of units). The bending term is
//! the thin-plate spline's roughness penalty; it keeps the surface calm
//! between and beyond the points, and unlike a radial thin-plate spline
//! the result has finite curvature everywhere, which the carving guide
//! needs. Weights come from each point's uncertainty, so points near a
//! nodal line (weak, noisy) pull less.

use nalgebra::{DMatrix, DVector};

use super::basis::{Derivatives, PolynomialBasis};
use super::outline::Outline;

/// Something with a value and curvatures over the plate: a fitted surface,
/// or a mode of the plate model.
pub trait ShapeSurface {
    /// Value and derivatives at (x, y), mm.
    fn derivatives_at(&self, x_mm: f64, y_mm: f64) -> Derivatives;
}

/// Why a surface cannot be fitted.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SurfaceError {
    /// Values, points and weights differ in number, or there are too few.
    #[error("a surface needs at least 3 points with one value and one weight each (got {points} points, {values} values, {weights} weights)")]
    Counts {
        /// Points.
        points: usize,
        /// Values.
        values: usize,
        /// Weights.
        weights: usize,
    },
    /// A value, weight or position that is not a finite number (or a
    /// negative weight).
    #[error("point {0} has a value, weight or position that is not a usable number")]
    NotFinite(usize),
    /// The least-squares problem could not be solved.
    #[error("the surface fit could not be solved")]
    Singular,
}

/// Default roughness weight λ: enough to keep the surface calm where there
/// are no points, small against the data where there are. Chosen on the
/// demo plate's 5 × 9 grid: from 1e-7 to 1e-5 the surfaces match the
/// plate's modes equally well (MAC ≥ 0.994), but the curvature the
/// carving guide needs is best at 1e-6 (thinning patches of 60 mm: the
/// guide from the fitted surface against the guide from the true shape
/// correlates 0.99, 0.99 and 0.83 for modes 1, 2 and 5, every sign right).
pub const DEFAULT_SMOOTHING: f64 = 1e-6;

/// A fitted surface.
#[derive(Clone, Debug, PartialEq)]
pub struct FittedSurface {
    basis: PolynomialBasis,
    coefficients: Vec<f64>,
}

impl FittedSurface {
    /// Fits the surface through `values` at `points` (x, y in mm) with
    /// `weights` over `outline`, roughness weight `smoothing` (see the
    /// module documentation; [`DEFAULT_SMOOTHING`] suits tap grids).
    pub fn fit(
        outline: &Outline,
        points: &[[f64; 2]],
        values: &[f64],
        weights: &[f64],
        smoothing: f64,
    ) -> Result<Self, SurfaceError> {
        let n = points.len();
        if n < 3 || values.len() != n || weights.len() != n {
            return Err(SurfaceError::Counts {
                points: n,
                values: values.len(),
                weights: weights.len(),
            });
        }
        for i in 0..n {
            let usable = points[i].iter().all(|c| c.is_finite())
                && values[i].is_finite()
                && weights[i].is_finite()
                && weights[i] >= 0.0;
            if !usable {
                return Err(SurfaceError::NotFinite(i));
            }
        }
        let degree = degree_for(n);
        let basis = PolynomialBasis::over_outline(outline, degree, false);
        let m = basis.len();
        let weight_sum: f64 = weights.iter().sum::<f64>().max(f64::MIN_POSITIVE);
        let mut normal = DMatrix::<f64>::zeros(m, m);
        let mut rhs = DVector::<f64>::zeros(m);
        let mut row = Vec::with_capacity(m);
        for i in 0..n {
            basis.evaluate(points[i][0], points[i][1], &mut row);
            let w = weights[i] / weight_sum;
            for a in 0..m {
                rhs[a] += w * row[a].value * values[i];
                for b in 0..=a {
                    normal[(a, b)] += w * row[a].value * row[b].value;
                }
            }
        }
        let area = outline.area_mm2();
        for q in outline.quadrature(degree) {
            basis.evaluate(q.x_mm, q.y_mm, &mut row);
            let w = smoothing * area * q.weight_mm2;
            for a in 0..m {
                for b in 0..=a {
                    normal[(a, b)] += w
                        * (row[a].dxx * row[b].dxx
                            + 2.0 * row[a].dxy * row[b].dxy
                            + row[a].dyy * row[b].dyy);
                }
            }
        }
        for a in 0..m {
            for b in 0..a {
                normal[(b, a)] = normal[(a, b)];
            }
        }
        // The roughness term leaves the plane (zero curvature) to the data
        // alone; a whisper of ridge keeps the solve definite if the points
        // do not pin a plane down.
        let trace = (0..m).map(|a| normal[(a, a)]).sum::<f64>() / m as f64;
        for a in 0..m {
            normal[(a, a)] += 1e-12 * trace;
        }
        let solution = normal.cholesky().ok_or(SurfaceError::Singular)?.solve(&rhs);
        Ok(Self {
            basis,
            coefficients: solution.iter().copied().collect(),
        })
    }

    /// The surface's value at (x, y), mm.
    pub fn value_at(&self, x_mm: f64, y_mm: f64) -> f64 {
        self.derivatives_at(x_mm, y_mm).value
    }
}

impl ShapeSurface for FittedSurface {
    fn derivatives_at(&self, x_mm: f64, y_mm: f64) -> Derivatives {
        self.basis.combine(&self.coefficients, x_mm, y_mm)
    }
}

/// Total polynomial degree for `points` points: about as many terms as
/// points (the roughness term tames the rest), 2 to 10.
fn degree_for(points: usize) -> usize {
    let mut degree = 2;
    while degree < 10 && (degree + 2) * (degree + 3) / 2 <= points {
        degree += 1;
    }
    degree
}

/// A surface sampled at the nodes of a square grid over an outline's
/// bounding box (values outside the outline too, so contours can be cut
/// at the edge), row by row from the lower end.
#[derive(Clone, Debug, PartialEq)]
pub struct Raster {
    /// x of the first column, mm.
    pub x0_mm: f64,
    /// y of the first row, mm.
    pub y0_mm: f64,
    /// Node spacing, mm.
    pub step_mm: f64,
    /// Nodes across.
    pub columns: usize,
    /// Nodes along.
    pub rows: usize,
    /// Value at each node, `values[row * columns + column]`.
    pub values: Vec<f64>,
    /// Whether each node lies inside the outline.
    pub inside: Vec<bool>,
}

impl Raster {
    /// Samples `surface` over `outline` every `step_mm` (at least 0.5 mm;
    /// a step of about 2–4 mm suits a violin plate).
    pub fn sample(outline: &Outline, surface: &dyn ShapeSurface, step_mm: f64) -> Self {
        Self::sample_with(outline, step_mm, |x, y| surface.derivatives_at(x, y).value)
    }

    /// Samples any function of (x, y) over `outline`.
    pub fn sample_with(
        outline: &Outline,
        step_mm: f64,
        mut value: impl FnMut(f64, f64) -> f64,
    ) -> Self {
        let step = if step_mm.is_finite() {
            step_mm.max(0.5)
        } else {
            2.0
        };
        let half = outline.max_half_width_mm();
        let columns = (2.0 * half / step).ceil() as usize + 1;
        let rows = (outline.length_mm() / step).ceil() as usize + 1;
        let x0 = -step * (columns - 1) as f64 / 2.0;
        let y0 = (outline.length_mm() - step * (rows - 1) as f64) / 2.0;
        let mut values = Vec::with_capacity(columns * rows);
        let mut inside = Vec::with_capacity(columns * rows);
        for row in 0..rows {
            for column in 0..columns {
                let (x, y) = (x0 + step * column as f64, y0 + step * row as f64);
                values.push(value(x, y));
                inside.push(outline.contains(x, y));
            }
        }
        Self {
            x0_mm: x0,
            y0_mm: y0,
            step_mm: step,
            columns,
            rows,
            values,
            inside,
        }
    }

    /// Position of a node, mm.
    pub fn node_mm(&self, column: usize, row: usize) -> [f64; 2] {
        [
            self.x0_mm + self.step_mm * column as f64,
            self.y0_mm + self.step_mm * row as f64,
        ]
    }

    /// Largest magnitude inside the outline (for a colour scale).
    pub fn peak_inside(&self) -> f64 {
        self.values
            .iter()
            .zip(&self.inside)
            .filter(|(_, &inside)| inside)
            .fold(0.0, |m, (v, _)| m.max(v.abs()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::outline::OutlineShape;

    #[test]
    fn a_smooth_field_is_reproduced_between_the_points() {
        // A low-order field sampled on a 5 × 9 grid comes back everywhere on
        // the plate within a few per cent of its peak.
        let outline = Outline::new(OutlineShape::typical_violin()).unwrap();
        let field = |x: f64, y: f64| {
            (x / 80.0) * ((y - 170.0) / 120.0) + 0.3 * ((y - 170.0) / 150.0).powi(2)
        };
        let grid = crate::shapes::grid::tap_grid(&outline, 5, 9).unwrap();
        let points: Vec<[f64; 2]> = grid.iter().map(|p| [p.x_mm, p.y_mm]).collect();
        let values: Vec<f64> = points.iter().map(|p| field(p[0], p[1])).collect();
        let surface = FittedSurface::fit(
            &outline,
            &points,
            &values,
            &vec![1.0; points.len()],
            DEFAULT_SMOOTHING,
        )
        .unwrap();
        let raster = Raster::sample(&outline, &surface, 4.0);
        let peak = raster.peak_inside();
        for row in 0..raster.rows {
            for column in 0..raster.columns {
                let i = row * raster.columns + column;
                if raster.inside[i] {
                    let [x, y] = raster.node_mm(column, row);
                    assert!(
                        (raster.values[i] - field(x, y)).abs() < 0.05 * peak,
                        "at {x}, {y}"
                    );
                }
            }
        }
    }

    #[test]
    fn bad_input_is_refused() {
        let outline = Outline::new(OutlineShape::typical_violin()).unwrap();
        let points = [[0.0, 100.0], [10.0, 150.0], [-10.0, 200.0]];
        assert!(matches!(
            FittedSurface::fit(&outline, &points, &[1.0, 2.0], &[1.0; 3], 1e-7),
            Err(SurfaceError::Counts { .. })
        ));
        assert_eq!(
            FittedSurface::fit(&outline, &points, &[1.0, f64::NAN, 0.0], &[1.0; 3], 1e-7),
            Err(SurfaceError::NotFinite(1))
        );
    }
}
