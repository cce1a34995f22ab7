//! Sensitivity along one trajectory of the model flow f: the forward pass stores the
//! one-step propagators Φ_k = ∇F_{t_k}^{t_{k+1}}, the perturbation g and the largest
//! rate of strain at every step node; the backward sweep P_N = I, P_k = P_{k+1} Φ_k
//! (= ∇F_{t_k}^{t_N}) accumulates the quadratures (METHODS.md §2, "stable computation").
//!
//! Forming ∇F_{t₀}^{t} (∇F_{t₀}^{s})⁻¹ instead would lose about 2·log₁₀ σ₁ digits to
//! cancellation; the sweep only multiplies propagators, so a saddle with λT = 20 keeps full
//! relative accuracy (checked in the tests).
//!
//! Φ_k is one classical RK4 step of the variational equation dM/dt = ∇f M from M = I. RK4
//! is linear in M, so Φ_{N−1}⋯Φ₀ is exactly what the variational FTLE route computes over
//! the whole horizon: σ_FTLE from P₀ matches the FTLE map of the same settings.

use super::quadrature::node_weights;
use crate::lagrangian::{Mat2, Vec2, VelocityField};

/// What the forward pass keeps at node k (one trajectory's storage is (N + 1) of these, 80
/// bytes each: memory is bounded by the horizon's step count, whatever the size of the
/// tracer grid).
#[derive(Debug, Clone, Copy)]
struct Node {
    /// x(t_k).
    x: Vec2,
    /// Φ_k = ∇F_{t_k}^{t_{k+1}} (identity at the last node).
    phi: Mat2,
    /// g(x(t_k), t_k).
    g: Vec2,
    /// λmax(S) at the middle of step k (unused at the last node).
    mid: f64,
    /// Largest eigenvalue of the rate-of-strain tensor of the flow in the direction of
    /// integration at (x(t_k), t_k) (∇f there is not kept: only this enters the sweep).
    strain: f64,
}

/// The result for one trajectory, over the steps it completed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrajectorySensitivity {
    /// First-order deviation ξ(t₀ + τ) (length·time / time = length per unit ε).
    pub xi: Vec2,
    /// MS = ∫ ‖∇F_s^t‖ ds (time).
    pub ms: f64,
    /// MS_g = ∫ ‖∇F_s^t‖ |g(x(s), s)| ds (length).
    pub ms_g: f64,
    /// Eulerian bound ∫ exp(∫_s^t λmax(S) dr) ds ≥ MS (time).
    pub strain_bound: f64,
    /// ∇F_{t₀}^{t₀+τ}, the flow-map gradient (as the variational FTLE route computes it).
    pub grad: Mat2,
    /// Steps completed (τ = steps·|h|).
    pub steps: usize,
    /// Final position.
    pub end: Vec2,
}

/// Largest eigenvalue of S = (∇f + ∇fᵀ)/2 in 2-D (closed form, METHODS.md §2), for the
/// direction of integration: backward in time the flow is that of −f, whose largest strain
/// rate is −λmin(S).
#[inline]
pub fn max_strain_rate(m: &Mat2, direction: f64) -> f64 {
    let (a, b) = (0.5 * (m[0][0] - m[1][1]), 0.5 * (m[0][1] + m[1][0]));
    // √(a² + b²) rather than hypot: velocity gradients are far from overflow, and hypot's
    // extra care costs more than the rest of this function.
    let shear = (a * a + b * b).sqrt();
    let div = 0.5 * (m[0][0] + m[1][1]);
    shear + direction.signum() * div
}

/// σ₁ of a 2×2 matrix, the closed form of `lagrangian::singular_values` with √ instead of
/// hypot (entries of ∇F stay far below 1e150 for any horizon an FTLE can resolve).
#[inline]
fn largest_singular_value(m: &Mat2) -> f64 {
    let (a, b, c, d) = (m[0][0], m[0][1], m[1][0], m[1][1]);
    let p = ((a + d) * (a + d) + (c - b) * (c - b)).sqrt();
    let q = ((a - d) * (a - d) + (b + c) * (b + c)).sqrt();
    0.5 * (p + q)
}

#[inline]
fn mul(a: &Mat2, b: &Mat2) -> Mat2 {
    [
        [a[0][0] * b[0][0] + a[0][1] * b[1][0], a[0][0] * b[0][1] + a[0][1] * b[1][1]],
        [a[1][0] * b[0][0] + a[1][1] * b[1][0], a[1][0] * b[0][1] + a[1][1] * b[1][1]],
    ]
}

#[inline]
fn mat_vec(a: &Mat2, v: Vec2) -> Vec2 {
    [a[0][0] * v[0] + a[0][1] * v[1], a[1][0] * v[0] + a[1][1] * v[1]]
}

const IDENTITY: Mat2 = [[1.0, 0.0], [0.0, 1.0]];

/// A stage sample: the velocity and its gradient at a stage point.
pub(super) type StageSample = (Vec2, Mat2);

/// Where RK4 stage `i` samples, from the step's start `x` and the previous stage's
/// velocity `u` (unused for stage 0): the expressions of `lagrangian::rk4_step`.
#[inline(always)]
pub(super) fn stage_point(i: usize, h: f64, x: Vec2, u: Vec2) -> Vec2 {
    match i {
        0 => x,
        1 | 2 => [x[0] + 0.5 * h * u[0], x[1] + 0.5 * h * u[1]],
        _ => [x[0] + h * u[0], x[1] + h * u[1]],
    }
}

/// One RK4 step of (x, M) from (x, I): the new position, Φ, ∇f at the start and λmax(S)
/// at mid-step. Same stages and weights as `lagrangian::rk4_step` on the `Tangent` system.
///
/// `vg(p, t, k)` is ∇f's sample at stage time t, which is the step's start (k = 0), middle
/// (k = 1) or end (k = 2): the field itself here; a lockstep pass samples the stages of a
/// block of tracers in separate passes on blended slices and calls [`combine_stages`].
#[inline(always)]
pub(super) fn tangent_step(
    vg: impl Fn(Vec2, f64, usize) -> Option<StageSample>,
    t: f64,
    h: f64,
    x: Vec2,
) -> Option<(Vec2, Mat2, Mat2, f64)> {
    let s1 = vg(x, t, 0)?;
    let s2 = vg(stage_point(1, h, x, s1.0), t + 0.5 * h, 1)?;
    let s3 = vg(stage_point(2, h, x, s2.0), t + 0.5 * h, 1)?;
    let s4 = vg(stage_point(3, h, x, s3.0), t + h, 2)?;
    Some(combine_stages(h, x, &[s1, s2, s3, s4]))
}

/// The step from its four stage samples: position, Φ (the tangent stages start from
/// M = I), ∇f at the start and λmax(S) at mid-step.
#[inline(always)]
pub(super) fn combine_stages(h: f64, x: Vec2, s: &[StageSample; 4]) -> (Vec2, Mat2, Mat2, f64) {
    let [(u1, g1), (u2, g2), (u3, g3), (u4, g4)] = *s;
    let k1 = g1;
    let m2 = add_scaled(&IDENTITY, 0.5 * h, &k1);
    let k2 = mul(&g2, &m2);
    let m3 = add_scaled(&IDENTITY, 0.5 * h, &k2);
    let k3 = mul(&g3, &m3);
    let m4 = add_scaled(&IDENTITY, h, &k3);
    let k4 = mul(&g4, &m4);
    let c = h / 6.0;
    let xn = [
        x[0] + c * (u1[0] + 2.0 * u2[0] + 2.0 * u3[0] + u4[0]),
        x[1] + c * (u1[1] + 2.0 * u2[1] + 2.0 * u3[1] + u4[1]),
    ];
    let mut phi = IDENTITY;
    for r in 0..2 {
        for s in 0..2 {
            phi[r][s] += c * (k1[r][s] + 2.0 * k2[r][s] + 2.0 * k3[r][s] + k4[r][s]);
        }
    }
    // Strain at mid-step from the two middle stages: their points x ± O(h²) lie
    // symmetrically about x(t + h/2), so the mean of their gradients is the midpoint
    // gradient to O(h⁴) on a smooth field, without another sample.
    let mean = [
        [0.5 * (g2[0][0] + g3[0][0]), 0.5 * (g2[0][1] + g3[0][1])],
        [0.5 * (g2[1][0] + g3[1][0]), 0.5 * (g2[1][1] + g3[1][1])],
    ];
    (xn, phi, g1, max_strain_rate(&mean, h))
}

#[inline]
fn add_scaled(a: &Mat2, s: f64, b: &Mat2) -> Mat2 {
    [[a[0][0] + s * b[0][0], a[0][1] + s * b[0][1]], [a[1][0] + s * b[1][0], a[1][1] + s * b[1][1]]]
}

/// Reusable storage for one trajectory at a time (a "tile" of one tracer): the row drivers
/// keep one per thread or worker.
#[derive(Debug, Default)]
pub struct TrajectoryBuffer {
    nodes: Vec<Node>,
}

impl TrajectoryBuffer {
    /// Empty, with room for `steps` steps.
    pub(super) fn for_steps(steps: usize) -> TrajectoryBuffer {
        TrajectoryBuffer { nodes: Vec::with_capacity(steps + 1) }
    }

    pub(super) fn clear(&mut self) {
        self.nodes.clear();
    }

    /// Stores node k of a step the caller has taken: the position, g and ∇f there, and
    /// what [`tangent_step`] returned.
    #[inline(always)]
    pub(super) fn push(&mut self, x: Vec2, g: Vec2, (phi, grad, mid): (Mat2, Mat2, f64), h: f64) {
        self.nodes.push(Node { x, phi, g, strain: max_strain_rate(&grad, h), mid });
    }

    /// Bytes stored per step.
    pub(super) const NODE_BYTES: usize = std::mem::size_of::<Node>();
}

/// Integrates f from `x0` at `t0` in `n` RK4 steps of `h` (signed), evaluating g at every
/// node, and sweeps back. Stops at the last node where f, its gradient and g are all
/// defined (a tracer leaving the data keeps the steps it completed). `None` when not even
/// one step could be taken.
pub fn trajectory<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    x0: Vec2,
    t0: f64,
    h: f64,
    n: usize,
    buf: &mut TrajectoryBuffer,
) -> Option<TrajectorySensitivity> {
    buf.clear();
    let x = forward(f, g, x0, t0, h, 0..n, buf);
    finish(f, g, x, t0, h, buf)
}

/// Steps `steps` of the forward pass from `x`, the position after `steps.start` steps whose
/// nodes `buf` holds, on the fields themselves; stops at the first step where f or g has no
/// value. Returns the last position reached. A lockstep pass hands its tracers over here
/// from the step where a slice had no value, and the result is what [`trajectory`] gives.
pub(super) fn forward<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    mut x: Vec2,
    t0: f64,
    h: f64,
    steps: std::ops::Range<usize>,
    buf: &mut TrajectoryBuffer,
) -> Vec2 {
    debug_assert_eq!(buf.nodes.len(), steps.start);
    for k in steps {
        let t = t0 + k as f64 * h;
        let Some(gk) = g.velocity(x, t) else { break };
        let vg = |p: Vec2, t: f64, _: usize| f.velocity_gradient(p, t);
        let Some((xn, phi, grad, mid)) = tangent_step(vg, t, h, x) else { break };
        buf.push(x, gk, (phi, grad, mid), h);
        x = xn;
    }
    x
}

/// Ends a forward pass at `x`, after the steps `buf` holds: adds the end node and sweeps
/// back. `None` when not even one step was taken.
pub(super) fn finish<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    mut x: Vec2,
    t0: f64,
    h: f64,
    buf: &mut TrajectoryBuffer,
) -> Option<TrajectorySensitivity> {
    let nodes = &mut buf.nodes;
    // The end node needs g and ∇f too. Every stored node had both at its own position, so
    // when the end lacks them, ending one step earlier always works.
    let t_end = t0 + nodes.len() as f64 * h;
    let end = g.velocity(x, t_end).zip(f.velocity_gradient(x, t_end));
    let (g_end, strain_end) = match end {
        Some((g_end, (_, grad_end))) => (g_end, max_strain_rate(&grad_end, h)),
        None => {
            let back = nodes.pop()?;
            x = back.x;
            (back.g, back.strain)
        }
    };
    if nodes.is_empty() {
        return None;
    }
    nodes.push(Node { x, phi: IDENTITY, g: g_end, strain: strain_end, mid: 0.0 });
    Some(sweep(nodes, h, x))
}

/// The backward sweep over nodes 0..=N (the last holds Φ = I).
fn sweep(nodes: &[Node], h: f64, end: Vec2) -> TrajectorySensitivity {
    let n = nodes.len() - 1;
    let w = node_weights(n, h.abs());
    let sign = h.signum();
    let last = &nodes[n];
    let g_abs = |g: &Vec2| (g[0] * g[0] + g[1] * g[1]).sqrt();
    let mut p = IDENTITY;
    let mut ms = w[n];
    let mut ms_g = w[n] * g_abs(&last.g);
    let mut xi = [sign * w[n] * last.g[0], sign * w[n] * last.g[1]];
    // ∫_{t_k}^{t_N} λmax dr, Simpson's rule on each step (nodes and midpoint).
    let mut log_growth = 0.0;
    let mut strain_bound = w[n];
    for k in (0..n).rev() {
        let node = &nodes[k];
        p = mul(&p, &node.phi);
        log_growth += h.abs() / 6.0 * (node.strain + 4.0 * node.mid + nodes[k + 1].strain);
        let norm = largest_singular_value(&p);
        ms += w[k] * norm;
        ms_g += w[k] * norm * g_abs(&node.g);
        let pg = mat_vec(&p, node.g);
        xi[0] += sign * w[k] * pg[0];
        xi[1] += sign * w[k] * pg[1];
        strain_bound += w[k] * log_growth.exp();
    }
    TrajectorySensitivity { xi, ms, ms_g, strain_bound, grad: p, steps: n, end }
}
