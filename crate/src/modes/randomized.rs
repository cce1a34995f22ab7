//! # Randomized SVD — the leading k singular triplets from a few passes over the data
//!
//! Halko, N., Martinsson, P.-G. & Tropp, J. A. 2011, "Finding structure with randomness:
//! probabilistic algorithms for constructing approximate matrix decompositions", SIAM Rev.
//! 53:217–288 (Algorithms 4.4 and 5.1).
//!
//! For Y (n × m) and l = k + p columns:
//! 1. Ω (m × l) with independent standard normal entries; Q = orth(Y Ω).
//! 2. q power iterations, re-orthonormalising between every product (plain powers
//!    (YYᵀ)^q YΩ lose the small directions to round-off): Q = orth(Y orth(Yᵀ Q)).
//! 3. B = Qᵀ Y (l × m), thin SVD B = Ũ Σ Vᵀ, U = Q Ũ; keep the first k.
//!
//! The error of the k-th approximation falls with q as (s_{k+1}/s_k)^{2q+1} in expectation
//! (the paper's Corollary 10.10): p = 5–10 and q = 1–2 suffice for POD spectra. Cost
//! (2q + 2) products of Y with a thin matrix, O(n m l) each, against O(n m²) for a full
//! thin SVD. Results depend on `seed` only (a fixed PCG stream), so runs are reproducible.

use super::linalg::{svd_direct, ThinSvd};
use super::ModesError;
use faer::{Mat, MatRef};
use rand::SeedableRng;
use rand_distr::{Distribution, StandardNormal};
use rand_pcg::Pcg64;

/// Parameters of the randomized range finder.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RandomizedSvd {
    /// Extra random directions p beyond the k wanted (the paper suggests 5–10).
    pub oversampling: usize,
    /// Power iterations q (0–2; each sharpens the spectrum's decay by two powers).
    pub power_iterations: usize,
    /// Seed of the Gaussian test matrix.
    pub seed: u64,
}

impl Default for RandomizedSvd {
    fn default() -> Self {
        RandomizedSvd { oversampling: 10, power_iterations: 2, seed: 0x5111_a6e0 }
    }
}

fn orth(a: Mat<f64>) -> Mat<f64> {
    a.qr().compute_thin_Q()
}

impl RandomizedSvd {
    /// The leading `k` singular triplets of `y` (fewer if `y`'s numerical rank is lower).
    pub fn compute(&self, y: MatRef<'_, f64>, k: usize) -> Result<ThinSvd, ModesError> {
        let (n, m) = (y.nrows(), y.ncols());
        if k == 0 {
            return Err(ModesError::BadOption {
                name: "rank",
                rule: "the randomized SVD needs a rank of at least 1".into(),
            });
        }
        let l = (k + self.oversampling).min(n.min(m));
        let mut rng = Pcg64::seed_from_u64(self.seed);
        let omega = Mat::from_fn(m, l, |_, _| -> f64 { StandardNormal.sample(&mut rng) });
        let mut q = orth(y * &omega);
        for _ in 0..self.power_iterations {
            let z = orth(y.transpose() * &q);
            q = orth(y * &z);
        }
        let b = q.transpose() * y;
        let small = svd_direct(b.as_ref(), k)?;
        Ok(ThinSvd { u: &q * &small.u, s: small.s, v: small.v })
    }
}
