//! Row ranges: any split of the tracer grid gives bit-identical results (the property the
//! browser's workers and rayon rely on), and bad ranges are errors, not panics.

use sillage::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
use sillage::lagrangian::{
    ftle_field, ftle_rows, AdvectOptions, BoundaryPolicy, FtleOptions, FtleRows, GradientRoute,
    GriddedField, Integrator, LagrangianError, SpaceInterp, TimeInterp, TracerGrid,
};

fn options(route: GradientRoute) -> FtleOptions {
    FtleOptions {
        advect: AdvectOptions {
            t0: 0.0,
            horizon: 6.0,
            integrator: Integrator::Rk4 { max_step: 0.05 },
            boundary: BoundaryPolicy::Stop,
        },
        route,
    }
}

/// Bitwise equality of every map and count; the evaluation count is excluded because
/// tracer-grid differences advect one extra row at each inner chunk edge.
fn same(a: &FtleRows, b: &FtleRows, what: &str) {
    assert_eq!((a.j0, a.j1, a.grid), (b.j0, b.j1, b.grid), "{what}");
    let bits = |v: &[f32]| v.iter().map(|x| x.to_bits()).collect::<Vec<u32>>();
    for (name, x, y) in [
        ("ftle", &a.ftle, &b.ftle),
        ("tau", &a.tau, &b.tau),
        ("det", &a.det_deviation, &b.det_deviation),
    ] {
        if let Some(n) = bits(x).iter().zip(bits(y)).position(|(p, q)| *p != q) {
            panic!("{what}: {name} differs at node {n}: {} vs {}", x[n], y[n]);
        }
    }
    assert!(a.flag == b.flag, "{what}: flags differ");
    let (mut sa, mut sb) = (a.stats, b.stats);
    sa.rhs_calls = 0;
    sb.rhs_calls = 0;
    assert_eq!(sa, sb, "{what}");
}

/// Serial and chunked runs agree bit for bit, for every route, on sampled data (common
/// practice for deterministic parallel kernels: same per-tracer arithmetic in any order).
#[test]
fn chunked_equals_serial_bit_for_bit() {
    let g = DoubleGyre::periodic();
    let s = sample_series(
        &g,
        &linspace(0.0, 2.0, 41),
        &linspace(0.0, 1.0, 21),
        &linspace(0.0, 10.0, 41),
    )
    .unwrap();
    let f = GriddedField::new(&s, SpaceInterp::Cubic, TimeInterp::Hermite);
    let grid = TracerGrid::over_window(&f, 33, 17).unwrap();
    for route in [
        GradientRoute::TracerGrid,
        GradientRoute::Auxiliary { offset: 1e-3 },
        GradientRoute::Variational,
    ] {
        let o = options(route);
        let serial = ftle_field(&f, &grid, &o).unwrap();
        for chunk in [1usize, 4, 5, 17] {
            let parts: Vec<FtleRows> = (0..grid.ny())
                .step_by(chunk)
                .map(|j0| ftle_rows(&f, &grid, &o, j0, (j0 + chunk).min(grid.ny())).unwrap())
                .collect();
            let joined = FtleRows::concat(parts).unwrap();
            same(&joined, &serial, &format!("{route:?} chunk {chunk}"));
        }
        #[cfg(feature = "cli")]
        {
            let par = sillage::lagrangian::parallel::ftle_field_parallel(&f, &grid, &o, 3).unwrap();
            same(&par, &serial, &format!("{route:?} rayon"));
        }
    }
}

#[test]
fn bad_row_ranges_and_options_are_errors() {
    let g = DoubleGyre::periodic();
    let grid = TracerGrid::new(DoubleGyre::domain(), 10, 5).unwrap();
    let o = options(GradientRoute::Variational);
    for (j0, j1) in [(3, 3), (4, 2), (0, 6)] {
        assert_eq!(
            ftle_rows(&g, &grid, &o, j0, j1).unwrap_err(),
            LagrangianError::BadRowRange { j0, j1, ny: 5 }
        );
    }
    let mut bad = o;
    bad.advect.horizon = 0.0;
    assert!(ftle_rows(&g, &grid, &bad, 0, 5).is_err());
    bad = o;
    bad.advect.integrator = Integrator::Rk4 { max_step: -1.0 };
    let e = ftle_rows(&g, &grid, &bad, 0, 5).unwrap_err().to_string();
    assert!(e.contains("RK4 time step"), "{e}");
    // Data cover t ∈ [0, 10]: a 15-unit horizon does not fit.
    let s =
        sample_series(&g, &linspace(0.0, 2.0, 5), &linspace(0.0, 1.0, 5), &linspace(0.0, 10.0, 3))
            .unwrap();
    let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    bad = o;
    bad.advect.horizon = 15.0;
    let e = ftle_rows(&f, &grid, &bad, 0, 5).unwrap_err().to_string();
    assert!(e.contains("t = 0 to t = 15") && e.contains("t = 0 to t = 10"), "{e}");
    bad.advect.horizon = -1.0;
    assert!(ftle_rows(&f, &grid, &bad, 0, 5).is_err());
    let aux = options(GradientRoute::Auxiliary { offset: 0.0 });
    assert!(ftle_rows(&g, &grid, &aux, 0, 5).is_err());
}
