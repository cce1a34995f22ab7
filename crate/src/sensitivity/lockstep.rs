//! The forward pass of a tile of trajectories in lockstep, on time slices of gridded data:
//! the fast path of the sensitivity maps when f (and, if it can, g) is bilinear in space
//! and linear in time, as the flow map and the variational FTLE have (`lagrangian`'s
//! `lockstep.rs`).
//!
//! Why: a per-tracer sample of gridded data combines two snapshots at four cell corners
//! before the bilinear weights; every tracer of a grid samples at the same stage times, so
//! blending the two snapshots once per stage time, on the rows the tile's tracers can
//! reach, leaves a sample four loads and the weights. The steps are the outer loop and the
//! tile's tracers the inner one, in blocks whose four stages are separate passes (so the
//! samples of a pass overlap on the processor); each tracer stores its nodes as
//! [`trajectory`] does, and the backward sweep is the same call.
//!
//! Results are bit-identical to [`trajectory`]: slice samples are the field's samples bit
//! for bit (`lagrangian::SliceSet`), the stage times and the step arithmetic are the same
//! expressions ([`stage_point`] and [`combine_stages`] are shared with the per-tracer step), and a tracer whose step meets "no value" on a
//! slice is handed, from the start of that step, to the per-tracer [`forward`] pass on the
//! fields themselves, which finds where it really stops. The tests check the identity.
//!
//! Memory: a tile stores (steps + 1) nodes of [`TrajectoryBuffer::NODE_BYTES`] per tracer;
//! [`tile_size`] keeps that under [`TILE_BYTES`] whatever the tracer grid.
//!
//! [`trajectory`]: super::trajectory::trajectory

use super::trajectory::{
    combine_stages, finish, forward, stage_point, TrajectoryBuffer, TrajectorySensitivity,
};
use crate::lagrangian::{GriddedField, Located, SliceSet, Vec2, VelocityField};

/// Upper bound on a tile's node storage: 24 MiB, small next to a tab's memory, and enough
/// tracers (about 1,500 at 200 steps, a dozen rows of a 128-wide grid) that blending the
/// rows they reach costs little next to the samples taken on them (with a quarter of
/// this, blending took a fifth of the time on the demo problem).
pub(super) const TILE_BYTES: usize = 24 << 20;

/// Below this many tracers a tile is not worth its slices: the per-tracer path takes them.
pub(super) const MIN_TILE: usize = 16;

/// Tracers per tile for `n` steps: as many as [`TILE_BYTES`] holds, at least one.
pub(super) fn tile_size(n: usize) -> usize {
    (TILE_BYTES / ((n + 1) * TrajectoryBuffer::NODE_BYTES)).max(1)
}

/// The perturbation on a tile's steps: slices of its own when it is sliceable gridded data
/// (on any grid: slices carry their own geometry), else the field's own samples.
pub(super) enum PerturbationSamples<'f, G> {
    // Boxed: the slices' geometry is large next to a reference.
    Slices(Box<SliceSet<'f>>),
    Field(&'f G),
}

/// Reusable storage of one tile (one per thread or worker).
#[derive(Default)]
pub(super) struct TileBuffers {
    nodes: Vec<TrajectoryBuffer>,
}

/// Tracers whose stages are sampled pass by pass: the samples of one pass are independent,
/// so they overlap on the processor, where one tracer's four stages form a chain; the
/// block's stage samples (32 × 4 × 48 bytes) stay in the L1 cache.
const BLOCK: usize = 32;

/// One trajectory of a tile in flight.
#[derive(Clone, Copy)]
struct Track {
    /// Index in the tile's seeds.
    i: usize,
    x: Vec2,
    /// A sample of the current step had no value on its slice.
    failed: bool,
}

/// Sensitivity along the trajectories of f from `seeds` at `t0`, `n` RK4 steps of `h`:
/// `out[i]` is [`trajectory`](super::trajectory::trajectory)'s result for `seeds[i]`.
/// `fg` is `f` itself seen as a sliceable gridded field.
#[allow(clippy::too_many_arguments)]
pub(super) fn tile<F: VelocityField, G: VelocityField>(
    f: &F,
    fg: &GriddedField,
    g: &G,
    gs: &mut PerturbationSamples<'_, G>,
    seeds: &[Vec2],
    (t0, h, n): (f64, f64, usize),
    bufs: &mut TileBuffers,
    out: &mut Vec<Option<TrajectorySensitivity>>,
) {
    out.clear();
    out.resize(seeds.len(), None);
    if bufs.nodes.len() < seeds.len() {
        bufs.nodes.resize_with(seeds.len(), || TrajectoryBuffer::for_steps(n));
    }
    for b in &mut bufs.nodes[..seeds.len()] {
        b.clear();
    }
    // Stage times of a step: its start, middle and end.
    let mut fs = SliceSet::new(fg, 3, Some((t0, h * n as f64, h)));
    let mut active: Vec<Track> =
        seeds.iter().enumerate().map(|(i, &x)| Track { i, x, failed: false }).collect();
    let mut stages = [[([0.0; 2], [[0.0; 2]; 2]); 4]; BLOCK];
    let mut perturbation = [None; BLOCK];
    let mut places = [Located::default(); BLOCK];
    // The tracers' own places (stage 0), reused for g's sample when g's slices share f's
    // grid (g made of f's modes, the common case).
    let mut at_tracers = [Located::default(); BLOCK];
    let g_on_f_grid = matches!(gs, PerturbationSamples::Slices(set) if set.same_grid(&fs));
    for s in 0..n {
        // The time the per-tracer pass computes for step s.
        let t = t0 + s as f64 * h;
        let (lo, hi) = active.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), tr| {
            // Plain selects: `f64::min` and `max` are library calls in WebAssembly.
            let y = tr.x[1];
            (if y < a { y } else { a }, if y > b { y } else { b })
        });
        fs.hold(0, t, lo, hi);
        fs.hold(1, t + 0.5 * h, lo, hi);
        fs.hold(2, t + h, lo, hi);
        if let PerturbationSamples::Slices(set) = gs {
            set.hold(0, t, lo, hi);
        }
        if active.len() >= MIN_TILE {
            for block in active.chunks_mut(BLOCK) {
                let m = block.len();
                // Stage k samples slice 0, 1, 1, 2 at the point its predecessor gives: all
                // points of the block placed first, then sampled (`SliceSet::place`).
                for (k, slice) in [0, 1, 1, 2].into_iter().enumerate() {
                    for ((tr, st), at) in block.iter().zip(&stages[..m]).zip(&mut places) {
                        *at = fs.place(stage_point(k, h, tr.x, st[k.saturating_sub(1)].0));
                    }
                    for ((tr, st), at) in block.iter_mut().zip(&mut stages[..m]).zip(&places) {
                        match fs.velocity_gradient_at(slice, at) {
                            Some(v) => st[k] = v,
                            None => tr.failed = true,
                        }
                    }
                    if k == 0 {
                        // Stage 0's points are the tracers themselves, where g is sampled.
                        at_tracers = places;
                    }
                }
                match gs {
                    PerturbationSamples::Slices(set) => {
                        if !g_on_f_grid {
                            for (tr, at) in block.iter().zip(&mut at_tracers) {
                                *at = set.place(tr.x);
                            }
                        }
                        for (gk, at) in perturbation[..m].iter_mut().zip(&at_tracers) {
                            *gk = set.velocity_at(0, at);
                        }
                    }
                    PerturbationSamples::Field(g) => {
                        for (tr, gk) in block.iter().zip(&mut perturbation[..m]) {
                            *gk = g.velocity(tr.x, t);
                        }
                    }
                }
                for ((tr, st), gk) in block.iter_mut().zip(&stages[..m]).zip(&perturbation[..m]) {
                    match gk {
                        Some(gk) if !tr.failed => {
                            let (xn, phi, grad, mid) = combine_stages(h, tr.x, st);
                            bufs.nodes[tr.i].push(tr.x, *gk, (phi, grad, mid), h);
                            tr.x = xn;
                        }
                        _ => tr.failed = true,
                    }
                }
            }
        } else {
            // Too few tracers left to share slices: the per-tracer path takes them all.
            for tr in &mut active {
                tr.failed = true;
            }
        }
        // A step without a value on a slice: the rest of the trajectory on the fields
        // themselves, from the start of this step (`x` is still that step's start).
        active.retain(|tr| {
            if !tr.failed {
                return true;
            }
            let buf = &mut bufs.nodes[tr.i];
            let end = forward(f, g, tr.x, t0, h, s..n, buf);
            out[tr.i] = finish(f, g, end, t0, h, buf);
            false
        });
        if active.is_empty() {
            return;
        }
    }
    for tr in active {
        out[tr.i] = finish(f, g, tr.x, t0, h, &mut bufs.nodes[tr.i]);
    }
}
