//! The tracer engine: options, their validation, and the per-row driver that seeds, applies
//! the boundary policy and integrates. Integrator files only step; this file decides.

use super::dormand_prince::{integrate_dopri, DopriOptions};
use super::error::LagrangianError;
use super::gridded::GriddedField;
use super::lockstep;
use super::outcome::{Outcome, Stop};
use super::rk4::{integrate_rk4, integrate_rk4_lanes};
use super::seeding::TracerGrid;
use super::system::{System, Tracer};
use super::velocity::{Extended, VelocityField};
use serde::{Deserialize, Serialize};

/// Time integration scheme.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Integrator {
    /// Classical RK4 with equal steps no longer than `max_step` (time units). Starting
    /// rule (from memory, METHODS.md §1): |u|max·Δt ≲ half a grid spacing; check by halving.
    Rk4 { max_step: f64 },
    /// Dormand–Prince 5(4) with error control.
    DormandPrince(DopriOptions),
}

/// What happens to a tracer that reaches a point without data.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BoundaryPolicy {
    /// Stop there and keep the time actually integrated τ; FTLE uses (1/τ) ln σ₁ and the
    /// node is flagged (METHODS.md §1, option 1). The default.
    #[default]
    Stop,
    /// Leave the window with the first-order continuation of [`Extended`]; masked cells
    /// and gaps inside the window still stop the tracer.
    Extrapolate,
}

/// When, for how long and how to integrate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct AdvectOptions {
    /// Start time t₀.
    pub t0: f64,
    /// Horizon T = t − t₀; negative integrates backward in time.
    pub horizon: f64,
    pub integrator: Integrator,
    pub boundary: BoundaryPolicy,
}

impl AdvectOptions {
    /// Checks the options against the field: finite non-zero horizon, positive step or
    /// tolerances, and the whole interval [t₀, t₀ + T] inside the data's times.
    pub fn validate<F: VelocityField>(&self, field: &F) -> Result<(), LagrangianError> {
        if !self.t0.is_finite() {
            return Err(LagrangianError::BadStartTime(self.t0));
        }
        if !self.horizon.is_finite() || self.horizon == 0.0 {
            return Err(LagrangianError::BadHorizon(self.horizon));
        }
        let positive = |name: &'static str, value: f64| {
            if value.is_finite() && value > 0.0 {
                Ok(())
            } else {
                Err(LagrangianError::NotPositive { name, value })
            }
        };
        match self.integrator {
            Integrator::Rk4 { max_step } => positive("the RK4 time step", max_step)?,
            Integrator::DormandPrince(d) => {
                positive("the relative tolerance rtol", d.rtol)?;
                positive("the absolute tolerance atol", d.atol)?;
                if d.max_steps == 0 {
                    return Err(LagrangianError::Invalid(
                        "the step budget max_steps must be at least 1".into(),
                    ));
                }
            }
        }
        if let Some((a, b)) = field.time_range() {
            let (lo, hi) = if self.horizon > 0.0 {
                (self.t0, self.t0 + self.horizon)
            } else {
                (self.t0 + self.horizon, self.t0)
            };
            let slack = 1e-9 * (b - a).abs();
            if lo < a - slack || hi > b + slack {
                return Err(LagrangianError::OutsideTimeRange {
                    t0: self.t0,
                    horizon: self.horizon,
                    need_from: lo,
                    need_to: hi,
                    have_from: a,
                    have_to: b,
                });
            }
        }
        Ok(())
    }
}

/// Integrates one system with the chosen integrator.
#[inline]
pub fn integrate<const N: usize, Sys: System<N>>(
    sys: &Sys,
    y0: [f64; N],
    o: &AdvectOptions,
) -> Outcome<N> {
    match o.integrator {
        Integrator::Rk4 { max_step } => integrate_rk4(sys, y0, o.t0, o.horizon, max_step),
        Integrator::DormandPrince(d) => integrate_dopri(sys, y0, o.t0, o.horizon, &d),
    }
}

/// Per-node status of a tracer-grid result, stored as `u8` in maps and files.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[repr(u8)]
pub enum NodeStatus {
    /// Integrated over the whole horizon.
    Complete = 0,
    /// Stopped at the data boundary (time integrated in the exit-time map).
    Exited = 1,
    /// Seed in a masked cell or outside the data: not integrated.
    Masked = 2,
    /// The adaptive integrator ran out of steps.
    Failed = 3,
}

impl From<Stop> for NodeStatus {
    fn from(s: Stop) -> Self {
        match s {
            Stop::Complete => NodeStatus::Complete,
            Stop::Exited => NodeStatus::Exited,
            Stop::Failed => NodeStatus::Failed,
        }
    }
}

/// Final positions of the tracers of rows `j0..j1` of a tracer grid.
#[derive(Debug, Clone, PartialEq)]
pub struct FlowMapRows {
    pub grid: TracerGrid,
    pub j0: usize,
    pub j1: usize,
    /// Final x and y, `(j1 − j0, nx)`; the start point for masked seeds.
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// Time actually integrated |t − t₀| per node (the exit-time map); 0 for masked seeds.
    pub tau: Vec<f64>,
    pub status: Vec<NodeStatus>,
    /// Right-hand-side evaluations over all tracers of the rows.
    pub rhs_calls: u64,
}

/// The gridded field behind `field` when the lockstep path reproduces its samples
/// (bilinear in space, linear in time).
pub(crate) fn lockstep_field<G: VelocityField>(field: &G) -> Option<&GriddedField<'_>> {
    field.as_gridded().filter(|g| g.sliceable())
}

/// Checks `j0..j1` against the grid.
pub(crate) fn check_rows(grid: &TracerGrid, j0: usize, j1: usize) -> Result<(), LagrangianError> {
    if j0 >= j1 || j1 > grid.ny() {
        return Err(LagrangianError::BadRowRange { j0, j1, ny: grid.ny() });
    }
    Ok(())
}

/// Advects the tracers of rows `j0..j1` (positions only). The building block for
/// tracer-grid FTLE, flow-map composition and the page's workers, which split a grid into
/// row ranges: the result of a range does not depend on how the grid was split.
pub fn flow_map_rows<F: VelocityField>(
    field: &F,
    grid: &TracerGrid,
    o: &AdvectOptions,
    j0: usize,
    j1: usize,
) -> Result<FlowMapRows, LagrangianError> {
    o.validate(field)?;
    check_rows(grid, j0, j1)?;
    Ok(match o.boundary {
        BoundaryPolicy::Stop => flow_rows_with(field, field, grid, o, j0, j1),
        BoundaryPolicy::Extrapolate => {
            flow_rows_with(field, &Extended { inner: field }, grid, o, j0, j1)
        }
    })
}

fn flow_rows_with<F: VelocityField, G: VelocityField>(
    seed_field: &F,
    field: &G,
    grid: &TracerGrid,
    o: &AdvectOptions,
    j0: usize,
    j1: usize,
) -> FlowMapRows {
    let nx = grid.nx();
    let n = (j1 - j0) * nx;
    // Every node is written below: masked seeds here, the others when they finish.
    let mut r = FlowMapRows {
        grid: *grid,
        j0,
        j1,
        x: vec![0.0; n],
        y: vec![0.0; n],
        tau: vec![0.0; n],
        status: vec![NodeStatus::Masked; n],
        rhs_calls: 0,
    };
    let node = |c: usize| grid.node(c % nx, j0 + c / nx);
    for c in 0..n {
        let p = node(c);
        r.x[c] = p[0];
        r.y[c] = p[1];
    }
    let seeds = (0..n).filter_map(|c| {
        let p = node(c);
        seed_field.velocity(p, o.t0).is_some().then_some((c, p))
    });
    let sys = Tracer(field);
    let mut store = |c: usize, out: Outcome<2>| {
        r.x[c] = out.y[0];
        r.y[c] = out.y[1];
        r.tau[c] = (out.t - o.t0).abs();
        r.status[c] = out.stop.into();
        r.rhs_calls += out.rhs_calls as u64;
    };
    match o.integrator {
        Integrator::Rk4 { max_step } => match lockstep_field(field) {
            // Gridded bilinear × linear data: all tracers step by step over shared time
            // slices, with the same results (lockstep.rs).
            Some(g) => {
                let seeds: Vec<_> = seeds.collect();
                if seeds.len() >= lockstep::MIN_TRACERS {
                    lockstep::integrate_positions(g, seeds, o.t0, o.horizon, max_step, store)
                } else {
                    integrate_rk4_lanes(&sys, seeds, o.t0, o.horizon, max_step, store)
                }
            }
            None => integrate_rk4_lanes(&sys, seeds, o.t0, o.horizon, max_step, store),
        },
        Integrator::DormandPrince(_) => {
            for (c, p) in seeds {
                store(c, integrate(&sys, p, o));
            }
        }
    }
    r
}
