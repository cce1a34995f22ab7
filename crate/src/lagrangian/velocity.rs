//! The [`VelocityField`] trait: what the tracer engine needs from a flow (velocity and its
//! gradient at a point and time, or "no data here"), so analytic flows in tests and gridded
//! data drive exactly the same integration code.
//!
//! The engine is generic over the field type: on the gridded path every sample is a direct,
//! inlinable call, never a dynamic dispatch.

use super::gridded::GriddedField;

/// A position or a velocity, `[x, y]`.
pub type Vec2 = [f64; 2];

/// A 2×2 matrix, row-major: `m[r][c]`. For a velocity gradient `g[r][c] = ∂u_r/∂x_c`, i.e.
/// `[[∂u/∂x, ∂u/∂y], [∂v/∂x, ∂v/∂y]]`.
pub type Mat2 = [[f64; 2]; 2];

/// An axis-aligned rectangle `[x0, x1] × [y0, y1]` (closed).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Rect {
    pub x0: f64,
    pub x1: f64,
    pub y0: f64,
    pub y1: f64,
}

impl Rect {
    /// Whether `p` lies in the closed rectangle.
    #[inline]
    pub fn contains(&self, p: Vec2) -> bool {
        p[0] >= self.x0 && p[0] <= self.x1 && p[1] >= self.y0 && p[1] <= self.y1
    }

    /// The point of the rectangle nearest to `p`.
    #[inline]
    pub fn clamp(&self, p: Vec2) -> Vec2 {
        [p[0].clamp(self.x0, self.x1), p[1].clamp(self.y0, self.y1)]
    }
}

/// A velocity field u(x, t) in the plane.
///
/// `None` means "no velocity here": outside the data window, inside a masked cell, in a
/// cell touching a missing vector, or outside the time range. The engine's boundary policy
/// decides what happens to a tracer that meets `None`.
pub trait VelocityField {
    /// Velocity at `p` and time `t`.
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2>;

    /// Velocity and its spatial gradient at `p` and `t`. The gradient must be the exact
    /// derivative of the function `velocity` evaluates (for data: of the interpolant), so
    /// that the variational equation integrates the same flow as the tracers.
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)>;

    /// The spatial rectangle where data exist (`None`: defined everywhere).
    fn window(&self) -> Option<Rect>;

    /// The time interval covered (`None`: any time, e.g. a steady field).
    fn time_range(&self) -> Option<(f64, f64)>;

    /// The [`GriddedField`] whose samples these are, exactly, if any. The engine then may
    /// advance a whole tracer grid in lockstep over precomputed time slices of the data
    /// (`lockstep.rs`), which gives the same results several times faster. Wrappers that
    /// change the samples (a window, an extension) keep the default `None`.
    fn as_gridded(&self) -> Option<&GriddedField<'_>> {
        None
    }
}

impl<F: VelocityField + ?Sized> VelocityField for &F {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        (**self).velocity(p, t)
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        (**self).velocity_gradient(p, t)
    }
    fn window(&self) -> Option<Rect> {
        (**self).window()
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        (**self).time_range()
    }
    fn as_gridded(&self) -> Option<&GriddedField<'_>> {
        (**self).as_gridded()
    }
}

/// An everywhere-defined field cut to a rectangle: `None` outside. Models a finite
/// measurement window on an analytic flow, so exit times and the boundary policy can be
/// checked against closed forms.
#[derive(Debug, Clone, Copy)]
pub struct Windowed<F> {
    pub inner: F,
    pub rect: Rect,
}

impl<F: VelocityField> VelocityField for Windowed<F> {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        if self.rect.contains(p) {
            self.inner.velocity(p, t)
        } else {
            None
        }
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        if self.rect.contains(p) {
            self.inner.velocity_gradient(p, t)
        } else {
            None
        }
    }
    fn window(&self) -> Option<Rect> {
        Some(self.rect)
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        self.inner.time_range()
    }
}

/// The samples of `F` with its gridded nature hidden ([`VelocityField::as_gridded`] stays
/// `None`): the engine then integrates one tracer at a time instead of in lockstep over
/// time slices. The results are the same bit for bit; this exists to compare the two paths
/// (tests, benchmarks).
#[derive(Debug, Clone, Copy)]
pub struct PerTracer<F>(pub F);

impl<F: VelocityField> VelocityField for PerTracer<F> {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        self.0.velocity(p, t)
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        self.0.velocity_gradient(p, t)
    }
    fn window(&self) -> Option<Rect> {
        self.0.window()
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        self.0.time_range()
    }
}

/// A field continued beyond its window by first-order Taylor extension from the nearest
/// window point p* (the spirit of Tang, Chan & Haller 2010, Chaos 20:017502, who extend
/// measured velocities linearly beyond the domain):
///
/// u(p) = u(p*) + ∇u(p*) (p − p*),  ∇u(p) taken as ∇u(p*).
///
/// Exact for linear flows; elsewhere a tracer outside the window keeps moving with the
/// strain it had at the edge, which keeps FTLE defined near open boundaries but is a model,
/// not data. Masked cells inside the window still return `None` (a solid body stops
/// tracers under every policy), as does an edge point p* that is itself masked.
///
/// The gradient is exact along the outward normal and first-order along the edge (p*
/// slides with p); this is the documented price of a continuation that needs no data.
#[derive(Debug, Clone, Copy)]
pub struct Extended<F> {
    pub inner: F,
}

impl<F: VelocityField> Extended<F> {
    #[inline]
    fn edge(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        let w = self.inner.window()?;
        if w.contains(p) {
            return None;
        }
        let q = w.clamp(p);
        let (u, g) = self.inner.velocity_gradient(q, t)?;
        let d = [p[0] - q[0], p[1] - q[1]];
        Some(([u[0] + g[0][0] * d[0] + g[0][1] * d[1], u[1] + g[1][0] * d[0] + g[1][1] * d[1]], g))
    }
}

impl<F: VelocityField> VelocityField for Extended<F> {
    #[inline]
    fn velocity(&self, p: Vec2, t: f64) -> Option<Vec2> {
        match self.inner.velocity(p, t) {
            Some(u) => Some(u),
            None => self.edge(p, t).map(|(u, _)| u),
        }
    }
    #[inline]
    fn velocity_gradient(&self, p: Vec2, t: f64) -> Option<(Vec2, Mat2)> {
        match self.inner.velocity_gradient(p, t) {
            Some(s) => Some(s),
            None => self.edge(p, t),
        }
    }
    fn window(&self) -> Option<Rect> {
        None
    }
    fn time_range(&self) -> Option<(f64, f64)> {
        self.inner.time_range()
    }
}
