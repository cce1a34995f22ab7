//! Classical fourth-order Runge–Kutta with a fixed step (tableau [`RK4`]), the fast default.
//!
//! The horizon is divided into n = ⌈|T| / Δt_max⌉ equal steps, so every tracer of a grid
//! visits the same times (what tracer-grid differences and flow-map composition need).
//! When a stage lands where the field has no velocity, the step is bisected
//! [`EXIT_BISECTIONS`] times from the last good state, advancing whenever the half step
//! succeeds, which locates the exit time to Δt / 2¹² without extrapolating any data.
//!
//! Global error O(Δt⁴) for a smooth field; on bilinear data the field is only C⁰ across cell
//! faces and the observed order drops towards 2 once Δt resolves cell crossings (common
//! practice; convergence is checked by halving Δt, METHODS.md §1).

use super::outcome::{Outcome, Stop};
use super::system::System;
use super::tableau::{combine, stages, RK4};

/// Bisections used to locate an exit inside the step where it happened.
pub const EXIT_BISECTIONS: u32 = 12;

/// One RK4 step from `(t, y)` with step `h` (negative for backward time). `None` if a stage
/// point has no velocity.
#[inline(always)]
pub fn rk4_step<const N: usize, Sys: System<N>>(
    sys: &Sys,
    t: f64,
    h: f64,
    y: &[f64; N],
) -> Option<[f64; N]> {
    let mut k = [[0.0; N]; 4];
    if !stages(&RK4, sys, t, h, y, None, &mut k) {
        return None;
    }
    Some(combine(&RK4.b, h, y, &k))
}

/// Number of equal steps no longer than `max_step` covering `|horizon|` (at least one).
pub fn step_count(horizon: f64, max_step: f64) -> u64 {
    ((horizon.abs() / max_step) * (1.0 - 1e-12)).ceil().max(1.0) as u64
}

/// Integrates `sys` from `(t0, y0)` over `horizon` (signed) in equal steps of at most
/// `max_step`. The caller checks that the field is defined at the start.
pub fn integrate_rk4<const N: usize, Sys: System<N>>(
    sys: &Sys,
    y0: [f64; N],
    t0: f64,
    horizon: f64,
    max_step: f64,
) -> Outcome<N> {
    let n = step_count(horizon, max_step);
    let h = horizon / n as f64;
    let mut y = y0;
    let mut t = t0;
    let mut calls = 0u32;
    for s in 0..n {
        calls = calls.saturating_add(4);
        if let Some(y1) = rk4_step(sys, t, h, &y) {
            y = y1;
            t = if s + 1 == n {
                t0 + horizon
            } else {
                t0 + (s + 1) as f64 * h
            };
            continue;
        }
        let mut hh = h;
        for _ in 0..EXIT_BISECTIONS {
            hh *= 0.5;
            calls = calls.saturating_add(4);
            if let Some(y1) = rk4_step(sys, t, hh, &y) {
                y = y1;
                t += hh;
            }
        }
        return Outcome {
            y,
            t,
            stop: Stop::Exited,
            rhs_calls: calls,
            rejected: 0,
        };
    }
    Outcome {
        y,
        t,
        stop: Stop::Complete,
        rhs_calls: calls,
        rejected: 0,
    }
}
