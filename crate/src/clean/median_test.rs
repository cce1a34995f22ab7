//! The normalized median test for spurious PIV vectors.
//!
//! Westerweel, J. & Scarano, F. (2005) "Universal outlier detection for PIV data",
//! Experiments in Fluids 39:1096–1100. For each component and each vector U₀ with
//! neighbours U₁…U₈ (the 3×3 block): U_m = median(Uᵢ), r_m = median|Uᵢ − U_m|,
//! r* = |U₀ − U_m| / (r_m + ε). The vector is flagged when r* exceeds the threshold for
//! either component. The published defaults (METHODS.md §4, values from memory) are a
//! threshold of 2 and ε ≈ 0.1 px, the noise level of a PIV displacement. Dividing by the
//! local residual makes one threshold work across flows of very different gradients.

use super::neighbourhood::{gather, median};
use crate::field::Series;
use serde::{Deserialize, Serialize};

/// One snapshot as the test sees it: both components, `(ny, nx)`, the mask and the vectors
/// that are missing right now (they are neither judged nor used as neighbours).
#[derive(Debug, Clone, Copy)]
pub struct SnapshotView<'a> {
    pub u: &'a [f32],
    pub v: &'a [f32],
    pub nx: usize,
    pub ny: usize,
    pub mask: &'a [bool],
    pub missing: &'a [bool],
}

/// Parameters of the normalized median test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct MedianTest {
    /// Flag a vector when its normalized residual exceeds this (published default 2).
    pub threshold: f64,
    /// ε in velocity units (m/s). `None`: derived from the data by [`MedianTest::resolve_epsilon`].
    pub epsilon: Option<f64>,
}

impl Default for MedianTest {
    fn default() -> Self {
        MedianTest { threshold: 2.0, epsilon: None }
    }
}

/// Fewest neighbours (real or extrapolated) for the test to judge a vector. With one or two, a median of
/// residuals says nothing about the local variation (common practice).
const MIN_NEIGHBOURS: usize = 3;

/// The published ε is 0.1 px of displacement. Recordings are usually set up so the largest
/// displacement is about a quarter of a 32 px interrogation window, ~8 px (common practice),
/// so without the camera calibration 0.1 px corresponds to about 1/80 of the largest speed.
const EPSILON_PER_PEAK_SPEED: f64 = 0.1 / 8.0;

/// Normalized residual of one component at cell `c` from the neighbour values `nb`.
fn residual(u0: f64, nb: &[f64]) -> (f64, f64) {
    let mut buf = [0.0f64; 8];
    let n = nb.len();
    buf[..n].copy_from_slice(nb);
    let um = median(&mut buf[..n]);
    for (b, &x) in buf[..n].iter_mut().zip(nb) {
        *b = (x - um).abs();
    }
    let rm = median(&mut buf[..n]);
    ((u0 - um).abs(), rm)
}

impl MedianTest {
    /// ε in velocity units: the given value, or 1/80 of the 99th percentile of the speed of
    /// the valid vectors (see `EPSILON_PER_PEAK_SPEED`), never zero.
    pub fn resolve_epsilon(&self, series: &Series) -> f64 {
        if let Some(e) = self.epsilon {
            return e;
        }
        let plane = series.nx() * series.ny();
        let mask = series.mask();
        let gaps = series.gaps();
        // A strided sample of up to ~200k vectors is plenty for a percentile.
        let n = series.u().len();
        let stride = (n / 200_000).max(1);
        let mut speeds: Vec<f64> = (0..n)
            .step_by(stride)
            .filter(|&idx| !mask[idx % plane] && gaps.is_none_or(|g| !g[idx]))
            .map(|idx| (series.u()[idx] as f64).hypot(series.v()[idx] as f64))
            .collect();
        if speeds.is_empty() {
            return f64::MIN_POSITIVE;
        }
        let at = ((speeds.len() - 1) as f64 * 0.99).round() as usize;
        let (_, p99, _) = speeds.select_nth_unstable_by(at, f64::total_cmp);
        (*p99 * EPSILON_PER_PEAK_SPEED).max(f64::MIN_POSITIVE)
    }

    /// The larger of the two components' normalized residuals at every cell of one snapshot
    /// (`NaN` where the test cannot judge: masked, missing, or fewer than 3 valid neighbours).
    pub fn residuals(&self, snap: &SnapshotView, eps: f64) -> Vec<f64> {
        let SnapshotView { u, v, nx, ny, mask, missing } = *snap;
        let usable = |c: usize| !mask[c] && !missing[c];
        let mut out = vec![f64::NAN; nx * ny];
        for j in 0..ny {
            for i in 0..nx {
                let c = j * nx + i;
                if !usable(c) {
                    continue;
                }
                let nb = gather(u, v, nx, ny, &usable, i, j);
                if nb.len < MIN_NEIGHBOURS {
                    continue;
                }
                let mut worst = 0.0f64;
                for (comp, vals) in [(u, &nb.u), (v, &nb.v)] {
                    let (dev, rm) = residual(comp[c] as f64, &vals[..nb.len]);
                    worst = worst.max(dev / (rm + eps));
                }
                out[c] = worst;
            }
        }
        out
    }

    /// Flat indices of the vectors of one snapshot that fail the test. All vectors are judged
    /// on the same state of the field, so the result does not depend on scan order.
    pub fn detect(&self, snap: &SnapshotView, eps: f64) -> Vec<usize> {
        self.residuals(snap, eps)
            .iter()
            .enumerate()
            .filter(|(_, &r)| r > self.threshold)
            .map(|(c, _)| c)
            .collect()
    }
}

/// Normalized residuals of snapshot `k` of a series (for display and diagnostics).
pub fn normalized_residuals(series: &Series, k: usize, test: &MedianTest) -> Vec<f64> {
    let (nx, ny) = (series.nx(), series.ny());
    let missing = series.gaps_at(k).map_or_else(|| vec![false; nx * ny], <[bool]>::to_vec);
    let eps = test.resolve_epsilon(series);
    let view = SnapshotView {
        u: series.u_at(k),
        v: series.v_at(k),
        nx,
        ny,
        mask: series.mask(),
        missing: &missing,
    };
    test.residuals(&view, eps)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_of_odd_and_even() {
        assert_eq!(median(&mut [3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&mut [4.0, 1.0, 2.0, 3.0]), 2.5);
    }

    /// A uniform field has r_m = 0, so r* = |U₀ − U_m|/ε: one vector off by 3ε is flagged at
    /// threshold 2, one off by ε is not [D: the definition of the test].
    #[test]
    fn uniform_field_with_one_bad_vector() {
        let (nx, ny) = (5, 5);
        let mut u = vec![1.0f32; 25];
        let v = vec![0.0f32; 25];
        let mask = vec![false; 25];
        let missing = vec![false; 25];
        let t = MedianTest::default();
        let flagged = |u: &[f32]| {
            let view = SnapshotView { u, v: &v, nx, ny, mask: &mask, missing: &missing };
            t.detect(&view, 0.1)
        };
        u[12] = 1.3;
        assert_eq!(flagged(&u), vec![12]);
        u[12] = 1.1 - 1e-6;
        assert!(flagged(&u).is_empty());
    }
}
