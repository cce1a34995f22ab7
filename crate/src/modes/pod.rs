//! # Proper orthogonal decomposition (POD) of a snapshot series
//!
//! Sirovich, L. 1987, "Turbulence and the dynamics of coherent structures", Q. Appl. Math.
//! 45:561–590 (the snapshot method); Taira, K. et al. 2017, "Modal analysis of fluid flows:
//! an overview", AIAA J. 55:4013–4041 (conventions).
//!
//! With snapshots q_k (k = 0..m−1, see [`SnapshotLayout`]), mean q̄ and the quadrature
//! weights W, the thin SVD of Y = W^{1/2}(X − q̄1ᵀ)/√m = UΣVᵀ gives
//! * energies λ_j = s_j² (time-averaged ∫|u′|² dA carried by mode j; Σλ_j = total),
//! * spatial modes φ_j = W^{−1/2}u_j, orthonormal in the weighted inner product,
//! * temporal coefficients b_j(t_k) = √m s_j V_kj = ⟨φ_j, q_k − q̄⟩_W,
//!
//! so q_k = q̄ + Σ_j φ_j b_j(t_k) exactly when every mode is kept.
//!
//! Conventions: modes sorted by energy. A mode is defined up to its sign; so that results
//! are the same on every platform and run, the sign is fixed so the largest-|·| entry of
//! φ_j (over the stacked u, v vector of the physical mode; the first one of entries equal
//! to a relative 1e-8, e.g. mirror images in a symmetric mode) is positive, and the
//! coefficients b_j are flipped with it, so φ_j b_j and every reconstruction are unchanged
//! ([`Pod::apply_sign_convention`]; DMD and SPOD fix a complex phase by the same component). Routes: snapshot method or direct SVD
//! ([`SvdRoute`], `Auto` by shape), or the randomized SVD ([`RandomizedSvd`]) for the
//! leading k modes. Cost: O(n m²) for the first two, O(n m k) for the randomized one.
//! Failure modes: fewer modes than asked when the data's numerical rank is lower (at most
//! m − 1 after mean removal); the snapshot route loses relative accuracy in the tail
//! (see [`super::linalg`]).

use super::linalg::{svd_work, thin_svd, SvdRoute, ThinSvd, COPY_UNITS, OUTPUT_UNITS};
use super::randomized::RandomizedSvd;
use super::snapshots::{fix_sign, SnapshotLayout};
use super::ModesError;
use crate::field::Series;
use crate::progress::Progress;
use faer::Mat;

/// How the SVD is computed.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum PodSolver {
    /// Exact thin SVD by the given route.
    Exact(SvdRoute),
    /// Randomized SVD of the leading `rank` modes.
    Randomized(RandomizedSvd),
}

/// Options of [`pod`].
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PodOptions {
    /// Modes to keep (`None`: all up to the numerical rank). Required by the randomized solver.
    pub rank: Option<usize>,
    pub solver: PodSolver,
    /// Subtract the time mean first (the usual POD of fluctuations).
    pub subtract_mean: bool,
}

impl Default for PodOptions {
    fn default() -> Self {
        PodOptions { rank: None, solver: PodSolver::Exact(SvdRoute::Auto), subtract_mean: true }
    }
}

/// A POD basis of a series.
#[derive(Debug, Clone)]
pub struct Pod {
    pub layout: SnapshotLayout,
    /// Time mean q̄ (zeros if the mean was not subtracted).
    pub mean: Vec<f64>,
    /// Spatial modes φ_j as columns, n × r.
    pub modes: Mat<f64>,
    /// Singular values s_j of W^{1/2}X′/√m (nonincreasing).
    pub singular_values: Vec<f64>,
    /// Temporal coefficients b_j(t_k), m × r.
    pub coefficients: Mat<f64>,
    /// Total fluctuation energy ‖W^{1/2}X′‖²_F/m = Σ over all modes, kept or not.
    pub total_energy: f64,
    /// The solver actually used (`Auto` resolved).
    pub solver: PodSolver,
}

/// POD of `series`.
pub fn pod(series: &Series, opts: &PodOptions) -> Result<Pod, ModesError> {
    pod_with_progress(series, opts, &mut Progress::silent())
}

/// [`pod`], reporting its progress (the same numbers: the observer only watches).
pub fn pod_with_progress(
    series: &Series,
    opts: &PodOptions,
    progress: &mut Progress,
) -> Result<Pod, ModesError> {
    let layout = SnapshotLayout::new(series)?;
    let m = series.nt();
    if m < 2 {
        return Err(ModesError::TooFewSnapshots { method: "POD", needed: 2, got: m });
    }
    if opts.rank == Some(0) {
        return Err(ModesError::BadOption { name: "rank", rule: "must be at least 1".into() });
    }
    let mean = if opts.subtract_mean { layout.mean(series) } else { vec![0.0; layout.len()] };
    let y = layout.weighted_matrix(series, Some(&mean), 1.0 / (m as f64).sqrt());
    let total_energy: f64 =
        (0..m).map(|k| y.col_as_slice(k).iter().map(|x| x * x).sum::<f64>()).sum();
    if total_energy == 0.0 {
        return Err(ModesError::NoEnergy);
    }
    let rank = opts.rank.unwrap_or(usize::MAX);
    // The snapshot matrix (built), and the modes and coefficients handed out (at most m).
    let n = y.nrows();
    let build = COPY_UNITS * (n * m) as f64;
    let output = |r: usize| OUTPUT_UNITS * ((n + m) * r) as f64;
    progress.plan(build + output(m.min(rank)));
    let (svd, solver) = match opts.solver {
        PodSolver::Exact(route) => {
            let route = route.resolve(y.nrows(), y.ncols());
            progress.plan(svd_work(n, m, route, rank));
            progress.advance(build);
            let svd = thin_svd(y.as_ref(), route, rank, progress)?;
            // Data of a lower numerical rank than planned for keep fewer modes.
            let r = svd.s.len();
            progress.revise(svd_work(n, m, route, rank), svd_work(n, m, route, r));
            (svd, PodSolver::Exact(route))
        }
        PodSolver::Randomized(r) => {
            let k = opts.rank.ok_or(ModesError::BadOption {
                name: "rank",
                rule: "the randomized solver needs the number of modes".into(),
            })?;
            progress.advance(build);
            (r.compute(y.as_ref(), k)?, opts.solver)
        }
    };
    let r = svd.s.len();
    progress.revise(output(m.min(rank)), output(r));
    let out = assemble(layout, mean, svd, total_energy, m, solver);
    progress.advance(output(r));
    progress.finish();
    Ok(out)
}

fn assemble(
    layout: SnapshotLayout,
    mean: Vec<f64>,
    svd: ThinSvd,
    total_energy: f64,
    m: usize,
    solver: PodSolver,
) -> Pod {
    let ThinSvd { u, s, v } = svd;
    let r = s.len();
    let n = layout.len();
    let inv_sw: Vec<f64> = layout.weights().iter().map(|w| 1.0 / w.sqrt()).collect();
    let mut modes = Mat::<f64>::zeros(n, r);
    let mut coefficients = Mat::<f64>::zeros(m, r);
    let sm = (m as f64).sqrt();
    for j in 0..r {
        let col = modes.col_as_slice_mut(j);
        for i in 0..n {
            col[i] = u[(i, j)] * inv_sw[i];
        }
        let c = coefficients.col_as_slice_mut(j);
        for k in 0..m {
            c[k] = sm * s[j] * v[(k, j)];
        }
    }
    let mut pod =
        Pod { layout, mean, modes, singular_values: s, coefficients, total_energy, solver };
    pod.apply_sign_convention();
    pod
}

impl Pod {
    /// Applies the sign convention of the module doc: each mode flipped so its reference
    /// component ([`super::snapshots::reference_component`]: the largest |φ_j| entry, the
    /// first of near-ties) is positive, its coefficients flipped with it. Idempotent; φ_j b_j
    /// and so every reconstruction are unchanged. [`pod`] returns bases in this convention.
    pub fn apply_sign_convention(&mut self) {
        for j in 0..self.rank() {
            let sign = fix_sign(self.modes.col_as_slice_mut(j));
            if sign < 0.0 {
                self.coefficients.col_as_slice_mut(j).iter_mut().for_each(|x| *x = -*x);
            }
        }
    }

    /// Number of modes kept.
    pub fn rank(&self) -> usize {
        self.singular_values.len()
    }
    /// Energies λ_j = s_j².
    pub fn energies(&self) -> Vec<f64> {
        self.singular_values.iter().map(|s| s * s).collect()
    }
    /// Fraction of the total fluctuation energy in each kept mode.
    pub fn energy_fractions(&self) -> Vec<f64> {
        self.energies().iter().map(|e| e / self.total_energy).collect()
    }
    /// Cumulative energy fraction of modes 1..=j.
    pub fn cumulative_energy(&self) -> Vec<f64> {
        let mut acc = 0.0;
        self.energy_fractions()
            .iter()
            .map(|f| {
                acc += f;
                acc
            })
            .collect()
    }

    /// Snapshot `k` rebuilt from the modes `which` (0-based), plus the mean if asked.
    pub fn reconstruct(&self, k: usize, which: &[usize], with_mean: bool) -> Vec<f64> {
        let mut q = if with_mean { self.mean.clone() } else { vec![0.0; self.layout.len()] };
        for &j in which {
            let b = self.coefficients[(k, j)];
            for (x, p) in q.iter_mut().zip(self.modes.col_as_slice(j)) {
                *x += b * p;
            }
        }
        q
    }

    /// The velocity series rebuilt from modes `which` (0-based), plus the mean if asked, on
    /// the grid and times of `series` (the series this basis was computed from).
    pub fn to_series(&self, series: &Series, which: &[usize], with_mean: bool) -> Series {
        self.layout.to_series(series, |k| self.reconstruct(k, which, with_mean))
    }

    /// Mode `j` (0-based) as `(ny, nx)` u and v planes.
    pub fn mode_planes(&self, j: usize) -> (Vec<f32>, Vec<f32>) {
        let plane = self.layout.grid().len();
        let (mut u, mut v) = (vec![0.0; plane], vec![0.0; plane]);
        self.layout.scatter(self.modes.col_as_slice(j), &mut u, &mut v);
        (u, v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::modes::snapshots::{reference_component, test_waves};

    fn max_reconstruction(p: &Pod, which: &[usize]) -> Vec<f64> {
        (0..p.coefficients.nrows()).flat_map(|k| p.reconstruct(k, which, true)).collect()
    }

    #[test]
    fn sign_convention_holds_and_keeps_reconstructions() {
        let s = test_waves(12, 8, 60, 0.05);
        for solver in [
            PodSolver::Exact(SvdRoute::Snapshot),
            PodSolver::Exact(SvdRoute::Direct),
            PodSolver::Randomized(RandomizedSvd::default()),
        ] {
            let p = pod(&s, &PodOptions { rank: Some(6), solver, subtract_mean: true }).unwrap();
            let all: Vec<usize> = (0..p.rank()).collect();
            for j in 0..p.rank() {
                let col = p.modes.col_as_slice(j);
                let r = reference_component(col.len(), |i| col[i].abs()).unwrap();
                assert!(col[r] > 0.0, "{solver:?} mode {j}");
            }
            // Any signs on input come back to the same basis; reconstructions unchanged.
            let mut q = p.clone();
            for j in (0..q.rank()).step_by(2) {
                q.modes.col_as_slice_mut(j).iter_mut().for_each(|x| *x = -*x);
                q.coefficients.col_as_slice_mut(j).iter_mut().for_each(|x| *x = -*x);
            }
            let before = max_reconstruction(&q, &all);
            q.apply_sign_convention();
            assert_eq!(q.modes, p.modes);
            assert_eq!(q.coefficients, p.coefficients);
            let after = max_reconstruction(&q, &all);
            let scale = before.iter().fold(0.0f64, |a, x| a.max(x.abs()));
            let err = before.iter().zip(&after).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
            assert!(err <= 1e-12 * scale, "{solver:?}: {err}");
        }
    }
}
