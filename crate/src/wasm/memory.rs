//! The memory estimate before reading files ([`crate::memory`], [`crate::io::probe`]): the
//! page passes what it has read of each file and gets back the ranges still needed and the
//! estimate with its verdict.

use super::js_error;
use crate::io::probe::{probe, FileSketch, Piece};
use crate::memory::{estimate_load, Hints, LoadEstimate};
use js_sys::{Array, Uint8Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;

#[derive(Serialize)]
struct Need {
    file: usize,
    offset: u64,
    length: u64,
}

#[derive(Serialize)]
struct Answer {
    /// Byte ranges to read before asking again (empty: the estimate is final).
    need: Vec<Need>,
    estimate: LoadEstimate,
}

/// Estimates the memory of reading files `names` of `sizes` bytes from the pieces read so
/// far: piece `k` is `pieceBytes[k]` (a `Uint8Array`) at `pieceOffsets[k]` of file
/// `pieceFiles[k]`. `hints` is JSON `{device_memory_gib?, heap_limit?, limit?, workers}`.
/// Returns JSON `{need: [{file, offset, length}], estimate}` (see `memory::LoadEstimate`).
#[wasm_bindgen(js_name = memoryEstimate)]
pub fn memory_estimate(
    names: Array,
    sizes: Vec<f64>,
    piece_files: Vec<u32>,
    piece_offsets: Vec<f64>,
    piece_bytes: Array,
    hints: &str,
) -> Result<String, JsError> {
    let hints: Hints = serde_json::from_str(hints)
        .map_err(|e| JsError::new(&format!("the device hints are not valid: {e}")))?;
    if names.length() as usize != sizes.len()
        || piece_files.len() != piece_offsets.len()
        || piece_files.len() != piece_bytes.length() as usize
    {
        return Err(JsError::new("memoryEstimate: the lists of files and pieces differ in length"));
    }
    let mut files: Vec<FileSketch> = names
        .iter()
        .zip(&sizes)
        .map(|(n, &s)| FileSketch {
            name: n.as_string().unwrap_or_default(),
            size: s as u64,
            pieces: vec![],
        })
        .collect();
    for ((&f, &o), b) in piece_files.iter().zip(&piece_offsets).zip(piece_bytes.iter()) {
        let bytes = b
            .dyn_into::<Uint8Array>()
            .map_err(|_| JsError::new("memoryEstimate: a piece is not a Uint8Array"))?;
        let file = files
            .get_mut(f as usize)
            .ok_or_else(|| JsError::new("memoryEstimate: a piece names no file"))?;
        file.pieces.push(Piece { offset: o as u64, bytes: bytes.to_vec() });
    }
    let mut need = Vec::new();
    let mut looks = Vec::with_capacity(files.len());
    for (k, f) in files.iter().enumerate() {
        let p = probe(f);
        need.extend(p.need.into_iter().map(|(offset, length)| Need { file: k, offset, length }));
        looks.push((f.size, p.look));
    }
    let answer = Answer { need, estimate: estimate_load(&looks, &hints) };
    serde_json::to_string(&answer).map_err(js_error)
}
