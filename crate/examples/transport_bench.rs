//! Timing harness for tracer transport, built both natively and for wasm32, so the two
//! run the very same core calls on the very same problem (tests/bench/run-transport.sh).
//!
//! Native: `transport_bench DATA.npz NX NY T0 HORIZON STEP REPEATS [--positions OUT.npz]`
//! times the flow map (RK4, bilinear, linear in time, tracers stop at the data edge) and
//! the variational FTLE of an NX×NY tracer grid over the data window on one thread, best
//! of REPEATS runs after one warm-up run, and prints one JSON line per kind. With
//! `--positions` it also writes the flow map's final positions, exit times and status, so
//! tests/bench/transport_numpy.py can check that it solved the same problem.
//!
//! wasm32: built as a cdylib with C-ABI exports (no wasm-bindgen), loaded by
//! tests/bench/transport_wasm.mjs through Node's WebAssembly API, which does the timing:
//! `bench_alloc(len) → ptr` for the file bytes, `bench_load(ptr, len) → 0 | error length`
//! parses them, `bench_flow_map` / `bench_ftle` run one computation and return the number
//! of tracer-steps, `bench_checksum` the sum of the last run's final coordinates (flow map)
//! or FTLE values, to compare with the native run.
//!
//! A tracer-step is one RK4 step of one tracer, counted from the engine's tally of
//! velocity evaluations (÷ 4): tracers that leave the window stop early, and the steps
//! that locate an exit are counted too.

use sillage::field::Series;
use sillage::lagrangian::{
    flow_map_rows, ftle_rows, AdvectOptions, BoundaryPolicy, FlowMapRows, FtleOptions,
    GradientRoute, GriddedField, Integrator, SpaceInterp, TimeInterp, TracerGrid,
};

/// One benchmark problem on a loaded series.
#[derive(Debug, Clone, Copy)]
struct Problem {
    nx: usize,
    ny: usize,
    t0: f64,
    horizon: f64,
    step: f64,
}

impl Problem {
    fn advect(&self) -> AdvectOptions {
        AdvectOptions {
            t0: self.t0,
            horizon: self.horizon,
            integrator: Integrator::Rk4 {
                max_step: self.step,
            },
            boundary: BoundaryPolicy::Stop,
        }
    }

    fn grid(&self, field: &GriddedField) -> Result<TracerGrid, String> {
        TracerGrid::over_window(field, self.nx, self.ny).map_err(|e| e.to_string())
    }

    /// The flow map of the whole grid on the calling thread.
    fn flow_map(&self, series: &Series) -> Result<FlowMapRows, String> {
        let field = GriddedField::new(series, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = self.grid(&field)?;
        flow_map_rows(&field, &grid, &self.advect(), 0, grid.ny()).map_err(|e| e.to_string())
    }

    /// Variational FTLE of the whole grid on the calling thread: (tracer-steps, Σσ).
    fn ftle(&self, series: &Series) -> Result<(u64, f64), String> {
        let field = GriddedField::new(series, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = self.grid(&field)?;
        let o = FtleOptions {
            advect: self.advect(),
            route: GradientRoute::Variational,
        };
        let r = ftle_rows(&field, &grid, &o, 0, grid.ny()).map_err(|e| e.to_string())?;
        Ok((
            r.stats.rhs_calls / 4,
            r.ftle.iter().map(|&v| v as f64).sum(),
        ))
    }
}

/// Σ(x + y) over the final positions: a cheap fingerprint of a flow map.
fn checksum(fm: &FlowMapRows) -> f64 {
    fm.x.iter().zip(&fm.y).map(|(x, y)| x + y).sum()
}

#[cfg(target_arch = "wasm32")]
mod exports {
    use super::{checksum, Problem};
    use sillage::field::Series;
    use sillage::io::{read_series, NamedBytes, ReadOptions};
    use std::sync::Mutex;

    static DATA: Mutex<Option<Series>> = Mutex::new(None);
    static CHECKSUM: Mutex<f64> = Mutex::new(f64::NAN);
    static MESSAGE: Mutex<Vec<u8>> = Mutex::new(Vec::new());

    fn problem(nx: u32, ny: u32, t0: f64, horizon: f64, step: f64) -> Problem {
        Problem {
            nx: nx as usize,
            ny: ny as usize,
            t0,
            horizon,
            step,
        }
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
        let bytes = unsafe { Vec::from_raw_parts(ptr, len, len) };
        match read_series(
            &[NamedBytes::new("data.npz", bytes)],
            &ReadOptions::default(),
        ) {
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
}

#[cfg(not(target_arch = "wasm32"))]
fn main() -> Result<(), String> {
    use sillage::io::{read_paths, write_arrays_npz, NpyArray, NpyData, ReadOptions};
    use std::time::Instant;

    let args: Vec<String> = std::env::args().skip(1).collect();
    let usage = "usage: transport_bench DATA.npz NX NY T0 HORIZON STEP REPEATS \
                 [--positions OUT.npz]";
    if args.len() != 7 && !(args.len() == 9 && args[7] == "--positions") {
        return Err(usage.into());
    }
    let num = |i: usize| -> Result<f64, String> {
        args[i]
            .parse::<f64>()
            .map_err(|_| format!("argument {} '{}' is not a number; {usage}", i + 1, args[i]))
    };
    let p = Problem {
        nx: num(1)? as usize,
        ny: num(2)? as usize,
        t0: num(3)?,
        horizon: num(4)?,
        step: num(5)?,
    };
    let repeats = (num(6)? as usize).max(1);
    let series = read_paths(&[args[0].clone().into()], &ReadOptions::default())
        .map_err(|e| e.to_string())?;

    // Flow map: one warm-up run, then the best of `repeats`.
    let fm = p.flow_map(&series)?;
    let steps = fm.rhs_calls / 4;
    let mut times = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let again = p.flow_map(&series)?;
        times.push(start.elapsed().as_secs_f64());
        assert_eq!(again.rhs_calls, fm.rhs_calls);
    }
    report("flow_map", steps, checksum(&fm), &mut times);
    if let Some(path) = args.get(8) {
        let (nx, ny) = (p.nx, p.ny);
        let bytes = write_arrays_npz(&[
            NpyArray::new("x", vec![ny, nx], NpyData::F64(fm.x.clone())),
            NpyArray::new("y", vec![ny, nx], NpyData::F64(fm.y.clone())),
            NpyArray::new("tau", vec![ny, nx], NpyData::F64(fm.tau.clone())),
            NpyArray::new(
                "status",
                vec![ny, nx],
                NpyData::U8(fm.status.iter().map(|&s| s as u8).collect()),
            ),
        ]);
        std::fs::write(path, bytes).map_err(|e| format!("cannot write '{path}': {e}"))?;
    }

    let (steps, sum) = p.ftle(&series)?;
    let mut times = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        p.ftle(&series)?;
        times.push(start.elapsed().as_secs_f64());
    }
    report("ftle_variational", steps, sum, &mut times);
    Ok(())
}

/// One JSON line: kind, tracer-steps per run, best and median seconds, best rate.
#[cfg(not(target_arch = "wasm32"))]
fn report(kind: &str, steps: u64, checksum: f64, times: &mut [f64]) {
    times.sort_by(f64::total_cmp);
    let best = times[0];
    let median = times[times.len() / 2];
    println!(
        "{{\"kind\": \"{kind}\", \"tracer_steps\": {steps}, \"best_s\": {best:.6}, \
         \"median_s\": {median:.6}, \"runs\": {}, \"steps_per_s\": {:.0}, \"checksum\": {checksum:.12e}}}",
        times.len(),
        steps as f64 / best
    );
}
