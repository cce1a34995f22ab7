//! From the lattice to PIV vectors. A PIV vector is the mean displacement of the particle
//! images inside its interrogation window, so each vector here is the average of the
//! lattice velocity over a square window centred on the vector (common practice: the
//! window acts as a spatial box filter). Nodes inside the fin hold no particles and are left
//! out of the average; a vector whose centre lies in the fin is masked.

use crate::lattice::Lattice;
use crate::scenario::Scenario;

/// The vector grid on the lattice and the averaging weights of one window.
#[derive(Debug, Clone)]
pub struct PivWindow {
    /// Lattice column of each vector column.
    columns: Vec<usize>,
    /// Lattice row of each vector row.
    rows: Vec<usize>,
    /// Half the window in cells.
    half: usize,
    /// Trapezoid weights over the `window + 1` nodes of one side: the exact box average of
    /// the bilinear interpolant of the lattice field over the window.
    weights: Vec<f64>,
    /// `(ny, nx)` of the vector grid: `true` where the vector centre is a solid node.
    mask: Vec<bool>,
    solid: Vec<bool>,
    lattice_nx: usize,
}

impl PivWindow {
    /// Builds the vector grid of `s` over a lattice whose solid nodes are `solid`.
    pub fn new(s: &Scenario, solid: &[bool]) -> PivWindow {
        let (i0, j0) = s.first_vector_node;
        let columns: Vec<usize> = (0..s.vectors.0).map(|k| i0 + k * s.vector_pitch_cells).collect();
        let rows: Vec<usize> = (0..s.vectors.1).map(|k| j0 + k * s.vector_pitch_cells).collect();
        let half = s.window_cells / 2;
        let mut weights = vec![1.0; s.window_cells + 1];
        weights[0] = 0.5;
        weights[s.window_cells] = 0.5;
        let mask = rows
            .iter()
            .flat_map(|&j| columns.iter().map(move |&i| (i, j)))
            .map(|(i, j)| solid[j * s.nx + i])
            .collect();
        PivWindow { columns, rows, half, weights, mask, solid: solid.to_vec(), lattice_nx: s.nx }
    }

    /// Vectors per row.
    pub fn nx(&self) -> usize {
        self.columns.len()
    }

    /// Vectors per column.
    pub fn ny(&self) -> usize {
        self.rows.len()
    }

    /// `(ny, nx)` mask of the vector grid.
    pub fn mask(&self) -> &[bool] {
        &self.mask
    }

    /// Lattice nodes of the vector columns and rows.
    pub fn nodes(&self) -> (&[usize], &[usize]) {
        (&self.columns, &self.rows)
    }

    /// Window-averaged velocity (lattice units) at every vector, `(ny, nx)` row-major;
    /// masked vectors get 0.
    pub fn sample(&self, lattice: &Lattice) -> (Vec<f64>, Vec<f64>) {
        let n = self.nx() * self.ny();
        let mut u = vec![0.0; n];
        let mut v = vec![0.0; n];
        for (r, &j) in self.rows.iter().enumerate() {
            for (c, &i) in self.columns.iter().enumerate() {
                let k = r * self.nx() + c;
                if self.mask[k] {
                    continue;
                }
                let (mut su, mut sv, mut sw) = (0.0, 0.0, 0.0);
                for (b, &wy) in self.weights.iter().enumerate() {
                    let jj = j + b - self.half;
                    for (a, &wx) in self.weights.iter().enumerate() {
                        let ii = i + a - self.half;
                        if self.solid[jj * self.lattice_nx + ii] {
                            continue;
                        }
                        let (_, ux, uy) = lattice.moments(ii, jj);
                        let w = wx * wy;
                        su += w * ux;
                        sv += w * uy;
                        sw += w;
                    }
                }
                u[k] = su / sw;
                v[k] = sv / sw;
            }
        }
        (u, v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::body::fin_nodes;
    use crate::boundaries::{links, node_kinds};

    /// A linear velocity field is reproduced exactly by a symmetric window average [D], and
    /// the mask marks exactly the vectors whose centre lies in the fin.
    #[test]
    fn linear_field_is_reproduced_and_fin_is_masked() {
        let mut s = Scenario::fin_wake();
        s.nx = 80;
        s.ny = 40;
        s.fin_centre = (30.0, 19.5);
        s.fin_diameter_cells = 10.0;
        s.first_vector_node = (10, 4);
        s.vectors = (20, 11);
        s.validate().unwrap();
        let solid = fin_nodes(s.nx, s.ny, s.fin_centre, s.fin_diameter_cells);
        let lattice = Lattice::new(
            s.nx,
            s.ny,
            0.6,
            node_kinds(s.nx, s.ny, &solid),
            links(s.nx, s.ny, &solid),
            |i, j| (0.01 + 1e-4 * i as f64, -2e-4 * j as f64),
        );
        let w = PivWindow::new(&s, &solid);
        let (u, v) = w.sample(&lattice);
        let (cols, rows) = w.nodes();
        for (r, &j) in rows.iter().enumerate() {
            for (c, &i) in cols.iter().enumerate() {
                let k = r * w.nx() + c;
                let (dx, dy) = (i as f64 - 30.0, j as f64 - 19.5);
                let inside = dx * dx + dy * dy <= 25.0;
                assert_eq!(w.mask()[k], inside, "mask at node ({i},{j})");
                // Windows clear of the fin see the linear field; its mean is the centre value.
                let clear = dx.abs() > 9.0 || dy.abs() > 9.0;
                if clear {
                    assert!((u[k] - (0.01 + 1e-4 * i as f64)).abs() < 1e-15);
                    assert!((v[k] + 2e-4 * j as f64).abs() < 1e-15);
                }
                if inside {
                    assert_eq!((u[k], v[k]), (0.0, 0.0));
                }
            }
        }
        assert!(w.mask().iter().any(|&m| m));
    }
}
