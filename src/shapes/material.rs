//! The elastic constants and density of a plate, shared by the flat plate
//! model (`plate`), its arched form (`arching`) and the carving guide.

use super::basis::Derivatives;

/// Elastic constants and density of a plate's material. For wood, "along"
/// is along the grain (L) and "across" the radial direction (R) of a
/// quarter-sawn plate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlateMaterial {
    /// Density, kg/m³.
    pub density_kg_m3: f64,
    /// Young's modulus along the plate (y), Pa.
    pub modulus_along_pa: f64,
    /// Young's modulus across the plate (x), Pa.
    pub modulus_across_pa: f64,
    /// In-plane shear modulus, Pa.
    pub shear_modulus_pa: f64,
    /// Poisson's ratio for a stretch along: the contraction across per unit
    /// stretch along (ν_LR for wood).
    pub poisson_along: f64,
}

impl PlateMaterial {
    /// An isotropic material (steel, aluminium, a plastic test plate).
    pub fn isotropic(density_kg_m3: f64, modulus_pa: f64, poisson: f64) -> Self {
        Self {
            density_kg_m3,
            modulus_along_pa: modulus_pa,
            modulus_across_pa: modulus_pa,
            shear_modulus_pa: modulus_pa / (2.0 * (1.0 + poisson)),
            poisson_along: poisson,
        }
    }

    /// Quarter-sawn spruce of ordinary quality: 420 kg/m³, E_L 11 GPa,
    /// E_R 0.85 GPa, G_LR 0.72 GPa, ν_LR 0.37 (from memory, of the order of
    /// the Wood Handbook's spruces; invented, not a measured sample).
    pub fn typical_spruce() -> Self {
        Self {
            density_kg_m3: 420.0,
            modulus_along_pa: 11.0e9,
            modulus_across_pa: 0.85e9,
            shear_modulus_pa: 0.72e9,
            poisson_along: 0.37,
        }
    }

    /// Bending stiffnesses of a plate of this material `thickness_mm` thick.
    pub fn bending_stiffness(&self, thickness_mm: f64) -> BendingStiffness {
        let h = thickness_mm * 1e-3;
        let poisson_across = self.poisson_along * self.modulus_across_pa / self.modulus_along_pa;
        let denominator = 12.0 * (1.0 - self.poisson_along * poisson_across);
        let h3 = h * h * h;
        let across = self.modulus_across_pa * h3 / denominator;
        BendingStiffness {
            along: self.modulus_along_pa * h3 / denominator,
            across,
            coupling: self.poisson_along * across,
            twist: self.shear_modulus_pa * h3 / 12.0,
        }
    }
}

/// The bending stiffnesses of a thin orthotropic plate, N·m: D₂₂ (along),
/// D₁₁ (across), D₁₂ (coupling) and D₆₆ (twist). Only their ratios matter
/// to the carving guide.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BendingStiffness {
    /// D₂₂, bending along (y).
    pub along: f64,
    /// D₁₁, bending across (x).
    pub across: f64,
    /// D₁₂ = ν_LR·D₁₁.
    pub coupling: f64,
    /// D₆₆ = G·h³/12.
    pub twist: f64,
}

impl BendingStiffness {
    /// Strain energy per unit area, ½(D₁₁w,ₓₓ² + 2D₁₂w,ₓₓw,ᵧᵧ + D₂₂w,ᵧᵧ²
    /// + 4D₆₆w,ₓᵧ²), in the units of the curvatures given.
    pub fn energy_density(&self, d: &Derivatives) -> f64 {
        0.5 * (self.across * d.dxx * d.dxx
            + 2.0 * self.coupling * d.dxx * d.dyy
            + self.along * d.dyy * d.dyy
            + 4.0 * self.twist * d.dxy * d.dxy)
    }

    /// The factor L with L·Lᵀ = [[D₁₁, D₁₂, 0], [D₁₂, D₂₂, 0], [0, 0, D₆₆]]
    /// (row-major lower triangle), so the energy is a sum of squares.
    pub(super) fn cholesky(&self) -> [[f64; 3]; 3] {
        let l11 = self.across.sqrt();
        let l21 = self.coupling / l11;
        let l22 = (self.along - l21 * l21).max(0.0).sqrt();
        [
            [l11, 0.0, 0.0],
            [l21, l22, 0.0],
            [0.0, 0.0, self.twist.sqrt()],
        ]
    }
}
