//! One-dimensional interpolation weights shared by the gridded velocity field: in space,
//! linear and cubic convolution (value and derivative weights); in time, linear and cubic
//! Hermite stencils over the snapshot times.

/// Value and derivative weights of the cubic convolution kernel with a = −1/2 for the four
/// nodes i−1, i, i+1, i+2 around a point at fraction `s ∈ [0, 1]` of cell i.
///
/// Keys (1981, IEEE Trans. Acoust. Speech Signal Process. 29:1153–1160): with a = −1/2 the
/// interpolant is C¹, reproduces quadratics exactly and converges at third order. The
/// derivative weights are the exact derivative of the value weights (per unit `s`), so the
/// interpolated gradient is that of the interpolant.
#[inline(always)]
pub fn keys_weights(s: f64) -> ([f64; 4], [f64; 4]) {
    let s2 = s * s;
    let s3 = s2 * s;
    (
        [
            0.5 * (-s3 + 2.0 * s2 - s),
            0.5 * (3.0 * s3 - 5.0 * s2 + 2.0),
            0.5 * (-3.0 * s3 + 4.0 * s2 + s),
            0.5 * (s3 - s2),
        ],
        [
            0.5 * (-3.0 * s2 + 4.0 * s - 1.0),
            0.5 * (9.0 * s2 - 10.0 * s),
            0.5 * (-9.0 * s2 + 8.0 * s + 1.0),
            0.5 * (3.0 * s2 - 2.0 * s),
        ],
    )
}

/// Folds the weight of a node beyond the first or last grid point into the real nodes using
/// Keys' boundary condition f₋₁ = 3f₀ − 3f₁ + f₂ (and its mirror at the far end), which
/// keeps the third-order accuracy up to the window edge. `i` is the cell, `n ≥ 3` the number
/// of nodes. Returns the index of the first of four consecutive real nodes and the weights
/// on them.
#[inline(always)]
pub fn keys_fold(i: usize, n: usize, w: [f64; 4]) -> (usize, [f64; 4]) {
    if i == 0 {
        // Nodes −1, 0, 1, 2 → 0, 1, 2 (and a zero weight on node 3).
        (0, [w[1] + 3.0 * w[0], w[2] - 3.0 * w[0], w[3] + w[0], 0.0])
    } else if i + 2 >= n {
        // Nodes n−3, n−2, n−1, n → n−4.. with the ghost folded into n−1, n−2, n−3.
        // Cell i = n−2: stencil n−3, n−2, n−1, ghost n.
        if n >= 4 {
            (n - 4, [0.0, w[0] + w[3], w[1] - 3.0 * w[3], w[2] + 3.0 * w[3]])
        } else {
            // n == 3, cell 1: nodes 0, 1, 2 plus ghost 3 → start 0, no fourth node.
            (0, [w[0] + w[3], w[1] - 3.0 * w[3], w[2] + 3.0 * w[3], 0.0])
        }
    } else {
        (i - 1, w)
    }
}

/// A set of snapshots and weights whose combination gives a field at one time.
#[derive(Debug, Clone, Copy)]
pub struct TimeStencil {
    /// Index of the first snapshot; the stencil uses `first .. first + len`.
    pub first: usize,
    pub len: usize,
    pub w: [f64; 4],
}

/// Tolerance, as a fraction of the record length, for stage times a rounding error outside
/// the first or last snapshot: the last stage of a run that ends exactly on a snapshot time
/// is t₀ + n·h, which rounding can put an ulp beyond it (backward runs to the first
/// snapshot did exit on their very last stage). Such times count as the end snapshot.
pub const TIME_TOL: f64 = 1e-9;

/// Locates `t` among ascending `times`: the index k with `times[k] ≤ t ≤ times[k+1]`
/// (k ≤ nt − 2) and the fraction s in the interval. `None` if `t` is outside or not finite.
/// `uniform` = (t0, 1/Δt) when the times are evenly spaced, for an O(1) lookup.
#[inline(always)]
pub fn locate_time(times: &[f64], uniform: Option<(f64, f64)>, t: f64) -> Option<(usize, f64)> {
    let nt = times.len();
    let (first, last) = (times[0], times[nt - 1]);
    let tol = TIME_TOL * (last - first);
    if !(t >= first - tol && t <= last + tol) {
        return None;
    }
    let t = t.clamp(first, last);
    let mut k = match uniform {
        Some((t0, inv)) => (((t - t0) * inv) as usize).min(nt - 2),
        None => times.partition_point(|&x| x <= t).saturating_sub(1).min(nt - 2),
    };
    // Rounding in the uniform lookup can be off by one at a snapshot time.
    if t < times[k] && k > 0 {
        k -= 1;
    } else if t > times[k + 1] && k + 2 < nt {
        k += 1;
    }
    let s = (t - times[k]) / (times[k + 1] - times[k]);
    Some((k, s))
}

/// Linear-in-time stencil between snapshots k and k+1.
#[inline(always)]
pub fn linear_time(k: usize, s: f64) -> TimeStencil {
    TimeStencil { first: k, len: 2, w: [1.0 - s, s, 0.0, 0.0] }
}

/// Cubic Hermite stencil on interval k, with node slopes from centred differences over the
/// neighbouring snapshots (one-sided at the ends of the series): C¹ in time, exact for
/// quadratics in t on uniform snapshots (common practice, the "finite-difference slope"
/// Hermite spline). Uses up to the four snapshots k−1 … k+2.
#[inline(always)]
pub fn hermite_time(times: &[f64], k: usize, s: f64) -> TimeStencil {
    let nt = times.len();
    let h = times[k + 1] - times[k];
    let s2 = s * s;
    let s3 = s2 * s;
    let h00 = 2.0 * s3 - 3.0 * s2 + 1.0;
    let h10 = (s3 - 2.0 * s2 + s) * h;
    let h01 = -2.0 * s3 + 3.0 * s2;
    let h11 = (s3 - s2) * h;
    // Weights on snapshots k−1, k, k+1, k+2 (index 0..4 relative to k−1).
    let mut w = [0.0, h00, h01, 0.0];
    // Slope at k: m_k = Σ c f.
    if k > 0 {
        let d = times[k + 1] - times[k - 1];
        w[0] -= h10 / d;
        w[2] += h10 / d;
    } else {
        w[1] -= h10 / h;
        w[2] += h10 / h;
    }
    // Slope at k+1.
    if k + 2 < nt {
        let d = times[k + 2] - times[k];
        w[1] -= h11 / d;
        w[3] += h11 / d;
    } else {
        w[1] -= h11 / h;
        w[2] += h11 / h;
    }
    if k == 0 {
        // Shift the window so it starts at snapshot 0 (w[0] is zero here).
        let len = if k + 2 < nt { 3 } else { 2 };
        TimeStencil { first: 0, len, w: [w[1], w[2], w[3], 0.0] }
    } else {
        let len = if k + 2 < nt { 4 } else { 3 };
        TimeStencil { first: k - 1, len, w }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn eval(f: &[f64], st: TimeStencil) -> f64 {
        (0..st.len).map(|m| st.w[m] * f[st.first + m]).sum()
    }

    /// Keys' kernel with a = −1/2 reproduces quadratics exactly (Keys 1981), and the
    /// derivative weights are the derivative of the value weights (checked by differences).
    #[test]
    fn keys_reproduces_quadratics_and_its_derivative() {
        let n = 6;
        let f: Vec<f64> = (0..n).map(|i| 0.3 * (i * i) as f64 - 1.2 * i as f64 + 0.7).collect();
        let df = |x: f64| 0.6 * x - 1.2;
        for i in 0..n - 1 {
            for &s in &[0.0, 0.25, 0.5, 0.9, 1.0] {
                let (w, dw) = keys_weights(s);
                let (first, w) = keys_fold(i, n, w);
                let (_, dw) = keys_fold(i, n, dw);
                let x = i as f64 + s;
                let val: f64 =
                    (0..4).map(|m| w[m] * f.get(first + m).copied().unwrap_or(0.0)).sum();
                let der: f64 =
                    (0..4).map(|m| dw[m] * f.get(first + m).copied().unwrap_or(0.0)).sum();
                let exact = 0.3 * x * x - 1.2 * x + 0.7;
                assert!((val - exact).abs() < 1e-12, "cell {i} s {s}: {val} vs {exact}");
                assert!((der - df(x)).abs() < 1e-12, "cell {i} s {s}: {der} vs {}", df(x));
            }
        }
    }

    /// The Hermite stencil interpolates the snapshots and is exact for quadratics in time on
    /// uniform snapshots (common practice: centred-difference slopes are exact there).
    #[test]
    fn hermite_time_exact_for_quadratics_inside() {
        let times: Vec<f64> = (0..6).map(|k| 0.5 * k as f64).collect();
        let f: Vec<f64> = times.iter().map(|t| 2.0 * t * t - t + 3.0).collect();
        for k in 1..times.len() - 2 {
            for &s in &[0.0, 0.3, 0.7, 1.0] {
                let t = times[k] + s * 0.5;
                let v = eval(&f, hermite_time(&times, k, s));
                assert!((v - (2.0 * t * t - t + 3.0)).abs() < 1e-12);
            }
        }
        // End intervals interpolate the snapshots.
        for k in [0, times.len() - 2] {
            assert!((eval(&f, hermite_time(&times, k, 0.0)) - f[k]).abs() < 1e-12);
            assert!((eval(&f, hermite_time(&times, k, 1.0)) - f[k + 1]).abs() < 1e-12);
        }
        let (k, s) = locate_time(&times, Some((0.0, 2.0)), 1.25).unwrap();
        assert_eq!((k, s), (2, 0.5));
        assert_eq!(locate_time(&times, None, 2.5), Some((4, 1.0)));
        assert_eq!(locate_time(&times, None, 2.6), None);
    }
}
