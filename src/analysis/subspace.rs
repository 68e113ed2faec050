//! Poles of one decimated band: the matrix pencil of Hua & Sarkar (IEEE
//! Trans. ASSP 38(5), 1990, "Matrix pencil method for estimating
//! parameters of exponentially damped/undamped sinusoids in noise") on a
//! sequence of at most `bands::MAX_SAMPLES` complex samples, so every matrix
//! here has a fixed, small size.
//!
//! 1. The Hankel matrix of the sequence with pencil parameter L = N/3 (Hua
//!    & Sarkar find the noise sensitivity least for L between N/3 and N/2),
//!    and its singular values.
//! 2. Model order: the singular values that stand above what the band's
//!    noise alone would give. An R×C matrix of white noise of variance σ²
//!    has its largest singular value near σ(√R + √C) (the Marchenko–Pastur
//!    edge; Z. D. Bai and J. W. Silverstein, Spectral Analysis of Large
//!    Dimensional Random Matrices, 2010); a singular value counts as signal
//!    when it is [`SIGNAL_OVER_NOISE`] times that. A real strike is not an
//!    exact sum of exponentials (contact, radiation, a decay that bends), so
//!    its misfit is also a floor: singular values more than
//!    [`DYNAMIC_RANGE_DB`] under the largest are not resolved either.
//!    (30 dB: tapwright's choice, no source; the listed modes of a tap span
//!    20 dB, and a pole further down in a band is mostly the band model
//!    bending a decay, which also costs time in the refit.)
//! 3. The poles: eigenvalues of W₂·W₁⁺, W the top rows of Vᴴ (the
//!    SVD-truncated pencil).

use nalgebra::DMatrix;
use rustfft::num_complex::Complex64;

/// A singular value is signal when it is this many times the largest one
/// noise alone would give (Hua & Sarkar's threshold test with the noise
/// level known).
const SIGNAL_OVER_NOISE: f64 = 2.0;
/// Singular values this far under the largest of the band are left out:
/// the band's own model error (see the module notes), not new poles.
const DYNAMIC_RANGE_DB: f64 = 30.0;
/// Largest model order of one band.
pub(super) const MAX_ORDER: usize = 6;

/// Poles (decimated) of the sequence `y`, whose noise has variance
/// `noise_var` per sample. Empty when nothing stands above the noise.
pub(super) fn pencil_poles(y: &[Complex64], noise_var: f64) -> Vec<Complex64> {
    let n = y.len();
    let pencil_len = n / 3;
    if pencil_len < 4 {
        return Vec::new();
    }
    let (rows, columns) = (n - pencil_len, pencil_len + 1);
    let hankel = DMatrix::from_fn(rows, columns, |i, j| y[i + j]);
    let Some(svd) = hankel.try_svd(false, true, 1e-13, 200) else {
        return Vec::new();
    };
    let Some(v_t) = svd.v_t else {
        return Vec::new();
    };
    let mut order_index: Vec<usize> = (0..svd.singular_values.len()).collect();
    order_index.sort_by(|&a, &b| svd.singular_values[b].total_cmp(&svd.singular_values[a]));
    let singular: Vec<f64> = order_index
        .iter()
        .map(|&i| svd.singular_values[i])
        .collect();
    let order = signal_order(&singular, noise_var, rows, columns).min(columns - 2);
    if order == 0 {
        return Vec::new();
    }
    let v_h = DMatrix::from_fn(order, columns, |i, j| v_t[(order_index[i], j)]);
    shifted_eigenvalues(&v_h, columns)
}

/// Singular values above the noise bound and within the dynamic range,
/// at most [`MAX_ORDER`].
fn signal_order(singular: &[f64], noise_var: f64, rows: usize, columns: usize) -> usize {
    let largest = singular.first().copied().unwrap_or(0.0);
    let noise_edge = noise_var.max(0.0).sqrt() * ((rows as f64).sqrt() + (columns as f64).sqrt());
    let level = (SIGNAL_OVER_NOISE * noise_edge)
        .max(largest * 10f64.powf(-DYNAMIC_RANGE_DB / 20.0))
        .max(1e-300);
    singular
        .iter()
        .take_while(|&&s| s > level)
        .count()
        .min(MAX_ORDER)
}

/// Eigenvalues of W₂·W₁⁺ with W = the given rows of Vᴴ, W₁ without its
/// last column and W₂ without its first (Hua & Sarkar 1990).
fn shifted_eigenvalues(v_h: &DMatrix<Complex64>, columns: usize) -> Vec<Complex64> {
    let w1 = v_h.columns(0, columns - 1);
    let w2 = v_h.columns(1, columns - 1);
    let gram = w1 * w1.adjoint();
    let Some(gram_inverse) = gram.try_inverse() else {
        return Vec::new();
    };
    let shifted = w2 * w1.adjoint() * gram_inverse;
    nalgebra::Schur::try_new(shifted, 1e-14, 500)
        .and_then(|schur| schur.eigenvalues())
        .map(|values| values.iter().copied().collect())
        .unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::varpro::test_sequence as sequence;

    #[test]
    fn finds_two_close_poles_and_no_more() {
        let truth = [
            (Complex64::from_polar(0.97, 0.30), Complex64::new(1.0, 0.0)),
            (Complex64::from_polar(0.96, 0.42), Complex64::new(0.0, 0.7)),
        ];
        let y = sequence(&truth, 64, 1e-3, 1);
        let mut found = pencil_poles(&y, 1e-6);
        found.sort_by(|a, b| a.arg().total_cmp(&b.arg()));
        assert_eq!(found.len(), 2, "{found:?}");
        for (f, (w, _)) in found.iter().zip(&truth) {
            assert!((f - w).norm() < 1e-3, "{f} vs {w}");
        }
    }

    #[test]
    fn noise_alone_has_no_poles() {
        let y = sequence(&[], 64, 1.0, 2);
        assert!(pencil_poles(&y, 1.0).is_empty());
    }
}
