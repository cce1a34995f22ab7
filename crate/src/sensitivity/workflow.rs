//! The mode-sensitivity workflow on data: the model flow f and the perturbation g as
//! series (a selection of modes, the residual, a noise model, or any velocity file), one
//! plan that every driver runs on its own row ranges, and the assembled result with the
//! FTLE ridges of f for overlay on ζ.

use super::agreement::{zeta_agreement, ZetaAgreement};
use super::perturbed::delta_ftle_rows;
use super::reference::rms_speed;
use super::rows::{sensitivity_rows, SensitivityOptions, SensitivityRows};
use super::SensitivityError;
use crate::field::Series;
use crate::lagrangian::{
    extract_ridges, AdvectOptions, GriddedField, Ridge, RidgeOptions, SpaceInterp, TimeInterp,
    TracerGrid,
};

/// What to compute, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SensitivitySpec {
    pub advect: AdvectOptions,
    pub grid: TracerGrid,
    pub space: SpaceInterp,
    pub time: TimeInterp,
    /// Reference speed of g; `None`: the RMS of |g| over the window ([`rms_speed`]).
    pub g_ref: Option<f64>,
    /// When given, also compute Δσ = σ_FTLE[f + εg] − σ_FTLE[f] for this ε.
    pub epsilon: Option<f64>,
}

/// f and g ready to integrate, with the resolved options.
pub struct SensitivityPlan<'a> {
    pub f: GriddedField<'a>,
    pub g: GriddedField<'a>,
    pub grid: TracerGrid,
    pub options: SensitivityOptions,
    pub epsilon: Option<f64>,
}

/// Checks the spec against both series and resolves g_ref.
pub fn prepare<'a>(
    f: &'a Series,
    g: &'a Series,
    spec: &SensitivitySpec,
) -> Result<SensitivityPlan<'a>, SensitivityError> {
    let ff = GriddedField::new(f, spec.space, spec.time);
    let gf = GriddedField::new(g, spec.space, spec.time);
    spec.advect.validate(&gf)?;
    let g_ref = spec.g_ref.unwrap_or_else(|| rms_speed(g, spec.advect.t0, spec.advect.horizon));
    if let Some(eps) = spec.epsilon {
        if !(eps.is_finite() && eps > 0.0) {
            return Err(SensitivityError::BadEpsilon(eps));
        }
    }
    let options = SensitivityOptions { advect: spec.advect, g_ref };
    options.steps(&ff)?;
    Ok(SensitivityPlan { f: ff, g: gf, grid: spec.grid, options, epsilon: spec.epsilon })
}

impl SensitivityPlan<'_> {
    /// Sensitivity maps of rows `j0..j1`.
    pub fn rows(&self, j0: usize, j1: usize) -> Result<SensitivityRows, SensitivityError> {
        sensitivity_rows(&self.f, &self.g, &self.grid, &self.options, j0, j1)
    }

    /// Δσ of rows `j0..j1`, when ε was given.
    pub fn delta_rows(&self, j0: usize, j1: usize) -> Result<Option<Vec<f32>>, SensitivityError> {
        self.epsilon
            .map(|eps| delta_ftle_rows(&self.f, &self.g, eps, &self.grid, &self.options, j0, j1))
            .transpose()
    }

    /// Everything on the calling thread (tests, small grids; the drivers split rows).
    pub fn run(&self) -> Result<SensitivityResult, SensitivityError> {
        let ny = self.grid.ny();
        let rows = self.rows(0, ny)?;
        let delta = self.delta_rows(0, ny)?;
        Ok(SensitivityResult::assemble(rows, delta, self.epsilon))
    }
}

/// The whole grid's result.
#[derive(Debug, Clone, PartialEq)]
pub struct SensitivityResult {
    pub maps: SensitivityRows,
    /// Δσ for `epsilon`, when asked for.
    pub delta_ftle: Option<Vec<f32>>,
    pub epsilon: Option<f64>,
    /// FTLE ridges of f (default thresholds), longest first.
    pub ridges: Vec<Ridge>,
}

impl SensitivityResult {
    /// Joins the maps of the whole grid with Δσ and extracts the ridges of f.
    pub fn assemble(
        maps: SensitivityRows,
        delta_ftle: Option<Vec<f32>>,
        epsilon: Option<f64>,
    ) -> SensitivityResult {
        let mut ridges = extract_ridges(&maps.to_ftle_rows(), &RidgeOptions::default());
        ridges.sort_by(|a, b| b.length().total_cmp(&a.length()));
        SensitivityResult { maps, delta_ftle, epsilon, ridges }
    }

    /// How well ζ predicts Δσ (see [`ZetaAgreement`]), when Δσ was computed.
    pub fn zeta_agreement(&self) -> Option<ZetaAgreement> {
        let flags: Vec<u8> = self.maps.flag.iter().map(|&f| f as u8).collect();
        zeta_agreement(&self.maps.zeta, self.delta_ftle.as_ref()?, &flags)
    }
}
