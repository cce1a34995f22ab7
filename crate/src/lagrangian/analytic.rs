//! Analytic velocity fields with known flow maps or published FTLE behaviour. They drive
//! the same engine as gridded data, so the checks of METHODS.md §1 test the real code path,
//! and [`sample_series`] turns any of them into gridded data for interpolation studies.

use super::velocity::{Mat2, Rect, Vec2, VelocityField};
use crate::field::{FieldError, Series, SeriesParts};
use std::f64::consts::PI;

/// Linear saddle u = (λx, −λy): F(x0) = (x0 e^{λt}, y0 e^{−λt}), so σ = λ everywhere in both
/// time directions.
#[derive(Debug, Clone, Copy)]
pub struct LinearSaddle {
    pub lambda: f64,
}

/// Solid-body rotation u = (−Ωy, Ωx): the flow map is a rotation, σ₁ = 1, σ = 0.
#[derive(Debug, Clone, Copy)]
pub struct SolidBodyRotation {
    pub omega: f64,
}

/// Simple shear u = (γy, 0): ∇F = `[[1, γT], [0, 1]]`, σ₁ = γT/2 + √(1 + (γT/2)²); stretching
/// grows linearly, not exponentially, so σ → 0 as T grows.
#[derive(Debug, Clone, Copy)]
pub struct SimpleShear {
    pub gamma: f64,
}

/// The double gyre of Shadden, Lekien & Marsden (2005, Physica D 212:271–304) on
/// [0, 2] × [0, 1]:
///
/// u = −πA sin(πf) cos(πy),  v = πA cos(πf) sin(πy) ∂f/∂x,
/// f(x, t) = ε sin(ωt) x² + (1 − 2ε sin(ωt)) x.
///
/// ε = 0 gives the steady double gyre. The box boundary is invariant, so tracers started
/// inside stay inside.
#[derive(Debug, Clone, Copy)]
pub struct DoubleGyre {
    pub a: f64,
    pub eps: f64,
    pub omega: f64,
}

impl DoubleGyre {
    /// The steady double gyre (ε = 0) with amplitude `a`.
    pub fn steady(a: f64) -> DoubleGyre {
        DoubleGyre { a, eps: 0.0, omega: 0.0 }
    }

    /// The periodically forced double gyre with A = 0.1, ε = 0.25, ω = 2π/10, the parameter
    /// set most often quoted with Shadden et al. (2005) (from memory, METHODS.md check 5).
    pub fn periodic() -> DoubleGyre {
        DoubleGyre { a: 0.1, eps: 0.25, omega: 2.0 * PI / 10.0 }
    }

    /// The box the flow lives in, [0, 2] × [0, 1].
    pub fn domain() -> Rect {
        Rect { x0: 0.0, x1: 2.0, y0: 0.0, y1: 1.0 }
    }
}

impl VelocityField for LinearSaddle {
    #[inline]
    fn velocity(&self, p: Vec2, _t: f64) -> Option<Vec2> {
        Some([self.lambda * p[0], -self.lambda * p[1]])
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let l = self.lambda;
        Some((self.velocity(p, t)?, [[l, 0.0], [0.0, -l]]))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}

impl VelocityField for SolidBodyRotation {
    #[inline]
    fn velocity(&self, p: Vec2, _t: f64) -> Option<Vec2> {
        Some([-self.omega * p[1], self.omega * p[0]])
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let w = self.omega;
        Some((self.velocity(p, t)?, [[0.0, -w], [w, 0.0]]))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}

impl VelocityField for SimpleShear {
    #[inline]
    fn velocity(&self, p: Vec2, _t: f64) -> Option<Vec2> {
        Some([self.gamma * p[1], 0.0])
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        Some((self.velocity(p, t)?, [[0.0, self.gamma], [0.0, 0.0]]))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}

impl VelocityField for DoubleGyre {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        let s = self.eps * (self.omega * t).sin();
        let f = s * p[0] * p[0] + (1.0 - 2.0 * s) * p[0];
        let fx = 2.0 * s * p[0] + 1.0 - 2.0 * s;
        let (sf, cf) = (PI * f).sin_cos();
        let (sy, cy) = (PI * p[1]).sin_cos();
        let pa = PI * self.a;
        Some([-pa * sf * cy, pa * cf * sy * fx])
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let s = self.eps * (self.omega * t).sin();
        let f = s * p[0] * p[0] + (1.0 - 2.0 * s) * p[0];
        let fx = 2.0 * s * p[0] + 1.0 - 2.0 * s;
        let fxx = 2.0 * s;
        let (sf, cf) = (PI * f).sin_cos();
        let (sy, cy) = (PI * p[1]).sin_cos();
        let pa = PI * self.a;
        let u = [-pa * sf * cy, pa * cf * sy * fx];
        let g = [
            [-pa * PI * cf * fx * cy, pa * PI * sf * sy],
            [pa * (-PI * sf * fx * fx + cf * fxx) * sy, pa * PI * cf * cy * fx],
        ];
        Some((u, g))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}

/// Samples `field` on the grid `x × y` at the snapshot times `t` and returns it as a
/// [`Series`] (f32 storage, like measured data). Points where the field has no velocity
/// become missing vectors (gaps), or masked cells when missing at every time.
///
/// This is how the tests build "data sampled from an analytic flow" for refinement studies.
pub fn sample_series<F: VelocityField>(
    field: &F,
    x: &[f64],
    y: &[f64],
    t: &[f64],
) -> Result<Series, FieldError> {
    let (nx, ny) = (x.len(), y.len());
    let n = nx * ny * t.len();
    let mut u = Vec::with_capacity(n);
    let mut v = Vec::with_capacity(n);
    for &tk in t {
        for &yj in y {
            for &xi in x {
                let w = field.velocity([xi, yj], tk).unwrap_or([f64::NAN; 2]);
                u.push(w[0] as f32);
                v.push(w[1] as f32);
            }
        }
    }
    Series::from_parts(SeriesParts {
        x: x.to_vec(),
        y: y.to_vec(),
        t: t.to_vec(),
        u,
        v,
        nan_is_gap: true,
        ..Default::default()
    })
}

/// `n` evenly spaced values from `a` to `b` inclusive (numpy's `linspace`).
pub fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    if n == 1 {
        return vec![a];
    }
    (0..n).map(|i| a + (b - a) * i as f64 / (n - 1) as f64).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The double gyre's analytic gradient against central differences of its velocity
    /// (common practice: a derivative check), and incompressibility u_x + v_y = 0 [D].
    #[test]
    fn double_gyre_gradient_matches_differences() {
        let g = DoubleGyre::periodic();
        let h = 1e-6;
        for &(x, y, t) in &[(0.3, 0.2, 1.3), (1.7, 0.8, 4.1), (1.0, 0.5, 7.7)] {
            let (_, m) = g.velocity_gradient([x, y], t).unwrap();
            let up = g.velocity([x + h, y], t).unwrap();
            let um = g.velocity([x - h, y], t).unwrap();
            let vp = g.velocity([x, y + h], t).unwrap();
            let vm = g.velocity([x, y - h], t).unwrap();
            for r in 0..2 {
                let dx = (up[r] - um[r]) / (2.0 * h);
                let dy = (vp[r] - vm[r]) / (2.0 * h);
                assert!((m[r][0] - dx).abs() < 1e-7, "row {r} d/dx {} vs {dx}", m[r][0]);
                assert!((m[r][1] - dy).abs() < 1e-7, "row {r} d/dy {} vs {dy}", m[r][1]);
            }
            assert!((m[0][0] + m[1][1]).abs() < 1e-12);
        }
    }
}
