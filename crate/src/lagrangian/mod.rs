//! Lagrangian transport: tracer advection through a velocity field, flow maps, and finite-
//! time Lyapunov exponents (FTLE).
//!
//! * [`VelocityField`] is what the engine needs from a flow; [`GriddedField`] interpolates a
//!   [`crate::field::Series`], the [`analytic`] flows drive the same code in tests.
//! * [`integrate_rk4`] (fixed step) and [`integrate_dopri`] (Dormand–Prince 5(4), error
//!   control) advance any [`System`]; [`engine`] seeds a [`TracerGrid`], applies the
//!   [`BoundaryPolicy`] and returns per-tracer positions, exit times and status. On gridded
//!   bilinear × linear data, fixed-step RK4 advances all tracers together over time slices
//!   blended once per stage time (`lockstep.rs`), with the per-tracer path's results.
//! * [`ftle`] computes σ by the three routes to ∇F of METHODS.md §1, with the exit-time map
//!   and the det ∇F = 1 quality map; [`ridges`] extracts ridge polylines; [`sequence`]
//!   computes FTLE for many start times, directly or by flow-map composition.
//!
//! Conventions: positions and times f64 in the series' units (SI inside); horizon
//! T = t − t₀, negative for backward time; FTLE in 1/time; maps `(ny, nx)` row-major over
//! the tracer grid; nodes without a value hold 0 and carry a flag saying why.
//!
//! Parallelism is the caller's: every entry point works on a row range `j0..j1` on the
//! calling thread and is deterministic, so rayon (native, [`parallel`]) and Web Workers
//! (browser) split the same work the same way.

pub mod analytic;
mod dormand_prince;
pub mod engine;
mod error;
pub mod ftle;
mod gridded;
mod kernels;
mod lockstep;
mod outcome;
mod pair;
#[cfg(feature = "cli")]
pub mod parallel;
pub mod ridges;
mod rk4;
mod seeding;
pub mod sequence;
mod slice_set;
mod system;
mod tableau;
mod velocity;

pub use dormand_prince::{integrate_dopri, DopriOptions, EXIT_RESOLUTION};
pub(crate) use engine::lockstep_field;
pub use engine::{
    flow_map_rows, AdvectOptions, BoundaryPolicy, FlowMapRows, Integrator, NodeStatus,
};
pub use error::LagrangianError;
pub use ftle::{
    ftle_field, ftle_from_flow_map, ftle_points, ftle_rows, singular_values, FtleFlag, FtleOptions,
    FtleRows, FtleStats, GradientRoute,
};
pub use gridded::{GriddedField, SpaceInterp, TimeInterp};
pub(crate) use lockstep::Located;
pub use outcome::{Outcome, Stop};
pub use ridges::{extract_ridges, Ridge, RidgeOptions};
pub use rk4::{integrate_rk4, rk4_step, step_count, EXIT_BISECTIONS};
pub use seeding::TracerGrid;
pub use sequence::{ftle_sequence, SequenceMethod, COMPOSITION_ROUTE};
pub(crate) use slice_set::SliceSet;
pub use system::{satellites_start, Satellites, System, Tangent, Tracer};
pub use tableau::{Tableau, DOPRI54, RK4};
pub use velocity::{Extended, Mat2, PerTracer, Rect, Vec2, VelocityField, Windowed};
