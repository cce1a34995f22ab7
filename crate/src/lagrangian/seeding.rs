//! Where tracers start: a regular grid over the data window or a user rectangle, at any
//! resolution (finer than the data allowed: the flow map is smooth where the field is).

use super::error::LagrangianError;
use super::velocity::{Rect, Vec2, VelocityField};
use crate::field::Axis;
use serde::{Deserialize, Serialize};

/// A regular grid of tracer start points, nodes at `x.coord(i)`, `y.coord(j)`; results are
/// stored `(ny, nx)` row-major like every field of the crate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TracerGrid {
    pub x: Axis,
    pub y: Axis,
}

impl TracerGrid {
    /// `nx × ny` nodes spanning `rect`, corners included.
    pub fn new(rect: Rect, nx: usize, ny: usize) -> Result<TracerGrid, LagrangianError> {
        let finite = [rect.x0, rect.x1, rect.y0, rect.y1].iter().all(|v| v.is_finite());
        if !finite || rect.x1 <= rect.x0 || rect.y1 <= rect.y0 {
            return Err(LagrangianError::BadRectangle {
                x0: rect.x0,
                x1: rect.x1,
                y0: rect.y0,
                y1: rect.y1,
            });
        }
        if nx < 2 {
            return Err(LagrangianError::TracerGridTooSmall { axis: "x", n: nx });
        }
        if ny < 2 {
            return Err(LagrangianError::TracerGridTooSmall { axis: "y", n: ny });
        }
        Ok(TracerGrid {
            x: Axis { start: rect.x0, step: (rect.x1 - rect.x0) / (nx - 1) as f64, n: nx },
            y: Axis { start: rect.y0, step: (rect.y1 - rect.y0) / (ny - 1) as f64, n: ny },
        })
    }

    /// `nx × ny` nodes spanning the field's data window.
    pub fn over_window<F: VelocityField>(
        field: &F,
        nx: usize,
        ny: usize,
    ) -> Result<TracerGrid, LagrangianError> {
        TracerGrid::new(field.window().ok_or(LagrangianError::NoWindow)?, nx, ny)
    }

    pub fn nx(&self) -> usize {
        self.x.n
    }
    pub fn ny(&self) -> usize {
        self.y.n
    }
    /// Number of nodes.
    pub fn len(&self) -> usize {
        self.x.n * self.y.n
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Start point of node (i, j).
    #[inline]
    pub fn node(&self, i: usize, j: usize) -> Vec2 {
        [self.x.coord(i), self.y.coord(j)]
    }
}
