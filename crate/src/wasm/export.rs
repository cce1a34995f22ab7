//! Export bindings: the map shown on the page as file bytes (`.npy`, `.npz`, `.csv`,
//! `.vti`), written by [`crate::io::ScalarMap`]. The page only wraps the bytes in a Blob.

use super::js_error;
use super::Dataset;
use crate::advice::TransportSettings;
use crate::field::Grid;
use crate::io::{MapFormat, ScalarMap};
use crate::modes::{pod, PodOptions, ReducedModel};
use crate::render::{Quantity, TransportMap};
use wasm_bindgen::prelude::*;

fn format(name: &str) -> Result<MapFormat, JsError> {
    name.parse().map_err(|e: String| JsError::new(&e))
}

#[wasm_bindgen]
impl Dataset {
    /// Field `quantity` (`speed`, `vorticity`) of snapshot `k` as a file in `format`
    /// (`npy`, `npz`, `csv`, `vti`), with the grid, the units and the snapshot time.
    #[wasm_bindgen(js_name = exportField)]
    pub fn export_field(
        &self,
        quantity: &str,
        k: usize,
        format_name: &str,
    ) -> Result<Vec<u8>, JsError> {
        let fmt = format(format_name)?;
        let q: Quantity = quantity.parse().map_err(js_error)?;
        let s = self.series();
        let values = q.compute(s, k).map_err(js_error)?;
        let valid: Vec<bool> = s.mask().iter().map(|&m| !m).collect();
        let unit = q.unit(s.units());
        let map = ScalarMap {
            grid: s.grid(),
            name: q.id(),
            unit: &unit,
            units: s.units(),
            time: Some(s.times()[k]),
            values: &values,
            valid: &valid,
        };
        Ok(map.write(fmt))
    }

    /// Computed map `id` (`ftle`, `exit_time`) of a transport run with `settings` (JSON),
    /// its assembled `values` and status `flags`, as a file in `format`; the grid is the
    /// run's tracer grid, the time is t₀, nodes without a value are NaN.
    #[wasm_bindgen(js_name = exportTransport)]
    pub fn export_transport(
        &self,
        id: &str,
        settings_json: &str,
        values: &[f32],
        flags: &[u8],
        format_name: &str,
    ) -> Result<Vec<u8>, JsError> {
        let fmt = format(format_name)?;
        let m: TransportMap = id.parse().map_err(js_error)?;
        let settings = TransportSettings::from_json(settings_json).map_err(js_error)?;
        let tracers = settings.tracer_grid(self.series()).map_err(js_error)?;
        let grid = Grid { x: tracers.x, y: tracers.y };
        if values.len() != grid.len() || flags.len() != grid.len() {
            return Err(JsError::new(&format!(
                "the {} map has {} values and {} flags for a {} × {} tracer grid",
                m.label(),
                values.len(),
                flags.len(),
                grid.nx(),
                grid.ny()
            )));
        }
        let unit = m.unit(self.series().units());
        let valid = m.valid(flags);
        let map = ScalarMap {
            grid: &grid,
            name: m.id(),
            unit: &unit,
            units: self.series().units(),
            time: Some(settings.t0),
            values,
            valid: &valid,
        };
        Ok(map.write(fmt))
    }

    /// A reduced model of this series as `.npz` bytes: the time mean, the first `k` POD
    /// modes and their coefficients (`crate::modes::reduced`); fewer modes when the data
    /// have fewer.
    #[wasm_bindgen(js_name = reducedModelNpz)]
    pub fn reduced_model_npz(&self, k: usize) -> Result<Vec<u8>, JsError> {
        let p = pod(self.series(), &PodOptions { rank: Some(k), ..PodOptions::default() })
            .map_err(js_error)?;
        let model = ReducedModel::from_pod(self.series(), &p, k.min(p.rank())).map_err(js_error)?;
        Ok(model.to_npz())
    }

    /// The flow a reduced model file (`name`, `.npz` bytes) stands for, as a dataset.
    #[wasm_bindgen(js_name = fromReducedModel)]
    pub fn from_reduced_model(name: String, bytes: &[u8]) -> Result<Dataset, JsError> {
        let model = ReducedModel::from_npz(bytes).map_err(js_error)?;
        let series = model.to_series().map_err(js_error)?;
        let label = format!("{name} (reduced model: mean + {} POD modes)", model.modes());
        Ok(Dataset::from_series(series, vec![label]))
    }
}

/// Whether `bytes` look like a reduced model file (a quick look at the archive's member
/// names; opening it checks everything).
#[wasm_bindgen(js_name = isReducedModel)]
pub fn is_reduced_model(bytes: &[u8]) -> bool {
    ReducedModel::looks_like(bytes)
}
