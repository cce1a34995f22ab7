//! POD throughput: the leading 20 modes of the demo wake (100×40 vectors, 240 snapshots)
//! and of a synthetic 200×100-point × 1000-snapshot set, by the exact snapshot method (the
//! `Auto` route for these tall shapes), the direct thin SVD (demo only: minutes on the big
//! set) and the randomized SVD with q = 1 and 2 power iterations.
//!
//! The synthetic set is 40 travelling waves u = Σ a_j sin(k_j·x − ω_j t − φ_j),
//! v = Σ a_j cos(k_j·x − ω_j t − φ_j + 0.5), with energies decaying as e^{−j/4}, on a unit
//! square, Δt = 0.01; the same recipe is in tests/python/bench_modes_numpy.py so numpy times
//! the same problem (tests/bench/run-modes.sh hands numpy the very numbers, as an .npz).
//!
//! Everything runs on one core (faer `Par::Seq`). tests/bench/run-modes.sh prints the
//! best-of-N table against wasm and numpy with crate/examples/modes_bench.rs.
//!
//! Run: `cargo bench -p sillage --bench modes` (SILLAGE_BENCH_DATA=path overrides the demo
//! file). Results go to BENCHMARKS.md, section "Modes".

// The same synthetic set as the native and wasm timing example.
#[path = "../examples/modes_common/mod.rs"]
mod modes_common;

use criterion::{criterion_group, criterion_main, Criterion};
use modes_common::synthetic;
use sillage::field::Series;
use sillage::io::{read_paths, ReadOptions};
use sillage::modes::{pod, PodOptions, PodSolver, RandomizedSvd, SvdRoute};
use std::hint::black_box;
use std::path::PathBuf;
use std::time::Duration;

const RANK: usize = 20;

fn demo() -> Series {
    let path = std::env::var_os("SILLAGE_BENCH_DATA").map(PathBuf::from).unwrap_or_else(|| {
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../demo-fields/fin-wake.npz")
    });
    read_paths(std::slice::from_ref(&path), &ReadOptions::default())
        .unwrap_or_else(|e| panic!("cannot read the benchmark data {}: {e}", path.display()))
}

fn options(solver: PodSolver) -> PodOptions {
    PodOptions { rank: Some(RANK), solver, subtract_mean: true }
}

fn randomized(q: usize) -> PodSolver {
    PodSolver::Randomized(RandomizedSvd { power_iterations: q, ..Default::default() })
}

fn bench(c: &mut Criterion) {
    // One core, like the numpy side (OPENBLAS_NUM_THREADS=1) and the wasm build.
    faer::set_global_parallelism(faer::Par::Seq);
    let sets = [
        ("demo 100x40x240", demo(), true),
        ("synthetic 200x100x1000", synthetic(200, 100, 1000), false),
    ];
    let mut g = c.benchmark_group("pod_leading_20");
    g.sample_size(10).measurement_time(Duration::from_secs(20));
    for (name, series, small) in &sets {
        let mut solvers = vec![
            ("snapshot", PodSolver::Exact(SvdRoute::Snapshot)),
            ("randomized_q1", randomized(1)),
            ("randomized_q2", randomized(2)),
        ];
        if *small {
            solvers.push(("direct_svd", PodSolver::Exact(SvdRoute::Direct)));
        }
        for (label, solver) in solvers {
            let opts = options(solver);
            g.bench_function(format!("{name}/{label}"), |b| {
                b.iter(|| black_box(pod(black_box(series), &opts).expect("POD runs")))
            });
        }
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
