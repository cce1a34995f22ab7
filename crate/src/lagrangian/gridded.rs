//! Velocity evaluation on a [`Series`]: interpolation in space (bilinear, or Keys' C¹ cubic
//! convolution) and in time (linear, or cubic Hermite), with the gradient of the very same
//! interpolant, so tracers and the variational equation see one flow.
//!
//! Masked cells, and snapshots' missing vectors (gaps), make the interpolant undefined
//! wherever its stencil touches them: a bilinear cell needs its four corners, in every
//! snapshot of the time stencil. A cubic stencil that touches an invalid node falls back to
//! bilinear in that cell (C⁰ there), so data next to walls stay usable. Outside the window
//! or the snapshot times the field returns `None`; the engine's boundary policy decides.
//!
//! A series with one snapshot is a steady field, valid at every time.
//!
//! Cost: bilinear × linear reads 8 stored values per component; cubic × Hermite up to 64.
//! Validity is precomputed per cell (and per snapshot only when the series has gaps), so a
//! sample costs one flag load per snapshot used.

use super::kernels::{
    hermite_time, keys_fold, keys_weights, linear_time, locate_time, TimeStencil, TIME_TOL,
};
use super::pair::{self, Pair};
use super::velocity::{Mat2, Rect, Vec2, VelocityField};
use crate::field::Series;
use serde::{Deserialize, Serialize};

/// Interpolation in space.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SpaceInterp {
    /// Bilinear: fast; the gradient jumps at cell faces and imprints the grid on ∇F.
    #[default]
    Bilinear,
    /// Cubic convolution (Keys 1981, a = −1/2): C¹, third order; smoother ∇F.
    Cubic,
}

/// Interpolation in time.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TimeInterp {
    /// Linear between the two bracketing snapshots.
    #[default]
    Linear,
    /// Cubic Hermite with centred-difference slopes: for snapshot intervals that are not
    /// small against the dominant period.
    Hermite,
}

/// Tolerance, in cells, for points a rounding error outside the first or last node.
pub(super) const EDGE_TOL: f64 = 1e-9;

/// `v` limited to [0, max] for a `v` known not to be NaN: the same value as `f64::clamp`,
/// without the NaN handling (compare and select only).
#[inline(always)]
pub(super) fn clamp_checked(v: f64, max: f64) -> f64 {
    if v < 0.0 {
        0.0
    } else if v > max {
        max
    } else {
        v
    }
}

/// Whether the snapshot times are evenly spaced to round-off (a few ulps of the largest
/// time), so that the interval and fraction of a time can be computed from the spacing.
fn exactly_uniform(times: &[f64]) -> bool {
    let nt = times.len();
    if nt < 2 {
        return false;
    }
    let dt = (times[nt - 1] - times[0]) / (nt - 1) as f64;
    let scale = times[0].abs().max(times[nt - 1].abs()).max(dt.abs());
    let tol = 8.0 * f64::EPSILON * scale;
    dt > 0.0
        && times.iter().enumerate().all(|(k, &t)| (t - (times[0] + k as f64 * dt)).abs() <= tol)
}

/// A [`Series`] seen as a continuous velocity field. Borrowing, cheap to build apart from
/// the validity flags (one byte per cell, per snapshot only if the series has gaps).
#[derive(Debug, Clone)]
pub struct GriddedField<'a> {
    series: &'a Series,
    space: SpaceInterp,
    time: TimeInterp,
    nx: usize,
    ny: usize,
    x0: f64,
    y0: f64,
    inv_dx: f64,
    inv_dy: f64,
    window: Rect,
    uniform_t: Option<(f64, f64)>,
    /// Bilinear cell (i, j) usable: its four corners valid. Index `k*stride + j*(nx−1) + i`.
    cell_ok: Vec<bool>,
    /// Cubic stencil of the cell usable (all its real nodes valid); empty for bilinear.
    cubic_ok: Vec<bool>,
    stride: usize,
    /// Constants of the common case, when it applies (see [`LinearPath`]).
    linear: Option<LinearPath>,
}

/// The common case resolved once: bilinear in space, linear in time, two or more evenly
/// spaced snapshots, no per-snapshot gaps. Samples then skip the general stencil
/// machinery (variable stencil length, per-snapshot flags, the choice of scheme) and the
/// integer/float conversions that dominate a bilinear sample's instruction count, while
/// doing the same floating-point operations, so values are bit-identical to the general
/// path's.
#[derive(Debug, Clone, Copy)]
struct LinearPath {
    /// nx − 1 and ny − 1: the last node, in cells.
    mx: f64,
    my: f64,
    /// nx − 2, ny − 2: the last cell.
    last_i: i32,
    last_j: i32,
    /// First and last snapshot times, 1/Δt, and nt − 2 (the last interval).
    t_first: f64,
    t_last: f64,
    /// [t_first, t_last] widened by kernels::TIME_TOL of the record: the accepted times.
    t_lo: f64,
    t_hi: f64,
    inv_dt: f64,
    last_k: i32,
}

impl LinearPath {
    /// Snapshot interval k and fraction s of a time inside [t_first, t_last], from the
    /// uniform spacing: no search and no division.
    #[inline(always)]
    fn interval(&self, t: f64) -> (usize, f64) {
        // Within `t_lo..=t_hi` here; times a rounding error outside the record count as its
        // end snapshots (kernels::TIME_TOL), as on the general path.
        let tt = (t.clamp(self.t_first, self.t_last) - self.t_first) * self.inv_dt;
        let k = (tt as i32).min(self.last_k);
        (k as usize, tt - k as f64)
    }
}

/// The snapshots a bilinear × linear sample at one time combines: `len` (1 for a steady
/// series, else 2) snapshots from `first`, with weights `w`. What [`GriddedField::bracket`]
/// hands to the lockstep path, which blends them once for all tracers.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Bracket {
    pub first: usize,
    pub len: usize,
    pub w: [f64; 2],
}

/// Borrowed view of what the lockstep path needs to blend snapshots and locate points
/// exactly as the field's own samples do.
pub(super) struct SliceSource<'s> {
    pub u: &'s [f32],
    pub v: &'s [f32],
    pub nx: usize,
    pub ny: usize,
    pub x0: f64,
    pub y0: f64,
    pub inv_dx: f64,
    pub inv_dy: f64,
}

impl<'a> GriddedField<'a> {
    /// Builds the field view. Cubic needs at least 3 nodes on each axis; with fewer it
    /// evaluates bilinear everywhere (there is nothing a cubic could add).
    pub fn new(series: &'a Series, space: SpaceInterp, time: TimeInterp) -> GriddedField<'a> {
        let g = series.grid();
        let (nx, ny) = (g.nx(), g.ny());
        let times = series.times();
        let nt = times.len();
        let uniform_t = if nt >= 2 {
            let dt = (times[nt - 1] - times[0]) / (nt - 1) as f64;
            let uniform = times
                .iter()
                .enumerate()
                .all(|(k, &t)| (t - (times[0] + k as f64 * dt)).abs() <= 1e-9 * dt.abs());
            uniform.then_some((times[0], 1.0 / dt))
        } else {
            None
        };
        let planes = if series.gaps().is_some() { nt } else { 1 };
        let cells = (nx - 1) * (ny - 1);
        let mask = series.mask();
        let mut cell_ok = Vec::with_capacity(planes * cells);
        let want_cubic = space == SpaceInterp::Cubic && nx >= 3 && ny >= 3;
        let mut cubic_ok = Vec::with_capacity(if want_cubic { planes * cells } else { 0 });
        let mut valid = vec![false; nx * ny];
        for k in 0..planes {
            let gaps = series.gaps_at(k);
            for (c, v) in valid.iter_mut().enumerate() {
                *v = !mask[c] && gaps.is_none_or(|g| !g[c]);
            }
            for j in 0..ny - 1 {
                for i in 0..nx - 1 {
                    let c = j * nx + i;
                    cell_ok.push(valid[c] && valid[c + 1] && valid[c + nx] && valid[c + nx + 1]);
                    if want_cubic {
                        let (ia, ib) = (i.saturating_sub(1), (i + 2).min(nx - 1));
                        let (ja, jb) = (j.saturating_sub(1), (j + 2).min(ny - 1));
                        let ok = (ja..=jb).all(|jj| (ia..=ib).all(|ii| valid[jj * nx + ii]));
                        cubic_ok.push(ok);
                    }
                }
            }
        }
        GriddedField {
            series,
            space: if want_cubic { space } else { SpaceInterp::Bilinear },
            time,
            nx,
            ny,
            x0: g.x.start,
            y0: g.y.start,
            inv_dx: 1.0 / g.x.step,
            inv_dy: 1.0 / g.y.step,
            window: Rect { x0: g.x.start, x1: g.x.end(), y0: g.y.start, y1: g.y.end() },
            uniform_t,
            cell_ok,
            cubic_ok,
            stride: if planes > 1 { cells } else { 0 },
            linear: match uniform_t {
                Some((t_first, inv_dt))
                    if exactly_uniform(times)
                        && !want_cubic
                        && time == TimeInterp::Linear
                        && planes == 1
                        && nt <= i32::MAX as usize
                        && nx.max(ny) <= i32::MAX as usize =>
                {
                    Some(LinearPath {
                        mx: (nx - 1) as f64,
                        my: (ny - 1) as f64,
                        last_i: (nx - 2) as i32,
                        last_j: (ny - 2) as i32,
                        t_first,
                        t_last: times[nt - 1],
                        t_lo: t_first - TIME_TOL * (times[nt - 1] - t_first),
                        t_hi: times[nt - 1] + TIME_TOL * (times[nt - 1] - t_first),
                        inv_dt,
                        last_k: (nt - 2) as i32,
                    })
                }
                _ => None,
            },
        }
    }

    /// The series this field reads.
    pub fn series(&self) -> &'a Series {
        self.series
    }

    /// Whether every sample is bilinear in space and linear in time (or the series is
    /// steady): then the field at one time is one blended snapshot, which is what the
    /// lockstep path (`lockstep.rs`) precomputes once for all tracers.
    pub(super) fn sliceable(&self) -> bool {
        self.space == SpaceInterp::Bilinear
            && (self.time == TimeInterp::Linear || self.series.times().len() == 1)
    }

    /// The snapshots and weights a sample at `t` combines, computed exactly as
    /// [`VelocityField::velocity`] computes them (same interval, same fraction), so that a
    /// blended slice reproduces its samples bit for bit; `None` outside the snapshot times.
    /// Only meaningful when [`Self::sliceable`].
    pub(super) fn bracket(&self, t: f64) -> Option<Bracket> {
        if let Some(lp) = &self.linear {
            if !((t >= lp.t_lo) & (t <= lp.t_hi)) {
                return None;
            }
            let (k, s) = lp.interval(t);
            return Some(Bracket { first: k, len: 2, w: [1.0 - s, s] });
        }
        let st = self.stencil(t)?;
        debug_assert!(st.len <= 2, "bracket of a stencil longer than linear");
        Some(Bracket { first: st.first, len: st.len, w: [st.w[0], st.w[1]] })
    }

    /// Whether bilinear cell `cell` (index `j·(nx−1) + i`) has data at a time with bracket
    /// `b`: its four corners valid in every snapshot combined, as the samples require.
    #[inline]
    pub(super) fn cell_usable(&self, b: &Bracket, cell: usize) -> bool {
        let st = TimeStencil { first: b.first, len: b.len, w: [b.w[0], b.w[1], 0.0, 0.0] };
        self.all_ok(&self.cell_ok, &st, cell)
    }

    /// Data and geometry for the lockstep path.
    pub(super) fn slice_source(&self) -> SliceSource<'a> {
        SliceSource {
            u: self.series.u(),
            v: self.series.v(),
            nx: self.nx,
            ny: self.ny,
            x0: self.x0,
            y0: self.y0,
            inv_dx: self.inv_dx,
            inv_dy: self.inv_dy,
        }
    }

    /// Interpolation actually used in space (bilinear if cubic was asked on a grid with
    /// fewer than 3 nodes along an axis).
    pub fn space(&self) -> SpaceInterp {
        self.space
    }

    #[inline(always)]
    fn locate(&self, p: Vec2) -> Option<(usize, usize, f64, f64)> {
        let fx = (p[0] - self.x0) * self.inv_dx;
        let fy = (p[1] - self.y0) * self.inv_dy;
        let (mx, my) = ((self.nx - 1) as f64, (self.ny - 1) as f64);
        if !(fx >= -EDGE_TOL && fx <= mx + EDGE_TOL && fy >= -EDGE_TOL && fy <= my + EDGE_TOL) {
            return None;
        }
        let (fx, fy) = (clamp_checked(fx, mx), clamp_checked(fy, my));
        // fx ∈ [0, nx − 1] and fy ∈ [0, ny − 1] here: truncation through i32 is the floor,
        // and cheaper than a conversion to usize (which must handle 2⁶³ and up).
        let i = (fx as i32 as usize).min(self.nx - 2);
        let j = (fy as i32 as usize).min(self.ny - 2);
        Some((i, j, fx - i as f64, fy - j as f64))
    }

    #[inline(always)]
    fn stencil(&self, t: f64) -> Option<TimeStencil> {
        let times = self.series.times();
        if times.len() == 1 {
            return Some(TimeStencil { first: 0, len: 1, w: [1.0, 0.0, 0.0, 0.0] });
        }
        let (k, s) = locate_time(times, self.uniform_t, t)?;
        Some(match self.time {
            TimeInterp::Linear => linear_time(k, s),
            TimeInterp::Hermite => hermite_time(times, k, s),
        })
    }

    #[inline(always)]
    fn all_ok(&self, flags: &[bool], st: &TimeStencil, cell: usize) -> bool {
        if self.stride == 0 {
            return flags[cell];
        }
        (0..st.len).all(|m| flags[(st.first + m) * self.stride + cell])
    }

    /// The four corners of cell (i, j), time-combined: `[(i, j), (i+1, j), (i, j+1),
    /// (i+1, j+1)]` for u and for v. Linear in time (two snapshots) has its own branch, with
    /// one bounds check per snapshot and component instead of one per load.
    #[inline(always)]
    fn corners(&self, i: usize, j: usize, st: &TimeStencil) -> ([f64; 4], [f64; 4]) {
        let (u, v) = (self.series.u(), self.series.v());
        let plane = self.nx * self.ny;
        let nx = self.nx;
        let base = j * nx + i;
        let mut cu = [0.0f64; 4];
        let mut cv = [0.0f64; 4];
        if st.len == 2 {
            let o = st.first * plane + base;
            let (w0, w1) = (st.w[0], st.w[1]);
            let (u0, u1) = (&u[o..o + nx + 2], &u[o + plane..o + plane + nx + 2]);
            let (v0, v1) = (&v[o..o + nx + 2], &v[o + plane..o + plane + nx + 2]);
            for (c, ix) in [0, 1, nx, nx + 1].into_iter().enumerate() {
                // 0 + w₀a + w₁b in the general loop below; adding to 0 is exact.
                cu[c] = w0 * u0[ix] as f64 + w1 * u1[ix] as f64;
                cv[c] = w0 * v0[ix] as f64 + w1 * v1[ix] as f64;
            }
            return (cu, cv);
        }
        for m in 0..st.len {
            let w = st.w[m];
            let o = (st.first + m) * plane + base;
            let idx = [o, o + 1, o + nx, o + nx + 1];
            for (c, &ix) in idx.iter().enumerate() {
                cu[c] += w * u[ix] as f64;
                cv[c] += w * v[ix] as f64;
            }
        }
        (cu, cv)
    }

    /// Bilinear value in a cell from its time-combined corners.
    #[inline(always)]
    fn lerp(f: &[f64; 4], sx: f64, sy: f64) -> f64 {
        (1.0 - sy) * ((1.0 - sx) * f[0] + sx * f[1]) + sy * ((1.0 - sx) * f[2] + sx * f[3])
    }

    /// Bilinear in space on cell (i, j): time-combine the four corners, then interpolate.
    #[inline(always)]
    fn bilinear(&self, i: usize, j: usize, sx: f64, sy: f64, st: &TimeStencil) -> (Vec2, Mat2) {
        let (cu, cv) = self.corners(i, j, st);
        self.bilinear_from(&cu, &cv, sx, sy)
    }

    /// Value and gradient of the bilinear interpolant of time-combined corners.
    #[inline(always)]
    fn bilinear_from(&self, cu: &[f64; 4], cv: &[f64; 4], sx: f64, sy: f64) -> (Vec2, Mat2) {
        let grad = |f: &[f64; 4]| {
            let dx = ((1.0 - sy) * (f[1] - f[0]) + sy * (f[3] - f[2])) * self.inv_dx;
            let dy = ((1.0 - sx) * (f[2] - f[0]) + sx * (f[3] - f[1])) * self.inv_dy;
            [dx, dy]
        };
        ([Self::lerp(cu, sx, sy), Self::lerp(cv, sx, sy)], [grad(cu), grad(cv)])
    }

    /// Cubic convolution in space on cell (i, j) over the folded 4×4 stencil.
    #[inline(always)]
    fn cubic(&self, i: usize, j: usize, sx: f64, sy: f64, st: &TimeStencil) -> (Vec2, Mat2) {
        let (wx, dwx) = keys_weights(sx);
        let (wy, dwy) = keys_weights(sy);
        let (ix, wx) = keys_fold(i, self.nx, wx);
        let (_, dwx) = keys_fold(i, self.nx, dwx);
        let (iy, wy) = keys_fold(j, self.ny, wy);
        let (_, dwy) = keys_fold(j, self.ny, dwy);
        let (u, v) = (self.series.u(), self.series.v());
        let plane = self.nx * self.ny;
        // Number of real nodes along each axis (3 only when the axis has 3 nodes).
        let lx = 4.min(self.nx - ix);
        let ly = 4.min(self.ny - iy);
        let mut out = [0.0f64; 6]; // u, u_x, u_y, v, v_x, v_y
        for b in 0..ly {
            let mut ru = [0.0f64; 4];
            let mut rv = [0.0f64; 4];
            for m in 0..st.len {
                let w = st.w[m];
                let o = (st.first + m) * plane + (iy + b) * self.nx + ix;
                for a in 0..lx {
                    ru[a] += w * u[o + a] as f64;
                    rv[a] += w * v[o + a] as f64;
                }
            }
            let (mut pu, mut pux, mut pv, mut pvx) = (0.0, 0.0, 0.0, 0.0);
            for a in 0..lx {
                pu += wx[a] * ru[a];
                pux += dwx[a] * ru[a];
                pv += wx[a] * rv[a];
                pvx += dwx[a] * rv[a];
            }
            out[0] += wy[b] * pu;
            out[1] += wy[b] * pux;
            out[2] += dwy[b] * pu;
            out[3] += wy[b] * pv;
            out[4] += wy[b] * pvx;
            out[5] += dwy[b] * pv;
        }
        (
            [out[0], out[3]],
            [
                [out[1] * self.inv_dx, out[2] * self.inv_dy],
                [out[4] * self.inv_dx, out[5] * self.inv_dy],
            ],
        )
    }

    /// The [`LinearPath`] sample: the fractions (sx, sy) in the cell and its four corners
    /// combined in time, as (u, v) pairs; `None` without data.
    #[inline(always)]
    fn linear_cell(&self, lp: &LinearPath, p: Vec2, t: f64) -> Option<(f64, f64, [Pair; 4])> {
        let fx = (p[0] - self.x0) * self.inv_dx;
        let fy = (p[1] - self.y0) * self.inv_dy;
        // Non-short-circuit `&`: one combined test instead of six branches.
        let inside = (fx >= -EDGE_TOL)
            & (fx <= lp.mx + EDGE_TOL)
            & (fy >= -EDGE_TOL)
            & (fy <= lp.my + EDGE_TOL)
            & (t >= lp.t_lo)
            & (t <= lp.t_hi);
        if !inside {
            return None;
        }
        let (fx, fy) = (clamp_checked(fx, lp.mx), clamp_checked(fy, lp.my));
        // In range and not NaN here, so the conversions truncate (= floor for v ≥ 0).
        let i = (fx as i32).min(lp.last_i);
        let j = (fy as i32).min(lp.last_j);
        let (sx, sy) = (fx - i as f64, fy - j as f64);
        let (i, j) = (i as usize, j as usize);
        let nx = self.nx;
        if !self.cell_ok[j * (nx - 1) + i] {
            return None;
        }
        // Snapshot interval and fraction from the uniform spacing (the times are uniform
        // to round-off here): no search and no division.
        let (k, s) = lp.interval(t);
        let (w0, w1) = (1.0 - s, s);
        let plane = nx * self.ny;
        let o = k * plane + j * nx + i;
        let (u, v) = (self.series.u(), self.series.v());
        let pair = |f: &[f32], a: usize| -> [f64; 2] {
            let q: &[f32; 2] = f[a..a + 2].try_into().expect("two values");
            [q[0] as f64, q[1] as f64]
        };
        // Corner (u, v) pairs, each w₀·(snapshot k) + w₁·(snapshot k + 1): per lane the
        // operations of the general stencil ([`super::pair`]).
        let (a, b) = (Pair::splat(w0), Pair::splat(w1));
        let (u00, u01, u10, u11) =
            (pair(u, o), pair(u, o + nx), pair(u, o + plane), pair(u, o + plane + nx));
        let (v00, v01, v10, v11) =
            (pair(v, o), pair(v, o + nx), pair(v, o + plane), pair(v, o + plane + nx));
        let corner = |now: [f64; 2], next: [f64; 2]| {
            a.mul(Pair::new(now[0], now[1])).add(b.mul(Pair::new(next[0], next[1])))
        };
        Some((
            sx,
            sy,
            [
                corner([u00[0], v00[0]], [u10[0], v10[0]]),
                corner([u00[1], v00[1]], [u10[1], v10[1]]),
                corner([u01[0], v01[0]], [u11[0], v11[0]]),
                corner([u01[1], v01[1]], [u11[1], v11[1]]),
            ],
        ))
    }

    #[inline(always)]
    fn sample(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        if let Some(lp) = &self.linear {
            let (sx, sy, c) = self.linear_cell(lp, p, t)?;
            let g = pair::gradient(&c, sx, sy, self.inv_dx, self.inv_dy);
            return Some((pair::lerp(&c, sx, sy), g));
        }
        let (i, j, sx, sy) = self.locate(p)?;
        let st = self.stencil(t)?;
        let cell = j * (self.nx - 1) + i;
        if self.space == SpaceInterp::Cubic && self.all_ok(&self.cubic_ok, &st, cell) {
            return Some(self.cubic(i, j, sx, sy, &st));
        }
        if !self.all_ok(&self.cell_ok, &st, cell) {
            return None;
        }
        Some(self.bilinear(i, j, sx, sy, &st))
    }

    /// The velocity alone: what tracers need, without the gradient's arithmetic.
    #[inline(always)]
    fn sample_velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        if let Some(lp) = &self.linear {
            let (sx, sy, c) = self.linear_cell(lp, p, t)?;
            return Some(pair::lerp(&c, sx, sy));
        }
        if self.space == SpaceInterp::Cubic {
            return self.sample(p, t).map(|(u, _)| u);
        }
        let (i, j, sx, sy) = self.locate(p)?;
        let st = self.stencil(t)?;
        if !self.all_ok(&self.cell_ok, &st, j * (self.nx - 1) + i) {
            return None;
        }
        let (cu, cv) = self.corners(i, j, &st);
        Some([Self::lerp(&cu, sx, sy), Self::lerp(&cv, sx, sy)])
    }
}

impl VelocityField for GriddedField<'_> {
    #[inline(always)]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        self.sample_velocity(p, t)
    }
    #[inline(always)]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        self.sample(p, t)
    }
    fn window(&self) -> Option<Rect> {
        Some(self.window)
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        let t = self.series.times();
        (t.len() > 1).then(|| (t[0], t[t.len() - 1]))
    }
    fn as_gridded(&self) -> Option<&GriddedField<'_>> {
        Some(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
    use crate::lagrangian::velocity::Windowed;
    use rand::{RngExt, SeedableRng};

    /// The bilinear × linear fast path ([`LinearPath`]) against the general stencil code on
    /// the same data: the same cells have data, and values and gradients agree to
    /// round-off (the fast path takes the time fraction from the uniform spacing instead
    /// of dividing by the interval, a difference of a few ulps). Checked at random points
    /// and times, on cell faces and nodes, at the window edges and next to a masked block.
    #[test]
    fn linear_path_matches_the_general_stencil() {
        // Nodes outside this rectangle have no data, so they become masked cells.
        let cut = Windowed {
            inner: DoubleGyre::periodic(),
            rect: Rect { x0: -1.0, x1: 1.3, y0: -1.0, y1: 2.0 },
        };
        let s = sample_series(
            &cut,
            &linspace(0.0, 2.0, 21),
            &linspace(0.0, 1.0, 11),
            &linspace(0.0, 4.0, 17),
        )
        .unwrap();
        assert!(s.masked_count() > 0);
        let fast = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
        assert!(fast.linear.is_some(), "uniform snapshots should take the fast path");
        let mut general = fast.clone();
        general.linear = None;
        // Reproducible points (the crate's seeded generator).
        let mut rng = rand_pcg::Pcg64::seed_from_u64(1);
        let mut uniform = move || rng.random::<f64>();
        let mut points: Vec<(Vec2, f64)> = (0..4000)
            .map(|_| ([2.1 * uniform() - 0.05, 1.1 * uniform() - 0.05], 4.2 * uniform() - 0.1))
            .collect();
        for &t in &[0.0, 0.25, 1.75, 4.0] {
            for &x in &[0.0, 0.1, 0.7, 1.2, 1.3, 2.0] {
                for &y in &[0.0, 0.3, 0.5, 1.0] {
                    points.push(([x, y], t));
                }
            }
        }
        let (mut with, mut without) = (0, 0);
        for (p, t) in points {
            let (a, b) = (fast.velocity_gradient(p, t), general.velocity_gradient(p, t));
            assert_eq!(a.is_some(), b.is_some(), "data at {p:?}, t = {t}");
            assert_eq!(fast.velocity(p, t), a.map(|(u, _)| u), "velocity alone at {p:?}");
            let (Some((ua, ga)), Some((ub, gb))) = (a, b) else {
                without += 1;
                continue;
            };
            with += 1;
            // Round-off of a few operations on values of order πA ≈ 0.3 (common practice).
            let close = |x: f64, y: f64, scale: f64| (x - y).abs() <= 1e-14 * scale;
            for c in 0..2 {
                assert!(
                    close(ua[c], ub[c], 1.0),
                    "u[{c}] at {p:?}, t = {t}: {} vs {}",
                    ua[c],
                    ub[c]
                );
                for d in 0..2 {
                    assert!(close(ga[c][d], gb[c][d], 10.0), "∇u at {p:?}, t = {t}");
                }
            }
        }
        assert!(with > 2000 && without > 300, "{with} with data, {without} without");
    }
}
