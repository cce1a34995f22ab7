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
use faer::{c64, Mat};

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
        let nv = self.cells.len();
        let mut mean = vec![0.0; self.len()];
        let (mu, mv) = mean.split_at_mut(nv);
        for k in 0..series.nt() {
            let (u, v) = (series.u_at(k), series.v_at(k));
            for ((a, b), &c) in mu.iter_mut().zip(mv.iter_mut()).zip(&self.cells) {
                *a += u[c] as f64;
                *b += v[c] as f64;
            }
        }
        let inv = 1.0 / series.nt() as f64;
        mean.iter_mut().for_each(|m| *m *= inv);
        mean
    }

    /// The weighted snapshot matrix W^{1/2}(X − mean·1ᵀ)·scale, one column per snapshot
    /// (`mean = None`: no mean removed). Filled column by column, u then v half, in plain
    /// loops (for the large sets of POD this is the biggest allocation and pass of the run).
    pub fn weighted_matrix(&self, series: &Series, mean: Option<&[f64]>, scale: f64) -> Mat<f64> {
        let nv = self.cells.len();
        let sw: Vec<f64> = self.weights.iter().map(|w| w.sqrt() * scale).collect();
        let zero;
        let mean = match mean {
            Some(m) => m,
            None => {
                zero = vec![0.0; self.len()];
                &zero
            }
        };
        let (swu, swv) = sw.split_at(nv);
        let (mu, mv) = mean.split_at(nv);
        let mut y = Mat::<f64>::zeros(self.len(), series.nt());
        for k in 0..series.nt() {
            let (u, v) = (series.u_at(k), series.v_at(k));
            let (cu, cv) = y.col_as_slice_mut(k).split_at_mut(nv);
            for (i, &c) in self.cells.iter().enumerate() {
                cu[i] = swu[i] * (u[c] as f64 - mu[i]);
                cv[i] = swv[i] * (v[c] as f64 - mv[i]);
            }
        }
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

/// Near-ties of magnitude within this relative margin count as ties in
/// [`reference_component`].
pub const REFERENCE_TIE: f64 = 1e-8;

/// The component a mode's sign or phase is fixed by: the first (lowest index) of the
/// components whose magnitude is within a relative [`REFERENCE_TIE`] of the largest one.
/// Taking the first of the near-largest, not the strict largest, makes the choice the same
/// on every platform when two components are equal in exact arithmetic (a mirror-symmetric
/// mode has pairs of them) and differ only by round-off. `None` for an all-zero mode.
pub fn reference_component(len: usize, magnitude: impl Fn(usize) -> f64) -> Option<usize> {
    let top = (0..len).map(&magnitude).fold(0.0f64, f64::max);
    if top.is_nan() || top <= 0.0 {
        return None;
    }
    let floor = top * (1.0 - REFERENCE_TIE);
    (0..len).find(|&i| magnitude(i) >= floor)
}

/// Sign convention of a real mode (POD): flips `mode` so its [`reference_component`] is
/// positive; returns the factor applied (±1), by which the mode's coefficients are to be
/// multiplied too so that mode × coefficient is unchanged.
pub fn fix_sign(mode: &mut [f64]) -> f64 {
    let sign = match reference_component(mode.len(), |i| mode[i].abs()) {
        Some(i) if mode[i] < 0.0 => -1.0,
        _ => 1.0,
    };
    if sign < 0.0 {
        mode.iter_mut().for_each(|x| *x = -*x);
    }
    sign
}

/// Phase convention of a complex mode (DMD, SPOD): rotates `mode` by a unit factor so its
/// [`reference_component`] is real and positive; returns the factor e^{−iθ} applied. The
/// mode's amplitude is to be divided by it (multiplied by e^{iθ}) so that mode × amplitude
/// is unchanged. Complex-conjugate modes get conjugate factors, so conjugate pairs stay
/// conjugate.
pub fn fix_phase(mode: &mut [c64]) -> c64 {
    let Some(i) = reference_component(mode.len(), |i| mode[i].norm()) else {
        return c64::new(1.0, 0.0);
    };
    let z = mode[i];
    let rot = z.conj() / z.norm();
    mode.iter_mut().for_each(|x| *x *= rot);
    // Exactly real: the imaginary part of the reference is round-off of the rotation.
    mode[i] = c64::new(mode[i].re, 0.0);
    rot
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

/// A small series for the unit tests of the decompositions: a mean, two travelling waves
/// (frequencies 1.5 and 4 per unit time) and a masked pair of cells, on a 0.1-spaced grid.
#[cfg(test)]
pub(crate) fn test_waves(nx: usize, ny: usize, nt: usize, dt: f64) -> Series {
    use crate::field::SeriesParts;
    use std::f64::consts::PI;
    let x: Vec<f64> = (0..nx).map(|i| i as f64 * 0.1).collect();
    let y: Vec<f64> = (0..ny).map(|j| j as f64 * 0.1).collect();
    let t: Vec<f64> = (0..nt).map(|k| k as f64 * dt).collect();
    let plane = nx * ny;
    let mut mask = vec![false; plane];
    mask[ny / 2 * nx + nx / 3] = true;
    mask[ny / 2 * nx + nx / 3 + 1] = true;
    let (mut u, mut v) = (vec![0.0f32; nt * plane], vec![0.0f32; nt * plane]);
    for k in 0..nt {
        for (j, &yy) in y.iter().enumerate() {
            for (i, &xx) in x.iter().enumerate() {
                let c = j * nx + i;
                if mask[c] {
                    continue;
                }
                let a = 2.0 * PI * (1.5 * t[k] - xx);
                let b = 2.0 * PI * (4.0 * t[k] - 2.0 * xx);
                u[k * plane + c] = (1.0 + a.cos() * yy.sin() + 0.3 * b.sin()) as f32;
                v[k * plane + c] = (0.5 * a.sin() + 0.3 * (b + yy).cos()) as f32;
            }
        }
    }
    Series::from_parts(SeriesParts { x, y, t, u, v, mask: Some(mask), ..Default::default() })
        .unwrap()
}

/// Unit phases e^{iα} with α from a fixed stream (the tests' "random phase" of a basis).
#[cfg(test)]
pub(crate) fn test_phases(count: usize, seed: u64) -> Vec<c64> {
    use rand::SeedableRng;
    use rand_distr::{Distribution, Uniform};
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    let angle = Uniform::new(-std::f64::consts::PI, std::f64::consts::PI).unwrap();
    (0..count)
        .map(|_| {
            let a: f64 = angle.sample(&mut rng);
            c64::new(a.cos(), a.sin())
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reference_component_takes_the_first_of_near_ties() {
        assert_eq!(reference_component(3, |i| [1.0, 3.0, 2.0][i]), Some(1));
        // Equal in exact arithmetic, apart by round-off: the first wins either way.
        let a = [0.5, 2.0 * (1.0 - 1e-15), 1.0, 2.0];
        assert_eq!(reference_component(4, |i| a[i]), Some(1));
        let b = [0.5, 2.0, 1.0, 2.0 * (1.0 - 1e-15)];
        assert_eq!(reference_component(4, |i| b[i]), Some(1));
        // Apart by more than the margin: the largest.
        let c = [0.5, 2.0 * (1.0 - 1e-6), 1.0, 2.0];
        assert_eq!(reference_component(4, |i| c[i]), Some(3));
        assert_eq!(reference_component(2, |_| 0.0), None);
    }

    #[test]
    fn sign_convention_holds_and_ignores_the_input_sign() {
        let mode = [0.3, -0.9, 0.2, 0.9 * (1.0 - 1e-14), -0.1];
        for flip in [1.0, -1.0] {
            let mut m: Vec<f64> = mode.iter().map(|x| flip * x).collect();
            let s = fix_sign(&mut m);
            // Component 1 is the reference (first of the near-tie with component 3).
            assert!(m[1] > 0.0, "{m:?}");
            assert_eq!(s, -flip);
            let expect: Vec<f64> = mode.iter().map(|x| -x).collect();
            assert_eq!(m, expect);
            // Idempotent.
            assert_eq!(fix_sign(&mut m), 1.0);
        }
    }

    #[test]
    fn phase_convention_holds_and_ignores_the_input_phase() {
        let mode: Vec<c64> = (0..7)
            .map(|i| {
                let f = i as f64;
                c64::new((1.3 * f).sin() * (1.0 + f), (0.7 * f).cos())
            })
            .collect();
        let mut base = mode.clone();
        let rot = fix_phase(&mut base);
        let r = reference_component(7, |i| base[i].norm()).unwrap();
        assert!(base[r].re > 0.0 && base[r].im == 0.0, "{:?}", base[r]);
        // mode × amplitude unchanged: base / rot == mode.
        for (b, m) in base.iter().zip(&mode) {
            assert!((b / rot - m).norm() < 1e-14);
        }
        for (k, p) in test_phases(20, 7).into_iter().enumerate() {
            let mut m: Vec<c64> = mode.iter().map(|z| z * p).collect();
            fix_phase(&mut m);
            let err = m.iter().zip(&base).map(|(a, b)| (a - b).norm()).fold(0.0, f64::max);
            assert!(err < 1e-14, "draw {k}: {err}");
            // Conjugate modes get conjugate results.
            let mut c: Vec<c64> = mode.iter().map(|z| (z * p).conj()).collect();
            fix_phase(&mut c);
            let err = c.iter().zip(&base).map(|(a, b)| (a - b.conj()).norm()).fold(0.0, f64::max);
            assert!(err < 1e-14, "draw {k}, conjugate: {err}");
        }
    }
}
