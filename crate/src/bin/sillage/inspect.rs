//! `sillage inspect`: what is in a dataset, before any analysis.

use crate::input::InputArgs;
use serde::Serialize;
use sillage::clean::{count_outliers, CleanReport, MedianTest};
use sillage::field::Summary;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// Print a JSON object instead of the table (for scripts).
    #[arg(long)]
    pub json: bool,
    /// Threshold of the normalized median test used to count outliers.
    #[arg(long, default_value_t = 2.0, value_name = "R")]
    pub threshold: f64,
}

#[derive(Serialize)]
struct Report {
    #[serde(flatten)]
    summary: Summary,
    /// Snapshot times.
    t: Vec<f64>,
    outlier_threshold: f64,
    outlier_epsilon: f64,
    outliers: usize,
    outliers_per_snapshot: Vec<usize>,
    warnings: Vec<String>,
}

/// Four significant digits, no trailing noise.
pub fn num(x: f64) -> String {
    if x == 0.0 || (1e-3..1e5).contains(&x.abs()) {
        let s = format!("{:.*}", (3 - x.abs().log10().floor().max(-3.0) as i32).max(0) as usize, x);
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        format!("{x:.3e}")
    }
}

fn percent(part: usize, whole: usize) -> String {
    format!("{:.2} %", 100.0 * part as f64 / whole.max(1) as f64)
}

pub fn run(args: Args) -> Result<(), String> {
    let series = args.input.read()?;
    let summary = Summary::of(&series);
    let test = MedianTest { threshold: args.threshold, epsilon: None };
    let per_snapshot = count_outliers(&series, &test);
    let outliers: usize = per_snapshot.iter().sum();
    let mut warnings = Vec::new();
    let bad = outliers + summary.gaps;
    if bad as f64 > CleanReport::WARN_FRACTION * (summary.valid_vectors + summary.gaps) as f64 {
        warnings.push(format!(
            "{} of the vectors are outliers or missing; good planar PIV has a few percent",
            percent(bad, summary.valid_vectors + summary.gaps)
        ));
    }
    if summary.dt_nonuniformity > 1e-3 {
        warnings.push(format!(
            "snapshot times are not evenly spaced (a step differs from the mean by {:.1} %)",
            100.0 * summary.dt_nonuniformity
        ));
    }
    if summary.nt < 2 {
        warnings.push(
            "a single snapshot: time-dependent analyses (FTLE, DMD, SPOD) need a series".into(),
        );
    }
    let report = Report {
        t: series.times().to_vec(),
        outlier_threshold: test.threshold,
        outlier_epsilon: test.resolve_epsilon(&series),
        outliers,
        outliers_per_snapshot: per_snapshot,
        warnings,
        summary,
    };
    if args.json {
        println!("{}", serde_json::to_string_pretty(&report).map_err(|e| e.to_string())?);
        return Ok(());
    }
    let s = &report.summary;
    let (l, t, vel) = (&s.length_unit, &s.time_unit, &s.velocity_unit);
    println!("data         {}", args.input.describe());
    println!("grid         {} × {} vectors (nx × ny)", s.nx, s.ny);
    println!(
        "  x          {} … {} {l}, spacing {} {l}",
        num(s.x0),
        num(s.x0 + (s.nx - 1) as f64 * s.dx),
        num(s.dx)
    );
    println!(
        "  y          {} … {} {l}, spacing {} {l}",
        num(s.y0),
        num(s.y0 + (s.ny - 1) as f64 * s.dy),
        num(s.dy)
    );
    println!(
        "snapshots    {}, t = {} … {} {t}, mean Δt {} {t}{}",
        s.nt,
        num(s.t_first),
        num(s.t_last),
        num(s.dt_mean),
        if s.dt_nonuniformity <= 1e-3 { " (uniform)" } else { " (NOT uniform)" }
    );
    println!(
        "units        file: {}, {} → computed in {l}, {t}; velocity in {vel}",
        s.source_length_unit, s.source_time_unit
    );
    println!(
        "speed        mean {} {vel}, max {} {vel} (valid vectors)",
        num(s.speed_mean),
        num(s.speed_max)
    );
    println!(
        "mask         {} of {} cells never valid ({})",
        s.masked_cells,
        s.nx * s.ny,
        percent(s.masked_cells, s.nx * s.ny)
    );
    println!(
        "missing      {} vectors over all snapshots ({})",
        s.gaps,
        percent(s.gaps, s.valid_vectors + s.gaps)
    );
    println!(
        "outliers     {} vectors ({}) fail the normalized median test (threshold {}, ε = {} {vel})",
        report.outliers,
        percent(report.outliers, s.valid_vectors),
        num(report.outlier_threshold),
        num(report.outlier_epsilon)
    );
    println!("memory       {:.1} MB", s.bytes as f64 / 1e6);
    for w in &report.warnings {
        println!("warning      {w}");
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::num;

    #[test]
    fn number_format() {
        assert_eq!(num(0.0006), "6.000e-4");
        assert_eq!(num(0.05), "0.05");
        assert_eq!(num(12.0), "12");
        assert_eq!(num(0.1795), "0.1795");
        assert_eq!(num(-3.25), "-3.25");
    }
}
