//! The sensitivity bound holds and is first-order sharp on the time-periodic double gyre of
//! Shadden, Lekien & Marsden (2005, Physica D 212:271–304; A = 0.1, ε = 0.25, ω = 2π/10,
//! from memory, METHODS.md check 5), with a smooth periodic perturbation g (METHODS.md §2
//! check 9, derived from the first-order expansion y = x + εξ + O(ε²) of Kaszás & Haller
//! 2020, Chaos 30:093132):
//!
//! * nonlinear |y − x| ≤ ε·MS_g·(1 + Cε) with one C for all ε;
//! * |(y − x)/ε − ξ| → 0 with measured order 1;
//! * strain bound ≥ MS and MS_g ≥ |ξ| at every tracer;
//! * σ_FTLE from the sweep equals the variational FTLE of the engine.

use sillage::lagrangian::analytic::DoubleGyre;
use sillage::lagrangian::{
    ftle_rows, integrate_rk4, AdvectOptions, BoundaryPolicy, FtleFlag, FtleOptions, GradientRoute,
    Integrator, Rect, Tracer, TracerGrid, Vec2,
};
use sillage::sensitivity::analytic::Wobble;
use sillage::sensitivity::{
    sensitivity_rows, trajectory, Perturbed, SensitivityOptions, TrajectoryBuffer,
};

/// The perturbation: amplitude a tenth of the gyre's peak speed πA ≈ 0.31, so ε = 1e-2 is a
/// 0.1 % change of the flow.
const WOBBLE: Wobble = Wobble { amplitude: 0.03 };

const T: f64 = 10.0;
const STEP: f64 = 0.01;

fn seeds() -> Vec<Vec2> {
    // 50 × 25 = 1250 tracers inside the box.
    let grid = TracerGrid::new(Rect { x0: 0.02, x1: 1.98, y0: 0.02, y1: 0.98 }, 50, 25).unwrap();
    (0..25).flat_map(|j| (0..50).map(move |i| (i, j))).map(|(i, j)| grid.node(i, j)).collect()
}

#[test]
fn bound_holds_and_is_first_order_sharp() {
    let f = DoubleGyre::periodic();
    let n = (T / STEP).round() as usize;
    let mut buf = TrajectoryBuffer::default();
    let base: Vec<_> = seeds()
        .into_iter()
        .map(|p| (p, trajectory(&f, &WOBBLE, p, 0.0, STEP, n, &mut buf).unwrap()))
        .collect();
    assert!(base.len() >= 1000);
    for (p, s) in &base {
        assert_eq!(s.steps, n);
        assert!(
            s.strain_bound >= s.ms * (1.0 - 1e-9),
            "strain {} < MS {} at {p:?}",
            s.strain_bound,
            s.ms
        );
        let xi = s.xi[0].hypot(s.xi[1]);
        assert!(s.ms_g >= xi * (1.0 - 1e-9), "MS_g {} < |ξ| {xi} at {p:?}", s.ms_g);
    }
    let mut errors = Vec::new();
    let mut excess = Vec::new();
    for eps in [1e-2, 1e-3, 1e-4] {
        let fg = Perturbed { f, g: WOBBLE, eps };
        let (mut sq, mut c) = (0.0, 0.0f64);
        for (p, s) in &base {
            let y = integrate_rk4(&Tracer(&fg), *p, 0.0, T, STEP).y;
            let d = [y[0] - s.end[0], y[1] - s.end[1]];
            let lin = [d[0] / eps - s.xi[0], d[1] / eps - s.xi[1]];
            sq += lin[0] * lin[0] + lin[1] * lin[1];
            let ratio = d[0].hypot(d[1]) / (eps * s.ms_g);
            c = c.max((ratio - 1.0).max(0.0) / eps);
        }
        errors.push((sq / base.len() as f64).sqrt());
        excess.push(c);
    }
    println!("RMS |(y − x)/ε − ξ| for ε = 1e-2, 1e-3, 1e-4: {errors:.3?}");
    println!("smallest C with |y − x| ≤ ε MS_g (1 + Cε): {excess:.3?}");
    for k in 0..2 {
        let order = (errors[k] / errors[k + 1]).log10();
        assert!((0.85..1.15).contains(&order), "order {order:.3} between ε steps {k}, {}", k + 1);
        // One C serves every ε: the excess over the bound shrinks at least like ε².
        assert!(excess[k + 1] <= 1.5 * excess[k] + 1e-6, "C grows as ε shrinks: {excess:?}");
    }
}

#[test]
fn sweep_ftle_equals_the_variational_route() {
    let f = DoubleGyre::periodic();
    let grid = TracerGrid::new(Rect { x0: 0.0, x1: 2.0, y0: 0.0, y1: 1.0 }, 41, 21).unwrap();
    let advect = AdvectOptions {
        t0: 0.0,
        horizon: -T,
        integrator: Integrator::Rk4 { max_step: STEP },
        boundary: BoundaryPolicy::Stop,
    };
    let s = sensitivity_rows(&f, &WOBBLE, &grid, &SensitivityOptions { advect, g_ref: 1.0 }, 0, 21)
        .unwrap();
    let fo = FtleOptions { advect, route: GradientRoute::Variational };
    let r = ftle_rows(&f, &grid, &fo, 0, 21).unwrap();
    for k in 0..s.ftle.len() {
        assert_eq!(s.flag[k], FtleFlag::Full);
        assert!((s.ftle[k] - r.ftle[k]).abs() <= 1e-6 * r.ftle[k].abs().max(1e-3), "node {k}");
        assert!(
            s.strain_bound[k] >= s.ms[k] * (1.0 - 1e-6),
            "node {k}: strain {} MS {}",
            s.strain_bound[k],
            s.ms[k]
        );
        assert!(s.ms_g[k] >= s.xi[k] * (1.0 - 1e-6));
    }
}
