//! Analytic perturbations g for the checks of METHODS.md §2: they drive the same code as
//! gridded data, so the closed forms and the independent scipy reference test the real path.

use crate::lagrangian::{Mat2, Rect, Vec2, VelocityField};
use std::f64::consts::PI;

/// A constant perturbation g(x, t) = c (the linear-saddle check has closed forms for it).
#[derive(Debug, Clone, Copy)]
pub struct Uniform(pub Vec2);

impl VelocityField for Uniform {
    fn velocity(&self, _p: Vec2, _t: f64) -> Option<Vec2> {
        Some(self.0)
    }
    fn velocity_gradient(&self, _p: Vec2, _t: f64) -> Option<(Vec2, Mat2)> {
        Some((self.0, [[0.0; 2]; 2]))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}

/// A smooth perturbation with the period of the forced double gyre (ω = 2π/10):
/// g = a·(sin(πy) cos(ωt + x), ½ cos(πx) sin(ωt)), amplitude `a`.
#[derive(Debug, Clone, Copy)]
pub struct Wobble {
    pub amplitude: f64,
}

impl VelocityField for Wobble {
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        Some(self.velocity_gradient(p, t)?.0)
    }
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let w = 2.0 * PI / 10.0;
        let (x, y, a) = (p[0], p[1], self.amplitude);
        let (sy, cy) = (PI * y).sin_cos();
        let (sp, cp) = (w * t + x).sin_cos();
        let (sx, cx) = (PI * x).sin_cos();
        let st = (w * t).sin();
        let u = [a * sy * cp, a * 0.5 * cx * st];
        let g = [[-a * sy * sp, a * PI * cy * cp], [-a * 0.5 * PI * sx * st, 0.0]];
        Some((u, g))
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        None
    }
}
