//! Native parallelism for sensitivity: rayon over chunks of tracer-grid rows, each running
//! the same single-threaded row kernel as the page's workers (results do not depend on the
//! chunking). Memory per thread is one trajectory's propagators.

use super::rows::SensitivityRows;
use super::workflow::{SensitivityPlan, SensitivityResult};
use super::SensitivityError;
use rayon::prelude::*;

/// The whole grid of `plan`, rows split into chunks of `rows_per_chunk`, on rayon's pool.
pub fn run_parallel(
    plan: &SensitivityPlan<'_>,
    rows_per_chunk: usize,
) -> Result<SensitivityResult, SensitivityError> {
    let step = rows_per_chunk.max(1);
    let ny = plan.grid.ny();
    let ranges: Vec<(usize, usize)> =
        (0..ny).step_by(step).map(|j0| (j0, (j0 + step).min(ny))).collect();
    let parts: Vec<(SensitivityRows, Option<Vec<f32>>)> = ranges
        .par_iter()
        .map(|&(j0, j1)| Ok((plan.rows(j0, j1)?, plan.delta_rows(j0, j1)?)))
        .collect::<Result<_, SensitivityError>>()?;
    let mut maps = Vec::with_capacity(parts.len());
    let mut delta: Option<Vec<f32>> = plan.epsilon.map(|_| Vec::new());
    for (m, d) in parts {
        maps.push(m);
        if let (Some(all), Some(d)) = (delta.as_mut(), d) {
            all.extend(d);
        }
    }
    Ok(SensitivityResult::assemble(SensitivityRows::concat(maps)?, delta, plan.epsilon))
}
