//! The uniform axis behind a column of scattered coordinates, and each row's place on it.
//!
//! Text exports list one row per node, in any order, and often leave out nodes without
//! data (inside a body, outside the light sheet). The axis is taken as the smallest
//! interval covering the distinct values such that each of them lies on a multiple of the
//! smallest spacing between them, within [`GRID_TOLERANCE`] of that spacing; nodes with no
//! row become masked. Coordinates that fit no such axis are reported as non-uniform.

use crate::field::{Axis, FieldError, GRID_TOLERANCE};

/// Distinct values closer than this fraction of the coordinate range are one node: the same
/// coordinate printed from single-precision arithmetic differs in its last digits.
const SAME_NODE: f64 = 1e-6;

/// At most this many axis points per distinct coordinate value: an axis that would be
/// mostly empty is more likely a non-uniform grid than a uniform one with missing nodes.
const MAX_FILL: usize = 4;

/// The axis through `values` and the axis index of every value.
pub(crate) fn place(name: &'static str, values: &[f64]) -> Result<(Axis, Vec<usize>), FieldError> {
    if let Some((index, &value)) = values.iter().enumerate().find(|(_, v)| !v.is_finite()) {
        return Err(FieldError::NonFiniteCoordinate { axis: name, index, value });
    }
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let (lo, hi) = match (sorted.first(), sorted.last()) {
        (Some(&a), Some(&b)) => (a, b),
        _ => return Err(FieldError::AxisTooShort { axis: name, len: 0 }),
    };
    let eps = SAME_NODE * (hi - lo);
    let mut distinct: Vec<f64> = Vec::new();
    for &v in &sorted {
        match distinct.last() {
            Some(&d) if v - d <= eps => {}
            _ => distinct.push(v),
        }
    }
    if distinct.len() < 2 {
        return Err(FieldError::AxisTooShort { axis: name, len: distinct.len() });
    }
    let min_gap = distinct.windows(2).map(|w| w[1] - w[0]).fold(f64::INFINITY, f64::min);
    let intervals = ((hi - lo) / min_gap).round();
    let fits = intervals.is_finite() && (intervals as usize) < MAX_FILL * distinct.len() && {
        let step = (hi - lo) / intervals;
        distinct.iter().all(|&d| {
            let m = (d - lo) / step;
            (m - m.round()).abs() <= GRID_TOLERANCE
        })
    };
    let axis = if fits {
        let n = intervals as usize + 1;
        Axis { start: lo, step: (hi - lo) / intervals, n }
    } else {
        // Let the grid check explain what is wrong with the distinct values.
        let (axis, _) = Axis::from_coords(name, &distinct)?;
        axis
    };
    let index = values
        .iter()
        .map(|&v| (((v - axis.start) / axis.step).round() as usize).min(axis.n - 1))
        .collect();
    Ok((axis, index))
}

/// The index of `v` on `axis`, if it lies on a node (within [`GRID_TOLERANCE`] of the step).
pub(crate) fn index_on(axis: &Axis, v: f64) -> Option<usize> {
    let m = (v - axis.start) / axis.step;
    let k = m.round();
    if !(m - k).abs().le(&GRID_TOLERANCE) || k < 0.0 || k >= axis.n as f64 {
        return None;
    }
    Some(k as usize)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scattered_rows_with_missing_nodes() {
        // Nodes 0, 0.5, 1.0, 2.0 (1.5 missing), shuffled and repeated, with float32 noise.
        let v = [2.0, 0.5, 0.0, 1.0000001, 0.5, 2.0, 0.0];
        let (axis, idx) = place("x", &v).unwrap();
        assert_eq!((axis.start, axis.step, axis.n), (0.0, 0.5, 5));
        assert_eq!(idx, [4, 1, 0, 2, 1, 4, 0]);
        assert_eq!(index_on(&axis, 1.5), Some(3));
        assert_eq!(index_on(&axis, 1.7), None);
        assert_eq!(index_on(&axis, 2.5), None);
    }

    #[test]
    fn non_uniform_and_degenerate_axes() {
        let stretched: Vec<f64> = (0..20).map(|i| 1.1f64.powi(i)).collect();
        let e = place("x", &stretched).unwrap_err();
        assert!(matches!(e, FieldError::NonUniformAxis { axis: "x", .. }), "{e}");
        assert!(matches!(
            place("y", &[3.0, 3.0, 3.0]).unwrap_err(),
            FieldError::AxisTooShort { axis: "y", len: 1 }
        ));
        assert!(place("y", &[0.0, f64::NAN]).is_err());
        // Two clusters far apart with a tiny gap inside one: mostly empty, so not a grid.
        let e = place("x", &[0.0, 0.01, 1.0, 2.0]).unwrap_err();
        assert!(matches!(e, FieldError::NonUniformAxis { .. }), "{e}");
    }
}
