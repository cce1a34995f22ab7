//! `sillage clean`: normalized median test, replacement, report.

use crate::input::InputArgs;
use crate::output::{describe_written, write_series};
use sillage::clean::{clean, CleanOptions, MedianTest};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// Where to write the cleaned series (.npz; a folder name without extension for .npy files; or .vti / .csv: one file per snapshot).
    #[arg(long, short, value_name = "FILE")]
    pub out: PathBuf,
    /// Normalized-residual threshold above which a vector is an outlier.
    #[arg(long, default_value_t = 2.0, value_name = "R")]
    pub threshold: f64,
    /// ε of the test in velocity units of the input (default: 1/80 of the 99th-percentile
    /// speed, about 0.1 px for a typical recording).
    #[arg(long, value_name = "SPEED")]
    pub epsilon: Option<f64>,
    /// Detect-and-replace passes at most.
    #[arg(long, default_value_t = 3, value_name = "N")]
    pub passes: usize,
    /// Also write the full report (every replaced vector) as JSON here.
    #[arg(long, value_name = "FILE.json")]
    pub report: Option<PathBuf>,
}

pub fn run(args: Args) -> Result<(), String> {
    if !(args.threshold.is_finite() && args.threshold > 0.0) {
        return Err(format!("--threshold must be a positive number, not {}", args.threshold));
    }
    if let Some(e) = args.epsilon {
        if !(e.is_finite() && e >= 0.0) {
            return Err(format!("--epsilon must be zero or positive, not {e}"));
        }
    }
    if args.passes == 0 {
        return Err("--passes must be at least 1".into());
    }
    crate::output::format_of(&args.out)?;
    let series = args.input.read()?;
    // ε is given in the input's velocity unit; the series is in SI.
    let to_si = {
        let u = series.source_units();
        u.length.to_si() / u.time.to_si()
    };
    let opts = CleanOptions {
        test: MedianTest { threshold: args.threshold, epsilon: args.epsilon.map(|e| e * to_si) },
        passes: args.passes,
    };
    let (cleaned, report) = clean(&series, &opts);
    let vel = series.units().velocity_label();
    println!(
        "{} outliers and {} missing vectors replaced ({:.2} % of {} valid vectors) in {} pass(es); threshold {}, ε = {:.3e} {vel}",
        report.total_outliers(),
        report.total_gaps(),
        100.0 * report.replaced_fraction,
        report.valid_cells,
        report.passes_run,
        report.threshold,
        report.epsilon
    );
    if report.unfilled > 0 {
        println!(
            "{} vectors could not be filled (no valid vector near them); they stay missing",
            report.unfilled
        );
    }
    if let Some(w) = report.warning() {
        println!("warning: {w}");
    }
    let written = write_series(&cleaned, &args.out)?;
    println!("{}", describe_written(&written));
    if let Some(path) = &args.report {
        let json = serde_json::to_string_pretty(&report).map_err(|e| e.to_string())?;
        std::fs::write(path, json)
            .map_err(|e| format!("cannot write '{}': {e}", path.display()))?;
        println!("wrote {}", path.display());
    }
    Ok(())
}
