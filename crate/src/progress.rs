//! Progress of one long core call, reported as the fraction of its estimated work done, so
//! that a driver can show a bar and a time-left estimate (elapsed · (1 − f)/f).
//!
//! Why estimated work and not a count of steps: the parts of one computation differ in
//! cost by orders of magnitude (in a decomposition: an O(n m²) Gram product, an O(m³)
//! eigensolver, an O(n m r) mode product), so a computation plans its parts in
//! multiply–add units before it starts and advances by each part's units as it ends. The
//! time-left estimate is then as good as the assumption that the machine runs the parts at
//! similar rates (BENCHMARKS.md, "Modes", gives the measured split).
//!
//! The observer is called at most about [`REPORTS`] times per computation (reports closer
//! than 1/REPORTS apart are merged), with fractions that never decrease, and once with 1
//! at the end. Without an observer every call is a few additions.

/// Most reports a computation sends (besides the final one).
pub const REPORTS: f64 = 200.0;

/// The progress of one computation; see the module doc.
pub struct Progress<'a> {
    observer: Option<&'a mut dyn FnMut(f64)>,
    total: f64,
    done: f64,
    reported: f64,
}

impl Progress<'static> {
    /// Progress that nobody watches.
    pub fn silent() -> Progress<'static> {
        Progress { observer: None, total: 0.0, done: 0.0, reported: 0.0 }
    }
}

impl<'a> Progress<'a> {
    /// Progress reported to `observer` as fractions in [0, 1].
    pub fn to(observer: &'a mut dyn FnMut(f64)) -> Progress<'a> {
        Progress { observer: Some(observer), total: 0.0, done: 0.0, reported: 0.0 }
    }

    /// Adds `units` of work to the plan (before the work starts: the fraction is done/plan).
    pub fn plan(&mut self, units: f64) {
        self.total += units.max(0.0);
    }

    /// Replaces `planned` units of the plan by `actual` ones, once a computation knows its
    /// size better (e.g. the rank it keeps). The reported fraction still never decreases.
    pub fn revise(&mut self, planned: f64, actual: f64) {
        self.total = (self.total - planned.max(0.0) + actual.max(0.0)).max(self.done);
    }

    /// Records `units` of planned work as done and reports the new fraction when it moved
    /// by at least 1/[`REPORTS`] since the last report.
    pub fn advance(&mut self, units: f64) {
        self.done += units.max(0.0);
        let Some(observer) = self.observer.as_mut() else { return };
        if self.total <= 0.0 {
            return;
        }
        let f = (self.done / self.total).min(1.0);
        if f - self.reported >= 1.0 / REPORTS {
            self.reported = f;
            observer(f);
        }
    }

    /// Reports completion (1), whatever the plan said.
    pub fn finish(&mut self) {
        if let Some(observer) = self.observer.as_mut() {
            self.reported = 1.0;
            observer(1.0);
        }
    }
}

impl Progress<'_> {
    /// The work advanced as a share of the plan (1 when the plan was exact): how far off a
    /// time-left estimate based on it can be, for tests of a computation's plan.
    pub fn accounted(&self) -> f64 {
        if self.total > 0.0 {
            self.done / self.total
        } else {
            f64::NAN
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Fractions follow the plan, never decrease, are merged when close, and end at 1.
    #[test]
    fn fractions_follow_the_plan() {
        let mut seen = Vec::new();
        let mut record = |f: f64| seen.push(f);
        let mut p = Progress::to(&mut record);
        p.plan(1000.0);
        p.advance(250.0);
        p.advance(0.1); // too small a move to report
        p.advance(249.9);
        p.advance(600.0); // more than planned: capped at 1
        p.finish();
        assert_eq!(seen, vec![0.25, 0.5, 1.0, 1.0]);
    }

    /// Nothing to report without a plan or without an observer.
    #[test]
    fn silent_and_unplanned_progress_report_nothing() {
        let mut p = Progress::silent();
        p.plan(10.0);
        p.advance(5.0);
        p.finish();
        let mut calls = 0;
        let mut count = |_: f64| calls += 1;
        Progress::to(&mut count).advance(3.0);
        assert_eq!(calls, 0);
    }
}
