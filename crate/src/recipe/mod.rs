//! The analysis recipe: one JSON document that says how a dataset was read, cleaned,
//! decomposed, which parts form the model flow f and the perturbation g, how FTLE and
//! sensitivity were computed and what was exported. The page saves it (and carries it in
//! share links); `sillage run RECIPE.json DATA` replays it on a workstation.
//!
//! Our own format (`"format": "sillage-recipe"`, [`VERSION`]). Every time, length and speed
//! in it is in SI units (s, m, m/s), or the data's own units for unitless data — the units
//! the core computes in — so a recipe means the same thing whatever the files used. Missing
//! optional fields take the same defaults as the command-line tool. Unknown fields are
//! refused, so a typo never silently falls back to a default.
//!
//! The steps resolve to core options here ([`Recipe::clean_options`],
//! [`Recipe::sensitivity_spec`], …) so both drivers compute with identical settings.

mod steps;

pub use steps::{CleaningStep, Export, ExportWhat, ModesMethod, ModesStep, ReadingStep};

use crate::advice::{IntegratorChoice, TransportSettings};
use crate::clean::{CleanOptions, MedianTest};
use crate::field::Series;
use crate::io::ReadOptions;
use crate::modes::{SelectOptions, Selection};
use crate::sensitivity::SensitivitySpec;
use serde::{Deserialize, Serialize};
use thiserror::Error;

/// The value of the `format` field.
pub const FORMAT: &str = "sillage-recipe";
/// The recipe version this core writes and reads.
pub const VERSION: u32 = 1;

/// Why a recipe cannot be used; the message names the field.
#[derive(Debug, Error, Clone, PartialEq)]
#[error("recipe: {0}")]
pub struct RecipeError(pub String);

/// Settings of the sensitivity step.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SensitivityStep {
    /// When given, also compute Δσ = FTLE[f + εg] − FTLE[f] for this ε.
    #[serde(default)]
    pub epsilon: Option<f64>,
    /// Reference speed g_ref (m/s); default the RMS of |g| over the window.
    #[serde(default)]
    pub g_ref: Option<f64>,
}

/// A whole analysis. See the module documentation for units and defaults.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Recipe {
    /// Always [`FORMAT`].
    pub format: String,
    /// [`VERSION`].
    pub version: u32,
    #[serde(default)]
    pub reading: ReadingStep,
    #[serde(default)]
    pub cleaning: Option<CleaningStep>,
    #[serde(default)]
    pub modes: Option<ModesStep>,
    /// The model flow f as a selection ("mean + pod(1-2)"); absent: the (cleaned) data.
    #[serde(default)]
    pub model: Option<String>,
    /// The perturbation g as a selection; needed by the sensitivity step.
    #[serde(default)]
    pub perturbation: Option<String>,
    /// FTLE of the (cleaned) data, and the trajectory settings of the sensitivity step
    /// (whose result holds the FTLE of the model flow f).
    #[serde(default)]
    pub transport: Option<TransportSettings>,
    #[serde(default)]
    pub sensitivity: Option<SensitivityStep>,
    #[serde(default)]
    pub exports: Vec<Export>,
    /// Page-only display settings (field shown, colour range, …); kept, never interpreted
    /// by the core.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub view: Option<serde_json::Value>,
}

impl Default for Recipe {
    fn default() -> Self {
        Recipe {
            format: FORMAT.into(),
            version: VERSION,
            reading: ReadingStep::default(),
            cleaning: None,
            modes: None,
            model: None,
            perturbation: None,
            transport: None,
            sensitivity: None,
            exports: Vec::new(),
            view: None,
        }
    }
}

fn bad(msg: impl Into<String>) -> RecipeError {
    RecipeError(msg.into())
}

impl Recipe {
    /// Parses and checks a recipe.
    pub fn from_json(text: &str) -> Result<Recipe, RecipeError> {
        let r: Recipe =
            serde_json::from_str(text).map_err(|e| bad(format!("not a valid recipe: {e}")))?;
        r.check()?;
        Ok(r)
    }

    /// The recipe as pretty JSON (what the page offers for download).
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("plain values serialise");
        s.push('\n');
        s
    }

    /// Checks what can be checked without data: format, version, selections' syntax,
    /// step dependencies, positive numbers.
    pub fn check(&self) -> Result<(), RecipeError> {
        if self.format != FORMAT {
            return Err(bad(format!("'format' must be \"{FORMAT}\" (got \"{}\")", self.format)));
        }
        if self.version != VERSION {
            return Err(bad(format!(
                "version {} is not supported; this build reads version {VERSION}",
                self.version
            )));
        }
        if let Some(c) = &self.cleaning {
            c.check().map_err(bad)?;
        }
        self.reading.check().map_err(bad)?;
        for (name, sel) in [("model", &self.model), ("perturbation", &self.perturbation)] {
            if let Some(text) = sel {
                Selection::parse(text).map_err(|e| bad(format!("'{name}': {e}")))?;
            }
        }
        if let Some(s) = &self.sensitivity {
            if self.transport.is_none() {
                return Err(bad("the sensitivity step needs the 'transport' settings"));
            }
            if self.perturbation.is_none() {
                return Err(bad("the sensitivity step needs a 'perturbation' selection"));
            }
            if let Some(e) = s.epsilon {
                if !(e.is_finite() && e > 0.0) {
                    return Err(bad(format!("sensitivity.epsilon must be > 0 (got {e})")));
                }
            }
            if let Some(g) = s.g_ref {
                if !(g.is_finite() && g > 0.0) {
                    return Err(bad(format!("sensitivity.g_ref must be > 0 (got {g})")));
                }
            }
            if self.transport.as_ref().map(|t| t.integrator)
                == Some(IntegratorChoice::DormandPrince)
            {
                return Err(bad(
                    "the sensitivity step integrates with fixed-step RK4; set transport.integrator \
                     to \"rk4\"",
                ));
            }
        }
        for e in &self.exports {
            e.check(self).map_err(bad)?;
        }
        Ok(())
    }

    /// How to read the data files.
    pub fn read_options(&self) -> ReadOptions {
        self.reading.read_options()
    }

    /// Cleaning options in SI, if the recipe cleans.
    pub fn clean_options(&self) -> Option<CleanOptions> {
        self.cleaning.map(|c| CleanOptions {
            test: MedianTest { threshold: c.threshold, epsilon: c.epsilon },
            passes: c.passes,
        })
    }

    /// The model flow f of `data` (the data itself without a `model` selection).
    pub fn model_field(&self, data: &Series) -> Result<Series, RecipeError> {
        match &self.model {
            None => Ok(data.clone()),
            Some(text) => materialize(text, data, "model"),
        }
    }

    /// The perturbation g of `data`, if the recipe names one.
    pub fn perturbation_field(&self, data: &Series) -> Result<Option<Series>, RecipeError> {
        self.perturbation.as_deref().map(|t| materialize(t, data, "perturbation")).transpose()
    }

    /// Sensitivity settings for the model flow `f`.
    pub fn sensitivity_spec(&self, f: &Series) -> Result<Option<SensitivitySpec>, RecipeError> {
        let (Some(s), Some(t)) = (&self.sensitivity, &self.transport) else {
            return Ok(None);
        };
        let run = t.resolve(f).map_err(|e| bad(format!("transport: {e}")))?;
        Ok(Some(SensitivitySpec {
            advect: run.options.advect,
            grid: run.grid,
            space: run.space,
            time: run.time,
            g_ref: s.g_ref,
            epsilon: s.epsilon,
        }))
    }
}

fn materialize(text: &str, data: &Series, name: &str) -> Result<Series, RecipeError> {
    let sel = Selection::parse(text).map_err(|e| bad(format!("'{name}': {e}")))?;
    sel.materialize(data, &SelectOptions::default()).map_err(|e| bad(format!("'{name}': {e}")))
}

#[cfg(test)]
mod tests;
