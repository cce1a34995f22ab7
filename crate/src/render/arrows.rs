//! Velocity arrows over a map: where to put them and how long to draw them, in the
//! series' own coordinates, so the page only transforms and strokes them.

use super::quantity::{check_snapshot, valid_cells, Quantity};
use super::range::{default_range, RangeScope};
use super::RenderError;
use crate::field::Series;

/// Longest arrow, as a fraction of the spacing between arrows: long enough to read the
/// direction, short enough that neighbours do not overlap.
pub const ARROW_FILL: f64 = 0.9;

/// Arrows of snapshot `k`: about `across` arrows along the longer side of the grid, on
/// every `stride`-th node, skipping nodes without data. Returns `[x, y, dx, dy]` per arrow
/// (flattened), start at the node, length such that the robust maximum speed of the whole
/// series (the 99th percentile, as for colour ranges) spans [`ARROW_FILL`] of the arrow
/// spacing; the same scale in every snapshot, so arrows compare across time.
pub fn velocity_arrows(s: &Series, k: usize, across: usize) -> Result<Vec<f32>, RenderError> {
    check_snapshot(s, k)?;
    let (nx, ny) = (s.nx(), s.ny());
    let stride = nx.max(ny).div_ceil(across.max(1)).max(1);
    let g = s.grid();
    let spacing = stride as f64 * g.x.step.min(g.y.step);
    let (_, top) = default_range(s, Quantity::Speed, RangeScope::Series)?;
    let scale = ARROW_FILL * spacing / top;
    let valid = valid_cells(s, k);
    let (u, v) = (s.u_at(k), s.v_at(k));
    let mut out = Vec::new();
    let (i0, j0) = ((nx - 1) % stride / 2, (ny - 1) % stride / 2);
    for j in (j0..ny).step_by(stride) {
        for i in (i0..nx).step_by(stride) {
            let c = j * nx + i;
            if !valid[c] {
                continue;
            }
            out.extend_from_slice(&[
                g.x.coord(i) as f32,
                g.y.coord(j) as f32,
                (u[c] as f64 * scale) as f32,
                (v[c] as f64 * scale) as f32,
            ]);
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;

    #[test]
    fn arrows_skip_masked_nodes_and_share_one_scale() {
        // Uniform flow (2, 1) on 9 × 5 nodes of spacing 0.5, one node masked.
        let (nx, ny) = (9usize, 5usize);
        let mut mask = vec![false; nx * ny];
        mask[2 * nx + 4] = true;
        let s = Series::from_parts(SeriesParts {
            x: (0..nx).map(|i| i as f64 * 0.5).collect(),
            y: (0..ny).map(|j| j as f64 * 0.5).collect(),
            t: vec![0.0],
            u: vec![2.0; nx * ny],
            v: vec![1.0; nx * ny],
            mask: Some(mask),
            ..Default::default()
        })
        .unwrap();
        let a = velocity_arrows(&s, 0, 5).unwrap();
        // stride 2: i = 0, 2, …, 8 and j = 0, 2, 4 → 15 nodes, one of them masked.
        assert_eq!(a.len(), 4 * 14);
        let len = (a[2] as f64).hypot(a[3] as f64);
        assert!((len - ARROW_FILL * 1.0).abs() < 1e-5, "{len}");
        assert!((a[2] as f64 / a[3] as f64 - 2.0).abs() < 1e-5);
        assert!(!a.chunks(4).any(|p| p[0] == 2.0 && p[1] == 1.0), "masked node has no arrow");
        assert!(velocity_arrows(&s, 1, 5).is_err());
    }
}
