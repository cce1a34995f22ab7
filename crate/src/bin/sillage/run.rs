//! `sillage run RECIPE.json DATA`: replays a whole analysis saved by the page (or written
//! by hand) on a workstation — reading, cleaning, modes, the model flow f and the
//! perturbation g, FTLE, sensitivity and the exports — with the same core calls and the
//! same resolved settings as the page, so the numbers are the page's numbers.

use crate::ftle;
use crate::modes::{decompose, Method, Settings};
use crate::output::{describe_written, write_series};
use crate::sensitivity::summarise as summarise_sensitivity;
use sillage::clean::clean;
use sillage::field::Series;
use sillage::io::{read_paths, write_arrays_npz};
use sillage::lagrangian::parallel::ftle_field_parallel;
use sillage::lagrangian::{extract_ridges, FtleRows, GriddedField, Ridge, RidgeOptions};
use sillage::recipe::{ExportWhat, ModesMethod, Recipe};
use sillage::sensitivity::parallel::run_parallel;
use sillage::sensitivity::{prepare, sensitivity_npz, sensitivity_vti, SensitivityResult};
use std::path::{Path, PathBuf};
use std::time::Instant;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// The recipe (.json), as saved by the page's "Save recipe".
    #[arg(value_name = "RECIPE.json")]
    pub recipe: PathBuf,
    /// Velocity data: one .npz, a set of .npy files, text tables or a folder.
    #[arg(required = true, value_name = "DATA")]
    pub data: Vec<PathBuf>,
    /// Folder the recipe's exports are written to (created if missing).
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub out_dir: PathBuf,
}

pub fn run(args: Args) -> Result<(), String> {
    let text = std::fs::read_to_string(&args.recipe)
        .map_err(|e| format!("cannot read '{}': {e}", args.recipe.display()))?;
    let recipe = Recipe::from_json(&text).map_err(|e| e.to_string())?;
    std::fs::create_dir_all(&args.out_dir)
        .map_err(|e| format!("cannot create '{}': {e}", args.out_dir.display()))?;
    let mut data = read_paths(&args.data, &recipe.read_options()).map_err(|e| e.to_string())?;
    println!("read {} snapshots of {}x{}", data.nt(), data.nx(), data.ny());

    if let Some(opts) = recipe.clean_options() {
        let (cleaned, report) = clean(&data, &opts);
        println!(
            "cleaning: {} outliers and {} missing vectors replaced ({:.2} %)",
            report.total_outliers(),
            report.total_gaps(),
            100.0 * report.replaced_fraction
        );
        if let Some(w) = report.warning() {
            println!("warning: {w}");
        }
        data = cleaned;
    }
    let modes = match recipe.modes {
        None => None,
        Some(m) => {
            let method = match m.method {
                ModesMethod::Pod => Method::Pod,
                ModesMethod::Dmd => Method::Dmd,
                ModesMethod::Spod => Method::Spod,
            };
            Some(decompose(&data, &Settings::with(method, m.rank))?)
        }
    };
    let f = recipe.model_field(&data).map_err(|e| e.to_string())?;
    let g = recipe.perturbation_field(&data).map_err(|e| e.to_string())?;

    let ftle_result = match &recipe.transport {
        None => None,
        Some(t) => {
            // The FTLE of the (cleaned) data, as the page's FTLE card shows it; the FTLE of
            // the model flow f is part of the sensitivity result.
            let run = t.resolve(&data).map_err(|e| format!("recipe: transport: {e}"))?;
            let field = GriddedField::new(&data, run.space, run.time);
            let start = Instant::now();
            let r = ftle_field_parallel(&field, &run.grid, &run.options, 2)
                .map_err(|e| e.to_string())?;
            ftle::summarise(&r, start.elapsed().as_secs_f64(), &data.units());
            let mut ridges = extract_ridges(&r, &RidgeOptions::default());
            ridges.sort_by(|a, b| b.length().total_cmp(&a.length()));
            Some((r, ridges, run.options.advect.t0))
        }
    };
    let sens = match (recipe.sensitivity_spec(&f).map_err(|e| e.to_string())?, &g) {
        (Some(spec), Some(g)) => {
            let plan = prepare(&f, g, &spec).map_err(|e| e.to_string())?;
            let start = Instant::now();
            let r = run_parallel(&plan, 2).map_err(|e| e.to_string())?;
            summarise_sensitivity(&r, start.elapsed().as_secs_f64(), &f);
            Some((r, spec.advect.t0))
        }
        _ => None,
    };

    let done = Outcome { data: &data, f: &f, g: g.as_ref(), modes, ftle: ftle_result, sens };
    for e in &recipe.exports {
        let path = args.out_dir.join(&e.file);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)
                .map_err(|err| format!("cannot create '{}': {err}", parent.display()))?;
        }
        done.export(e.what, &path)?;
    }
    Ok(())
}

/// What the steps produced, for the exports.
struct Outcome<'a> {
    data: &'a Series,
    f: &'a Series,
    g: Option<&'a Series>,
    modes: Option<Vec<sillage::io::NpyArray>>,
    ftle: Option<(FtleRows, Vec<Ridge>, f64)>,
    sens: Option<(SensitivityResult, f64)>,
}

impl Outcome<'_> {
    fn export(&self, what: ExportWhat, path: &Path) -> Result<(), String> {
        let ext = path.extension().and_then(|e| e.to_str()).map(str::to_lowercase);
        let missing = |step: &str| format!("export '{}': no {step} was computed", path.display());
        let bytes = match what {
            ExportWhat::Cleaned | ExportWhat::Model | ExportWhat::Perturbation => {
                let series = match what {
                    ExportWhat::Cleaned => self.data,
                    ExportWhat::Model => self.f,
                    _ => self.g.ok_or_else(|| missing("perturbation"))?,
                };
                let written = write_series(series, path)?;
                println!("{}", describe_written(&written));
                return Ok(());
            }
            ExportWhat::Modes => {
                write_arrays_npz(self.modes.as_ref().ok_or_else(|| missing("modes"))?)
            }
            ExportWhat::Ftle => {
                let (r, _, t0) = self.ftle.as_ref().ok_or_else(|| missing("FTLE"))?;
                if ext.as_deref() == Some("vti") {
                    ftle::vti(r, *t0)
                } else {
                    ftle::npz(r)
                }
            }
            ExportWhat::Ridges => {
                let (r, ridges, t0) = self.ftle.as_ref().ok_or_else(|| missing("FTLE"))?;
                let units = self.data.units();
                if ext.as_deref() == Some("csv") {
                    ftle::ridges_csv(ridges, &units).into_bytes()
                } else {
                    ftle::ridges_json(ridges, &RidgeOptions::default(), &units, *t0, r.horizon)
                        .into_bytes()
                }
            }
            ExportWhat::Sensitivity => {
                let (r, t0) = self.sens.as_ref().ok_or_else(|| missing("sensitivity"))?;
                if ext.as_deref() == Some("vti") {
                    sensitivity_vti(r, *t0)
                } else {
                    sensitivity_npz(r, *t0, &self.f.units())
                }
            }
        };
        std::fs::write(path, bytes)
            .map_err(|e| format!("cannot write '{}': {e}", path.display()))?;
        println!("wrote {}", path.display());
        Ok(())
    }
}
