//! Display helpers that do not need a dataset: colour tables, ticks, the list of fields.

use super::js_error;
use crate::render::format::format_sig;
use crate::render::{mask_rgba, nice_ticks, Colormap, ColormapKind, Quantity};
use serde::Serialize;
use wasm_bindgen::prelude::*;

/// The 256 RGBA entries (1024 bytes) of colour map `name` (`tide`, `eddy`), low end first.
#[wasm_bindgen(js_name = colormapRgba)]
pub fn colormap_rgba(name: &str) -> Result<Vec<u8>, JsError> {
    let kind: ColormapKind = name.parse().map_err(js_error)?;
    Ok(Colormap::get(kind).rgba().concat())
}

/// `value` to `digits` significant digits, as every label of the page writes numbers.
#[wasm_bindgen(js_name = formatNumber)]
pub fn format_number(value: f64, digits: usize) -> String {
    format_sig(value, digits)
}

/// RGBA of the grey drawn where there is no data.
#[wasm_bindgen(js_name = maskColor)]
pub fn mask_color() -> Vec<u8> {
    mask_rgba().to_vec()
}

/// Ticks for a range as JSON: `{ticks: [{value, frac, label}], exponent, scale}`.
#[wasm_bindgen]
pub fn ticks(lo: f64, hi: f64, target: usize) -> Result<String, JsError> {
    let t = nice_ticks(lo, hi, target).map_err(js_error)?;
    serde_json::to_string(&t).map_err(js_error)
}

#[derive(Serialize)]
struct QuantityInfo {
    id: &'static str,
    label: &'static str,
    signed: bool,
    colormap: &'static str,
}

/// The fields that can be drawn, as JSON `[{id, label, signed, colormap}]`, in menu order.
#[wasm_bindgen]
pub fn quantities() -> Result<String, JsError> {
    let list: Vec<QuantityInfo> = Quantity::ALL
        .iter()
        .map(|&q| QuantityInfo {
            id: q.id(),
            label: q.label(),
            signed: q.is_signed(),
            colormap: q.colormap().name(),
        })
        .collect();
    serde_json::to_string(&list).map_err(js_error)
}
