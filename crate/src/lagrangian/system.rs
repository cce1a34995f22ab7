//! The ODE systems the engine integrates, all driven by one [`VelocityField`]:
//! a lone tracer, a tracer with its tangent matrix (the variational equation), and a tracer
//! with four satellites (the auxiliary grid).

use super::velocity::{Mat2, Vec2, VelocityField};

/// Right-hand side of an ODE system y′ = f(t, y) with `N` components. `None` when the
/// velocity is undefined at some point the system needs.
pub trait System<const N: usize> {
    fn rhs(&self, t: f64, y: &[f64; N]) -> Option<[f64; N]>;
}

/// dx/dt = u(x, t).
#[derive(Debug, Clone, Copy)]
pub struct Tracer<'f, F>(pub &'f F);

impl<F: VelocityField> System<2> for Tracer<'_, F> {
    #[inline(always)]
    fn rhs(&self, t: f64, y: &[f64; 2]) -> Option<[f64; 2]> {
        self.0.velocity(*y, t)
    }
}

/// The flow and its variational equation together: y = (x, y, M₀₀, M₀₁, M₁₀, M₁₁),
/// dx/dt = u(x, t), dM/dt = ∇u(x, t) M, M(t₀) = I, so M(t) = ∇F_{t₀}^{t}(x₀) for the
/// field as interpolated (common practice; METHODS.md §1 route (c)).
#[derive(Debug, Clone, Copy)]
pub struct Tangent<'f, F>(pub &'f F);

impl<F: VelocityField> System<6> for Tangent<'_, F> {
    #[inline(always)]
    fn rhs(&self, t: f64, y: &[f64; 6]) -> Option<[f64; 6]> {
        let (u, g) = self.0.velocity_gradient([y[0], y[1]], t)?;
        Some(tangent_derivative(u, g, y))
    }
}

/// The derivative of the tangent system's state `y` = (x, y, M) from the velocity `u` and
/// its gradient `g` at (x, y): (u, g M). One expression for every sampler (the field's and
/// the lockstep slices'), so their results agree bit for bit.
#[inline(always)]
pub(super) fn tangent_derivative(u: Vec2, g: Mat2, y: &[f64; 6]) -> [f64; 6] {
    [
        u[0],
        u[1],
        g[0][0] * y[2] + g[0][1] * y[4],
        g[0][0] * y[3] + g[0][1] * y[5],
        g[1][0] * y[2] + g[1][1] * y[4],
        g[1][0] * y[3] + g[1][1] * y[5],
    ]
}

/// A tracer and four satellites at ±δ along x and y (METHODS.md §1 route (b)), advanced as
/// one system so they share steps and all stop at the first exit of any of them.
/// Layout: centre, +x, −x, +y, −y, each (x, y).
#[derive(Debug, Clone, Copy)]
pub struct Satellites<'f, F>(pub &'f F);

impl<F: VelocityField> System<10> for Satellites<'_, F> {
    #[inline(always)]
    fn rhs(&self, t: f64, y: &[f64; 10]) -> Option<[f64; 10]> {
        let mut d = [0.0; 10];
        for p in 0..5 {
            let u = self.0.velocity([y[2 * p], y[2 * p + 1]], t)?;
            d[2 * p] = u[0];
            d[2 * p + 1] = u[1];
        }
        Some(d)
    }
}

/// Initial state of [`Satellites`] around `x0` with offset `delta`.
pub fn satellites_start(x0: Vec2, delta: f64) -> [f64; 10] {
    [
        x0[0],
        x0[1],
        x0[0] + delta,
        x0[1],
        x0[0] - delta,
        x0[1],
        x0[0],
        x0[1] + delta,
        x0[0],
        x0[1] - delta,
    ]
}
