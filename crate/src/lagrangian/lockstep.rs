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
//! consecutive samples are independent and overlap on the processor, and each stage is
//! itself two passes (place every stage point on the grid, then read the corners and
//! interpolate), which halves the chain of dependent operations the processor must keep
//! in flight per sample ([`stage`]).
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
//! and 1.16× in wasm. A sample is bound by latency, not by instruction count: its chain
//! (stage point, cell, corner loads, interpolation) is about 50 cycles long, and a locator
//! with 15 % fewer instructions but a longer chain was no faster. Splitting each stage
//! into a placing and an interpolating pass made the flow map 1.3× and the variational
//! FTLE 1.35× faster natively; in wasm the split is worth it only with the pair locator
//! ([`locate_in_pairs`]: one instruction per clamp, no trap check on the conversion),
//! together 1.2× for the flow map. The exits, located per tracer on the field, take about
//! a seventh of the flow map's time on the demo problem (perf).

use super::gridded::{Bracket, GriddedField, SliceSource, EDGE_TOL};
use super::outcome::{Outcome, Stop};
use super::pair::{self, Pair};
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

/// The grid geometry of a sample, as the field's own sample sees it; x and y side by side
/// ([`locate_in_pairs`] loads them as pairs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Geometry {
    /// (x₀, y₀): the first node.
    origin: [f64; 2],
    /// (1/Δx, 1/Δy).
    pub(super) inv_d: [f64; 2],
    /// (nx − 1, ny − 1): the last node, in cells.
    max_node: [f64; 2],
    /// The window's far edges in cells, with the tolerance: (nx − 1, ny − 1) + EDGE_TOL.
    upper: [f64; 2],
    /// (nx − 2, ny − 2): the last cell.
    pub(super) max_cell: [f64; 2],
    pub(super) nx: usize,
    ny: usize,
    /// nx as f64, for the node index of [`locate_in_pairs`].
    nx_f64: f64,
}

impl Geometry {
    pub(super) fn of(src: &SliceSource) -> Geometry {
        let (nx, ny) = (src.nx, src.ny);
        // What `locate`'s conversions rely on (the field checks the same for its own path).
        assert!(nx >= 2 && ny >= 2 && nx.max(ny) <= i32::MAX as usize, "grid {nx}×{ny}");
        let max_node = [(nx - 1) as f64, (ny - 1) as f64];
        Geometry {
            origin: [src.x0, src.y0],
            inv_d: [src.inv_dx, src.inv_dy],
            max_node,
            upper: max_node.map(|m| m + EDGE_TOL),
            max_cell: [(nx - 2) as f64, (ny - 2) as f64],
            nx,
            ny,
            nx_f64: nx as f64,
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
            let (a, b) = (Pair::splat(w0), Pair::splat(w1));
            for (m, o) in out.iter_mut().enumerate() {
                // The operation the field applies to each corner of a sample, u and v as one
                // pair of lanes (the same operations per lane).
                let now = Pair::new(u0[m] as f64, v0[m] as f64);
                let next = Pair::new(u1[m] as f64, v1[m] as f64);
                *o = a.mul(now).add(b.mul(next)).get();
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
#[cfg_attr(target_arch = "wasm32", allow(dead_code))]
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
#[cfg_attr(target_arch = "wasm32", allow(dead_code))]
#[inline(always)]
pub(super) fn locate(g: &Geometry, p: &[f64]) -> (bool, usize, f64, f64) {
    let fx = (p[0] - g.origin[0]) * g.inv_d[0];
    let fy = (p[1] - g.origin[1]) * g.inv_d[1];
    // Non-short-circuit `&`: one combined test, no branch.
    let inside = (fx >= -EDGE_TOL) & (fx <= g.upper[0]) & (fy >= -EDGE_TOL) & (fy <= g.upper[1]);
    let (fx, fy) = (clamp_to_grid(fx, g.max_node[0]), clamp_to_grid(fy, g.max_node[1]));
    // The field takes i = min(⌊fx⌋, nx − 2); fx ≤ nx − 1, so limiting before the floor
    // gives the same i. Both values lie in [0, last] ⊂ [0, i32::MAX] (not NaN), where the
    // truncating conversion is exact and is the floor.
    let below = |v: f64, max: f64| if v > max { max } else { v };
    let (cx, cy) = (below(fx, g.max_cell[0]), below(fy, g.max_cell[1]));
    // SAFETY: cx and cy are finite, in [0, last_i] and [0, last_j], and those fit in i32
    // (checked when the geometry is made).
    let (i, j) = unsafe { (cx.to_int_unchecked::<i32>(), cy.to_int_unchecked::<i32>()) };
    let (sx, sy) = (fx - i as f64, fy - j as f64);
    (inside, j as usize * g.nx + i as usize, sx, sy)
}

/// [`locate`] with x and y as one pair of lanes: the same operations per lane, the same
/// results bit for bit (`locate_in_pairs_is_locate` checks), in fewer instructions where
/// the scalar selects are costly. The page's WebAssembly build uses it: its scalar
/// conversion checks for a trap on every float → int, and its selects become branches,
/// whereas a pair's clamps are one instruction each and the cell index comes from the
/// bits of an exact sum (below).
#[cfg_attr(not(target_arch = "wasm32"), allow(dead_code))]
#[inline(always)]
pub(super) fn locate_in_pairs(g: &Geometry, p: &[f64; 2]) -> (bool, usize, f64, f64) {
    let f = Pair::load(p).sub(Pair::load(&g.origin)).mul(Pair::load(&g.inv_d));
    let inside = f.within(Pair::splat(-EDGE_TOL), Pair::load(&g.upper));
    // The field's clamp to [0, n − 1] (NaN to 0), then the cell limit before the floor, as
    // in `locate`; all values in [0, last] here, where the floor is exact.
    let f = f.non_negative().at_most(Pair::load(&g.max_node));
    let cell = f.at_most(Pair::load(&g.max_cell)).floor_in_range();
    let [sx, sy] = f.sub(cell).get();
    let [i, j] = cell.get();
    // j·nx + i is an integer below 2⁵² (a node index), so adding 2⁵² is exact and leaves
    // it in the low mantissa bits: an index without a float → int conversion.
    const TWO_52: f64 = 4_503_599_627_370_496.0;
    let node = ((j * g.nx_f64 + i + TWO_52).to_bits() & ((1 << 52) - 1)) as usize;
    (inside, node, sx, sy)
}

/// [`locate`] natively, [`locate_in_pairs`] in the WebAssembly build: each is the faster
/// on its target (BENCHMARKS.md, "Transport"), and the results are the same.
#[inline(always)]
pub(super) fn place(g: &Geometry, p: &[f64; 2]) -> (bool, usize, f64, f64) {
    #[cfg(not(target_arch = "wasm32"))]
    return locate(g, p);
    #[cfg(target_arch = "wasm32")]
    return locate_in_pairs(g, p);
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

/// A stage point placed on the slice grid by [`place`]: the first corner of its cell, the
/// fractions in it, and whether it is in the window. The first pass of a stage computes
/// these for a whole block, the second reads the corners.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct Located {
    pub(super) inside: bool,
    pub(super) node: usize,
    pub(super) sx: f64,
    pub(super) sy: f64,
}

impl Located {
    #[inline(always)]
    pub(super) fn of(g: &Geometry, p: &[f64; 2]) -> Located {
        let (inside, node, sx, sy) = place(g, p);
        Located { inside, node, sx, sy }
    }
}

/// A right-hand side evaluated on a slice, at a point [`place`]d beforehand.
trait SliceRhs<const N: usize> {
    /// The derivative at the stage point `y` (given lazily: only some systems need more
    /// than its place), and whether its cell has data (the window test is the caller's).
    fn at(g: &Geometry, s: &Slice, at: &Located, y: impl FnOnce() -> [f64; N]) -> ([f64; N], bool);

    /// Locate and evaluate in one go, with the window test: the whole sample, for tests.
    #[cfg(test)]
    fn rhs(g: &Geometry, s: &Slice, y: &[f64; N]) -> ([f64; N], bool) {
        let at = Located::of(g, &[y[0], y[1]]);
        let (d, has) = Self::at(g, s, &at, || *y);
        (d, has & at.inside)
    }
}

/// dx/dt = u(x, t): [`Tracer`] on a slice.
struct Positions;

impl SliceRhs<2> for Positions {
    #[inline(always)]
    fn at(g: &Geometry, s: &Slice, at: &Located, _: impl FnOnce() -> [f64; 2]) -> ([f64; 2], bool) {
        let (c, has) = corners(s, g, at.node);
        (pair::lerp(&pair::pairs(&c), at.sx, at.sy), has)
    }
}

/// The tracer with its tangent matrix: [`Tangent`] on a slice, with the gradient of the
/// bilinear interpolant written as the field writes it.
struct TangentPositions;

impl SliceRhs<6> for TangentPositions {
    #[inline(always)]
    fn at(g: &Geometry, s: &Slice, at: &Located, y: impl FnOnce() -> [f64; 6]) -> ([f64; 6], bool) {
        let (c, has) = corners(s, g, at.node);
        let c = pair::pairs(&c);
        let grad = pair::gradient(&c, at.sx, at.sy, g.inv_d[0], g.inv_d[1]);
        (tangent_derivative(pair::lerp(&c, at.sx, at.sy), grad, &y()), has)
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
        let last = g.max_cell[1];
        let a = (lo - reach - extra).floor().clamp(0.0, last) as usize;
        let b = (hi + reach + extra).floor().clamp(0.0, last) as usize;
        (a.min(b), b)
    };
    // Stage 0, stages 1–2, stage 3.
    // The slices are made for this geometry: `corners` relies on it.
    let mut slices = [Slice::new(g.nx, g.ny), Slice::new(g.nx, g.ny), Slice::new(g.nx, g.ny)];
    let mut k = vec![[[0.0f64; N]; 4]; BLOCK];
    let mut ok = [true; BLOCK];
    let mut places = [Located::default(); BLOCK];
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
            stage::<0, N, K>(&g, sa, h, block, &mut k, &mut ok, &mut places);
            stage::<1, N, K>(&g, sb, h, block, &mut k, &mut ok, &mut places);
            stage::<2, N, K>(&g, sb, h, block, &mut k, &mut ok, &mut places);
            stage::<3, N, K>(&g, sc, h, block, &mut k, &mut ok, &mut places);
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

/// RK4 stage `I` of every tracer of a block on slice `s`, in two passes: place every stage
/// point on the grid, then read the corners and interpolate. A tracer whose stage point has
/// no data is marked in `ok` and its later stages are computed and discarded (no branch).
///
/// Why two passes: a sample is one long chain of dependent operations (stage point, cell,
/// corner loads, interpolation; about 50 cycles), and the processor overlaps only as many
/// samples as its reorder window holds. Split in two, each chain is about half as long and
/// twice as many are in flight (measured: a stand-alone copy of this loop 1.45× faster
/// natively, the whole flow map 1.3×; BENCHMARKS.md, "Transport").
#[inline(always)]
fn stage<const I: usize, const N: usize, K: SliceRhs<N>>(
    g: &Geometry,
    s: &Slice,
    h: f64,
    block: &[Track<N>],
    k: &mut [[[f64; N]; 4]],
    ok: &mut [bool; BLOCK],
    places: &mut [Located; BLOCK],
) {
    for ((tr, kl), place) in block.iter().zip(k.iter()).zip(places.iter_mut()) {
        let yi = stage_input(I, h, &tr.y, kl);
        *place = Located::of(g, &[yi[0], yi[1]]);
    }
    for (((tr, kl), good), place) in block.iter().zip(k.iter_mut()).zip(ok.iter_mut()).zip(&*places)
    {
        let (d, has) = K::at(g, s, place, || stage_input(I, h, &tr.y, kl));
        kl[I] = d;
        *good &= has & place.inside;
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

    /// Both locators give the same window test, cell and fractions, bit for bit: at random
    /// points in and around the window, on nodes and cell faces, within the edge tolerance,
    /// at −0, NaN and infinities. (The test runs natively; the lane operations' meaning on
    /// each target is documented in `pair.rs`.)
    #[test]
    fn locate_in_pairs_is_locate() {
        let s = sample_series(
            &DoubleGyre::periodic(),
            &linspace(-0.3, 2.0, 24),
            &linspace(0.1, 1.0, 13),
            &linspace(0.0, 1.0, 2),
        )
        .unwrap();
        let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        let g = Geometry::of(&field.slice_source());
        let mut rng = rand_pcg::Pcg64::seed_from_u64(5);
        let mut values: Vec<f64> = (0..400).map(|_| rng.random::<f64>() * 3.0 - 0.6).collect();
        let (dx, dy) = (1.0 / g.inv_d[0], 1.0 / g.inv_d[1]);
        for k in 0..24 {
            values.push(-0.3 + k as f64 * dx);
            values.push(0.1 + k as f64 * dy);
        }
        let tol = 0.5 * EDGE_TOL * dx;
        values.extend([-0.3 - tol, -0.3 + tol, 2.0 + tol, 2.0 - tol, 1.0 + tol, 0.1 - tol]);
        values.extend([-0.0, 0.0, f64::NAN, f64::INFINITY, f64::NEG_INFINITY, 1e300, -1e300]);
        let bits = |(inside, node, sx, sy): (bool, usize, f64, f64)| {
            (inside, node, sx.to_bits(), sy.to_bits())
        };
        let mut inside = 0;
        for &x in &values {
            for &y in &values {
                let want = locate(&g, &[x, y]);
                assert_eq!(bits(locate_in_pairs(&g, &[x, y])), bits(want), "at ({x}, {y})");
                inside += want.0 as usize;
            }
        }
        assert!(inside > 10_000, "{inside} points inside");
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
