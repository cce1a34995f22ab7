//! Scalar field → RGBA pixels through a colour map: the picture the page puts on a canvas
//! and the CLI will write as PNG.

#[cfg(doc)]
use super::colormap::mask_rgba;
use super::colormap::Colormap;
use super::quantity::{valid_cells, Quantity};
use super::RenderError;
use crate::field::{Grid, Series};

/// A validated colour range: `lo < hi`, both finite.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColorRange {
    lo: f64,
    hi: f64,
}

impl ColorRange {
    pub fn new(lo: f64, hi: f64) -> Result<ColorRange, RenderError> {
        if lo.is_finite() && hi.is_finite() && lo < hi {
            Ok(ColorRange { lo, hi })
        } else {
            Err(RenderError::BadRange { lo, hi })
        }
    }
    pub fn lo(&self) -> f64 {
        self.lo
    }
    pub fn hi(&self) -> f64 {
        self.hi
    }
    /// Position of `v` along the range: 0 at `lo`, 1 at `hi` (not clamped).
    #[inline]
    pub fn frac(&self, v: f64) -> f64 {
        (v - self.lo) / (self.hi - self.lo)
    }
}

/// RGBA bytes (`4 · nx · ny`, row-major, **first row = largest y**, as images are stored)
/// of a `(ny, nx)` field. Cells with `valid[c] == false` or a non-finite value get
/// `missing`; values beyond the range get the end colours.
///
/// # Panics
/// If `values` or `valid` do not hold `nx · ny` entries (a programming error).
#[track_caller]
pub fn paint_rgba(
    values: &[f32],
    valid: &[bool],
    nx: usize,
    ny: usize,
    map: &Colormap,
    range: ColorRange,
    missing: [u8; 4],
) -> Vec<u8> {
    assert!(
        values.len() == nx * ny && valid.len() == nx * ny,
        "paint_rgba: {nx}×{ny} grid but {} values and {} flags",
        values.len(),
        valid.len()
    );
    let lut = map.rgba();
    let mut out = Vec::with_capacity(4 * nx * ny);
    for row in 0..ny {
        let j = ny - 1 - row;
        for c in j * nx..(j + 1) * nx {
            let v = values[c];
            let px = if valid[c] && v.is_finite() {
                lut[Colormap::index(range.frac(v as f64))]
            } else {
                missing
            };
            out.extend_from_slice(&px);
        }
    }
    out
}

/// Edges of the picture of a field, `[x_min, x_max, y_min, y_max]`: each node is drawn as a
/// cell of one grid spacing centred on it, so the picture reaches half a spacing past the
/// outer nodes. Sets the aspect ratio and the axes of a map.
pub fn image_extent(g: &Grid) -> [f64; 4] {
    [
        g.x.start - 0.5 * g.x.step,
        g.x.end() + 0.5 * g.x.step,
        g.y.start - 0.5 * g.y.step,
        g.y.end() + 0.5 * g.y.step,
    ]
}

/// Picture of quantity `q` at snapshot `k` through colour map `map`, masked cells and
/// missing vectors in `missing` (the defaults are the quantity's own map,
/// [`Quantity::colormap`], and the neutral grey of [`mask_rgba`]).
pub fn quantity_image(
    s: &Series,
    q: Quantity,
    k: usize,
    range: ColorRange,
    map: &Colormap,
    missing: [u8; 4],
) -> Result<Vec<u8>, RenderError> {
    let values = q.compute(s, k)?;
    let valid = valid_cells(s, k);
    Ok(paint_rgba(&values, &valid, s.nx(), s.ny(), map, range, missing))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::render::colormap::ColormapKind;

    #[test]
    fn maps_values_flips_rows_and_greys_out_missing_cells() {
        // 3 × 2 field: bottom row (j = 0) 0, 0.5, 1; top row (j = 1) −1, NaN, 2.
        let values = [0.0, 0.5, 1.0, -1.0, f32::NAN, 2.0];
        let valid = [true, true, false, true, true, true];
        let map = Colormap::get(ColormapKind::Tide);
        let grey = [1, 2, 3, 255];
        let px = paint_rgba(&values, &valid, 3, 2, map, ColorRange::new(0.0, 1.0).unwrap(), grey);
        let lut = map.rgba();
        let at = |r: usize, i: usize| -> [u8; 4] { px[4 * (3 * r + i)..][..4].try_into().unwrap() };
        // Image row 0 is the top of the field (j = 1).
        assert_eq!(at(0, 0), lut[0]); // −1 clamps to the low end
        assert_eq!(at(0, 1), grey); // NaN
        assert_eq!(at(0, 2), lut[255]); // 2 clamps to the high end
        assert_eq!(at(1, 0), lut[0]);
        assert_eq!(at(1, 1), lut[128]);
        assert_eq!(at(1, 2), grey); // flagged invalid
    }

    #[test]
    fn extent_reaches_half_a_cell_past_the_outer_nodes() {
        use crate::field::Axis;
        let g = Grid {
            x: Axis { start: 1.0, step: 0.5, n: 5 },
            y: Axis { start: -1.0, step: 0.25, n: 3 },
        };
        assert_eq!(image_extent(&g), [0.75, 3.25, -1.125, -0.375]);
    }

    #[test]
    fn ranges_must_be_ordered_and_finite() {
        assert!(ColorRange::new(0.0, 1.0).is_ok());
        for (lo, hi) in [(1.0, 1.0), (2.0, 1.0), (f64::NAN, 1.0), (0.0, f64::INFINITY)] {
            let e = ColorRange::new(lo, hi).unwrap_err().to_string();
            assert!(e.contains("low < high"), "{e}");
        }
    }
}
