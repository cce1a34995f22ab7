//! `sillage ftle`: the FTLE field of one start time over a tracer grid, computed on all
//! cores, written as .npz (and .vti, and the ridge polylines as .json or .csv, on request).

use crate::input::InputArgs;
use crate::lagrangian_args::LagrangianArgs;
use sillage::field::{Grid, Units};
use sillage::io::{write_arrays_npz, write_vti, NpyArray, NpyData};
use sillage::lagrangian::parallel::ftle_field_parallel;
use sillage::lagrangian::{
    extract_ridges, FtleOptions, FtleRows, GradientRoute, GriddedField, Ridge, RidgeOptions,
};
use std::path::{Path, PathBuf};
use std::time::Instant;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub lagrangian: LagrangianArgs,
    /// How to get the flow-map gradient: variational (exact for the interpolated field),
    /// auxiliary (four satellites per tracer at ±--offset) or tracer-grid (differences of
    /// neighbouring tracers).
    #[arg(long, value_enum, default_value = "variational")]
    pub route: RouteArg,
    /// Satellite offset of --route auxiliary, in the input's length unit (default: a tenth
    /// of the tracer spacing).
    #[arg(long, value_name = "DELTA")]
    pub offset: Option<f64>,
    /// Output .npz: x, y, ftle (ny, nx), exit_time, flag, det_deviation, t0, horizon.
    #[arg(long, short, value_name = "FILE.npz", default_value = "ftle.npz")]
    pub out: PathBuf,
    /// Also write the maps as VTK image data (.vti).
    #[arg(long, value_name = "FILE.vti")]
    pub vti: Option<PathBuf>,
    /// Also extract the FTLE ridges (second-derivative ridges of Shadden, Lekien & Marsden
    /// 2005, default thresholds) and write them as polylines in SI units: .json (with the
    /// units, start time, horizon and thresholds) or .csv (ridge, point, x, y).
    #[arg(long, value_name = "FILE.json|FILE.csv")]
    pub ridges: Option<PathBuf>,
}

/// File formats of `--ridges`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum RidgeFormat {
    Json,
    Csv,
}

fn ridge_format(path: &Path) -> Result<RidgeFormat, String> {
    match path.extension().and_then(|e| e.to_str()).map(str::to_lowercase).as_deref() {
        Some("json") => Ok(RidgeFormat::Json),
        Some("csv") => Ok(RidgeFormat::Csv),
        _ => Err(format!("--ridges '{}' must end in .json or .csv", path.display())),
    }
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum RouteArg {
    Variational,
    Auxiliary,
    TracerGrid,
}

pub fn run(args: Args) -> Result<(), String> {
    if args.out.extension().and_then(|e| e.to_str()).map(str::to_lowercase).as_deref()
        != Some("npz")
    {
        return Err(format!("--out '{}' must end in .npz", args.out.display()));
    }
    let ridge_format = args.ridges.as_deref().map(ridge_format).transpose()?;
    let series = args.input.read()?;
    let la = &args.lagrangian;
    let advect = la.advect(&series)?;
    let grid = la.tracer_grid(&series)?;
    let lf = series.source_units().length.to_si();
    let route = match args.route {
        RouteArg::Variational => GradientRoute::Variational,
        RouteArg::TracerGrid => GradientRoute::TracerGrid,
        RouteArg::Auxiliary => GradientRoute::Auxiliary {
            offset: args.offset.map_or(0.1 * grid.x.step.min(grid.y.step), |d| d * lf),
        },
    };
    let field = GriddedField::new(&series, la.space(), la.time());
    let o = FtleOptions { advect, route };
    let start = Instant::now();
    let r = ftle_field_parallel(&field, &grid, &o, 2).map_err(|e| e.to_string())?;
    let secs = start.elapsed().as_secs_f64();
    summarise(&r, secs, &series.units());
    write(&args.out, &npz(&r))?;
    println!("wrote {}", args.out.display());
    if let Some(path) = &args.vti {
        let bytes = vti(&r, o.advect.t0);
        write(path, &bytes)?;
        println!("wrote {}", path.display());
    }
    if let (Some(path), Some(format)) = (&args.ridges, ridge_format) {
        let opts = RidgeOptions::default();
        let mut ridges = extract_ridges(&r, &opts);
        ridges.sort_by(|a, b| b.length().total_cmp(&a.length()));
        let units = series.units();
        let bytes = match format {
            RidgeFormat::Json => ridges_json(&ridges, &opts, &units, o.advect.t0, r.horizon),
            RidgeFormat::Csv => ridges_csv(&ridges, &units),
        };
        write(path, bytes.as_bytes())?;
        let total: f64 = ridges.iter().map(Ridge::length).sum();
        println!(
            "wrote {} ({} ridges, total length {total:.4} {})",
            path.display(),
            ridges.len(),
            units.length.symbol()
        );
    }
    Ok(())
}

/// The ridges as JSON: units, when and how they were found, then one object per ridge
/// (longest first) with its length and its points `[x, y]`.
pub fn ridges_json(
    ridges: &[Ridge],
    opts: &RidgeOptions,
    units: &Units,
    t0: f64,
    horizon: f64,
) -> String {
    let doc = serde_json::json!({
        "description": "FTLE ridges: polylines where the derivative of the FTLE across the \
            ridge vanishes and its curvature is strongly negative (Shadden, Lekien & Marsden \
            2005, Physica D 212:271-304); a heuristic for the most repelling (forward) or \
            attracting (backward) material lines",
        "length_unit": units.length.symbol(),
        "time_unit": units.time.symbol(),
        "t0": t0,
        "horizon": horizon,
        "options": opts,
        "count": ridges.len(),
        "ridges": ridges.iter().map(|r| serde_json::json!({
            "length": r.length(),
            "points": r.points,
        })).collect::<Vec<_>>(),
    });
    let mut text = serde_json::to_string_pretty(&doc).expect("plain values serialise");
    text.push('\n');
    text
}

/// The ridges as CSV, one row per point: ridge number (longest first, from 0), point
/// number along the ridge, x and y (the header names the unit).
pub fn ridges_csv(ridges: &[Ridge], units: &Units) -> String {
    let mut text = match units.length.symbol() {
        "1" => "ridge,point,x,y\n".to_string(),
        unit => format!("ridge,point,x_{unit},y_{unit}\n"),
    };
    for (k, r) in ridges.iter().enumerate() {
        for (m, p) in r.points.iter().enumerate() {
            text.push_str(&format!("{k},{m},{},{}\n", p[0], p[1]));
        }
    }
    text
}

pub fn summarise(r: &FtleRows, secs: f64, units: &Units) {
    let rate = units.rate_label();
    let time = units.time.symbol();
    let s = &r.stats;
    let max = r.ftle.iter().fold(f32::MIN, |m, &v| m.max(v));
    println!(
        "FTLE on {}x{} tracers, horizon {} {time}: max {max:.4} {rate}; {} full, {} stopped at the edge \
         (τ ≥ |T|/2), {} short (τ < |T|/2), {} masked, {} without value",
        r.grid.nx(),
        r.grid.ny(),
        r.horizon,
        s.full,
        s.exited,
        s.short,
        s.masked,
        s.no_value
    );
    println!(
        "quality: max |σ₁σ₂ − 1| = {:.3e} (0 for an area-preserving flow map); {} velocity \
         evaluations in {secs:.2} s",
        s.max_det_deviation, s.rhs_calls
    );
}

/// The maps as VTK image data at time `t0`.
pub fn vti(r: &FtleRows, t0: f64) -> Vec<u8> {
    let g = Grid { x: r.grid.x, y: r.grid.y };
    let flag: Vec<f32> = r.flag.iter().map(|&f| f as u8 as f32).collect();
    write_vti(
        &g,
        &[
            ("ftle", &r.ftle),
            ("exit_time", &r.tau),
            ("det_deviation", &r.det_deviation),
            ("flag", &flag),
        ],
        &[],
        Some(t0),
        None,
    )
}

/// The maps as .npz.
pub fn npz(r: &FtleRows) -> Vec<u8> {
    let (nx, ny) = (r.grid.nx(), r.grid.ny());
    let map = |name: &str, v: &[f32]| NpyArray::new(name, vec![ny, nx], NpyData::F32(v.to_vec()));
    write_arrays_npz(&[
        NpyArray::new("x", vec![nx], NpyData::F64(r.grid.x.coords())),
        NpyArray::new("y", vec![ny], NpyData::F64(r.grid.y.coords())),
        map("ftle", &r.ftle),
        map("exit_time", &r.tau),
        map("det_deviation", &r.det_deviation),
        NpyArray::new("flag", vec![ny, nx], NpyData::U8(r.flag.iter().map(|&f| f as u8).collect())),
        NpyArray::new("horizon", vec![], NpyData::F64(vec![r.horizon])),
    ])
}

fn write(path: &Path, bytes: &[u8]) -> Result<(), String> {
    std::fs::write(path, bytes).map_err(|e| format!("cannot write '{}': {e}", path.display()))
}
