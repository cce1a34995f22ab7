//! A plain summary of a series: what `sillage inspect` prints and the page shows.

use super::Series;
use serde::Serialize;

/// Facts about a series a user checks before analysing it. Units are those of the series
/// (SI or unitless); labels are included so a reader of the JSON needs nothing else.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    pub nx: usize,
    pub ny: usize,
    pub nt: usize,
    pub x0: f64,
    pub dx: f64,
    pub y0: f64,
    pub dy: f64,
    pub t_first: f64,
    pub t_last: f64,
    /// Mean spacing of the snapshot times.
    pub dt_mean: f64,
    /// Largest relative deviation of a time step from the mean (0 for uniform sampling).
    pub dt_nonuniformity: f64,
    pub length_unit: String,
    pub time_unit: String,
    pub velocity_unit: String,
    pub source_length_unit: String,
    pub source_time_unit: String,
    /// Cells without valid data in any snapshot.
    pub masked_cells: usize,
    /// Missing vectors over all snapshots (masked cells not counted).
    pub gaps: usize,
    /// Vectors that are neither masked nor missing, over all snapshots.
    pub valid_vectors: usize,
    /// Mean and largest speed over the valid vectors.
    pub speed_mean: f64,
    pub speed_max: f64,
    /// Memory held by the series, bytes.
    pub bytes: usize,
}

impl Summary {
    pub fn of(s: &Series) -> Summary {
        let t = s.times();
        let nt = t.len();
        let dt_mean = if nt > 1 { (t[nt - 1] - t[0]) / (nt - 1) as f64 } else { 0.0 };
        let dt_nonuniformity = if nt > 1 {
            t.windows(2).map(|w| ((w[1] - w[0]) / dt_mean - 1.0).abs()).fold(0.0, f64::max)
        } else {
            0.0
        };
        let plane = s.nx() * s.ny();
        let mask = s.mask();
        let gaps = s.gaps();
        let (mut sum, mut max, mut count) = (0.0f64, 0.0f64, 0usize);
        for (idx, (u, v)) in s.u().iter().zip(s.v()).enumerate() {
            if mask[idx % plane] || gaps.is_some_and(|g| g[idx]) {
                continue;
            }
            let sp = (*u as f64).hypot(*v as f64);
            sum += sp;
            max = max.max(sp);
            count += 1;
        }
        let g = s.grid();
        let units = s.units();
        let src = s.source_units();
        Summary {
            nx: s.nx(),
            ny: s.ny(),
            nt,
            x0: g.x.start,
            dx: g.x.step,
            y0: g.y.start,
            dy: g.y.step,
            t_first: t[0],
            t_last: t[nt - 1],
            dt_mean,
            dt_nonuniformity,
            length_unit: units.length.symbol().into(),
            time_unit: units.time.symbol().into(),
            velocity_unit: units.velocity_label(),
            source_length_unit: src.length.symbol().into(),
            source_time_unit: src.time.symbol().into(),
            masked_cells: s.masked_count(),
            gaps: s.gap_count(),
            valid_vectors: count,
            speed_mean: if count > 0 { sum / count as f64 } else { 0.0 },
            speed_max: max,
            bytes: s.byte_size(),
        }
    }
}
