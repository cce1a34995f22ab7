//! The sensitivity maps on gridded bilinear × linear data, where tiles of trajectories run
//! in lockstep on time slices, against the same maps computed one trajectory at a time on
//! the same samples (the field behind a wrapper that hides its gridded nature): by
//! construction the two agree bit for bit, and that is what is checked. The data have exits
//! through the window edge, a masked block and gaps of single snapshots; g is gridded data
//! on another grid (sliced too), the same gridded data, or an analytic field (sampled per
//! tracer); horizons run forward and backward, to the end snapshots; row ranges split as
//! the workers split them.

use sillage::field::{Series, SeriesParts};
use sillage::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
use sillage::lagrangian::{
    AdvectOptions, BoundaryPolicy, GriddedField, Integrator, PerTracer, Rect, SpaceInterp,
    TimeInterp, TracerGrid, VelocityField,
};
use sillage::sensitivity::analytic::Wobble;
use sillage::sensitivity::{sensitivity_rows, SensitivityOptions, SensitivityRows};

/// The forced double gyre on a window cut inside its box, with a masked block and, when
/// `gaps`, a few vectors missing in single snapshots (as `lagrangian_lockstep.rs`).
fn data(times: &[f64], gaps: bool) -> Series {
    let flow = DoubleGyre::periodic();
    let (x, y) = (linspace(0.25, 1.75, 31), linspace(0.1, 0.9, 17));
    let (nx, ny) = (x.len(), y.len());
    let (mut u, mut v, mut gap) = (Vec::new(), Vec::new(), Vec::new());
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
    let mask = (0..nx * ny).map(|c| (14..=16).contains(&(c % nx)) && (7..=9).contains(&(c / nx)));
    Series::from_parts(SeriesParts {
        x,
        y,
        t: times.to_vec(),
        u,
        v,
        mask: Some(mask.collect()),
        gaps: gaps.then_some(gap),
        ..Default::default()
    })
    .unwrap()
}

fn options(t0: f64, horizon: f64, max_step: f64) -> SensitivityOptions {
    SensitivityOptions {
        advect: AdvectOptions {
            t0,
            horizon,
            integrator: Integrator::Rk4 { max_step },
            boundary: BoundaryPolicy::Stop,
        },
        g_ref: 0.02,
    }
}

fn assert_same(got: &SensitivityRows, want: &SensitivityRows, what: &str) {
    for ((name, a), (_, b)) in got.maps().into_iter().zip(want.maps()) {
        assert_eq!(a, b, "{what}: map {name}");
    }
    assert_eq!(got.flag, want.flag, "{what}: flags");
    assert_eq!(got.stats, want.stats, "{what}: counts");
}

#[test]
fn lockstep_tiles_match_one_trajectory_at_a_time() {
    let times = linspace(0.0, 4.0, 17);
    // g on its own, coarser grid over a larger window: sliced with its own geometry.
    let g_series = sample_series(
        &Wobble { amplitude: 0.03 },
        &linspace(0.0, 2.0, 23),
        &linspace(0.0, 1.0, 9),
        &times,
    )
    .unwrap();
    let g_grid = GriddedField::new(&g_series, SpaceInterp::Bilinear, TimeInterp::Linear);
    for gaps in [false, true] {
        let s = data(&times, gaps);
        let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        let grid = TracerGrid::new(Rect { x0: 0.25, x1: 1.75, y0: 0.1, y1: 0.9 }, 41, 23).unwrap();
        let runs = [
            options(1.0, 2.5, 0.05),
            options(3.0, -1.7, 0.07),
            options(4.0, -4.0, 0.09),
            options(0.0, 4.0, 0.13),
        ];
        for o in runs {
            let what = format!("gaps {gaps}, {:?}", o.advect);
            let (full, exited) = {
                let got = sensitivity_rows(&f, &g_grid, &grid, &o, 0, grid.ny()).unwrap();
                let want =
                    sensitivity_rows(&PerTracer(&f), &PerTracer(&g_grid), &grid, &o, 0, grid.ny())
                        .unwrap();
                assert_same(&got, &want, &format!("{what}, g gridded"));
                (got.stats.full, got.stats.exited + got.stats.short)
            };
            let mixed = (gaps || full > 100) && full > 5 && exited > 100;
            assert!(mixed, "{what}: {full} full, {exited} exited");
            // g = f itself (sliced), and g analytic (sampled per tracer).
            let got = sensitivity_rows(&f, &f, &grid, &o, 0, grid.ny()).unwrap();
            let want = sensitivity_rows(&PerTracer(&f), &f, &grid, &o, 0, grid.ny()).unwrap();
            assert_same(&got, &want, &format!("{what}, g = f"));
            let wobble = Wobble { amplitude: 0.03 };
            let got = sensitivity_rows(&f, &wobble, &grid, &o, 0, grid.ny()).unwrap();
            let want = sensitivity_rows(&PerTracer(&f), &wobble, &grid, &o, 0, grid.ny()).unwrap();
            assert_same(&got, &want, &format!("{what}, g analytic"));
            // Row ranges as workers split them, down to one row (fewer seeds than a tile
            // takes): the same values.
            for (j0, j1) in [(0, 1), (1, 9), (9, 23)] {
                let part = sensitivity_rows(&f, &g_grid, &grid, &o, j0, j1).unwrap();
                let whole = sensitivity_rows(&PerTracer(&f), &g_grid, &grid, &o, j0, j1).unwrap();
                assert_same(&part, &whole, &format!("{what}, rows {j0}..{j1}"));
            }
        }
        // Many steps: tiles of under a hundred tracers (the memory bound), several per grid.
        let o = options(0.5, 3.0, 0.004);
        let got = sensitivity_rows(&f, &g_grid, &grid, &o, 0, grid.ny()).unwrap();
        let want =
            sensitivity_rows(&PerTracer(&f), &PerTracer(&g_grid), &grid, &o, 0, grid.ny()).unwrap();
        assert_same(&got, &want, &format!("gaps {gaps}, 750 steps"));
    }
}
