//! The smaller steps of a recipe: reading, cleaning, modes and exports.

use super::Recipe;
use crate::field::{LengthUnit, TimeUnit};
use crate::io::ReadOptions;
use serde::{Deserialize, Serialize};

/// How the files were read (overrides of what they say, in the files' own units: this is
/// the one place where a recipe is not in SI, because it describes the files).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingStep {
    #[serde(default)]
    pub length_unit: Option<LengthUnit>,
    #[serde(default)]
    pub time_unit: Option<TimeUnit>,
    /// Time between snapshots, replacing the files' times.
    #[serde(default)]
    pub dt: Option<f64>,
    /// Time of the first snapshot when times come from `dt`.
    #[serde(default)]
    pub t_start: f64,
}

impl ReadingStep {
    pub(super) fn check(&self) -> Result<(), String> {
        match self.dt {
            Some(dt) if !(dt.is_finite() && dt > 0.0) => {
                Err(format!("reading.dt must be > 0 (got {dt})"))
            }
            _ => Ok(()),
        }
    }

    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            length_unit: self.length_unit,
            time_unit: self.time_unit,
            dt: self.dt,
            t_start: self.t_start,
        }
    }
}

/// The normalized median test and replacement (defaults as `sillage clean`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CleaningStep {
    #[serde(default = "default_threshold")]
    pub threshold: f64,
    /// ε of the test in m/s (default: 1/80 of the 99th-percentile speed).
    #[serde(default)]
    pub epsilon: Option<f64>,
    #[serde(default = "default_passes")]
    pub passes: usize,
}

fn default_threshold() -> f64 {
    2.0
}
fn default_passes() -> usize {
    3
}

impl Default for CleaningStep {
    fn default() -> Self {
        CleaningStep { threshold: default_threshold(), epsilon: None, passes: default_passes() }
    }
}

impl CleaningStep {
    pub(super) fn check(&self) -> Result<(), String> {
        if !(self.threshold.is_finite() && self.threshold > 0.0) {
            return Err(format!("cleaning.threshold must be > 0 (got {})", self.threshold));
        }
        if let Some(e) = self.epsilon {
            if !(e.is_finite() && e >= 0.0) {
                return Err(format!("cleaning.epsilon must be ≥ 0 (got {e})"));
            }
        }
        if self.passes == 0 {
            return Err("cleaning.passes must be at least 1".into());
        }
        Ok(())
    }
}

/// Which decomposition the modes step computes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ModesMethod {
    #[default]
    Pod,
    Dmd,
    Spod,
}

/// A modal decomposition to compute (for display and export; selections compute what they
/// need themselves).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModesStep {
    #[serde(default)]
    pub method: ModesMethod,
    /// Modes to keep (default: as `sillage modes`).
    #[serde(default)]
    pub rank: Option<usize>,
}

/// What an export writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ExportWhat {
    /// The cleaned series (.npz, folder of .npy, .vti or .csv per snapshot).
    Cleaned,
    /// The model flow f as a series.
    Model,
    /// The perturbation g as a series.
    Perturbation,
    /// The modes step's arrays (.npz).
    Modes,
    /// The FTLE maps of the (cleaned) data (.npz or .vti).
    Ftle,
    /// The FTLE ridges of the (cleaned) data (.json or .csv).
    Ridges,
    /// The sensitivity maps (.npz or .vti).
    Sensitivity,
}

/// One file to write, relative to the output folder of `sillage run`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Export {
    pub what: ExportWhat,
    pub file: String,
}

impl Export {
    /// The lowercase extension of the file name.
    pub fn extension(&self) -> String {
        std::path::Path::new(&self.file)
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_lowercase)
            .unwrap_or_default()
    }

    pub(super) fn check(&self, r: &Recipe) -> Result<(), String> {
        let ext = self.extension();
        let file = &self.file;
        if file.is_empty() || file.contains("..") || std::path::Path::new(file).is_absolute() {
            return Err(format!(
                "export file '{file}' must be a relative path inside the output folder"
            ));
        }
        let (ok, allowed): (bool, &str) = match self.what {
            ExportWhat::Cleaned | ExportWhat::Model | ExportWhat::Perturbation => (
                matches!(ext.as_str(), "npz" | "vti" | "csv" | ""),
                ".npz, .vti, .csv or a folder name",
            ),
            ExportWhat::Modes => (ext == "npz", ".npz"),
            ExportWhat::Ftle | ExportWhat::Sensitivity => {
                (matches!(ext.as_str(), "npz" | "vti"), ".npz or .vti")
            }
            ExportWhat::Ridges => (matches!(ext.as_str(), "json" | "csv"), ".json or .csv"),
        };
        if !ok {
            return Err(format!("export '{file}' of {:?} must end in {allowed}", self.what));
        }
        let needs = match self.what {
            ExportWhat::Cleaned if r.cleaning.is_none() => Some("a 'cleaning' step"),
            ExportWhat::Perturbation if r.perturbation.is_none() => Some("a 'perturbation'"),
            ExportWhat::Modes if r.modes.is_none() => Some("a 'modes' step"),
            ExportWhat::Ftle | ExportWhat::Ridges if r.transport.is_none() => {
                Some("'transport' settings")
            }
            ExportWhat::Sensitivity if r.sensitivity.is_none() => Some("a 'sensitivity' step"),
            _ => None,
        };
        match needs {
            Some(n) => Err(format!("export '{file}' needs {n} in the recipe")),
            None => Ok(()),
        }
    }
}
