//! Watching the wake for periodic shedding: upward zero crossings of the transverse
//! velocity at a probe on the wake centre line give one period per cycle and the swing
//! between them gives the amplitude. Recording starts only once the last cycles agree.

/// One complete cycle between two upward zero crossings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cycle {
    /// Time of the upward crossing that ends the cycle (steps, interpolated).
    pub end: f64,
    /// Duration (steps).
    pub period: f64,
    /// max − min of the signal over the cycle.
    pub swing: f64,
}

/// Summary of a run of consecutive cycles.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CycleStats {
    pub count: usize,
    pub mean_period: f64,
    /// (max − min) / mean of the periods.
    pub period_spread: f64,
    pub mean_swing: f64,
    /// (max − min) / mean of the swings.
    pub swing_spread: f64,
}

/// Incremental zero-crossing tracker for a signal sampled once per step.
#[derive(Debug, Default)]
pub struct CrossingTracker {
    last: Option<(f64, f64)>,
    last_crossing: Option<f64>,
    lo: f64,
    hi: f64,
    cycles: Vec<Cycle>,
}

impl CrossingTracker {
    pub fn new() -> CrossingTracker {
        CrossingTracker::default()
    }

    /// Adds the sample `value` taken at time `t` (strictly increasing).
    pub fn push(&mut self, t: f64, value: f64) {
        if let Some((t0, v0)) = self.last {
            if v0 < 0.0 && value >= 0.0 {
                // Linear interpolation of the crossing between the two samples.
                let tc = t0 + (t - t0) * (-v0) / (value - v0);
                if let Some(prev) = self.last_crossing {
                    self.cycles.push(Cycle {
                        end: tc,
                        period: tc - prev,
                        swing: self.hi - self.lo,
                    });
                }
                self.last_crossing = Some(tc);
                self.lo = value;
                self.hi = value;
            }
        }
        self.lo = self.lo.min(value);
        self.hi = self.hi.max(value);
        self.last = Some((t, value));
    }

    /// Completed cycles, oldest first.
    pub fn cycles(&self) -> &[Cycle] {
        &self.cycles
    }

    /// Statistics of the last `n` cycles, if there are that many.
    pub fn last_stats(&self, n: usize) -> Option<CycleStats> {
        if n == 0 || self.cycles.len() < n {
            return None;
        }
        Some(stats(&self.cycles[self.cycles.len() - n..]))
    }

    /// Statistics of the cycles that ended after time `t`.
    pub fn stats_after(&self, t: f64) -> Option<CycleStats> {
        let first = self.cycles.iter().position(|c| c.end - c.period >= t)?;
        Some(stats(&self.cycles[first..]))
    }
}

fn stats(c: &[Cycle]) -> CycleStats {
    let n = c.len() as f64;
    let spread = |f: fn(&Cycle) -> f64| {
        let mean = c.iter().map(f).sum::<f64>() / n;
        let lo = c.iter().map(f).fold(f64::INFINITY, f64::min);
        let hi = c.iter().map(f).fold(f64::NEG_INFINITY, f64::max);
        (mean, (hi - lo) / mean)
    };
    let (mean_period, period_spread) = spread(|c| c.period);
    let (mean_swing, swing_spread) = spread(|c| c.swing);
    CycleStats { count: c.len(), mean_period, period_spread, mean_swing, swing_spread }
}

/// Rule for "the shedding is periodic": the last `cycles` cycles have periods within
/// `period_tolerance` and swings within `swing_tolerance` of each other (relative spread),
/// and the swing exceeds `min_swing` (so start-up pressure waves do not count).
#[derive(Debug, Clone, Copy)]
pub struct PeriodicityRule {
    pub cycles: usize,
    pub period_tolerance: f64,
    pub swing_tolerance: f64,
    pub min_swing: f64,
}

impl PeriodicityRule {
    pub fn is_met(&self, tracker: &CrossingTracker) -> Option<CycleStats> {
        let s = tracker.last_stats(self.cycles)?;
        (s.period_spread <= self.period_tolerance
            && s.swing_spread <= self.swing_tolerance
            && s.mean_swing >= self.min_swing)
            .then_some(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A sampled sine of known period: the interpolated crossings recover the period
    /// (error of linear interpolation at 200 samples per cycle is far below 1e-3 steps) and
    /// the swing is 2 × amplitude to within the sampling [D].
    #[test]
    fn sine_period_and_swing() {
        let period = 201.37;
        let mut tr = CrossingTracker::new();
        for k in 0..3000 {
            let t = k as f64;
            tr.push(t, 0.3 * (2.0 * std::f64::consts::PI * (t + 17.0) / period).sin());
        }
        let s = tr.last_stats(10).unwrap();
        assert!((s.mean_period - period).abs() < 1e-3, "{}", s.mean_period);
        assert!(s.period_spread < 1e-4);
        assert!((s.mean_swing - 0.6).abs() < 1e-3);
        let rule = PeriodicityRule {
            cycles: 5,
            period_tolerance: 1e-3,
            swing_tolerance: 1e-3,
            min_swing: 0.1,
        };
        assert!(rule.is_met(&tr).is_some());
    }

    /// A growing oscillation is not periodic yet.
    #[test]
    fn growing_oscillation_fails_the_rule() {
        let mut tr = CrossingTracker::new();
        for k in 0..5000 {
            let t = k as f64;
            let a = 0.01 * (t / 1500.0).exp();
            tr.push(t, a * (2.0 * std::f64::consts::PI * t / 150.0).sin());
        }
        let rule = PeriodicityRule {
            cycles: 5,
            period_tolerance: 1e-2,
            swing_tolerance: 1e-2,
            min_swing: 0.0,
        };
        assert!(rule.is_met(&tr).is_none());
    }
}
