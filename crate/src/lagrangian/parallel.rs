//! Native parallelism: rayon over chunks of tracer-grid rows. Each chunk runs the same
//! single-threaded row kernel the browser's workers run, so the result is bit-identical to
//! a serial run whatever the chunking.

use super::error::LagrangianError;
use super::ftle::{ftle_rows, FtleOptions, FtleRows};
use super::seeding::TracerGrid;
use super::velocity::VelocityField;
use rayon::prelude::*;

/// FTLE of the whole grid, rows split into chunks of `rows_per_chunk` (at least 1) and
/// computed on rayon's thread pool.
pub fn ftle_field_parallel<F: VelocityField + Sync>(
    field: &F,
    grid: &TracerGrid,
    o: &FtleOptions,
    rows_per_chunk: usize,
) -> Result<FtleRows, LagrangianError> {
    let step = rows_per_chunk.max(1);
    let ranges: Vec<(usize, usize)> =
        (0..grid.ny()).step_by(step).map(|j0| (j0, (j0 + step).min(grid.ny()))).collect();
    let parts: Result<Vec<FtleRows>, LagrangianError> =
        ranges.par_iter().map(|&(j0, j1)| ftle_rows(field, grid, o, j0, j1)).collect();
    FtleRows::concat(parts?)
}
