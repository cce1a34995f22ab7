//! Native timing harness for tracer transport (tests/bench/run-transport.sh): the problem
//! of transport_common/mod.rs on one thread, timed the way transport_wasm.mjs times the
//! WebAssembly build of the same code, so the two rates compare like with like.
//!
//! `transport_bench DATA.npz NX NY T0 HORIZON STEP REPEATS [--positions OUT.npz]` times the
//! flow map (RK4, bilinear, linear in time, tracers stop at the data edge) and the
//! variational FTLE of an NX×NY tracer grid over the data window, best of REPEATS runs
//! after one warm-up run, and prints one JSON line per kind. With `--positions` it also
//! writes the flow map's final positions, exit times and status, so
//! tests/bench/transport_numpy.py can check that it solved the same problem.

mod transport_common;

use sillage::io::{read_paths, write_arrays_npz, NpyArray, NpyData, ReadOptions};
use std::time::Instant;
use transport_common::{checksum, Problem};

fn main() -> Result<(), String> {
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
