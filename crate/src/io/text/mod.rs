//! Text tables as PIV and CFD programs commonly export them: one file per snapshot, one row
//! per grid node.
//!
//! * **Columns** are found by their header names, in any order, ignoring case, quotes and
//!   unit decorations (`x [mm]`, `U (m/s)`, `x(mm)`, `"x"`). Accepted names: x / y
//!   (also `x_pos`, `x-coordinate`, …), u / v (also `Vx`, `Vy`, `vel_x`, `x-velocity`, …),
//!   optional `t` / `time`. Other columns are ignored.
//! * **Validity**: an optional column `valid`, `validity`, `ok` or `isvalid` marks good
//!   vectors with a nonzero value (or `true`); a column `flag`, `invalid`, `bad` or
//!   `outlier` marks bad vectors with a nonzero value. Bad vectors, empty velocity cells
//!   and NaN velocities are missing vectors (gaps).
//! * **Layout**: comma, semicolon, tab or whitespace separators are detected; with
//!   semicolons or tabs, decimal commas (`1,5`) are read. Lines starting with `#` or `%`,
//!   blank lines and a preamble before the header are skipped; the header is the nearest
//!   line above the first row of numbers that names x, y, u and v (it may itself be a
//!   comment line). Text may be UTF-8, UTF-16 with a byte-order mark, or Latin-1.
//! * **Grid**: inferred from the distinct coordinates, which must lie on a uniform grid
//!   (within [`crate::field::GRID_TOLERANCE`] of the spacing); rows may come in any order;
//!   grid nodes without a row are masked. Every file must have the same rows (node set).
//! * **Times**: the `t` column (constant within a file); the `dt` option replaces it. With
//!   no time column and no `dt`, a single file is one snapshot at `t_start`; several files
//!   are an error asking for Δt. Snapshots are ordered by natural sort of the file names
//!   (`frame2` before `frame10`), and their times must increase in that order.
//! * **Units**: coordinates from the x / y decorations (which must agree), times from the
//!   t decoration, else from the velocity decoration's time, else metres and seconds. A
//!   recognised velocity decoration (`m/s`, `mm/s`, `m s^-1`, …) is honoured: velocities
//!   are converted to coordinate-length per time unit. The length / time options override
//!   the coordinate and time decorations; an unrecognised velocity decoration (e.g.
//!   pixels per frame) is an error unless a length unit option is given, in which case
//!   velocities are taken to be in that length per time unit.

mod grid;
mod header;
mod table;

use super::canonical::times_from_options;
use super::error::group_digits;
use super::{natural_cmp, IoError, NamedBytes, ReadOptions};
use crate::field::{Axis, LengthUnit, Series, SeriesParts, TimeUnit, Units};
use header::{Role, VelocityUnit};
use table::{parse_table, Table};

/// Units of one table, and the factor that brings its velocities to length/time units.
#[derive(Debug, Clone, Copy, PartialEq)]
struct TableUnits {
    units: Units,
    velocity_factor: f64,
}

fn units_of(file: &str, t: &Table, opts: &ReadOptions) -> Result<TableUnits, IoError> {
    let layout = |reason: String| IoError::Layout { file: file.into(), reason };
    let decoration =
        |role: Role| t.column_of(role).and_then(|c| c.unit.clone().map(|u| (c.label.clone(), u)));
    let length = match opts.length_unit {
        Some(l) => l,
        None => {
            let mut found: Option<(String, LengthUnit)> = None;
            for role in [Role::X, Role::Y] {
                if let Some((label, unit)) = decoration(role) {
                    let l = header::length_unit(&unit).map_err(|e| {
                        layout(format!(
                            "column '{label}': {e}; give the length unit as an option to read it anyway"
                        ))
                    })?;
                    if let Some((other, prev)) = &found {
                        if *prev != l {
                            return Err(layout(format!(
                                "columns '{other}' and '{label}' use different length units"
                            )));
                        }
                    }
                    found = Some((label, l));
                }
            }
            found.map_or(LengthUnit::M, |(_, l)| l)
        }
    };
    let mut velocity: Option<(String, VelocityUnit)> = None;
    for role in [Role::U, Role::V] {
        if let Some((label, unit)) = decoration(role) {
            match header::velocity_unit(&unit) {
                Ok(vu) => {
                    if let Some((other, prev)) = &velocity {
                        if *prev != vu {
                            return Err(layout(format!(
                                "columns '{other}' and '{label}' use different velocity units"
                            )));
                        }
                    }
                    velocity = Some((label, vu));
                }
                Err(_) if opts.length_unit.is_some() => {}
                Err(e) => {
                    return Err(layout(format!(
                        "column '{label}': {e}; convert the velocities to a length per time unit, \
                         or give the length unit as an option to read them as they are"
                    )))
                }
            }
        }
    }
    let time = match opts.time_unit {
        Some(tu) => tu,
        None => match decoration(Role::T) {
            Some((label, unit)) => {
                header::time_unit(&unit).map_err(|e| layout(format!("column '{label}': {e}")))?
            }
            None => match &velocity {
                Some((_, VelocityUnit::Of(_, tu))) => *tu,
                _ => TimeUnit::S,
            },
        },
    };
    let velocity_factor = match velocity {
        Some((label, VelocityUnit::Of(lv, tv))) => {
            if (lv == LengthUnit::Unitless) != (length == LengthUnit::Unitless)
                || (tv == TimeUnit::Unitless) != (time == TimeUnit::Unitless)
            {
                return Err(layout(format!(
                    "column '{label}' is in {}/{} but coordinates are in {length} and times in \
                     {time}: a dimensionless and a dimensional unit cannot be converted",
                    lv.symbol(),
                    tv.symbol()
                )));
            }
            (lv.to_si() / tv.to_si()) / (length.to_si() / time.to_si())
        }
        _ => 1.0,
    };
    Ok(TableUnits { units: Units { length, time }, velocity_factor })
}

/// The time of a table from its `t` column, which must be constant.
fn table_time(file: &str, t: &Table) -> Result<Option<f64>, IoError> {
    let Some(times) = &t.t else {
        return Ok(None);
    };
    let t0 = times[0];
    for (k, &tk) in times.iter().enumerate() {
        if !tk.is_finite() || (tk - t0).abs() > 1e-9 * t0.abs().max(1e-300) {
            return Err(IoError::Line {
                file: file.into(),
                line: t.lines[k],
                reason: format!(
                    "the time column changes within the file ({tk} here, {t0} on line {}); \
                     each file must hold one snapshot",
                    t.lines[0]
                ),
            });
        }
    }
    Ok(Some(t0))
}

/// The most common value and the first index that differs from it.
fn odd_one_out(counts: &[usize]) -> Option<(usize, usize)> {
    let mut sorted = counts.to_vec();
    sorted.sort_unstable();
    let mut best = (0, 0);
    let mut k = 0;
    while k < sorted.len() {
        let run = sorted[k..].iter().take_while(|&&n| n == sorted[k]).count();
        if run > best.1 {
            best = (sorted[k], run);
        }
        k += run;
    }
    counts.iter().position(|&c| c != best.0).map(|i| (i, best.0))
}

/// Reads text tables, one snapshot per file, into a series.
pub(crate) fn read_text_series(
    files: &[NamedBytes],
    opts: &ReadOptions,
) -> Result<Series, IoError> {
    let mut order: Vec<&NamedBytes> = files.iter().collect();
    order.sort_by(|a, b| natural_cmp(&a.name, &b.name));
    let nt = order.len();

    // Parse every file first: row counts are compared before any data is placed, so the
    // message names the file that differs from the rest.
    let mut tables = Vec::with_capacity(nt);
    for f in &order {
        tables.push(parse_table(&f.name, &f.bytes)?);
    }
    let counts: Vec<usize> = tables.iter().map(|t| t.x.len()).collect();
    if let Some((k, others)) = odd_one_out(&counts) {
        return Err(IoError::RowCount {
            file: order[k].name.clone(),
            rows: group_digits(counts[k]),
            others: group_digits(others),
        });
    }

    let first = &tables[0];
    let first_name = &order[0].name;
    let field_err = |file: &str, e| IoError::field(format!("'{file}'"), e);
    let (ax, ix) = grid::place("x", &first.x).map_err(|e| field_err(first_name, e))?;
    let (ay, iy) = grid::place("y", &first.y).map_err(|e| field_err(first_name, e))?;
    let (nx, ny) = (ax.n, ay.n);
    let plane = nx * ny;
    // Row of the first file at each node (usize::MAX = no row: masked).
    let mut row_at = vec![usize::MAX; plane];
    for (r, (&i, &j)) in ix.iter().zip(&iy).enumerate() {
        let node = j * nx + i;
        if row_at[node] != usize::MAX {
            let prev = row_at[node];
            return Err(IoError::Line {
                file: first_name.clone(),
                line: first.lines[r],
                reason: format!(
                    "grid point (x = {}, y = {}) appears twice, also on line {}",
                    first.x[r], first.y[r], first.lines[prev]
                ),
            });
        }
        row_at[node] = r;
    }
    let mask: Vec<bool> = row_at.iter().map(|&r| r == usize::MAX).collect();
    let units = units_of(first_name, first, opts)?;

    let n3 = nt * plane;
    let mut u = vec![0f32; n3];
    let mut v = vec![0f32; n3];
    let mut gaps = vec![false; n3];
    let mut file_times = Vec::with_capacity(nt);
    for (k, (table, file)) in tables.iter().zip(&order).enumerate() {
        let name = &file.name;
        if k > 0 {
            let these = units_of(name, table, opts)?;
            if these != units {
                return Err(IoError::Layout {
                    file: name.clone(),
                    reason: format!(
                        "its column units differ from those of the first file '{first_name}'"
                    ),
                });
            }
        }
        file_times.push(table_time(name, table)?);
        let mut seen = vec![false; plane];
        for r in 0..table.x.len() {
            let node = if k == 0 {
                ix[r] + nx * iy[r]
            } else {
                node_of(&ax, &ay, table.x[r], table.y[r]).filter(|&n| !mask[n]).ok_or_else(
                    || IoError::Line {
                        file: name.clone(),
                        line: table.lines[r],
                        reason: format!(
                            "grid point (x = {}, y = {}) is not one of the points of the first \
                             file '{first_name}'; every file must list the same points",
                            table.x[r], table.y[r]
                        ),
                    },
                )?
            };
            if seen[node] {
                return Err(IoError::Line {
                    file: name.clone(),
                    line: table.lines[r],
                    reason: format!(
                        "grid point (x = {}, y = {}) appears twice",
                        table.x[r], table.y[r]
                    ),
                });
            }
            seen[node] = true;
            let idx = k * plane + node;
            u[idx] = (table.u[r] * units.velocity_factor) as f32;
            v[idx] = (table.v[r] * units.velocity_factor) as f32;
            if let Some(valid) = &table.valid {
                gaps[idx] = !valid[r];
            }
        }
    }

    let t = if opts.dt.is_some() || file_times.iter().all(Option::is_none) {
        let what =
            if nt == 1 { format!("'{}'", order[0].name) } else { format!("the {nt} text files") };
        times_from_options(&what, nt, opts)?
    } else {
        let mut t = Vec::with_capacity(nt);
        for (k, ft) in file_times.iter().enumerate() {
            let tk = ft.ok_or_else(|| IoError::Layout {
                file: order[k].name.clone(),
                reason: "has no time column while other files have one".into(),
            })?;
            if k > 0 && tk <= t[k - 1] {
                return Err(IoError::Layout {
                    file: order[k].name.clone(),
                    reason: format!(
                        "its time {tk} does not come after the time {} of '{}'; times must \
                         increase in the natural order of the file names",
                        t[k - 1],
                        order[k - 1].name
                    ),
                });
            }
            t.push(tk);
        }
        t
    };

    let parts = SeriesParts {
        x: ax.coords(),
        y: ay.coords(),
        t,
        u,
        v,
        mask: Some(mask),
        gaps: Some(gaps),
        nan_is_gap: true,
        units: units.units,
    };
    let what =
        if nt == 1 { format!("'{}'", order[0].name) } else { format!("the {nt} text files") };
    Series::from_parts(parts).map_err(|e| IoError::field(what, e))
}

/// The flat node index of a point on the grid, if it lies on a node.
fn node_of(ax: &Axis, ay: &Axis, x: f64, y: f64) -> Option<usize> {
    Some(grid::index_on(ay, y)? * ax.n + grid::index_on(ax, x)?)
}

#[cfg(test)]
mod tests;
