//! The lockstep path (tracers advanced step by step over shared time slices of gridded
//! bilinear × linear data) against the per-tracer RK4 integrator on the same field: flow
//! maps and variational FTLE must agree to 1e-12 relative; by construction they agree bit
//! for bit, and that is what is checked. The data have exits through the window edge,
//! through a masked block and through gaps of single snapshots; the times are uniform,
//! non-uniform, or a single steady snapshot; horizons run forward and backward and end on
//! the first or last snapshot.

use sillage::field::{Series, SeriesParts};
use sillage::lagrangian::analytic::{linspace, DoubleGyre};
use sillage::lagrangian::{
    flow_map_rows, ftle_points, ftle_rows, integrate_rk4, AdvectOptions, BoundaryPolicy,
    FlowMapRows, FtleOptions, GradientRoute, GriddedField, Integrator, NodeStatus, Rect,
    SpaceInterp, Stop, TimeInterp, Tracer, TracerGrid, VelocityField,
};

/// The forced double gyre sampled on a window cut inside its box (tracers leave through
/// the window edge), with a masked block in the middle (tracers stop at it) and, when
/// `gaps`, a few vectors missing in single snapshots.
fn data(times: &[f64], gaps: bool) -> Series {
    let flow = DoubleGyre::periodic();
    let (x, y) = (linspace(0.25, 1.75, 31), linspace(0.1, 0.9, 17));
    let (nx, ny) = (x.len(), y.len());
    let mut u = Vec::new();
    let mut v = Vec::new();
    let mut gap = Vec::new();
    for (k, &t) in times.iter().enumerate() {
        for (j, &yj) in y.iter().enumerate() {
            for (i, &xi) in x.iter().enumerate() {
                let w = flow.velocity([xi, yj], t).unwrap();
                u.push(w[0] as f32);
                v.push(w[1] as f32);
                gap.push(gaps && (i * 7 + j * 3 + k * 5) % 41 == 0);
            }
        }
    }
    let mask: Vec<bool> = (0..nx * ny)
        .map(|c| {
            let (i, j) = (c % nx, c / nx);
            (14..=16).contains(&i) && (7..=9).contains(&j)
        })
        .collect();
    Series::from_parts(SeriesParts {
        x,
        y,
        t: times.to_vec(),
        u,
        v,
        mask: Some(mask),
        gaps: gaps.then_some(gap),
        ..Default::default()
    })
    .unwrap()
}

fn rk4(t0: f64, horizon: f64, max_step: f64) -> AdvectOptions {
    AdvectOptions {
        t0,
        horizon,
        integrator: Integrator::Rk4 { max_step },
        boundary: BoundaryPolicy::Stop,
    }
}

/// The flow map of `rows` against [`integrate_rk4`] seed by seed: positions, exit times,
/// status and evaluation counts identical. Returns (complete, exited) counts.
fn check_flow_map(
    field: &GriddedField,
    grid: &TracerGrid,
    o: &AdvectOptions,
    fm: &FlowMapRows,
) -> (usize, usize) {
    let Integrator::Rk4 { max_step } = o.integrator else { unreachable!() };
    let nx = grid.nx();
    let (mut complete, mut exited, mut calls) = (0, 0, 0u64);
    for c in 0..fm.x.len() {
        let p = grid.node(c % nx, fm.j0 + c / nx);
        if field.velocity(p, o.t0).is_none() {
            assert_eq!(fm.status[c], NodeStatus::Masked, "node {c}");
            continue;
        }
        let want = integrate_rk4(&Tracer(field), p, o.t0, o.horizon, max_step);
        let got = [fm.x[c], fm.y[c]];
        // Bit for bit; the 1e-12 relative bound of the requirement is implied.
        assert_eq!(got, want.y, "node {c} from {p:?}: position");
        assert_eq!(fm.tau[c], (want.t - o.t0).abs(), "node {c}: time integrated");
        assert_eq!(fm.status[c], NodeStatus::from(want.stop), "node {c}: status");
        calls += want.rhs_calls as u64;
        match want.stop {
            Stop::Complete => complete += 1,
            _ => exited += 1,
        }
    }
    assert_eq!(fm.rhs_calls, calls, "evaluation count");
    (complete, exited)
}

/// Forward and backward, uniform snapshots (the field's resolved fast path), snapshots
/// with gaps (per-snapshot cell flags) and non-uniform snapshots (the general stencil).
#[test]
fn flow_map_matches_per_tracer_rk4() {
    let uniform = linspace(0.0, 4.0, 17);
    let stretched: Vec<f64> = uniform.iter().map(|&t| t + 0.02 * t * (4.0 - t)).collect();
    let cases = [
        ("uniform", &uniform, false),
        ("gaps", &uniform, true),
        ("non-uniform", &stretched, false),
    ];
    for (name, times, gaps) in cases {
        let s = data(times, gaps);
        let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = TracerGrid::over_window(&field, 47, 23).unwrap();
        // Forward to the last snapshot, backward, a step that does not divide the horizon,
        // and backward to the first snapshot (whose last stage time rounding may put an ulp
        // before the data; `runs_ending_on_the_end_snapshots_complete` checks that it counts).
        let horizons = [
            (rk4(2.5, 1.5, 0.05), true),
            (rk4(1.3, -1.2, 0.07), true),
            (rk4(0.3, 1.7, 0.0333), true),
            (rk4(1.2, -1.2, 0.07), false),
        ];
        for (o, mixed) in horizons {
            let fm = flow_map_rows(&field, &grid, &o, 0, grid.ny()).unwrap();
            let (complete, exited) = check_flow_map(&field, &grid, &o, &fm);
            assert!(
                !mixed || (complete > 100 && exited > 100),
                "{name} {o:?}: {complete} complete, {exited} exited: not a mixed test"
            );
            // Row ranges as workers split them, down to one row (fewer seeds than the
            // lockstep path takes): the same nodes, the same results.
            for (j0, j1) in [(0, 1), (1, 9), (9, 10), (10, grid.ny())] {
                let part = flow_map_rows(&field, &grid, &o, j0, j1).unwrap();
                let at = j0 * grid.nx()..j1 * grid.nx();
                assert_eq!(part.x, fm.x[at.clone()], "{name}: rows {j0}..{j1}");
                assert_eq!(part.y, fm.y[at.clone()]);
                assert_eq!(part.tau, fm.tau[at.clone()]);
                assert_eq!(part.status, fm.status[at]);
            }
        }
    }
}

/// A steady series (one snapshot) is valid at every time: slices are the snapshot itself.
#[test]
fn steady_series_flow_map_matches_per_tracer_rk4() {
    let s = data(&[0.0], false);
    let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let grid = TracerGrid::over_window(&field, 40, 20).unwrap();
    let o = rk4(5.0, -6.0, 0.1);
    let fm = flow_map_rows(&field, &grid, &o, 0, grid.ny()).unwrap();
    let (complete, exited) = check_flow_map(&field, &grid, &o, &fm);
    assert!(complete > 50 && exited > 50, "{complete} complete, {exited} exited");
}

/// Variational FTLE on a grid (lockstep with the tangent matrix) against FTLE at the same
/// points, which integrates every node on its own: identical maps, flags and counts.
#[test]
fn variational_ftle_matches_per_node_integration() {
    let uniform = linspace(0.0, 4.0, 17);
    for gaps in [false, true] {
        let s = data(&uniform, gaps);
        let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = TracerGrid::over_window(&field, 37, 19).unwrap();
        for advect in [rk4(1.0, 1.2, 0.04), rk4(3.0, -1.0, 0.05)] {
            let o = FtleOptions { advect, route: GradientRoute::Variational };
            let got = ftle_rows(&field, &grid, &o, 0, grid.ny()).unwrap();
            let points: Vec<[f64; 2]> = (0..grid.ny())
                .flat_map(|j| (0..grid.nx()).map(move |i| (i, j)))
                .map(|(i, j)| grid.node(i, j))
                .collect();
            let want = ftle_points(&field, &points, &o).unwrap();
            assert_eq!(got.ftle, want.ftle, "gaps {gaps}, {advect:?}: FTLE");
            assert_eq!(got.tau, want.tau);
            assert_eq!(got.det_deviation, want.det_deviation);
            assert_eq!(got.flag, want.flag);
            assert_eq!(got.stats, want.stats);
            assert!(got.stats.full > 50 && got.stats.exited + got.stats.short > 50);
        }
    }
}

/// Runs that end exactly on the first or last snapshot, with a step that does not divide the
/// horizon (so the last stage time t₀ + n·h is computed, not given): every tracer of a
/// window where the velocity keeps them inside completes the run, on the lockstep path and
/// on the per-tracer one, and the time integrated is the whole horizon. Before the time
/// tolerance of the field, rounding put that last stage an ulp outside the record and
/// marked every tracer as exited (a bug found while building the lockstep path).
#[test]
fn runs_ending_on_the_end_snapshots_complete() {
    // Uniform flow of 0.01 in x on [0, 1]²: over a horizon of 1.2 a tracer moves 0.012.
    let times = linspace(0.0, 1.2, 13);
    let (x, y) = (linspace(0.0, 1.0, 11), linspace(0.0, 1.0, 11));
    let n = x.len() * y.len() * times.len();
    let s = Series::from_parts(SeriesParts {
        x,
        y,
        t: times.clone(),
        u: vec![0.01; n],
        v: vec![0.0; n],
        ..Default::default()
    })
    .unwrap();
    let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let rect = Rect { x0: 0.3, x1: 0.7, y0: 0.2, y1: 0.8 };
    let grid = TracerGrid::new(rect, 24, 20).unwrap();
    for (t0, horizon) in [(1.2, -1.2), (0.0, 1.2), (0.9, 0.3), (0.5, -0.5)] {
        for max_step in [0.07, 0.013, 0.1] {
            let o = rk4(t0, horizon, max_step);
            let fm = flow_map_rows(&field, &grid, &o, 0, grid.ny()).unwrap();
            let (complete, exited) = check_flow_map(&field, &grid, &o, &fm);
            assert_eq!(exited, 0, "t0 {t0}, horizon {horizon}, step {max_step}");
            assert_eq!(complete, grid.nx() * grid.ny());
            // τ = |(t₀ + T) − t₀|: the horizon up to the rounding of that difference.
            let whole = fm.tau.iter().all(|&tau| (tau - horizon.abs()).abs() <= 1e-12);
            assert!(whole, "{:?}", &fm.tau[..3]);
        }
    }
}
