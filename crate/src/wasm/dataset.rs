//! The `Dataset` class: one loaded series and everything the page draws from it.

use super::js_error;
use crate::advice::{data_quality, DataQuality};
use crate::field::Series;
use crate::io::{read_series, NamedBytes, ReadOptions};
use crate::render::{
    default_range, image_extent, mask_rgba, quantity_image, snapshot_label, summary, ColorRange,
    Colormap, Quantity, RangeScope, TimeFormat,
};
use js_sys::{Array, Uint8Array};
use std::cell::OnceCell;
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;

/// A velocity series read from files the user gave, with its time-label format.
#[wasm_bindgen]
pub struct Dataset {
    series: Series,
    sources: Vec<String>,
    times: TimeFormat,
    /// Outlier count for the transport warnings, computed on first use.
    quality: OnceCell<DataQuality>,
}

impl Dataset {
    /// The series, for the other binding files.
    pub(super) fn series(&self) -> &Series {
        &self.series
    }

    /// The data-quality sample of the transport warnings (computed once).
    pub(super) fn quality(&self) -> &DataQuality {
        self.quality.get_or_init(|| data_quality(&self.series))
    }

    /// A dataset holding a series the core built rather than read (e.g. the flow a reduced
    /// model stands for); `sources` name it in the summary.
    pub(super) fn from_series(series: Series, sources: Vec<String>) -> Dataset {
        let times = TimeFormat::for_series(&series);
        Dataset { series, sources, times, quality: OnceCell::new() }
    }

    /// A dataset holding a series computed in the page (a cleaned copy of this one, a
    /// selection of modes), with the same source names.
    pub(super) fn derived(&self, series: Series) -> Dataset {
        let times = TimeFormat::for_series(&series);
        Dataset { series, sources: self.sources.clone(), times, quality: OnceCell::new() }
    }
}

/// An optional text option: absent, empty or `auto` means "as the files say".
fn given(opt: Option<String>) -> Option<String> {
    opt.map(|s| s.trim().to_string()).filter(|s| !s.is_empty() && !s.eq_ignore_ascii_case("auto"))
}

fn quantity(name: &str) -> Result<Quantity, JsError> {
    name.parse().map_err(js_error)
}

#[wasm_bindgen]
impl Dataset {
    /// Reads a series from `names` (strings) and `files` (`Uint8Array`s, same order).
    /// Optional overrides, as text: `lengthUnit` (`m`, `cm`, `mm`, `um`, `unitless`),
    /// `timeUnit` (`s`, `ms`, `us`, `unitless`), `dt` (time between snapshots).
    #[wasm_bindgen(constructor)]
    pub fn new(
        names: Array,
        files: Array,
        length_unit: Option<String>,
        time_unit: Option<String>,
        dt: Option<String>,
    ) -> Result<Dataset, JsError> {
        if names.length() != files.length() {
            return Err(JsError::new(&format!(
                "{} file names but {} files were given",
                names.length(),
                files.length()
            )));
        }
        let mut input = Vec::with_capacity(files.length() as usize);
        for (i, (name, bytes)) in names.iter().zip(files.iter()).enumerate() {
            let name = name
                .as_string()
                .ok_or_else(|| JsError::new(&format!("file name {} is not a string", i + 1)))?;
            let bytes = bytes.dyn_into::<Uint8Array>().map_err(|_| {
                JsError::new(&format!("the contents of '{name}' are not a Uint8Array"))
            })?;
            input.push(NamedBytes::new(name, bytes.to_vec()));
        }
        let mut opts = ReadOptions::default();
        if let Some(u) = given(length_unit) {
            opts.length_unit = Some(u.parse().map_err(|e: String| JsError::new(&e))?);
        }
        if let Some(u) = given(time_unit) {
            opts.time_unit = Some(u.parse().map_err(|e: String| JsError::new(&e))?);
        }
        if let Some(d) = given(dt) {
            let value: f64 = d.parse().map_err(|_| {
                JsError::new(&format!("the time between snapshots must be a number, not '{d}'"))
            })?;
            opts.dt = Some(value);
        }
        let series = read_series(&input, &opts).map_err(js_error)?;
        let times = TimeFormat::for_series(&series);
        Ok(Dataset {
            series,
            sources: input.into_iter().map(|f| f.name).collect(),
            times,
            quality: OnceCell::new(),
        })
    }

    #[wasm_bindgen(getter)]
    pub fn nx(&self) -> usize {
        self.series.nx()
    }

    #[wasm_bindgen(getter)]
    pub fn ny(&self) -> usize {
        self.series.ny()
    }

    #[wasm_bindgen(getter)]
    pub fn nt(&self) -> usize {
        self.series.nt()
    }

    /// Snapshot times, in the series' time unit.
    pub fn times(&self) -> Vec<f64> {
        self.series.times().to_vec()
    }

    /// `[x0, dx, y0, dy]` of the grid, in the series' length unit.
    pub fn grid(&self) -> Vec<f64> {
        let g = self.series.grid();
        vec![g.x.start, g.x.step, g.y.start, g.y.step]
    }

    /// `[x_min, x_max, y_min, y_max]` of the drawn picture (cells centred on nodes).
    pub fn extent(&self) -> Vec<f64> {
        image_extent(self.series.grid()).to_vec()
    }

    #[wasm_bindgen(getter, js_name = lengthUnit)]
    pub fn length_unit(&self) -> String {
        self.series.units().length.symbol().into()
    }

    #[wasm_bindgen(getter, js_name = timeUnit)]
    pub fn time_unit(&self) -> String {
        self.series.units().time.symbol().into()
    }

    #[wasm_bindgen(getter, js_name = velocityUnit)]
    pub fn velocity_unit(&self) -> String {
        self.series.units().velocity_label()
    }

    /// `(ny, nx)` mask, 1 where a cell never has data.
    pub fn mask(&self) -> Vec<u8> {
        self.series.mask().iter().map(|&m| m as u8).collect()
    }

    /// Summary rows as JSON `[{key, label, value}]`.
    pub fn summary(&self) -> Result<String, JsError> {
        serde_json::to_string(&summary(&self.series, &self.sources)).map_err(js_error)
    }

    /// Label of snapshot `k`'s time, e.g. `0.250 s`.
    #[wasm_bindgen(js_name = timeLabel)]
    pub fn time_label(&self, k: usize) -> Result<String, JsError> {
        let t = self.series.times().get(k).ok_or_else(|| {
            js_error(crate::render::RenderError::SnapshotOutOfRange {
                index: k,
                nt: self.series.nt(),
            })
        })?;
        Ok(self.times.format(*t))
    }

    /// Position of snapshot `k` for people, e.g. `8 of 40`.
    #[wasm_bindgen(js_name = snapshotLabel)]
    pub fn snapshot_label(&self, k: usize) -> String {
        snapshot_label(k, self.series.nt())
    }

    /// Unit label of field `name` in this series' units.
    pub fn unit(&self, name: &str) -> Result<String, JsError> {
        Ok(quantity(name)?.unit(self.series.units()))
    }

    /// Field `name` (`speed`, `vorticity`) of snapshot `k`, `(ny, nx)` row-major, y up.
    pub fn field(&self, name: &str, k: usize) -> Result<Vec<f32>, JsError> {
        quantity(name)?.compute(&self.series, k).map_err(js_error)
    }

    /// Default colour range `[lo, hi]` of field `name`: over the whole series when
    /// `scope` is `series`, over snapshot `k` when it is `snapshot`.
    #[wasm_bindgen(js_name = defaultRange)]
    pub fn default_range(&self, name: &str, k: usize, scope: &str) -> Result<Vec<f64>, JsError> {
        let scope = match scope {
            "series" => RangeScope::Series,
            "snapshot" => RangeScope::Snapshot(k),
            other => {
                return Err(JsError::new(&format!(
                    "unknown range scope '{other}' (expected series or snapshot)"
                )))
            }
        };
        let (lo, hi) = default_range(&self.series, quantity(name)?, scope).map_err(js_error)?;
        Ok(vec![lo, hi])
    }

    /// RGBA picture (`4·nx·ny` bytes, first row = top, largest y) of field `name` at
    /// snapshot `k` over `[lo, hi]`. Optional: `colormap` (a name; default the field's own)
    /// and `mask` (4 RGBA bytes for cells without data; default the neutral grey).
    pub fn render(
        &self,
        name: &str,
        k: usize,
        lo: f64,
        hi: f64,
        colormap: Option<String>,
        mask: Option<Vec<u8>>,
    ) -> Result<Vec<u8>, JsError> {
        let q = quantity(name)?;
        let range = ColorRange::new(lo, hi).map_err(js_error)?;
        let kind = match colormap {
            Some(c) => c.parse().map_err(|e: String| JsError::new(&e))?,
            None => q.colormap(),
        };
        let missing = match mask {
            Some(m) => <[u8; 4]>::try_from(m.as_slice()).map_err(|_| {
                JsError::new(&format!(
                    "the no-data colour needs 4 bytes (red, green, blue, alpha), got {}",
                    m.len()
                ))
            })?,
            None => mask_rgba(),
        };
        quantity_image(&self.series, q, k, range, Colormap::get(kind), missing).map_err(js_error)
    }
}
