//! FTLE on the checks of METHODS.md §1: closed forms on linear flows, the steady double
//! gyre, the three ∇F routes, the boundary policy and the exit-time map.

mod lagrangian_common;

use sillage::lagrangian::analytic::{
    linspace, sample_series, DoubleGyre, LinearSaddle, SimpleShear, SolidBodyRotation,
};
use sillage::lagrangian::{
    ftle_field, singular_values, AdvectOptions, BoundaryPolicy, DopriOptions, FtleFlag,
    FtleOptions, GradientRoute, GriddedField, Integrator, Rect, SpaceInterp, TimeInterp,
    TracerGrid, VelocityField, Windowed,
};
use std::f64::consts::PI;

fn opts(t0: f64, horizon: f64, integrator: Integrator, route: GradientRoute) -> FtleOptions {
    FtleOptions {
        advect: AdvectOptions { t0, horizon, integrator, boundary: BoundaryPolicy::Stop },
        route,
    }
}

const RK4_FINE: Integrator = Integrator::Rk4 { max_step: 0.005 };

fn tight() -> Integrator {
    Integrator::DormandPrince(DopriOptions { rtol: 1e-10, atol: 1e-12, max_steps: 1_000_000 })
}

const ROUTES: [GradientRoute; 3] = [
    GradientRoute::TracerGrid,
    GradientRoute::Auxiliary { offset: 1e-4 },
    GradientRoute::Variational,
];

fn square(h: f64) -> Rect {
    Rect { x0: -h, x1: h, y0: -h, y1: h }
}

/// σ₁, σ₂ in closed form against the SVD of known matrices: a rotation (1, 1), a diagonal
/// (4, 0.25), the shear [[1, 2], [0, 1]] (√2 ± 1) and [[3, 0], [4, 5]], whose CᵀC =
/// [[25, 20], [20, 25]] has eigenvalues 45 and 5 [D].
#[test]
fn singular_values_closed_form() {
    let (c, s) = (0.3f64.cos(), 0.3f64.sin());
    let cases: [([[f64; 2]; 2], f64, f64); 4] = [
        ([[c, -s], [s, c]], 1.0, 1.0),
        ([[0.25, 0.0], [0.0, 4.0]], 4.0, 0.25),
        ([[1.0, 2.0], [0.0, 1.0]], 2f64.sqrt() + 1.0, 2f64.sqrt() - 1.0),
        ([[3.0, 0.0], [4.0, 5.0]], 45f64.sqrt(), 5f64.sqrt()),
    ];
    for (m, s1, s2) in cases {
        let (a, b) = singular_values(m);
        assert!((a - s1).abs() < 1e-14 && (b - s2).abs() < 1e-14, "{m:?}: {a}, {b}");
    }
}

/// Check 1 (METHODS.md, [D]): the linear saddle u = (λx, −λy) has σ = λ everywhere,
/// forward and backward, by all three routes, to 1e-6 on the analytic field.
#[test]
fn saddle_sigma_is_lambda_analytic() {
    let lambda = 0.8;
    let f = LinearSaddle { lambda };
    let grid = TracerGrid::new(square(1.0), 9, 7).unwrap();
    for horizon in [2.5, -2.5] {
        for route in ROUTES {
            for integ in [RK4_FINE, tight()] {
                let r = ftle_field(&f, &grid, &opts(0.0, horizon, integ, route)).unwrap();
                assert_eq!(r.stats.full, grid.len(), "{route:?}");
                for (n, &s) in r.ftle.iter().enumerate() {
                    assert!(
                        (s as f64 - lambda).abs() < 1e-6,
                        "T = {horizon} {route:?} {integ:?} node {n}: σ = {s}"
                    );
                }
                assert!(r.stats.max_det_deviation < 1e-6);
            }
        }
    }
}

/// Check 1 on data: the saddle sampled on a 64×64 grid over [−1, 1]² gives σ = λ to 1e-3
/// (bilinear is exact on a linear field; the error left is f32 storage). Tracers leave the
/// window; with the stop policy σ over the time integrated is still λ [D: ∇F =
/// diag(e^{λτ}, e^{−λτ}) for any τ], and with the extrapolation policy (exact for a
/// linear field) every node runs the full horizon.
#[test]
fn saddle_sigma_is_lambda_on_sampled_data() {
    let lambda = 0.5;
    let ax = linspace(-1.0, 1.0, 64);
    let s = sample_series(&LinearSaddle { lambda }, &ax, &ax, &[0.0]).unwrap();
    let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let grid = TracerGrid::over_window(&f, 50, 50).unwrap();
    for policy in [BoundaryPolicy::Stop, BoundaryPolicy::Extrapolate] {
        for horizon in [3.0, -3.0] {
            let mut o = opts(0.0, horizon, RK4_FINE, GradientRoute::Variational);
            o.advect.boundary = policy;
            let r = ftle_field(&f, &grid, &o).unwrap();
            let mut checked = 0;
            for (n, (&s, &flag)) in r.ftle.iter().zip(&r.flag).enumerate() {
                if matches!(flag, FtleFlag::Full | FtleFlag::Exited | FtleFlag::Short) {
                    assert!(
                        (s as f64 - lambda).abs() < 1e-3,
                        "{policy:?} T {horizon} node {n}: {s}"
                    );
                    checked += 1;
                }
            }
            match policy {
                BoundaryPolicy::Stop => {
                    assert!(r.stats.exited + r.stats.short > 0);
                    assert!(checked > grid.len() * 9 / 10, "{checked}");
                }
                BoundaryPolicy::Extrapolate => assert_eq!(r.stats.full, grid.len()),
            }
        }
    }
}

/// Check 2 [D]: solid-body rotation, σ = 0 (∇F is a rotation), det ∇F = 1.
#[test]
fn rotation_sigma_is_zero() {
    let f = SolidBodyRotation { omega: 0.7 };
    let grid = TracerGrid::new(square(1.0), 8, 8).unwrap();
    for route in ROUTES {
        let r = ftle_field(&f, &grid, &opts(0.0, 9.0, RK4_FINE, route)).unwrap();
        for &s in &r.ftle {
            assert!((s as f64).abs() < 1e-6, "{route:?}: σ = {s}");
        }
        assert!(r.stats.max_det_deviation < 1e-6);
    }
}

/// Check 3 [D]: simple shear u = (γy, 0): σ₁ = γT/2 + √(1 + (γT/2)²), σ = ln σ₁ / |T|,
/// forward and backward (σ₁ depends on |γT| only).
#[test]
fn shear_closed_form() {
    let gamma = 1.3;
    let f = SimpleShear { gamma };
    let grid = TracerGrid::new(square(1.0), 6, 6).unwrap();
    for horizon in [4.0, -4.0, 20.0] {
        let a = gamma * f64::abs(horizon) / 2.0;
        let want = (a + (1.0 + a * a).sqrt()).ln() / f64::abs(horizon);
        for route in ROUTES {
            let r = ftle_field(&f, &grid, &opts(0.0, horizon, RK4_FINE, route)).unwrap();
            for &s in &r.ftle {
                assert!((s as f64 - want).abs() < 1e-6, "T {horizon} {route:?}: {s} vs {want}");
            }
        }
    }
}

/// Check 4 [C, METHODS.md: computed while planning with RK4 Δt = 0.005]: steady double gyre
/// A = 0.1, T = 15: σ(1, 0.5) = 0.9408, σ(0.99, 0.5) = σ(1.01, 0.5) = 0.3015 (4 digits);
/// and the bound σ ≤ π²A [D] at every node of a grid over the box.
#[test]
fn steady_double_gyre_values_and_bound() {
    let a = 0.1;
    let f = DoubleGyre::steady(a);
    let o = opts(0.0, 15.0, RK4_FINE, GradientRoute::Variational);
    let pts = TracerGrid::new(Rect { x0: 0.99, x1: 1.01, y0: 0.5, y1: 0.6 }, 3, 2).unwrap();
    let r = ftle_field(&f, &pts, &o).unwrap();
    let want = [0.3015, 0.9408, 0.3015];
    for (i, w) in want.iter().enumerate() {
        assert!((r.at(i, 0) as f64 - w).abs() < 1e-4, "x = {}: {}", pts.x.coord(i), r.at(i, 0));
    }
    let grid = TracerGrid::new(DoubleGyre::domain(), 41, 21).unwrap();
    let r = ftle_field(&f, &grid, &o).unwrap();
    let bound = PI * PI * a;
    let max = r.ftle.iter().fold(0.0f32, |m, &s| m.max(s)) as f64;
    assert!(max <= bound, "max σ {max} > π²A = {bound}");
    assert!(max > 0.5 * bound, "max σ {max} suspiciously small");
}

/// Check 4 [D]: x = 1 is the stable manifold of the saddle (1, 0), so in each interior row
/// the forward FTLE peaks on x = 1 — here the node x = 1 beats every other node of its row
/// on a grid of spacing 0.02.
#[test]
fn steady_double_gyre_ridge_on_x_equals_one() {
    let f = DoubleGyre::steady(0.1);
    let grid = TracerGrid::new(Rect { x0: 0.6, x1: 1.4, y0: 0.1, y1: 0.9 }, 41, 9).unwrap();
    let r = ftle_field(
        &f,
        &grid,
        &opts(0.0, 15.0, Integrator::Rk4 { max_step: 0.01 }, GradientRoute::Variational),
    )
    .unwrap();
    for j in 0..grid.ny() {
        let row: Vec<f32> = (0..grid.nx()).map(|i| r.at(i, j)).collect();
        let imax = (0..row.len()).max_by(|&a, &b| row[a].total_cmp(&row[b])).unwrap();
        assert_eq!(imax, 20, "row y = {}: ridge at x = {}", grid.y.coord(j), grid.x.coord(imax));
    }
}

/// The three routes agree where they should: on the time-periodic double gyre, T = 5, a
/// fine tracer grid (spacing 0.005), δ = 1e-5 and the variational equation give the same σ
/// away from ridges. And they differ where METHODS.md says: [C] steady gyre, T = 15 at
/// (1, 0.5): the auxiliary grid with δ = 1e-6 under-reads (0.899 vs 0.9408) because
/// δ·e^{σ|T|} ≈ 1.3 is not small, and its det ∇F deviation is large (up to 0.47), while the
/// variational route keeps det ∇F = 1.
#[test]
fn routes_agree_and_differ_as_expected() {
    let f = DoubleGyre::periodic();
    let grid = TracerGrid::new(Rect { x0: 0.3, x1: 0.32, y0: 0.3, y1: 0.32 }, 5, 5).unwrap();
    let results: Vec<Vec<f32>> = [
        GradientRoute::TracerGrid,
        GradientRoute::Auxiliary { offset: 1e-5 },
        GradientRoute::Variational,
    ]
    .iter()
    .map(|&route| ftle_field(&f, &grid, &opts(0.0, 5.0, tight(), route)).unwrap().ftle)
    .collect();
    for (n, ((&a, &b), &c)) in results[0].iter().zip(&results[1]).zip(&results[2]).enumerate() {
        assert!((b - c).abs() < 1e-5, "node {n}: auxiliary {b} vs variational {c}");
        assert!((a - c).abs() < 2e-3, "node {n}: tracer grid {a} vs variational {c}");
    }
    let steady = DoubleGyre::steady(0.1);
    let one = TracerGrid::new(Rect { x0: 1.0, x1: 1.01, y0: 0.5, y1: 0.51 }, 2, 2).unwrap();
    let var =
        ftle_field(&steady, &one, &opts(0.0, 15.0, RK4_FINE, GradientRoute::Variational)).unwrap();
    let aux = ftle_field(
        &steady,
        &one,
        &opts(0.0, 15.0, RK4_FINE, GradientRoute::Auxiliary { offset: 1e-6 }),
    )
    .unwrap();
    let (sv, sa) = (var.at(0, 0) as f64, aux.at(0, 0) as f64);
    assert!((sv - 0.9408).abs() < 1e-4, "variational {sv}");
    assert!(sa < sv - 0.02, "auxiliary {sa} should under-read {sv}");
    assert!(aux.det_deviation[0] > 0.1, "det deviation {}", aux.det_deviation[0]);
    assert!(var.det_deviation[0] < 1e-3, "det deviation {}", var.det_deviation[0]);
}

/// Exit-time map [D]: on the saddle u = (x, −y) cut to [−1, 1]², a seed at x₀ > 0 leaves
/// through x = 1 at τ = ln(1/x₀) when that is shorter than the horizon; seeds that stay get
/// τ = |T| and flag Full; σ over τ is still λ. Seeds outside the window are "masked".
#[test]
fn exit_time_map_on_a_windowed_saddle() {
    let f = Windowed { inner: LinearSaddle { lambda: 1.0 }, rect: square(1.0) };
    let grid = TracerGrid::new(Rect { x0: 0.05, x1: 1.2, y0: -0.5, y1: 0.5 }, 24, 3).unwrap();
    for route in [GradientRoute::Variational, GradientRoute::Auxiliary { offset: 1e-6 }] {
        let r = ftle_field(&f, &grid, &opts(0.0, 2.0, RK4_FINE, route)).unwrap();
        for j in 0..3 {
            for i in 0..grid.nx() {
                let x0 = grid.x.coord(i);
                let n = j * grid.nx() + i;
                if x0 > 1.0 {
                    assert_eq!(r.flag[n], FtleFlag::Masked);
                    continue;
                }
                let tau = (1.0 / x0).ln().min(2.0);
                let tol = if route == GradientRoute::Variational { 1e-5 } else { 1e-4 };
                assert!(
                    (r.tau[n] as f64 - tau).abs() < tol,
                    "{route:?} x0 {x0}: τ {} vs {tau}",
                    r.tau[n]
                );
                let want_flag = if tau >= 2.0 {
                    FtleFlag::Full
                } else if tau >= 1.0 {
                    FtleFlag::Exited
                } else if tau > 0.0 {
                    FtleFlag::Short
                } else {
                    FtleFlag::NoValue
                };
                assert_eq!(r.flag[n], want_flag, "x0 {x0} τ {tau}");
                if tau > 1e-3 {
                    assert!((r.ftle[n] as f64 - 1.0).abs() < 1e-4, "x0 {x0}: σ {}", r.ftle[n]);
                }
            }
        }
    }
}

/// Masked cells exclude their seeds; a tracer running into a masked block stops there under
/// both policies (the mask is a body, not the window edge).
#[test]
fn masked_seeds_and_bodies() {
    let ax = linspace(-1.0, 1.0, 21);
    let rot = SolidBodyRotation { omega: 1.0 };
    let mut s = sample_series(&rot, &ax, &ax, &[0.0]).unwrap();
    // Mask a block around (0.5, 0) on the positive x axis: the anticlockwise rotation
    // carries a tracer from (0, −0.6) into it within a quarter turn.
    let mut mask = s.mask().to_vec();
    for j in 9..=11 {
        for i in 14..=16 {
            mask[j * 21 + i] = true;
        }
    }
    s = sillage::field::Series::from_parts(sillage::field::SeriesParts {
        x: ax.clone(),
        y: ax.clone(),
        t: vec![0.0],
        u: s.u().to_vec(),
        v: s.v().to_vec(),
        mask: Some(mask),
        ..Default::default()
    })
    .unwrap();
    let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let grid = TracerGrid::new(square(0.8), 17, 17).unwrap();
    for policy in [BoundaryPolicy::Stop, BoundaryPolicy::Extrapolate] {
        let mut o = opts(0.0, 2.0, RK4_FINE, GradientRoute::Variational);
        o.advect.boundary = policy;
        let r = ftle_field(&f, &grid, &o).unwrap();
        // Node (0.6, 0.0) lies in the masked block.
        let n = 8 * 17 + 14;
        assert!((grid.node(14, 8)[0] - 0.6).abs() < 1e-12);
        assert_eq!(r.flag[n], FtleFlag::Masked, "{policy:?}");
        // Node (0.0, −0.6) rotates into the block within a quarter turn (π/2 > τ).
        let m = 2 * 17 + 8;
        assert!(r.tau[m] < 1.6 && r.tau[m] > 0.9, "{policy:?}: τ = {}", r.tau[m]);
        assert!(f.velocity(grid.node(8, 2), 0.0).is_some());
    }
}
