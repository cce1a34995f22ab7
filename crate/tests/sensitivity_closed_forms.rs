//! Model sensitivity on flows with closed forms (METHODS.md §2, checks 7 and 8).
//!
//! Linear saddle f = (λx, −λy), constant g = (g1, g2), t0 = 0 (closed forms derived from
//! Kaszás & Haller 2020, Chaos 30:093132, for a linear flow; METHODS.md check 7):
//! ξ(t) = (g1(e^{λt} − 1)/λ, g2(1 − e^{−λt})/λ), ‖∇F_s^t‖ = e^{λ(t−s)},
//! MS = (e^{λt} − 1)/λ, MS_g = |g|·MS, and the strain bound equals MS.

use sillage::lagrangian::analytic::{LinearSaddle, SolidBodyRotation};
use sillage::lagrangian::{
    AdvectOptions, BoundaryPolicy, Integrator, Rect, TracerGrid, Vec2, VelocityField,
};
use sillage::sensitivity::analytic::Uniform;
use sillage::sensitivity::{
    sensitivity_rows, trajectory, SensitivityOptions, TrajectoryBuffer, TrajectorySensitivity,
};

fn along<F: VelocityField>(f: &F, g: Vec2, horizon: f64, h: f64) -> TrajectorySensitivity {
    let n = (horizon.abs() / h).round() as usize;
    let step = horizon / n as f64;
    trajectory(f, &Uniform(g), [0.4, -0.3], 0.0, step, n, &mut TrajectoryBuffer::default())
        .expect("defined everywhere")
}

fn close(got: f64, want: f64, rel: f64, what: &str) {
    assert!(
        (got - want).abs() <= rel * want.abs().max(1e-300),
        "{what}: got {got:.12e}, want {want:.12e} (relative {:.2e})",
        (got - want).abs() / want.abs()
    );
}

/// METHODS.md check 7 [C]: λ = 0.8, g = (0.3, 0.4), t = 4: ξ = (8.824699, 0.479619),
/// MS_g = 14.707831 (six decimals as printed there), and the closed forms to 1e-8.
#[test]
fn saddle_matches_the_printed_values_and_closed_forms() {
    let (l, g, t) = (0.8, [0.3, 0.4], 4.0);
    let s = along(&LinearSaddle { lambda: l }, g, t, 0.01);
    assert!((s.xi[0] - 8.824699).abs() < 1e-6, "ξx {}", s.xi[0]);
    assert!((s.xi[1] - 0.479619).abs() < 1e-6, "ξy {}", s.xi[1]);
    assert!((s.ms_g - 14.707831).abs() < 1e-6, "MS_g {}", s.ms_g);
    let e = (l * t).exp();
    close(s.xi[0], g[0] * (e - 1.0) / l, 1e-8, "ξx");
    close(s.xi[1], g[1] * (1.0 - 1.0 / e) / l, 1e-8, "ξy");
    close(s.ms, (e - 1.0) / l, 1e-8, "MS");
    close(s.ms_g, 0.5 * (e - 1.0) / l, 1e-8, "MS_g");
    close(s.strain_bound, (e - 1.0) / l, 1e-8, "strain bound");
    // MS_g = |ξ| when g2 = 0 [D].
    let s = along(&LinearSaddle { lambda: l }, [0.3, 0.0], t, 0.01);
    close(s.ms_g, s.xi[0].hypot(s.xi[1]), 1e-8, "MS_g = |ξ| for g ∥ x");
}

/// λT = 20.48: forming ∇F_0^t (∇F_0^s)⁻¹ would lose ~18 digits here; the backward sweep of
/// one-step propagators keeps the closed forms to 1e-8 (METHODS.md §2, stable computation).
#[test]
fn saddle_with_long_horizon_keeps_full_accuracy() {
    let (l, g, t) = (0.8, [0.3, 0.4], 25.6);
    let s = along(&LinearSaddle { lambda: l }, g, t, 0.01);
    let e = (l * t).exp();
    assert!(e > 4e8);
    close(s.xi[0], g[0] * (e - 1.0) / l, 1e-8, "ξx");
    close(s.xi[1], g[1] * (1.0 - 1.0 / e) / l, 1e-8, "ξy");
    close(s.ms, (e - 1.0) / l, 1e-8, "MS");
    close(s.ms_g, 0.5 * (e - 1.0) / l, 1e-8, "MS_g");
    close(s.strain_bound, (e - 1.0) / l, 1e-8, "strain bound");
}

/// Backward time on the saddle: the y direction stretches; ξ(−T) = −∫_{−T}^{0} ∇F_s^{−T} g ds
/// gives ξ = (−g1(1 − e^{−λT})/λ, −g2(e^{λT} − 1)/λ) and MS = (e^{λT} − 1)/λ [D].
#[test]
fn saddle_backward() {
    let (l, g, t) = (0.8, [0.3, 0.4], 4.0);
    let s = along(&LinearSaddle { lambda: l }, g, -t, 0.01);
    let e = (l * t).exp();
    close(s.xi[0], -g[0] * (1.0 - 1.0 / e) / l, 1e-8, "ξx");
    close(s.xi[1], -g[1] * (e - 1.0) / l, 1e-8, "ξy");
    close(s.ms, (e - 1.0) / l, 1e-8, "MS");
    close(s.strain_bound, (e - 1.0) / l, 1e-8, "strain bound");
}

/// METHODS.md check 8: solid-body rotation has ‖∇F_s^t‖ = 1, so MS = t − t0, and S = 0, so
/// the strain bound is t − t0 too [D]. With constant g, |ξ| = |g|·|2 sin(Ωt/2)/Ω| (the
/// integral of a rotated constant vector) [D].
#[test]
fn rotation_ms_equals_the_horizon() {
    let (om, t) = (1.3, 5.0);
    let s = along(&SolidBodyRotation { omega: om }, [0.3, 0.4], t, 0.01);
    close(s.ms, t, 1e-9, "MS");
    close(s.strain_bound, t, 1e-12, "strain bound");
    close(s.ms_g, 0.5 * t, 1e-9, "MS_g");
    let xi = s.xi[0].hypot(s.xi[1]);
    // RK4 rotates by a slightly wrong angle per step (phase error O((Ωh)⁵) per step), which
    // the oscillating ξ feels more than the norms: 1e-7.
    close(xi, 0.5 * (2.0 * (om * t / 2.0).sin() / om).abs(), 1e-7, "|ξ|");
}

/// The row driver gives the same numbers as the per-trajectory call, σ_MS follows its
/// stated normalisation, and on the saddle ζ = σ_MS − σ_FTLE is the closed form
/// (1/T) ln(|g|(e^{λT} − 1)/(λ T g_ref)) − λ [D].
#[test]
fn rows_follow_the_normalisation() {
    let (l, t) = (0.8, 4.0);
    let f = LinearSaddle { lambda: l };
    let g = Uniform([0.3, 0.4]);
    let grid = TracerGrid::new(Rect { x0: -1.0, x1: 1.0, y0: -1.0, y1: 1.0 }, 5, 4).unwrap();
    let o = SensitivityOptions {
        advect: AdvectOptions {
            t0: 0.0,
            horizon: t,
            integrator: Integrator::Rk4 { max_step: 0.01 },
            boundary: BoundaryPolicy::Stop,
        },
        g_ref: 0.25,
    };
    let r = sensitivity_rows(&f, &g, &grid, &o, 1, 3).unwrap();
    assert_eq!(r.ms.len(), 2 * 5);
    assert_eq!(r.stats.full, 10);
    let e = (l * t).exp();
    let ms_g = 0.5 * (e - 1.0) / l;
    let sigma_ms = (ms_g / (t * 0.25)).ln() / t;
    for k in 0..10 {
        close(r.ftle[k] as f64, l, 1e-6, "σ_FTLE");
        close(r.sigma_ms[k] as f64, sigma_ms, 1e-6, "σ_MS");
        close(r.zeta[k] as f64, sigma_ms - l, 1e-5, "ζ");
        close(r.tau[k] as f64, t, 1e-7, "τ");
    }
}
