//! Cleaning bindings: the normalized median test and gap filling of [`crate::clean`] on the
//! loaded series, giving a new `Dataset` (the page keeps the raw one to undo) and a short
//! report.

use super::js_error;
use super::Dataset;
use crate::clean::{clean, CleanOptions, CleanReport, MedianTest};
use crate::render::format::{format_count, format_sig};
use js_sys::{Float32Array, Object, Reflect, Uint8Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;

fn set(obj: &Object, key: &str, value: &JsValue) -> Result<(), JsError> {
    Reflect::set(obj, &JsValue::from_str(key), value)
        .map(|_| ())
        .map_err(|_| JsError::new(&format!("cannot set '{key}' on the result object")))
}

/// The outcome of a cleaning: the cleaned dataset (taken once) and the report.
#[wasm_bindgen]
pub struct Cleaning {
    dataset: Option<Dataset>,
    report: String,
}

#[wasm_bindgen]
impl Cleaning {
    /// The cleaned dataset; a second call fails.
    #[wasm_bindgen(js_name = takeDataset)]
    pub fn take_dataset(&mut self) -> Result<Dataset, JsError> {
        self.dataset.take().ok_or_else(|| JsError::new("the cleaned dataset was already taken"))
    }

    /// The report as JSON `{outliers, gaps, unfilled, replaced, valid_vectors,
    /// replaced_percent, passes_run, threshold, epsilon, text, warning}`.
    pub fn report(&self) -> String {
        self.report.clone()
    }
}

#[derive(Serialize)]
struct Summary {
    outliers: usize,
    gaps: usize,
    unfilled: usize,
    replaced: usize,
    valid_vectors: usize,
    replaced_percent: f64,
    passes_run: usize,
    threshold: f64,
    epsilon: f64,
    /// One sentence with every figure and its unit.
    text: String,
    /// The core's warning when many vectors were replaced.
    warning: Option<String>,
}

fn summary(r: &CleanReport, velocity_unit: &str) -> Summary {
    let pct = 100.0 * r.replaced_fraction;
    let mut text = format!(
        "{} outliers and {} missing vectors replaced: {} % of {} valid vectors, in {} pass{}; \
         threshold {}, ε = {} {velocity_unit}.",
        format_count(r.total_outliers()),
        format_count(r.total_gaps()),
        format_sig(pct, 3),
        format_count(r.valid_cells),
        r.passes_run,
        if r.passes_run == 1 { "" } else { "es" },
        format_sig(r.threshold, 3),
        format_sig(r.epsilon, 3),
    );
    if r.unfilled > 0 {
        text.push_str(&format!(
            " {} vectors could not be filled (no valid vector near them) and stay missing.",
            format_count(r.unfilled)
        ));
    }
    Summary {
        outliers: r.total_outliers(),
        gaps: r.total_gaps(),
        unfilled: r.unfilled,
        replaced: r.replaced.len(),
        valid_vectors: r.valid_cells,
        replaced_percent: pct,
        passes_run: r.passes_run,
        threshold: r.threshold,
        epsilon: r.epsilon,
        text,
        warning: r.warning(),
    }
}

/// The cleaning options after the checks the page's inputs need.
fn clean_options(
    threshold: f64,
    epsilon: Option<f64>,
    passes: usize,
) -> Result<CleanOptions, JsError> {
    if !(threshold.is_finite() && threshold > 0.0) {
        return Err(JsError::new(&format!(
            "the threshold must be a positive number, not {threshold}"
        )));
    }
    if let Some(e) = epsilon {
        if !(e.is_finite() && e >= 0.0) {
            return Err(JsError::new(&format!("ε must be zero or positive, not {e}")));
        }
    }
    if passes == 0 {
        return Err(JsError::new("at least one pass is needed"));
    }
    Ok(CleanOptions { test: MedianTest { threshold, epsilon }, passes })
}

#[wasm_bindgen]
impl Dataset {
    /// Cleans the series as `sillage clean` does: outliers by the normalized median test
    /// (`threshold`, `epsilon` in the series' velocity unit or absent for the automatic
    /// value), at most `passes` detect-and-replace passes, gaps filled. This dataset is
    /// unchanged.
    pub fn clean(
        &self,
        threshold: f64,
        epsilon: Option<f64>,
        passes: usize,
    ) -> Result<Cleaning, JsError> {
        let opts = clean_options(threshold, epsilon, passes)?;
        let (cleaned, report) = clean(self.series(), &opts);
        let unit = self.series().units().velocity_label();
        let json = serde_json::to_string(&summary(&report, &unit)).map_err(js_error)?;
        Ok(Cleaning { dataset: Some(self.derived(cleaned)), report: json })
    }

    /// ε of a cleaning of this series with these options, in its velocity unit: `epsilon`
    /// itself, or the automatic value from the whole series. The page resolves it once and
    /// gives it to every worker cleaning a range of snapshots ([`Dataset::clean_snapshots`]),
    /// so that the ranges join into [`Dataset::clean`]'s result. Checks the options.
    #[wasm_bindgen(js_name = cleanEpsilon)]
    pub fn clean_epsilon(
        &self,
        threshold: f64,
        epsilon: Option<f64>,
        passes: usize,
    ) -> Result<f64, JsError> {
        Ok(clean_options(threshold, epsilon, passes)?.test.resolve_epsilon(self.series()))
    }

    /// Snapshots `k0..k1` cleaned with a resolved `epsilon` ([`Dataset::clean_epsilon`]), for
    /// a compute worker to send to the page: `{u, v: Float32Array, gaps: Uint8Array (all
    /// (k1 − k0, ny, nx)), report: the range's report as JSON}`; the page joins the ranges
    /// ([`Dataset::with_velocity`], [`Dataset::clean_summary`]).
    #[wasm_bindgen(js_name = cleanSnapshots)]
    pub fn clean_snapshots(
        &self,
        threshold: f64,
        epsilon: f64,
        passes: usize,
        k0: usize,
        k1: usize,
    ) -> Result<Object, JsError> {
        let opts = clean_options(threshold, Some(epsilon), passes)?;
        let nt = self.series().nt();
        if !(k0 < k1 && k1 <= nt) {
            return Err(JsError::new(&format!("snapshots {k0}..{k1} are not within 0..{nt}")));
        }
        let r = crate::clean::clean_snapshots(self.series(), &opts, epsilon, k0..k1);
        let gaps: Vec<u8> = r.gaps.iter().map(|&b| b as u8).collect();
        let out = Object::new();
        set(&out, "u", &Float32Array::from(r.u.as_slice()).into())?;
        set(&out, "v", &Float32Array::from(r.v.as_slice()).into())?;
        set(&out, "gaps", &Uint8Array::from(gaps.as_slice()).into())?;
        let report = serde_json::to_string(&r.report).map_err(js_error)?;
        set(&out, "report", &JsValue::from_str(&report))?;
        Ok(out)
    }

    /// The report of a cleaning done in snapshot ranges: `reports` is the JSON array of the
    /// ranges' reports in order; the result is the summary [`Cleaning::report`] gives.
    #[wasm_bindgen(js_name = cleanSummary)]
    pub fn clean_summary(&self, reports: &str) -> Result<String, JsError> {
        let parts: Vec<CleanReport> = serde_json::from_str(reports)
            .map_err(|e| JsError::new(&format!("the cleaning reports cannot be read: {e}")))?;
        let all =
            CleanReport::merge(parts).ok_or_else(|| JsError::new("no cleaning report to join"))?;
        let unit = self.series().units().velocity_label();
        serde_json::to_string(&summary(&all, &unit)).map_err(js_error)
    }

    /// This series with the velocities and gaps of a cleaning done by workers
    /// ([`Dataset::clean_snapshots`] on their copies of this series, joined): the same
    /// series as [`Dataset::clean`] gives here. `gaps` empty or all zero means none.
    #[wasm_bindgen(js_name = withVelocity)]
    pub fn with_velocity(
        &self,
        u: Vec<f32>,
        v: Vec<f32>,
        gaps: Vec<u8>,
    ) -> Result<Dataset, JsError> {
        let n = self.series().u().len();
        if u.len() != n || v.len() != n || !(gaps.is_empty() || gaps.len() == n) {
            return Err(JsError::new(&format!(
                "the cleaned series does not fit this one: {} values of u, {} of v and {} gap \
                 flags for {n} vectors",
                u.len(),
                v.len(),
                gaps.len()
            )));
        }
        // No flag set means no gaps, as a cleaning of the whole series reports it.
        let gaps = gaps.iter().any(|&g| g != 0).then(|| gaps.iter().map(|&g| g != 0).collect());
        Ok(self.derived(self.series().with_velocity(u, v, gaps)))
    }

    /// Missing vectors over all snapshots (modes need 0: clean first).
    #[wasm_bindgen(getter, js_name = gapCount)]
    pub fn gap_count(&self) -> usize {
        self.series().gap_count()
    }
}

/// Defaults of the recipe's cleaning step as JSON `{threshold, passes}` (ε automatic).
#[wasm_bindgen(js_name = cleanDefaults)]
pub fn clean_defaults() -> String {
    let d = crate::recipe::CleaningStep::default();
    serde_json::json!({ "threshold": d.threshold, "passes": d.passes }).to_string()
}
