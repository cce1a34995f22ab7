//! FTLE fields for a sequence of start times t₀ + iΔ (for animations), by direct
//! integration or by composing short flow maps.
//!
//! Composition (Brunton & Rowley 2010, Chaos 20:017503): the horizon T = mΔ is cut into m
//! intervals of length Δ; the flow map of each interval is computed once on the tracer
//! grid, and F_{t₀+iΔ}^{t₀+iΔ+T} = F_{m−1} ∘ … ∘ F_0 is evaluated by interpolating the stored
//! short maps at the intermediate positions. Sequence members then share all but one short
//! map: N fields cost N + m − 1 short maps instead of N·m. The price is interpolation error
//! in every composition step; it grows with m and shrinks as the tracer grid is refined.
//! Here the short maps are stored as displacements (smoother than positions) and
//! interpolated bilinearly; ∇F is taken by tracer-grid differences of the composed map.
//!
//! Measured (tests/lagrangian_sequence.rs, time-periodic double gyre, T = ±10, Δ = 1, RK4
//! Δt = 0.02, three members, tracer-grid differences for both): median |σ_composed − σ_direct|
//! 2.2e-4 / 8.4e-5 / 3.5e-5 and maximum 1.9e-2 / 1.1e-2 / 5.6e-3 at tracer spacings
//! 0.02 / 0.01 / 0.005 (same forward and backward); the maximum sits on ridges, where the
//! flow map varies fastest. Evaluations: 0.4× those of direct integration for three members,
//! tending to 1/m for long sequences.
//!
//! A tracer whose short map is undefined (it left the data during that interval, or the
//! composed position falls where a neighbouring short map is undefined or off the grid)
//! stops after the last whole interval: τ is a multiple of Δ and the node is flagged.

use super::engine::{flow_map_rows, AdvectOptions, FlowMapRows, NodeStatus};
use super::error::LagrangianError;
use super::ftle::{ftle_field, ftle_from_flow_map, FtleOptions, FtleRows, GradientRoute};
use super::seeding::TracerGrid;
use super::velocity::{Vec2, VelocityField};

/// How the members of a sequence are computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SequenceMethod {
    /// Integrate every member over its whole horizon (exact up to the integrator).
    Direct,
    /// Compose short flow maps (fast, with interpolation error).
    Composition,
}

/// FTLE fields for the start times `t0 + i·interval`, i = 0..count, with the horizon and
/// route of `o` (whose `advect.t0` is ignored). Composition needs `horizon` to be a whole
/// multiple of `interval` and uses tracer-grid differences whatever `o.route` says.
pub fn ftle_sequence<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    o: &FtleOptions,
    t0: f64,
    interval: f64,
    count: usize,
    method: SequenceMethod,
) -> Result<Vec<FtleRows>, LagrangianError> {
    if !(interval.is_finite() && interval > 0.0) {
        return Err(LagrangianError::NotPositive {
            name: "the interval between start times",
            value: interval,
        });
    }
    if count == 0 {
        return Err(LagrangianError::Invalid("a sequence needs at least one start time".into()));
    }
    let horizon = o.advect.horizon;
    let member = |i: usize| {
        let mut m = *o;
        m.advect.t0 = t0 + i as f64 * interval;
        m
    };
    // Validate the first and the last member's time span up front.
    member(0).advect.validate(field)?;
    member(count - 1).advect.validate(field)?;
    match method {
        SequenceMethod::Direct => (0..count).map(|i| ftle_field(field, grid, &member(i))).collect(),
        SequenceMethod::Composition => {
            let m = (horizon.abs() / interval).round();
            if m < 1.0 || (m * interval - horizon.abs()).abs() > 1e-9 * horizon.abs() {
                return Err(LagrangianError::Invalid(format!(
                    "flow-map composition needs the horizon ({horizon}) to be a whole multiple \
                     of the interval between start times ({interval})"
                )));
            }
            compose(field, grid, &o.advect, t0, interval, count, m as usize)
        }
    }
}

/// Displacements of one short map on the whole grid, and where they are usable.
struct ShortMap {
    dx: Vec<f64>,
    dy: Vec<f64>,
    ok: Vec<bool>,
    rhs_calls: u64,
}

impl ShortMap {
    fn new(fm: FlowMapRows) -> ShortMap {
        let g = fm.grid;
        let mut dx = Vec::with_capacity(g.len());
        let mut dy = Vec::with_capacity(g.len());
        for j in 0..g.ny() {
            for i in 0..g.nx() {
                let p = g.node(i, j);
                let c = j * g.nx() + i;
                dx.push(fm.x[c] - p[0]);
                dy.push(fm.y[c] - p[1]);
            }
        }
        ShortMap {
            dx,
            dy,
            ok: fm.status.iter().map(|&s| s == NodeStatus::Complete).collect(),
            rhs_calls: fm.rhs_calls,
        }
    }

    /// Bilinear displacement at `p`; `None` off the grid or next to an unusable node.
    fn at(&self, g: &TracerGrid, p: Vec2) -> Option<Vec2> {
        let fx = (p[0] - g.x.start) / g.x.step;
        let fy = (p[1] - g.y.start) / g.y.step;
        let (mx, my) = ((g.nx() - 1) as f64, (g.ny() - 1) as f64);
        if !(fx >= 0.0 && fx <= mx && fy >= 0.0 && fy <= my) {
            return None;
        }
        let i = (fx as usize).min(g.nx() - 2);
        let j = (fy as usize).min(g.ny() - 2);
        let (sx, sy) = (fx - i as f64, fy - j as f64);
        let c = j * g.nx() + i;
        let corners = [c, c + 1, c + g.nx(), c + g.nx() + 1];
        if !corners.iter().all(|&k| self.ok[k]) {
            return None;
        }
        let w = [(1.0 - sx) * (1.0 - sy), sx * (1.0 - sy), (1.0 - sx) * sy, sx * sy];
        let mut d = [0.0; 2];
        for (k, &n) in corners.iter().enumerate() {
            d[0] += w[k] * self.dx[n];
            d[1] += w[k] * self.dy[n];
        }
        Some(d)
    }
}

fn compose<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    a: &AdvectOptions,
    t0: f64,
    interval: f64,
    count: usize,
    m: usize,
) -> Result<Vec<FtleRows>, LagrangianError> {
    let dir = a.horizon.signum();
    // Short map k starts at t0 + k·Δ and runs dir·Δ; members use maps i, i+dir, …
    let first = if dir > 0.0 { 0i64 } else { -(m as i64) + 1 };
    let last = count as i64 - 1 + if dir > 0.0 { m as i64 - 1 } else { 0 };
    let mut maps = Vec::with_capacity((last - first + 1) as usize);
    for k in first..=last {
        let mut s = *a;
        s.t0 = t0 + k as f64 * interval;
        s.horizon = dir * interval;
        maps.push(ShortMap::new(flow_map_rows(field, grid, &s, 0, grid.ny())?));
    }
    let short_calls: u64 = maps.iter().map(|s| s.rhs_calls).sum();
    let mut out = Vec::with_capacity(count);
    for i in 0..count {
        let mut fm = FlowMapRows {
            grid: *grid,
            j0: 0,
            j1: grid.ny(),
            x: Vec::with_capacity(grid.len()),
            y: Vec::with_capacity(grid.len()),
            tau: Vec::with_capacity(grid.len()),
            status: Vec::with_capacity(grid.len()),
            // Evaluations are shared between members; report each member's share.
            rhs_calls: short_calls / count as u64,
        };
        let start_map = |q: usize| {
            let k = i as i64 + dir as i64 * q as i64;
            &maps[(k - first) as usize]
        };
        let first_map = start_map(0);
        for j in 0..grid.ny() {
            for n in 0..grid.nx() {
                let p0 = grid.node(n, j);
                let c = j * grid.nx() + n;
                if !first_map.ok[c] && field.velocity(p0, t0 + i as f64 * interval).is_none() {
                    fm.x.push(p0[0]);
                    fm.y.push(p0[1]);
                    fm.tau.push(0.0);
                    fm.status.push(NodeStatus::Masked);
                    continue;
                }
                let mut p = p0;
                let mut done = 0;
                for q in 0..m {
                    // The first step starts on a node: use its own value exactly.
                    let d = if q == 0 {
                        first_map.ok[c].then(|| [first_map.dx[c], first_map.dy[c]])
                    } else {
                        start_map(q).at(grid, p)
                    };
                    match d {
                        Some(d) => {
                            p = [p[0] + d[0], p[1] + d[1]];
                            done += 1;
                        }
                        None => break,
                    }
                }
                fm.x.push(p[0]);
                fm.y.push(p[1]);
                fm.tau.push(done as f64 * interval);
                fm.status.push(if done == m { NodeStatus::Complete } else { NodeStatus::Exited });
            }
        }
        out.push(ftle_from_flow_map(&fm, 0, grid.ny(), a.horizon));
    }
    Ok(out)
}

/// The route composition uses, for callers that want to compare like with like.
pub const COMPOSITION_ROUTE: GradientRoute = GradientRoute::TracerGrid;
