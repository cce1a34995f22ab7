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
    hermite_time, keys_fold, keys_weights, linear_time, locate_time, TimeStencil,
};
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
const EDGE_TOL: f64 = 1e-9;

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
            space: if want_cubic {
                space
            } else {
                SpaceInterp::Bilinear
            },
            time,
            nx,
            ny,
            x0: g.x.start,
            y0: g.y.start,
            inv_dx: 1.0 / g.x.step,
            inv_dy: 1.0 / g.y.step,
            window: Rect {
                x0: g.x.start,
                x1: g.x.end(),
                y0: g.y.start,
                y1: g.y.end(),
            },
            uniform_t,
            cell_ok,
            cubic_ok,
            stride: if planes > 1 { cells } else { 0 },
        }
    }

    /// The series this field reads.
    pub fn series(&self) -> &'a Series {
        self.series
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
        let (fx, fy) = (fx.clamp(0.0, mx), fy.clamp(0.0, my));
        let i = (fx as usize).min(self.nx - 2);
        let j = (fy as usize).min(self.ny - 2);
        Some((i, j, fx - i as f64, fy - j as f64))
    }

    #[inline(always)]
    fn stencil(&self, t: f64) -> Option<TimeStencil> {
        let times = self.series.times();
        if times.len() == 1 {
            return Some(TimeStencil {
                first: 0,
                len: 1,
                w: [1.0, 0.0, 0.0, 0.0],
            });
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

    /// Bilinear in space on cell (i, j): time-combine the four corners, then interpolate.
    #[inline(always)]
    fn bilinear(&self, i: usize, j: usize, sx: f64, sy: f64, st: &TimeStencil) -> (Vec2, Mat2) {
        let (u, v) = (self.series.u(), self.series.v());
        let plane = self.nx * self.ny;
        let base = j * self.nx + i;
        let mut cu = [0.0f64; 4];
        let mut cv = [0.0f64; 4];
        for m in 0..st.len {
            let w = st.w[m];
            let o = (st.first + m) * plane + base;
            let idx = [o, o + 1, o + self.nx, o + self.nx + 1];
            for (c, &ix) in idx.iter().enumerate() {
                cu[c] += w * u[ix] as f64;
                cv[c] += w * v[ix] as f64;
            }
        }
        let lerp = |f: &[f64; 4]| {
            let val =
                (1.0 - sy) * ((1.0 - sx) * f[0] + sx * f[1]) + sy * ((1.0 - sx) * f[2] + sx * f[3]);
            let dx = ((1.0 - sy) * (f[1] - f[0]) + sy * (f[3] - f[2])) * self.inv_dx;
            let dy = ((1.0 - sx) * (f[2] - f[0]) + sx * (f[3] - f[1])) * self.inv_dy;
            (val, dx, dy)
        };
        let (a, ax, ay) = lerp(&cu);
        let (b, bx, by) = lerp(&cv);
        ([a, b], [[ax, ay], [bx, by]])
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

    #[inline(always)]
    fn sample(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
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
}

impl VelocityField for GriddedField<'_> {
    #[inline(always)]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        self.sample(p, t).map(|(u, _)| u)
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
}
