//! FTLE ridges as polylines, for overlays and export.
//!
//! Second-derivative ridge definition of Shadden, Lekien & Marsden (2005, Physica D
//! 212:271–304): with H the Hessian of σ and n the unit eigenvector of its most negative
//! eigenvalue λn, a ridge is where ∇σ·n = 0 with λn < −c and σ > σmin. Here: light binomial
//! smoothing first (differentiating twice amplifies noise), gradient and Hessian by central
//! differences on the tracer grid, the zero set of s = ∇σ·n traced by marching squares in
//! every cell, n oriented consistently inside each cell (the eigenvector has no sign), segments joined through shared cell edges, short
//! polylines dropped. The thresholds are tested where the zero set crosses a cell edge
//! (σ and λn interpolated there), so ridges thinner than the tracer spacing survive.
//!
//! Ridges are a heuristic for the most repelling (forward) or attracting (backward)
//! material lines: shear without hyperbolicity makes ridges too (Haller 2015, Annu. Rev.
//! Fluid Mech. 47:137–162). The thresholds decide what counts as a ridge; show them.

use super::ftle::{FtleFlag, FtleRows};
use super::velocity::Vec2;
use serde::{Deserialize, Serialize};
use std::collections::HashMap;

/// Thresholds of ridge extraction. Fractions refer to the map being analysed, so the same
/// options work for any units and horizon.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RidgeOptions {
    /// Passes of the 3×3 binomial filter before differentiating.
    pub smoothing_passes: usize,
    /// σmin as a fraction of the largest σ of the map.
    pub min_ftle_fraction: f64,
    /// c as a fraction of the largest −λn of the map.
    pub min_curvature_fraction: f64,
    /// Polylines shorter than this many tracer spacings are dropped.
    pub min_length_spacings: f64,
}

impl Default for RidgeOptions {
    fn default() -> Self {
        RidgeOptions {
            smoothing_passes: 1,
            min_ftle_fraction: 0.3,
            min_curvature_fraction: 0.05,
            min_length_spacings: 3.0,
        }
    }
}

/// One ridge: a polyline of points in the tracer grid's coordinates.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Ridge {
    pub points: Vec<Vec2>,
}

impl Ridge {
    /// Length of the polyline.
    pub fn length(&self) -> f64 {
        self.points.windows(2).map(|w| (w[1][0] - w[0][0]).hypot(w[1][1] - w[0][1])).sum()
    }
}

/// 3×3 binomial smoothing over valid nodes only (weights renormalised next to invalid ones).
fn smooth(v: &[f64], ok: &[bool], nx: usize, ny: usize) -> Vec<f64> {
    let mut out = v.to_vec();
    for j in 0..ny {
        for i in 0..nx {
            let c = j * nx + i;
            if !ok[c] {
                continue;
            }
            let (mut s, mut w) = (0.0, 0.0);
            for dj in -1i64..=1 {
                for di in -1i64..=1 {
                    let (ii, jj) = (i as i64 + di, j as i64 + dj);
                    if ii < 0 || jj < 0 || ii >= nx as i64 || jj >= ny as i64 {
                        continue;
                    }
                    let n = jj as usize * nx + ii as usize;
                    if ok[n] {
                        let wt = ((2 - di.abs()) * (2 - dj.abs())) as f64;
                        s += wt * v[n];
                        w += wt;
                    }
                }
            }
            out[c] = s / w;
        }
    }
    out
}

/// Extracts ridge polylines from a whole-grid FTLE map (rows 0..ny). Nodes flagged Full or
/// Exited are used; the others are holes.
pub fn extract_ridges(map: &FtleRows, o: &RidgeOptions) -> Vec<Ridge> {
    let (nx, ny) = (map.grid.nx(), map.j1 - map.j0);
    let (hx, hy) = (map.grid.x.step, map.grid.y.step);
    let ok: Vec<bool> =
        map.flag.iter().map(|f| matches!(f, FtleFlag::Full | FtleFlag::Exited)).collect();
    let mut s: Vec<f64> = map.ftle.iter().map(|&v| v as f64).collect();
    for _ in 0..o.smoothing_passes {
        s = smooth(&s, &ok, nx, ny);
    }
    // Per node: (∇σ·n, n, λn) where the full 3×3 neighbourhood is valid.
    let mut info: Vec<Option<(f64, Vec2, f64)>> = vec![None; nx * ny];
    for j in 1..ny.saturating_sub(1) {
        for i in 1..nx - 1 {
            let c = j * nx + i;
            let nb =
                [c - nx - 1, c - nx, c - nx + 1, c - 1, c, c + 1, c + nx - 1, c + nx, c + nx + 1];
            if !nb.iter().all(|&n| ok[n]) {
                continue;
            }
            let gx = (s[c + 1] - s[c - 1]) / (2.0 * hx);
            let gy = (s[c + nx] - s[c - nx]) / (2.0 * hy);
            let hxx = (s[c + 1] - 2.0 * s[c] + s[c - 1]) / (hx * hx);
            let hyy = (s[c + nx] - 2.0 * s[c] + s[c - nx]) / (hy * hy);
            let hxy =
                (s[c + nx + 1] - s[c + nx - 1] - s[c - nx + 1] + s[c - nx - 1]) / (4.0 * hx * hy);
            let mean = 0.5 * (hxx + hyy);
            let rad = (0.5 * (hxx - hyy)).hypot(hxy);
            let ln = mean - rad;
            let n = if hxy.abs() > 1e-12 * (hxx.abs() + hyy.abs()) {
                let (a, b) = (ln - hyy, hxy);
                let r = a.hypot(b);
                [a / r, b / r]
            } else if hxx <= hyy {
                [1.0, 0.0]
            } else {
                [0.0, 1.0]
            };
            info[c] = Some((gx * n[0] + gy * n[1], n, ln));
        }
    }
    let smax = (0..nx * ny).filter(|&c| info[c].is_some()).map(|c| s[c]).fold(f64::MIN, f64::max);
    let cmax = info.iter().flatten().map(|x| -x.2).fold(0.0, f64::max);
    let smin = o.min_ftle_fraction * smax;
    let cmin = o.min_curvature_fraction * cmax;

    // Marching squares over cells; an endpoint is identified by the grid edge it lies on.
    // Edge ids: horizontal edge from node (i, j) to (i+1, j) = 2·(j·nx + i), vertical edge
    // from (i, j) to (i, j+1) = 2·(j·nx + i) + 1.
    let mut segs: Vec<[(usize, Vec2); 2]> = Vec::new();
    let x0 = map.grid.x.start;
    let y0 = map.grid.y.coord(map.j0);
    for j in 0..ny.saturating_sub(1) {
        for i in 0..nx - 1 {
            let corners = [j * nx + i, j * nx + i + 1, (j + 1) * nx + i + 1, (j + 1) * nx + i];
            let Some(vals) = corners.iter().map(|&c| info[c]).collect::<Option<Vec<_>>>() else {
                continue;
            };
            let n0 = vals[0].1;
            let sv: Vec<f64> = vals
                .iter()
                .map(|(sn, n, _)| if n[0] * n0[0] + n[1] * n0[1] < 0.0 { -sn } else { *sn })
                .collect();
            // Cell edges in corner order: bottom (0→1), right (1→2), top (3→2), left (0→3).
            let edges = [
                (0, 1, 2 * (j * nx + i)),
                (1, 2, 2 * (j * nx + i + 1) + 1),
                (3, 2, 2 * ((j + 1) * nx + i)),
                (0, 3, 2 * (j * nx + i) + 1),
            ];
            let pos = |c: usize| {
                let (ci, cj) = (c % nx, c / nx);
                [x0 + ci as f64 * hx, y0 + cj as f64 * hy]
            };
            // Crossings of s = 0 on the cell's edges; the thresholds are applied at the
            // crossing (σ and λn interpolated along the edge), so a ridge narrower than the
            // tracer spacing, whose neighbour nodes fail them, is still found.
            let mut hits: Vec<((usize, Vec2), bool)> = Vec::with_capacity(4);
            for &(a, b, id) in &edges {
                let (sa, sb) = (sv[a], sv[b]);
                if (sa >= 0.0) != (sb >= 0.0) {
                    let t = sa / (sa - sb);
                    let (ca, cb) = (corners[a], corners[b]);
                    let (pa, pb) = (pos(ca), pos(cb));
                    let sigma = (1.0 - t) * s[ca] + t * s[cb];
                    let lam = (1.0 - t) * vals[a].2 + t * vals[b].2;
                    let good = sigma > smin && lam < -cmin;
                    let p = [pa[0] + t * (pb[0] - pa[0]), pa[1] + t * (pb[1] - pa[1])];
                    hits.push(((id, p), good));
                }
            }
            let mut join = |a: usize, b: usize| {
                if hits[a].1 && hits[b].1 {
                    segs.push([hits[a].0, hits[b].0]);
                }
            };
            match hits.len() {
                2 => join(0, 1),
                4 => {
                    // Saddle cell: the centre's sign decides which corners are joined.
                    let centre = sv.iter().sum::<f64>() / 4.0;
                    if (centre >= 0.0) == (sv[0] >= 0.0) {
                        join(0, 1);
                        join(2, 3);
                    } else {
                        join(0, 3);
                        join(1, 2);
                    }
                }
                _ => {}
            }
        }
    }
    let min_len = o.min_length_spacings * hx.min(hy);
    link(&segs).into_iter().filter(|r| r.length() >= min_len).collect()
}

/// Joins segments that share an edge point into polylines.
fn link(segs: &[[(usize, Vec2); 2]]) -> Vec<Ridge> {
    let mut by_edge: HashMap<usize, Vec<usize>> = HashMap::new();
    for (k, s) in segs.iter().enumerate() {
        for e in s {
            by_edge.entry(e.0).or_default().push(k);
        }
    }
    let mut used = vec![false; segs.len()];
    let mut out = Vec::new();
    // Next unused segment touching `edge`, and its far end.
    let next = |edge: usize, used: &[bool]| -> Option<(usize, (usize, Vec2))> {
        by_edge.get(&edge)?.iter().find(|&&k| !used[k]).map(|&k| {
            let s = segs[k];
            (k, if s[0].0 == edge { s[1] } else { s[0] })
        })
    };
    for start in 0..segs.len() {
        if used[start] {
            continue;
        }
        used[start] = true;
        let mut pts = std::collections::VecDeque::from([segs[start][0], segs[start][1]]);
        // Grow forward from the back, then backward from the front.
        while let Some((k, far)) = next(pts.back().unwrap().0, &used) {
            used[k] = true;
            pts.push_back(far);
        }
        while let Some((k, far)) = next(pts.front().unwrap().0, &used) {
            used[k] = true;
            pts.push_front(far);
        }
        out.push(Ridge { points: pts.into_iter().map(|p| p.1).collect() });
    }
    out
}
