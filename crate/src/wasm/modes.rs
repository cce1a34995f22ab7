//! Modal decomposition bindings: POD, DMD or SPOD of the loaded series
//! ([`crate::modes::overview`]), its charts, the shape of one mode on the data grid as a
//! picture, its temporal coefficients and the selection term that names it.

use super::js_error;
use super::Dataset;
use crate::field::{Grid, Units};
use crate::io::{MapFormat, ScalarMap};
use crate::modes::overview::{
    decompose, decompose_with_progress, Component, Decomposition, ModesRequest,
};
use crate::modes::transfer;
use crate::progress::Progress;
use crate::render::sensitivity::{centred_range, magnitude_range};
use crate::render::{mask_rgba, paint_rgba, ColorRange, Colormap, ColormapKind};
use wasm_bindgen::prelude::*;

/// A decomposition of one series.
#[wasm_bindgen]
pub struct Modes {
    inner: Decomposition,
    units: Units,
    times: Vec<f64>,
    nx: usize,
    ny: usize,
    grid: Grid,
    valid: Vec<bool>,
}

fn component(name: &str) -> Result<Component, JsError> {
    name.parse().map_err(js_error)
}

impl Dataset {
    /// The page's view of a decomposition of this series.
    fn modes_of(&self, inner: Decomposition) -> Modes {
        let s = self.series();
        Modes {
            inner,
            units: s.units(),
            times: s.times().to_vec(),
            nx: s.nx(),
            ny: s.ny(),
            grid: *s.grid(),
            valid: s.mask().iter().map(|&m| !m).collect(),
        }
    }
}

fn request(json: &str) -> Result<ModesRequest, JsError> {
    serde_json::from_str(json)
        .map_err(|e| JsError::new(&format!("the modes settings are not valid: {e}")))
}

#[wasm_bindgen]
impl Dataset {
    /// Decomposes the series as `sillage modes` does; `request` is JSON `{method: "pod" |
    /// "dmd" | "spod", rank?}`. Series with missing vectors are refused (clean first).
    pub fn decompose(&self, request_json: &str) -> Result<Modes, JsError> {
        let inner = decompose(self.series(), &request(request_json)?).map_err(js_error)?;
        Ok(self.modes_of(inner))
    }

    /// The same decomposition as [`Dataset::decompose`], as bytes for the page (a compute
    /// worker's job; [`crate::modes::transfer`]). `on_progress(fraction)`, when given, is
    /// called as the work advances ([`crate::progress`]: at most a few hundred times, with
    /// fractions that never decrease, 1 at the end); it only watches, the numbers are the
    /// same. An exception it throws is ignored.
    #[wasm_bindgen(js_name = decomposeBytes)]
    pub fn decompose_bytes(
        &self,
        request_json: &str,
        on_progress: Option<js_sys::Function>,
    ) -> Result<Vec<u8>, JsError> {
        let req = request(request_json)?;
        let inner = match on_progress {
            Some(f) => {
                let mut report = |fraction: f64| {
                    let _ = f.call1(&JsValue::NULL, &JsValue::from_f64(fraction));
                };
                decompose_with_progress(self.series(), &req, &mut Progress::to(&mut report))
            }
            None => decompose(self.series(), &req),
        }
        .map_err(js_error)?;
        Ok(transfer::encode(&inner))
    }

    /// A decomposition of this series computed by a worker ([`Dataset::decompose_bytes`] on
    /// its copy of the series): the same numbers, bit for bit.
    #[wasm_bindgen(js_name = modesFromBytes)]
    pub fn modes_from_bytes(&self, bytes: &[u8]) -> Result<Modes, JsError> {
        let inner = transfer::decode(bytes, self.series()).map_err(js_error)?;
        Ok(self.modes_of(inner))
    }
}

#[wasm_bindgen]
impl Modes {
    /// Modes that can be picked (POD, DMD modes; SPOD frequency bins).
    #[wasm_bindgen(getter)]
    pub fn count(&self) -> usize {
        self.inner.count()
    }

    /// JSON `{method, count, pick_word, text, charts: [{id, title, x_label, y_label,
    /// x_range, y_range, equal_aspect, curves: [{label, style, x, y, picks}]}], pod}`.
    pub fn overview(&self) -> Result<String, JsError> {
        serde_json::to_string(&self.inner.overview(self.units)).map_err(js_error)
    }

    /// Mode `k` (0-based) as a `(ny, nx)` map of `component` (`u`, `v`, `magnitude`).
    pub fn shape(&self, k: usize, which: &str) -> Result<Vec<f32>, JsError> {
        self.inner.shape(k, component(which)?).map_err(js_error)
    }

    /// Colour range `[lo, hi]` of a mode map: symmetric about 0 for `u` and `v`, from 0 for
    /// the magnitude.
    #[wasm_bindgen(js_name = shapeRange)]
    pub fn shape_range(&self, k: usize, which: &str) -> Result<Vec<f64>, JsError> {
        let c = component(which)?;
        let values = self.inner.shape(k, c).map_err(js_error)?;
        let v: Vec<f32> =
            values.iter().zip(&self.valid).filter(|(_, &ok)| ok).map(|(x, _)| *x).collect();
        let (lo, hi) = match c {
            Component::Magnitude => magnitude_range(&v),
            _ => centred_range(&v, 0.0),
        };
        Ok(vec![lo, hi])
    }

    /// Colour map name of a mode map of `component`.
    #[wasm_bindgen(js_name = shapeColormap)]
    pub fn shape_colormap(&self, which: &str) -> Result<String, JsError> {
        Ok(match component(which)? {
            Component::Magnitude => ColormapKind::Tide,
            _ => ColormapKind::Eddy,
        }
        .name()
        .into())
    }

    /// RGBA picture (first row = largest y) of mode `k`'s `component` over `[lo, hi]`.
    #[wasm_bindgen(js_name = shapeImage)]
    pub fn shape_image(&self, k: usize, which: &str, lo: f64, hi: f64) -> Result<Vec<u8>, JsError> {
        let c = component(which)?;
        let values = self.inner.shape(k, c).map_err(js_error)?;
        let range = ColorRange::new(lo, hi).map_err(js_error)?;
        let kind = match c {
            Component::Magnitude => ColormapKind::Tide,
            _ => ColormapKind::Eddy,
        };
        Ok(paint_rgba(
            &values,
            &self.valid,
            self.nx,
            self.ny,
            Colormap::get(kind),
            range,
            mask_rgba(),
        ))
    }

    /// Mode `k`'s `component` as a file in `format` (`npy`, `npz`, `csv`, `vti`) on the
    /// data grid, masked cells NaN. The array is named `<method>_mode_<k+1>_<component>`
    /// and its unit is `1`: modes have unit norm, so the scale is arbitrary.
    #[wasm_bindgen(js_name = exportShape)]
    pub fn export_shape(
        &self,
        k: usize,
        which: &str,
        format_name: &str,
    ) -> Result<Vec<u8>, JsError> {
        let fmt: MapFormat = format_name.parse().map_err(|e: String| JsError::new(&e))?;
        let c = component(which)?;
        let values = self.inner.shape(k, c).map_err(js_error)?;
        let method = format!("{:?}", self.inner.method()).to_lowercase();
        let name = format!("{method}_mode_{}_{}", k + 1, which.trim().to_lowercase());
        let out = ScalarMap {
            grid: &self.grid,
            name: &name,
            unit: "1",
            units: self.units,
            time: None,
            values: &values,
            valid: &self.valid,
        };
        Ok(out.write(fmt))
    }

    /// The temporal coefficients of mode `k` as a chart (JSON), or `undefined` (SPOD).
    pub fn coefficients(&self, k: usize) -> Result<Option<String>, JsError> {
        let chart = self.inner.coefficients(k, &self.times, self.units).map_err(js_error)?;
        chart.map(|c| serde_json::to_string(&c).map_err(js_error)).transpose()
    }

    /// The selection term naming mode `k` ("pod(3)", "dmd(2)", "spod(f=a..b)").
    pub fn term(&self, k: usize) -> Result<String, JsError> {
        self.inner.selection_term(k).map_err(js_error)
    }

    /// One line about mode `k`.
    pub fn describe(&self, k: usize) -> Result<String, JsError> {
        self.inner.describe(k, self.units).map_err(js_error)
    }
}
