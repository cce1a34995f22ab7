//! POD timing harness, natively and compiled to WebAssembly (tests/bench/run-modes.sh).
//!
//! One source, two targets (crate/Cargo.toml): the example `modes_bench` is the native
//! program, `modes_wasm` the same file as a cdylib for wasm32 (`cargo rustc --example
//! modes_wasm --target wasm32-unknown-unknown --no-default-features --release`, simd128
//! from .cargo/config.toml as for the page), whose plain C-ABI exports
//! tests/bench/modes_wasm.mjs times in Node without JavaScript glue.
//!
//! The problem is crate/benches/modes.rs's: the leading 20 POD modes (whole `pod` call:
//! weighted matrix, mean removal, decomposition, modes, coefficients) of the demo wake and
//! of the synthetic set of [`synthetic`], which is generated here (deterministic, no random
//! numbers) so native and wasm decompose the same numbers; `--write-synthetic` stores it as
//! an .npz for tests/python/bench_modes_numpy.py. Each run reports the leading singular
//! values so the three sides can be checked to solve the same problem.
//!
//! Native: `modes_bench (DATA.npz | synthetic) REPEATS [--solvers a,b] [--profile]
//! [--write-synthetic OUT.npz]`, on one thread (faer `Par::Seq`); one JSON line per solver,
//! best and median of REPEATS runs after one warm-up run. Solvers: `snapshot`, `direct`,
//! `randomized_q1`, `randomized_q2`. `--profile` also times the phases of the snapshot
//! method.
//!
//! Wasm exports: `bench_alloc(len) → ptr`, `bench_load(ptr, len) → 0 | error length`
//! (an .npz), `bench_synthetic(nx, ny, nt)`, `bench_pod(solver) → modes | −1` (solver code
//! 0 snapshot, 1 direct, 2 randomized q = 1, 3 randomized q = 2), `bench_singular(j)` of the
//! last run, `bench_message()` the last error (UTF-8).

mod modes_common;

use modes_common::synthetic;
use sillage::field::Series;
use sillage::modes::{pod, PodOptions, PodSolver, RandomizedSvd, SvdRoute};
use sillage::progress::Progress;
use std::sync::Mutex;

/// Modes asked of every solver.
pub const RANK: usize = 20;

/// Solver by name (native) or code (wasm), in the order of the module doc.
pub const SOLVERS: [&str; 4] = ["snapshot", "direct", "randomized_q1", "randomized_q2"];

fn solver(code: usize) -> PodSolver {
    let randomized =
        |q| PodSolver::Randomized(RandomizedSvd { power_iterations: q, ..Default::default() });
    match code {
        0 => PodSolver::Exact(SvdRoute::Snapshot),
        1 => PodSolver::Exact(SvdRoute::Direct),
        2 => randomized(1),
        _ => randomized(2),
    }
}

/// One POD of `series` with solver `code`; the singular values kept.
fn run(series: &Series, code: usize) -> Result<Vec<f64>, String> {
    let opts = PodOptions { rank: Some(RANK), solver: solver(code), subtract_mean: true };
    pod(series, &opts).map(|p| p.singular_values).map_err(|e| e.to_string())
}

static DATA: Mutex<Option<Series>> = Mutex::new(None);
static SINGULAR: Mutex<Vec<f64>> = Mutex::new(Vec::new());
static MESSAGE: Mutex<Vec<u8>> = Mutex::new(Vec::new());

fn fail(message: String) -> usize {
    let mut m = MESSAGE.lock().unwrap();
    *m = message.into_bytes();
    m.len()
}

/// A buffer of `len` bytes owned by JavaScript until passed to [`bench_load`].
#[no_mangle]
pub extern "C" fn bench_alloc(len: usize) -> *mut u8 {
    let mut v = vec![0u8; len];
    let p = v.as_mut_ptr();
    std::mem::forget(v);
    p
}

/// Parses the .npz bytes at `ptr` (from [`bench_alloc`], consumed here) as the series to
/// decompose. Returns 0, or the length of an error message readable at [`bench_message`].
///
/// # Safety
/// `ptr` and `len` must come from one call of [`bench_alloc`].
#[no_mangle]
pub unsafe extern "C" fn bench_load(ptr: *mut u8, len: usize) -> usize {
    use sillage::io::{read_series, NamedBytes, ReadOptions};
    // SAFETY: the caller passes back the allocation of `bench_alloc(len)`.
    let bytes = unsafe { Vec::from_raw_parts(ptr, len, len) };
    match read_series(&[NamedBytes::new("data.npz", bytes)], &ReadOptions::default()) {
        Ok(s) => {
            *DATA.lock().unwrap() = Some(s);
            0
        }
        Err(e) => fail(e.to_string()),
    }
}

/// Makes [`synthetic`]`(nx, ny, nt)` the series to decompose.
#[no_mangle]
pub extern "C" fn bench_synthetic(nx: u32, ny: u32, nt: u32) {
    *DATA.lock().unwrap() = Some(synthetic(nx as usize, ny as usize, nt as usize));
}

/// Address of the last error message (UTF-8).
#[no_mangle]
pub extern "C" fn bench_message() -> *const u8 {
    MESSAGE.lock().unwrap().as_ptr()
}

/// One POD of the loaded series with solver `code`; the number of modes, or −(message
/// length) on error.
#[no_mangle]
pub extern "C" fn bench_pod(code: u32) -> f64 {
    let guard = DATA.lock().unwrap();
    let Some(series) = guard.as_ref() else {
        return -(fail("no data loaded".into()) as f64);
    };
    match run(series, code as usize) {
        Ok(s) => {
            let r = s.len();
            *SINGULAR.lock().unwrap() = s;
            r as f64
        }
        Err(e) => -(fail(e) as f64),
    }
}

/// Singular value `j` of the last run (NaN past the end).
#[no_mangle]
pub extern "C" fn bench_singular(j: u32) -> f64 {
    SINGULAR.lock().unwrap().get(j as usize).copied().unwrap_or(f64::NAN)
}

/// Seconds spent in each phase of the snapshot method (one run), timed with `now` (seconds).
fn profile(series: &Series, now: impl Fn() -> f64) -> Result<Vec<(&'static str, f64)>, String> {
    use sillage::modes::{linalg, SnapshotLayout};
    let mut phases = Vec::new();
    let mut lap = {
        let mut last = now();
        move |name: &'static str, phases: &mut Vec<(&'static str, f64)>| {
            let t = now();
            phases.push((name, t - last));
            last = t;
        }
    };
    let layout = SnapshotLayout::new(series).map_err(|e| e.to_string())?;
    let mean = layout.mean(series);
    lap("mean_s", &mut phases);
    let y = layout.weighted_matrix(series, Some(&mean), 1.0 / (series.nt() as f64).sqrt());
    lap("weighted_matrix_s", &mut phases);
    let g = linalg::gram_lower(y.as_ref(), &mut Progress::silent());
    lap("gram_lower_s", &mut phases);
    let eig = g.self_adjoint_eigen(faer::Side::Lower).map_err(|e| format!("{e:?}"))?;
    lap("self_adjoint_eigen_s", &mut phases);
    let full = y.transpose() * &y;
    lap("gram_full_s", &mut phases);
    let svd = linalg::svd_snapshot(y.as_ref(), RANK, &mut Progress::silent())
        .map_err(|e| e.to_string())?;
    lap("svd_snapshot_s", &mut phases);
    let m = y.ncols();
    let check = (eig.S()[m - 1].sqrt() - svd.s[0]).abs() + (full[(0, 0)] - g[(0, 0)]).abs();
    phases.push(("check", check));
    Ok(phases)
}

#[cfg(target_arch = "wasm32")]
#[link(wasm_import_module = "env")]
extern "C" {
    /// Milliseconds from the host (tests/bench/modes_wasm.mjs: `performance.now`).
    fn bench_now() -> f64;
}

static PHASES: Mutex<Vec<f64>> = Mutex::new(Vec::new());

/// Times the phases of the snapshot method on the loaded series (wasm32 only: needs the
/// host's clock); returns their count, read with [`bench_phase`], or −(message length).
#[cfg(target_arch = "wasm32")]
#[no_mangle]
pub extern "C" fn bench_profile() -> f64 {
    let guard = DATA.lock().unwrap();
    let Some(series) = guard.as_ref() else {
        return -(fail("no data loaded".into()) as f64);
    };
    // SAFETY: a plain import without arguments.
    match profile(series, || unsafe { bench_now() } / 1000.0) {
        Ok(p) => {
            *PHASES.lock().unwrap() = p.iter().map(|(_, t)| *t).collect();
            p.len() as f64
        }
        Err(e) => -(fail(e) as f64),
    }
}

/// Phase `i` of the last [`bench_profile`] in seconds (order: mean, weighted matrix, lower
/// Gram, eigensolver, full Gram, whole snapshot SVD, check value).
#[no_mangle]
pub extern "C" fn bench_phase(i: u32) -> f64 {
    PHASES.lock().unwrap().get(i as usize).copied().unwrap_or(f64::NAN)
}

#[cfg(not(target_arch = "wasm32"))]
mod native {
    use super::*;
    use sillage::io::{read_paths, write_arrays_npz, NpyArray, NpyData, ReadOptions};
    use std::time::Instant;

    fn best_median(times: &mut [f64]) -> (f64, f64) {
        times.sort_by(f64::total_cmp);
        (times[0], times[times.len() / 2])
    }

    fn write_npz(series: &Series, path: &str) -> Result<(), String> {
        let g = series.grid();
        let (nx, ny, nt) = (g.nx(), g.ny(), series.nt());
        let bytes = write_arrays_npz(&[
            NpyArray::new("x", vec![nx], NpyData::F64(g.x.coords())),
            NpyArray::new("y", vec![ny], NpyData::F64(g.y.coords())),
            NpyArray::new("t", vec![nt], NpyData::F64(series.times().to_vec())),
            NpyArray::new("u", vec![nt, ny, nx], NpyData::F32(series.u().to_vec())),
            NpyArray::new("v", vec![nt, ny, nx], NpyData::F32(series.v().to_vec())),
        ]);
        std::fs::write(path, bytes).map_err(|e| format!("cannot write '{path}': {e}"))
    }

    pub fn main() -> Result<(), String> {
        let args: Vec<String> = std::env::args().skip(1).collect();
        let usage = "usage: modes_bench (DATA.npz | synthetic) REPEATS [--solvers a,b] \
                     [--profile] [--write-synthetic OUT.npz]";
        if args.len() < 2 {
            return Err(usage.into());
        }
        let repeats: usize = args[1].parse().map_err(|_| format!("bad REPEATS; {usage}"))?;
        let mut solvers = vec![0usize];
        let (mut do_profile, mut write) = (false, None);
        let mut i = 2;
        while i < args.len() {
            match args[i].as_str() {
                "--solvers" if i + 1 < args.len() => {
                    solvers = args[i + 1]
                        .split(',')
                        .map(|s| {
                            SOLVERS.iter().position(|n| n == &s).ok_or(format!("no solver '{s}'"))
                        })
                        .collect::<Result<_, _>>()?;
                    i += 1;
                }
                "--profile" => do_profile = true,
                "--write-synthetic" if i + 1 < args.len() => {
                    write = Some(args[i + 1].clone());
                    i += 1;
                }
                a => return Err(format!("unknown argument '{a}'; {usage}")),
            }
            i += 1;
        }
        faer::set_global_parallelism(faer::Par::Seq);
        let (name, series) = if args[0] == "synthetic" {
            let t = Instant::now();
            let s = synthetic(200, 100, 1000);
            eprintln!("modes_bench: synthetic set in {:.2} s", t.elapsed().as_secs_f64());
            ("synthetic 200x100x1000", s)
        } else {
            let s = read_paths(&[args[0].clone().into()], &ReadOptions::default())
                .map_err(|e| e.to_string())?;
            ("demo", s)
        };
        if let Some(path) = write {
            write_npz(&series, &path)?;
        }
        for &code in &solvers {
            let s = run(&series, code)?;
            let mut times = Vec::with_capacity(repeats);
            for _ in 0..repeats.max(1) {
                let t = Instant::now();
                let again = run(&series, code)?;
                times.push(t.elapsed().as_secs_f64());
                assert_eq!(again.len(), s.len());
            }
            let (best, median) = best_median(&mut times);
            println!(
                "{{\"data\": \"{name}\", \"solver\": \"{}\", \"best_s\": {best:.6}, \
                 \"median_s\": {median:.6}, \"runs\": {}, \"singular_values\": {:?}}}",
                SOLVERS[code],
                times.len(),
                s
            );
        }
        if do_profile {
            let start = Instant::now();
            let phases = profile(&series, || start.elapsed().as_secs_f64())?;
            let fields: Vec<String> =
                phases.iter().map(|(k, v)| format!("\"{k}\": {v:.4}")).collect();
            println!("{{\"profile\": {{{}}}}}", fields.join(", "));
        }
        Ok(())
    }
}

/// The native program (module doc); the wasm build only uses the exports.
pub fn main() {
    #[cfg(not(target_arch = "wasm32"))]
    if let Err(e) = native::main() {
        eprintln!("modes_bench: {e}");
        std::process::exit(1);
    }
}
