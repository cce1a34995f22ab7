//! One snapshot as a plain comma-separated table, readable back by the text reader and
//! by any spreadsheet.
//!
//! Layout (our own): a header `x [m],y [m],u [m/s],v [m/s],valid,t [s]` with the series'
//! units, then one row per grid node, x fastest then y, both ascending. `valid` is 1 for a
//! measured vector and 0 for a masked node or a missing vector, whose velocity is written
//! as `NaN`. The time column repeats the snapshot time so a set of such files carries its
//! own times. Numbers are written with the shortest decimal form that reads back to the
//! same binary value.

use crate::field::Series;
use std::fmt::Write as _;

/// The table of snapshot `k`, with the time column.
///
/// # Panics
/// If `k` is not a snapshot index of the series: a programming error of the caller.
#[track_caller]
pub fn write_csv_snapshot(series: &Series, k: usize) -> String {
    table(series, k, true)
}

/// The table of snapshot `k` without the time column, as exports that do not record time
/// look (the reader then needs Δt from the user).
///
/// # Panics
/// As [`write_csv_snapshot`].
#[track_caller]
pub fn write_csv_snapshot_untimed(series: &Series, k: usize) -> String {
    table(series, k, false)
}

#[track_caller]
fn table(series: &Series, k: usize, with_time: bool) -> String {
    assert!(
        k < series.nt(),
        "write_csv_snapshot: snapshot {k} requested, the series has {}",
        series.nt()
    );
    let units = series.units();
    let (l, t, vel) = (units.length.symbol(), units.time.symbol(), units.velocity_label());
    let grid = series.grid();
    let (u, v, mask) = (series.u_at(k), series.v_at(k), series.mask());
    let gaps = series.gaps_at(k);
    let time = series.times()[k];
    let mut out = String::with_capacity(grid.len() * 48 + 64);
    let time_col = if with_time { format!(",{time}") } else { String::new() };
    let _ = write!(out, "x [{l}],y [{l}],u [{vel}],v [{vel}],valid");
    let _ = writeln!(out, "{}", if with_time { format!(",t [{t}]") } else { String::new() });
    for j in 0..grid.ny() {
        let y = grid.y.coord(j);
        for i in 0..grid.nx() {
            let c = grid.index(i, j);
            let x = grid.x.coord(i);
            let valid = !mask[c] && !gaps.is_some_and(|g| g[c]);
            if valid {
                let _ = writeln!(out, "{x},{y},{},{},1{time_col}", u[c], v[c]);
            } else {
                let _ = writeln!(out, "{x},{y},NaN,NaN,0{time_col}");
            }
        }
    }
    out
}
