//! The transport benchmark problem shared by the native timing harness
//! (transport_bench.rs) and the WebAssembly module (transport_wasm.rs): the same core
//! calls on the same data, so native and wasm rates compare like with like.
//!
//! A tracer-step is one RK4 step of one tracer, counted from the engine's tally of
//! velocity evaluations (÷ 4): tracers that leave the window stop early, and the steps
//! that locate an exit are counted too.

use sillage::field::Series;
use sillage::lagrangian::{
    flow_map_rows, ftle_rows, AdvectOptions, BoundaryPolicy, FlowMapRows, FtleOptions,
    GradientRoute, GriddedField, Integrator, SpaceInterp, TimeInterp, TracerGrid,
};

/// One benchmark problem on a loaded series.
#[derive(Debug, Clone, Copy)]
pub struct Problem {
    pub nx: usize,
    pub ny: usize,
    pub t0: f64,
    pub horizon: f64,
    pub step: f64,
}

impl Problem {
    fn advect(&self) -> AdvectOptions {
        AdvectOptions {
            t0: self.t0,
            horizon: self.horizon,
            integrator: Integrator::Rk4 { max_step: self.step },
            boundary: BoundaryPolicy::Stop,
        }
    }

    fn grid(&self, field: &GriddedField) -> Result<TracerGrid, String> {
        TracerGrid::over_window(field, self.nx, self.ny).map_err(|e| e.to_string())
    }

    /// The flow map of the whole grid on the calling thread.
    pub fn flow_map(&self, series: &Series) -> Result<FlowMapRows, String> {
        let field = GriddedField::new(series, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = self.grid(&field)?;
        flow_map_rows(&field, &grid, &self.advect(), 0, grid.ny()).map_err(|e| e.to_string())
    }

    /// Variational FTLE of the whole grid on the calling thread: (tracer-steps, Σσ).
    pub fn ftle(&self, series: &Series) -> Result<(u64, f64), String> {
        let field = GriddedField::new(series, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = self.grid(&field)?;
        let o = FtleOptions { advect: self.advect(), route: GradientRoute::Variational };
        let r = ftle_rows(&field, &grid, &o, 0, grid.ny()).map_err(|e| e.to_string())?;
        Ok((r.stats.rhs_calls / 4, r.ftle.iter().map(|&v| v as f64).sum()))
    }
}

/// Σ(x + y) over the final positions: a cheap fingerprint of a flow map.
pub fn checksum(fm: &FlowMapRows) -> f64 {
    fm.x.iter().zip(&fm.y).map(|(x, y)| x + y).sum()
}
