//! Default colour ranges, chosen by the core so the page and the CLI agree.
//!
//! A plain min–max range lets a handful of spurious vectors (common in PIV: a few percent
//! of vectors near walls and shadows, common practice) wash out the whole map, so ranges
//! use a high percentile of the valid cells instead: speed spans `[0, p99(|u|)]`, signed
//! fields `±p99(|ω|)` so zero sits on the neutral centre of the diverging map. Values past
//! the range clamp to the end colours.

use super::quantity::{check_snapshot, valid_cells, Quantity};
use super::RenderError;
use crate::field::Series;

/// Percentile of the valid values used as the "robust maximum".
pub const ROBUST_PERCENTILE: f64 = 99.0;

/// Snapshots sampled (evenly spaced, ends included) for a whole-series range. Enough to
/// see every phase of a periodic flow many times; bounds the cost on long series.
pub const SERIES_SAMPLE: usize = 64;

/// Which snapshots a default range is taken over.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RangeScope {
    /// One snapshot: the map uses its full colour span every frame.
    Snapshot(usize),
    /// The whole series: colours mean the same value in every frame, for animation.
    Series,
}

/// Percentile `p` (0–100) of `values` with linear interpolation between order statistics
/// (the default method of numpy.percentile: position `p/100 · (n − 1)`). Reorders
/// `values`. `None` when empty.
pub fn percentile(values: &mut [f32], p: f64) -> Option<f64> {
    let n = values.len();
    if n == 0 {
        return None;
    }
    let pos = (p.clamp(0.0, 100.0) / 100.0) * (n - 1) as f64;
    let k = pos.floor() as usize;
    let (_, &mut lo, right) = values.select_nth_unstable_by(k, f32::total_cmp);
    let lo = lo as f64;
    let frac = pos - k as f64;
    if frac == 0.0 || right.is_empty() {
        return Some(lo);
    }
    let hi = right.iter().copied().fold(f32::INFINITY, f32::min) as f64;
    Some(lo + frac * (hi - lo))
}

/// Snapshot indices a scope covers.
fn snapshots(s: &Series, scope: RangeScope) -> Result<Vec<usize>, RenderError> {
    match scope {
        RangeScope::Snapshot(k) => {
            check_snapshot(s, k)?;
            Ok(vec![k])
        }
        RangeScope::Series if s.nt() <= SERIES_SAMPLE => Ok((0..s.nt()).collect()),
        RangeScope::Series => {
            let last = (s.nt() - 1) as f64;
            let m = (SERIES_SAMPLE - 1) as f64;
            Ok((0..SERIES_SAMPLE).map(|i| (i as f64 * last / m).round() as usize).collect())
        }
    }
}

/// The default `(low, high)` colour range of `q` over `scope`.
///
/// Magnitudes: `(0, p99)`; signed fields: `(−p99(|·|), +p99(|·|))`, over the valid cells of
/// the covered snapshots pooled together. When the percentile is 0 (almost every cell is
/// zero) the largest magnitude is used instead, and when that is 0 too, 1: the map still
/// draws, every cell at the low end (or the neutral centre).
pub fn default_range(
    s: &Series,
    q: Quantity,
    scope: RangeScope,
) -> Result<(f64, f64), RenderError> {
    let mut pooled = Vec::new();
    for k in snapshots(s, scope)? {
        let f = q.compute(s, k)?;
        let valid = valid_cells(s, k);
        pooled.extend(f.iter().zip(&valid).filter(|(_, &ok)| ok).map(|(v, _)| v.abs()));
    }
    let mut top = percentile(&mut pooled, ROBUST_PERCENTILE).unwrap_or(0.0);
    if top <= 0.0 {
        top = pooled.iter().copied().fold(0.0f32, f32::max) as f64;
    }
    if top <= 0.0 {
        top = 1.0;
    }
    Ok(if q.is_signed() { (-top, top) } else { (0.0, top) })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;

    fn sample() -> Vec<f32> {
        (0..500).map(|i| ((i * 37) % 101) as f32 * 0.25 - 3.0).collect()
    }

    /// Reference: numpy 2.4.6 `np.percentile(v, p)` (default 'linear' method) on the same
    /// values, computed for this test.
    #[test]
    fn percentile_matches_numpy() {
        let cases =
            [(99.0, 21.752_499_999_999_998), (50.0, 9.5), (0.0, -3.0), (100.0, 22.0), (12.5, 0.0)];
        for (p, want) in cases {
            let got = percentile(&mut sample(), p).unwrap();
            assert!((got - want).abs() < 1e-9, "p{p}: {got} vs numpy {want}");
        }
        let mut w = [0.5f32, -2.0, 7.25, 1.0, 3.5, -0.75, 2.0];
        assert!((percentile(&mut w, 99.0).unwrap() - 7.025).abs() < 1e-6);
        assert!((percentile(&mut w, 37.0).unwrap() - 0.61).abs() < 1e-6);
        assert_eq!(percentile(&mut [], 50.0), None);
    }

    /// Solid-body rotation u = (−Ωy, Ωx): ω = 2Ω at every valid cell [D], so the signed
    /// range is ±2Ω; speed Ω·r has its p99 below the largest radius.
    fn rotation(nt: usize, omega: f64) -> Series {
        let (nx, ny) = (9usize, 7usize);
        let mut u = Vec::new();
        let mut v = Vec::new();
        for k in 0..nt {
            let w = omega * (1.0 + k as f64);
            for j in 0..ny {
                for i in 0..nx {
                    u.push((-w * (j as f64 - 3.0)) as f32);
                    v.push((w * (i as f64 - 4.0)) as f32);
                }
            }
        }
        let mut mask = vec![false; nx * ny];
        mask[0] = true;
        Series::from_parts(SeriesParts {
            x: (0..nx).map(|i| i as f64).collect(),
            y: (0..ny).map(|j| j as f64).collect(),
            t: (0..nt).map(|k| k as f64).collect(),
            u,
            v,
            mask: Some(mask),
            ..Default::default()
        })
        .unwrap()
    }

    #[test]
    fn ranges_follow_the_field_and_scope() {
        let s = rotation(3, 0.5);
        let (lo, hi) = default_range(&s, Quantity::Vorticity, RangeScope::Snapshot(0)).unwrap();
        assert!((lo + 1.0).abs() < 1e-6 && (hi - 1.0).abs() < 1e-6, "{lo} {hi}");
        // Over the series, the fastest snapshot (Ω = 1.5) sets the range: ±3.
        let (lo, hi) = default_range(&s, Quantity::Vorticity, RangeScope::Series).unwrap();
        assert!((lo + 3.0).abs() < 1e-5 && (hi - 3.0).abs() < 1e-5, "{lo} {hi}");
        let (lo, hi) = default_range(&s, Quantity::Speed, RangeScope::Snapshot(0)).unwrap();
        let r_max = 0.5 * 4f64.hypot(3.0);
        assert_eq!(lo, 0.0);
        assert!(hi > 0.8 * r_max && hi <= r_max + 1e-6, "{hi} vs max {r_max}");
        assert!(default_range(&s, Quantity::Speed, RangeScope::Snapshot(3)).is_err());
    }

    #[test]
    fn zero_field_still_gets_a_usable_range() {
        let s = rotation(1, 0.0);
        assert_eq!(default_range(&s, Quantity::Speed, RangeScope::Series).unwrap(), (0.0, 1.0));
    }

    #[test]
    fn long_series_are_sampled_evenly_with_both_ends() {
        let s = rotation(200, 0.01);
        let k = snapshots(&s, RangeScope::Series).unwrap();
        assert_eq!(k.len(), SERIES_SAMPLE);
        assert_eq!((k[0], k[SERIES_SAMPLE - 1]), (0, 199));
        assert!(k.windows(2).all(|w| w[1] > w[0]));
    }
}
