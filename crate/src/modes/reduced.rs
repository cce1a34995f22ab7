//! A reduced model: the time mean, the first k POD modes and their temporal coefficients,
//! small enough to send to a colleague instead of the raw data, and rebuilt into a velocity
//! series on the data grid: q(t_n) = q̄ + Σ_{j<k} φ_j b_j(t_n) (see [`super::pod`]).
//!
//! File layout (our own `.npz`, read back by [`ReducedModel::from_npz`]): the canonical
//! `x (nx)`, `y (ny)`, `t (nt)` (float64), `mask (ny, nx)` bool, `length_unit`,
//! `time_unit`; `mean_u`, `mean_v (ny, nx)` float32; `mode_u`, `mode_v (k, ny, nx)`
//! float32 (mode shapes, masked cells 0); `coefficients (nt, k)` float64;
//! `energy_fraction (k)` float64; and the 0-d string `kind` = `"sillage-reduced-model"`.
//! Because it also carries `x`, `y`, `t`, `mask` and units, the file says at once on
//! which grid and times it lives.
//!
//! Precision: the shapes are stored as float32 (the precision of the series themselves),
//! the coefficients as float64; the rebuilt series equals [`Pod::to_series`] with the same
//! modes to about 1e-7 of the largest speed.

use super::pod::Pod;
use crate::field::{LengthUnit, Series, SeriesParts, TimeUnit, Units};
use crate::io::{read_arrays_npz, write_arrays_npz, NpyArray, NpyData};
use thiserror::Error;

/// The value of the `kind` string in the file.
pub const KIND: &str = "sillage-reduced-model";

/// Mean, leading POD modes and coefficients of a series. Planes are `(ny, nx)` row-major.
#[derive(Debug, Clone, PartialEq)]
pub struct ReducedModel {
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    pub t: Vec<f64>,
    pub mask: Vec<bool>,
    pub units: Units,
    pub mean_u: Vec<f32>,
    pub mean_v: Vec<f32>,
    /// `k` planes each, mode after mode.
    pub mode_u: Vec<f32>,
    pub mode_v: Vec<f32>,
    /// `(nt, k)` row-major.
    pub coefficients: Vec<f64>,
    pub energy_fraction: Vec<f64>,
}

/// Why a reduced model cannot be made or read; the message names the array or the value.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("reduced model: {0}")]
pub struct ReducedModelError(pub String);

fn bad(reason: impl Into<String>) -> ReducedModelError {
    ReducedModelError(reason.into())
}

impl ReducedModel {
    /// The mean and the first `k` modes of `pod`, computed from `series` (the same series).
    pub fn from_pod(
        series: &Series,
        pod: &Pod,
        k: usize,
    ) -> Result<ReducedModel, ReducedModelError> {
        if k == 0 || k > pod.rank() {
            return Err(bad(format!("asked for {k} modes; the decomposition has {}", pod.rank())));
        }
        let grid = series.grid();
        let plane = grid.len();
        let (mut mean_u, mut mean_v) = (vec![0.0; plane], vec![0.0; plane]);
        pod.layout.scatter(&pod.mean, &mut mean_u, &mut mean_v);
        let (mut mode_u, mut mode_v) =
            (Vec::with_capacity(k * plane), Vec::with_capacity(k * plane));
        for j in 0..k {
            let (u, v) = pod.mode_planes(j);
            mode_u.extend(u);
            mode_v.extend(v);
        }
        let nt = series.nt();
        let coefficients = (0..nt)
            .flat_map(|n| (0..k).map(move |j| (n, j)))
            .map(|(n, j)| pod.coefficients[(n, j)])
            .collect();
        let mut energy_fraction = pod.energy_fractions();
        energy_fraction.truncate(k);
        Ok(ReducedModel {
            x: grid.x.coords(),
            y: grid.y.coords(),
            t: series.times().to_vec(),
            mask: series.mask().to_vec(),
            units: series.units(),
            mean_u,
            mean_v,
            mode_u,
            mode_v,
            coefficients,
            energy_fraction,
        })
    }

    /// A quick look at a file: a zip archive whose member names include this layout's
    /// `kind.npy`, `mode_u.npy` and `coefficients.npy` (names are stored uncompressed).
    /// [`ReducedModel::from_npz`] checks the rest.
    pub fn looks_like(bytes: &[u8]) -> bool {
        let has = |name: &[u8]| bytes.windows(name.len()).any(|w| w == name);
        bytes.starts_with(b"PK\x03\x04")
            && has(b"kind.npy")
            && has(b"mode_u.npy")
            && has(b"coefficients.npy")
    }

    /// Number of modes kept.
    pub fn modes(&self) -> usize {
        self.energy_fraction.len()
    }

    /// The `.npz` bytes (layout in the module documentation).
    pub fn to_npz(&self) -> Vec<u8> {
        let (nx, ny, nt, k) = (self.x.len(), self.y.len(), self.t.len(), self.modes());
        let length = if self.units.length == LengthUnit::Unitless { "unitless" } else { "m" };
        let time = if self.units.time == TimeUnit::Unitless { "unitless" } else { "s" };
        write_arrays_npz(&[
            NpyArray::new("kind", vec![], NpyData::Str(KIND.into())),
            NpyArray::new("x", vec![nx], NpyData::F64(self.x.clone())),
            NpyArray::new("y", vec![ny], NpyData::F64(self.y.clone())),
            NpyArray::new("t", vec![nt], NpyData::F64(self.t.clone())),
            NpyArray::new("mask", vec![ny, nx], NpyData::Bool(self.mask.clone())),
            NpyArray::new("length_unit", vec![], NpyData::Str(length.into())),
            NpyArray::new("time_unit", vec![], NpyData::Str(time.into())),
            NpyArray::new("mean_u", vec![ny, nx], NpyData::F32(self.mean_u.clone())),
            NpyArray::new("mean_v", vec![ny, nx], NpyData::F32(self.mean_v.clone())),
            NpyArray::new("mode_u", vec![k, ny, nx], NpyData::F32(self.mode_u.clone())),
            NpyArray::new("mode_v", vec![k, ny, nx], NpyData::F32(self.mode_v.clone())),
            NpyArray::new("coefficients", vec![nt, k], NpyData::F64(self.coefficients.clone())),
            NpyArray::new("energy_fraction", vec![k], NpyData::F64(self.energy_fraction.clone())),
        ])
    }

    /// Reads a file written by [`ReducedModel::to_npz`]; the message names what is wrong.
    pub fn from_npz(bytes: &[u8]) -> Result<ReducedModel, ReducedModelError> {
        let arrays = read_arrays_npz(bytes).map_err(|e| bad(e.to_string()))?;
        let get = |name: &str| {
            arrays.iter().find(|a| a.name == name).ok_or_else(|| bad(format!("no array '{name}'")))
        };
        match &get("kind")?.data {
            NpyData::Str(s) if s == KIND => {}
            _ => return Err(bad(format!("'kind' is not \"{KIND}\""))),
        }
        let f64s =
            |name: &str| get(name)?.to_f64().ok_or_else(|| bad(format!("'{name}' is not numeric")));
        let f32s =
            |name: &str| get(name)?.to_f32().ok_or_else(|| bad(format!("'{name}' is not numeric")));
        let text = |name: &str| match &get(name)?.data {
            NpyData::Str(s) => Ok(s.clone()),
            _ => Err(bad(format!("'{name}' is not a string"))),
        };
        let (x, y, t) = (f64s("x")?, f64s("y")?, f64s("t")?);
        let energy_fraction = f64s("energy_fraction")?;
        let (nx, ny, nt, k) = (x.len(), y.len(), t.len(), energy_fraction.len());
        let plane = nx * ny;
        let units = Units {
            length: text("length_unit")?.parse().map_err(bad)?,
            time: text("time_unit")?.parse().map_err(bad)?,
        };
        let model = ReducedModel {
            mask: get("mask")?.to_bool().ok_or_else(|| bad("'mask' is not boolean"))?,
            mean_u: f32s("mean_u")?,
            mean_v: f32s("mean_v")?,
            mode_u: f32s("mode_u")?,
            mode_v: f32s("mode_v")?,
            coefficients: f64s("coefficients")?,
            x,
            y,
            t,
            units,
            energy_fraction,
        };
        for (name, len, want) in [
            ("mask", model.mask.len(), plane),
            ("mean_u", model.mean_u.len(), plane),
            ("mean_v", model.mean_v.len(), plane),
            ("mode_u", model.mode_u.len(), k * plane),
            ("mode_v", model.mode_v.len(), k * plane),
            ("coefficients", model.coefficients.len(), nt * k),
        ] {
            if len != want {
                return Err(bad(format!("'{name}' holds {len} values, expected {want}")));
            }
        }
        if k == 0 {
            return Err(bad("no modes"));
        }
        Ok(model)
    }

    /// The velocity series the model stands for: q̄ + Σ_j φ_j b_j(t_n) at every time.
    pub fn to_series(&self) -> Result<Series, ReducedModelError> {
        let (nt, k) = (self.t.len(), self.modes());
        let plane = self.x.len() * self.y.len();
        let (mut u, mut v) = (Vec::with_capacity(nt * plane), Vec::with_capacity(nt * plane));
        let mut su = vec![0.0f64; plane];
        let mut sv = vec![0.0f64; plane];
        for n in 0..nt {
            for c in 0..plane {
                su[c] = self.mean_u[c] as f64;
                sv[c] = self.mean_v[c] as f64;
            }
            for j in 0..k {
                let b = self.coefficients[n * k + j];
                let (mu, mv) =
                    (&self.mode_u[j * plane..][..plane], &self.mode_v[j * plane..][..plane]);
                for c in 0..plane {
                    su[c] += b * mu[c] as f64;
                    sv[c] += b * mv[c] as f64;
                }
            }
            for c in 0..plane {
                let keep = !self.mask[c];
                u.push(if keep { su[c] as f32 } else { 0.0 });
                v.push(if keep { sv[c] as f32 } else { 0.0 });
            }
        }
        Series::from_parts(SeriesParts {
            x: self.x.clone(),
            y: self.y.clone(),
            t: self.t.clone(),
            u,
            v,
            mask: Some(self.mask.clone()),
            gaps: None,
            nan_is_gap: false,
            units: self.units,
        })
        .map_err(|e| bad(e.to_string()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::modes::{pod, PodOptions};

    /// Two travelling waves on a 12 × 9 grid with a masked block: several POD modes.
    fn series() -> Series {
        let (nx, ny, nt) = (12, 9, 30);
        let x: Vec<f64> = (0..nx).map(|i| i as f64 * 0.1).collect();
        let y: Vec<f64> = (0..ny).map(|j| j as f64 * 0.1).collect();
        let t: Vec<f64> = (0..nt).map(|k| k as f64 * 0.05).collect();
        let mut mask = vec![false; nx * ny];
        for j in 3..5 {
            for i in 4..6 {
                mask[j * nx + i] = true;
            }
        }
        let (mut u, mut v) = (Vec::new(), Vec::new());
        for &tk in &t {
            for (j, &yj) in y.iter().enumerate() {
                for (i, &xi) in x.iter().enumerate() {
                    let a = 2.0 * std::f64::consts::PI * (2.0 * tk - xi);
                    let b = 2.0 * std::f64::consts::PI * (5.0 * tk - 2.0 * yj);
                    let m = mask[j * nx + i];
                    u.push(if m { 0.0 } else { (1.0 + a.sin() + 0.3 * b.cos()) as f32 });
                    v.push(if m { 0.0 } else { (0.5 * a.cos() + 0.2 * b.sin() * xi) as f32 });
                }
            }
        }
        Series::from_parts(SeriesParts {
            x,
            y,
            t,
            u,
            v,
            mask: Some(mask),
            gaps: None,
            nan_is_gap: false,
            units: Units::default(),
        })
        .unwrap()
    }

    #[test]
    fn rebuilt_series_equals_the_pod_reconstruction_with_the_same_modes() {
        let s = series();
        let p = pod(&s, &PodOptions::default()).unwrap();
        for k in [1, 3, 4] {
            let model = ReducedModel::from_pod(&s, &p, k).unwrap();
            let back = ReducedModel::from_npz(&model.to_npz()).unwrap();
            assert_eq!(back, model);
            assert!(ReducedModel::looks_like(&model.to_npz()));
            assert!(!ReducedModel::looks_like(&crate::io::write_npz(&s)));
            let mine = back.to_series().unwrap();
            let which: Vec<usize> = (0..k).collect();
            let reference = p.to_series(&s, &which, true);
            let scale = s.u().iter().chain(s.v()).fold(0.0f32, |m, x| m.max(x.abs())) as f64;
            let worst = mine
                .u()
                .iter()
                .zip(reference.u())
                .chain(mine.v().iter().zip(reference.v()))
                .fold(0.0f64, |m, (a, b)| m.max((*a as f64 - *b as f64).abs()));
            assert!(worst <= 1e-6 * scale, "k = {k}: largest difference {worst:e} of {scale}");
            assert_eq!(mine.mask(), s.mask());
            assert_eq!(mine.times(), s.times());
            assert_eq!(mine.grid(), s.grid());
        }
    }

    #[test]
    fn damaged_files_and_impossible_requests_are_refused() {
        let s = series();
        let p = pod(&s, &PodOptions::default()).unwrap();
        assert!(ReducedModel::from_pod(&s, &p, 0).is_err());
        assert!(ReducedModel::from_pod(&s, &p, p.rank() + 1).is_err());
        let model = ReducedModel::from_pod(&s, &p, 2).unwrap();
        // A file whose coefficients lost a value.
        let mut arrays = read_arrays_npz(&model.to_npz()).unwrap();
        for a in arrays.iter_mut().filter(|a| a.name == "coefficients") {
            let mut c = a.to_f64().unwrap();
            c.pop();
            *a = NpyArray::new("coefficients", vec![c.len()], NpyData::F64(c));
        }
        let msg = ReducedModel::from_npz(&write_arrays_npz(&arrays)).unwrap_err().to_string();
        assert!(msg.contains("coefficients"), "{msg}");
        assert!(ReducedModel::from_npz(&crate::io::write_npz(&s)).is_err());
    }
}
