//! Cost of the sensitivity maps against the FTLE alone (issue target: at most 2.5×), on
//! one core, on the demo wake: f = the demo series, g = its POD modes 3–4, a 128×64 tracer
//! grid, t₀ = 2 s, horizon 1 s, RK4 step 0.005 s, bilinear/linear, stop at the edge.
//!
//! Three timings on the same grid and steps: FTLE by the variational route (position and
//! tangent matrix: the route the sensitivity sweep shares), FTLE by tracer-grid differences
//! (positions only, the cheapest), and the sensitivity rows (MS, MS_g, strain bound, ξ,
//! σ_FTLE, σ_MS, ζ together). Memory of the sensitivity rows does not grow with the grid:
//! a tile of trajectories stores (steps + 1) × 80 bytes per tracer, at most 24 MiB.
//!
//! Run: `cargo bench -p sillage --bench sensitivity`; results go to BENCHMARKS.md.

use criterion::{criterion_group, criterion_main, Criterion};
use sillage::field::Series;
use sillage::io::{read_paths, ReadOptions};
use sillage::lagrangian::{
    ftle_rows, AdvectOptions, BoundaryPolicy, FtleOptions, GradientRoute, GriddedField, Integrator,
    SpaceInterp, TimeInterp, TracerGrid,
};
use sillage::modes::{SelectOptions, Selection};
use sillage::sensitivity::{sensitivity_rows, SensitivityOptions};
use std::hint::black_box;
use std::path::PathBuf;
use std::time::Duration;

fn load() -> Series {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../demo-fields/fin-wake.npz");
    read_paths(&[path], &ReadOptions::default()).expect("demo data")
}

fn bench(c: &mut Criterion) {
    let data = load();
    let g_series = Selection::parse("pod(3-4)")
        .unwrap()
        .materialize(&data, &SelectOptions::default())
        .expect("POD of the demo");
    let f = GriddedField::new(&data, SpaceInterp::Bilinear, TimeInterp::Linear);
    let g = GriddedField::new(&g_series, SpaceInterp::Bilinear, TimeInterp::Linear);
    let grid = TracerGrid::over_window(&f, 128, 64).unwrap();
    let advect = AdvectOptions {
        t0: 2.0,
        horizon: 1.0,
        integrator: Integrator::Rk4 { max_step: 0.005 },
        boundary: BoundaryPolicy::Stop,
    };
    let ny = grid.ny();
    let mut group = c.benchmark_group("sensitivity_vs_ftle_128x64");
    group.sample_size(10).measurement_time(Duration::from_secs(8));
    for (name, route) in [
        ("ftle_variational", GradientRoute::Variational),
        ("ftle_tracer_grid", GradientRoute::TracerGrid),
    ] {
        let o = FtleOptions { advect, route };
        group.bench_function(name, |b| {
            b.iter(|| black_box(ftle_rows(&f, &grid, &o, 0, ny).unwrap()))
        });
    }
    let so = SensitivityOptions { advect, g_ref: 1e-3 };
    group.bench_function("sensitivity", |b| {
        b.iter(|| black_box(sensitivity_rows(&f, &g, &grid, &so, 0, ny).unwrap()))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
