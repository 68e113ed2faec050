//! Poles of one decimated band: the matrix pencil of Hua & Sarkar (IEEE
//! Trans. ASSP 38(5), 1990, "Matrix pencil method for estimating
//! parameters of exponentially damped/undamped sinusoids in noise") on a
//! sequence of at most `bands::MAX_SAMPLES` complex samples, so every matrix
//! here has a fixed, small size.
//!
//! 1. The Hankel matrix H of the sequence with a fixed pencil parameter
//!    L = [`PENCIL_LEN`] (the matrix is (N − L) × (L + 1)), and its
//!    singular values and right singular vectors, from the eigen-
//!    decomposition of the small Gram matrix HᴴH ((L + 1)², built in
//!    O(N·L) by its Toeplitz-like recursion): the singular values are the
//!    square roots of its eigenvalues, the right singular vectors its
//!    eigenvectors. Hua & Sarkar find the noise sensitivity least for L
//!    between N/3 and N/2; a smaller L costs some of the initial estimate's
//!    precision, which the variable-projection refit (`varpro`) restores,
//!    and keeps this stage's cost fixed and small whatever the band.
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

use nalgebra::{DMatrix, SMatrix, SymmetricEigen};
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
/// Pencil parameter L: the Hankel matrix has L + 1 columns. Three times
/// [`MAX_ORDER`] leaves room for every pole and twice as many noise
/// directions to tell them from (tapwright's choice, see the module notes).
const PENCIL_LEN: usize = 3 * MAX_ORDER;
const COLUMNS: usize = PENCIL_LEN + 1;
/// Shortest sequence the pencil takes: at least two rows per pole beyond
/// the pencil.
pub(super) const MIN_PENCIL_SAMPLES: usize = PENCIL_LEN + 2 * MAX_ORDER;

/// Poles (decimated) of the sequence `y`, whose noise has variance
/// `noise_var` per sample. Empty when nothing stands above the noise.
pub(super) fn pencil_poles(y: &[Complex64], noise_var: f64) -> Vec<Complex64> {
    let n = y.len();
    if n < MIN_PENCIL_SAMPLES {
        return Vec::new();
    }
    let rows = n - PENCIL_LEN;
    let gram = hankel_gram(y, rows);
    let Some(eigen) = SymmetricEigen::try_new(gram, 1e-14, 500) else {
        return Vec::new();
    };
    let mut order_index: Vec<usize> = (0..COLUMNS).collect();
    order_index.sort_by(|&a, &b| eigen.eigenvalues[b].total_cmp(&eigen.eigenvalues[a]));
    let singular: Vec<f64> = order_index
        .iter()
        .map(|&i| eigen.eigenvalues[i].max(0.0).sqrt())
        .collect();
    let order = signal_order(&singular, noise_var, rows, COLUMNS).min(COLUMNS - 2);
    if order == 0 {
        return Vec::new();
    }
    // Row i of Vᴴ is the conjugate of the i-th eigenvector.
    let v_h = DMatrix::from_fn(order, COLUMNS, |i, j| {
        eigen.eigenvectors[(j, order_index[i])].conj()
    });
    shifted_eigenvalues(&v_h, COLUMNS)
}

/// HᴴH for the Hankel matrix H[r][c] = y[r + c] with `rows` rows:
/// G[i][j] = Σᵣ ȳ[r+i]·y[r+j], each entry from the one above-left of it
/// by one term out and one in.
fn hankel_gram(y: &[Complex64], rows: usize) -> SMatrix<Complex64, COLUMNS, COLUMNS> {
    let mut gram = SMatrix::<Complex64, COLUMNS, COLUMNS>::zeros();
    for j in 0..COLUMNS {
        gram[(0, j)] = (0..rows).map(|r| y[r].conj() * y[r + j]).sum();
    }
    for i in 1..COLUMNS {
        for j in i..COLUMNS {
            gram[(i, j)] = gram[(i - 1, j - 1)] - y[i - 1].conj() * y[j - 1]
                + y[i - 1 + rows].conj() * y[j - 1 + rows];
        }
    }
    for i in 0..COLUMNS {
        for j in 0..i {
            gram[(i, j)] = gram[(j, i)].conj();
        }
    }
    gram
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
