//! Transport (FTLE) bindings: the series handed to workers, row ranges of an FTLE run,
//! defaults and warnings from [`crate::advice`], ridges, the pictures of the computed maps
//! and velocity arrows. Settings travel as the JSON of [`TransportSettings`]; every number
//! is computed by the core.

use super::js_error;
use super::Dataset;
use crate::advice::{
    result_warnings, ridges_of_map, settings_warnings, transport_defaults, TransportSettings,
};
use crate::io::write_npz;
use crate::lagrangian::{ftle_rows, GriddedField};
use crate::render::{image_extent, mask_rgba, velocity_arrows, ColorRange, Colormap, TransportMap};
use js_sys::{Float32Array, Object, Reflect, Uint8Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;

fn settings(json: &str) -> Result<TransportSettings, JsError> {
    TransportSettings::from_json(json).map_err(js_error)
}

fn map(id: &str) -> Result<TransportMap, JsError> {
    id.parse().map_err(js_error)
}

fn set(obj: &Object, key: &str, value: &JsValue) -> Result<(), JsError> {
    Reflect::set(obj, &JsValue::from_str(key), value)
        .map(|_| ())
        .map_err(|_| JsError::new(&format!("cannot set '{key}' on the result object")))
}

#[derive(Serialize)]
struct GridInfo {
    nx: usize,
    ny: usize,
    /// `[start, step]` of each axis.
    x: [f64; 2],
    y: [f64; 2],
    /// `[x_min, x_max, y_min, y_max]` of the picture (cells centred on nodes).
    extent: [f64; 4],
}

#[derive(Serialize)]
struct Polylines {
    /// One flat `[x0, y0, x1, y1, …]` list per ridge, longest first.
    ridges: Vec<Vec<f64>>,
    lengths: Vec<f64>,
}

#[wasm_bindgen]
impl Dataset {
    /// The series as canonical `.npz` bytes (SI units), for workers to read once into their
    /// own `Dataset`: reading them back gives the same numbers.
    #[wasm_bindgen(js_name = canonicalNpz)]
    pub fn canonical_npz(&self) -> Vec<u8> {
        write_npz(self.series())
    }

    /// Transport settings derived from the data, as JSON
    /// `{settings, basis, period, notes}` (see `advice::transport_defaults`).
    #[wasm_bindgen(js_name = transportDefaults)]
    pub fn transport_defaults(&self) -> Result<String, JsError> {
        serde_json::to_string(&transport_defaults(self.series())).map_err(js_error)
    }

    /// Warnings about `settings` (JSON) before a run, as JSON `[{level, code, text}]`;
    /// level `refuse` means the run cannot start.
    #[wasm_bindgen(js_name = transportWarnings)]
    pub fn transport_warnings(&self, settings_json: &str) -> Result<String, JsError> {
        let list = match TransportSettings::from_json(settings_json) {
            Ok(s) => settings_warnings(self.series(), &s, Some(self.quality())),
            Err(e) => vec![crate::advice::Warning {
                level: crate::advice::Level::Refuse,
                code: "invalid_settings",
                text: e.to_string(),
            }],
        };
        serde_json::to_string(&list).map_err(js_error)
    }

    /// The tracer grid of `settings` as JSON `{nx, ny, x: [start, step], y, extent}`.
    #[wasm_bindgen(js_name = tracerGrid)]
    pub fn tracer_grid(&self, settings_json: &str) -> Result<String, JsError> {
        let g = settings(settings_json)?.tracer_grid(self.series()).map_err(js_error)?;
        let extent = image_extent(&crate::field::Grid { x: g.x, y: g.y });
        let info = GridInfo {
            nx: g.nx(),
            ny: g.ny(),
            x: [g.x.start, g.x.step],
            y: [g.y.start, g.y.step],
            extent,
        };
        serde_json::to_string(&info).map_err(js_error)
    }

    /// FTLE of rows `j0..j1` of the tracer grid of `settings` (JSON). Returns
    /// `{ftle: Float32Array, tau: Float32Array, flag: Uint8Array, info: JSON string}`, each
    /// map `(j1 − j0) × nx` row-major; `info` holds the row range and the counts.
    #[wasm_bindgen(js_name = ftleRows)]
    pub fn ftle_rows(&self, settings_json: &str, j0: usize, j1: usize) -> Result<Object, JsError> {
        let run = settings(settings_json)?.resolve(self.series()).map_err(js_error)?;
        let field = GriddedField::new(self.series(), run.space, run.time);
        let r = ftle_rows(&field, &run.grid, &run.options, j0, j1).map_err(js_error)?;
        let flag: Vec<u8> = r.flag.iter().map(|&f| f as u8).collect();
        let info = serde_json::json!({
            "j0": r.j0, "j1": r.j1, "nx": r.grid.nx(), "horizon": r.horizon, "stats": r.stats,
        });
        let out = Object::new();
        set(&out, "ftle", &Float32Array::from(r.ftle.as_slice()).into())?;
        set(&out, "tau", &Float32Array::from(r.tau.as_slice()).into())?;
        set(&out, "flag", &Uint8Array::from(flag.as_slice()).into())?;
        set(&out, "info", &JsValue::from_str(&info.to_string()))?;
        Ok(out)
    }

    /// Ridges of an assembled FTLE map (`ftle`, `flag`: the whole tracer grid of
    /// `settings`) as JSON `{ridges: [[x0, y0, x1, y1, …], …], lengths}`, longest first.
    #[wasm_bindgen(js_name = ftleRidges)]
    pub fn ftle_ridges(
        &self,
        settings_json: &str,
        ftle: &[f32],
        flag: &[u8],
    ) -> Result<String, JsError> {
        let s = settings(settings_json)?;
        let ridges = ridges_of_map(self.series(), &s, ftle, flag).map_err(js_error)?;
        let lines = Polylines {
            lengths: ridges.iter().map(|r| r.length()).collect(),
            ridges: ridges.iter().map(|r| r.points.iter().flat_map(|p| *p).collect()).collect(),
        };
        serde_json::to_string(&lines).map_err(js_error)
    }

    /// Unit label of the computed map `id` (`ftle`, `exit_time`) in this series' units.
    #[wasm_bindgen(js_name = transportUnit)]
    pub fn transport_unit(&self, id: &str) -> Result<String, JsError> {
        Ok(map(id)?.unit(self.series().units()))
    }

    /// Velocity arrows of snapshot `k`, about `across` along the longer side: flat
    /// `[x, y, dx, dy, …]` in the series' coordinates.
    #[wasm_bindgen(js_name = velocityArrows)]
    pub fn velocity_arrows(&self, k: usize, across: usize) -> Result<Vec<f32>, JsError> {
        velocity_arrows(self.series(), k, across).map_err(js_error)
    }
}

#[derive(Serialize)]
struct MapInfo {
    id: &'static str,
    label: &'static str,
    colormap: &'static str,
}

/// The maps a transport run produces, as JSON `[{id, label, colormap}]`.
#[wasm_bindgen(js_name = transportMaps)]
pub fn transport_maps() -> Result<String, JsError> {
    let list: Vec<MapInfo> = TransportMap::ALL
        .iter()
        .map(|&m| MapInfo { id: m.id(), label: m.label(), colormap: m.colormap().name() })
        .collect();
    serde_json::to_string(&list).map_err(js_error)
}

/// Default colour range `[lo, hi]` of map `id` from its values, flags and horizon.
#[wasm_bindgen(js_name = transportRange)]
pub fn transport_range(
    id: &str,
    values: &[f32],
    flags: &[u8],
    horizon: f64,
) -> Result<Vec<f64>, JsError> {
    let (lo, hi) = map(id)?.default_range(values, flags, horizon);
    Ok(vec![lo, hi])
}

/// RGBA picture (`4·nx·ny` bytes, first row = largest y) of map `id` over `[lo, hi]`.
#[wasm_bindgen(js_name = transportImage)]
#[allow(clippy::too_many_arguments)]
pub fn transport_image(
    id: &str,
    values: &[f32],
    flags: &[u8],
    nx: usize,
    ny: usize,
    lo: f64,
    hi: f64,
    colormap: Option<String>,
) -> Result<Vec<u8>, JsError> {
    let m = map(id)?;
    let range = ColorRange::new(lo, hi).map_err(js_error)?;
    let kind = match colormap {
        Some(c) => c.parse().map_err(|e: String| JsError::new(&e))?,
        None => m.colormap(),
    };
    m.image(values, flags, nx, ny, range, Colormap::get(kind), mask_rgba()).map_err(js_error)
}

/// Warnings about a finished run from its assembled status map, as JSON
/// `[{level, code, text}]`.
#[wasm_bindgen(js_name = transportRunWarnings)]
pub fn transport_run_warnings(flags: &[u8]) -> Result<String, JsError> {
    serde_json::to_string(&result_warnings(flags)).map_err(js_error)
}

/// Panics on purpose: lets the browser tests check that a panic inside a worker reaches
/// the page as a readable message. Never called by the page itself.
#[wasm_bindgen(js_name = selfTestPanic)]
pub fn self_test_panic() {
    panic!("deliberate panic requested by a self-test");
}
