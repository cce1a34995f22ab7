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

/// Trajectories [`integrate_rk4_lanes`] advances side by side. A lone trajectory is a chain
/// of dependent velocity samples; interleaving independent ones lets the processor overlap
/// their work. Chosen by measurement on the demo flow map (BENCHMARKS.md, "Transport"):
/// natively 4 lanes ran about 1.3× faster than 1 or 2; in Node (V8) 2 lanes ran about
/// 1.15× faster than 1 or 4.
#[cfg(not(target_arch = "wasm32"))]
pub const LANES: usize = 4;
/// See the native value: 2 lanes measured fastest in V8.
#[cfg(target_arch = "wasm32")]
pub const LANES: usize = 2;

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
    resume_rk4(sys, y0, t0, horizon, n, h, 0, 0)
}

/// Continues an [`integrate_rk4`] run of `n` steps of `h` from `t0` that holds `y` after
/// `from` steps (`from < n`) and has spent `calls` evaluations: the very operations the
/// whole run would do from there. The lockstep path hands tracers over to it.
#[allow(clippy::too_many_arguments)]
#[inline]
pub(super) fn resume_rk4<const N: usize, Sys: System<N>>(
    sys: &Sys,
    mut y: [f64; N],
    t0: f64,
    horizon: f64,
    n: u64,
    h: f64,
    from: u64,
    mut calls: u32,
) -> Outcome<N> {
    // The time integrate_rk4 holds after `from` steps (t₀ itself before the first).
    let mut t = if from == 0 { t0 } else { t0 + from as f64 * h };
    for s in from..n {
        calls = calls.saturating_add(4);
        if let Some(y1) = rk4_step(sys, t, h, &y) {
            y = y1;
            t = if s + 1 == n { t0 + horizon } else { t0 + (s + 1) as f64 * h };
            continue;
        }
        return locate_exit(sys, t, h, y, calls);
    }
    Outcome { y, t, stop: Stop::Complete, rhs_calls: calls, rejected: 0 }
}

/// After a failed step of size `h` from `(t, y)`: bisects the step [`EXIT_BISECTIONS`]
/// times, advancing whenever the half step succeeds, and reports the exit.
#[cold]
fn locate_exit<const N: usize, Sys: System<N>>(
    sys: &Sys,
    mut t: f64,
    h: f64,
    mut y: [f64; N],
    mut calls: u32,
) -> Outcome<N> {
    let mut hh = h;
    for _ in 0..EXIT_BISECTIONS {
        hh *= 0.5;
        calls = calls.saturating_add(4);
        if let Some(y1) = rk4_step(sys, t, hh, &y) {
            y = y1;
            t += hh;
        }
    }
    Outcome { y, t, stop: Stop::Exited, rhs_calls: calls, rejected: 0 }
}

/// A trajectory whose step failed, being bisected by [`exits_together`].
#[derive(Clone, Copy)]
struct Exiting<const N: usize> {
    id: usize,
    t: f64,
    y: [f64; N],
    calls: u32,
}

/// [`resume_rk4`] for many trajectories whose step `from` (of `n` steps of `h` from `t0`)
/// is known to fail, or to need checking: the lockstep path hands over its failed tracers
/// (`starts`: id and state at the start of that step, after `calls` evaluations each) in one
/// group. The step is tried again and, where it fails, bisected as [`locate_exit`] does,
/// all members interleaved stage by stage so that their chains of dependent samples overlap
/// on the processor (one trajectory at a time, each sample waits for the one before). Each
/// member does the operations [`resume_rk4`] would, in the same order: results are
/// bit-identical; a member whose step succeeds after all (a failure that was the caller's
/// own, e.g. outside the rows it had prepared) continues alone through [`resume_rk4`].
#[allow(clippy::too_many_arguments)]
pub(super) fn exits_together<const N: usize, Sys: System<N>>(
    sys: &Sys,
    starts: &[(usize, [f64; N])],
    t0: f64,
    horizon: f64,
    n: u64,
    h: f64,
    from: u64,
    calls: u32,
    mut finish: impl FnMut(usize, Outcome<N>),
) {
    // The time integrate_rk4 holds after `from` steps (t₀ itself before the first).
    let t = if from == 0 { t0 } else { t0 + from as f64 * h };
    let mut group: Vec<Exiting<N>> = starts
        .iter()
        .map(|&(id, y)| Exiting { id, t, y, calls: calls.saturating_add(4) })
        .collect();
    let mut k = vec![[[0.0; N]; 4]; group.len()];
    let mut ok = vec![true; group.len()];
    try_steps(sys, &group, h, &mut k, &mut ok);
    let mut kept = 0;
    for i in 0..group.len() {
        if ok[i] {
            let (id, y) = starts[i];
            finish(id, resume_rk4(sys, y, t0, horizon, n, h, from, calls));
        } else {
            group[kept] = group[i];
            kept += 1;
        }
    }
    group.truncate(kept);
    let mut hh = h;
    for _ in 0..EXIT_BISECTIONS {
        hh *= 0.5;
        try_steps(sys, &group, hh, &mut k, &mut ok);
        for ((e, kl), &good) in group.iter_mut().zip(&k).zip(&ok) {
            e.calls = e.calls.saturating_add(4);
            if good {
                e.y = combine(&RK4.b, hh, &e.y, kl);
                e.t += hh;
            }
        }
    }
    for e in group {
        finish(
            e.id,
            Outcome { y: e.y, t: e.t, stop: Stop::Exited, rhs_calls: e.calls, rejected: 0 },
        );
    }
}

/// One RK4 step of `hh` from each member's (t, y), stage by stage across the members: the
/// stage derivatives in `k`, and in `ok` whether every stage had data.
fn try_steps<const N: usize, Sys: System<N>>(
    sys: &Sys,
    group: &[Exiting<N>],
    hh: f64,
    k: &mut [[[f64; N]; 4]],
    ok: &mut [bool],
) {
    ok[..group.len()].fill(true);
    exit_stage::<0, N, Sys>(sys, group, hh, k, ok);
    exit_stage::<1, N, Sys>(sys, group, hh, k, ok);
    exit_stage::<2, N, Sys>(sys, group, hh, k, ok);
    exit_stage::<3, N, Sys>(sys, group, hh, k, ok);
}

/// Stage `I` of [`try_steps`]: members whose step already failed are skipped.
#[inline(always)]
fn exit_stage<const I: usize, const N: usize, Sys: System<N>>(
    sys: &Sys,
    group: &[Exiting<N>],
    hh: f64,
    k: &mut [[[f64; N]; 4]],
    ok: &mut [bool],
) {
    for ((e, kl), good) in group.iter().zip(k.iter_mut()).zip(ok.iter_mut()) {
        if !*good {
            continue;
        }
        let yi = stage_input(I, hh, &e.y, kl);
        match sys.rhs(e.t + RK4.c[I] * hh, &yi) {
            Some(d) => kl[I] = d,
            None => *good = false,
        }
    }
}

/// One trajectory in flight in [`integrate_rk4_lanes`].
#[derive(Clone, Copy)]
struct Lane<const N: usize> {
    id: usize,
    y: [f64; N],
    /// Steps completed.
    s: u64,
    calls: u32,
}

/// Integrates many independent trajectories of `sys` exactly as [`integrate_rk4`] would,
/// [`LANES`] at a time in lockstep, stage by stage, so that the dependency chains of
/// different trajectories overlap on the processor. Each trajectory does the same
/// floating-point operations in the same order as alone, so every result is bit-identical
/// to [`integrate_rk4`]'s; only the order in which trajectories finish differs.
///
/// `starts` yields `(id, y0)`; `finish(id, outcome)` is called once per trajectory, in
/// completion order. A lane whose trajectory ends takes the next start at once.
pub fn integrate_rk4_lanes<const N: usize, Sys: System<N>>(
    sys: &Sys,
    starts: impl IntoIterator<Item = (usize, [f64; N])>,
    t0: f64,
    horizon: f64,
    max_step: f64,
    mut finish: impl FnMut(usize, Outcome<N>),
) {
    let n = step_count(horizon, max_step);
    let h = horizon / n as f64;
    let mut starts = starts.into_iter();
    let mut next = || starts.next().map(|(id, y)| Lane { id, y, s: 0, calls: 0 });
    let mut lanes: [Option<Lane<N>>; LANES] = std::array::from_fn(|_| next());
    // Per lane: stage derivatives of the current step, and whether every stage had data.
    let mut k = [[[0.0; N]; 4]; LANES];
    loop {
        let mut ok = [false; LANES];
        let mut time = [0.0; LANES];
        for l in 0..LANES {
            if let Some(lane) = &lanes[l] {
                ok[l] = true;
                // The time integrate_rk4 holds after `s` steps (t₀ itself before the first).
                time[l] = if lane.s == 0 { t0 } else { t0 + lane.s as f64 * h };
            }
        }
        if !ok.iter().any(|&b| b) {
            return;
        }
        // Stage by stage across the lanes.
        lane_stage::<0, N, Sys>(sys, &lanes, &mut ok, &time, h, &mut k);
        lane_stage::<1, N, Sys>(sys, &lanes, &mut ok, &time, h, &mut k);
        lane_stage::<2, N, Sys>(sys, &lanes, &mut ok, &time, h, &mut k);
        lane_stage::<3, N, Sys>(sys, &lanes, &mut ok, &time, h, &mut k);
        for l in 0..LANES {
            let Some(lane) = &mut lanes[l] else { continue };
            lane.calls = lane.calls.saturating_add(4);
            let done = if ok[l] {
                lane.y = combine(&RK4.b, h, &lane.y, &k[l]);
                lane.s += 1;
                (lane.s == n).then_some(Outcome {
                    y: lane.y,
                    t: t0 + horizon,
                    stop: Stop::Complete,
                    rhs_calls: lane.calls,
                    rejected: 0,
                })
            } else {
                Some(locate_exit(sys, time[l], h, lane.y, lane.calls))
            };
            if let Some(out) = done {
                finish(lane.id, out);
                lanes[l] = next();
            }
        }
    }
}

/// RK4 stage `I` of every lane still in its step (`ok`); a lane whose stage point has no
/// velocity drops out of the step. `I` is a constant so the tableau folds into the code.
#[inline(always)]
fn lane_stage<const I: usize, const N: usize, Sys: System<N>>(
    sys: &Sys,
    lanes: &[Option<Lane<N>>; LANES],
    ok: &mut [bool; LANES],
    time: &[f64; LANES],
    h: f64,
    k: &mut [[[f64; N]; 4]; LANES],
) {
    for l in 0..LANES {
        let Some(lane) = &lanes[l] else { continue };
        if !ok[l] {
            continue;
        }
        let yi = stage_input(I, h, &lane.y, &k[l]);
        match sys.rhs(time[l] + RK4.c[I] * h, &yi) {
            Some(d) => k[l][I] = d,
            None => ok[l] = false,
        }
    }
}

/// The point where RK4 stage `i` samples the field: y + h Σⱼ aᵢⱼ kⱼ, with the operations of
/// [`stages`] in the same order (so results match [`rk4_step`] bit for bit).
#[allow(clippy::needless_range_loop)]
#[inline(always)]
pub(super) fn stage_input<const N: usize>(
    i: usize,
    h: f64,
    y: &[f64; N],
    k: &[[f64; N]; 4],
) -> [f64; N] {
    let mut yi = *y;
    for j in 0..i {
        let a = RK4.a[i][j];
        if a != 0.0 {
            for n in 0..N {
                yi[n] += h * a * k[j][n];
            }
        }
    }
    yi
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lagrangian::analytic::DoubleGyre;
    use crate::lagrangian::system::{Tangent, Tracer};
    use crate::lagrangian::velocity::{Rect, Windowed};

    /// `exits_together` is `resume_rk4` for each member, bit for bit: members whose step
    /// fails (exits located by bisection) and members whose step succeeds after all (the
    /// lockstep path's own failures, which continue alone to the end or a later exit), at
    /// the first step and at a later one, positions and tangent states.
    #[test]
    fn exits_together_match_resume_rk4_bit_for_bit() {
        let field = Windowed {
            inner: DoubleGyre::periodic(),
            rect: Rect { x0: 0.2, x1: 1.7, y0: 0.1, y1: 0.9 },
        };
        let (t0, horizon, n) = (0.5, 4.0, 40u64);
        let h = horizon / n as f64;
        // A row across the window, with points just inside each side edge: some leave in
        // the step, the others go on.
        let starts: Vec<(usize, [f64; 2])> = (0..30)
            .map(|c| (c, [0.2005 + 0.0517 * c as f64, 0.1003 + 0.0271 * (c % 29) as f64]))
            .collect();
        for from in [0u64, 7] {
            let calls = 4 * from as u32;
            let mut got = vec![None; starts.len()];
            exits_together(&Tracer(&field), &starts, t0, horizon, n, h, from, calls, |c, out| {
                assert!(got[c].is_none(), "member {c} finished twice");
                got[c] = Some(out);
            });
            let mut exited_in_step = 0;
            for &(c, p) in &starts {
                let want = resume_rk4(&Tracer(&field), p, t0, horizon, n, h, from, calls);
                assert_eq!(got[c], Some(want), "member {c} from step {from}");
                exited_in_step += (want.rhs_calls == calls + 4 * (1 + EXIT_BISECTIONS)) as usize;
            }
            assert!(
                exited_in_step >= 2 && exited_in_step + 2 <= starts.len(),
                "{exited_in_step} members exit in step {from}: not a mixed test"
            );
            let tangent: Vec<(usize, [f64; 6])> =
                starts.iter().map(|&(c, p)| (c, [p[0], p[1], 1.0, 0.0, 0.0, 1.0])).collect();
            let mut got = vec![None; tangent.len()];
            exits_together(&Tangent(&field), &tangent, t0, horizon, n, h, from, calls, |c, out| {
                got[c] = Some(out);
            });
            for &(c, y) in &tangent {
                let want = resume_rk4(&Tangent(&field), y, t0, horizon, n, h, from, calls);
                assert_eq!(got[c], Some(want), "tangent member {c} from step {from}");
            }
        }
    }

    /// The lanes integrator must reproduce `integrate_rk4` bit for bit (its documented
    /// contract), for completed trajectories and for ones that leave the window, whatever
    /// the order in which lanes finish and refill; also for a state with a tangent matrix.
    #[test]
    fn lanes_match_single_trajectories_bit_for_bit() {
        // The periodic gyre cut to a window smaller than its domain: many tracers exit.
        let field = Windowed {
            inner: DoubleGyre::periodic(),
            rect: Rect { x0: 0.2, x1: 1.7, y0: 0.1, y1: 0.9 },
        };
        let starts: Vec<(usize, [f64; 2])> =
            (0..37).map(|c| (c, [0.21 + 0.04 * c as f64, 0.15 + 0.02 * (c % 11) as f64])).collect();
        let (t0, horizon, step) = (0.5, 4.0, 0.05);
        let mut got = vec![None; starts.len()];
        integrate_rk4_lanes(&Tracer(&field), starts.clone(), t0, horizon, step, |c, out| {
            assert!(got[c].is_none(), "trajectory {c} finished twice");
            got[c] = Some(out);
        });
        let mut exited = 0;
        for &(c, p) in &starts {
            let want = integrate_rk4(&Tracer(&field), p, t0, horizon, step);
            assert_eq!(got[c], Some(want), "trajectory {c}");
            exited += (want.stop == Stop::Exited) as usize;
        }
        assert!(exited >= 5 && exited + 5 <= starts.len(), "{exited} exits: not a mixed test");

        let tangent: Vec<(usize, [f64; 6])> =
            starts.iter().map(|&(c, p)| (c, [p[0], p[1], 1.0, 0.0, 0.0, 1.0])).collect();
        let mut got = vec![None; tangent.len()];
        integrate_rk4_lanes(&Tangent(&field), tangent.clone(), t0, -horizon, step, |c, out| {
            got[c] = Some(out)
        });
        for &(c, y) in &tangent {
            let want = integrate_rk4(&Tangent(&field), y, t0, -horizon, step);
            assert_eq!(got[c], Some(want), "tangent trajectory {c}");
        }
        // No starts: nothing to do, no call.
        integrate_rk4_lanes(&Tracer(&field), Vec::new(), t0, horizon, step, |_, _| {
            panic!("called without trajectories")
        });
    }
}
