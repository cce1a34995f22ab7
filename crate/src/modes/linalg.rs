//! Thin SVD of a tall snapshot matrix by two routes, both from faer: the snapshot method
//! (eigen-decomposition of the m × m correlation YᵀY, Sirovich 1987, Q. Appl. Math. 45:561)
//! and a direct thin SVD. Measured on this project's machine (BENCHMARKS.md, "Modes") the
//! snapshot method is about 4× faster for tall matrices (8000 × 240 and 40000 × 1000) and
//! the direct SVD wins once n < m (the correlation matrix is then the larger problem), so
//! `Auto` picks the snapshot method when n ≥ m. The snapshot method forms only the lower
//! triangle of YᵀY (half the flops of the full product, faer's blocked f64 kernels) and
//! multiplies Y by the m × r factor V diag(1/s) once; at 40000 × 1000 the Gram product is
//! about three quarters of the time and faer's self-adjoint eigensolver about a tenth
//! (BENCHMARKS.md, "Modes"). Threads follow faer's global parallelism setting.
//!
//! Accuracy: the direct SVD gives every singular value to about ε·s₁ absolute. The snapshot
//! method gives λ = s² to about ε·s₁², so s_j is accurate to a relative ε(s₁/s_j)²/2: fine
//! for the energetic modes POD is used for, not for the tail. Values below the numerical
//! rank (s_j ≤ tol) are dropped in both routes, so no mode is ever built from round-off.

use super::ModesError;
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

/// Thin SVD of `y` by `route`, keeping at most `rank` triplets.
pub fn thin_svd(y: MatRef<'_, f64>, route: SvdRoute, rank: usize) -> Result<ThinSvd, ModesError> {
    match route.resolve(y.nrows(), y.ncols()) {
        SvdRoute::Snapshot => svd_snapshot(y, rank),
        _ => svd_direct(y, rank),
    }
}

/// The correlation (Gram) matrix YᵀY, m × m, lower triangle only (the upper one is left at
/// zero: every consumer reads `Side::Lower`). Half the flops of the full product; blocked
/// f64 kernels of faer with the global parallelism setting.
pub fn gram_lower(y: MatRef<'_, f64>) -> Mat<f64> {
    let m = y.ncols();
    let mut g = Mat::<f64>::zeros(m, m);
    triangular::matmul(
        g.as_mut(),
        BlockStructure::TriangularLower,
        Accum::Replace,
        y.transpose(),
        BlockStructure::Rectangular,
        y,
        BlockStructure::Rectangular,
        1.0,
        get_global_parallelism(),
    );
    g
}

/// Snapshot method: YᵀY = V Λ Vᵀ, s = √λ, U = Y V diag(1/s). Keeps λ_j > m·ε·λ₁ (below that
/// the eigenvalue is round-off of the correlation matrix). Only the lower triangle of YᵀY is
/// formed ([`gram_lower`]); the symmetric eigensolver reads that triangle.
pub fn svd_snapshot(y: MatRef<'_, f64>, rank: usize) -> Result<ThinSvd, ModesError> {
    let m = y.ncols();
    let g = gram_lower(y);
    let eig = g.self_adjoint_eigen(Side::Lower).map_err(|_| ModesError::NoConvergence {
        what: "symmetric eigensolver (snapshot method)",
    })?;
    drop(g);
    let lam = eig.S();
    let top = lam[m - 1].max(0.0);
    let tol = top * m as f64 * f64::EPSILON;
    let r = (0..m.min(rank)).take_while(|&j| lam[m - 1 - j] > tol).count();
    let s: Vec<f64> = (0..r).map(|j| lam[m - 1 - j].sqrt()).collect();
    let vecs = eig.U();
    let v = Mat::from_fn(m, r, |i, j| vecs[(i, m - 1 - j)]);
    // U = Y (V diag(1/s)): the scaling goes on the small factor.
    let vs = Mat::from_fn(m, r, |i, j| v[(i, j)] / s[j]);
    let mut u = Mat::<f64>::zeros(y.nrows(), r);
    faer::linalg::matmul::matmul(
        u.as_mut(),
        Accum::Replace,
        y,
        vs.as_ref(),
        1.0,
        get_global_parallelism(),
    );
    Ok(ThinSvd { u, s, v })
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
