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

use criterion::{criterion_group, criterion_main, Criterion};
use sillage::field::{Series, SeriesParts};
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

/// The synthetic set described in the module doc, computed exactly as
/// crate/examples/modes_bench.rs does (angle sums expanded: same numbers, a second to build).
pub fn synthetic(nx: usize, ny: usize, nt: usize) -> Series {
    let x: Vec<f64> = (0..nx).map(|i| i as f64 / (nx - 1) as f64).collect();
    let y: Vec<f64> = (0..ny).map(|j| j as f64 / (ny - 1) as f64).collect();
    let t: Vec<f64> = (0..nt).map(|k| k as f64 * 0.01).collect();
    let plane = nx * ny;
    let (mut u, mut v) = (vec![0.0f32; nt * plane], vec![0.0f32; nt * plane]);
    let (mut sp, mut cp, mut sq, mut cq) =
        (vec![0.0; plane], vec![0.0; plane], vec![0.0; plane], vec![0.0; plane]);
    for j in 0..40 {
        let jf = j as f64;
        let a = (-jf / 8.0).exp();
        let (kx, ky) = (1.0 + jf, 2.0 + 0.5 * jf);
        let om = 3.0 + 1.7 * jf;
        let ph = 0.37 * jf;
        for (jj, &yj) in y.iter().enumerate() {
            for (i, &xi) in x.iter().enumerate() {
                let p = kx * xi + ky * yj;
                let c = jj * nx + i;
                (sp[c], cp[c]) = p.sin_cos();
                (sq[c], cq[c]) = (p + 0.5).sin_cos();
            }
        }
        for (k, &tk) in t.iter().enumerate() {
            let (sc, cc) = (om * tk + ph).sin_cos();
            let (su, cu) = (a * cc, a * sc);
            let (uk, vk) = (&mut u[k * plane..(k + 1) * plane], &mut v[k * plane..(k + 1) * plane]);
            for c in 0..plane {
                uk[c] += (sp[c] * su - cp[c] * cu) as f32;
                vk[c] += (cq[c] * su + sq[c] * cu) as f32;
            }
        }
    }
    Series::from_parts(SeriesParts { x, y, t, u, v, ..Default::default() })
        .expect("synthetic series is valid")
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
