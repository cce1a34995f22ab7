//! Tracer transport compiled to WebAssembly for timing in Node
//! (tests/bench/transport_wasm.mjs, run by tests/bench/run-transport.sh).
//!
//! Built as a cdylib for wasm32 (`cargo rustc --example transport_wasm --target
//! wasm32-unknown-unknown --no-default-features --release`), with plain C-ABI exports and
//! no wasm-bindgen glue, loaded through Node's WebAssembly API, which does the timing:
//! `bench_alloc(len) → ptr` for the file bytes, `bench_load(ptr, len) → 0 | error length`
//! parses them, `bench_flow_map` / `bench_ftle` run one computation of
//! [`common::Problem`] and return the number of tracer-steps, `bench_checksum` the sum of
//! the last run's final coordinates (flow map) or FTLE values, to compare with the native
//! run of transport_bench.rs. Natively it builds too (and is not used).

#[path = "transport_common/mod.rs"]
mod common;

use common::{checksum, Problem};
use sillage::field::Series;
use sillage::io::{read_series, NamedBytes, ReadOptions};
use std::sync::Mutex;

static DATA: Mutex<Option<Series>> = Mutex::new(None);
static CHECKSUM: Mutex<f64> = Mutex::new(f64::NAN);
static MESSAGE: Mutex<Vec<u8>> = Mutex::new(Vec::new());

fn problem(nx: u32, ny: u32, t0: f64, horizon: f64, step: f64) -> Problem {
    Problem { nx: nx as usize, ny: ny as usize, t0, horizon, step }
}

fn fail(message: String) -> f64 {
    *MESSAGE.lock().unwrap() = message.into_bytes();
    -1.0
}

/// A buffer of `len` bytes owned by JavaScript until passed to [`bench_load`].
#[no_mangle]
pub extern "C" fn bench_alloc(len: usize) -> *mut u8 {
    let mut v = vec![0u8; len];
    let p = v.as_mut_ptr();
    std::mem::forget(v);
    p
}

/// Parses the .npz bytes at `ptr` (from [`bench_alloc`], consumed here). Returns 0, or
/// the length of an error message readable at [`bench_message`].
///
/// # Safety
/// `ptr` and `len` must come from one call of [`bench_alloc`].
#[no_mangle]
pub unsafe extern "C" fn bench_load(ptr: *mut u8, len: usize) -> usize {
    // SAFETY: the caller passes back the allocation of `bench_alloc(len)`.
    let bytes = unsafe { Vec::from_raw_parts(ptr, len, len) };
    match read_series(&[NamedBytes::new("data.npz", bytes)], &ReadOptions::default()) {
        Ok(s) => {
            *DATA.lock().unwrap() = Some(s);
            0
        }
        Err(e) => {
            fail(e.to_string());
            MESSAGE.lock().unwrap().len()
        }
    }
}

/// Address of the last error message (UTF-8).
#[no_mangle]
pub extern "C" fn bench_message() -> *const u8 {
    MESSAGE.lock().unwrap().as_ptr()
}

/// One flow map of the loaded series; returns tracer-steps (−1 on error).
#[no_mangle]
pub extern "C" fn bench_flow_map(nx: u32, ny: u32, t0: f64, horizon: f64, step: f64) -> f64 {
    let guard = DATA.lock().unwrap();
    let Some(series) = guard.as_ref() else {
        return fail("no data loaded".into());
    };
    match problem(nx, ny, t0, horizon, step).flow_map(series) {
        Ok(fm) => {
            *CHECKSUM.lock().unwrap() = checksum(&fm);
            (fm.rhs_calls / 4) as f64
        }
        Err(e) => fail(e),
    }
}

/// One variational FTLE map of the loaded series; returns tracer-steps (−1 on error).
#[no_mangle]
pub extern "C" fn bench_ftle(nx: u32, ny: u32, t0: f64, horizon: f64, step: f64) -> f64 {
    let guard = DATA.lock().unwrap();
    let Some(series) = guard.as_ref() else {
        return fail("no data loaded".into());
    };
    match problem(nx, ny, t0, horizon, step).ftle(series) {
        Ok((steps, sum)) => {
            *CHECKSUM.lock().unwrap() = sum;
            steps as f64
        }
        Err(e) => fail(e),
    }
}

/// Fingerprint of the last run (Σ(x + y) of a flow map, Σσ of an FTLE map).
#[no_mangle]
pub extern "C" fn bench_checksum() -> f64 {
    *CHECKSUM.lock().unwrap()
}
