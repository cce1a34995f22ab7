//! The canonical interchange layout, shared by `.npz` archives and sets of `.npy` files:
//!
//! | array | shape | |
//! |---|---|---|
//! | `x`, `y` | `(nx)`, `(ny)` | node coordinates; 2-D meshgrids `(ny, nx)` are accepted and reduced |
//! | `t` | `(nt)` | snapshot times; may be absent (then Δt from the options, or one snapshot) |
//! | `u`, `v` | `(nt, ny, nx)` | velocity; `(ny, nx)` is one snapshot; NaN = missing vector |
//! | `mask` | `(ny, nx)` | optional, bool, `true` = no valid data at this node |
//! | `gaps` | `(nt, ny, nx)` | optional, bool, `true` = vector missing in this snapshot |
//! | `length_unit`, `time_unit` | `()` | optional strings (`m`, `mm`, `s`, `ms`, `unitless`, …) |
//!
//! Names are matched case-insensitively; other arrays are ignored. Files without unit
//! strings are taken to be in SI units unless the options say otherwise. Meshgrids built
//! with matrix (`ij`) indexing, where x varies along the first axis, are recognised from
//! the coordinates and transposed with the data.

use super::npy::{NpyArray, NpyData};
use super::{IoError, ReadOptions};
use crate::field::{LengthUnit, Series, SeriesParts, TimeUnit, Units, GRID_TOLERANCE};

/// The canonical array names, lower case.
pub(crate) const NAMES: [&str; 9] =
    ["x", "y", "t", "u", "v", "mask", "gaps", "length_unit", "time_unit"];

/// Arrays found in a file, by canonical name, with the list of everything that was there.
pub(crate) struct Found {
    pub file: String,
    pub arrays: Vec<NpyArray>,
    /// Every array name present (for "missing array" messages).
    pub all_names: Vec<String>,
}

impl Found {
    fn get(&self, name: &str) -> Option<&NpyArray> {
        self.arrays.iter().find(|a| a.name.eq_ignore_ascii_case(name))
    }
    fn require(&self, name: &str) -> Result<&NpyArray, IoError> {
        self.get(name).ok_or_else(|| IoError::MissingArray {
            file: self.file.clone(),
            name: name.to_string(),
            found: if self.all_names.is_empty() {
                "(none)".into()
            } else {
                self.all_names.join(", ")
            },
        })
    }
    fn layout(&self, reason: String) -> IoError {
        IoError::Layout { file: self.file.clone(), reason }
    }
}

/// Which canonical name `name` stands for, if any; errors when two arrays differ only in case.
pub(crate) fn canonical_name(name: &str) -> Option<&'static str> {
    NAMES.iter().copied().find(|n| n.eq_ignore_ascii_case(name))
}

/// Rejects two arrays whose names differ only in case (`U` and `u`): which one is meant
/// cannot be guessed.
pub(crate) fn check_unique(file: &str, names: &[String]) -> Result<(), IoError> {
    for (k, a) in names.iter().enumerate() {
        if let Some(b) = names[..k].iter().find(|b| b.eq_ignore_ascii_case(a)) {
            if canonical_name(a).is_some() {
                return Err(IoError::Layout {
                    file: file.into(),
                    reason: format!("arrays '{b}' and '{a}' differ only in case; keep one of them"),
                });
            }
        }
    }
    Ok(())
}

fn shape_str(s: &[usize]) -> String {
    match s.len() {
        1 => format!("({},)", s[0]),
        _ => format!("({})", s.iter().map(|d| d.to_string()).collect::<Vec<_>>().join(", ")),
    }
}

/// Shape without its length-1 dimensions: `(1, 50)` and `(50, 1)` are both a vector.
fn squeezed(shape: &[usize]) -> Vec<usize> {
    shape.iter().copied().filter(|&d| d != 1).collect()
}

fn numeric_f64(f: &Found, a: &NpyArray) -> Result<Vec<f64>, IoError> {
    a.to_f64().ok_or_else(|| {
        f.layout(format!("array '{}' must hold numbers, not {} values", a.name, a.data.type_name()))
    })
}

fn numeric_f32(f: &Found, a: &NpyArray) -> Result<Vec<f32>, IoError> {
    a.to_f32().ok_or_else(|| {
        f.layout(format!("array '{}' must hold numbers, not {} values", a.name, a.data.type_name()))
    })
}

fn flags(f: &Found, a: &NpyArray) -> Result<Vec<bool>, IoError> {
    a.to_bool().ok_or_else(|| {
        f.layout(format!(
            "array '{}' must hold booleans (or 0/1 numbers), not {} values",
            a.name,
            a.data.type_name()
        ))
    })
}

/// A coordinate array as found: a 1-D axis or a 2-D meshgrid still to be reduced.
enum Coord {
    Axis(Vec<f64>),
    Mesh { rows: usize, cols: usize, values: Vec<f64> },
}

fn coord(f: &Found, name: &str) -> Result<Coord, IoError> {
    let a = f.require(name)?;
    let values = numeric_f64(f, a)?;
    if a.shape.len() == 2 && squeezed(&a.shape).len() == 2 {
        return Ok(Coord::Mesh { rows: a.shape[0], cols: a.shape[1], values });
    }
    if squeezed(&a.shape).len() > 1 {
        return Err(f.layout(format!(
            "coordinate array '{}' has shape {}; it must be 1-D (n,) or a 2-D meshgrid (ny, nx)",
            a.name,
            shape_str(&a.shape)
        )));
    }
    Ok(Coord::Axis(values))
}

/// The axis of a meshgrid `(rows, cols)`: its first row if `constant_along_rows` (every row
/// equal), else its first column (every column equal). `None` if the meshgrid deviates from
/// that by more than [`GRID_TOLERANCE`] of its spacing.
fn mesh_axis(
    values: &[f64],
    rows: usize,
    cols: usize,
    constant_along_rows: bool,
) -> Option<Vec<f64>> {
    let at = |j: usize, i: usize| values[j * cols + i];
    let line: Vec<f64> = if constant_along_rows {
        (0..cols).map(|i| at(0, i)).collect()
    } else {
        (0..rows).map(|j| at(j, 0)).collect()
    };
    let n = line.len();
    let step = if n > 1 { ((line[n - 1] - line[0]) / (n - 1) as f64).abs() } else { 0.0 };
    let tol = GRID_TOLERANCE * step;
    for j in 0..rows {
        for i in 0..cols {
            let reference = if constant_along_rows { line[i] } else { line[j] };
            if (at(j, i) - reference).abs() > tol || !at(j, i).is_finite() {
                return None;
            }
        }
    }
    Some(line)
}

/// Transposes the last two axes of `planes` stacked `(rows, cols)` arrays.
fn transpose_planes<T: Copy>(a: &[T], rows: usize, cols: usize) -> Vec<T> {
    let mut out = Vec::with_capacity(a.len());
    for plane in a.chunks_exact(rows * cols) {
        for i in 0..cols {
            for j in 0..rows {
                out.push(plane[j * cols + i]);
            }
        }
    }
    out
}

fn unit_string(f: &Found, name: &str) -> Result<Option<String>, IoError> {
    match f.get(name) {
        None => Ok(None),
        Some(a) => match &a.data {
            NpyData::Str(s) => Ok(Some(s.clone())),
            _ => Err(f.layout(format!(
                "array '{}' must be a string such as 'mm' or 's', not {} values",
                a.name,
                a.data.type_name()
            ))),
        },
    }
}

/// Times of `nt` snapshots from the options alone (no time array in the file).
pub(crate) fn times_from_options(
    what: &str,
    nt: usize,
    opts: &ReadOptions,
) -> Result<Vec<f64>, IoError> {
    match opts.dt {
        Some(dt) => Ok((0..nt).map(|k| opts.t_start + k as f64 * dt).collect()),
        None if nt == 1 => Ok(vec![opts.t_start]),
        None => Err(IoError::NeedDt { what: format!("{what} holds {nt} snapshots and no times") }),
    }
}

/// Builds a series from canonical arrays.
pub(crate) fn series_from_found(f: &Found, opts: &ReadOptions) -> Result<Series, IoError> {
    opts.check()?;
    let u_arr = f.require("u")?;
    let v_arr = f.require("v")?;
    if u_arr.shape != v_arr.shape {
        return Err(f.layout(format!(
            "u has shape {} but v has shape {}; they must be equal",
            shape_str(&u_arr.shape),
            shape_str(&v_arr.shape)
        )));
    }
    let (nt, a, b) = match u_arr.shape[..] {
        [nt, a, b] => (nt, a, b),
        [a, b] => (1, a, b),
        _ => {
            return Err(f.layout(format!(
            "u has shape {}; velocity arrays must be (nt, ny, nx), or (ny, nx) for one snapshot",
            shape_str(&u_arr.shape)
        )))
        }
    };
    let mut u = numeric_f32(f, u_arr)?;
    let mut v = numeric_f32(f, v_arr)?;

    // Coordinates: decide whether the data is (ny, nx) as specified or, with ij meshgrids,
    // (nx, ny).
    let (xc, yc) = (coord(f, "x")?, coord(f, "y")?);
    let (x, y, transposed) =
        match (xc, yc) {
            (Coord::Axis(x), Coord::Axis(y)) => {
                if x.len() == b && y.len() == a {
                    (x, y, false)
                } else if x.len() == a && y.len() == b {
                    return Err(f.layout(format!(
                    "u has shape {} but x has {} and y {} values: the velocity arrays seem to be \
                     stored (nx, ny); store them as (nt, ny, nx), row index = y",
                    shape_str(&u_arr.shape),
                    x.len(),
                    y.len()
                )));
                } else {
                    return Err(f.layout(format!(
                        "u has shape {} (last two axes = ny, nx) but x has {} values and y has {}",
                        shape_str(&u_arr.shape),
                        x.len(),
                        y.len()
                    )));
                }
            }
            (
                Coord::Mesh { rows: xr, cols: xcn, values: xv },
                Coord::Mesh { rows: yr, cols: ycn, values: yv },
            ) => {
                if (xr, xcn) != (a, b) || (yr, ycn) != (a, b) {
                    return Err(f.layout(format!(
                    "the 2-D coordinate arrays have shapes ({xr}, {xcn}) and ({yr}, {ycn}) but \
                     each snapshot of u is ({a}, {b}); they must be equal"
                )));
                }
                match (mesh_axis(&xv, a, b, true), mesh_axis(&yv, a, b, false)) {
                    (Some(x), Some(y)) => (x, y, false),
                    _ => {
                        match (mesh_axis(&xv, a, b, false), mesh_axis(&yv, a, b, true)) {
                            (Some(x), Some(y)) => (x, y, true),
                            _ => return Err(f.layout(
                                "x and y are 2-D but not a meshgrid of a rectilinear grid: x must \
                             be the same in every row and y the same in every column"
                                    .into(),
                            )),
                        }
                    }
                }
            }
            _ => return Err(f.layout(
                "one of x and y is a 2-D meshgrid and the other a 1-D axis; give both the same way"
                    .into(),
            )),
        };
    let (ny, nx) = if transposed { (b, a) } else { (a, b) };
    if transposed {
        u = transpose_planes(&u, a, b);
        v = transpose_planes(&v, a, b);
    }
    let orient = |data: Vec<bool>| -> Vec<bool> {
        if transposed {
            transpose_planes(&data, a, b)
        } else {
            data
        }
    };

    let plane = nx * ny;
    let mut gaps: Option<Vec<bool>> = None;
    let mut mask = None;
    if let Some(m) = f.get("mask") {
        let values = orient(flags(f, m)?);
        if values.len() == plane && squeezed(&m.shape) == squeezed(&[a, b]) {
            mask = Some(values);
        } else if values.len() == plane * nt && nt > 1 {
            // A mask per snapshot: flagged cells are missing vectors; cells flagged in every
            // snapshot end up in the mask when the series is built.
            gaps = Some(values);
        } else {
            return Err(f.layout(format!(
                "mask has shape {} but must be (ny, nx) = ({a}, {b})",
                shape_str(&m.shape)
            )));
        }
    }
    if let Some(g) = f.get("gaps") {
        let values = orient(flags(f, g)?);
        if values.len() != plane * nt || squeezed(&g.shape) != squeezed(&u_arr.shape) {
            return Err(f.layout(format!(
                "gaps has shape {} but must equal the shape of u, {}",
                shape_str(&g.shape),
                shape_str(&u_arr.shape)
            )));
        }
        gaps = Some(match gaps {
            Some(prev) => prev.iter().zip(&values).map(|(p, q)| *p || *q).collect(),
            None => values,
        });
    }

    let t = match (f.get("t"), opts.dt) {
        (_, Some(_)) | (None, _) => times_from_options(&format!("'{}'", f.file), nt, opts)?,
        (Some(ta), None) => {
            let t = numeric_f64(f, ta)?;
            if t.len() != nt || squeezed(&ta.shape).len() > 1 {
                return Err(f.layout(format!(
                    "t has shape {} but u and v hold {nt} snapshot(s)",
                    shape_str(&ta.shape)
                )));
            }
            t
        }
    };

    let length = match (opts.length_unit, unit_string(f, "length_unit")?) {
        (Some(l), _) => l,
        (None, Some(s)) => {
            s.parse::<LengthUnit>().map_err(|e| f.layout(format!("array 'length_unit': {e}")))?
        }
        (None, None) => LengthUnit::M,
    };
    let time = match (opts.time_unit, unit_string(f, "time_unit")?) {
        (Some(t), _) => t,
        (None, Some(s)) => {
            s.parse::<TimeUnit>().map_err(|e| f.layout(format!("array 'time_unit': {e}")))?
        }
        (None, None) => TimeUnit::S,
    };
    let parts =
        SeriesParts { x, y, t, u, v, mask, gaps, nan_is_gap: true, units: Units { length, time } };
    Series::from_parts(parts).map_err(|e| IoError::field(format!("'{}'", f.file), e))
}

/// The canonical arrays of a series, in SI units (or unitless).
pub(crate) fn series_arrays(s: &Series) -> Vec<NpyArray> {
    let (nt, ny, nx) = (s.nt(), s.ny(), s.nx());
    let units = s.units();
    let length = if units.length == LengthUnit::Unitless { "unitless" } else { "m" };
    let time = if units.time == TimeUnit::Unitless { "unitless" } else { "s" };
    let mut arrays = vec![
        NpyArray::new("x", vec![nx], NpyData::F64(s.grid().x.coords())),
        NpyArray::new("y", vec![ny], NpyData::F64(s.grid().y.coords())),
        NpyArray::new("t", vec![nt], NpyData::F64(s.times().to_vec())),
        NpyArray::new("u", vec![nt, ny, nx], NpyData::F32(s.u().to_vec())),
        NpyArray::new("v", vec![nt, ny, nx], NpyData::F32(s.v().to_vec())),
        NpyArray::new("mask", vec![ny, nx], NpyData::Bool(s.mask().to_vec())),
        NpyArray::new("length_unit", vec![], NpyData::Str(length.into())),
        NpyArray::new("time_unit", vec![], NpyData::Str(time.into())),
    ];
    if let Some(g) = s.gaps() {
        arrays.push(NpyArray::new("gaps", vec![nt, ny, nx], NpyData::Bool(g.to_vec())));
    }
    arrays
}
