//! Legendre polynomials on [−1, 1] with their first two derivatives, scaled
//! to unit norm (√((2n+1)/2)·Pₙ), and Gauss–Legendre quadrature rules. The
//! plate model and the fitted surfaces are both built on products of these:
//! on a box they are orthonormal, which keeps the Ritz matrices and the
//! least-squares fits well conditioned at high degree.

/// Values and first and second derivatives of the normalised Legendre
/// polynomials of degree 0 ..= `degree` at `t`.
#[derive(Clone, Debug, Default)]
pub(crate) struct LegendreTable {
    pub value: Vec<f64>,
    pub first: Vec<f64>,
    pub second: Vec<f64>,
}

impl LegendreTable {
    /// Fills the table for degrees 0 ..= `degree` at `t` (Bonnet's
    /// recurrence and its derivatives: P′ₙ₊₁ = P′ₙ₋₁ + (2n+1)Pₙ,
    /// P″ₙ₊₁ = P″ₙ₋₁ + (2n+1)P′ₙ).
    pub fn fill(&mut self, t: f64, degree: usize) {
        let n = degree + 1;
        for column in [&mut self.value, &mut self.first, &mut self.second] {
            column.clear();
            column.resize(n, 0.0);
        }
        self.value[0] = 1.0;
        if n > 1 {
            self.value[1] = t;
            self.first[1] = 1.0;
        }
        for k in 1..n.saturating_sub(1) {
            let kf = k as f64;
            self.value[k + 1] =
                ((2.0 * kf + 1.0) * t * self.value[k] - kf * self.value[k - 1]) / (kf + 1.0);
            self.first[k + 1] = self.first[k - 1] + (2.0 * kf + 1.0) * self.value[k];
            self.second[k + 1] = self.second[k - 1] + (2.0 * kf + 1.0) * self.first[k];
        }
        for k in 0..n {
            let scale = ((2 * k + 1) as f64 / 2.0).sqrt();
            self.value[k] *= scale;
            self.first[k] *= scale;
            self.second[k] *= scale;
        }
    }
}

/// The `n`-point Gauss–Legendre rule on [−1, 1]: nodes (ascending) and
/// weights. Exact for polynomials of degree up to 2n − 1.
pub(crate) fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut nodes = vec![0.0; n];
    let mut weights = vec![0.0; n];
    for i in 0..n {
        // Newton's method on Pₙ from the usual cosine guess.
        let mut t = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut derivative = 1.0;
        for _ in 0..100 {
            let (p, dp) = legendre_with_derivative(t, n);
            derivative = dp;
            let step = p / dp;
            t -= step;
            if step.abs() < 1e-15 {
                break;
            }
        }
        let (_, dp) = legendre_with_derivative(t, n);
        if dp.is_finite() {
            derivative = dp;
        }
        nodes[n - 1 - i] = t;
        weights[n - 1 - i] = 2.0 / ((1.0 - t * t) * derivative * derivative);
    }
    (nodes, weights)
}

/// The plain Pₙ(t) and P′ₙ(t).
fn legendre_with_derivative(t: f64, n: usize) -> (f64, f64) {
    let (mut previous, mut current) = (1.0, t);
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 1..n {
        let kf = k as f64;
        let next = ((2.0 * kf + 1.0) * t * current - kf * previous) / (kf + 1.0);
        previous = current;
        current = next;
    }
    let derivative = n as f64 * (t * current - previous) / (t * t - 1.0);
    (current, derivative)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_rule_is_exact_for_its_degree() {
        // ∫₋₁¹ t^k dt = 2/(k+1) for even k, 0 for odd k (common practice, no source).
        for n in [1, 2, 5, 12, 30] {
            let (nodes, weights) = gauss_legendre(n);
            for k in 0..2 * n {
                let sum: f64 = nodes
                    .iter()
                    .zip(&weights)
                    .map(|(t, w)| w * t.powi(k as i32))
                    .sum();
                let exact = if k % 2 == 0 {
                    2.0 / (k as f64 + 1.0)
                } else {
                    0.0
                };
                assert!((sum - exact).abs() < 1e-12, "n {n} k {k}: {sum} vs {exact}");
            }
        }
    }

    #[test]
    fn normalised_legendre_are_orthonormal_and_derivatives_match_differences() {
        let degree = 9;
        let (nodes, weights) = gauss_legendre(12);
        let mut table = LegendreTable::default();
        let mut gram = vec![0.0; (degree + 1) * (degree + 1)];
        for (t, w) in nodes.iter().zip(&weights) {
            table.fill(*t, degree);
            for i in 0..=degree {
                for j in 0..=degree {
                    gram[i * (degree + 1) + j] += w * table.value[i] * table.value[j];
                }
            }
        }
        for i in 0..=degree {
            for j in 0..=degree {
                let expected = if i == j { 1.0 } else { 0.0 };
                assert!((gram[i * (degree + 1) + j] - expected).abs() < 1e-12);
            }
        }
        let (t, h) = (0.37, 1e-5);
        let (mut low, mut high) = (LegendreTable::default(), LegendreTable::default());
        table.fill(t, degree);
        low.fill(t - h, degree);
        high.fill(t + h, degree);
        for k in 0..=degree {
            let first = (high.value[k] - low.value[k]) / (2.0 * h);
            let second = (high.first[k] - low.first[k]) / (2.0 * h);
            assert!((first - table.first[k]).abs() < 1e-6 * (1.0 + first.abs()));
            assert!((second - table.second[k]).abs() < 1e-5 * (1.0 + second.abs()));
        }
    }
}
