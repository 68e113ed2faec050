//! Products of normalised Legendre polynomials over an outline's bounding
//! box: Pᵢ(ξ)·Pⱼ(η) with ξ = x/(half the widest width), η = 2y/length − 1.
//! The plate model takes its Ritz functions from here and the fitted
//! surfaces their terms. With `edge_factor` every function carries
//! (1 − ξ²)(1 − η²), so it vanishes on the edges of the box (a simply
//! supported rectangle).

use super::legendre::LegendreTable;
use super::outline::Outline;

/// Which products are in a basis: degree across at most `across`, along at
/// most `along`, and the two together at most `total`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Degrees {
    pub across: usize,
    pub along: usize,
    pub total: usize,
}

/// A surface's value and its derivatives at one point, per mm (x across,
/// y along; `dxy` is the mixed second derivative).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Derivatives {
    /// The value.
    pub value: f64,
    /// ∂/∂x, per mm.
    pub dx: f64,
    /// ∂/∂y, per mm.
    pub dy: f64,
    /// ∂²/∂x², per mm².
    pub dxx: f64,
    /// ∂²/∂y², per mm².
    pub dyy: f64,
    /// ∂²/∂x∂y, per mm².
    pub dxy: f64,
}

/// A polynomial basis over a box `[−half_width, half_width] × [0, length]` (mm).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct PolynomialBasis {
    terms: Vec<(usize, usize)>,
    degrees: Degrees,
    half_width_mm: f64,
    length_mm: f64,
    edge_factor: bool,
}

impl PolynomialBasis {
    pub fn new(half_width_mm: f64, length_mm: f64, degrees: Degrees, edge_factor: bool) -> Self {
        let mut terms = Vec::new();
        for total in 0..=degrees.total {
            for i in 0..=total.min(degrees.across) {
                let j = total - i;
                if j <= degrees.along {
                    terms.push((i, j));
                }
            }
        }
        Self {
            terms,
            degrees,
            half_width_mm,
            length_mm,
            edge_factor,
        }
    }

    /// Every product up to total degree `degree` over `outline`'s box.
    pub fn over_outline(outline: &Outline, degree: usize, edge_factor: bool) -> Self {
        Self::new(
            outline.max_half_width_mm(),
            outline.length_mm(),
            Degrees {
                across: degree,
                along: degree,
                total: degree,
            },
            edge_factor,
        )
    }

    pub fn len(&self) -> usize {
        self.terms.len()
    }

    /// Every function's value and derivatives at (x, y), in term order.
    pub fn evaluate(&self, x_mm: f64, y_mm: f64, out: &mut Vec<Derivatives>) {
        let xi = x_mm / self.half_width_mm;
        let eta = 2.0 * y_mm / self.length_mm - 1.0;
        let (mut across, mut along) = (LegendreTable::default(), LegendreTable::default());
        across.fill(xi, self.degrees.across);
        along.fill(eta, self.degrees.along);
        if self.edge_factor {
            apply_edge_factor(&mut across, xi);
            apply_edge_factor(&mut along, eta);
        }
        let (sx, sy) = (1.0 / self.half_width_mm, 2.0 / self.length_mm);
        out.clear();
        out.extend(self.terms.iter().map(|&(i, j)| {
            let (a, a1, a2) = (across.value[i], across.first[i], across.second[i]);
            let (b, b1, b2) = (along.value[j], along.first[j], along.second[j]);
            Derivatives {
                value: a * b,
                dx: sx * a1 * b,
                dy: sy * a * b1,
                dxx: sx * sx * a2 * b,
                dyy: sy * sy * a * b2,
                dxy: sx * sy * a1 * b1,
            }
        }));
    }

    /// The combination Σ cₖ·(function k) and its derivatives at (x, y).
    pub fn combine(&self, coefficients: &[f64], x_mm: f64, y_mm: f64) -> Derivatives {
        let mut values = Vec::with_capacity(self.len());
        self.evaluate(x_mm, y_mm, &mut values);
        let mut sum = Derivatives::default();
        for (c, d) in coefficients.iter().zip(&values) {
            sum.value += c * d.value;
            sum.dx += c * d.dx;
            sum.dy += c * d.dy;
            sum.dxx += c * d.dxx;
            sum.dyy += c * d.dyy;
            sum.dxy += c * d.dxy;
        }
        sum
    }
}

/// g(t) = (1 − t²)·p(t): g′ = −2t·p + (1 − t²)·p′, g″ = −2p − 4t·p′ + (1 − t²)·p″.
fn apply_edge_factor(table: &mut LegendreTable, t: f64) {
    let factor = 1.0 - t * t;
    for k in 0..table.value.len() {
        let (p, p1, p2) = (table.value[k], table.first[k], table.second[k]);
        table.value[k] = factor * p;
        table.first[k] = -2.0 * t * p + factor * p1;
        table.second[k] = -2.0 * p - 4.0 * t * p1 + factor * p2;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derivatives_match_finite_differences_with_and_without_the_edge_factor() {
        let degrees = Degrees {
            across: 5,
            along: 6,
            total: 8,
        };
        for edge_factor in [false, true] {
            let basis = PolynomialBasis::new(80.0, 300.0, degrees, edge_factor);
            let coefficients: Vec<f64> = (0..basis.len())
                .map(|k| ((k * 7) % 5) as f64 - 2.0)
                .collect();
            let (x, y, h) = (23.0, 170.0, 1e-3);
            let at = |dx: f64, dy: f64| basis.combine(&coefficients, x + dx, y + dy);
            let centre = at(0.0, 0.0);
            let fd_x = (at(h, 0.0).value - at(-h, 0.0).value) / (2.0 * h);
            let fd_y = (at(0.0, h).value - at(0.0, -h).value) / (2.0 * h);
            let fd_xx = (at(h, 0.0).dx - at(-h, 0.0).dx) / (2.0 * h);
            let fd_yy = (at(0.0, h).dy - at(0.0, -h).dy) / (2.0 * h);
            let fd_xy = (at(0.0, h).dx - at(0.0, -h).dx) / (2.0 * h);
            for (fd, exact) in [
                (fd_x, centre.dx),
                (fd_y, centre.dy),
                (fd_xx, centre.dxx),
                (fd_yy, centre.dyy),
                (fd_xy, centre.dxy),
            ] {
                assert!(
                    (fd - exact).abs() < 1e-6 * (1.0 + exact.abs()),
                    "{fd} vs {exact}"
                );
            }
        }
        // With the edge factor every function is zero on the box's edges.
        let basis = PolynomialBasis::new(80.0, 300.0, degrees, true);
        let mut values = Vec::new();
        for (x, y) in [(80.0, 10.0), (-80.0, 200.0), (5.0, 0.0), (-30.0, 300.0)] {
            basis.evaluate(x, y, &mut values);
            assert!(values.iter().all(|d| d.value.abs() < 1e-12));
        }
    }
}
