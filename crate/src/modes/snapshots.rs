//! The snapshot matrix: how a [`Series`] becomes the columns q_k ∈ ℝⁿ the decompositions
//! work on, and back.
//!
//! A column stacks u at every unmasked cell, then v at the same cells (n = 2 × valid cells).
//! Masked cells are dropped, so they never enter an inner product. The inner product is the
//! trapezoidal quadrature of ∫(u₁u₂ + v₁v₂) dA over the grid: weight dx·dy at interior
//! nodes, half of it on an edge, a quarter at a corner (common practice; it makes energies
//! independent of the grid resolution). The same weight applies to both components.

use super::ModesError;
use crate::field::{Grid, Series};
use faer::Mat;

/// Which cells enter the snapshot vector, and their quadrature weights.
#[derive(Debug, Clone, PartialEq)]
pub struct SnapshotLayout {
    grid: Grid,
    /// Flat `(ny, nx)` indices of the unmasked cells, ascending.
    cells: Vec<usize>,
    /// Quadrature weight of each row of a snapshot vector (length `2 * cells.len()`).
    weights: Vec<f64>,
}

impl SnapshotLayout {
    /// The layout of `series`. Fails if any vector is missing: a gap holds 0.0, which a
    /// decomposition would take for a real zero velocity.
    pub fn new(series: &Series) -> Result<SnapshotLayout, ModesError> {
        let count = series.gap_count();
        if count > 0 {
            return Err(ModesError::MissingVectors { count });
        }
        let grid = *series.grid();
        let (nx, ny) = (grid.nx(), grid.ny());
        let cells: Vec<usize> = (0..nx * ny).filter(|&c| !series.mask()[c]).collect();
        let area = grid.cell_area();
        let edge = |i: usize, n: usize| if i == 0 || i == n - 1 { 0.5 } else { 1.0 };
        let w: Vec<f64> =
            cells.iter().map(|&c| area * edge(c % nx, nx) * edge(c / nx, ny)).collect();
        let weights = [w.as_slice(), w.as_slice()].concat();
        Ok(SnapshotLayout { grid, cells, weights })
    }

    /// Length n of a snapshot vector.
    pub fn len(&self) -> usize {
        self.weights.len()
    }
    /// Always false: a series has at least one unmasked cell.
    pub fn is_empty(&self) -> bool {
        self.weights.is_empty()
    }
    pub fn grid(&self) -> &Grid {
        &self.grid
    }
    /// Flat `(ny, nx)` indices of the cells in the vector, u rows first then v rows.
    pub fn cells(&self) -> &[usize] {
        &self.cells
    }
    /// Quadrature weight of each row.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// Snapshot `k` of `series` as a vector (f64).
    pub fn snapshot(&self, series: &Series, k: usize) -> Vec<f64> {
        let mut q = Vec::with_capacity(self.len());
        let (u, v) = (series.u_at(k), series.v_at(k));
        q.extend(self.cells.iter().map(|&c| u[c] as f64));
        q.extend(self.cells.iter().map(|&c| v[c] as f64));
        q
    }

    /// Time mean of the snapshots, accumulated in f64.
    pub fn mean(&self, series: &Series) -> Vec<f64> {
        let mut mean = vec![0.0; self.len()];
        for k in 0..series.nt() {
            for (m, q) in mean.iter_mut().zip(self.snapshot(series, k)) {
                *m += q;
            }
        }
        let inv = 1.0 / series.nt() as f64;
        mean.iter_mut().for_each(|m| *m *= inv);
        mean
    }

    /// The weighted snapshot matrix W^{1/2}(X − mean·1ᵀ)·scale, one column per snapshot
    /// (`mean = None`: no mean removed).
    pub fn weighted_matrix(&self, series: &Series, mean: Option<&[f64]>, scale: f64) -> Mat<f64> {
        let nt = series.nt();
        let nv = self.cells.len();
        let sw: Vec<f64> = self.weights.iter().map(|w| w.sqrt() * scale).collect();
        let mut y = Mat::<f64>::zeros(self.len(), nt);
        for k in 0..nt {
            let (u, v) = (series.u_at(k), series.v_at(k));
            let col = y.col_as_slice_mut(k);
            for (r, val) in
                self.cells.iter().map(|&c| u[c]).chain(self.cells.iter().map(|&c| v[c])).enumerate()
            {
                let m = mean.map_or(0.0, |m| m[r]);
                col[r] = sw[r] * (val as f64 - m);
            }
        }
        debug_assert_eq!(y.nrows(), 2 * nv);
        y
    }

    /// Writes a snapshot vector into `(ny, nx)` u and v planes (masked cells 0.0).
    pub fn scatter(&self, q: &[f64], u: &mut [f32], v: &mut [f32]) {
        let nv = self.cells.len();
        u.fill(0.0);
        v.fill(0.0);
        for (i, &c) in self.cells.iter().enumerate() {
            u[c] = q[i] as f32;
            v[c] = q[nv + i] as f32;
        }
    }

    /// A series on this layout's grid with `series`' times, mask and units, whose snapshot
    /// `k` is `column(k)`.
    pub fn to_series(&self, series: &Series, mut column: impl FnMut(usize) -> Vec<f64>) -> Series {
        let plane = self.grid.len();
        let nt = series.nt();
        let mut u = vec![0.0f32; nt * plane];
        let mut v = vec![0.0f32; nt * plane];
        for k in 0..nt {
            let q = column(k);
            self.scatter(
                &q,
                &mut u[k * plane..(k + 1) * plane],
                &mut v[k * plane..(k + 1) * plane],
            );
        }
        series.with_velocity(u, v, None)
    }

    /// Weighted inner product ⟨a, b⟩_W = Σ w_r a_r b_r.
    pub fn inner(&self, a: &[f64], b: &[f64]) -> f64 {
        self.weights.iter().zip(a.iter().zip(b)).map(|(w, (x, y))| w * x * y).sum()
    }
}

/// Checks that snapshot times are uniformly spaced (to 1e-6 of the step, common practice
/// for recorded time stamps) and returns the step.
pub fn uniform_step(series: &Series, method: &'static str) -> Result<f64, ModesError> {
    let t = series.times();
    if t.len() < 2 {
        return Err(ModesError::TooFewSnapshots { method, needed: 2, got: t.len() });
    }
    let first = t[1] - t[0];
    for (index, w) in t.windows(2).enumerate() {
        let step = w[1] - w[0];
        if (step - first).abs() > 1e-6 * first {
            return Err(ModesError::UnevenTimes { method, index, step, first });
        }
    }
    Ok((t[t.len() - 1] - t[0]) / (t.len() - 1) as f64)
}
