//! FTLE sequences: flow-map composition (Brunton & Rowley 2010, Chaos 20:017503) against
//! direct integration, with its error measured as the tracer grid is refined.

use sillage::lagrangian::analytic::DoubleGyre;
use sillage::lagrangian::{
    ftle_sequence, AdvectOptions, BoundaryPolicy, FtleFlag, FtleOptions, FtleRows, GradientRoute,
    Integrator, SequenceMethod, TracerGrid,
};

fn options(horizon: f64) -> FtleOptions {
    FtleOptions {
        advect: AdvectOptions {
            t0: 0.0,
            horizon,
            integrator: Integrator::Rk4 { max_step: 0.02 },
            boundary: BoundaryPolicy::Stop,
        },
        route: GradientRoute::TracerGrid,
    }
}

/// Median and maximum |σ_composed − σ_direct| over nodes where both have a full value.
fn errors(a: &[FtleRows], b: &[FtleRows]) -> (f64, f64) {
    let mut e: Vec<f64> = Vec::new();
    for (x, y) in a.iter().zip(b) {
        for n in 0..x.ftle.len() {
            if x.flag[n] == FtleFlag::Full && y.flag[n] == FtleFlag::Full {
                e.push((x.ftle[n] as f64 - y.ftle[n] as f64).abs());
            }
        }
    }
    e.sort_by(f64::total_cmp);
    (e[e.len() / 2], e[e.len() - 1])
}

/// Composition reproduces direct integration up to its interpolation error, and that error
/// falls as the tracer grid is refined (bilinear interpolation of the short maps: second
/// order in the spacing, common practice). Measured on the time-periodic double gyre of
/// Shadden et al. (2005), T = ±10 from 3 start times 1 apart (10 short maps per member);
/// the numbers are printed with --nocapture and quoted in the module doc of sequence.rs.
#[test]
fn composition_error_against_direct_integration() {
    let f = DoubleGyre::periodic();
    for horizon in [10.0, -10.0] {
        let o = options(horizon);
        let t0 = if horizon > 0.0 { 0.0 } else { 12.0 };
        let mut prev = f64::MAX;
        for n in [26usize, 51] {
            let grid = TracerGrid::new(DoubleGyre::domain(), 2 * n - 1, n).unwrap();
            let direct = ftle_sequence(&f, &grid, &o, t0, 1.0, 3, SequenceMethod::Direct).unwrap();
            let comp =
                ftle_sequence(&f, &grid, &o, t0, 1.0, 3, SequenceMethod::Composition).unwrap();
            let (med, max) = errors(&comp, &direct);
            let cost_d: u64 = direct.iter().map(|r| r.stats.rhs_calls).sum();
            let cost_c: u64 = comp.iter().map(|r| r.stats.rhs_calls).sum();
            eprintln!(
                "T = {horizon}, spacing {:.4}: median |Δσ| {med:.2e}, max {max:.2e}, \
                 evaluations {cost_c} vs {cost_d} direct",
                grid.y.step
            );
            assert!(med < prev / 2.0, "median error {med} did not fall (was {prev})");
            assert!(cost_c * 2 < cost_d);
            prev = med;
        }
        assert!(prev < 5e-4, "finest median error {prev}");
    }
}

#[test]
fn composition_needs_a_whole_number_of_intervals() {
    let f = DoubleGyre::periodic();
    let grid = TracerGrid::new(DoubleGyre::domain(), 11, 6).unwrap();
    let e = ftle_sequence(&f, &grid, &options(2.5), 0.0, 1.0, 2, SequenceMethod::Composition)
        .unwrap_err()
        .to_string();
    assert!(e.contains("whole multiple"), "{e}");
    assert!(ftle_sequence(&f, &grid, &options(2.0), 0.0, 0.0, 2, SequenceMethod::Direct).is_err());
    assert!(ftle_sequence(&f, &grid, &options(2.0), 0.0, 1.0, 0, SequenceMethod::Direct).is_err());
}
