//! # Spectral proper orthogonal decomposition (SPOD)
//!
//! Towne, A., Schmidt, O. T. & Colonius, T. 2018, "Spectral proper orthogonal decomposition
//! and its relationship to dynamic mode decomposition and resolvent analysis", J. Fluid
//! Mech. 847:821–867; practice: Schmidt, O. T. & Colonius, T. 2020, "Guide to spectral
//! proper orthogonal decomposition", AIAA J. 58:1023–1033. Band reconstruction: Nekkanti,
//! A. & Schmidt, O. T. 2021, "Frequency–time analysis, low-rank reconstruction and
//! denoising of turbulent flows using SPOD", J. Fluid Mech. 926:A26.
//!
//! Welch estimate of the cross-spectral density: the fluctuations q′_k = q_k − q̄ are cut
//! into N_b blocks of N_f snapshots overlapping by N_o (default N_f/2); each block is
//! multiplied by the periodic Hann window w_k = ½ − ½cos(2πk/N_f) (the DFT-even form, as
//! scipy.signal.get_window('hann') uses) and Fourier transformed,
//! q̂_l = Σ_k w_k q′_k e^{−2πikl/N_f}. At each frequency f_l = l/(N_f Δt) the weighted
//! estimate M_l = κ Q̂_l* W Q̂_l, κ = Δt/(N_b Σ_k w_k²) (scipy's 'density' scaling), has
//! eigenvalues λ_{l,1} ≥ λ_{l,2} ≥ … (energy densities, (velocity² × area) per unit
//! frequency) and modes ψ_{l,j} = √κ Q̂_l θ_j / √λ_j, orthonormal in W.
//!
//! Frequencies kept: l = 0 … N_f/2 (the data are real: the negative frequencies hold the
//! complex-conjugate modes and the same eigenvalues). Spectra are two-sided densities (not
//! doubled), so Σ_j λ_{l,j} equals the weighted sum of two-sided Welch PSDs at f_l.
//!
//! Default block size: the largest power of two N_f ≤ 512 that still gives at least 8
//! blocks at 50 % overlap (Schmidt & Colonius 2020 advise tens of blocks; with short
//! records the spectral resolution 1/(N_f Δt) is traded for fewer blocks), and at least 4.
//!
//! Band reconstruction (the oblique projection of Nekkanti & Schmidt 2021): with Φ the
//! selected modes of every frequency in the band and their complex conjugates (the
//! negative frequencies), a(t_k) = (Φ*WΦ)⁻¹Φ*W q′_k and q_band(t_k) = Re Φ a(t_k): a real,
//! time-dependent velocity field on the data grid at every snapshot time.
//!
//! Phase convention: an SPOD mode is defined up to a complex phase (the eigenvector θ_j's),
//! which the eigensolver leaves to round-off; so that results are the same on every
//! platform and run, each ψ_{l,j} is rotated so its largest-|·| entry (over the stacked u,
//! v vector of the physical mode; the first one of entries equal to a relative 1e-8) is
//! real and positive ([`Spod::apply_phase_convention`]; the same reference component as
//! POD's sign rule and DMD's phase rule). No amplitudes are stored, and the band
//! reconstruction depends only on the span of the modes, so nothing else changes.
//!
//! Cost: n N_b FFTs of length N_f and one N_b × N_b eigenproblem per frequency. Memory: the
//! block transforms, n × N_b × (N_f/2 + 1) complex values. Needs uniform Δt.

use super::linalg::{COPY_UNITS, EIGEN_UNITS};
use super::snapshots::{fix_phase, uniform_step, SnapshotLayout};
use super::ModesError;
use crate::field::Series;
use crate::progress::Progress;
use faer::linalg::solvers::Solve;
use faer::{c64, Mat, Side};
use rustfft::FftPlanner;

/// Options of [`spod`].
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct SpodOptions {
    /// Snapshots per block N_f (`None`: the default of the module doc).
    pub block: Option<usize>,
    /// Overlap N_o in snapshots (`None`: N_f / 2).
    pub overlap: Option<usize>,
    /// Modes kept per frequency (`None`: all N_b).
    pub modes: Option<usize>,
}

/// An SPOD of a series.
#[derive(Debug, Clone)]
pub struct Spod {
    pub layout: SnapshotLayout,
    pub mean: Vec<f64>,
    pub dt: f64,
    pub block: usize,
    pub overlap: usize,
    pub blocks: usize,
    /// f_l, l = 0 … N_f/2.
    pub frequencies: Vec<f64>,
    /// λ_{l,j}: per frequency, all N_b eigenvalues, nonincreasing.
    pub energies: Vec<Vec<f64>>,
    /// ψ_{l,j} (physical, unit weighted norm): per frequency, n × (modes kept).
    pub modes: Vec<Mat<c64>>,
}

/// The default block size for `m` snapshots (module doc).
pub fn default_block(m: usize) -> usize {
    let mut nf = 512usize;
    while nf > 4 && (m.saturating_sub(nf / 2)) / (nf / 2) < 8 {
        nf /= 2;
    }
    nf
}

/// SPOD of `series`.
pub fn spod(series: &Series, opts: &SpodOptions) -> Result<Spod, ModesError> {
    spod_with_progress(series, opts, &mut Progress::silent())
}

/// [`spod`], reporting its progress (the same numbers: the observer only watches). The plan
/// counts, in real multiply–adds, the transforms of each block (n FFTs of the block length
/// N, 2N·log₂N each; Cooley & Tukey 1965, Math. Comput. 19:297) and, per frequency, the
/// cross-spectral matrix Q*Q, its eigensolver and the modes (complex: 4 each).
pub fn spod_with_progress(
    series: &Series,
    opts: &SpodOptions,
    progress: &mut Progress,
) -> Result<Spod, ModesError> {
    let layout = SnapshotLayout::new(series)?;
    let m = series.nt();
    let dt = uniform_step(series, "SPOD")?;
    let nf = opts.block.unwrap_or_else(|| default_block(m));
    if nf < 2 || nf > m {
        return Err(ModesError::BadOption {
            name: "block",
            rule: format!("the block size must be between 2 and the {m} snapshots, not {nf}"),
        });
    }
    let no = opts.overlap.unwrap_or(nf / 2);
    if no >= nf {
        return Err(ModesError::BadOption {
            name: "overlap",
            rule: format!("the overlap ({no}) must be smaller than the block ({nf})"),
        });
    }
    let step = nf - no;
    let nb = (m - no) / step;
    if nb < 1 {
        return Err(ModesError::TooFewSnapshots { method: "SPOD", needed: nf, got: m });
    }
    let mean = layout.mean(series);
    let n = layout.len();
    let sw: Vec<f64> = layout.weights().iter().map(|w| w.sqrt()).collect();
    let window: Vec<f64> = (0..nf)
        .map(|k| 0.5 - 0.5 * (2.0 * std::f64::consts::PI * k as f64 / nf as f64).cos())
        .collect();
    let kappa = dt / (nb as f64 * window.iter().map(|w| w * w).sum::<f64>());
    let nl = nf / 2 + 1;
    // Weighted, scaled transforms: qhat[l][(i, b)] = √κ W^{1/2} q̂^{(b)}_l.
    let mut qhat: Vec<Mat<c64>> = (0..nl).map(|_| Mat::zeros(n, nb)).collect();
    let fft = FftPlanner::<f64>::new().plan_fft_forward(nf);
    let snaps: Vec<Vec<f64>> = (0..m).map(|k| layout.snapshot(series, k)).collect();
    let mut buf = vec![c64::new(0.0, 0.0); nf];
    let sk = kappa.sqrt();
    let keep = opts.modes.unwrap_or(nb).clamp(1, nb);
    let (nw, bw) = (n as f64, nb as f64);
    // Per block and point: the gather of N windowed values (one from each of N snapshot
    // vectors: strided, counted as two copies), the transform, the scatter of N/2 + 1
    // coefficients into as many matrices (strided too).
    let block_work =
        nw * (2.0 * COPY_UNITS * (nf + nl) as f64 + 2.0 * nf as f64 * (nf as f64).log2().max(1.0));
    let frequency_work =
        4.0 * nw * bw * bw + 4.0 * EIGEN_UNITS * bw.powi(3) + 4.0 * nw * bw * keep as f64;
    // The modes handed out: N/2 + 1 frequencies of `keep` complex modes (built in place by
    // the loop below, then encoded): counted as copies.
    let output = 2.0 * COPY_UNITS * nw * (nl * keep) as f64;
    progress.plan(bw * block_work + nl as f64 * frequency_work + output);
    for b in 0..nb {
        let k0 = b * step;
        for i in 0..n {
            for (k, x) in buf.iter_mut().enumerate() {
                *x = c64::new(window[k] * (snaps[k0 + k][i] - mean[i]), 0.0);
            }
            fft.process(&mut buf);
            let s = sk * sw[i];
            for (l, q) in qhat.iter_mut().enumerate() {
                q[(i, b)] = buf[l] * s;
            }
        }
        progress.advance(block_work);
    }
    let mut energies = Vec::with_capacity(nl);
    let mut modes = Vec::with_capacity(nl);
    for q in &qhat {
        let mm = q.adjoint() * q;
        let eig = mm
            .self_adjoint_eigen(Side::Lower)
            .map_err(|_| ModesError::NoConvergence { what: "Hermitian eigensolver (SPOD)" })?;
        let lam: Vec<f64> = (0..nb).map(|j| eig.S()[nb - 1 - j].re.max(0.0)).collect();
        let mut psi = Mat::<c64>::zeros(n, keep);
        for j in 0..keep {
            if lam[j] <= 0.0 {
                continue;
            }
            let theta = eig.U().col(nb - 1 - j);
            let inv = 1.0 / lam[j].sqrt();
            for i in 0..n {
                let mut acc = c64::new(0.0, 0.0);
                for b in 0..nb {
                    acc += q[(i, b)] * theta[b];
                }
                psi[(i, j)] = acc * (inv / sw[i]);
            }
        }
        energies.push(lam);
        modes.push(psi);
        progress.advance(frequency_work);
    }
    let mut out = Spod {
        layout,
        mean,
        dt,
        block: nf,
        overlap: no,
        blocks: nb,
        frequencies: (0..nl).map(|l| l as f64 / (nf as f64 * dt)).collect(),
        energies,
        modes,
    };
    out.apply_phase_convention();
    progress.advance(output);
    progress.finish();
    Ok(out)
}

impl Spod {
    /// Applies the phase convention of the module doc: each mode ψ_{l,j} rotated so its
    /// reference component ([`super::snapshots::reference_component`]) is real and
    /// positive. Idempotent; energies and band reconstructions (the oblique projection
    /// depends only on the span of the modes) are unchanged. [`spod`] returns modes in this
    /// convention.
    pub fn apply_phase_convention(&mut self) {
        for psi in &mut self.modes {
            for j in 0..psi.ncols() {
                fix_phase(psi.col_as_slice_mut(j));
            }
        }
    }

    /// Indices l of the frequencies in [fmin, fmax].
    pub fn band(&self, fmin: f64, fmax: f64) -> Vec<usize> {
        (0..self.frequencies.len())
            .filter(|&l| self.frequencies[l] >= fmin && self.frequencies[l] <= fmax)
            .collect()
    }

    /// The fluctuation field of modes `first..=last` (0-based, per frequency) at the
    /// frequencies `band`, at every snapshot of `series` (the series this SPOD came from), by
    /// the oblique projection of the module doc. Returns one vector per snapshot.
    pub fn reconstruct_band(
        &self,
        series: &Series,
        band: &[usize],
        first: usize,
        last: usize,
    ) -> Result<Vec<Vec<f64>>, ModesError> {
        let n = self.layout.len();
        let nf = self.block;
        let mut cols: Vec<Vec<c64>> = Vec::new();
        for &l in band {
            let psi = &self.modes[l];
            if last >= psi.ncols() {
                return Err(ModesError::Selection(format!(
                    "SPOD mode {} asked for, but {} are kept per frequency",
                    last + 1,
                    psi.ncols()
                )));
            }
            for j in first..=last {
                if self.energies[l][j] <= 0.0 {
                    continue;
                }
                let c: Vec<c64> = (0..n).map(|i| psi[(i, j)]).collect();
                let real_bin = l == 0 || (nf % 2 == 0 && l == nf / 2);
                if !real_bin {
                    cols.push(c.iter().map(|z| z.conj()).collect());
                }
                cols.push(c);
            }
        }
        let m = series.nt();
        if cols.is_empty() {
            return Ok(vec![vec![0.0; n]; m]);
        }
        let r = cols.len();
        let w = self.layout.weights();
        let phi = Mat::from_fn(n, r, |i, j| cols[j][i]);
        let wphi = Mat::from_fn(n, r, |i, j| cols[j][i] * w[i]);
        let gram = phi.adjoint() * &wphi;
        let mut data = Mat::<c64>::zeros(n, m);
        for k in 0..m {
            let q = self.layout.snapshot(series, k);
            for i in 0..n {
                data[(i, k)] = c64::new(q[i] - self.mean[i], 0.0);
            }
        }
        let rhs = wphi.adjoint() * &data;
        let a = gram.partial_piv_lu().solve(&rhs);
        if (0..r).any(|j| (0..m).any(|k| !a[(j, k)].re.is_finite())) {
            return Err(ModesError::NoConvergence {
                what:
                    "SPOD band projection (modes nearly dependent: fewer modes or a narrower band)",
            });
        }
        let rec = &phi * &a;
        Ok((0..m).map(|k| (0..n).map(|i| rec[(i, k)].re).collect()).collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::modes::snapshots::{reference_component, test_phases, test_waves};

    #[test]
    fn phase_convention_holds_and_keeps_reconstructions() {
        let s = test_waves(10, 6, 96, 0.05);
        let sp = spod(&s, &SpodOptions { block: Some(16), modes: Some(3), ..Default::default() })
            .unwrap();
        for (l, psi) in sp.modes.iter().enumerate() {
            for j in 0..psi.ncols() {
                let col = psi.col_as_slice(j);
                let Some(r) = reference_component(col.len(), |i| col[i].norm()) else {
                    continue;
                };
                assert!(col[r].re > 0.0 && col[r].im == 0.0, "f{l} mode {j}: {:?}", col[r]);
            }
        }
        // The leading modes of the bins nearest the two waves (1.25 and 3.75 per unit time):
        // a well-conditioned projection (bins next to each other share the data's few
        // directions, and their oblique projection amplifies round-off far beyond 1e-12).
        let band = [1, 3];
        let reference = sp.reconstruct_band(&s, &band, 0, 0).unwrap();
        let scale = reference.iter().flatten().fold(0.0f64, |a, x| a.max(x.abs()));
        assert!(scale > 0.1, "{scale}");
        let mut q = sp.clone();
        let mut phases = test_phases(q.modes.len() * 3, 5).into_iter();
        for psi in &mut q.modes {
            for j in 0..psi.ncols() {
                let p = phases.next().unwrap();
                psi.col_as_slice_mut(j).iter_mut().for_each(|z| *z *= p);
            }
        }
        let rotated = q.reconstruct_band(&s, &band, 0, 0).unwrap();
        q.apply_phase_convention();
        let again = q.reconstruct_band(&s, &band, 0, 0).unwrap();
        for (label, other) in [("rotated", &rotated), ("convention", &again)] {
            let err = reference
                .iter()
                .flatten()
                .zip(other.iter().flatten())
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            assert!(err <= 1e-12 * scale, "{label}: {err}");
        }
        for (l, (a, b)) in q.modes.iter().zip(&sp.modes).enumerate() {
            let err = (0..a.nrows())
                .flat_map(|i| (0..a.ncols()).map(move |j| (i, j)))
                .map(|(i, j)| (a[(i, j)] - b[(i, j)]).norm())
                .fold(0.0, f64::max);
            assert!(err <= 1e-12, "f{l}: {err}");
        }
    }
}
