//! Thin SVD of a tall snapshot matrix by two routes, both from faer: the snapshot method
//! (eigen-decomposition of the m × m correlation YᵀY, Sirovich 1987, Q. Appl. Math. 45:561)
//! and a direct thin SVD. Measured on this project's machine (BENCHMARKS.md, "Modes") the
//! snapshot method is about 4× faster for tall matrices (8000 × 240 and 40000 × 1000) and
//! the direct SVD wins once n < m (the correlation matrix is then the larger problem), so
//! `Auto` picks the snapshot method when n ≥ m. The snapshot method forms only the lower
//! triangle of YᵀY (half the flops of the full product, faer's blocked f64 kernels) and
//! multiplies Y by the m × r factor V diag(1/s) once; at 40000 × 1000 the Gram product is
//! about three quarters of the time and faer's self-adjoint eigensolver about a tenth
//! (BENCHMARKS.md, "Modes"). Threads follow faer's global parallelism setting. The Gram
//! product runs in panels of columns and the mode product in panels of rows, so that a
//! [`Progress`] can report between them (the page's time-left estimate); the panels cost
//! no measurable speed (BENCHMARKS.md, "Modes").
//!
//! Accuracy: the direct SVD gives every singular value to about ε·s₁ absolute. The snapshot
//! method gives λ = s² to about ε·s₁², so s_j is accurate to a relative ε(s₁/s_j)²/2: fine
//! for the energetic modes POD is used for, not for the tail. Values below the numerical
//! rank (s_j ≤ tol) are dropped in both routes, so no mode is ever built from round-off.

use super::ModesError;
use crate::progress::Progress;
use faer::linalg::matmul::matmul;
use faer::linalg::matmul::triangular::{self, BlockStructure};
use faer::{get_global_parallelism, Accum, Mat, MatRef, Side};

/// Y ≈ U diag(s) Vᵀ with U (n × r), s (r, nonincreasing), V (m × r).
#[derive(Debug, Clone)]
pub struct ThinSvd {
    pub u: Mat<f64>,
    pub s: Vec<f64>,
    pub v: Mat<f64>,
}

/// Which thin-SVD route to take.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum SvdRoute {
    /// Snapshot method when n ≥ m, else the direct SVD.
    Auto,
    /// Eigen-decomposition of the m × m correlation matrix.
    Snapshot,
    /// One-sided thin SVD of the n × m matrix.
    Direct,
}

impl SvdRoute {
    /// The route `Auto` resolves to for an n × m matrix.
    pub fn resolve(self, n: usize, m: usize) -> SvdRoute {
        match self {
            SvdRoute::Auto if n >= m => SvdRoute::Snapshot,
            SvdRoute::Auto => SvdRoute::Direct,
            r => r,
        }
    }
}

/// Thin SVD of `y` by `route`, keeping at most `rank` triplets; `progress` advances by
/// [`svd_work`] units in all.
pub fn thin_svd(
    y: MatRef<'_, f64>,
    route: SvdRoute,
    rank: usize,
    progress: &mut Progress,
) -> Result<ThinSvd, ModesError> {
    match route.resolve(y.nrows(), y.ncols()) {
        SvdRoute::Snapshot => svd_snapshot(y, rank, progress),
        _ => {
            let out = svd_direct(y, rank);
            progress.advance(svd_work(y.nrows(), y.ncols(), route, rank));
            out
        }
    }
}

/// The singular values of `y` above its numerical rank, and the thin SVD truncated to the
/// `keep(s)` leading triplets, where `keep` sees those values: what DMD needs (a rank rule
/// applied to the spectrum), without building the left vectors it would drop. `progress`
/// advances by [`svd_work`]`(n, m, route, r)` units, r = what `keep` returned.
pub fn thin_svd_leading(
    y: MatRef<'_, f64>,
    route: SvdRoute,
    keep: impl FnOnce(&[f64]) -> Result<usize, ModesError>,
    progress: &mut Progress,
) -> Result<(ThinSvd, Vec<f64>), ModesError> {
    match route.resolve(y.nrows(), y.ncols()) {
        SvdRoute::Snapshot => {
            let (eig_s, v) = snapshot_right(y, usize::MAX, progress)?;
            let r = keep(&eig_s)?.min(eig_s.len());
            let svd = snapshot_left(y, eig_s[..r].to_vec(), v.subcols(0, r).to_owned(), progress);
            Ok((svd, eig_s))
        }
        _ => {
            let mut svd = svd_direct(y, usize::MAX)?;
            let all = svd.s.clone();
            let r = keep(&all)?.min(all.len());
            progress.advance(svd_work(y.nrows(), y.ncols(), route, r));
            svd.u = svd.u.subcols(0, r).to_owned();
            svd.v = svd.v.subcols(0, r).to_owned();
            svd.s.truncate(r);
            Ok((svd, all))
        }
    }
}

/// Estimated multiply–adds of [`thin_svd`] on an n × m matrix keeping at most `rank`
/// triplets, in the units of [`Progress`]. Snapshot route: the Gram lower triangle
/// n·m(m+1)/2, the eigensolver [`EIGEN_UNITS`]·m³ and the mode product n·m·min(m, rank).
/// Direct route: 2n·m² + 11m³, half the 4n·m² + 22m³ flops of the R-SVD with the thin U and
/// V (Golub & Van Loan, "Matrix Computations", Johns Hopkins Univ. Press, operation count of
/// the SVD; quoted from memory, and only a weight for the progress bar).
pub fn svd_work(n: usize, m: usize, route: SvdRoute, rank: usize) -> f64 {
    let (n, mf, r) = (n as f64, m as f64, m.min(rank) as f64);
    match route.resolve(n as usize, m) {
        SvdRoute::Snapshot => n * mf * (mf + 1.0) / 2.0 + EIGEN_UNITS * mf.powi(3) + n * mf * r,
        _ => 2.0 * n * mf * mf + 11.0 * mf.powi(3),
    }
}

/// Cost of faer's symmetric eigensolver (values and vectors) of an m × m matrix, as a
/// multiple of m³ multiply–adds of the blocked Gram product: measured as about a tenth of
/// the time of a 40000 × 1000 snapshot SVD whose Gram product is three quarters of it
/// (BENCHMARKS.md, "Modes"), i.e. 0.13 · 2·10¹⁰ / 10⁹ ≈ 2.7.
pub const EIGEN_UNITS: f64 = 2.7;

/// Cost of one element of a memory-bound pass (building the snapshot matrix, scaling and
/// copying modes out, a transform's gathers and scatters), in multiply–adds of the blocked
/// kernels: a weight for progress plans, set so the page's time-left estimate holds across
/// the parts of a decomposition in wasm (tests/bench/modes_progress.mjs, BENCHMARKS.md
/// "Modes").
pub const COPY_UNITS: f64 = 8.0;

/// Cost of one value of the result handed to the page (modes scaled, their sign or phase
/// fixed, encoded and copied out of the core), in the same units; far above a plain copy
/// in wasm, where these are fresh allocations of the core's memory. Set like
/// [`COPY_UNITS`].
pub const OUTPUT_UNITS: f64 = 64.0;

/// Columns of a Gram panel, or rows of a mode-product panel: enough panels for a smooth
/// progress bar, each wide enough for the blocked kernels to run at full speed.
fn panel(len: usize) -> usize {
    len.div_ceil(16).clamp(32, 512)
}

/// The correlation (Gram) matrix YᵀY, m × m, lower triangle only (the upper one is left at
/// zero: every consumer reads `Side::Lower`). Half the flops of the full product; blocked
/// f64 kernels of faer with the global parallelism setting. Computed in panels of columns
/// (a triangular diagonal block and the rectangle below it), `progress` advancing by the
/// multiply–adds of each.
pub fn gram_lower(y: MatRef<'_, f64>, progress: &mut Progress) -> Mat<f64> {
    let (n, m) = (y.nrows(), y.ncols());
    let mut g = Mat::<f64>::zeros(m, m);
    let w = panel(m);
    let par = get_global_parallelism();
    for p in (0..m).step_by(w) {
        let q = (p + w).min(m);
        let yp = y.subcols(p, q - p);
        triangular::matmul(
            g.as_mut().submatrix_mut(p, p, q - p, q - p),
            BlockStructure::TriangularLower,
            Accum::Replace,
            yp.transpose(),
            BlockStructure::Rectangular,
            yp,
            BlockStructure::Rectangular,
            1.0,
            par,
        );
        if q < m {
            matmul(
                g.as_mut().submatrix_mut(q, p, m - q, q - p),
                Accum::Replace,
                y.subcols(q, m - q).transpose(),
                yp,
                1.0,
                par,
            );
        }
        // Entries of columns p..q on and below the diagonal, n multiply–adds each.
        let entries = (p..q).map(|j| (m - j) as f64).sum::<f64>();
        progress.advance(n as f64 * entries);
    }
    g
}

/// Snapshot method: YᵀY = V Λ Vᵀ, s = √λ, U = Y V diag(1/s). Keeps λ_j > m·ε·λ₁ (below that
/// the eigenvalue is round-off of the correlation matrix). Only the lower triangle of YᵀY is
/// formed ([`gram_lower`]); the symmetric eigensolver reads that triangle. `progress`
/// advances by [`svd_work`] units with the rank actually kept (the mode product in panels
/// of rows).
pub fn svd_snapshot(
    y: MatRef<'_, f64>,
    rank: usize,
    progress: &mut Progress,
) -> Result<ThinSvd, ModesError> {
    let (s, v) = snapshot_right(y, rank, progress)?;
    Ok(snapshot_left(y, s, v, progress))
}

/// The first half of the snapshot method: the singular values above the numerical rank
/// (at most `rank`) and the right singular vectors V, from the Gram matrix.
fn snapshot_right(
    y: MatRef<'_, f64>,
    rank: usize,
    progress: &mut Progress,
) -> Result<(Vec<f64>, Mat<f64>), ModesError> {
    let m = y.ncols();
    let g = gram_lower(y, progress);
    let eig = g.self_adjoint_eigen(Side::Lower).map_err(|_| ModesError::NoConvergence {
        what: "symmetric eigensolver (snapshot method)",
    })?;
    drop(g);
    progress.advance(EIGEN_UNITS * (m as f64).powi(3));
    let lam = eig.S();
    let top = lam[m - 1].max(0.0);
    let tol = top * m as f64 * f64::EPSILON;
    let r = (0..m.min(rank)).take_while(|&j| lam[m - 1 - j] > tol).count();
    let s: Vec<f64> = (0..r).map(|j| lam[m - 1 - j].sqrt()).collect();
    let vecs = eig.U();
    Ok((s, Mat::from_fn(m, r, |i, j| vecs[(i, m - 1 - j)])))
}

/// The second half: U = Y (V diag(1/s)) for the columns of `v`, in panels of rows,
/// `progress` advancing by n·m·r.
fn snapshot_left(y: MatRef<'_, f64>, s: Vec<f64>, v: Mat<f64>, progress: &mut Progress) -> ThinSvd {
    let (n, m, r) = (y.nrows(), y.ncols(), s.len());
    // The scaling goes on the small factor.
    let vs = Mat::from_fn(m, r, |i, j| v[(i, j)] / s[j]);
    let mut u = Mat::<f64>::zeros(n, r);
    let h = panel(n);
    for a in (0..n).step_by(h) {
        let b = (a + h).min(n);
        matmul(
            u.as_mut().subrows_mut(a, b - a),
            Accum::Replace,
            y.subrows(a, b - a),
            vs.as_ref(),
            1.0,
            get_global_parallelism(),
        );
        progress.advance(((b - a) * m * r) as f64);
    }
    ThinSvd { u, s, v }
}

/// Direct thin SVD; keeps s_j > max(n, m)·ε·s₁.
pub fn svd_direct(y: MatRef<'_, f64>, rank: usize) -> Result<ThinSvd, ModesError> {
    let (n, m) = (y.nrows(), y.ncols());
    let svd = y
        .thin_svd()
        .map_err(|_| ModesError::NoConvergence { what: "singular value decomposition" })?;
    let sv = svd.S();
    let k = n.min(m);
    let tol = if k > 0 { sv[0] * n.max(m) as f64 * f64::EPSILON } else { 0.0 };
    let r = (0..k.min(rank)).take_while(|&j| sv[j] > tol).count();
    Ok(ThinSvd {
        u: svd.U().subcols(0, r).to_owned(),
        s: (0..r).map(|j| sv[j]).collect(),
        v: svd.V().subcols(0, r).to_owned(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The Gram product in panels (70 columns: panels of 32, 32 and 6) equals the plain
    /// sum of products YᵀY on and below the diagonal to round-off, leaves the upper
    /// triangle at zero, and advances the progress by the n·m(m+1)/2 multiply–adds of
    /// [`svd_work`]'s Gram term.
    #[test]
    fn gram_panels_equal_the_plain_product() {
        let (n, m) = (53, 70);
        let y = Mat::from_fn(n, m, |i, j| ((i * 7 + j * 13) % 17) as f64 - 8.0 + 0.01 * j as f64);
        let mut progress = Progress::silent();
        progress.plan(n as f64 * (m * (m + 1) / 2) as f64);
        let g = gram_lower(y.as_ref(), &mut progress);
        assert_eq!(progress.accounted(), 1.0);
        for a in 0..m {
            for b in 0..m {
                if b > a {
                    assert_eq!(g[(a, b)], 0.0, "upper triangle at ({a}, {b})");
                    continue;
                }
                let want: f64 = (0..n).map(|i| y[(i, a)] * y[(i, b)]).sum();
                assert!((g[(a, b)] - want).abs() <= 1e-12 * want.abs().max(1.0), "({a}, {b})");
            }
        }
    }
}
