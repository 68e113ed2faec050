//! Small dense solvers for normal equations (at most a few dozen
//! unknowns), by Cholesky factorisation: real symmetric and complex
//! Hermitian.

use rustfft::num_complex::Complex64;

/// Solves A·x = b for symmetric positive-definite A (row-major n×n).
/// None if A is not positive definite.
pub fn solve_symmetric(a: &[f64], b: &[f64], n: usize) -> Option<Vec<f64>> {
    if a.len() != n * n || b.len() != n {
        return None;
    }
    let mut l = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..=i {
            let mut sum = a[i * n + j];
            for k in 0..j {
                sum -= l[i * n + k] * l[j * n + k];
            }
            if i == j {
                if sum.is_nan() || sum <= 0.0 || !sum.is_finite() {
                    return None;
                }
                l[i * n + i] = sum.sqrt();
            } else {
                l[i * n + j] = sum / l[j * n + j];
            }
        }
    }
    let mut y = vec![0.0; n];
    for i in 0..n {
        let sum: f64 = (0..i).map(|k| l[i * n + k] * y[k]).sum();
        y[i] = (b[i] - sum) / l[i * n + i];
    }
    let mut x = vec![0.0; n];
    for i in (0..n).rev() {
        let sum: f64 = (i + 1..n).map(|k| l[k * n + i] * x[k]).sum();
        x[i] = (y[i] - sum) / l[i * n + i];
    }
    Some(x)
}

/// Solves A·x = b for Hermitian positive-definite A (row-major n×n).
/// None if A is not positive definite.
pub fn solve_hermitian(a: &[Complex64], b: &[Complex64], n: usize) -> Option<Vec<Complex64>> {
    if a.len() != n * n || b.len() != n {
        return None;
    }
    let zero = Complex64::new(0.0, 0.0);
    let mut l = vec![zero; n * n];
    for i in 0..n {
        for j in 0..=i {
            let mut sum = a[i * n + j];
            for k in 0..j {
                sum -= l[i * n + k] * l[j * n + k].conj();
            }
            if i == j {
                if !(sum.re > 0.0 && sum.re.is_finite()) {
                    return None;
                }
                l[i * n + i] = Complex64::new(sum.re.sqrt(), 0.0);
            } else {
                l[i * n + j] = sum / l[j * n + j].re;
            }
        }
    }
    let mut y = vec![zero; n];
    for i in 0..n {
        let sum: Complex64 = (0..i).map(|k| l[i * n + k] * y[k]).sum();
        y[i] = (b[i] - sum) / l[i * n + i].re;
    }
    let mut x = vec![zero; n];
    for i in (0..n).rev() {
        let sum: Complex64 = (i + 1..n).map(|k| l[k * n + i].conj() * x[k]).sum();
        x[i] = (y[i] - sum) / l[i * n + i].re;
    }
    Some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solves_small_system() {
        let a = [4.0, 2.0, 0.6, 2.0, 5.0, 1.0, 0.6, 1.0, 3.0];
        let x_true = [1.0, -2.0, 0.5];
        let b: Vec<f64> = (0..3)
            .map(|i| (0..3).map(|j| a[i * 3 + j] * x_true[j]).sum())
            .collect();
        let x = solve_symmetric(&a, &b, 3).expect("positive definite");
        for (got, want) in x.iter().zip(x_true) {
            assert!((got - want).abs() < 1e-12);
        }
        assert!(solve_symmetric(&[1.0, 2.0, 2.0, 1.0], &[1.0, 1.0], 2).is_none());
    }

    #[test]
    fn solves_small_hermitian_system() {
        let c = |re: f64, im: f64| Complex64::new(re, im);
        let a = [
            c(4.0, 0.0),
            c(1.0, 2.0),
            c(0.5, -0.3),
            c(1.0, -2.0),
            c(6.0, 0.0),
            c(0.0, 1.0),
            c(0.5, 0.3),
            c(0.0, -1.0),
            c(3.0, 0.0),
        ];
        let x_true = [c(1.0, -1.0), c(-2.0, 0.5), c(0.25, 3.0)];
        let b: Vec<Complex64> = (0..3)
            .map(|i| (0..3).map(|j| a[i * 3 + j] * x_true[j]).sum())
            .collect();
        let x = solve_hermitian(&a, &b, 3).expect("positive definite");
        for (got, want) in x.iter().zip(x_true) {
            assert!((got - want).norm() < 1e-12);
        }
    }
}
