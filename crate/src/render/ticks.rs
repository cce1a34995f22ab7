//! Tick values and labels for colour bars and axes.
//!
//! Steps are "nice" numbers 1, 2 or 5 × 10ᵏ, the usual choice for graph labels (Heckbert
//! 1990, "Nice numbers for graph labels", Graphics Gems, Academic Press; pages from memory:
//! 61–63). A colour bar cannot extend past its range, so only ticks inside the range count:
//! of the nice steps around (high − low)/target, the one whose number of ticks inside the
//! range is closest to the target wins (ties go to more ticks). Very large or small ranges
//! share one power of ten, shown once beside the unit.

use super::format::{superscript, typographic_minus};
use super::paint::ColorRange;
use super::RenderError;
use serde::Serialize;

/// One tick: its value, its position along the range (0 at low, 1 at high) and its label.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Tick {
    pub value: f64,
    pub frac: f64,
    pub label: String,
}

/// Ticks of one range. When `exponent` is not 0, labels are in units of 10^exponent and
/// `scale` (e.g. `×10⁻⁴`) must be shown beside the unit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ticks {
    pub ticks: Vec<Tick>,
    pub exponent: i32,
    pub scale: Option<String>,
}

/// Number of multiples of `step` inside `[lo, hi]` (with a little slack for round-off).
fn count_inside(lo: f64, hi: f64, step: f64) -> i64 {
    (hi / step + 1e-9).floor() as i64 - (lo / step - 1e-9).ceil() as i64 + 1
}

/// The nice step (1, 2, 5 × 10ᵏ) that puts closest to `target` ticks inside `[lo, hi]`.
fn nice_step(lo: f64, hi: f64, target: usize) -> f64 {
    let e = ((hi - lo) / target as f64).log10().floor() as i32;
    let mut best = (i64::MAX, 0.0);
    for k in (e - 1..=e + 1).rev() {
        for m in [5.0, 2.0, 1.0] {
            let step = m * 10f64.powi(k);
            let miss = (count_inside(lo, hi, step) - target as i64).abs();
            // Candidates run from large to small steps, so `<=` settles ties on more ticks.
            if miss <= best.0 {
                best = (miss, step);
            }
        }
    }
    best.1
}

/// About `target` ticks (at least 2 asked for) between `lo` and `hi`, both included when
/// they fall on the step.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Result<Ticks, RenderError> {
    let range = ColorRange::new(lo, hi)?;
    if target < 2 {
        return Err(RenderError::TooFewTicks { min: 2, got: target });
    }
    let step = nice_step(lo, hi, target);
    let top = lo.abs().max(hi.abs()).log10().floor() as i32;
    let exponent = if (-3..5).contains(&top) { 0 } else { top };
    let unit = 10f64.powi(exponent);
    let decimals = (-((step / unit).log10() + 1e-9).floor()).max(0.0) as usize;
    // Integer multiples of the step, so no error accumulates; the slack keeps end points
    // that are multiples of the step despite round-off in lo/step.
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    let ticks = (first..=last)
        .map(|k| {
            let value = k as f64 * step;
            // `+ 0.0` turns −0 into 0 so zero is never labelled "−0".
            let scaled = format!("{:.*}", decimals, value / unit + 0.0);
            let label = if scaled.trim_start_matches('-').trim_matches(['0', '.']).is_empty() {
                "0".to_string()
            } else {
                typographic_minus(scaled)
            };
            Tick { value, frac: range.frac(value).clamp(0.0, 1.0), label }
        })
        .collect();
    Ok(Ticks {
        ticks,
        exponent,
        scale: (exponent != 0).then(|| format!("×10{}", superscript(exponent))),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(t: &Ticks) -> Vec<&str> {
        t.ticks.iter().map(|t| t.label.as_str()).collect()
    }

    /// Expected ticks worked out by hand: counts inside the range of the nice steps around
    /// (high − low)/target, closest to the target wins.
    #[test]
    fn one_two_five_steps() {
        // Step 0.2 gives 7 ticks, 0.5 gives 3: a tie at distance 2, more ticks win.
        let t = nice_ticks(0.0, 1.37, 5).unwrap();
        assert_eq!(labels(&t), ["0", "0.2", "0.4", "0.6", "0.8", "1.0", "1.2"]);
        assert_eq!(t.scale, None);
        assert!((t.ticks[6].frac - 1.2 / 1.37).abs() < 1e-12);
        // Step 1: 7 ticks; step 2: 3.
        let t = nice_ticks(-3.2, 3.2, 6).unwrap();
        assert_eq!(labels(&t), ["−3", "−2", "−1", "0", "1", "2", "3"]);
        assert!((t.ticks[3].frac - 0.5).abs() < 1e-12);
    }

    #[test]
    fn tiny_and_huge_ranges_share_a_power_of_ten() {
        // Step 5e-5: exactly 5 ticks; largest magnitude 2.4e-4 → exponent −4.
        let t = nice_ticks(0.0, 2.4e-4, 5).unwrap();
        assert_eq!(labels(&t), ["0", "0.5", "1.0", "1.5", "2.0"]);
        assert_eq!(t.scale.as_deref(), Some("×10⁻⁴"));
        // Step 2e5: 5 ticks, 5e5: 3; tie, more ticks win; exponent 6.
        let t = nice_ticks(1.5e6, 2.5e6, 4).unwrap();
        assert_eq!(labels(&t), ["1.6", "1.8", "2.0", "2.2", "2.4"]);
        assert_eq!(t.exponent, 6);
    }

    /// [D] Whatever the range: ticks inside it, evenly spaced by a 1-2-5 step, and about as
    /// many as asked (neighbouring nice steps differ by at most 2.5×, so the closest count
    /// is within that factor, plus one for the end points).
    #[test]
    fn general_properties_hold() {
        for &(lo, hi) in &[(0.0, 0.9), (-47.0, 47.0), (3.3, 3.31), (-1e-7, 2e-6), (0.0, 1.0)] {
            for target in [3usize, 5, 8] {
                let t = nice_ticks(lo, hi, target).unwrap();
                let n = t.ticks.len() as f64;
                assert!(
                    n >= target as f64 / 2.5 && n <= target as f64 * 2.5 + 1.0,
                    "{lo}..{hi} target {target}: {n} ticks"
                );
                for w in t.ticks.windows(2) {
                    let step = w[1].value - w[0].value;
                    let m = step / 10f64.powf(step.log10().floor());
                    assert!([1.0, 2.0, 5.0, 10.0].iter().any(|x| (m - x).abs() < 1e-6));
                }
                assert!(t.ticks.iter().all(|k| k.value >= lo - 1e-12 && k.value <= hi + 1e-12));
            }
        }
        assert!(nice_ticks(1.0, 1.0, 5).is_err());
        assert!(nice_ticks(0.0, 1.0, 1).is_err());
    }
}
