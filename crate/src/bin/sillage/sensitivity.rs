//! `sillage sensitivity`: model / mode sensitivity of the FTLE field. The model flow f and
//! the perturbation g are each a selection of the data's modes ("mean + pod(1-2)") or a
//! velocity file in the canonical layout; the maps are computed on all cores.

use crate::input::InputArgs;
use crate::lagrangian_args::LagrangianArgs;
use sillage::field::Series;
use sillage::io::read_paths;
use sillage::modes::{SelectOptions, Selection};
use sillage::sensitivity::parallel::run_parallel;
use sillage::sensitivity::{
    prepare, sensitivity_npz, sensitivity_vti, SensitivityResult, SensitivitySpec, NORMALISATION,
};
use std::path::{Path, PathBuf};
use std::time::Instant;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub lagrangian: LagrangianArgs,
    /// The model flow f: a selection of the data ("mean + pod(1-2)", see `sillage select`)
    /// or the path of a velocity file in the canonical layout.
    #[arg(long, value_name = "SELECTION|FILE")]
    pub model: String,
    /// The perturbation g: a selection ("pod(3-4)", "residual(mean + pod(1-2))",
    /// "noise(rms=0.001, seed=1)") or the path of a velocity file.
    #[arg(long, value_name = "SELECTION|FILE")]
    pub perturbation: String,
    /// Also compute the brute-force Δσ = FTLE[f + εg] − FTLE[f] for this ε (dimensionless:
    /// g is used at its own size, so ε·g is the velocity added).
    #[arg(long, value_name = "EPS")]
    pub epsilon: Option<f64>,
    /// Reference speed g_ref of σ_MS in the input's velocity unit (default: RMS of |g| over
    /// the valid cells of the time window).
    #[arg(long, value_name = "SPEED")]
    pub g_ref: Option<f64>,
    /// Output .npz: x, y, ms, ms_g, strain_bound, xi, xi_x, xi_y, ftle, sigma_ms, zeta,
    /// exit_time, det_deviation, flag (and delta_ftle), with units and the normalisation.
    #[arg(long, short, value_name = "FILE.npz", default_value = "sensitivity.npz")]
    pub out: PathBuf,
    /// Also write the maps as VTK image data (.vti).
    #[arg(long, value_name = "FILE.vti")]
    pub vti: Option<PathBuf>,
}

/// A field given on the command line: an existing path is read as velocity data (with the
/// same reading options as DATA), anything else is parsed as a selection of DATA.
pub fn field_from(text: &str, data: &Series, input: &InputArgs) -> Result<Series, String> {
    let path = Path::new(text);
    if path.exists() {
        return read_paths(&[path.to_path_buf()], &input.read_options())
            .map_err(|e| format!("cannot read '{}': {e}", path.display()));
    }
    let sel = Selection::parse(text).map_err(|e| e.to_string())?;
    sel.materialize(data, &SelectOptions::default()).map_err(|e| e.to_string())
}

pub fn run(args: Args) -> Result<(), String> {
    if args.out.extension().and_then(|e| e.to_str()).map(str::to_lowercase).as_deref()
        != Some("npz")
    {
        return Err(format!("--out '{}' must end in .npz", args.out.display()));
    }
    let la = &args.lagrangian;
    if la.adaptive {
        return Err("sensitivity integrates with fixed-step RK4 (its steps are the quadrature \
                    nodes); leave out --adaptive and set --step if needed"
            .into());
    }
    let data = args.input.read()?;
    let f = field_from(&args.model, &data, &args.input)?;
    let g = field_from(&args.perturbation, &data, &args.input)?;
    let u = data.source_units();
    let speed_si = u.length.to_si() / u.time.to_si();
    let spec = SensitivitySpec {
        advect: la.advect(&f)?,
        grid: la.tracer_grid(&f)?,
        space: la.space(),
        time: la.time(),
        g_ref: args.g_ref.map(|s| s * speed_si),
        epsilon: args.epsilon,
    };
    let plan = prepare(&f, &g, &spec).map_err(|e| e.to_string())?;
    let start = Instant::now();
    let r = run_parallel(&plan, 2).map_err(|e| e.to_string())?;
    summarise(&r, start.elapsed().as_secs_f64(), &data);
    let t0 = spec.advect.t0;
    write(&args.out, &sensitivity_npz(&r, t0, &data.units()))?;
    println!("wrote {}", args.out.display());
    if let Some(path) = &args.vti {
        write(path, &sensitivity_vti(&r, t0))?;
        println!("wrote {}", path.display());
    }
    Ok(())
}

/// The figures a user checks first, with units.
pub fn summarise(r: &SensitivityResult, secs: f64, data: &Series) {
    let units = data.units();
    let (time, length, rate) = (units.time.symbol(), units.length.symbol(), units.rate_label());
    let m = &r.maps;
    let s = &m.stats;
    let max = |v: &[f32]| v.iter().fold(0.0f32, |a, &b| a.max(b));
    let zeta_range =
        m.zeta.iter().fold((f32::MAX, f32::MIN), |(lo, hi), &z| (lo.min(z), hi.max(z)));
    println!(
        "sensitivity on {}x{} tracers, horizon {} {time}: max MS {:.4} {time}, max MS_g {:.4e} \
         {length}, max |ξ| {:.4e} {length}, max FTLE {:.4} {rate}; g_ref {:.4e} {}",
        m.grid.nx(),
        m.grid.ny(),
        m.horizon,
        max(&m.ms),
        max(&m.ms_g),
        max(&m.xi),
        max(&m.ftle),
        m.g_ref,
        units.velocity_label()
    );
    println!("ζ from {:.4} to {:.4} {rate}; {NORMALISATION}", zeta_range.0, zeta_range.1);
    println!(
        "{} full, {} stopped at the edge (τ ≥ |T|/2), {} short, {} masked, {} without value; \
         {secs:.2} s",
        s.full, s.exited, s.short, s.masked, s.no_value
    );
    if s.short + s.exited > (s.full + s.short + s.exited) / 2 {
        println!(
            "warning: most tracers left the data before the horizon; their values cover only \
             the time they were integrated (see exit_time and flag)"
        );
    }
    if let Some(a) = r.zeta_agreement() {
        println!(
            "ζ against Δσ (ε = {}) over {} fully integrated tracers: Pearson r {:.3} with Δσ, \
             {:.3} with |Δσ|; Spearman ρ {:.3} with |Δσ|",
            r.epsilon.unwrap_or(f64::NAN),
            a.nodes,
            a.pearson,
            a.pearson_abs,
            a.spearman_abs
        );
    }
}

fn write(path: &Path, bytes: &[u8]) -> Result<(), String> {
    std::fs::write(path, bytes).map_err(|e| format!("cannot write '{}': {e}", path.display()))
}
