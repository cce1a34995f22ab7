//! Ridge extraction on the steady double gyre, whose forward-FTLE ridge is x = 1.

use sillage::lagrangian::analytic::DoubleGyre;
use sillage::lagrangian::{
    extract_ridges, ftle_field, AdvectOptions, BoundaryPolicy, FtleOptions, GradientRoute,
    Integrator, RidgeOptions, TracerGrid,
};

/// METHODS.md check 4 [D]: x = 1 is the stable manifold of the saddle (1, 0) of the steady
/// double gyre, so the forward-FTLE ridge in the interior is the segment x = 1. The
/// longest extracted ridge must run along it: every point within one tracer spacing, 80 % on
/// the line itself (x = 1 is mid-cell, where the symmetric σ puts the zero of ∇σ·n), over
/// most of the box height.
#[test]
fn steady_gyre_forward_ridge_is_x_equals_one() {
    let f = DoubleGyre::steady(0.1);
    let grid = TracerGrid::new(DoubleGyre::domain(), 80, 40).unwrap();
    let o = FtleOptions {
        advect: AdvectOptions {
            t0: 0.0,
            horizon: 15.0,
            integrator: Integrator::Rk4 { max_step: 0.02 },
            boundary: BoundaryPolicy::Stop,
        },
        route: GradientRoute::Variational,
    };
    let map = ftle_field(&f, &grid, &o).unwrap();
    let ridges = extract_ridges(&map, &RidgeOptions::default());
    let longest =
        ridges.iter().max_by(|a, b| a.length().total_cmp(&b.length())).expect("no ridge found");
    let h = grid.x.step;
    for p in &longest.points {
        assert!((p[0] - 1.0).abs() <= h, "ridge point {p:?} off x = 1");
    }
    let on_line = longest.points.iter().filter(|p| (p[0] - 1.0).abs() < 1e-9).count();
    assert!(on_line * 10 >= longest.points.len() * 8, "{on_line} of {}", longest.points.len());
    let (ymin, ymax) =
        longest.points.iter().fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p[1]), b.max(p[1])));
    assert!(ymax - ymin > 0.6, "ridge spans y {ymin}..{ymax} only");
    // The other ridges of this map hug the gyre boundaries (tracers near the separatrix
    // spend a long time near the saddles); none rivals the x = 1 ridge in length.
    let second =
        ridges.iter().map(|r| r.length()).filter(|&l| l < longest.length()).fold(0.0, f64::max);
    assert!(
        longest.length() > 0.7 && second < 0.3 * longest.length(),
        "longest {}, next {second}",
        longest.length()
    );
}
