//! RK4 and Dormand–Prince 5(4): observed order, tolerance honoured, backward time, exits.

mod lagrangian_common;

use sillage::lagrangian::analytic::{LinearSaddle, SolidBodyRotation};
use sillage::lagrangian::{
    integrate_dopri, integrate_rk4, DopriOptions, Rect, Stop, System, Tracer, Windowed,
    EXIT_RESOLUTION,
};

/// y′ = −2t·y, y(0) = 1: y = exp(−t²) [D]. Non-autonomous, so the stage times matter.
struct Gauss;
impl System<1> for Gauss {
    fn rhs(&self, t: f64, y: &[f64; 1]) -> Option<[f64; 1]> {
        Some([-2.0 * t * y[0]])
    }
}

/// Observed global order of classical RK4 is 4: halving Δt divides the error by ≈ 2⁴ (the
/// method's order, Kutta 1901; convergence check by halving as in METHODS.md §1).
#[test]
fn rk4_observed_order_is_four() {
    let err = |h: f64| {
        let out = integrate_rk4(&Gauss, [1.0], 0.0, 2.0, h);
        assert_eq!(out.stop, Stop::Complete);
        (out.y[0] - (-4.0f64).exp()).abs()
    };
    for h in [0.05, 0.025] {
        let order = (err(h) / err(h / 2.0)).log2();
        assert!((order - 4.0).abs() < 0.15, "h = {h}: observed order {order}");
    }
    // Same on a trajectory of solid-body rotation (exact solution a rotation [D]).
    let rot = SolidBodyRotation { omega: 1.0 };
    let err = |h: f64| {
        let out = integrate_rk4(&Tracer(&rot), [1.0, 0.0], 0.0, 3.0, h);
        (out.y[0] - 3.0f64.cos()).hypot(out.y[1] - 3.0f64.sin())
    };
    let order = (err(0.05) / err(0.025)).log2();
    assert!((order - 4.0).abs() < 0.15, "rotation: observed order {order}");
}

/// The adaptive integrator honours its tolerance: the global error in units of the
/// requested tolerance stays O(1) (the criterion of scipy.integrate's tests:
/// rms((y − y_true)/(atol + rtol·|y_true|)) < 5), over a range of tolerances, forward and
/// backward in time.
#[test]
fn dopri_honours_tolerance_both_directions() {
    for &rtol in &[1e-4, 1e-6, 1e-8, 1e-10] {
        let o = DopriOptions { rtol, atol: rtol * 1e-3, max_steps: 100_000 };
        let out = integrate_dopri(&Gauss, [1.0], 0.0, 2.0, &o);
        assert_eq!(out.stop, Stop::Complete);
        assert_eq!(out.t, 2.0);
        let exact = (-4.0f64).exp();
        let e = (out.y[0] - exact).abs() / (o.atol + rtol * exact);
        assert!(e < 5.0, "rtol {rtol}: error {e} tolerances");
        // Backward from t = 2 to t = 0.
        let back = integrate_dopri(&Gauss, [exact], 2.0, -2.0, &o);
        let e = (back.y[0] - 1.0).abs() / (o.atol + rtol);
        assert!(e < 5.0, "backward rtol {rtol}: error {e} tolerances");
    }
    // Tighter tolerance costs more evaluations (effort grows, as it must).
    let calls = |rtol: f64| {
        let o = DopriOptions { rtol, atol: 1e-12, max_steps: 100_000 };
        integrate_dopri(&Gauss, [1.0], 0.0, 2.0, &o).rhs_calls
    };
    assert!(calls(1e-10) > calls(1e-5));
}

/// On y′ = y the embedded error estimate of one step is at least the true local error (as
/// checked in scipy.integrate's Runge–Kutta tests), for the tableau data the integrator
/// uses; and the driver keeps the global error within O(1) tolerances at a loose tolerance.
#[test]
fn dopri_error_estimate_on_exponential_growth() {
    use sillage::lagrangian::DOPRI54;
    for &h in &[0.5, 0.2, 0.1, 0.05] {
        // Stages for y′ = y from y = 1: kᵢ = 1 + h Σⱼ aᵢⱼ kⱼ.
        let mut k = [0.0f64; 7];
        for i in 0..7 {
            k[i] = 1.0 + h * (0..i).map(|j| DOPRI54.a[i][j] * k[j]).sum::<f64>();
        }
        let y1 = 1.0 + h * (0..7).map(|i| DOPRI54.b[i] * k[i]).sum::<f64>();
        let est = (h * (0..7).map(|i| DOPRI54.e[i] * k[i]).sum::<f64>()).abs();
        let truth = (y1 - h.exp()).abs();
        assert!(est >= truth, "h = {h}: estimate {est} below true error {truth}");
    }
    struct Grow;
    impl System<1> for Grow {
        fn rhs(&self, _t: f64, y: &[f64; 1]) -> Option<[f64; 1]> {
            Some([y[0]])
        }
    }
    let o = DopriOptions { rtol: 1e-3, atol: 1e-6, max_steps: 1000 };
    let out = integrate_dopri(&Grow, [1.0], 0.0, 1.0, &o);
    let e = (out.y[0] - 1f64.exp()).abs() / (o.atol + o.rtol * 1f64.exp());
    assert!(e < 5.0, "{e}");
    assert!(out.rhs_calls < 60, "effort {}", out.rhs_calls);
}

/// A tracer of the saddle u = (x, −y) started at (0.5, 0.2) leaves the window x ≤ 1 at
/// τ = ln 2 exactly [D: x = 0.5 e^t]. Both integrators stop there and report that time.
#[test]
fn exit_time_is_located() {
    let f = Windowed {
        inner: LinearSaddle { lambda: 1.0 },
        rect: Rect { x0: -1.0, x1: 1.0, y0: -1.0, y1: 1.0 },
    };
    let rk = integrate_rk4(&Tracer(&f), [0.5, 0.2], 0.0, 3.0, 0.01);
    assert_eq!(rk.stop, Stop::Exited);
    // Bisection resolves h/4096 ≈ 2.4e-6; the stage points' lead on the trajectory is O(h⁴).
    assert!((rk.t - 2f64.ln()).abs() < 1e-5, "RK4 exit at {}", rk.t);
    assert!(rk.y[0] <= 1.0);
    let o = DopriOptions::default();
    let dp = integrate_dopri(&Tracer(&f), [0.5, 0.2], 0.0, 3.0, &o);
    assert_eq!(dp.stop, Stop::Exited);
    assert!((dp.t - 2f64.ln()).abs() < 1e-5, "DP exit at {}", dp.t);
    assert!(dp.t <= 2f64.ln() + 3.0 * EXIT_RESOLUTION);
    // Backward in time y = 0.2 e^{|t|} grows and leaves y = 1 at |t| = ln 5 [D].
    let back = integrate_rk4(&Tracer(&f), [0.5, 0.2], 0.0, -3.0, 0.01);
    assert_eq!(back.stop, Stop::Exited);
    assert!((back.t + 5f64.ln()).abs() < 1e-5, "backward exit at {}", back.t);
}
