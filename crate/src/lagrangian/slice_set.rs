//! Blended time slices of one gridded field, for lockstep passes outside this module: the
//! sensitivity forward pass advances a tile of tracers step by step and samples f (with its
//! gradient) and g on slices, as the flow-map and FTLE paths of `lockstep.rs` do.
//!
//! Why a separate handle: the slices, their row bands and the sample arithmetic stay in
//! one place (`lockstep.rs`), and every sample here is bit-identical to the field's own
//! [`VelocityField::velocity`] and [`VelocityField::velocity_gradient`] (checked in the
//! tests below), so a caller that mixes slice samples with field samples, as the hand-over
//! of an exiting tracer does, computes exactly what the per-tracer path computes.

use super::gridded::{GriddedField, SliceSource};
use super::lockstep::{corners, max_abs_v, Geometry, Located, Slice};
use super::pair;
use super::velocity::{Mat2, Vec2};

/// `count` slices of a field that [`super::engine::lockstep_field`] accepted.
pub(crate) struct SliceSet<'f> {
    field: &'f GriddedField<'f>,
    src: SliceSource<'f>,
    geom: Geometry,
    slices: Vec<Slice>,
    /// Rows (cells) a sample point can lie beyond the tracer positions given to
    /// [`Self::hold`], plus one to spare for rounding.
    reach: f64,
}

impl<'f> SliceSet<'f> {
    /// Slices for samples at the tracers themselves (`stage_steps` = None: one cell to
    /// spare) or at RK4 stage points of steps `h` over [t₀, t₀ + horizon]
    /// (`Some((t0, horizon, h))`: how far a stage point moves within a step, bounded by the
    /// largest |v| of the snapshots in use, as in `lockstep.rs`).
    pub(crate) fn new(
        field: &'f GriddedField<'f>,
        count: usize,
        stage_steps: Option<(f64, f64, f64)>,
    ) -> SliceSet<'f> {
        debug_assert!(field.sliceable());
        let src = field.slice_source();
        let geom = Geometry::of(&src);
        let reach = match stage_steps {
            Some((t0, horizon, h)) => max_abs_v(field, &src, t0, horizon) * h.abs() * src.inv_dy,
            None => 0.0,
        } + 1.0;
        let slices = (0..count).map(|_| Slice::new(geom.nx, src.ny)).collect();
        SliceSet { field, src, geom, slices, reach }
    }

    /// Makes slice `k` hold the field at time `t` for sample points within the reach of
    /// tracers whose y lies in `y_lo..=y_hi`: kept if it already does, taken from another
    /// slice that does (the last stage of a step is the first of the next), else blended
    /// on a band one reach wider, so that it usually serves the next step too.
    pub(crate) fn hold(&mut self, k: usize, t: f64, y_lo: f64, y_hi: f64) {
        let row = |y: f64| (y - self.src.y0) * self.src.inv_dy;
        let (lo, hi) = (row(y_lo), row(y_hi));
        let last = self.geom.max_cell[1];
        let band = |extra: f64| {
            let a = (lo - self.reach - extra).floor().clamp(0.0, last) as usize;
            let b = (hi + self.reach + extra).floor().clamp(0.0, last) as usize;
            (a.min(b), b)
        };
        let need = band(0.0);
        if self.slices[k].holds(t, need) {
            return;
        }
        if let Some(j) = (0..self.slices.len()).find(|&j| j != k && self.slices[j].holds(t, need)) {
            self.slices.swap(j, k);
            return;
        }
        let wide = band(self.reach);
        self.slices[k].blend(self.field, &self.src, t, wide);
    }

    /// The velocity at `p` on slice `k`; `None` where the field has none, or outside the
    /// rows the slice holds (the tests' one-call form of [`Self::velocity_at`]).
    #[cfg(test)]
    pub(crate) fn velocity(&self, k: usize, p: Vec2) -> Option<Vec2> {
        self.velocity_at(k, &self.place(p))
    }

    /// [`Self::velocity`] at a point [`Self::place`]d beforehand (on this set or on one
    /// with the [`Self::same_grid`]).
    #[inline(always)]
    pub(crate) fn velocity_at(&self, k: usize, at: &Located) -> Option<Vec2> {
        let (c, has) = corners(&self.slices[k], &self.geom, at.node);
        (at.inside & has).then(|| pair::lerp(&pair::pairs(&c), at.sx, at.sy))
    }

    /// Whether `other` places points exactly as this set does (same nodes, spacing and
    /// size), so that its [`Located`] points serve here.
    pub(crate) fn same_grid(&self, other: &SliceSet) -> bool {
        self.geom == other.geom
    }

    /// The velocity and its gradient `[[∂u/∂x, ∂u/∂y], [∂v/∂x, ∂v/∂y]]` at `p` on slice
    /// `k`, the bilinear interpolant's gradient written as the field writes it (the tests'
    /// one-call form of [`Self::place`] and [`Self::velocity_gradient_at`]).
    #[cfg(test)]
    pub(crate) fn velocity_gradient(&self, k: usize, p: Vec2) -> Option<(Vec2, Mat2)> {
        self.velocity_gradient_at(k, &self.place(p))
    }

    /// Where `p` lies on the slices' grid (the same for every slice of the set). A stage
    /// over many tracers places all their points first, then samples them
    /// ([`Self::velocity_gradient_at`]): two short chains of dependent operations per
    /// sample instead of one long one, so more samples overlap on the processor (the
    /// flow map's `lockstep::stage` does the same).
    #[inline(always)]
    pub(crate) fn place(&self, p: Vec2) -> Located {
        Located::of(&self.geom, &p)
    }

    /// [`Self::velocity_gradient`] at a point [`Self::place`]d beforehand.
    #[inline(always)]
    pub(crate) fn velocity_gradient_at(&self, k: usize, at: &Located) -> Option<(Vec2, Mat2)> {
        let g = &self.geom;
        let (c, has) = corners(&self.slices[k], g, at.node);
        if !(at.inside & has) {
            return None;
        }
        let c = pair::pairs(&c);
        let grad = pair::gradient(&c, at.sx, at.sy, g.inv_d[0], g.inv_d[1]);
        Some((pair::lerp(&c, at.sx, at.sy), grad))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
    use crate::lagrangian::gridded::{SpaceInterp, TimeInterp};
    use crate::lagrangian::velocity::{Rect, VelocityField, Windowed};
    use rand::{RngExt, SeedableRng};

    /// Slice samples against the field's own, bit for bit, with masked cells, at random
    /// points of three times, on uniform and on stretched snapshot times; a slice held for
    /// a band of tracers has no data far outside it.
    #[test]
    fn slice_samples_are_the_field_samples() {
        let cut = Windowed {
            inner: DoubleGyre::periodic(),
            rect: Rect { x0: -1.0, x1: 1.3, y0: -1.0, y1: 2.0 },
        };
        let uniform = linspace(0.0, 4.0, 17);
        let stretched: Vec<f64> = uniform.iter().map(|&t| t + 0.03 * t * (4.0 - t)).collect();
        // Reproducible points (the crate's seeded generator).
        let mut rng = rand_pcg::Pcg64::seed_from_u64(3);
        let mut unit = move || rng.random::<f64>();
        for times in [&uniform, &stretched] {
            let s = sample_series(&cut, &linspace(0.0, 2.0, 21), &linspace(0.0, 1.0, 11), times)
                .unwrap();
            let field = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
            let mut set = SliceSet::new(&field, 2, Some((0.0, 4.0, 0.1)));
            let (mut with, mut without) = (0, 0);
            for t in [0.0, 1.0 / 3.0, times[7], 4.0] {
                set.hold(0, t, 0.0, 1.0);
                set.hold(1, t + 0.01, 0.0, 1.0);
                for _ in 0..500 {
                    let p = [2.1 * unit() - 0.05, 1.1 * unit() - 0.05];
                    assert_eq!(set.velocity(0, p), field.velocity(p, t), "{p:?} at {t}");
                    let want = field.velocity_gradient(p, t);
                    assert_eq!(set.velocity_gradient(0, p), want, "{p:?} at {t}");
                    let want1 = field.velocity_gradient(p, t + 0.01);
                    assert_eq!(set.velocity_gradient(1, p), want1);
                    if want.is_some() {
                        with += 1;
                    } else {
                        without += 1;
                    }
                }
            }
            assert!(with > 1000 && without > 300, "{with} with data, {without} without");
            // Held for tracers near y = 0.1: nothing near y = 0.9.
            set.hold(0, 1.5, 0.1, 0.1);
            assert!(set.velocity(0, [0.5, 0.1]).is_some());
            assert!(set.velocity(0, [0.5, 0.9]).is_none());
        }
    }
}
