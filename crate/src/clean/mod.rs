//! Cleaning of measured vector fields: outlier detection by the normalized median test,
//! replacement of outliers and missing vectors from their valid neighbours, and a report of
//! everything that was changed.
//!
//! The cleaned [`Series`] keeps the mask untouched: masked cells (a solid body, outside the
//! light sheet) are never filled, because there is no flow there to reconstruct.

mod fill;
mod median_test;
mod neighbourhood;

pub use fill::fill_from_neighbours;
pub use median_test::{normalized_residuals, MedianTest, SnapshotView};

use crate::field::Series;
use serde::Serialize;

/// Options of [`clean`]. `Default` gives the published defaults.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct CleanOptions {
    /// The normalized median test's parameters.
    pub test: MedianTest,
    /// How many detect → replace passes at most (METHODS.md §4: 2–3). Stops early when a
    /// pass flags nothing new.
    pub passes: usize,
}

impl Default for CleanOptions {
    fn default() -> Self {
        CleanOptions { test: MedianTest::default(), passes: 3 }
    }
}

/// Why a vector was replaced.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Reason {
    /// Flagged by the normalized median test.
    Outlier,
    /// Missing in the source (NaN or flagged invalid by the exporting program).
    Gap,
}

/// One replaced vector.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
pub struct Replaced {
    pub snapshot: usize,
    pub i: usize,
    pub j: usize,
    pub reason: Reason,
    /// Detection pass (1-based) for outliers, 0 for gaps.
    pub pass: usize,
}

/// What [`clean`] changed, for the user and for later steps.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct CleanReport {
    /// The options used, with ε resolved to velocity units.
    pub threshold: f64,
    pub epsilon: f64,
    /// Outliers flagged per snapshot.
    pub outliers_per_snapshot: Vec<usize>,
    /// Gaps filled per snapshot.
    pub gaps_per_snapshot: Vec<usize>,
    /// Vectors that could not be filled (a region with no valid neighbour at all).
    pub unfilled: usize,
    /// Every replaced vector.
    pub replaced: Vec<Replaced>,
    /// Number of unmasked vectors over the series (the denominator of the fractions).
    pub valid_cells: usize,
    /// Replaced vectors (outliers + gaps) as a fraction of the unmasked vectors.
    pub replaced_fraction: f64,
    /// Passes actually run.
    pub passes_run: usize,
}

impl CleanReport {
    pub fn total_outliers(&self) -> usize {
        self.outliers_per_snapshot.iter().sum()
    }
    pub fn total_gaps(&self) -> usize {
        self.gaps_per_snapshot.iter().sum()
    }
    /// Above this fraction of replaced vectors the data are too poor to trust without a
    /// look: good planar PIV has a few percent spurious vectors (common practice,
    /// METHODS.md §4 suggests a warning above 5–10 %).
    pub const WARN_FRACTION: f64 = 0.05;

    /// A plain-language warning when many vectors had to be replaced.
    pub fn warning(&self) -> Option<String> {
        (self.replaced_fraction > Self::WARN_FRACTION).then(|| {
            format!(
                "{:.1} % of the vectors were replaced (outliers and gaps); good planar PIV has a few \
                 percent. Results downstream (modes, FTLE) may reflect the filling, not the flow.",
                100.0 * self.replaced_fraction
            )
        })
    }
}

/// Flags outliers snapshot by snapshot with the normalized median test, replaces them and
/// the source's missing vectors from valid neighbours, and repeats up to `opts.passes`
/// times. Returns the cleaned series (no gaps left unless a whole region had no data) and
/// the report.
pub fn clean(series: &Series, opts: &CleanOptions) -> (Series, CleanReport) {
    let eps = opts.test.resolve_epsilon(series);
    let r = clean_snapshots(series, opts, eps, 0..series.nt());
    let gaps = r.gaps.iter().any(|&g| g).then_some(r.gaps);
    (series.with_velocity(r.u, r.v, gaps), r.report)
}

/// Snapshots `range` of a series cleaned by [`clean`] with ε already resolved (on the
/// whole series: [`MedianTest::resolve_epsilon`]); `gaps` holds the vectors left missing.
#[derive(Debug, Clone, PartialEq)]
pub struct CleanedSnapshots {
    pub u: Vec<f32>,
    pub v: Vec<f32>,
    pub gaps: Vec<bool>,
    /// The report of these snapshots; [`CleanReport::merge`] joins consecutive ranges into
    /// the report of the whole series.
    pub report: CleanReport,
}

/// Cleans snapshots `range` (each snapshot is cleaned on its own, so ranges can go to
/// different workers; with ε resolved on the whole series the results are those of
/// [`clean`], bit for bit).
pub fn clean_snapshots(
    series: &Series,
    opts: &CleanOptions,
    eps: f64,
    range: std::ops::Range<usize>,
) -> CleanedSnapshots {
    let (nx, ny) = (series.nx(), series.ny());
    let plane = nx * ny;
    let (k0, count) = (range.start, range.len());
    let mask = series.mask();
    let mut u = series.u()[k0 * plane..range.end * plane].to_vec();
    let mut v = series.v()[k0 * plane..range.end * plane].to_vec();
    let mut out_gaps = vec![false; count * plane];
    let mut report = CleanReport {
        threshold: opts.test.threshold,
        epsilon: eps,
        outliers_per_snapshot: vec![0; count],
        gaps_per_snapshot: vec![0; count],
        unfilled: 0,
        replaced: Vec::new(),
        valid_cells: count * (plane - series.masked_count()),
        replaced_fraction: 0.0,
        passes_run: 0,
    };
    let mut passes_run = 0;
    for k in range {
        let r = k - k0;
        let cells = r * plane..(r + 1) * plane;
        let (uk, vk) = (&mut u[cells.clone()], &mut v[cells]);
        // Missing = no usable value right now: source gaps first, then flagged outliers.
        let mut missing: Vec<bool> = match series.gaps_at(k) {
            Some(g) => g.to_vec(),
            None => vec![false; plane],
        };
        for (c, &m) in missing.iter().enumerate() {
            if m {
                report.gaps_per_snapshot[r] += 1;
                report.replaced.push(Replaced {
                    snapshot: k,
                    i: c % nx,
                    j: c / nx,
                    reason: Reason::Gap,
                    pass: 0,
                });
            }
        }
        // Replaced vectors serve as neighbours in later passes but are not judged again.
        let mut replaced = missing.clone();
        // Source gaps are filled before detection so that the test sees full neighbourhoods.
        fill_from_neighbours(uk, vk, nx, ny, mask, &mut missing);
        for pass in 1..=opts.passes {
            let mut flagged = opts
                .test
                .detect(&SnapshotView { u: uk, v: vk, nx, ny, mask, missing: &missing }, eps);
            flagged.retain(|&c| !replaced[c]);
            if flagged.is_empty() {
                break;
            }
            passes_run = passes_run.max(pass);
            for &c in &flagged {
                missing[c] = true;
                replaced[c] = true;
                report.outliers_per_snapshot[r] += 1;
                report.replaced.push(Replaced {
                    snapshot: k,
                    i: c % nx,
                    j: c / nx,
                    reason: Reason::Outlier,
                    pass,
                });
            }
            fill_from_neighbours(uk, vk, nx, ny, mask, &mut missing);
        }
        for (c, &m) in missing.iter().enumerate() {
            if m {
                out_gaps[r * plane + c] = true;
                report.unfilled += 1;
            }
        }
    }
    report.passes_run = passes_run;
    report.replaced_fraction = report.replaced.len() as f64 / report.valid_cells.max(1) as f64;
    CleanedSnapshots { u, v, gaps: out_gaps, report }
}

impl CleanReport {
    /// The report of consecutive snapshot ranges, in order, as one: what [`clean`] reports
    /// for the whole series when the parts cover it. `None` for no parts.
    pub fn merge(parts: Vec<CleanReport>) -> Option<CleanReport> {
        let mut it = parts.into_iter();
        let mut all = it.next()?;
        for mut p in it {
            all.outliers_per_snapshot.append(&mut p.outliers_per_snapshot);
            all.gaps_per_snapshot.append(&mut p.gaps_per_snapshot);
            all.unfilled += p.unfilled;
            all.replaced.append(&mut p.replaced);
            all.valid_cells += p.valid_cells;
            all.passes_run = all.passes_run.max(p.passes_run);
        }
        all.replaced_fraction = all.replaced.len() as f64 / all.valid_cells.max(1) as f64;
        Some(all)
    }
}

/// Outliers per snapshot found by one pass of the test on the data as they are (gaps are
/// not filled first and do not count as neighbours). For summaries: nothing is changed.
pub fn count_outliers(series: &Series, test: &MedianTest) -> Vec<usize> {
    (0..series.nt())
        .map(|k| {
            normalized_residuals(series, k, test).iter().filter(|&&r| r > test.threshold).count()
        })
        .collect()
}
