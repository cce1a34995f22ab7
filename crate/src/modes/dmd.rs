//! # Dynamic mode decomposition (DMD): exact and total-least-squares
//!
//! Exact DMD: Tu, J. H., Rowley, C. W., Luchtenburg, D. M., Brunton, S. L. & Kutz, J. N.
//! 2014, "On dynamic mode decomposition: theory and applications", J. Comput. Dyn.
//! 1:391–421. Amplitudes: Jovanović, M. R., Schmid, P. J. & Nichols, J. W. 2014,
//! "Sparsity-promoting dynamic mode decomposition", Phys. Fluids 26:024103 (the
//! least-squares fit over all snapshots). Noise-robust variant: total-least-squares DMD of
//! Hemati, M. S., Rowley, C. W., Deem, E. A. & Cattafesta, L. N. 2017, "De-biasing the
//! dynamic mode decomposition for applied Koopman spectral analysis of noisy datasets",
//! Theor. Comput. Fluid Dyn. 31:349–368.
//!
//! With weighted snapshots y_k = W^{1/2}q_k, X0 = [y_0 … y_{m−2}], X1 = [y_1 … y_{m−1}]:
//! X0 ≈ U_r Σ_r V_rᵀ, Ã = U_rᵀ X1 V_r Σ_r⁻¹, Ã w = μ w, φ = X1 V_r Σ_r⁻¹ w / μ (then
//! W^{−1/2}φ, normalised to unit weighted norm). Continuous-time ω = ln μ / Δt: frequency
//! Im ω / 2π in cycles per unit of the data's time, growth rate Re ω. The snapshots are
//! modelled as q_k ≈ Re Σ_j φ_j b_j μ_j^k, which also gives a forecast for k ≥ m.
//!
//! TLS DMD first projects X0 and X1 on the leading r right singular vectors of the stacked
//! matrix [X0; X1], so the noise in X1 is treated like that in X0: exact DMD is biased
//! towards |μ| < 1 by noise in X0 (Hemati et al. 2017), TLS removes the leading-order bias.
//!
//! Conventions: the mean is not subtracted (that turns DMD into a DFT, Chen, Tu & Rowley
//! 2012, J. Nonlinear Sci. 22:887); modes are sorted by amplitude |b_j| (unit-norm modes),
//! each complex-conjugate pair adjacent, positive frequency first. A mode is defined up to
//! a complex phase, which the eigensolver leaves to round-off; so that results are the same
//! on every platform and run, each mode is rotated so its largest-|·| entry (over the stacked
//! u, v vector of the physical mode; the first one of entries equal to a relative 1e-8) is
//! real and positive, and its amplitude b_j takes the opposite rotation, so φ_j b_j and
//! every reconstruction and forecast are unchanged ([`Dmd::apply_phase_convention`]; the
//! same reference component as POD's sign rule). Conjugate pairs stay conjugate. Needs uniform Δt.
//! Cost: one thin SVD (see [`super::linalg`]) plus O(n m r). Failure modes: rank above the
//! data's signal rank fits noise (spurious damped modes); standing oscillations need time
//! delays (not offered here).

use super::linalg::{svd_work, thin_svd, thin_svd_leading, SvdRoute, COPY_UNITS, OUTPUT_UNITS};
use super::rank::RankRule;
use super::snapshots::{fix_phase, uniform_step, SnapshotLayout};
use super::ModesError;
use crate::field::Series;
use crate::progress::Progress;
use faer::linalg::solvers::Solve;
use faer::{c64, Mat, MatRef};

/// Which DMD.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum DmdVariant {
    Exact,
    TotalLeastSquares,
}

/// Options of [`dmd`].
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DmdOptions {
    pub rank: RankRule,
    pub variant: DmdVariant,
    pub route: SvdRoute,
}

impl Default for DmdOptions {
    fn default() -> Self {
        DmdOptions {
            rank: RankRule::OptimalHardThreshold,
            variant: DmdVariant::Exact,
            route: SvdRoute::Auto,
        }
    }
}

/// A DMD of a series.
#[derive(Debug, Clone)]
pub struct Dmd {
    pub layout: SnapshotLayout,
    /// Time step Δt and first time.
    pub dt: f64,
    pub t0: f64,
    /// Discrete-time eigenvalues μ_j.
    pub eigenvalues: Vec<c64>,
    /// Modes φ_j (physical, unit weighted norm), n × r.
    pub modes: Mat<c64>,
    /// Least-squares amplitudes b_j.
    pub amplitudes: Vec<c64>,
    /// All singular values of X0 (weighted), for choosing the rank.
    pub singular_values: Vec<f64>,
    pub variant: DmdVariant,
}

fn cmat(re: MatRef<'_, f64>) -> Mat<c64> {
    Mat::from_fn(re.nrows(), re.ncols(), |i, j| c64::new(re[(i, j)], 0.0))
}

/// DMD of `series`.
pub fn dmd(series: &Series, opts: &DmdOptions) -> Result<Dmd, ModesError> {
    dmd_with_progress(series, opts, &mut Progress::silent())
}

/// [`dmd`], reporting its progress (the same numbers: the observer only watches). The plan
/// counts the SVD of X0 ([`svd_work`]) and, with r = m − 1 (an upper bound), the products
/// after it in multiply–adds, a complex one as four real ones.
pub fn dmd_with_progress(
    series: &Series,
    opts: &DmdOptions,
    progress: &mut Progress,
) -> Result<Dmd, ModesError> {
    let layout = SnapshotLayout::new(series)?;
    let m = series.nt();
    if m < 3 {
        return Err(ModesError::TooFewSnapshots { method: "DMD", needed: 3, got: m });
    }
    let dt = uniform_step(series, "DMD")?;
    let y = layout.weighted_matrix(series, None, 1.0);
    let (n, m1) = (y.nrows(), m - 1);
    let x0 = y.subcols(0, m1);
    let x1 = y.subcols(1, m1);
    let (nf, mf) = (n as f64, m1 as f64);
    // After the SVD, with r modes kept: X1·V, Uᵀ·(X1VΣ⁻¹), the projected modes (real ×
    // complex: 2 real multiply–adds each), and the amplitudes' Φ*Φ and Y*Φ (complex).
    let after = |r: f64| [nf * mf * r, nf * r * r, 2.0 * nf * r * r];
    let amplitude_work = |r: f64| 4.0 * nf * r * r + 2.0 * nf * (mf + 1.0) * r;
    let after_work = |r: f64| after(r).iter().sum::<f64>() + amplitude_work(r);
    // The SVD of X0 with the left vectors of the r modes kept, the snapshot matrix (built)
    // and the modes scaled and reordered (and for TLS DMD: the projection and a second
    // SVD); planned with the rank the rule will likely pick, revised once it is known.
    let tls = opts.variant == DmdVariant::TotalLeastSquares;
    let planned = |r: f64| {
        let svd = svd_work(n, m1, opts.route, r as usize);
        let tls_work = if tls { svd + 4.0 * nf * mf * mf } else { 0.0 };
        svd + tls_work + 2.0 * OUTPUT_UNITS * nf * r + after_work(r)
    };
    let guess = opts.rank.guess(m1) as f64;
    progress.plan(COPY_UNITS * nf * (mf + 1.0) + planned(guess));
    progress.advance(COPY_UNITS * nf * (mf + 1.0));
    let mut picked = 0;
    let (leading, all_s) = thin_svd_leading(
        x0,
        opts.route,
        |s| {
            if s.is_empty() {
                return Err(ModesError::NoEnergy);
            }
            picked = opts.rank.pick(s, n, m1)?;
            Ok(picked)
        },
        progress,
    )?;
    let r = picked;
    progress.revise(planned(guess), planned(r as f64));
    let (x0p, x1p);
    let (x0, x1) = match opts.variant {
        DmdVariant::Exact => (x0, x1),
        DmdVariant::TotalLeastSquares => {
            // Right singular vectors of [X0; X1] from its Gram X0ᵀX0 + X1ᵀX1.
            let g = x0.transpose() * x0 + x1.transpose() * x1;
            let eig = g.self_adjoint_eigen(faer::Side::Lower).map_err(|_| {
                ModesError::NoConvergence { what: "symmetric eigensolver (TLS DMD)" }
            })?;
            let v = Mat::from_fn(m1, r.min(m1), |i, j| eig.U()[(i, m1 - 1 - j)]);
            let p = &v * v.transpose();
            x0p = x0 * &p;
            x1p = x1 * &p;
            progress.advance(4.0 * nf * mf * mf);
            (x0p.as_ref(), x1p.as_ref())
        }
    };
    let svd = match opts.variant {
        DmdVariant::Exact => leading,
        DmdVariant::TotalLeastSquares => thin_svd(x0, opts.route, r, progress)?,
    };
    let r = svd.s.len();
    let rf = r as f64;
    // X1 V Σ⁻¹ (n × r), then Ã = Uᵀ (X1 V Σ⁻¹).
    let mut x1vs = x1 * &svd.v;
    for j in 0..r {
        let inv = 1.0 / svd.s[j];
        x1vs.col_as_slice_mut(j).iter_mut().for_each(|x| *x *= inv);
    }
    progress.advance(after(rf)[0]);
    let atilde = svd.u.transpose() * &x1vs;
    progress.advance(after(rf)[1]);
    let eig = atilde.eigen().map_err(|_| ModesError::NoConvergence {
        what: "eigensolver of the reduced DMD operator",
    })?;
    let mu: Vec<c64> = (0..r).map(|j| eig.S()[j]).collect();
    let w = eig.U().to_owned();
    let mut phi = cmat(x1vs.as_ref()) * &w;
    progress.advance(after(rf)[2]);
    for (j, &muj) in mu.iter().enumerate() {
        // φ = X1 V Σ⁻¹ w / μ; a μ = 0 mode (a transient gone in one step) keeps the projected
        // direction. Then unit weighted norm: the amplitude fit carries scale and phase.
        let inv_mu = if muj.norm() > 1e-14 { c64::new(1.0, 0.0) / muj } else { c64::new(1.0, 0.0) };
        let norm = (0..n).map(|i| phi[(i, j)].norm_sqr()).sum::<f64>().sqrt() * inv_mu.norm();
        let scale = if norm > 0.0 { inv_mu / norm } else { inv_mu };
        for i in 0..n {
            phi[(i, j)] *= scale;
        }
    }
    let b = amplitudes(y.as_ref(), phi.as_ref(), &mu)?;
    progress.advance(amplitude_work(rf));
    // Back to physical modes: φ_phys = W^{-1/2} φ (unit norm in the weighted product).
    let inv_sw: Vec<f64> = layout.weights().iter().map(|w| 1.0 / w.sqrt()).collect();
    for j in 0..r {
        for i in 0..n {
            phi[(i, j)] *= inv_sw[i];
        }
    }
    let order = pair_order(&mu, &b);
    let mut out = Dmd {
        layout,
        dt,
        t0: series.times()[0],
        eigenvalues: order.iter().map(|&j| mu[j]).collect(),
        modes: Mat::from_fn(n, r, |i, j| phi[(i, order[j])]),
        amplitudes: order.iter().map(|&j| b[j]).collect(),
        singular_values: all_s,
        variant: opts.variant,
    };
    out.apply_phase_convention();
    progress.advance(2.0 * OUTPUT_UNITS * nf * rf);
    progress.finish();
    Ok(out)
}

/// Least-squares amplitudes (Jovanović et al. 2014): minimise ‖Y − Φ diag(b) V‖_F with
/// V_jk = μ_j^k, i.e. (Φ*Φ ∘ conj(V V*)) b = conj(diag(V Y* Φ)).
fn amplitudes(
    y: MatRef<'_, f64>,
    phi: MatRef<'_, c64>,
    mu: &[c64],
) -> Result<Vec<c64>, ModesError> {
    let (r, m) = (mu.len(), y.ncols());
    let vand = Mat::from_fn(r, m, |j, k| mu[j].powu(k as u32));
    let gram = phi.adjoint() * phi;
    let vv = &vand * vand.adjoint();
    let p = Mat::from_fn(r, r, |i, j| gram[(i, j)] * vv[(i, j)].conj());
    // m × r = Y* Φ; Y is real, so two real products (of Re Φ and Im Φ) instead of a complex
    // copy of the whole data and a complex product: half the work and no n × m copy.
    let (re, im) = (phi.map(|z| z.re), phi.map(|z| z.im));
    let (yre, yim) = (y.transpose() * &re, y.transpose() * &im);
    let yphi = Mat::from_fn(m, r, |k, j| c64::new(yre[(k, j)], yim[(k, j)]));
    let q = Mat::from_fn(r, 1, |j, _| {
        let mut acc = c64::new(0.0, 0.0);
        for k in 0..m {
            acc += vand[(j, k)] * yphi[(k, j)];
        }
        acc.conj()
    });
    let b = p.partial_piv_lu().solve(&q);
    let b: Vec<c64> = (0..r).map(|j| b[(j, 0)]).collect();
    if b.iter().any(|x| !x.re.is_finite() || !x.im.is_finite()) {
        return Err(ModesError::NoConvergence {
            what: "least-squares fit of the DMD amplitudes (singular system: lower the rank)",
        });
    }
    Ok(b)
}

/// Order by |b| descending, each conjugate pair adjacent (positive frequency first).
fn pair_order(mu: &[c64], b: &[c64]) -> Vec<usize> {
    let r = mu.len();
    let mut idx: Vec<usize> = (0..r).collect();
    idx.sort_by(|&i, &j| b[j].norm().total_cmp(&b[i].norm()).then(mu[j].im.total_cmp(&mu[i].im)));
    let mut used = vec![false; r];
    let mut out = Vec::with_capacity(r);
    for &i in &idx {
        if used[i] {
            continue;
        }
        used[i] = true;
        out.push(i);
        if mu[i].im.abs() > 0.0 {
            // The partner: the closest unused eigenvalue to conj(μ_i).
            if let Some(&p) = idx.iter().filter(|&&p| !used[p]).min_by(|&&a, &&c| {
                (mu[a] - mu[i].conj()).norm().total_cmp(&(mu[c] - mu[i].conj()).norm())
            }) {
                if (mu[p] - mu[i].conj()).norm() <= 1e-8 * mu[i].norm().max(1.0) {
                    used[p] = true;
                    // Positive frequency first.
                    if mu[p].im > mu[i].im {
                        let last = out.len() - 1;
                        out[last] = p;
                        out.push(i);
                    } else {
                        out.push(p);
                    }
                }
            }
        }
    }
    out
}

impl Dmd {
    /// Applies the phase convention of the module doc: each mode rotated by e^{−iθ} so its
    /// reference component ([`super::snapshots::reference_component`]) is real and
    /// positive, its amplitude by e^{iθ}. Idempotent; φ_j b_j, conjugate pairs and every
    /// reconstruction are unchanged. [`dmd`] returns modes in this convention.
    pub fn apply_phase_convention(&mut self) {
        for j in 0..self.rank() {
            let rot = fix_phase(self.modes.col_as_slice_mut(j));
            self.amplitudes[j] /= rot;
        }
    }

    pub fn rank(&self) -> usize {
        self.eigenvalues.len()
    }
    /// Continuous-time eigenvalues ω_j = ln μ_j / Δt.
    pub fn continuous(&self) -> Vec<c64> {
        self.eigenvalues.iter().map(|m| m.ln() / self.dt).collect()
    }
    /// Frequencies Im ω / 2π (cycles per unit time of the data; Hz for SI data).
    pub fn frequencies(&self) -> Vec<f64> {
        self.continuous().iter().map(|w| w.im / (2.0 * std::f64::consts::PI)).collect()
    }
    /// Growth rates Re ω (1/time; negative = decaying).
    pub fn growth_rates(&self) -> Vec<f64> {
        self.continuous().iter().map(|w| w.re).collect()
    }
    /// Snapshot vector at step `k` (k ≥ m forecasts) from modes `which` (0-based):
    /// Re Σ φ_j b_j μ_j^k.
    pub fn reconstruct(&self, k: usize, which: &[usize]) -> Vec<f64> {
        let n = self.layout.len();
        let mut q = vec![0.0; n];
        for &j in which {
            let c = self.amplitudes[j] * self.eigenvalues[j].powu(k as u32);
            for (i, x) in q.iter_mut().enumerate() {
                *x += (self.modes[(i, j)] * c).re;
            }
        }
        q
    }
    /// Indices (0-based) of the modes with |frequency| in [fmin, fmax].
    pub fn band(&self, fmin: f64, fmax: f64) -> Vec<usize> {
        self.frequencies()
            .iter()
            .enumerate()
            .filter(|(_, f)| f.abs() >= fmin && f.abs() <= fmax)
            .map(|(j, _)| j)
            .collect()
    }
    /// The conjugate partner of mode `j`, if it has one (pairs are adjacent, positive
    /// frequency first).
    pub fn partner(&self, j: usize) -> Option<usize> {
        let mu = &self.eigenvalues;
        let close =
            |a: usize, b: usize| (mu[a] - mu[b].conj()).norm() <= 1e-8 * mu[a].norm().max(1.0);
        if mu[j].im > 0.0 && j + 1 < mu.len() && close(j, j + 1) {
            Some(j + 1)
        } else if mu[j].im < 0.0 && j > 0 && close(j, j - 1) {
            Some(j - 1)
        } else {
            None
        }
    }
    /// `which` plus every missing conjugate partner, sorted: a real field needs both.
    pub fn with_partners(&self, which: &[usize]) -> Vec<usize> {
        let mut out: Vec<usize> = which.to_vec();
        out.extend(which.iter().filter_map(|&j| self.partner(j)));
        out.sort_unstable();
        out.dedup();
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::modes::snapshots::{reference_component, test_phases, test_waves};

    fn all_snapshots(d: &Dmd, m: usize) -> Vec<f64> {
        let all: Vec<usize> = (0..d.rank()).collect();
        (0..m).flat_map(|k| d.reconstruct(k, &all)).collect()
    }

    #[test]
    fn phase_convention_holds_and_keeps_reconstructions() {
        let m = 60;
        let s = test_waves(12, 8, m, 0.05);
        for variant in [DmdVariant::Exact, DmdVariant::TotalLeastSquares] {
            let opts =
                DmdOptions { rank: RankRule::Energy(1.0 - 1e-10), variant, ..Default::default() };
            let d = dmd(&s, &opts).unwrap();
            assert!(d.rank() >= 5, "{variant:?}: rank {}", d.rank());
            for j in 0..d.rank() {
                let col = d.modes.col_as_slice(j);
                let r = reference_component(col.len(), |i| col[i].norm()).unwrap();
                assert!(col[r].re > 0.0 && col[r].im == 0.0, "{variant:?} mode {j}: {:?}", col[r]);
                if let Some(p) = d.partner(j) {
                    let other = d.modes.col_as_slice(p);
                    let err = col
                        .iter()
                        .zip(other)
                        .map(|(a, b)| (a - b.conj()).norm())
                        .fold(0.0, f64::max);
                    assert!(err < 1e-12, "{variant:?} pair {j}, {p}: {err}");
                }
            }
            // A random phase on every mode (the amplitude rotated back) returns to the same
            // basis; the reconstruction is unchanged by either step.
            let reference = all_snapshots(&d, m);
            let scale = reference.iter().fold(0.0f64, |a, x| a.max(x.abs()));
            let mut q = d.clone();
            for (j, p) in test_phases(q.rank(), 3).into_iter().enumerate() {
                q.modes.col_as_slice_mut(j).iter_mut().for_each(|z| *z *= p);
                q.amplitudes[j] /= p;
            }
            let rotated = all_snapshots(&q, m);
            q.apply_phase_convention();
            let again = all_snapshots(&q, m);
            for (label, other) in [("rotated", &rotated), ("convention", &again)] {
                let err =
                    reference.iter().zip(other).map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
                assert!(err <= 1e-12 * scale, "{variant:?} {label}: {err}");
            }
            for j in 0..d.rank() {
                let err = (0..d.layout.len())
                    .map(|i| (q.modes[(i, j)] - d.modes[(i, j)]).norm())
                    .fold(0.0, f64::max);
                let top = (0..d.layout.len()).map(|i| d.modes[(i, j)].norm()).fold(0.0, f64::max);
                assert!(err <= 1e-12 * top, "{variant:?} mode {j}: {err}");
                let db = (q.amplitudes[j] - d.amplitudes[j]).norm();
                assert!(db <= 1e-12 * d.amplitudes[j].norm(), "{variant:?} amplitude {j}: {db}");
            }
        }
    }
}
