//! Uniform rectilinear grids: the only kind the core works on. Readers check that the
//! coordinates they are given are uniform (within [`GRID_TOLERANCE`]) and turn them into
//! an origin and a spacing.

use super::FieldError;
use serde::{Deserialize, Serialize};

/// Largest deviation of a coordinate from the uniform grid through the first point, as a
/// fraction of the spacing, that still counts as uniform. One percent absorbs the rounding
/// of text exports (three decimals on a 0.6 mm pitch is 0.1 %) and still rejects any
/// stretched CFD grid (a stretching ratio of 1.01 drifts by a whole spacing in 14 cells).
pub const GRID_TOLERANCE: f64 = 1e-2;

/// One uniform axis: `n` points at `start + i * step`, `step > 0`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Axis {
    pub start: f64,
    pub step: f64,
    pub n: usize,
}

impl Axis {
    /// Builds an axis from explicit coordinates. Returns the axis (always ascending) and
    /// whether the given coordinates descended, so the caller can flip its data.
    pub fn from_coords(name: &'static str, coords: &[f64]) -> Result<(Axis, bool), FieldError> {
        let n = coords.len();
        if n < 2 {
            return Err(FieldError::AxisTooShort { axis: name, len: n });
        }
        if let Some((index, &value)) = coords.iter().enumerate().find(|(_, c)| !c.is_finite()) {
            return Err(FieldError::NonFiniteCoordinate { axis: name, index, value });
        }
        if let Some(index) = (1..n).find(|&i| coords[i] == coords[i - 1]) {
            return Err(FieldError::DegenerateAxis { axis: name, index });
        }
        // Spacing from the end points: least sensitive to rounding of single values.
        let step = (coords[n - 1] - coords[0]) / (n - 1) as f64;
        let descending = step < 0.0;
        for (i, &c) in coords.iter().enumerate() {
            let expected = coords[0] + i as f64 * step;
            if (c - expected).abs() > GRID_TOLERANCE * step.abs() {
                return Err(FieldError::NonUniformAxis {
                    axis: name,
                    index: i,
                    value: c,
                    expected,
                    spacing: step.abs(),
                    tolerance_percent: GRID_TOLERANCE * 100.0,
                });
            }
        }
        let axis = if descending {
            Axis { start: coords[n - 1], step: -step, n }
        } else {
            Axis { start: coords[0], step, n }
        };
        Ok((axis, descending))
    }

    /// Coordinate of point `i`.
    #[inline]
    pub fn coord(&self, i: usize) -> f64 {
        self.start + i as f64 * self.step
    }

    /// Last coordinate.
    pub fn end(&self) -> f64 {
        self.coord(self.n - 1)
    }

    /// All coordinates.
    pub fn coords(&self) -> Vec<f64> {
        (0..self.n).map(|i| self.coord(i)).collect()
    }
}

/// A uniform rectilinear grid of `nx × ny` nodes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Grid {
    pub x: Axis,
    pub y: Axis,
}

impl Grid {
    /// Number of nodes, `nx * ny`.
    pub fn len(&self) -> usize {
        self.x.n * self.y.n
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    pub fn nx(&self) -> usize {
        self.x.n
    }
    pub fn ny(&self) -> usize {
        self.y.n
    }
    /// Flat index of node (i, j) in a `(ny, nx)` field.
    #[inline]
    pub fn index(&self, i: usize, j: usize) -> usize {
        j * self.x.n + i
    }
    /// Area of one cell, the quadrature weight of an interior node.
    pub fn cell_area(&self) -> f64 {
        self.x.step * self.y.step
    }
    /// Returns the grid scaled by `factor` (unit conversion of the coordinates).
    pub fn scaled(&self, factor: f64) -> Grid {
        let s = |a: Axis| Axis { start: a.start * factor, step: a.step * factor, n: a.n };
        Grid { x: s(self.x), y: s(self.y) }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uniform_axis_ascending_and_descending() {
        let (a, flip) = Axis::from_coords("x", &[0.0, 0.5, 1.0, 1.5]).unwrap();
        assert!(!flip);
        assert_eq!((a.start, a.step, a.n), (0.0, 0.5, 4));
        let (b, flip) = Axis::from_coords("y", &[3.0, 2.0, 1.0]).unwrap();
        assert!(flip);
        assert_eq!((b.start, b.step, b.n), (1.0, 1.0, 3));
    }

    #[test]
    fn rounding_within_tolerance_is_accepted() {
        // 0.6 mm pitch written with three decimals.
        let c: Vec<f64> = (0..50).map(|i| ((i as f64 * 0.6) * 1000.0).round() / 1000.0).collect();
        assert!(Axis::from_coords("x", &c).is_ok());
    }

    #[test]
    fn stretched_and_repeated_axes_are_rejected() {
        let stretched: Vec<f64> = (0..30).map(|i| 1.05f64.powi(i)).collect();
        let e = Axis::from_coords("x", &stretched).unwrap_err();
        assert!(matches!(e, FieldError::NonUniformAxis { axis: "x", .. }), "{e}");
        let e = Axis::from_coords("y", &[0.0, 1.0, 1.0, 2.0]).unwrap_err();
        assert_eq!(e, FieldError::DegenerateAxis { axis: "y", index: 2 });
        assert!(Axis::from_coords("x", &[1.0]).is_err());
        assert!(Axis::from_coords("x", &[0.0, f64::NAN]).is_err());
    }
}
