//! Finite-time Lyapunov exponents on a tracer grid, by the three routes to ∇F of
//! METHODS.md §1, forward or backward, with σ₁ in closed form and the det ∇F = 1 check.
//!
//! σ(x₀) = (1/|T|) ln σ₁(∇F_{t₀}^{t₀+T}(x₀)), in 1/time (Shadden, Lekien & Marsden 2005,
//! Physica D 212:271–304). Forward (T > 0) ridges mark repelling material lines at t₀,
//! backward (T < 0) ridges attracting ones. Ridges are a heuristic for such lines: strong
//! shear also makes FTLE ridges (Haller 2015, Annu. Rev. Fluid Mech. 47:137–162).
//!
//! Routes to ∇F ([`GradientRoute`]):
//! * tracer-grid differences: one tracer per node, central differences of final positions;
//!   cheapest, smears ridges thinner than the tracer spacing;
//! * auxiliary grid: four satellites at ±δ per node; needs δ·e^{σ|T|} ≪ the flow's length
//!   scale or it under-reads σ;
//! * variational equation: dM/dt = ∇u M with the trajectory, exact for the interpolated
//!   field; the default.
//!
//! Tracers that stop at the data boundary keep their time τ < |T| and get (1/τ) ln σ₁,
//! flagged; below |T|/2 they are flagged as short (METHODS.md §1). Tracer-grid differences
//! need neighbours that reached the same time, so they give no value next to an exit.

use super::engine::{
    check_rows, flow_map_rows, integrate, lockstep_field, AdvectOptions, BoundaryPolicy,
    FlowMapRows, Integrator, NodeStatus,
};
use super::error::LagrangianError;
use super::gridded::GriddedField;
use super::lockstep;
use super::outcome::Outcome;
use super::seeding::TracerGrid;
use super::system::{satellites_start, Satellites, Tangent};
use super::velocity::{Extended, Mat2, VelocityField};
use serde::{Deserialize, Serialize};

/// How ∇F is obtained.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum GradientRoute {
    /// Central differences of the final positions of neighbouring grid tracers.
    TracerGrid,
    /// Four satellites at ±`offset` (length units) around each node.
    Auxiliary { offset: f64 },
    /// The variational equation integrated with the trajectory.
    #[default]
    Variational,
}

/// Options of an FTLE computation.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FtleOptions {
    pub advect: AdvectOptions,
    pub route: GradientRoute,
}

/// Per-node flag of an FTLE map (stored as `u8`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[repr(u8)]
pub enum FtleFlag {
    /// Value over the whole horizon.
    Full = 0,
    /// Stopped at the boundary after at least |T|/2; value over the time integrated.
    Exited = 1,
    /// Stopped before |T|/2; value over the time integrated, treat with care.
    Short = 2,
    /// Seed without data (mask, outside the window).
    Masked = 3,
    /// No value (stopped at once, integrator failure, or no usable neighbours).
    NoValue = 4,
}

/// Singular values σ₁ ≥ σ₂ ≥ 0 of a 2×2 matrix `[[a, b], [c, d]]` in closed form (derived from the definitions):
/// p = hypot(a + d, c − b), q = hypot(a − d, b + c), σ₁ = (p + q)/2, σ₂ = |p − q|/2.
/// Avoids forming Cᵀ C, which squares the conditioning and can return a negative λmin.
#[inline]
pub fn singular_values(m: Mat2) -> (f64, f64) {
    let (a, b, c, d) = (m[0][0], m[0][1], m[1][0], m[1][1]);
    let p = (a + d).hypot(c - b);
    let q = (a - d).hypot(b + c);
    (0.5 * (p + q), 0.5 * (p - q).abs())
}

/// Counts and worst quality over a set of rows.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct FtleStats {
    /// max |σ₁σ₂ − 1| over nodes with a value: 0 for an exactly area-preserving flow map;
    /// on planar measured data only approximately (out-of-plane motion), and large where
    /// the ∇F route broke down (auxiliary offset too large, unresolved ridges).
    pub max_det_deviation: f64,
    pub full: usize,
    pub exited: usize,
    pub short: usize,
    pub masked: usize,
    pub no_value: usize,
    /// Right-hand-side evaluations (each one velocity sample, or five for satellites).
    pub rhs_calls: u64,
}

impl FtleStats {
    fn add(&mut self, o: &FtleStats) {
        self.max_det_deviation = self.max_det_deviation.max(o.max_det_deviation);
        self.full += o.full;
        self.exited += o.exited;
        self.short += o.short;
        self.masked += o.masked;
        self.no_value += o.no_value;
        self.rhs_calls += o.rhs_calls;
    }
}

/// FTLE of rows `j0..j1` of a tracer grid (the whole grid when `j0 = 0, j1 = ny`).
/// Maps are `(j1 − j0, nx)`; nodes without a value hold 0 (never NaN) and say why in `flag`.
#[derive(Debug, Clone, PartialEq)]
pub struct FtleRows {
    pub grid: TracerGrid,
    pub j0: usize,
    pub j1: usize,
    pub horizon: f64,
    /// σ in 1/time.
    pub ftle: Vec<f32>,
    /// Time actually integrated |τ| (the exit-time map).
    pub tau: Vec<f32>,
    /// |σ₁σ₂ − 1| per node (the det ∇F = 1 quality map); 0 without a value.
    pub det_deviation: Vec<f32>,
    pub flag: Vec<FtleFlag>,
    pub stats: FtleStats,
}

impl FtleRows {
    /// Joins consecutive row ranges of one grid, in order, into one result.
    pub fn concat(parts: Vec<FtleRows>) -> Result<FtleRows, LagrangianError> {
        let mut it = parts.into_iter();
        let mut all =
            it.next().ok_or_else(|| LagrangianError::Invalid("no row ranges to join".into()))?;
        for p in it {
            if p.j0 != all.j1 || p.grid != all.grid {
                return Err(LagrangianError::Invalid(format!(
                    "row ranges do not follow each other: {}..{} then {}..{}",
                    all.j0, all.j1, p.j0, p.j1
                )));
            }
            all.j1 = p.j1;
            all.ftle.extend_from_slice(&p.ftle);
            all.tau.extend_from_slice(&p.tau);
            all.det_deviation.extend_from_slice(&p.det_deviation);
            all.flag.extend_from_slice(&p.flag);
            all.stats.add(&p.stats);
        }
        Ok(all)
    }

    fn with_capacity(grid: &TracerGrid, j0: usize, j1: usize, horizon: f64) -> FtleRows {
        let n = (j1 - j0) * grid.nx();
        FtleRows {
            grid: *grid,
            j0,
            j1,
            horizon,
            ftle: Vec::with_capacity(n),
            tau: Vec::with_capacity(n),
            det_deviation: Vec::with_capacity(n),
            flag: Vec::with_capacity(n),
            stats: FtleStats::default(),
        }
    }

    /// Appends one node from its ∇F (if any), time integrated and status.
    fn push(&mut self, grad: Option<Mat2>, tau: f64, status: NodeStatus) {
        let t_abs = self.horizon.abs();
        let value = match (status, grad) {
            (NodeStatus::Masked, _) => None,
            (NodeStatus::Failed, _) => None,
            (_, Some(m)) if tau > 0.0 => Some(m),
            _ => None,
        };
        let flag = match (status, value) {
            (NodeStatus::Masked, _) => FtleFlag::Masked,
            (_, None) => FtleFlag::NoValue,
            (NodeStatus::Complete, Some(_)) => FtleFlag::Full,
            (_, Some(_)) if tau >= 0.5 * t_abs => FtleFlag::Exited,
            _ => FtleFlag::Short,
        };
        let (sigma, dev) = match value {
            Some(m) => {
                let (s1, s2) = singular_values(m);
                (s1.ln() / tau, (s1 * s2 - 1.0).abs())
            }
            None => (0.0, 0.0),
        };
        let st = &mut self.stats;
        match flag {
            FtleFlag::Full => st.full += 1,
            FtleFlag::Exited => st.exited += 1,
            FtleFlag::Short => st.short += 1,
            FtleFlag::Masked => st.masked += 1,
            FtleFlag::NoValue => st.no_value += 1,
        }
        if value.is_some() {
            st.max_det_deviation = st.max_det_deviation.max(dev);
        }
        self.ftle.push(if sigma.is_finite() { sigma as f32 } else { 0.0 });
        self.tau.push(tau as f32);
        self.det_deviation.push(dev as f32);
        self.flag.push(flag);
    }

    /// FTLE at node (i, j) of the full grid (`j` must be in `j0..j1`).
    pub fn at(&self, i: usize, j: usize) -> f32 {
        self.ftle[(j - self.j0) * self.grid.nx() + i]
    }
}

/// FTLE of rows `j0..j1` of `grid`: the entry point the page's workers call on their share
/// of rows; the result does not depend on how the grid was split.
pub fn ftle_rows<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    o: &FtleOptions,
    j0: usize,
    j1: usize,
) -> Result<FtleRows, LagrangianError> {
    o.advect.validate(field)?;
    check_rows(grid, j0, j1)?;
    match o.route {
        GradientRoute::TracerGrid => tracer_grid_rows(field, grid, o, j0, j1),
        GradientRoute::Auxiliary { offset } => {
            if !(offset.is_finite() && offset > 0.0) {
                return Err(LagrangianError::NotPositive {
                    name: "the auxiliary-grid offset",
                    value: offset,
                });
            }
            Ok(match o.advect.boundary {
                BoundaryPolicy::Stop => per_node_rows(field, field, grid, o, j0, j1),
                BoundaryPolicy::Extrapolate => {
                    per_node_rows(field, &Extended { inner: field }, grid, o, j0, j1)
                }
            })
        }
        GradientRoute::Variational => Ok(match o.advect.boundary {
            BoundaryPolicy::Stop => per_node_rows(field, field, grid, o, j0, j1),
            BoundaryPolicy::Extrapolate => {
                per_node_rows(field, &Extended { inner: field }, grid, o, j0, j1)
            }
        }),
    }
}

/// FTLE of the whole tracer grid on the calling thread.
pub fn ftle_field<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    o: &FtleOptions,
) -> Result<FtleRows, LagrangianError> {
    ftle_rows(field, grid, o, 0, grid.ny())
}

/// ∇F, time reached, stop and evaluation count for one seed by route (b) or (c).
#[inline]
fn node_gradient<G: VelocityField>(
    field: &G,
    p: [f64; 2],
    route: GradientRoute,
    a: &AdvectOptions,
) -> (Mat2, f64, NodeStatus, u64) {
    match route {
        GradientRoute::Auxiliary { offset } => {
            let out = integrate(&Satellites(field), satellites_start(p, offset), a);
            let y = out.y;
            let k = 0.5 / offset;
            let m =
                [[(y[2] - y[4]) * k, (y[6] - y[8]) * k], [(y[3] - y[5]) * k, (y[7] - y[9]) * k]];
            (m, out.t, out.stop.into(), out.rhs_calls as u64 * 5)
        }
        _ => {
            let y0 = [p[0], p[1], 1.0, 0.0, 0.0, 1.0];
            let out = integrate(&Tangent(field), y0, a);
            let y = out.y;
            ([[y[2], y[3]], [y[4], y[5]]], out.t, out.stop.into(), out.rhs_calls as u64)
        }
    }
}

/// Routes (b) and (c): every node is independent.
fn per_node_rows<F: VelocityField, G: VelocityField>(
    seed_field: &F,
    field: &G,
    grid: &TracerGrid,
    o: &FtleOptions,
    j0: usize,
    j1: usize,
) -> FtleRows {
    let a = &o.advect;
    if let (GradientRoute::Variational, Integrator::Rk4 { max_step }, Some(g)) =
        (o.route, a.integrator, lockstep_field(field))
    {
        if let Some(r) = variational_lockstep(seed_field, g, grid, a, max_step, j0, j1) {
            return r;
        }
    }
    let mut r = FtleRows::with_capacity(grid, j0, j1, a.horizon);
    for j in j0..j1 {
        for i in 0..grid.nx() {
            let p = grid.node(i, j);
            if seed_field.velocity(p, a.t0).is_none() {
                r.push(None, 0.0, NodeStatus::Masked);
                continue;
            }
            let (grad, t, status, calls) = node_gradient(field, p, o.route, a);
            r.stats.rhs_calls += calls;
            r.push(Some(grad), (t - a.t0).abs(), status);
        }
    }
    r
}

/// Route (c) on gridded bilinear × linear data: all nodes of the rows advance together over
/// shared time slices (`lockstep.rs`), with the results of the per-node loop of
/// [`per_node_rows`]. `None` (nothing done) when the rows hold too few seeds for it to pay.
fn variational_lockstep<F: VelocityField>(
    seed_field: &F,
    field: &GriddedField,
    grid: &TracerGrid,
    a: &AdvectOptions,
    max_step: f64,
    j0: usize,
    j1: usize,
) -> Option<FtleRows> {
    let nx = grid.nx();
    let n = (j1 - j0) * nx;
    let seeds: Vec<(usize, [f64; 6])> = (0..n)
        .filter_map(|c| {
            let p = grid.node(c % nx, j0 + c / nx);
            seed_field.velocity(p, a.t0).is_some().then_some((c, [p[0], p[1], 1.0, 0.0, 0.0, 1.0]))
        })
        .collect();
    if seeds.len() < lockstep::MIN_TRACERS {
        return None;
    }
    let mut outs: Vec<Option<Outcome<6>>> = vec![None; n];
    lockstep::integrate_tangent(field, seeds, a.t0, a.horizon, max_step, |c, out| {
        outs[c] = Some(out)
    });
    let mut r = FtleRows::with_capacity(grid, j0, j1, a.horizon);
    for out in outs {
        let Some(out) = out else {
            r.push(None, 0.0, NodeStatus::Masked);
            continue;
        };
        let y = out.y;
        r.stats.rhs_calls += out.rhs_calls as u64;
        r.push(Some([[y[2], y[3]], [y[4], y[5]]]), (out.t - a.t0).abs(), out.stop.into());
    }
    Some(r)
}

/// FTLE at arbitrary start points (probes, reference comparisons), by route (b) or (c).
/// The tracer-grid route needs a grid: use [`ftle_rows`] for it.
pub fn ftle_points<F: VelocityField>(
    field: &F,
    points: &[[f64; 2]],
    o: &FtleOptions,
) -> Result<FtleRows, LagrangianError> {
    o.advect.validate(field)?;
    match o.route {
        GradientRoute::TracerGrid => {
            return Err(LagrangianError::Invalid(
                "FTLE at scattered points needs the auxiliary-grid or the variational route;                  tracer-grid differences need a grid"
                    .into(),
            ))
        }
        GradientRoute::Auxiliary { offset } if !(offset.is_finite() && offset > 0.0) => {
            return Err(LagrangianError::NotPositive {
                name: "the auxiliary-grid offset",
                value: offset,
            })
        }
        _ => {}
    }
    // A one-row "grid" whose nodes are the points; only its size is meaningful.
    let grid = TracerGrid {
        x: crate::field::Axis { start: 0.0, step: 1.0, n: points.len() },
        y: crate::field::Axis { start: 0.0, step: 1.0, n: 1 },
    };
    let a = &o.advect;
    let mut r = FtleRows::with_capacity(&grid, 0, 1, a.horizon);
    for &p in points {
        if field.velocity(p, a.t0).is_none() {
            r.push(None, 0.0, NodeStatus::Masked);
            continue;
        }
        let (grad, t, status, calls) = match a.boundary {
            BoundaryPolicy::Stop => node_gradient(field, p, o.route, a),
            BoundaryPolicy::Extrapolate => node_gradient(&Extended { inner: field }, p, o.route, a),
        };
        r.stats.rhs_calls += calls;
        r.push(Some(grad), (t - a.t0).abs(), status);
    }
    Ok(r)
}

/// Route (a): advect one extra row on each side (when the grid has it) and difference.
fn tracer_grid_rows<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    o: &FtleOptions,
    j0: usize,
    j1: usize,
) -> Result<FtleRows, LagrangianError> {
    let (ja, jb) = (j0.saturating_sub(1), (j1 + 1).min(grid.ny()));
    let fm = flow_map_rows(field, grid, &o.advect, ja, jb)?;
    Ok(ftle_from_flow_map(&fm, j0, j1, o.advect.horizon))
}

/// FTLE of rows `j0..j1` from final positions on a tracer grid (route (a)): central
/// differences where both neighbours reached the same time as the node, one-sided where
/// one did, no value otherwise. `fm` must hold rows `j0 − 1 ..= j1` where the grid has them.
pub fn ftle_from_flow_map(fm: &FlowMapRows, j0: usize, j1: usize, horizon: f64) -> FtleRows {
    let grid = &fm.grid;
    let ja = fm.j0;
    debug_assert!(fm.j0 <= j0.saturating_sub(1) && fm.j1 >= (j1 + 1).min(grid.ny()));
    let nx = grid.nx();
    let mut r = FtleRows::with_capacity(grid, j0, j1, horizon);
    r.stats.rhs_calls = fm.rhs_calls;
    let idx = |i: usize, j: usize| (j - ja) * nx + i;
    // A neighbour is usable when it was integrated over exactly the same time.
    let usable = |c: usize, n: usize| {
        fm.status[n] != NodeStatus::Masked
            && fm.status[n] != NodeStatus::Failed
            && fm.tau[n] == fm.tau[c]
    };
    // Derivative of the final position along one axis from the neighbours `prev`/`next`.
    let diff = |c: usize, prev: Option<usize>, next: Option<usize>, h: f64| -> Option<[f64; 2]> {
        let p = prev.filter(|&p| usable(c, p));
        let n = next.filter(|&n| usable(c, n));
        let (a, b, span) = match (p, n) {
            (Some(p), Some(n)) => (p, n, 2.0 * h),
            (Some(p), None) => (p, c, h),
            (None, Some(n)) => (c, n, h),
            (None, None) => return None,
        };
        Some([(fm.x[b] - fm.x[a]) / span, (fm.y[b] - fm.y[a]) / span])
    };
    for j in j0..j1 {
        for i in 0..nx {
            let c = idx(i, j);
            let left = (i > 0).then(|| idx(i - 1, j));
            let right = (i + 1 < nx).then(|| idx(i + 1, j));
            let down = (j > 0).then(|| idx(i, j - 1));
            let up = (j + 1 < grid.ny()).then(|| idx(i, j + 1));
            let grad = match (
                fm.status[c],
                diff(c, left, right, grid.x.step),
                diff(c, down, up, grid.y.step),
            ) {
                (NodeStatus::Masked, _, _) => None,
                (_, Some(dx), Some(dy)) => Some([[dx[0], dy[0]], [dx[1], dy[1]]]),
                _ => None,
            };
            r.push(grad, fm.tau[c], fm.status[c]);
        }
    }
    r
}
