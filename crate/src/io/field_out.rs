//! One scalar map on a uniform grid (a field of one snapshot, or a computed map such as the
//! FTLE) as a file: `.npy`, `.npz`, `.csv` or `.vti`. The page's "Export" uses these so the
//! bytes are written by the core, never by the page.
//!
//! Nodes without a value (masked cells, tracers without an FTLE) are written as NaN, and the
//! `.npz`, `.vti` add a `mask` array (true / 1 = no value). Layouts (our own, on the open
//! formats of [`super::npy`] and [`super::vti`]):
//!
//! * `.npy`: the `(ny, nx)` float32 map alone, row-major, y ascending;
//! * `.npz`: the map under its name, `x (nx)`, `y (ny)` float64, `mask (ny, nx)` bool, the
//!   0-d strings `unit` (the map's unit), `length_unit`, `time_unit` (`m`/`s` or
//!   `unitless`, as the canonical series layout), and `t` (0-d float64) when the map
//!   belongs to a time;
//! * `.csv`: header `x [m],y [m],NAME [UNIT]`, one row per node, x fastest, then y;
//! * `.vti`: the map as point data, the mask as `UInt8`, the time as `TimeValue`.

use super::npy::{NpyArray, NpyData};
use super::npz::write_arrays_npz;
use super::vti::write_vti;
use crate::field::{Grid, LengthUnit, TimeUnit, Units};
use std::fmt::Write as _;
use std::str::FromStr;

/// The file formats of [`ScalarMap::write`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MapFormat {
    Npy,
    Npz,
    Csv,
    Vti,
}

impl MapFormat {
    /// The file extension, without the dot.
    pub fn extension(self) -> &'static str {
        match self {
            MapFormat::Npy => "npy",
            MapFormat::Npz => "npz",
            MapFormat::Csv => "csv",
            MapFormat::Vti => "vti",
        }
    }
}

impl FromStr for MapFormat {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().trim_start_matches('.').to_ascii_lowercase().as_str() {
            "npy" => Ok(MapFormat::Npy),
            "npz" => Ok(MapFormat::Npz),
            "csv" => Ok(MapFormat::Csv),
            "vti" => Ok(MapFormat::Vti),
            other => {
                Err(format!("unknown export format '{other}' (expected npy, npz, csv or vti)"))
            }
        }
    }
}

/// A scalar map and what labels it. `values` and `valid` are `(ny, nx)`, row-major.
#[derive(Debug, Clone, Copy)]
pub struct ScalarMap<'a> {
    pub grid: &'a Grid,
    /// Array name, e.g. `ftle`, `vorticity`.
    pub name: &'a str,
    /// Unit label of the values, e.g. `1/s` (`1` for dimensionless).
    pub unit: &'a str,
    /// Units of the coordinates and times.
    pub units: Units,
    /// The snapshot time, or t₀ of a transport map.
    pub time: Option<f64>,
    pub values: &'a [f32],
    /// `false` where the node has no value.
    pub valid: &'a [bool],
}

impl ScalarMap<'_> {
    /// The values with NaN where there is none.
    fn with_nan(&self) -> Vec<f32> {
        self.check();
        self.values.iter().zip(self.valid).map(|(&v, &ok)| if ok { v } else { f32::NAN }).collect()
    }

    #[track_caller]
    fn check(&self) {
        let n = self.grid.len();
        assert!(
            self.values.len() == n && self.valid.len() == n,
            "ScalarMap: {} values and {} flags for a grid of {n} nodes",
            self.values.len(),
            self.valid.len()
        );
    }

    /// The file bytes in `format`.
    pub fn write(&self, format: MapFormat) -> Vec<u8> {
        match format {
            MapFormat::Npy => self.npy(),
            MapFormat::Npz => self.npz(),
            MapFormat::Csv => self.csv().into_bytes(),
            MapFormat::Vti => self.vti(),
        }
    }

    fn shape(&self) -> Vec<usize> {
        vec![self.grid.ny(), self.grid.nx()]
    }

    pub fn npy(&self) -> Vec<u8> {
        NpyArray::new(self.name, self.shape(), NpyData::F32(self.with_nan())).to_npy_bytes()
    }

    pub fn npz(&self) -> Vec<u8> {
        let length = if self.units.length == LengthUnit::Unitless { "unitless" } else { "m" };
        let time = if self.units.time == TimeUnit::Unitless { "unitless" } else { "s" };
        let mut arrays = vec![
            NpyArray::new(self.name, self.shape(), NpyData::F32(self.with_nan())),
            NpyArray::new("x", vec![self.grid.nx()], NpyData::F64(self.grid.x.coords())),
            NpyArray::new("y", vec![self.grid.ny()], NpyData::F64(self.grid.y.coords())),
            NpyArray::new(
                "mask",
                self.shape(),
                NpyData::Bool(self.valid.iter().map(|&ok| !ok).collect()),
            ),
            NpyArray::new("unit", vec![], NpyData::Str(self.unit.into())),
            NpyArray::new("length_unit", vec![], NpyData::Str(length.into())),
            NpyArray::new("time_unit", vec![], NpyData::Str(time.into())),
        ];
        if let Some(t) = self.time {
            arrays.push(NpyArray::new("t", vec![], NpyData::F64(vec![t])));
        }
        write_arrays_npz(&arrays)
    }

    pub fn csv(&self) -> String {
        let values = self.with_nan();
        let l = self.units.length.symbol();
        let g = self.grid;
        let mut out = String::with_capacity(g.len() * 40 + 64);
        let _ = writeln!(out, "x [{l}],y [{l}],{} [{}]", self.name, self.unit);
        for j in 0..g.ny() {
            let y = g.y.coord(j);
            for i in 0..g.nx() {
                let v = values[g.index(i, j)];
                let _ = writeln!(
                    out,
                    "{},{y},{}",
                    g.x.coord(i),
                    if v.is_nan() { "NaN".into() } else { v.to_string() }
                );
            }
        }
        out
    }

    pub fn vti(&self) -> Vec<u8> {
        let values = self.with_nan();
        let mask: Vec<bool> = self.valid.iter().map(|&ok| !ok).collect();
        write_vti(self.grid, &[(self.name, &values)], &[], self.time, Some(&mask))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::Axis;
    use crate::io::read_arrays_npz;

    fn grid() -> Grid {
        Grid { x: Axis { start: 0.5, step: 0.25, n: 3 }, y: Axis { start: -1.0, step: 0.5, n: 2 } }
    }

    fn map<'a>(g: &'a Grid, values: &'a [f32], valid: &'a [bool]) -> ScalarMap<'a> {
        ScalarMap {
            grid: g,
            name: "ftle",
            unit: "1/s",
            units: Units { length: LengthUnit::M, time: TimeUnit::S },
            time: Some(0.25),
            values,
            valid,
        }
    }

    #[test]
    fn npz_holds_the_map_axes_mask_and_units() {
        let g = grid();
        let values = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
        let valid = [true, true, false, true, true, true];
        let bytes = map(&g, &values, &valid).npz();
        let arrays = read_arrays_npz(&bytes).unwrap();
        let get = |n: &str| arrays.iter().find(|a| a.name == n).unwrap().clone();
        let f = get("ftle");
        assert_eq!(f.shape, vec![2, 3]);
        let v = f.to_f32().unwrap();
        assert!(v[2].is_nan());
        assert_eq!([v[0], v[1], v[3], v[5]], [1.0, 2.0, 4.0, 6.0]);
        assert_eq!(get("x").to_f64().unwrap(), vec![0.5, 0.75, 1.0]);
        assert_eq!(get("y").to_f64().unwrap(), vec![-1.0, -0.5]);
        assert_eq!(get("mask").to_bool().unwrap(), vec![false, false, true, false, false, false]);
        assert_eq!(get("unit").data, NpyData::Str("1/s".into()));
        assert_eq!(get("length_unit").data, NpyData::Str("m".into()));
        assert_eq!(get("t").to_f64().unwrap(), vec![0.25]);
    }

    #[test]
    fn csv_has_units_in_the_header_and_nan_for_no_value() {
        let g = grid();
        let values = [1.0, 2.5, 3.0, 4.0, 5.0, 6.0];
        let valid = [true, true, false, true, true, true];
        let text = map(&g, &values, &valid).csv();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "x [m],y [m],ftle [1/s]");
        assert_eq!(lines[2], "0.75,-1,2.5");
        assert_eq!(lines[3], "1,-1,NaN");
        assert_eq!(lines.len(), 7);
    }

    #[test]
    fn npy_and_vti_are_written() {
        let g = grid();
        let values = [0.0f32; 6];
        let valid = [true; 6];
        let m = map(&g, &values, &valid);
        assert!(m.write(MapFormat::Npy).starts_with(b"\x93NUMPY"));
        let vti = String::from_utf8_lossy(&m.write(MapFormat::Vti)).to_string();
        assert!(vti.contains("Name=\"ftle\"") && vti.contains("TimeValue"));
        assert_eq!("NPZ".parse::<MapFormat>(), Ok(MapFormat::Npz));
        assert!("png".parse::<MapFormat>().is_err());
    }
}
