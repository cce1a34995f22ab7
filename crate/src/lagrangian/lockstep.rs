//! RK4 for a whole set of tracers in lockstep over time slices of gridded data: the fast
//! path of flow maps and variational FTLE on a [`GriddedField`] that is bilinear in space
//! and linear in time.
//!
//! Why: with a fixed step every tracer of a grid samples the field at the same stage times
//! t₀ + sh, t₀ + sh + h/2 and t₀ + sh + h. A per-tracer sample combines two snapshots at
//! its four cell corners (16 f32 loads and 8 blends) before the bilinear weights; here
//! the two snapshots are blended once per stage time into one interleaved (u, v) slice of
//! f64 (the data grid is small next to the tracer grid: 100×40 nodes against 32,768
//! tracers on the demo), and a sample is four 16-byte loads and the bilinear weights.
//! Steps are the outer loop, tracers the inner one, in blocks small enough that a block's
//! stage derivatives stay in the L1 cache; the stages of a block are separate passes, so
//! consecutive samples are independent and overlap on the processor.
//!
//! Results are bit-identical to [`integrate_rk4`](super::integrate_rk4) on the same field:
//! a slice node holds w₀a + w₁b with the weights the field's own sample computes (the same
//! operation the sample applies to each corner), the bilinear weights and the RK4 stage
//! arithmetic are the same operations in the same order, and the data checks (window,
//! time range, cells flagged by mask or gaps in either snapshot) are the field's. A tracer
//! whose step meets "no velocity" is handed, from the start of that step, to the
//! per-tracer integrator, which locates the exit exactly as before; the tracers failing in
//! one step go together ([`exits_together`]), interleaved so their samples overlap. The
//! tests (here and `crate/tests/lagrangian_lockstep.rs`) check the identity.
//!
//! Slices are only blended on the rows the tracers can reach during the step (their
//! extent ± the largest |v|·|h| of the snapshots in use, plus one cell), so a small row
//! range, as given to one worker, pays for a few rows of data per stage, not for the whole
//! grid; a sample outside the blended rows reads as "no velocity" and takes the
//! per-tracer path, so the bound is a matter of speed only, never of correctness.
//!
//! Cost (callgrind on the demo problem, BENCHMARKS.md "Transport"): about 60 instructions
//! per sample against about 250 on the per-tracer path. Of the changes measured one at a
//! time, an unchecked float → int conversion and unchecked corner loads (indices in range
//! by construction, see [`locate`]) cut the flow map's instructions per tracer-step by
//! 15 % and stay. Computing u and v of a sample as one pair of lanes ([`super::pair`])
//! made the flow map 1.19× and the variational FTLE 1.31× faster natively, the flow map
//! 1.15× in wasm (same machine, minutes apart). Compacting the tracers in flight every
//! [`COMPACT_EVERY`] steps instead of every step made the flow map 1.03× faster natively
//! and 1.16× in wasm. The exits, located per tracer on the field, take about a seventh of
//! the flow map's time on the demo problem (perf).

use super::gridded::{Bracket, GriddedField, SliceSource, EDGE_TOL};
use super::outcome::{Outcome, Stop};
use super::pair;
use super::rk4::{exits_together, resume_rk4, stage_input, step_count};
use super::system::{tangent_derivative, System, Tangent, Tracer};
use super::tableau::{combine, RK4};
use std::ops::Range;

/// Tracers advanced through the four stages of a step together: their stage derivatives
/// (4·N f64 each) stay in the L1 cache across the four passes.
const BLOCK: usize = 64;

/// Steps between two compactions of the tracers in flight (sooner when many were handed
/// over).
const COMPACT_EVERY: u64 = 8;

/// Below this many tracers, blending slices costs more than it saves: the per-tracer
/// integrator takes them (at the start, and when exits thin the set out).
pub(super) const MIN_TRACERS: usize = 16;

/// The grid geometry of a sample, as the field's own sample sees it.
#[derive(Debug, Clone, Copy)]
pub(super) struct Geometry {
    x0: f64,
    y0: f64,
    pub(super) inv_dx: f64,
    pub(super) inv_dy: f64,
    /// nx − 1, ny − 1: the last node, in cells.
    mx: f64,
    my: f64,
    /// nx − 2, ny − 2: the last cell, as f64.
    last_x: f64,
    pub(super) last_y: f64,
    pub(super) nx: usize,
    ny: usize,
}

impl Geometry {
    pub(super) fn of(src: &SliceSource) -> Geometry {
        let (nx, ny) = (src.nx, src.ny);
        // What `locate`'s conversions rely on (the field checks the same for its own path).
        assert!(nx >= 2 && ny >= 2 && nx.max(ny) <= i32::MAX as usize, "grid {nx}×{ny}");
        Geometry {
            x0: src.x0,
            y0: src.y0,
            inv_dx: src.inv_dx,
            inv_dy: src.inv_dy,
            mx: (nx - 1) as f64,
            my: (ny - 1) as f64,
            last_x: (nx - 2) as f64,
            last_y: (ny - 2) as f64,
            nx,
            ny,
        }
    }
}

/// The field at one time, blended from its bracketing snapshots on a band of rows.
#[derive(Debug, Clone)]
pub(super) struct Slice {
    /// Stage time the slice holds (compared bit for bit when reusing a slice).
    time: f64,
    /// Cell rows `lo..=hi` blended; `None` before the first blend.
    rows: Option<(usize, usize)>,
    /// (u, v) per node, `j·nx + i`; only the nodes of the blended rows are current.
    uv: Vec<[f64; 2]>,
    /// Per node `j·nx + i`: the cell whose first corner it is has data at this time. False
    /// outside the blended rows, on the last column and row of nodes (no such cell), and
    /// everywhere when the time is outside the snapshots. Indexed like `uv`, so a sample
    /// computes one index.
    ok: Vec<bool>,
}

impl Slice {
    pub(super) fn new(nx: usize, ny: usize) -> Slice {
        Slice { time: f64::NAN, rows: None, uv: vec![[0.0; 2]; nx * ny], ok: vec![false; nx * ny] }
    }

    /// Whether the slice holds time `t` on (at least) cell rows `need`.
    pub(super) fn holds(&self, t: f64, need: (usize, usize)) -> bool {
        self.time.to_bits() == t.to_bits()
            && self.rows.is_some_and(|(lo, hi)| lo <= need.0 && hi >= need.1)
    }

    /// Blends the field at time `t` on cell rows `rows.0..=rows.1` (nodes up to one row
    /// more), with the weights and cell checks of the field's own samples.
    pub(super) fn blend(
        &mut self,
        field: &GriddedField,
        src: &SliceSource,
        t: f64,
        rows: (usize, usize),
    ) {
        self.time = t;
        self.rows = Some(rows);
        self.ok.fill(false);
        let Some(b) = field.bracket(t) else { return };
        let (nx, ny) = (src.nx, src.ny);
        let plane = nx * ny;
        let nodes = rows.0 * nx..(rows.1 + 2) * nx;
        let out = &mut self.uv[nodes.clone()];
        fn at<'f>(f: &'f [f32], plane: usize, k: usize, nodes: &Range<usize>) -> &'f [f32] {
            &f[k * plane + nodes.start..k * plane + nodes.end]
        }
        let Bracket { first, len, w: [w0, w1] } = b;
        if len == 2 {
            let (u0, u1, v0, v1) = (
                at(src.u, plane, first, &nodes),
                at(src.u, plane, first + 1, &nodes),
                at(src.v, plane, first, &nodes),
                at(src.v, plane, first + 1, &nodes),
            );
            for (m, o) in out.iter_mut().enumerate() {
                // The operation the field applies to each corner of a sample.
                *o = [w0 * u0[m] as f64 + w1 * u1[m] as f64, w0 * v0[m] as f64 + w1 * v1[m] as f64];
            }
        } else {
            // A steady series: the general stencil's 0 + w·a with its single weight.
            let (u0, v0) = (at(src.u, plane, first, &nodes), at(src.v, plane, first, &nodes));
            for (m, o) in out.iter_mut().enumerate() {
                *o = [0.0 + w0 * u0[m] as f64, 0.0 + w0 * v0[m] as f64];
            }
        }
        for j in rows.0..=rows.1 {
            for i in 0..nx - 1 {
                self.ok[j * nx + i] = field.cell_usable(&b, j * (nx - 1) + i);
            }
        }
    }
}

/// `v` limited to [0, max], exactly as the field clamps (the same value for every `v`
/// that is not NaN), with NaN mapped to 0: two selects, no branch, and an index that is
/// in range whatever the input.
#[inline(always)]
fn clamp_to_grid(v: f64, max: f64) -> f64 {
    let v = if v >= 0.0 { v } else { 0.0 };
    if v > max {
        max
    } else {
        v
    }
}

/// Node (i, j) of the cell holding point `p` and the fractions in it, exactly as the field
/// locates it, and whether `p` is in the window. Branch-free: a point outside (or NaN)
/// still yields a valid cell, whose values the caller discards. The node index is always
/// that of a cell's first corner: `node + nx + 1 < nx·ny`, which [`corners`] relies on.
#[inline(always)]
pub(super) fn locate(g: &Geometry, p: &[f64]) -> (bool, usize, f64, f64) {
    let fx = (p[0] - g.x0) * g.inv_dx;
    let fy = (p[1] - g.y0) * g.inv_dy;
    // Non-short-circuit `&`: one combined test, no branch.
    let inside =
        (fx >= -EDGE_TOL) & (fx <= g.mx + EDGE_TOL) & (fy >= -EDGE_TOL) & (fy <= g.my + EDGE_TOL);
    let (fx, fy) = (clamp_to_grid(fx, g.mx), clamp_to_grid(fy, g.my));
    // The field takes i = min(⌊fx⌋, nx − 2); fx ≤ nx − 1, so limiting before the floor
    // gives the same i. Both values lie in [0, last] ⊂ [0, i32::MAX] (not NaN), where the
    // truncating conversion is exact and is the floor.
    let below = |v: f64, max: f64| if v > max { max } else { v };
    let (cx, cy) = (below(fx, g.last_x), below(fy, g.last_y));
    // SAFETY: cx and cy are finite, in [0, last_i] and [0, last_j], and those fit in i32
    // (checked when the geometry is made).
    let (i, j) = unsafe { (cx.to_int_unchecked::<i32>(), cy.to_int_unchecked::<i32>()) };
    let (sx, sy) = (fx - i as f64, fy - j as f64);
    (inside, j as usize * g.nx + i as usize, sx, sy)
}

/// The four corners (i, j), (i+1, j), (i, j+1), (i+1, j+1) of the cell at `node`, (u, v)
/// each, and whether the cell has data.
#[inline(always)]
pub(super) fn corners(s: &Slice, g: &Geometry, node: usize) -> ([[f64; 2]; 4], bool) {
    let nx = g.nx;
    debug_assert!(node + nx + 1 < s.uv.len() && s.ok.len() == s.uv.len());
    // SAFETY: `node` comes from `locate` on the geometry the slice was made for (checked
    // in `run`), so node + nx + 1 < nx·ny = len of `uv` and of `ok`. A checked load costs
    // several instructions of the ~50 of a sample.
    unsafe {
        let q = s.uv.as_ptr().add(node);
        ([*q, *q.add(1), *q.add(nx), *q.add(nx + 1)], *s.ok.get_unchecked(node))
    }
}

/// A right-hand side evaluated on a slice: the derivative, and whether the point had data.
trait SliceRhs<const N: usize> {
    fn rhs(g: &Geometry, s: &Slice, y: &[f64; N]) -> ([f64; N], bool);
}

/// dx/dt = u(x, t): [`Tracer`] on a slice.
struct Positions;

impl SliceRhs<2> for Positions {
    #[inline(always)]
    fn rhs(g: &Geometry, s: &Slice, y: &[f64; 2]) -> ([f64; 2], bool) {
        let (inside, node, sx, sy) = locate(g, y);
        let (c, has) = corners(s, g, node);
        (pair::lerp(&pair::pairs(&c), sx, sy), inside & has)
    }
}

/// The tracer with its tangent matrix: [`Tangent`] on a slice, with the gradient of the
/// bilinear interpolant written as the field writes it.
struct TangentPositions;

impl SliceRhs<6> for TangentPositions {
    #[inline(always)]
    fn rhs(g: &Geometry, s: &Slice, y: &[f64; 6]) -> ([f64; 6], bool) {
        let (inside, node, sx, sy) = locate(g, y);
        let (c, has) = corners(s, g, node);
        let c = pair::pairs(&c);
        let grad = pair::gradient(&c, sx, sy, g.inv_dx, g.inv_dy);
        (tangent_derivative(pair::lerp(&c, sx, sy), grad, y), inside & has)
    }
}

/// One trajectory in flight.
#[derive(Debug, Clone, Copy)]
struct Track<const N: usize> {
    id: usize,
    y: [f64; N],
    /// Some stage of the current step had no velocity.
    failed: bool,
}

/// Flow-map trajectories on `field` (positions only), in lockstep; the contract of
/// [`integrate_rk4_lanes`](super::rk4::integrate_rk4_lanes): `finish(id, outcome)` once per
/// start, outcomes bit-identical to [`integrate_rk4`](super::integrate_rk4) with
/// [`Tracer`]. `field` must be [`GriddedField::sliceable`].
pub(super) fn integrate_positions(
    field: &GriddedField,
    starts: Vec<(usize, [f64; 2])>,
    t0: f64,
    horizon: f64,
    max_step: f64,
    finish: impl FnMut(usize, Outcome<2>),
) {
    run::<2, Positions, _>(field, &Tracer(field), starts, t0, horizon, max_step, finish)
}

/// Trajectories with their tangent matrix (the variational equation), in lockstep;
/// outcomes bit-identical to [`integrate_rk4`](super::integrate_rk4) with [`Tangent`].
pub(super) fn integrate_tangent(
    field: &GriddedField,
    starts: Vec<(usize, [f64; 6])>,
    t0: f64,
    horizon: f64,
    max_step: f64,
    finish: impl FnMut(usize, Outcome<6>),
) {
    run::<6, TangentPositions, _>(field, &Tangent(field), starts, t0, horizon, max_step, finish)
}

/// Largest |v| over the snapshots that the stage times of [t₀, t₀ + T] combine: it bounds
/// how far a stage point can move along y within a step (a slice value and a bilinear
/// sample are convex combinations of snapshot values).
pub(super) fn max_abs_v(field: &GriddedField, src: &SliceSource, t0: f64, horizon: f64) -> f64 {
    let plane = src.nx * src.ny;
    let nt = src.u.len() / plane;
    let first = |t: f64| field.bracket(t).map(|b| b.first);
    let (a, b) = (first(t0), first(t0 + horizon));
    let (lo, hi) = match (a, b) {
        (Some(a), Some(b)) => (a.min(b), (a.max(b) + 1).min(nt - 1)),
        _ => (0, nt - 1),
    };
    src.v[lo * plane..(hi + 1) * plane].iter().fold(0.0f64, |m, &v| m.max((v as f64).abs()))
}

/// The lockstep integrator for a system `K` on slices, with `fallback` (the same system
/// on the field itself) for tracers whose step meets "no velocity".
fn run<const N: usize, K: SliceRhs<N>, Sys: System<N>>(
    field: &GriddedField,
    fallback: &Sys,
    starts: Vec<(usize, [f64; N])>,
    t0: f64,
    horizon: f64,
    max_step: f64,
    mut finish: impl FnMut(usize, Outcome<N>),
) {
    debug_assert!(field.sliceable());
    // Stages 1 and 2 sample the same time, so three slices serve a step.
    const { assert!(RK4.c[1] == RK4.c[2]) };
    let n = step_count(horizon, max_step);
    let h = horizon / n as f64;
    let calls_after = |s: u64| (4 * s).min(u32::MAX as u64) as u32;
    let src = field.slice_source();
    let g = Geometry::of(&src);
    let mut active: Vec<Track<N>> =
        starts.into_iter().map(|(id, y)| Track { id, y, failed: false }).collect();
    if active.is_empty() {
        return;
    }
    // Rows a stage point can reach beyond its tracer's position, in cells, with one cell
    // to spare for rounding; a step moves a tracer by at most as much.
    let reach = max_abs_v(field, &src, t0, horizon) * h.abs() * src.inv_dy + 1.0;
    let cell_row = |y: f64| (y - src.y0) * src.inv_dy;
    let (mut lo, mut hi) = active.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
        (a.min(cell_row(t.y[1])), b.max(cell_row(t.y[1])))
    });
    let band = |lo: f64, hi: f64, extra: f64| {
        let last = g.last_y;
        let a = (lo - reach - extra).floor().clamp(0.0, last) as usize;
        let b = (hi + reach + extra).floor().clamp(0.0, last) as usize;
        (a.min(b), b)
    };
    // Stage 0, stages 1–2, stage 3.
    // The slices are made for this geometry: `corners` relies on it.
    let mut slices = [Slice::new(g.nx, g.ny), Slice::new(g.nx, g.ny), Slice::new(g.nx, g.ny)];
    let mut k = vec![[[0.0f64; N]; 4]; BLOCK];
    let mut ok = [true; BLOCK];
    // Tracers whose step failed, handed to the per-tracer integrator together; how many of
    // them are still in `active` (dropped at the next compaction).
    let mut handover: Vec<(usize, [f64; N])> = Vec::new();
    let mut gone = 0usize;
    for s in 0..n {
        // The time integrate_rk4 holds after `s` steps (t₀ itself before the first).
        let time = if s == 0 { t0 } else { t0 + s as f64 * h };
        let need = band(lo, hi, 0.0);
        // Blend one step's motion wider than needed, so that this step's last slice
        // usually serves as the next step's first.
        let wide = band(lo, hi, reach);
        if slices[2].holds(time + RK4.c[0] * h, need) {
            slices.swap(0, 2);
        }
        for (slice, c) in slices.iter_mut().zip([RK4.c[0], RK4.c[1], RK4.c[3]]) {
            let t = time + c * h;
            if !slice.holds(t, need) {
                slice.blend(field, &src, t, wide);
            }
        }
        let [sa, sb, sc] = &slices;
        handover.clear();
        for block in active.chunks_mut(BLOCK) {
            let m = block.len();
            ok[..m].fill(true);
            stage::<0, N, K>(&g, sa, h, block, &mut k, &mut ok);
            stage::<1, N, K>(&g, sb, h, block, &mut k, &mut ok);
            stage::<2, N, K>(&g, sb, h, block, &mut k, &mut ok);
            stage::<3, N, K>(&g, sc, h, block, &mut k, &mut ok);
            for ((tr, kl), &good) in block.iter_mut().zip(&k).zip(&ok) {
                if tr.failed {
                    // Handed over at an earlier step, waiting for the next compaction.
                    continue;
                }
                if good {
                    tr.y = combine(&RK4.b, h, &tr.y, kl);
                } else {
                    // `y` is still the state at the start of step s: failed steps never
                    // combine.
                    tr.failed = true;
                    handover.push((tr.id, tr.y));
                }
            }
        }
        gone += handover.len();
        // Finish the completed tracers at the last step (or all, when too few are left for
        // slices); otherwise drop the handed-over ones only every few steps or once they
        // are many (a pass over all tracers costs about a tenth of a step), and widen the
        // extent by one step's reach in between (it can grow by no more).
        let last = s + 1 == n;
        let few = active.len() - gone < MIN_TRACERS;
        if last || few {
            for tr in active.drain(..) {
                if tr.failed {
                    continue;
                } else if last {
                    let out = Outcome {
                        y: tr.y,
                        t: t0 + horizon,
                        stop: Stop::Complete,
                        rhs_calls: calls_after(n),
                        rejected: 0,
                    };
                    finish(tr.id, out);
                } else {
                    let out =
                        resume_rk4(fallback, tr.y, t0, horizon, n, h, s + 1, calls_after(s + 1));
                    finish(tr.id, out);
                }
            }
            gone = 0;
        } else if s % COMPACT_EVERY == COMPACT_EVERY - 1 || gone * 16 > active.len() {
            (lo, hi) = (f64::INFINITY, f64::NEG_INFINITY);
            let mut kept = 0;
            for i in 0..active.len() {
                let tr = active[i];
                if tr.failed {
                    continue;
                }
                let r = cell_row(tr.y[1]);
                lo = lo.min(r);
                hi = hi.max(r);
                active[kept] = tr;
                kept += 1;
            }
            active.truncate(kept);
            gone = 0;
        } else {
            lo -= reach;
            hi += reach;
        }
        if !handover.is_empty() {
            exits_together(fallback, &handover, t0, horizon, n, h, s, calls_after(s), &mut finish);
        }
        if active.is_empty() {
            return;
        }
    }
}

/// RK4 stage `I` of every tracer of a block on slice `s`. A tracer whose stage point has no
/// data is marked in `ok` and its later stages are computed and discarded (no branch).
#[inline(always)]
fn stage<const I: usize, const N: usize, K: SliceRhs<N>>(
    g: &Geometry,
    s: &Slice,
    h: f64,
    block: &[Track<N>],
    k: &mut [[[f64; N]; 4]],
    ok: &mut [bool; BLOCK],
) {
    for ((tr, kl), good) in block.iter().zip(k.iter_mut()).zip(ok.iter_mut()) {
        let yi = stage_input(I, h, &tr.y, kl);
        let (d, has) = K::rhs(g, s, &yi);
        kl[I] = d;
        *good &= has;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
    use crate::lagrangian::gridded::{SpaceInterp, TimeInterp};
    use crate::lagrangian::velocity::{Rect, VelocityField, Windowed};
    use rand::{RngExt, SeedableRng};

    /// A blended slice samples exactly what the field samples: the same points have data,
    /// velocity and tangent right-hand side agree bit for bit (uniform snapshots, the
    /// field's resolved path; stretched snapshots, its general stencil), at random points,
    /// on cell faces and nodes, at the window edges and next to masked cells. Outside the
    /// blended rows, or at a time outside the snapshots, a slice has no data.
    #[test]
    fn slice_samples_are_the_field_samples() {
        // Nodes outside this rectangle have no data: masked cells inside the window.
        let cut = Windowed {
            inner: DoubleGyre::periodic(),
            rect: Rect { x0: -1.0, x1: 1.3, y0: -1.0, y1: 2.0 },
        };
        let uniform = linspace(0.0, 4.0, 17);
        let stretched: Vec<f64> = uniform.iter().map(|&t| t + 0.03 * t * (4.0 - t)).collect();
        // Reproducible points (the crate's seeded generator).
        let mut rng = rand_pcg::Pcg64::seed_from_u64(2);
        let mut uniform01 = move || rng.random::<f64>();
        for times in [&uniform, &stretched] {
            let s = sample_series(&cut, &linspace(0.0, 2.0, 21), &linspace(0.0, 1.0, 11), times)
                .unwrap();
            assert!(s.masked_count() > 0);
            let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
            assert!(field.sliceable());
            let src = field.slice_source();
            let g = Geometry::of(&src);
            let mut slice = Slice::new(src.nx, src.ny);
            let (mut with, mut without) = (0, 0);
            for t in [0.0, 0.25, 1.0 / 3.0, times[5], 2.9, times[16], 4.0, 4.5, -0.1] {
                slice.blend(&field, &src, t, (0, src.ny - 2));
                let mut points: Vec<[f64; 2]> = (0..600)
                    .map(|_| [2.1 * uniform01() - 0.05, 1.1 * uniform01() - 0.05])
                    .collect();
                for x in [0.0, 0.1, 0.7, 1.2, 1.3, 2.0] {
                    for y in [0.0, 0.3, 0.5, 1.0] {
                        points.push([x, y]);
                    }
                }
                for p in points {
                    let want = field.velocity(p, t);
                    let (got, ok) = Positions::rhs(&g, &slice, &p);
                    assert_eq!(ok, want.is_some(), "data at {p:?}, t = {t}");
                    let y = [p[0], p[1], 1.1, -0.3, 0.2, 0.9];
                    let tangent = Tangent(&field).rhs(t, &y);
                    let (got6, ok6) = TangentPositions::rhs(&g, &slice, &y);
                    assert_eq!(ok6, ok);
                    if let Some(w) = want {
                        with += 1;
                        assert_eq!(got, w, "velocity at {p:?}, t = {t}");
                        assert_eq!(Some(got6), tangent, "tangent at {p:?}, t = {t}");
                    } else {
                        without += 1;
                    }
                }
            }
            assert!(with > 2000 && without > 1000, "{with} with data, {without} without");
            // A band of rows: points elsewhere have no data in this slice.
            slice.blend(&field, &src, 1.3, (3, 5));
            for p in [[0.5, 0.05], [0.5, 0.25], [0.5, 0.95], [0.5, 0.65]] {
                assert!(!Positions::rhs(&g, &slice, &p).1, "outside the band at {p:?}");
            }
            assert!(Positions::rhs(&g, &slice, &[0.5, 0.45]).1, "inside the band");
        }
    }

    /// The lockstep integrator called directly (not through the engine's choice) against
    /// the per-tracer one, with steps several cells long: wide bands of rows, reused and
    /// re-blended slices, and tracers that overshoot the gyre's box and exit.
    #[test]
    fn long_steps_match_per_tracer_rk4() {
        let s = sample_series(
            &DoubleGyre::periodic(),
            &linspace(0.0, 2.0, 41),
            &linspace(0.0, 1.0, 21),
            &linspace(0.0, 10.0, 11),
        )
        .unwrap();
        let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        let starts: Vec<(usize, [f64; 2])> = (0..300)
            .map(|c| (c, [0.003 + 0.0066 * c as f64, 0.5 + 0.4 * ((c as f64) * 0.37).sin()]))
            .collect();
        let (t0, horizon, step) = (0.5, 9.0, 0.9);
        let mut got = vec![None; starts.len()];
        integrate_positions(&field, starts.clone(), t0, horizon, step, |c, out| {
            assert!(got[c].is_none(), "trajectory {c} finished twice");
            got[c] = Some(out);
        });
        for &(c, p) in &starts {
            let want = crate::lagrangian::integrate_rk4(&Tracer(&field), p, t0, horizon, step);
            assert_eq!(got[c], Some(want), "trajectory {c}");
        }
    }
}
