//! Snapshot time labels: one number format per series, with just enough decimals that every
//! snapshot time reads back correctly, so labels do not jitter in length while playing.

use super::format::{format_count, format_sig, typographic_minus, with_unit};
use crate::field::Series;

/// Most decimals a time label may use before falling back to significant digits.
const MAX_DECIMALS: usize = 9;

/// How the times of one series are written.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeFormat {
    /// `None`: times too irregular or too small for fixed decimals; significant digits.
    decimals: Option<usize>,
    unit: String,
}

impl TimeFormat {
    /// The fewest decimals (up to 9) with which every time of `s` is written to within a
    /// thousandth of the smallest snapshot interval.
    pub fn for_series(s: &Series) -> TimeFormat {
        let unit = s.units().time.symbol().to_string();
        TimeFormat { decimals: fitting_decimals(s.times()), unit }
    }

    /// The time `t` as a label with its unit, e.g. `0.25 s`.
    pub fn format(&self, t: f64) -> String {
        let text = match self.decimals {
            Some(d) => typographic_minus(format!("{:.*}", d, t + 0.0)),
            None => format_sig(t, 6),
        };
        with_unit(text, &self.unit)
    }
}

/// Position of snapshot `k` (0-based) in a series of `nt`, as people count: `3 of 40`.
pub fn snapshot_label(k: usize, nt: usize) -> String {
    format!("{} of {}", format_count(k + 1), format_count(nt))
}

fn fitting_decimals(times: &[f64]) -> Option<usize> {
    let gap = times.windows(2).map(|w| w[1] - w[0]).fold(f64::INFINITY, f64::min);
    let tol = if gap.is_finite() {
        1e-3 * gap
    } else {
        // One snapshot: keep six significant digits of it.
        1e-6 * times.first().map_or(1.0, |t| t.abs()).max(f64::MIN_POSITIVE)
    };
    (0..=MAX_DECIMALS).find(|&d| {
        times.iter().all(|&t| {
            let shown: f64 = format!("{t:.d$}").parse().unwrap_or(f64::NAN);
            (shown - t).abs() <= tol
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimals_fit_the_sampling() {
        assert_eq!(fitting_decimals(&[0.0, 0.025, 0.05, 0.075]), Some(3));
        // 0.1·k in binary floating point (0.30000000000000004 …) still needs one decimal.
        let t: Vec<f64> = (0..40).map(|k| 0.1 * k as f64).collect();
        assert_eq!(fitting_decimals(&t), Some(1));
        assert_eq!(fitting_decimals(&[0.0, 1.0, 2.0]), Some(0));
        // k/3: four decimals put every label within a thousandth of 1/3.
        assert_eq!(fitting_decimals(&[0.0, 1.0 / 3.0, 2.0 / 3.0]), Some(4));
        // 0.1 ns sampling needs more than nine decimals: significant digits instead.
        assert_eq!(fitting_decimals(&[0.0, 1e-10, 2e-10]), None);
    }

    #[test]
    fn snapshot_positions_count_from_one() {
        assert_eq!(snapshot_label(0, 40), "1 of 40");
        assert_eq!(snapshot_label(1233, 5000), "1,234 of 5,000");
    }

    #[test]
    fn labels_carry_the_unit() {
        let f = TimeFormat { decimals: Some(3), unit: "s".into() };
        assert_eq!(f.format(0.05), "0.050 s");
        assert_eq!(f.format(-0.0), "0.000 s");
        let g = TimeFormat { decimals: None, unit: "1".into() };
        assert_eq!(g.format(2.5e-10), "2.5 × 10⁻¹⁰");
    }
}
