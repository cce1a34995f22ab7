//! The perturbed flow f + εg and the brute-force comparator
//! Δσ = σ_FTLE[f + εg] − σ_FTLE[f] (METHODS.md §2), always computable and independent of
//! the linearisation: where ζ says a barrier is sensitive, Δσ should move there too.

use super::rows::SensitivityOptions;
use super::SensitivityError;
use crate::lagrangian::{
    ftle_rows, FtleOptions, GradientRoute, Mat2, Rect, TracerGrid, Vec2, VelocityField,
};

/// f + ε·g: defined where both are; window and time range are the intersections.
#[derive(Debug, Clone, Copy)]
pub struct Perturbed<F, G> {
    pub f: F,
    pub g: G,
    pub eps: f64,
}

fn intersect(a: Option<(f64, f64)>, b: Option<(f64, f64)>) -> Option<(f64, f64)> {
    match (a, b) {
        (Some(a), Some(b)) => Some((a.0.max(b.0), a.1.min(b.1))),
        (a, b) => a.or(b),
    }
}

impl<F: VelocityField, G: VelocityField> VelocityField for Perturbed<F, G> {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        let a = self.f.velocity(p, t)?;
        let b = self.g.velocity(p, t)?;
        Some([a[0] + self.eps * b[0], a[1] + self.eps * b[1]])
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let (a, ga) = self.f.velocity_gradient(p, t)?;
        let (b, gb) = self.g.velocity_gradient(p, t)?;
        let e = self.eps;
        Some((
            [a[0] + e * b[0], a[1] + e * b[1]],
            [
                [ga[0][0] + e * gb[0][0], ga[0][1] + e * gb[0][1]],
                [ga[1][0] + e * gb[1][0], ga[1][1] + e * gb[1][1]],
            ],
        ))
    }
    fn window(&self) -> Option<Rect> {
        let (a, b) = (self.f.window(), self.g.window());
        let x = intersect(a.map(|r| (r.x0, r.x1)), b.map(|r| (r.x0, r.x1)));
        let y = intersect(a.map(|r| (r.y0, r.y1)), b.map(|r| (r.y0, r.y1)));
        x.zip(y).map(|((x0, x1), (y0, y1))| Rect { x0, x1, y0, y1 })
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        intersect(self.f.time_range(), self.g.time_range())
    }
}

/// Δσ = σ_FTLE[f + εg] − σ_FTLE[f] on rows `j0..j1`, both by the variational route with the
/// same integrator and boundary policy; 0 where either has no value (see the FTLE flags of
/// the sensitivity result).
pub fn delta_ftle_rows<F: VelocityField, G: VelocityField>(
    f: &F,
    g: &G,
    eps: f64,
    grid: &TracerGrid,
    o: &SensitivityOptions,
    j0: usize,
    j1: usize,
) -> Result<Vec<f32>, SensitivityError> {
    if !(eps.is_finite() && eps > 0.0) {
        return Err(SensitivityError::BadEpsilon(eps));
    }
    let fo = FtleOptions { advect: o.advect, route: GradientRoute::Variational };
    let base = ftle_rows(f, grid, &fo, j0, j1)?;
    let pert = ftle_rows(&Perturbed { f, g, eps }, grid, &fo, j0, j1)?;
    Ok(base
        .ftle
        .iter()
        .zip(&pert.ftle)
        .zip(base.flag.iter().zip(&pert.flag))
        .map(|((a, b), (fa, fb))| {
            let ok = |f: &crate::lagrangian::FtleFlag| (*f as u8) <= 2;
            if ok(fa) && ok(fb) {
                b - a
            } else {
                0.0
            }
        })
        .collect())
}
