//! `sillage modes`: a modal decomposition of the series, written as arrays to one .npz.

use crate::input::InputArgs;
use sillage::field::Series;
use sillage::io::{write_arrays_npz, NpyArray, NpyData};
use sillage::modes::{
    dmd, pod, spod, Dmd, DmdOptions, DmdVariant, Pod, PodOptions, PodSolver, RandomizedSvd,
    RankRule, Spod, SpodOptions, SvdRoute,
};
use std::path::PathBuf;

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Proper orthogonal decomposition of the fluctuations about the time mean.
    Pod,
    /// Dynamic mode decomposition of the raw snapshots (no mean removed).
    Dmd,
    /// Spectral POD: per-frequency modes and energy spectra (Welch blocks, Hann window).
    Spod,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Variant {
    /// Exact DMD.
    Exact,
    /// Total-least-squares DMD: less biased by measurement noise.
    Tls,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Solver {
    /// Snapshot method when there are more vector components than snapshots, else direct SVD.
    Auto,
    /// Eigen-decomposition of the snapshot correlation matrix.
    Snapshot,
    /// Direct thin SVD (most accurate for small singular values).
    Svd,
    /// Randomized SVD of the leading --rank modes.
    Randomized,
}

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub settings: Settings,
    /// Where to write the arrays (.npz).
    #[arg(long, short, value_name = "FILE.npz")]
    pub out: Option<PathBuf>,
}

/// How to decompose (shared with `sillage run`, which fills it from a recipe).
#[derive(clap::Args, Debug)]
pub struct Settings {
    /// Decomposition to compute.
    #[arg(long, value_enum, default_value_t = Method::Pod)]
    pub method: Method,
    /// Number of modes to keep: POD modes (default: all above round-off), DMD rank (default:
    /// the optimal hard threshold), SPOD modes per frequency (default: 3).
    #[arg(long, value_name = "K")]
    pub rank: Option<usize>,
    /// How the SVD is computed.
    #[arg(long, value_enum, default_value_t = Solver::Auto)]
    pub solver: Solver,
    /// Power iterations of the randomized SVD.
    #[arg(long, default_value_t = 2, value_name = "Q")]
    pub power_iterations: usize,
    /// Extra random directions of the randomized SVD.
    #[arg(long, default_value_t = 10, value_name = "P")]
    pub oversampling: usize,
    /// Seed of the randomized SVD's test matrix.
    #[arg(long, default_value_t = 0, value_name = "N")]
    pub seed: u64,
    /// DMD variant.
    #[arg(long, value_enum, default_value_t = Variant::Exact)]
    pub variant: Variant,
    /// DMD: keep the leading singular values holding this fraction of the energy, instead
    /// of the optimal hard threshold (the default without --rank).
    #[arg(long, value_name = "FRACTION", conflicts_with = "rank")]
    pub energy: Option<f64>,
    /// SPOD: snapshots per block (default: the largest power of two ≤ 512 giving ≥ 8 blocks).
    #[arg(long, value_name = "N")]
    pub block: Option<usize>,
    /// SPOD: overlap of consecutive blocks in snapshots (default: half a block).
    #[arg(long, value_name = "N")]
    pub overlap: Option<usize>,
    /// Keep the time mean in the data (POD of the raw snapshots).
    #[arg(long)]
    pub keep_mean: bool,
}

impl Settings {
    /// The command-line defaults with the given method and rank.
    pub fn with(method: Method, rank: Option<usize>) -> Settings {
        Settings {
            method,
            rank,
            solver: Solver::Auto,
            power_iterations: 2,
            oversampling: 10,
            seed: 0,
            variant: Variant::Exact,
            energy: None,
            block: None,
            overlap: None,
            keep_mean: false,
        }
    }
}

fn f64s(name: &str, shape: Vec<usize>, v: Vec<f64>) -> NpyArray {
    NpyArray::new(name, shape, NpyData::F64(v))
}

/// Columns of an n × r layout matrix as `(r, ny, nx)` u and v arrays (f64, masked 0).
fn planes(pod: &Pod, series: &Series, cols: &faer::Mat<f64>) -> (Vec<f64>, Vec<f64>) {
    let plane = series.nx() * series.ny();
    let cells = pod.layout.cells();
    let nv = cells.len();
    let r = cols.ncols();
    let (mut u, mut v) = (vec![0.0; r * plane], vec![0.0; r * plane]);
    for j in 0..r {
        let c = cols.col_as_slice(j);
        for (i, &cell) in cells.iter().enumerate() {
            u[j * plane + cell] = c[i];
            v[j * plane + cell] = c[nv + i];
        }
    }
    (u, v)
}

fn pod_arrays(p: &Pod, series: &Series) -> Vec<NpyArray> {
    let (nx, ny, nt, r) = (series.nx(), series.ny(), series.nt(), p.rank());
    let plane = nx * ny;
    let mean = faer::Mat::from_fn(p.layout.len(), 1, |i, _| p.mean[i]);
    let (mu, mv) = planes(p, series, &mean);
    let (modes_u, modes_v) = planes(p, series, &p.modes);
    let mut weights = vec![0.0; plane];
    for (i, &c) in p.layout.cells().iter().enumerate() {
        weights[c] = p.layout.weights()[i];
    }
    let coeff: Vec<f64> = (0..nt)
        .flat_map(|k| (0..r).map(move |j| (k, j)))
        .map(|(k, j)| p.coefficients[(k, j)])
        .collect();
    let solver = match p.solver {
        PodSolver::Exact(SvdRoute::Snapshot) => "snapshot",
        PodSolver::Exact(_) => "svd",
        PodSolver::Randomized(_) => "randomized",
    };
    vec![
        f64s("x", vec![nx], series.grid().x.coords()),
        f64s("y", vec![ny], series.grid().y.coords()),
        f64s("t", vec![nt], series.times().to_vec()),
        NpyArray::new("mask", vec![ny, nx], NpyData::Bool(series.mask().to_vec())),
        f64s("weights", vec![ny, nx], weights),
        f64s("mean_u", vec![ny, nx], mu),
        f64s("mean_v", vec![ny, nx], mv),
        f64s("modes_u", vec![r, ny, nx], modes_u),
        f64s("modes_v", vec![r, ny, nx], modes_v),
        f64s("singular_values", vec![r], p.singular_values.clone()),
        f64s("energies", vec![r], p.energies()),
        f64s("energy_fraction", vec![r], p.energy_fractions()),
        f64s("cumulative_energy", vec![r], p.cumulative_energy()),
        f64s("total_energy", vec![], vec![p.total_energy]),
        f64s("coefficients", vec![nt, r], coeff),
        NpyArray::new("method", vec![], NpyData::Str("pod".into())),
        NpyArray::new("solver", vec![], NpyData::Str(solver.into())),
    ]
}

fn dmd_arrays(d: &Dmd, series: &Series) -> Vec<NpyArray> {
    let (nx, ny, r) = (series.nx(), series.ny(), d.rank());
    let plane = nx * ny;
    let cells = d.layout.cells();
    let nv = cells.len();
    let mut parts =
        [vec![0.0; r * plane], vec![0.0; r * plane], vec![0.0; r * plane], vec![0.0; r * plane]];
    for j in 0..r {
        for (i, &c) in cells.iter().enumerate() {
            let (pu, pv) = (d.modes[(i, j)], d.modes[(nv + i, j)]);
            parts[0][j * plane + c] = pu.re;
            parts[1][j * plane + c] = pu.im;
            parts[2][j * plane + c] = pv.re;
            parts[3][j * plane + c] = pv.im;
        }
    }
    let [ur, ui, vr, vi] = parts;
    let re = |v: &[faer::c64]| v.iter().map(|z| z.re).collect::<Vec<_>>();
    let im = |v: &[faer::c64]| v.iter().map(|z| z.im).collect::<Vec<_>>();
    let omega = d.continuous();
    let variant = match d.variant {
        DmdVariant::Exact => "exact",
        DmdVariant::TotalLeastSquares => "tls",
    };
    vec![
        f64s("x", vec![nx], series.grid().x.coords()),
        f64s("y", vec![ny], series.grid().y.coords()),
        f64s("t", vec![series.nt()], series.times().to_vec()),
        NpyArray::new("mask", vec![ny, nx], NpyData::Bool(series.mask().to_vec())),
        f64s("eigenvalues_re", vec![r], re(&d.eigenvalues)),
        f64s("eigenvalues_im", vec![r], im(&d.eigenvalues)),
        f64s("omega_re", vec![r], re(&omega)),
        f64s("omega_im", vec![r], im(&omega)),
        f64s("frequencies", vec![r], d.frequencies()),
        f64s("growth_rates", vec![r], d.growth_rates()),
        f64s("amplitudes_re", vec![r], re(&d.amplitudes)),
        f64s("amplitudes_im", vec![r], im(&d.amplitudes)),
        f64s("modes_u_re", vec![r, ny, nx], ur),
        f64s("modes_u_im", vec![r, ny, nx], ui),
        f64s("modes_v_re", vec![r, ny, nx], vr),
        f64s("modes_v_im", vec![r, ny, nx], vi),
        f64s("singular_values", vec![d.singular_values.len()], d.singular_values.clone()),
        f64s("dt", vec![], vec![d.dt]),
        NpyArray::new("method", vec![], NpyData::Str("dmd".into())),
        NpyArray::new("variant", vec![], NpyData::Str(variant.into())),
    ]
}

fn spod_arrays(sp: &Spod, series: &Series) -> Vec<NpyArray> {
    let (nx, ny) = (series.nx(), series.ny());
    let plane = nx * ny;
    let nl = sp.frequencies.len();
    let keep = sp.modes[0].ncols();
    let cells = sp.layout.cells();
    let nv = cells.len();
    let size = nl * keep * plane;
    let (mut ur, mut ui, mut vr, mut vi) =
        (vec![0.0; size], vec![0.0; size], vec![0.0; size], vec![0.0; size]);
    for (l, psi) in sp.modes.iter().enumerate() {
        for j in 0..keep {
            let off = (l * keep + j) * plane;
            for (i, &c) in cells.iter().enumerate() {
                ur[off + c] = psi[(i, j)].re;
                ui[off + c] = psi[(i, j)].im;
                vr[off + c] = psi[(nv + i, j)].re;
                vi[off + c] = psi[(nv + i, j)].im;
            }
        }
    }
    let energies: Vec<f64> = sp.energies.iter().flatten().copied().collect();
    vec![
        f64s("x", vec![nx], series.grid().x.coords()),
        f64s("y", vec![ny], series.grid().y.coords()),
        f64s("t", vec![series.nt()], series.times().to_vec()),
        NpyArray::new("mask", vec![ny, nx], NpyData::Bool(series.mask().to_vec())),
        f64s("frequencies", vec![nl], sp.frequencies.clone()),
        f64s("energies", vec![nl, sp.blocks], energies),
        f64s("modes_u_re", vec![nl, keep, ny, nx], ur),
        f64s("modes_u_im", vec![nl, keep, ny, nx], ui),
        f64s("modes_v_re", vec![nl, keep, ny, nx], vr),
        f64s("modes_v_im", vec![nl, keep, ny, nx], vi),
        f64s("dt", vec![], vec![sp.dt]),
        NpyArray::new("block", vec![], NpyData::I64(vec![sp.block as i64])),
        NpyArray::new("overlap", vec![], NpyData::I64(vec![sp.overlap as i64])),
        NpyArray::new("blocks", vec![], NpyData::I64(vec![sp.blocks as i64])),
        NpyArray::new("method", vec![], NpyData::Str("spod".into())),
    ]
}

pub fn run(args: Args) -> Result<(), String> {
    if let Some(out) = &args.out {
        if out.extension().and_then(|e| e.to_str()).map(str::to_lowercase) != Some("npz".into()) {
            return Err(format!("--out '{}': modes are written as .npz", out.display()));
        }
    }
    let series = args.input.read()?;
    let arrays = decompose(&series, &args.settings)?;
    if let Some(out) = &args.out {
        std::fs::write(out, write_arrays_npz(&arrays))
            .map_err(|e| format!("cannot write '{}': {e}", out.display()))?;
        println!("wrote {}", out.display());
    }
    Ok(())
}

/// Computes the decomposition, prints its summary and returns the arrays to write.
pub fn decompose(series: &Series, args: &Settings) -> Result<Vec<NpyArray>, String> {
    let solver = match args.solver {
        Solver::Auto => PodSolver::Exact(SvdRoute::Auto),
        Solver::Snapshot => PodSolver::Exact(SvdRoute::Snapshot),
        Solver::Svd => PodSolver::Exact(SvdRoute::Direct),
        Solver::Randomized => PodSolver::Randomized(RandomizedSvd {
            oversampling: args.oversampling,
            power_iterations: args.power_iterations,
            seed: args.seed,
        }),
    };
    let arrays = match args.method {
        Method::Pod => {
            let opts = PodOptions { rank: args.rank, solver, subtract_mean: !args.keep_mean };
            let p = pod(series, &opts).map_err(|e| e.to_string())?;
            println!(
                "POD of {} snapshots, {} vector components: {} modes; energy of the first: {}",
                series.nt(),
                p.layout.len(),
                p.rank(),
                p.energy_fractions()
                    .iter()
                    .take(6)
                    .map(|f| format!("{:.2} %", 100.0 * f))
                    .collect::<Vec<_>>()
                    .join(", ")
            );
            pod_arrays(&p, series)
        }
        Method::Dmd => {
            let rank = match (args.rank, args.energy) {
                (Some(k), _) => RankRule::Fixed(k),
                (None, Some(f)) => RankRule::Energy(f),
                (None, None) => RankRule::OptimalHardThreshold,
            };
            let route = match args.solver {
                Solver::Auto => SvdRoute::Auto,
                Solver::Snapshot => SvdRoute::Snapshot,
                Solver::Svd => SvdRoute::Direct,
                Solver::Randomized => {
                    return Err("--solver randomized applies to POD only".into());
                }
            };
            let opts = DmdOptions {
                rank,
                variant: match args.variant {
                    Variant::Exact => DmdVariant::Exact,
                    Variant::Tls => DmdVariant::TotalLeastSquares,
                },
                route,
            };
            let d = dmd(series, &opts).map_err(|e| e.to_string())?;
            let f = d.frequencies();
            let lead: Vec<String> = (0..d.rank().min(6))
                .map(|j| format!("{:.4} ({:+.3e})", f[j], d.growth_rates()[j]))
                .collect();
            println!(
                "DMD ({}) of {} snapshots: rank {}; frequencies (growth rates) by amplitude: {}",
                if opts.variant == DmdVariant::Exact { "exact" } else { "TLS" },
                series.nt(),
                d.rank(),
                lead.join(", ")
            );
            dmd_arrays(&d, series)
        }
        Method::Spod => {
            let opts = SpodOptions {
                block: args.block,
                overlap: args.overlap,
                modes: Some(args.rank.unwrap_or(3)),
            };
            let sp = spod(series, &opts).map_err(|e| e.to_string())?;
            let lead: Vec<f64> = sp.energies.iter().map(|e| e[0]).collect();
            let peak = (1..lead.len()).max_by(|&a, &b| lead[a].total_cmp(&lead[b])).unwrap_or(0);
            println!(
                "SPOD of {} snapshots: {} blocks of {} (overlap {}), {} frequencies {:.4} apart; \
                 leading-mode energy peaks at f = {:.4}",
                series.nt(),
                sp.blocks,
                sp.block,
                sp.overlap,
                sp.frequencies.len(),
                sp.frequencies[1],
                sp.frequencies[peak]
            );
            spod_arrays(&sp, series)
        }
    };
    Ok(arrays)
}
