//! Tracer transport throughput on the demo wake: RK4 tracer-steps per second for flow maps
//! (positions only) and for FTLE by the variational route (position and tangent matrix),
//! on one core and on rayon's pool over all cores.
//!
//! The problem (the same in tests/bench/transport_numpy.py and the wasm timing): the demo
//! series demo-fields/fin-wake.npz (100×40 vectors, 240 snapshots, Δt 0.025 s), a 256×128
//! tracer grid over the data window, t₀ = 2 s, horizon 1 s forward, classical RK4 with a
//! fixed step of 0.005 s (200 steps), bilinear in space, linear in time, tracers stop at
//! the window edge and at the fin (the engine's default boundary policy).
//!
//! A tracer-step is one RK4 step of one tracer (four velocity samples). Tracers that leave
//! the window stop early, so the count is taken from the engine's own tally of velocity
//! evaluations (÷ 4), which includes the bisection steps that locate each exit; criterion
//! reports it as "elements" per second. A smaller grid (64×32) is run too, to show the rate
//! does not depend on the grid size once the data fit in cache.
//!
//! Gridded bilinear × linear data take the engine's lockstep path (all tracers step by step
//! over shared time slices, `lagrangian/lockstep.rs`); the group `flow_map_per_tracer`
//! times the same flow map through a wrapper that hides the gridded field from the engine,
//! i.e. the per-tracer path every other field takes, to show what the lockstep path buys.
//!
//! Run: `cargo bench -p sillage --bench transport` (SILLAGE_BENCH_DATA=path overrides the
//! data file). tests/bench/run-transport.sh runs this, the numpy script and the wasm timing
//! and prints one table; results are recorded in BENCHMARKS.md.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use rayon::prelude::*;
use sillage::field::Series;
use sillage::io::{read_paths, ReadOptions};
use sillage::lagrangian::{
    flow_map_rows, ftle_rows, AdvectOptions, BoundaryPolicy, FlowMapRows, FtleOptions, FtleRows,
    GradientRoute, GriddedField, Integrator, PerTracer, SpaceInterp, TimeInterp, TracerGrid,
};
use std::hint::black_box;
use std::path::PathBuf;
use std::time::Duration;

/// Start time, horizon and RK4 step of the benchmark problem (seconds).
const T0: f64 = 2.0;
const HORIZON: f64 = 1.0;
const STEP: f64 = 0.005;
/// Rows per rayon task: small enough for balance on many cores, large enough to amortise.
const ROWS_PER_TASK: usize = 4;

fn data_path() -> PathBuf {
    std::env::var_os("SILLAGE_BENCH_DATA").map(PathBuf::from).unwrap_or_else(|| {
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../demo-fields/fin-wake.npz")
    })
}

fn load() -> Series {
    let path = data_path();
    read_paths(std::slice::from_ref(&path), &ReadOptions::default())
        .unwrap_or_else(|e| panic!("cannot read the benchmark data {}: {e}", path.display()))
}

fn advect() -> AdvectOptions {
    AdvectOptions {
        t0: T0,
        horizon: HORIZON,
        integrator: Integrator::Rk4 { max_step: STEP },
        boundary: BoundaryPolicy::Stop,
    }
}

/// Row ranges of `ROWS_PER_TASK` rows covering the grid.
fn row_ranges(grid: &TracerGrid) -> Vec<(usize, usize)> {
    (0..grid.ny())
        .step_by(ROWS_PER_TASK)
        .map(|j0| (j0, (j0 + ROWS_PER_TASK).min(grid.ny())))
        .collect()
}

fn flow_map_serial(field: &GriddedField, grid: &TracerGrid, o: &AdvectOptions) -> FlowMapRows {
    flow_map_rows(field, grid, o, 0, grid.ny()).expect("flow map")
}

/// The flow map split into row ranges on rayon's pool, as the CLI splits FTLE work.
fn flow_map_parallel(field: &GriddedField, grid: &TracerGrid, o: &AdvectOptions) -> u64 {
    row_ranges(grid)
        .par_iter()
        .map(|&(j0, j1)| flow_map_rows(field, grid, o, j0, j1).expect("flow map").rhs_calls)
        .sum()
}

fn ftle_serial(field: &GriddedField, grid: &TracerGrid, o: &FtleOptions) -> FtleRows {
    ftle_rows(field, grid, o, 0, grid.ny()).expect("ftle")
}

fn ftle_parallel(field: &GriddedField, grid: &TracerGrid, o: &FtleOptions) -> u64 {
    row_ranges(grid)
        .par_iter()
        .map(|&(j0, j1)| ftle_rows(field, grid, o, j0, j1).expect("ftle").stats.rhs_calls)
        .sum()
}

fn transport(c: &mut Criterion) {
    let series = load();
    let field = GriddedField::new(&series, SpaceInterp::Bilinear, TimeInterp::Linear);
    let o = advect();
    let fo = FtleOptions { advect: o, route: GradientRoute::Variational };
    let threads = rayon::current_num_threads();
    for (nx, ny) in [(64, 32), (256, 128)] {
        let grid = TracerGrid::over_window(&field, nx, ny).expect("tracer grid");
        let size = format!("{nx}x{ny}");

        let steps = flow_map_serial(&field, &grid, &o).rhs_calls / 4;
        let nominal = (nx * ny) as u64 * (HORIZON / STEP).round() as u64;
        println!(
            "flow map {size}: {steps} tracer-steps per run ({:.1} % of the nominal {nominal}; \
             the rest left the window)",
            100.0 * steps as f64 / nominal as f64
        );
        let mut g = c.benchmark_group("flow_map");
        g.sample_size(10)
            .warm_up_time(Duration::from_secs(1))
            .measurement_time(Duration::from_secs(8))
            .throughput(Throughput::Elements(steps));
        g.bench_function(BenchmarkId::new("serial", &size), |b| {
            b.iter(|| black_box(flow_map_serial(&field, &grid, &o).rhs_calls))
        });
        g.bench_function(BenchmarkId::new(format!("rayon_{threads}_threads"), &size), |b| {
            b.iter(|| black_box(flow_map_parallel(&field, &grid, &o)))
        });
        g.finish();
        let per_tracer = PerTracer(&field);
        let same = flow_map_rows(&per_tracer, &grid, &o, 0, grid.ny()).expect("flow map");
        assert_eq!(same, flow_map_serial(&field, &grid, &o), "the two paths must agree");
        let mut g = c.benchmark_group("flow_map_per_tracer");
        g.sample_size(10)
            .warm_up_time(Duration::from_secs(1))
            .measurement_time(Duration::from_secs(8))
            .throughput(Throughput::Elements(steps));
        g.bench_function(BenchmarkId::new("serial", &size), |b| {
            b.iter(|| {
                black_box(flow_map_rows(&per_tracer, &grid, &o, 0, grid.ny()).unwrap().rhs_calls)
            })
        });
        g.finish();

        let steps = ftle_serial(&field, &grid, &fo).stats.rhs_calls / 4;
        println!("variational FTLE {size}: {steps} tracer-steps per run");
        let mut g = c.benchmark_group("ftle_variational");
        g.sample_size(10)
            .warm_up_time(Duration::from_secs(1))
            .measurement_time(Duration::from_secs(8))
            .throughput(Throughput::Elements(steps));
        g.bench_function(BenchmarkId::new("serial", &size), |b| {
            b.iter(|| black_box(ftle_serial(&field, &grid, &fo).stats.rhs_calls))
        });
        g.bench_function(BenchmarkId::new(format!("rayon_{threads}_threads"), &size), |b| {
            b.iter(|| black_box(ftle_parallel(&field, &grid, &fo)))
        });
        g.finish();
    }
}

criterion_group!(benches, transport);
criterion_main!(benches);
