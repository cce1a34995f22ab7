//! Sensitivity fields on rows `j0..j1` of a tracer grid: the entry point both the CLI (rayon
//! over row chunks) and the page's workers call, deterministic whatever the split.

use super::lockstep::{tile, tile_size, PerturbationSamples, TileBuffers, MIN_TILE};
use super::trajectory::{trajectory, TrajectoryBuffer, TrajectorySensitivity};
use super::SensitivityError;
use crate::lagrangian::{
    lockstep_field, singular_values, step_count, AdvectOptions, BoundaryPolicy, Extended, FtleFlag,
    FtleRows, FtleStats, Integrator, SliceSet, TracerGrid, Vec2, VelocityField,
};
use serde::{Deserialize, Serialize};

/// Options of a sensitivity computation.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SensitivityOptions {
    /// Start time, horizon (signed), integrator and boundary policy of the model flow's
    /// trajectories. The integrator must be RK4: its equal steps are the quadrature nodes.
    pub advect: AdvectOptions,
    /// Reference speed of the perturbation g_ref (velocity units) in
    /// σ_MS = (1/|T|) ln(MS_g / (|T| g_ref)). The drivers default it to the RMS of |g| over
    /// the valid cells of the time window ([`super::rms_speed`]).
    pub g_ref: f64,
}

impl SensitivityOptions {
    /// The RK4 step count and signed step, after checking the options against f.
    pub(crate) fn steps<F: VelocityField>(&self, f: &F) -> Result<(usize, f64), SensitivityError> {
        let a = &self.advect;
        a.validate(f)?;
        if !(self.g_ref.is_finite() && self.g_ref > 0.0) {
            return Err(SensitivityError::BadReference(self.g_ref));
        }
        let Integrator::Rk4 { max_step } = a.integrator else {
            return Err(SensitivityError::NeedsFixedStep);
        };
        let n = step_count(a.horizon, max_step) as usize;
        Ok((n, a.horizon / n as f64))
    }
}

/// How σ_MS is normalised, stated in every output (METHODS.md §2): ζ only shifts by a
/// constant under another choice of g_ref.
pub const NORMALISATION: &str =
    "sigma_ms = ln(ms_g / (|T| * g_ref)) / |T|; zeta = sigma_ms - ftle; T is the time \
     integrated (the horizon, or less where the tracer left the data)";

/// Counts over a set of rows.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct SensitivityStats {
    pub full: usize,
    pub exited: usize,
    pub short: usize,
    pub masked: usize,
    pub no_value: usize,
    /// Nodes where g vanished along the whole trajectory (MS_g = 0): σ_MS and ζ hold 0.
    pub zero_perturbation: usize,
}

impl SensitivityStats {
    fn add(&mut self, o: &SensitivityStats) {
        self.full += o.full;
        self.exited += o.exited;
        self.short += o.short;
        self.masked += o.masked;
        self.no_value += o.no_value;
        self.zero_perturbation += o.zero_perturbation;
    }
}

/// Sensitivity maps of rows `j0..j1`, each `(j1 − j0, nx)` row-major. Nodes without a
/// value hold 0 and say why in `flag` (the FTLE flags: full, exited, short, masked, none).
#[derive(Debug, Clone, PartialEq)]
pub struct SensitivityRows {
    pub grid: TracerGrid,
    pub j0: usize,
    pub j1: usize,
    pub horizon: f64,
    pub g_ref: f64,
    /// MS, uniform-bound form (time).
    pub ms: Vec<f32>,
    /// MS_g, pointwise form (length).
    pub ms_g: Vec<f32>,
    /// Eulerian rate-of-strain upper bound on MS (time).
    pub strain_bound: Vec<f32>,
    /// |ξ(t₀ + T)| and its components (length per unit ε).
    pub xi: Vec<f32>,
    pub xi_x: Vec<f32>,
    pub xi_y: Vec<f32>,
    /// σ_FTLE of f (1/time).
    pub ftle: Vec<f32>,
    /// σ_MS (1/time), see [`NORMALISATION`].
    pub sigma_ms: Vec<f32>,
    /// ζ = σ_MS − σ_FTLE (1/time).
    pub zeta: Vec<f32>,
    /// Time integrated |τ| (the exit-time map).
    pub tau: Vec<f32>,
    /// |σ₁σ₂ − 1| of ∇F (the det ∇F = 1 quality map of the FTLE).
    pub det_deviation: Vec<f32>,
    pub flag: Vec<FtleFlag>,
    pub stats: SensitivityStats,
}

impl SensitivityRows {
    fn with_capacity(grid: &TracerGrid, j0: usize, j1: usize, o: &SensitivityOptions) -> Self {
        let n = (j1 - j0) * grid.nx();
        let v = || Vec::with_capacity(n);
        SensitivityRows {
            grid: *grid,
            j0,
            j1,
            horizon: o.advect.horizon,
            g_ref: o.g_ref,
            ms: v(),
            ms_g: v(),
            strain_bound: v(),
            xi: v(),
            xi_x: v(),
            xi_y: v(),
            ftle: v(),
            sigma_ms: v(),
            zeta: v(),
            tau: v(),
            det_deviation: v(),
            flag: Vec::with_capacity(n),
            stats: SensitivityStats::default(),
        }
    }

    /// The named float maps, in output order (the flag map is separate).
    pub fn maps(&self) -> [(&'static str, &[f32]); 11] {
        [
            ("ms", &self.ms),
            ("ms_g", &self.ms_g),
            ("strain_bound", &self.strain_bound),
            ("xi", &self.xi),
            ("xi_x", &self.xi_x),
            ("xi_y", &self.xi_y),
            ("ftle", &self.ftle),
            ("sigma_ms", &self.sigma_ms),
            ("zeta", &self.zeta),
            ("tau", &self.tau),
            ("det_deviation", &self.det_deviation),
        ]
    }

    fn push_empty(&mut self, flag: FtleFlag) {
        for m in self.float_maps_mut() {
            m.push(0.0);
        }
        self.flag.push(flag);
        match flag {
            FtleFlag::Masked => self.stats.masked += 1,
            _ => self.stats.no_value += 1,
        }
    }

    fn float_maps_mut(&mut self) -> [&mut Vec<f32>; 11] {
        [
            &mut self.ms,
            &mut self.ms_g,
            &mut self.strain_bound,
            &mut self.xi,
            &mut self.xi_x,
            &mut self.xi_y,
            &mut self.ftle,
            &mut self.sigma_ms,
            &mut self.zeta,
            &mut self.tau,
            &mut self.det_deviation,
        ]
    }

    /// The FTLE of f as an FTLE result (for ridge extraction and the FTLE views).
    pub fn to_ftle_rows(&self) -> FtleRows {
        let mut stats = FtleStats {
            full: self.stats.full,
            exited: self.stats.exited,
            short: self.stats.short,
            masked: self.stats.masked,
            no_value: self.stats.no_value,
            ..FtleStats::default()
        };
        stats.max_det_deviation = self.det_deviation.iter().fold(0.0, |a, &d| a.max(d as f64));
        FtleRows {
            grid: self.grid,
            j0: self.j0,
            j1: self.j1,
            horizon: self.horizon,
            ftle: self.ftle.clone(),
            tau: self.tau.clone(),
            det_deviation: self.det_deviation.clone(),
            flag: self.flag.clone(),
            stats,
        }
    }

    /// Joins consecutive row ranges of one grid, in order.
    pub fn concat(parts: Vec<SensitivityRows>) -> Result<SensitivityRows, SensitivityError> {
        let mut it = parts.into_iter();
        let mut all = it.next().ok_or(SensitivityError::NoRows)?;
        for mut p in it {
            if p.j0 != all.j1 || p.grid != all.grid {
                return Err(SensitivityError::NoRows);
            }
            all.j1 = p.j1;
            all.stats.add(&p.stats);
            all.flag.append(&mut p.flag);
            for (a, b) in all.float_maps_mut().into_iter().zip(p.float_maps_mut()) {
                a.append(b);
            }
        }
        Ok(all)
    }
}

/// Sensitivity of rows `j0..j1` of `grid` to the perturbation `g` of the model flow `f`.
pub fn sensitivity_rows<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    grid: &TracerGrid,
    o: &SensitivityOptions,
    j0: usize,
    j1: usize,
) -> Result<SensitivityRows, SensitivityError> {
    let (n, h) = o.steps(f)?;
    if j0 >= j1 || j1 > grid.ny() {
        return Err(SensitivityError::BadRowRange { j0, j1, ny: grid.ny() });
    }
    Ok(match o.advect.boundary {
        BoundaryPolicy::Stop => rows_with(f, f, g, grid, o, (n, h), (j0, j1)),
        BoundaryPolicy::Extrapolate => {
            rows_with(f, &Extended { inner: f }, &Extended { inner: g }, grid, o, (n, h), (j0, j1))
        }
    })
}

fn rows_with<S: VelocityField, F: VelocityField, G: VelocityField>(
    seed_field: &S,
    f: &F,
    g: &G,
    grid: &TracerGrid,
    o: &SensitivityOptions,
    (n, h): (usize, f64),
    (j0, j1): (usize, usize),
) -> SensitivityRows {
    let t0 = o.advect.t0;
    let t_abs = o.advect.horizon.abs();
    let mut r = SensitivityRows::with_capacity(grid, j0, j1, o);
    // Seeds with a velocity at t₀, in row order; the others are masked.
    let mut seeded = Vec::with_capacity((j1 - j0) * grid.nx());
    let mut seeds = Vec::new();
    for j in j0..j1 {
        for i in 0..grid.nx() {
            let p = grid.node(i, j);
            let ok = seed_field.velocity(p, t0).is_some();
            seeded.push(ok);
            if ok {
                seeds.push(p);
            }
        }
    }
    let mut results = trajectories(f, g, &seeds, (t0, h, n)).into_iter();
    for ok in seeded {
        if !ok {
            r.push_empty(FtleFlag::Masked);
            continue;
        }
        let Some(s) = results.next().flatten() else {
            r.push_empty(FtleFlag::NoValue);
            continue;
        };
        let tau = s.steps as f64 * h.abs();
        let flag = if s.steps == n {
            FtleFlag::Full
        } else if tau >= 0.5 * t_abs {
            FtleFlag::Exited
        } else {
            FtleFlag::Short
        };
        match flag {
            FtleFlag::Full => r.stats.full += 1,
            FtleFlag::Exited => r.stats.exited += 1,
            _ => r.stats.short += 1,
        }
        let (s1, s2) = singular_values(s.grad);
        let sigma = s1.ln() / tau;
        let (sigma_ms, zeta) = if s.ms_g > 0.0 {
            let sm = (s.ms_g / (tau * o.g_ref)).ln() / tau;
            (sm, sm - sigma)
        } else {
            r.stats.zero_perturbation += 1;
            (0.0, 0.0)
        };
        let xi = s.xi[0].hypot(s.xi[1]);
        let det = (s1 * s2 - 1.0).abs();
        let values =
            [s.ms, s.ms_g, s.strain_bound, xi, s.xi[0], s.xi[1], sigma, sigma_ms, zeta, tau, det];
        for (m, v) in r.float_maps_mut().into_iter().zip(values) {
            m.push(if v.is_finite() { v as f32 } else { 0.0 });
        }
        r.flag.push(flag);
    }
    r
}

/// [`trajectory`]'s result for every seed, in order: tile by tile in lockstep on time
/// slices when f is sliceable gridded data (`lockstep.rs`, bit-identical), else one
/// trajectory at a time.
fn trajectories<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    seeds: &[Vec2],
    (t0, h, n): (f64, f64, usize),
) -> Vec<Option<TrajectorySensitivity>> {
    let size = tile_size(n);
    match lockstep_field(f) {
        Some(fg) if seeds.len() >= MIN_TILE && size >= MIN_TILE => {
            let mut gs = match lockstep_field(g) {
                Some(gg) => PerturbationSamples::Slices(Box::new(SliceSet::new(gg, 1, None))),
                None => PerturbationSamples::Field(g),
            };
            let mut bufs = TileBuffers::default();
            let mut out = Vec::with_capacity(size.min(seeds.len()));
            let mut all = Vec::with_capacity(seeds.len());
            for part in seeds.chunks(size) {
                tile(f, fg, g, &mut gs, part, (t0, h, n), &mut bufs, &mut out);
                all.append(&mut out);
            }
            all
        }
        _ => {
            let mut buf = TrajectoryBuffer::default();
            seeds.iter().map(|&p| trajectory(f, g, p, t0, h, n, &mut buf)).collect()
        }
    }
}
