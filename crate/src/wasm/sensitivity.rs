//! Sensitivity bindings: a selection of modes materialized as a series (the model flow f,
//! the perturbation g) in canonical `.npz` bytes for the workers, row ranges of a
//! sensitivity run on (f, g), the checks before a run and the warnings after it, the
//! pictures and colour ranges of the maps, the normalisation of σ_MS and the agreement of ζ
//! with the brute-force Δσ. Settings travel as JSON `{transport, epsilon, g_ref}` where
//! `transport` is the FTLE panel's [`TransportSettings`]; every number is computed by the
//! core.

use super::js_error;
use super::Dataset;
use crate::advice::{result_warnings, settings_warnings, IntegratorChoice, Level, Warning};
use crate::advice::{AdviceError, TransportSettings};
use crate::field::{Grid, Series};
use crate::io::{write_npz, MapFormat, ScalarMap};
use crate::lagrangian::FtleFlag;
use crate::modes::{SelectOptions, Selection};
use crate::render::format::format_sig;
use crate::render::{mask_rgba, ColorRange, Colormap, SensitivityMap};
use crate::sensitivity::{
    prepare, sensitivity_npz, zeta_agreement, SensitivityError, SensitivityResult, SensitivityRows,
    SensitivitySpec, SensitivityStats, NORMALISATION,
};
use js_sys::{Float32Array, Object, Reflect, Uint8Array};
use serde::{Deserialize, Serialize};
use wasm_bindgen::prelude::*;

/// One sensitivity run as the page describes it.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct Job {
    transport: TransportSettings,
    /// ε of the brute-force Δσ (absent: no Δσ).
    #[serde(default)]
    epsilon: Option<f64>,
    /// Reference speed of g in the series' velocity unit (absent: RMS of |g|).
    #[serde(default)]
    g_ref: Option<f64>,
}

fn job(json: &str) -> Result<Job, String> {
    serde_json::from_str(json).map_err(|e| format!("the sensitivity settings are not valid: {e}"))
}

/// The spec of `job` on the model flow `f`: RK4 only, the FTLE panel's grid and options.
fn spec(f: &Series, job: &Job) -> Result<SensitivitySpec, String> {
    if job.transport.integrator != IntegratorChoice::Rk4 {
        return Err(SensitivityError::NeedsFixedStep.to_string());
    }
    let run = job.transport.resolve(f).map_err(|e: AdviceError| e.to_string())?;
    Ok(SensitivitySpec {
        advect: run.options.advect,
        grid: run.grid,
        space: run.space,
        time: run.time,
        g_ref: job.g_ref,
        epsilon: job.epsilon,
    })
}

fn set(obj: &Object, key: &str, value: &JsValue) -> Result<(), JsError> {
    Reflect::set(obj, &JsValue::from_str(key), value)
        .map(|_| ())
        .map_err(|_| JsError::new(&format!("cannot set '{key}' on the result object")))
}

fn map(id: &str) -> Result<SensitivityMap, JsError> {
    id.parse().map_err(js_error)
}

#[wasm_bindgen]
impl Dataset {
    /// The selection `text` ("mean + pod(1-2)", see `sillage select`) materialized on this
    /// series, as canonical `.npz` bytes (SI units) for the page and its workers.
    #[wasm_bindgen(js_name = selectionNpz)]
    pub fn selection_npz(&self, text: &str) -> Result<Vec<u8>, JsError> {
        let sel = Selection::parse(text).map_err(js_error)?;
        let series = sel.materialize(self.series(), &SelectOptions::default()).map_err(js_error)?;
        Ok(write_npz(&series))
    }

    /// Map `id` of a sensitivity run (`ms`, `ms_g`, `strain_bound`, `xi`, `xi_x`, `xi_y`,
    /// `ftle`, `sigma_ms`, `zeta`, `delta_ftle`) with transport `settings` (JSON), its
    /// assembled `values` and status `flags`, as a file in `format` (`npy`, `npz`, `csv`,
    /// `vti`): the run's tracer grid, the map's unit, t₀; nodes without a value are NaN.
    #[wasm_bindgen(js_name = exportSensitivity)]
    pub fn export_sensitivity(
        &self,
        id: &str,
        settings_json: &str,
        values: &[f32],
        flags: &[u8],
        format_name: &str,
    ) -> Result<Vec<u8>, JsError> {
        let fmt: MapFormat = format_name.parse().map_err(|e: String| JsError::new(&e))?;
        let m = map(id)?;
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
        let units = self.series().units();
        let unit = m.unit(units);
        let valid = m.valid(flags);
        let out = ScalarMap {
            grid: &grid,
            name: m.id(),
            unit: &unit,
            units,
            time: Some(settings.t0),
            values,
            valid: &valid,
        };
        Ok(out.write(fmt))
    }

    /// Every map of a sensitivity run as one `.npz`, the layout `sillage sensitivity --out`
    /// writes ([`sensitivity_npz`]): `settings` is the run's JSON `{transport, epsilon?,
    /// g_ref?}`, `g_ref` the reference speed it used (m/s), `arrays` the assembled maps as
    /// the workers return them (`ms`, `ms_g`, `strain_bound`, `xi`, `xi_x`, `xi_y`, `ftle`,
    /// `sigma_ms`, `zeta`, `tau`, `det_deviation`: Float32Array; `flag`: Uint8Array;
    /// `delta_ftle` when ε was given).
    #[wasm_bindgen(js_name = sensitivityNpz)]
    pub fn sensitivity_npz(
        &self,
        settings_json: &str,
        g_ref: f64,
        arrays: &Object,
    ) -> Result<Vec<u8>, JsError> {
        let job = job(settings_json).map_err(|e| JsError::new(&e))?;
        let run = job.transport.resolve(self.series()).map_err(js_error)?;
        let n = run.grid.nx() * run.grid.ny();
        let get = |name: &str| -> Result<Option<JsValue>, JsError> {
            let v = Reflect::get(arrays, &JsValue::from_str(name))
                .map_err(|_| JsError::new(&format!("cannot read map '{name}'")))?;
            Ok(if v.is_undefined() || v.is_null() { None } else { Some(v) })
        };
        let floats = |name: &str| -> Result<Option<Vec<f32>>, JsError> {
            let Some(v) = get(name)? else { return Ok(None) };
            let a: Float32Array = v
                .dyn_into()
                .map_err(|_| JsError::new(&format!("map '{name}' is not a Float32Array")))?;
            if a.length() as usize != n {
                return Err(JsError::new(&format!(
                    "map '{name}' has {} values for a {} × {} tracer grid",
                    a.length(),
                    run.grid.nx(),
                    run.grid.ny()
                )));
            }
            Ok(Some(a.to_vec()))
        };
        let need = |name: &str| -> Result<Vec<f32>, JsError> {
            floats(name)?.ok_or_else(|| JsError::new(&format!("the run has no map '{name}'")))
        };
        let flag_bytes: Uint8Array = get("flag")?
            .ok_or_else(|| JsError::new("the run has no status map 'flag'"))?
            .dyn_into()
            .map_err(|_| JsError::new("the status map 'flag' is not a Uint8Array"))?;
        if flag_bytes.length() as usize != n {
            return Err(JsError::new("the status map 'flag' does not fit the tracer grid"));
        }
        let flag = flag_bytes
            .to_vec()
            .into_iter()
            .map(|f| match f {
                0 => Ok(FtleFlag::Full),
                1 => Ok(FtleFlag::Exited),
                2 => Ok(FtleFlag::Short),
                3 => Ok(FtleFlag::Masked),
                4 => Ok(FtleFlag::NoValue),
                other => Err(JsError::new(&format!("unknown status {other} in 'flag'"))),
            })
            .collect::<Result<Vec<_>, _>>()?;
        let maps = SensitivityRows {
            grid: run.grid,
            j0: 0,
            j1: run.grid.ny(),
            horizon: run.options.advect.horizon,
            g_ref,
            ms: need("ms")?,
            ms_g: need("ms_g")?,
            strain_bound: need("strain_bound")?,
            xi: need("xi")?,
            xi_x: need("xi_x")?,
            xi_y: need("xi_y")?,
            ftle: need("ftle")?,
            sigma_ms: need("sigma_ms")?,
            zeta: need("zeta")?,
            tau: need("tau")?,
            det_deviation: need("det_deviation")?,
            flag,
            stats: SensitivityStats::default(),
        };
        let result = SensitivityResult {
            maps,
            delta_ftle: floats("delta_ftle")?,
            epsilon: job.epsilon,
            ridges: Vec::new(),
        };
        Ok(sensitivity_npz(&result, run.options.advect.t0, &self.series().units()))
    }

    /// Unit label of sensitivity map `id` in this series' units.
    #[wasm_bindgen(js_name = sensitivityUnit)]
    pub fn sensitivity_unit(&self, id: &str) -> Result<String, JsError> {
        Ok(map(id)?.unit(self.series().units()))
    }
}

/// Sensitivity maps of rows `j0..j1` for the model flow `f` and perturbation `g` (the same
/// grid and times), with settings JSON `{transport, epsilon?, g_ref?}`. Returns
/// `{ms, ms_g, strain_bound, xi, xi_x, xi_y, ftle, sigma_ms, zeta, tau, det_deviation:
/// Float32Array, flag: Uint8Array, delta_ftle (when ε is given), info: JSON string}`, each
/// `(j1 − j0) × nx` row-major; `info` holds the row range, g_ref and the counts.
#[wasm_bindgen(js_name = sensitivityRows)]
pub fn sensitivity_rows(
    f: &Dataset,
    g: &Dataset,
    settings_json: &str,
    j0: usize,
    j1: usize,
) -> Result<Object, JsError> {
    let job = job(settings_json).map_err(|e| JsError::new(&e))?;
    let spec = spec(f.series(), &job).map_err(|e| JsError::new(&e))?;
    let plan = prepare(f.series(), g.series(), &spec).map_err(js_error)?;
    let r = plan.rows(j0, j1).map_err(js_error)?;
    let delta = plan.delta_rows(j0, j1).map_err(js_error)?;
    let out = Object::new();
    for (name, values) in r.maps() {
        set(&out, name, &Float32Array::from(values).into())?;
    }
    let flag: Vec<u8> = r.flag.iter().map(|&f| f as u8).collect();
    set(&out, "flag", &Uint8Array::from(flag.as_slice()).into())?;
    if let Some(d) = delta {
        set(&out, "delta_ftle", &Float32Array::from(d.as_slice()).into())?;
    }
    let info = serde_json::json!({
        "j0": r.j0, "j1": r.j1, "nx": r.grid.nx(), "horizon": r.horizon, "g_ref": r.g_ref,
        "stats": r.stats,
    });
    set(&out, "info", &JsValue::from_str(&info.to_string()))?;
    Ok(out)
}

#[derive(Serialize)]
struct Check {
    warnings: Vec<Warning>,
    /// The reference speed the run will use (velocity unit), when it can start.
    g_ref: Option<f64>,
    /// The same, as text with its unit.
    g_ref_text: Option<String>,
}

/// Checks a sensitivity run before it starts, as JSON `{warnings: [{level, code, text}],
/// g_ref, g_ref_text}`: the FTLE panel's checks on `data` (horizon beyond the record, tracer
/// grid, step), RK4 only, and what [`prepare`] refuses (g_ref zero, bad ε). A `refuse`
/// warning means the run cannot start.
#[wasm_bindgen(js_name = sensitivityCheck)]
pub fn sensitivity_check(
    data: &Dataset,
    f: &Dataset,
    g: &Dataset,
    settings_json: &str,
) -> Result<String, JsError> {
    let refuse = |code, text: String| Warning { level: Level::Refuse, code, text };
    let mut check = Check { warnings: Vec::new(), g_ref: None, g_ref_text: None };
    match job(settings_json) {
        Err(e) => check.warnings.push(refuse("invalid_settings", e)),
        Ok(job) => {
            check.warnings = settings_warnings(data.series(), &job.transport, None);
            if job.transport.integrator != IntegratorChoice::Rk4 {
                check.warnings.push(refuse(
                    "needs_rk4",
                    "Sensitivity integrates with fixed-step RK4 (its equal steps are the \
                     quadrature nodes of MS), but the transport panel is set to \
                     Dormand–Prince: choose RK4 there and a step."
                        .into(),
                ));
            } else if !check.warnings.iter().any(|w| w.level == Level::Refuse) {
                let prepared = spec(f.series(), &job)
                    .and_then(|s| prepare(f.series(), g.series(), &s).map_err(|e| e.to_string()));
                match prepared {
                    Ok(plan) => {
                        let v = plan.options.g_ref;
                        let unit = data.series().units().velocity_label();
                        check.g_ref = Some(v);
                        check.g_ref_text = Some(format!("{} {unit}", format_sig(v, 4)));
                    }
                    Err(e) => {
                        let code = if e.contains("g_ref") { "g_ref_zero" } else { "cannot_start" };
                        check.warnings.push(refuse(code, capitalise(&e)));
                    }
                }
            }
        }
    }
    serde_json::to_string(&check).map_err(js_error)
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(first) => first.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// Warnings about a finished run from its status map and MS_g, as JSON `[{level, code,
/// text}]`: tracers that left the window, and nodes where g vanished along the whole
/// trajectory (σ_MS and ζ hold 0 there).
#[wasm_bindgen(js_name = sensitivityRunWarnings)]
pub fn sensitivity_run_warnings(flags: &[u8], ms_g: &[f32]) -> Result<String, JsError> {
    let mut list = result_warnings(flags);
    let zero = flags.iter().zip(ms_g).filter(|(&f, &m)| f <= 2 && m == 0.0).count();
    if zero > 0 {
        list.push(Warning {
            level: Level::Note,
            code: "zero_perturbation",
            text: format!(
                "At {zero} tracers the perturbation g is zero along the whole trajectory \
                 (MS_g = 0): σ_MS and ζ hold 0 there."
            ),
        });
    }
    serde_json::to_string(&list).map_err(js_error)
}

#[derive(Serialize)]
struct MapInfo {
    id: &'static str,
    label: &'static str,
    colormap: &'static str,
    /// Shown with the normalisation of σ_MS.
    normalised: bool,
    /// How the colour range was chosen.
    range_note: &'static str,
}

/// The maps of a sensitivity run, as JSON `[{id, label, colormap, normalised,
/// range_note}]` in menu order.
#[wasm_bindgen(js_name = sensitivityMaps)]
pub fn sensitivity_maps() -> Result<String, JsError> {
    let list: Vec<MapInfo> = SensitivityMap::ALL
        .iter()
        .map(|&m| MapInfo {
            id: m.id(),
            label: m.label(),
            colormap: m.colormap().name(),
            normalised: m.needs_normalisation(),
            range_note: m.range_note(),
        })
        .collect();
    serde_json::to_string(&list).map_err(js_error)
}

/// How σ_MS and ζ are normalised (shown with every ζ and σ_MS view).
#[wasm_bindgen(js_name = sensitivityNormalisation)]
pub fn sensitivity_normalisation() -> String {
    NORMALISATION.into()
}

/// Default colour range `[lo, hi]` of map `id` from its values and status map.
#[wasm_bindgen(js_name = sensitivityRange)]
pub fn sensitivity_range(id: &str, values: &[f32], flags: &[u8]) -> Result<Vec<f64>, JsError> {
    let (lo, hi) = map(id)?.default_range(values, flags);
    Ok(vec![lo, hi])
}

/// RGBA picture (`4·nx·ny` bytes, first row = largest y) of map `id` over `[lo, hi]`.
#[wasm_bindgen(js_name = sensitivityImage)]
#[allow(clippy::too_many_arguments)]
pub fn sensitivity_image(
    id: &str,
    values: &[f32],
    flags: &[u8],
    nx: usize,
    ny: usize,
    lo: f64,
    hi: f64,
) -> Result<Vec<u8>, JsError> {
    let m = map(id)?;
    let range = ColorRange::new(lo, hi).map_err(js_error)?;
    m.image(values, flags, nx, ny, range, Colormap::get(m.colormap()), mask_rgba())
        .map_err(js_error)
}

/// Correlations of ζ with Δσ over the fully integrated nodes, as JSON `{nodes, pearson,
/// pearson_abs, spearman_abs}` (null where undefined).
#[wasm_bindgen(js_name = sensitivityAgreement)]
pub fn sensitivity_agreement(zeta: &[f32], delta: &[f32], flags: &[u8]) -> Result<String, JsError> {
    serde_json::to_string(&zeta_agreement(zeta, delta, flags)).map_err(js_error)
}
