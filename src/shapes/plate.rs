//! A thin (Kirchhoff) plate over an outline, isotropic or orthotropic, by
//! the Rayleigh–Ritz method: the deflection is a sum of polynomial
//! functions ([`super::basis`]), the strain and kinetic energies are
//! integrated over the outline numerically, and the natural frequencies
//! and mode shapes come from the generalised eigenproblem K·c = ω²·M·c.
//!
//! Strain energy U = ½∫(D₁₁w,ₓₓ² + 2D₁₂w,ₓₓw,ᵧᵧ + D₂₂w,ᵧᵧ² + 4D₆₆w,ₓᵧ²) dA,
//! kinetic energy T = ½ω²∫ρh·w² dA, with x across and y along the plate
//! (along the grain for a wooden plate). Free edges need no constraint
//! (they are the natural boundary conditions of the energy); a simply
//! supported rectangle multiplies every function by (1 − ξ²)(1 − η²).
//! The thickness may vary over the plate (D ∝ h³, mass ∝ h), which the
//! tests use to check the carving guide against a re-solved plate.
//!
//! The model makes the synthetic roving taps of the tests and the demo set;
//! the measuring path never uses it.

use nalgebra::{DMatrix, SymmetricEigen};

use super::arching::{membrane_stiffness, Arch};
use super::basis::{Derivatives, PolynomialBasis};
pub use super::material::{BendingStiffness, PlateMaterial};
use super::outline::{Outline, OutlineShape};
use super::surface::ShapeSurface;

/// How the plate is held at its edges.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Edges {
    /// Free all round (a plate held lightly at a nodal point and tapped).
    Free,
    /// Simply supported all round; rectangles only (a check of the model).
    SimplySupported,
}

/// Why the plate model cannot be solved.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum PlateError {
    /// Simply supported edges are only modelled on a rectangle.
    #[error("simply supported edges are only modelled on a rectangle, not a {0} outline")]
    SupportNeedsRectangle(&'static str),
    /// The polynomial degree is outside what the model supports.
    #[error("the plate model's degree {0} is outside 4 to 24")]
    Degree(usize),
    /// A material constant or a thickness is not a positive number.
    #[error("the plate's {0} must be a positive number")]
    NotPositive(&'static str),
    /// The eigenproblem gave nothing usable.
    #[error("the plate model found no elastic modes")]
    NoModes,
}

/// One natural mode of the model: frequency and shape (mass-normalised:
/// ∫ρh·w² dA = 1 kg).
#[derive(Clone, Debug, PartialEq)]
pub struct PlateMode {
    /// Natural frequency, Hz.
    pub frequency_hz: f64,
    coefficients: Vec<f64>,
}

/// The solved plate: its elastic modes, lowest first.
#[derive(Clone, Debug, PartialEq)]
pub struct PlateModel {
    basis: PolynomialBasis,
    modes: Vec<PlateMode>,
}

/// Rigid-body motions of a free plate (heave and two rotations): the
/// lowest eigenvalues, dropped.
const FREE_RIGID_MODES: usize = 3;

impl PlateModel {
    /// Solves the plate of `outline`, `material` and thickness
    /// `thickness_mm(x_mm, y_mm)` with polynomials up to `degree` (12–16
    /// gives the first ten modes of a violin plate to well under 1 %).
    pub fn solve(
        outline: &Outline,
        material: &PlateMaterial,
        thickness_mm: &dyn Fn(f64, f64) -> f64,
        edges: Edges,
        degree: usize,
    ) -> Result<Self, PlateError> {
        Self::solve_arched(outline, material, thickness_mm, None, edges, degree)
    }

    /// [`PlateModel::solve`] for a plate arched by `arch` (a shallow shell:
    /// see `arching`); `None` is the flat plate.
    pub fn solve_arched(
        outline: &Outline,
        material: &PlateMaterial,
        thickness_mm: &dyn Fn(f64, f64) -> f64,
        arch: Option<&Arch>,
        edges: Edges,
        degree: usize,
    ) -> Result<Self, PlateError> {
        check_material(material)?;
        if !(4..=24).contains(&degree) {
            return Err(PlateError::Degree(degree));
        }
        let supported = edges == Edges::SimplySupported;
        if supported && !matches!(outline.shape(), OutlineShape::Rectangle { .. }) {
            return Err(PlateError::SupportNeedsRectangle(
                outline.shape().kind_name(),
            ));
        }
        let basis = PolynomialBasis::over_outline(outline, degree, supported);
        let (mut stiffness, mass) =
            energy_matrices(&basis, outline, material, thickness_mm, degree)?;
        if let Some(arch) = arch.filter(|a| a.height_mm != 0.0) {
            if !arch.height_mm.is_finite() {
                return Err(PlateError::NotPositive("arch height"));
            }
            stiffness += membrane_stiffness(&basis, outline, material, thickness_mm, arch, degree);
        }
        let rigid = if supported { 0 } else { FREE_RIGID_MODES };
        let modes = eigenmodes(&stiffness, &mass, rigid);
        if modes.is_empty() {
            return Err(PlateError::NoModes);
        }
        Ok(Self { basis, modes })
    }

    /// The elastic modes, lowest first. Only about the lower third of them
    /// is converged.
    pub fn modes(&self) -> &[PlateMode] {
        &self.modes
    }

    /// Mode `mode`'s deflection and its derivatives at a point (mm), or
    /// `None` for a mode that does not exist.
    pub fn derivatives(&self, mode: usize, x_mm: f64, y_mm: f64) -> Option<Derivatives> {
        let mode = self.modes.get(mode)?;
        Some(self.basis.combine(&mode.coefficients, x_mm, y_mm))
    }

    /// Mode `mode` as a surface (for the carving guide and pictures), or
    /// `None` for a mode that does not exist.
    pub fn mode_surface(&self, mode: usize) -> Option<ModeSurface<'_>> {
        (mode < self.modes.len()).then_some(ModeSurface { model: self, mode })
    }

    /// Mode `mode`'s deflection at a point (mm); 0 for a mode that does not exist.
    pub fn shape_at(&self, mode: usize, x_mm: f64, y_mm: f64) -> f64 {
        self.derivatives(mode, x_mm, y_mm).map_or(0.0, |d| d.value)
    }
}

/// One mode of a solved plate, as a surface.
#[derive(Clone, Copy, Debug)]
pub struct ModeSurface<'a> {
    model: &'a PlateModel,
    mode: usize,
}

impl ShapeSurface for ModeSurface<'_> {
    fn derivatives_at(&self, x_mm: f64, y_mm: f64) -> Derivatives {
        self.model
            .derivatives(self.mode, x_mm, y_mm)
            .unwrap_or_default()
    }
}

fn check_material(material: &PlateMaterial) -> Result<(), PlateError> {
    let positive = |v: f64| v.is_finite() && v > 0.0;
    for (what, value) in [
        ("density", material.density_kg_m3),
        ("modulus along", material.modulus_along_pa),
        ("modulus across", material.modulus_across_pa),
        ("shear modulus", material.shear_modulus_pa),
    ] {
        if !positive(value) {
            return Err(PlateError::NotPositive(what));
        }
    }
    let poisson_across =
        material.poisson_along * material.modulus_across_pa / material.modulus_along_pa;
    if !(material.poisson_along >= 0.0 && material.poisson_along * poisson_across < 1.0) {
        return Err(PlateError::NotPositive(
            "Poisson's ratio (0 up to stable values)",
        ));
    }
    Ok(())
}

/// The stiffness and mass matrices (SI units: K in N/m per unit
/// coefficient², M in kg), assembled as GᵀG and HᵀH from the rows
/// √w·Lᵀ·(w,ₓₓ, w,ᵧᵧ, 2w,ₓᵧ) and √(w·ρh)·w of every integration point.
fn energy_matrices(
    basis: &PolynomialBasis,
    outline: &Outline,
    material: &PlateMaterial,
    thickness_mm: &dyn Fn(f64, f64) -> f64,
    degree: usize,
) -> Result<(DMatrix<f64>, DMatrix<f64>), PlateError> {
    let points = outline.quadrature(degree + 2);
    let n = basis.len();
    let mut g = DMatrix::<f64>::zeros(3 * points.len(), n);
    let mut h = DMatrix::<f64>::zeros(points.len(), n);
    let mut values = Vec::with_capacity(n);
    for (q, point) in points.iter().enumerate() {
        let thickness = thickness_mm(point.x_mm, point.y_mm);
        if !(thickness.is_finite() && thickness > 0.0) {
            return Err(PlateError::NotPositive("thickness"));
        }
        let l = material.bending_stiffness(thickness).cholesky();
        // Curvatures per metre (×1e6 from per mm²), area in m² (×1e-6).
        let root_w = (point.weight_mm2 * 1e-6).sqrt() * 1e6;
        let root_m = (point.weight_mm2 * 1e-6 * material.density_kg_m3 * thickness * 1e-3).sqrt();
        basis.evaluate(point.x_mm, point.y_mm, &mut values);
        for (k, d) in values.iter().enumerate() {
            let curvature = [d.dxx, d.dyy, 2.0 * d.dxy];
            for row in 0..3 {
                // (Lᵀ·curvature)[row] = Σᵢ L[i][row]·curvature[i].
                let entry: f64 = (0..3).map(|i| l[i][row] * curvature[i]).sum();
                g[(3 * q + row, k)] = root_w * entry;
            }
            h[(q, k)] = root_m * d.value;
        }
    }
    Ok((g.tr_mul(&g), h.tr_mul(&h)))
}

/// Solves K·c = λ·M·c through M's own eigenvectors (directions in which M
/// is numerically zero are dropped, so a near-dependent basis does no
/// harm), drops the `rigid` lowest (rigid-body) modes and returns the
/// elastic modes lowest first, mass-normalised.
fn eigenmodes(stiffness: &DMatrix<f64>, mass: &DMatrix<f64>, rigid: usize) -> Vec<PlateMode> {
    let mass_eigen = SymmetricEigen::new(mass.clone());
    let largest = mass_eigen.eigenvalues.iter().cloned().fold(0.0, f64::max);
    let kept: Vec<usize> = (0..mass.nrows())
        .filter(|&i| mass_eigen.eigenvalues[i] > 1e-13 * largest)
        .collect();
    let n = mass.nrows();
    let transform = DMatrix::from_fn(n, kept.len(), |row, col| {
        let i = kept[col];
        mass_eigen.eigenvectors[(row, i)] / mass_eigen.eigenvalues[i].sqrt()
    });
    let reduced = transform.tr_mul(&(stiffness * &transform));
    let reduced = (&reduced + reduced.transpose()) * 0.5;
    let eigen = SymmetricEigen::new(reduced);
    let mut order: Vec<usize> = (0..eigen.eigenvalues.len()).collect();
    order.sort_by(|&a, &b| eigen.eigenvalues[a].total_cmp(&eigen.eigenvalues[b]));
    let keep = (kept.len() / 2).max(1);
    order
        .into_iter()
        .skip(rigid)
        .take(keep)
        .filter(|&i| eigen.eigenvalues[i] > 0.0)
        .map(|i| {
            let coefficients = &transform * eigen.eigenvectors.column(i);
            PlateMode {
                frequency_hz: eigen.eigenvalues[i].sqrt() / (2.0 * std::f64::consts::PI),
                coefficients: coefficients.iter().copied().collect(),
            }
        })
        .collect()
}
