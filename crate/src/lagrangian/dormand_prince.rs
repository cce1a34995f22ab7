//! Dormand–Prince 5(4) with error control: the accurate option.
//!
//! Dormand & Prince (1980, J. Comput. Appl. Math. 6:19–26), tableau [`DOPRI54`]: seven
//! stages, FSAL (six new evaluations per accepted step), fifth-order solution propagated,
//! the embedded fourth-order solution used only to estimate the local error
//! err = h Σ eᵢ kᵢ. A step is accepted when
//!
//! ‖err‖ = √(mean over components of (errᵢ / (atol + rtol·max(|yᵢ|, |ŷᵢ|)))²) ≤ 1,
//!
//! and the next step is h·min(MAX_GROWTH, max(MIN_SHRINK, SAFETY·‖err‖^(−1/5))), never
//! growing right after a rejection (standard step-size control, Hairer, Nørsett & Wanner
//! 1993, Solving Ordinary Differential Equations I, §II.4; the starting step follows the
//! same section). For the variational system the tangent matrix is part of the controlled
//! state, so ∇F is as accurate as the trajectory.
//!
//! A stage without velocity (window edge, mask) rejects the step and halves it; once the
//! step falls below `EXIT_RESOLUTION·|T|` the trajectory is stopped as exited there.

use super::outcome::{Outcome, Stop};
use super::system::System;
use super::tableau::{combine, stages, DOPRI54};
use serde::{Deserialize, Serialize};

/// Next step at most this many times the last accepted one: limits the damage of a
/// lucky error estimate.
const MAX_GROWTH: f64 = 10.0;
/// Next step at least this fraction of the rejected one: avoids collapsing on one bad
/// estimate.
const MIN_SHRINK: f64 = 0.2;
/// Aim below the tolerance so the next step is likely to be accepted.
const SAFETY: f64 = 0.9;
/// An exit is located to this fraction of the horizon.
pub const EXIT_RESOLUTION: f64 = 1e-7;

/// Tolerances and budget of the adaptive integration.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DopriOptions {
    /// Relative tolerance per component.
    pub rtol: f64,
    /// Absolute tolerance per component (same units as positions and ∇F entries).
    pub atol: f64,
    /// Step budget per trajectory; beyond it the tracer is reported as failed.
    pub max_steps: u32,
}

impl Default for DopriOptions {
    fn default() -> Self {
        DopriOptions { rtol: 1e-6, atol: 1e-9, max_steps: 100_000 }
    }
}

#[inline(always)]
fn scaled_rms<const N: usize>(v: &[f64; N], y: &[f64; N], y1: &[f64; N], o: &DopriOptions) -> f64 {
    let mut s = 0.0;
    for n in 0..N {
        let sc = o.atol + o.rtol * y[n].abs().max(y1[n].abs());
        let r = v[n] / sc;
        s += r * r;
    }
    (s / N as f64).sqrt()
}

/// Starting step from the size of y and of its first two derivatives (Hairer et al. 1993).
fn first_step<const N: usize, Sys: System<N>>(
    sys: &Sys,
    t0: f64,
    y0: &[f64; N],
    f0: &[f64; N],
    dir: f64,
    span: f64,
    o: &DopriOptions,
) -> (f64, u32) {
    let d0 = scaled_rms(y0, y0, y0, o);
    let d1 = scaled_rms(f0, y0, y0, o);
    let h0 = if d0 < 1e-5 || d1 < 1e-5 { 1e-6 } else { 0.01 * d0 / d1 };
    let h0 = h0.min(span);
    let mut y1 = *y0;
    for n in 0..N {
        y1[n] += dir * h0 * f0[n];
    }
    let Some(f1) = sys.rhs(t0 + dir * h0, &y1) else {
        return (h0, 1);
    };
    let mut df = [0.0; N];
    for n in 0..N {
        df[n] = f1[n] - f0[n];
    }
    let d2 = scaled_rms(&df, y0, y0, o) / h0;
    let m = d1.max(d2);
    let h1 = if m <= 1e-15 { (h0 * 1e-3).max(1e-6) } else { (0.01 / m).powf(0.2) };
    ((100.0 * h0).min(h1).min(span), 1)
}

/// Integrates `sys` from `(t0, y0)` over `horizon` (signed) with error control.
pub fn integrate_dopri<const N: usize, Sys: System<N>>(
    sys: &Sys,
    y0: [f64; N],
    t0: f64,
    horizon: f64,
    o: &DopriOptions,
) -> Outcome<N> {
    let dir = horizon.signum();
    let span = horizon.abs();
    let t_end = t0 + horizon;
    let mut out = Outcome { y: y0, t: t0, stop: Stop::Exited, rhs_calls: 1, rejected: 0 };
    let Some(mut f0) = sys.rhs(t0, &y0) else {
        return out;
    };
    let (mut h, calls) = first_step(sys, t0, &y0, &f0, dir, span, o);
    out.rhs_calls += calls;
    let h_exit = EXIT_RESOLUTION * span;
    let mut k = [[0.0; N]; 7];
    let mut steps = 0u32;
    let mut no_growth = false;
    loop {
        if steps >= o.max_steps {
            out.stop = Stop::Failed;
            return out;
        }
        steps += 1;
        let remaining = (t_end - out.t) * dir;
        let last = h >= remaining;
        let h_try = if last { remaining } else { h };
        out.rhs_calls = out.rhs_calls.saturating_add(6);
        if !stages(&DOPRI54, sys, out.t, dir * h_try, &out.y, Some(f0), &mut k) {
            out.rejected += 1;
            h = 0.5 * h_try;
            no_growth = true;
            if h < h_exit {
                out.stop = Stop::Exited;
                return out;
            }
            continue;
        }
        let y1 = combine(&DOPRI54.b, dir * h_try, &out.y, &k);
        let err = combine(&DOPRI54.e, dir * h_try, &[0.0; N], &k);
        let norm = scaled_rms(&err, &out.y, &y1, o);
        if norm <= 1.0 {
            out.y = y1;
            f0 = k[6];
            if last {
                out.t = t_end;
                out.stop = Stop::Complete;
                return out;
            }
            out.t += dir * h_try;
            let mut factor =
                if norm == 0.0 { MAX_GROWTH } else { (SAFETY * norm.powf(-0.2)).min(MAX_GROWTH) };
            if no_growth {
                factor = factor.min(1.0);
                no_growth = false;
            }
            h = h_try * factor;
        } else {
            out.rejected += 1;
            h = h_try * (SAFETY * norm.powf(-0.2)).max(MIN_SHRINK);
            no_growth = true;
        }
    }
}
