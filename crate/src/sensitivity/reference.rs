//! The default reference speed of a perturbation, g_ref in σ_MS (METHODS.md §2): the RMS of
//! |g| over the valid cells of the snapshots the trajectories use, so the logarithm's
//! argument is dimensionless and σ_MS depends neither on ε nor on the units.

use crate::field::Series;

/// RMS of |g| = √(u² + v²) over unmasked, non-gap cells of the snapshots whose times lie in
/// [min(t0, t0 + T), max(t0, t0 + T)], widened to the snapshots bracketing that interval
/// (the ones linear interpolation in time reads). 0 when no cell qualifies.
pub fn rms_speed(g: &Series, t0: f64, horizon: f64) -> f64 {
    let (lo, hi) = if horizon >= 0.0 { (t0, t0 + horizon) } else { (t0 + horizon, t0) };
    let t = g.times();
    let first = t.partition_point(|&tk| tk <= lo).saturating_sub(1);
    let last = t.partition_point(|&tk| tk < hi).min(t.len() - 1);
    let mask = g.mask();
    let (mut sum, mut count) = (0.0f64, 0usize);
    for k in first..=last {
        let gaps = g.gaps_at(k);
        for (c, (&u, &v)) in g.u_at(k).iter().zip(g.v_at(k)).enumerate() {
            if mask[c] || gaps.is_some_and(|gp| gp[c]) {
                continue;
            }
            sum += (u as f64) * (u as f64) + (v as f64) * (v as f64);
            count += 1;
        }
    }
    if count == 0 {
        0.0
    } else {
        (sum / count as f64).sqrt()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;

    fn series(speeds: &[f32]) -> Series {
        let nt = speeds.len();
        let u: Vec<f32> = speeds.iter().flat_map(|&s| [s; 4]).collect();
        Series::from_parts(SeriesParts {
            x: vec![0.0, 1.0],
            y: vec![0.0, 1.0],
            t: (0..nt).map(|k| k as f64).collect(),
            v: vec![0.0; u.len()],
            u,
            ..Default::default()
        })
        .unwrap()
    }

    /// Hand-computed RMS over the snapshots that bracket the window (derived).
    #[test]
    fn uses_the_bracketing_snapshots_only() {
        let g = series(&[1.0, 2.0, 3.0, 4.0, 5.0]);
        // [1.5, 2.5] reads snapshots 1, 2, 3: RMS of 2, 3, 4.
        let want = ((4.0 + 9.0 + 16.0) / 3.0f64).sqrt();
        assert!((rms_speed(&g, 1.5, 1.0) - want).abs() < 1e-12);
        assert!((rms_speed(&g, 2.5, -1.0) - want).abs() < 1e-12);
        // Exactly on snapshot times: [1, 3] reads 1..=3.
        assert!((rms_speed(&g, 1.0, 2.0) - want).abs() < 1e-12);
    }
}
