//! An arched plate: the thin-plate model plus the stretching of its middle
//! surface (a shallow shell, Marguerre's linear form). A free plate that is
//! flat only bends; an arched one cannot move in some patterns without
//! stretching, which stiffens them — above all the "ring" pattern, where
//! the middle and the rim move in opposite senses, and far less the
//! twisting and the X pattern. That is why the ring mode of a carved violin
//! plate lies near twice the X mode's frequency, where a flat plate of the
//! same outline has them close together.
//!
//! The middle surface stands at z₀(x, y) above the rim; with in-plane
//! displacements u (across) and v (along) and the deflection w, the
//! membrane strains are εₓ = u,ₓ + z₀,ₓw,ₓ, εᵧ = v,ᵧ + z₀,ᵧw,ᵧ and
//! γ = u,ᵧ + v,ₓ + z₀,ₓw,ᵧ + z₀,ᵧw,ₓ (linear shallow-shell strains), and the
//! membrane energy is ½∫(A₁₁εₓ² + 2A₁₂εₓεᵧ + A₂₂εᵧ² + A₆₆γ²) dA with
//! A = 12·D/h² (the same elastic constants times h instead of h³/12).
//! In-plane inertia is left out (in-plane modes are far higher), so u and
//! v are eliminated exactly for each w by static condensation:
//! K = K_ww − K_wr·K_rr⁺·K_rw, the pseudo-inverse ignoring in-plane
//! rigid motion.
//!
//! The arch: z₀ = H·(1 − s²)·(1 − η²)^1.2 with s = x/(half-width at y)
//! and η = 2y/length − 1: highest in the middle, down to the rim at the
//! edge. An invented shape of our own, close enough to a carved plate's
//! arching to show what arching does.
//!
//! The in-plane displacements take polynomials six degrees higher than
//! the deflection's: with fewer, they cannot follow the bending without
//! stretching and the shell comes out too stiff (membrane locking; with
//! two degrees fewer the twisting mode of a violin top was 20 % high). With
//! six more, raising the deflection's degree from 14 to 16 moves the first
//! five modes by about 1 %.

use nalgebra::{DMatrix, SymmetricEigen};

use super::basis::PolynomialBasis;
use super::material::PlateMaterial;
use super::outline::Outline;

/// How many degrees higher the in-plane displacements' polynomials go
/// than the deflection's (see the module documentation).
const MEMBRANE_EXTRA_DEGREE: usize = 6;

/// Height of the arch above the rim at the middle of the plate, mm.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Arch {
    /// mm (a violin top is arched about 15–16 mm; common practice, no source).
    pub height_mm: f64,
}

impl Arch {
    /// z₀ at (x, y), mm.
    pub fn height_at(&self, outline: &Outline, x_mm: f64, y_mm: f64) -> f64 {
        let half = outline.half_width_mm(y_mm);
        if half <= 0.0 {
            return 0.0;
        }
        let s = (x_mm / half).clamp(-1.0, 1.0);
        let eta = (2.0 * y_mm / outline.length_mm() - 1.0).clamp(-1.0, 1.0);
        self.height_mm * (1.0 - s * s) * (1.0 - eta * eta).powf(1.2)
    }

    /// (z₀,ₓ, z₀,ᵧ) at (x, y) by central differences.
    fn slopes(&self, outline: &Outline, x_mm: f64, y_mm: f64) -> (f64, f64) {
        let h = 1e-3;
        let dx = (self.height_at(outline, x_mm + h, y_mm)
            - self.height_at(outline, x_mm - h, y_mm))
            / (2.0 * h);
        let dy = (self.height_at(outline, x_mm, y_mm + h)
            - self.height_at(outline, x_mm, y_mm - h))
            / (2.0 * h);
        (dx, dy)
    }
}

/// The condensed membrane stiffness the arch adds to the bending stiffness
/// matrix of `basis` (SI units, like the bending matrix), for a plate of
/// `thickness_mm(x, y)`.
pub(crate) fn membrane_stiffness(
    basis: &PolynomialBasis,
    outline: &Outline,
    material: &PlateMaterial,
    thickness_mm: &dyn Fn(f64, f64) -> f64,
    arch: &Arch,
    degree: usize,
) -> DMatrix<f64> {
    let membrane_degree = degree + MEMBRANE_EXTRA_DEGREE;
    let in_plane = PolynomialBasis::over_outline(outline, membrane_degree, false);
    let (nw, nm) = (basis.len(), in_plane.len());
    let unknowns = nw + 2 * nm;
    let points = outline.quadrature(degree + 2);
    let mut g = DMatrix::<f64>::zeros(3 * points.len(), unknowns);
    let (mut w_values, mut m_values) = (Vec::new(), Vec::new());
    for (q, point) in points.iter().enumerate() {
        let h_mm = thickness_mm(point.x_mm, point.y_mm);
        let d = material.bending_stiffness(h_mm);
        let scale = 12.0 / (h_mm * 1e-3).powi(2);
        let (a11, a12, a22, a66) = (
            d.across * scale,
            d.coupling * scale,
            d.along * scale,
            d.twist * scale,
        );
        // Cholesky of [[A₁₁, A₁₂, 0], [A₁₂, A₂₂, 0], [0, 0, A₆₆]].
        let l11 = a11.sqrt();
        let l21 = a12 / l11;
        let l22 = (a22 - l21 * l21).max(0.0).sqrt();
        let l33 = a66.sqrt();
        let root_w = (point.weight_mm2 * 1e-6).sqrt();
        let (zx, zy) = arch.slopes(outline, point.x_mm, point.y_mm);
        basis.evaluate(point.x_mm, point.y_mm, &mut w_values);
        in_plane.evaluate(point.x_mm, point.y_mm, &mut m_values);
        // Strain rows over [w | u | v], derivatives per metre.
        let mut strain = [
            vec![0.0; unknowns],
            vec![0.0; unknowns],
            vec![0.0; unknowns],
        ];
        for (k, f) in w_values.iter().enumerate() {
            let (fx, fy) = (f.dx * 1e3, f.dy * 1e3);
            strain[0][k] = zx * fx;
            strain[1][k] = zy * fy;
            strain[2][k] = zx * fy + zy * fx;
        }
        for (k, f) in m_values.iter().enumerate() {
            let (fx, fy) = (f.dx * 1e3, f.dy * 1e3);
            strain[0][nw + k] = fx;
            strain[2][nw + k] = fy;
            strain[1][nw + nm + k] = fy;
            strain[2][nw + nm + k] += fx;
        }
        for c in 0..unknowns {
            // Lᵀ·strain: row 0 = l11·εₓ + l21·εᵧ, row 1 = l22·εᵧ, row 2 = l33·γ.
            g[(3 * q, c)] = root_w * (l11 * strain[0][c] + l21 * strain[1][c]);
            g[(3 * q + 1, c)] = root_w * l22 * strain[1][c];
            g[(3 * q + 2, c)] = root_w * l33 * strain[2][c];
        }
    }
    let full = g.tr_mul(&g);
    let k_ww = full.view((0, 0), (nw, nw)).into_owned();
    let k_wr = full.view((0, nw), (nw, 2 * nm)).into_owned();
    let k_rr = full.view((nw, nw), (2 * nm, 2 * nm)).into_owned();
    let eigen = SymmetricEigen::new(k_rr);
    let largest = eigen.eigenvalues.iter().cloned().fold(0.0, f64::max);
    let mut pseudo_inverse = DMatrix::<f64>::zeros(2 * nm, 2 * nm);
    for (i, &lambda) in eigen.eigenvalues.iter().enumerate() {
        if lambda > 1e-10 * largest {
            let v = eigen.eigenvectors.column(i);
            pseudo_inverse += (v * v.transpose()) / lambda;
        }
    }
    let condensed = &k_ww - &k_wr * pseudo_inverse * k_wr.transpose();
    (&condensed + condensed.transpose()) * 0.5
}
