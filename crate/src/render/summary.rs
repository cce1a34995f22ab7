//! The dataset summary as text rows for the page's side panel: the facts of
//! [`crate::field::Summary`] written with units and sensible precision. What a user checks
//! first after loading: did the grid, units and time step come out as intended, how much
//! data is missing.

use super::format::{format_count, format_sig, with_unit};
use super::labels::TimeFormat;
use crate::field::{Series, Summary};
use serde::Serialize;

/// Time steps deviating from their mean by at most this fraction count as uniform
/// (acquisition jitter, rounding of written times).
pub const UNIFORM_DT_TOLERANCE: f64 = 1e-3;

/// One line of the summary: a stable `key` for programs and tests, a `label` and the text.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SummaryRow {
    pub key: &'static str,
    pub label: &'static str,
    pub value: String,
}

fn row(key: &'static str, label: &'static str, value: String) -> SummaryRow {
    SummaryRow { key, label, value }
}

fn percent(part: usize, whole: usize) -> String {
    format!("{} %", format_sig(100.0 * part as f64 / whole.max(1) as f64, 2))
}

fn sources_text(sources: &[String]) -> String {
    match sources {
        [] => "(no name)".into(),
        [one] => one.clone(),
        [first, .., last] => format!("{} files, {first} … {last}", sources.len()),
    }
}

fn dt_text(f: &Summary) -> String {
    if f.nt < 2 {
        return "one snapshot".into();
    }
    let mean = with_unit(format_sig(f.dt_mean, 4), &f.time_unit);
    if f.dt_nonuniformity <= UNIFORM_DT_TOLERANCE {
        format!("{mean}, uniform")
    } else {
        format!("mean {mean}, steps vary by up to {} %", format_sig(100.0 * f.dt_nonuniformity, 2))
    }
}

/// The summary rows of `s`, loaded from files named `sources`.
pub fn summary(s: &Series, sources: &[String]) -> Vec<SummaryRow> {
    let f = Summary::of(s);
    let len = f.length_unit.as_str();
    let tf = TimeFormat::for_series(s);
    let cells = f.nx * f.ny;
    let units = if (f.source_length_unit.as_str(), f.source_time_unit.as_str())
        == (len, f.time_unit.as_str())
    {
        format!("length {len}, time {}", f.time_unit)
    } else {
        format!(
            "length {len}, time {} (files in {}, {})",
            f.time_unit, f.source_length_unit, f.source_time_unit
        )
    };
    let gaps = if f.gaps == 0 {
        "none".to_string()
    } else {
        format!(
            "{} ({} of the unmasked vectors)",
            format_count(f.gaps),
            percent(f.gaps, f.gaps + f.valid_vectors)
        )
    };
    vec![
        row("source", "Source", sources_text(sources)),
        row("grid", "Grid", format!("{} × {} nodes", f.nx, f.ny)),
        row(
            "spacing",
            "Spacing",
            format!(
                "{} × {}",
                with_unit(format_sig(f.dx, 4), len),
                with_unit(format_sig(f.dy, 4), len)
            ),
        ),
        row(
            "x_range",
            "x range",
            format!(
                "{} to {}",
                format_sig(f.x0, 4),
                with_unit(format_sig(f.x0 + (f.nx - 1) as f64 * f.dx, 4), len)
            ),
        ),
        row(
            "y_range",
            "y range",
            format!(
                "{} to {}",
                format_sig(f.y0, 4),
                with_unit(format_sig(f.y0 + (f.ny - 1) as f64 * f.dy, 4), len)
            ),
        ),
        row("units", "Units", units),
        row(
            "snapshots",
            "Snapshots",
            format!(
                "{}, t = {} to {}",
                format_count(f.nt),
                tf.format(f.t_first),
                tf.format(f.t_last)
            ),
        ),
        row("dt", "Δt", dt_text(&f)),
        row(
            "masked",
            "Masked cells",
            format!(
                "{} of {} ({})",
                format_count(f.masked_cells),
                format_count(cells),
                percent(f.masked_cells, cells)
            ),
        ),
        row("gaps", "Missing vectors", gaps),
        row(
            "speed",
            "Speed",
            format!(
                "mean {}, max {}",
                format_sig(f.speed_mean, 3),
                with_unit(format_sig(f.speed_max, 3), &f.velocity_unit)
            ),
        ),
        row("memory", "Memory", format!("{} MB", format_sig(f.bytes as f64 / 1e6, 3))),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::{LengthUnit, SeriesParts, TimeUnit, Units};

    fn value<'a>(rows: &'a [SummaryRow], key: &str) -> &'a str {
        &rows.iter().find(|r| r.key == key).unwrap().value
    }

    #[test]
    fn describes_grid_units_time_and_missing_data() {
        let (nx, ny, nt) = (4usize, 3usize, 5usize);
        let n = nx * ny * nt;
        let mut u = vec![3.0f32; n];
        u[7] = f32::NAN; // one missing vector in snapshot 0
        let mut mask = vec![false; nx * ny];
        mask[0] = true;
        let s = Series::from_parts(SeriesParts {
            x: (0..nx).map(|i| 0.5 * i as f64).collect(),
            y: (0..ny).map(|j| 0.5 * j as f64).collect(),
            t: (0..nt).map(|k| 2.0 * k as f64).collect(),
            u,
            v: vec![4.0; n],
            mask: Some(mask),
            nan_is_gap: true,
            units: Units { length: LengthUnit::Mm, time: TimeUnit::Ms },
            ..Default::default()
        })
        .unwrap();
        let rows = summary(&s, &["a.npz".to_string()]);
        assert_eq!(value(&rows, "source"), "a.npz");
        assert_eq!(value(&rows, "grid"), "4 × 3 nodes");
        // 0.5 mm = 0.0005 m; 2 ms = 0.002 s.
        assert_eq!(value(&rows, "spacing"), "0.0005 m × 0.0005 m");
        assert_eq!(value(&rows, "x_range"), "0 to 0.0015 m");
        assert_eq!(value(&rows, "y_range"), "0 to 0.001 m");
        assert_eq!(value(&rows, "units"), "length m, time s (files in mm, ms)");
        assert_eq!(value(&rows, "snapshots"), "5, t = 0.000 s to 0.008 s");
        assert_eq!(value(&rows, "dt"), "0.002 s, uniform");
        assert_eq!(value(&rows, "masked"), "1 of 12 (8.3 %)");
        // 1 gap among 11 unmasked cells × 5 snapshots = 55 vectors.
        assert_eq!(value(&rows, "gaps"), "1 (1.8 % of the unmasked vectors)");
        // |(3, 4)| mm/ms = 5 m/s [D].
        assert_eq!(value(&rows, "speed"), "mean 5, max 5 m/s");
    }

    #[test]
    fn irregular_and_single_snapshots() {
        let mk = |t: Vec<f64>| {
            let n = 4 * t.len();
            Series::from_parts(SeriesParts {
                x: vec![0.0, 1.0],
                y: vec![0.0, 1.0],
                t,
                u: vec![0.0; n],
                v: vec![0.0; n],
                ..Default::default()
            })
            .unwrap()
        };
        let names = ["a".to_string(), "b".into(), "c".into()];
        let rows = summary(&mk(vec![0.0, 1.0, 3.0]), &names);
        // Steps 1 and 2 around a mean of 1.5: up to 33 % off.
        assert_eq!(value(&rows, "dt"), "mean 1.5 s, steps vary by up to 33 %");
        assert_eq!(value(&rows, "source"), "3 files, a … c");
        assert_eq!(value(&rows, "gaps"), "none");
        assert_eq!(value(&summary(&mk(vec![4.0]), &[]), "dt"), "one snapshot");
    }
}
