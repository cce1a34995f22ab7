//! Quadrature weights on the integrator's own nodes t₀, t₀ + h, …, t₀ + n·h, so that the
//! sensitivity integrals use exactly the points where the trajectory and its one-step
//! propagators are known (no interpolation between steps).
//!
//! Composite Simpson's rule when n is even; when n is odd, Simpson on the first n − 3
//! intervals and Simpson's 3/8 rule on the last three; the trapezoid for n = 1 (textbook
//! Newton–Cotes rules, e.g. Press et al. 2007, Numerical Recipes 3rd ed., §4.1). Both rules
//! are fourth order, matching RK4, so the quadrature does not limit the accuracy of MS.

/// Weights w₀..wₙ (n + 1 values) for ∫ over n equal intervals of width `h` (> 0).
pub fn node_weights(n: usize, h: f64) -> Vec<f64> {
    let mut w = vec![0.0; n + 1];
    match n {
        0 => {}
        1 => {
            w[0] = 0.5 * h;
            w[1] = 0.5 * h;
        }
        _ => {
            let simpson_end = if n % 2 == 0 { n } else { n - 3 };
            let mut k = 0;
            while k < simpson_end {
                w[k] += h / 3.0;
                w[k + 1] += 4.0 * h / 3.0;
                w[k + 2] += h / 3.0;
                k += 2;
            }
            if simpson_end < n {
                let s = simpson_end;
                let c = 3.0 * h / 8.0;
                w[s] += c;
                w[s + 1] += 3.0 * c;
                w[s + 2] += 3.0 * c;
                w[s + 3] += c;
            }
        }
    }
    w
}

#[cfg(test)]
mod tests {
    use super::*;

    fn integrate(n: usize, a: f64, b: f64, f: impl Fn(f64) -> f64) -> f64 {
        let h = (b - a) / n as f64;
        node_weights(n, h).iter().enumerate().map(|(k, w)| w * f(a + k as f64 * h)).sum()
    }

    /// Both rules integrate cubics exactly (textbook property of Simpson and 3/8 rules).
    #[test]
    fn cubics_are_exact_for_every_node_count() {
        let f = |t: f64| 2.0 - 3.0 * t + 0.5 * t * t + 1.25 * t * t * t;
        let exact = |t: f64| 2.0 * t - 1.5 * t * t + t.powi(3) / 6.0 + 1.25 * t.powi(4) / 4.0;
        for n in 2..12 {
            let got = integrate(n, 0.3, 2.1, f);
            let want = exact(2.1) - exact(0.3);
            assert!((got - want).abs() < 1e-12, "n = {n}: {got} vs {want}");
        }
        // One interval: the trapezoid, exact for lines.
        assert!((integrate(1, 0.0, 2.0, |t| 1.0 + t) - 4.0).abs() < 1e-15);
    }

    /// Observed order 4 on a smooth integrand (common practice: halving study).
    #[test]
    fn fourth_order_on_an_exponential() {
        let err = |n| (integrate(n, 0.0, 3.0, f64::exp) - (3f64.exp() - 1.0)).abs();
        for (n1, n2) in [(10usize, 20usize), (11, 23)] {
            let order = (err(n1) / err(n2)).ln() / (n2 as f64 / n1 as f64).ln();
            let n = n1;
            assert!(order > 3.7, "n = {n}: order {order}");
        }
    }
}
