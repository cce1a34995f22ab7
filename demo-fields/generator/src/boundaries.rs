//! Boundary conditions, expressed as the gather table of the pull step and the node kinds:
//!
//! * **Inlet** (column 0): nodes fixed at the equilibrium of the uniform inflow (ρ = 1,
//!   u = (U, 0)): the simplest velocity inlet (common practice), adequate 5 D upstream of
//!   the fin.
//! * **Outlet** (column nx − 1): zero gradient — a population that would enter from beyond
//!   the outlet takes the value the same direction has just received one column upstream.
//! * **Channel walls**: free-slip (specular reflection), located half a cell outside the
//!   first and last rows. The fin feels the confinement of the channel (blockage D/H) but
//!   the inflow stays uniform, so U∞ is unambiguous; a real channel's wall boundary layers
//!   are left out on purpose.
//! * **Fin**: halfway bounce-back — a population that would come from a solid node is the
//!   node's own outgoing population in the opposite direction, i.e. no-slip on a wall
//!   midway between the fluid node and the solid node (common practice).

use crate::lattice::{NodeKind, CX, CY, MIRROR_Y, OPPOSITE};

/// Node kinds: column 0 fixed (inlet), `solid` nodes solid, the rest fluid.
pub fn node_kinds(nx: usize, ny: usize, solid: &[bool]) -> Vec<NodeKind> {
    let mut kinds = vec![NodeKind::Fluid; nx * ny];
    for j in 0..ny {
        for i in 0..nx {
            let node = j * nx + i;
            kinds[node] = if i == 0 {
                NodeKind::Fixed
            } else if solid[node] {
                NodeKind::Solid
            } else {
                NodeKind::Fluid
            };
        }
    }
    kinds
}

/// The gather table: for each node and direction q, the index `q' * n + node'` of the
/// post-collision population that arrives there in the next step.
pub fn links(nx: usize, ny: usize, solid: &[bool]) -> Vec<u32> {
    let n = nx * ny;
    let mut table = vec![0u32; 9 * n];
    for j in 0..ny {
        for i in 0..nx {
            let node = j * nx + i;
            for q in 0..9 {
                let (src_q, si, sj) = source(nx, ny, i, j, q);
                let src_node = sj * nx + si;
                let index = if solid[src_node] {
                    // Halfway bounce-back at the fin.
                    OPPOSITE[q] * n + node
                } else {
                    src_q * n + src_node
                };
                table[node * 9 + q] = index as u32;
            }
        }
    }
    table
}

/// Direction and node the population q of node (i, j) comes from, after wall reflection and
/// the outlet rule (not yet checked against the fin).
fn source(nx: usize, ny: usize, i: usize, j: usize, q: usize) -> (usize, usize, usize) {
    let mut dir = q;
    let mut sj = j as i64 - CY[q] as i64;
    if sj < 0 || sj >= ny as i64 {
        // Specular reflection: it left this row towards the wall with the mirrored velocity.
        dir = MIRROR_Y[q];
        sj = j as i64;
    }
    let mut si = i as i64 - CX[q] as i64;
    if si >= nx as i64 {
        // Zero gradient at the outlet: the value that direction received at column nx − 2,
        // which streamed from column nx − 1 itself.
        si = nx as i64 - 1;
    }
    // Column 0 is the fixed inlet and never pulls, so si ≥ 0 for every node that does.
    (dir, si.max(0) as usize, sj as usize)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lattice::Lattice;

    /// Uniform flow in an empty channel with free-slip walls is an exact steady solution:
    /// after many steps every node still carries (ρ, u) = (1, U, 0) to round-off [D].
    #[test]
    fn uniform_flow_is_preserved_by_walls_inlet_and_outlet() {
        let (nx, ny, u0) = (40, 12, 0.08);
        let solid = vec![false; nx * ny];
        let mut lat =
            Lattice::new(nx, ny, 0.6, node_kinds(nx, ny, &solid), links(nx, ny, &solid), |_, _| {
                (u0, 0.0)
            });
        for _ in 0..200 {
            lat.step();
        }
        for j in 0..ny {
            for i in 0..nx {
                let (rho, ux, uy) = lat.moments(i, j);
                assert!((rho - 1.0).abs() < 1e-12, "rho at ({i},{j}) = {rho}");
                assert!((ux - u0).abs() < 1e-12 && uy.abs() < 1e-12, "u at ({i},{j})");
            }
        }
    }

    /// Bounce-back conserves mass exactly in a closed box (walls + a solid block, no inlet
    /// or outlet): every population leaving a node arrives somewhere [D].
    #[test]
    fn bounce_back_conserves_mass() {
        let (nx, ny) = (16, 10);
        // Solid frame on the left and right columns (and a block inside) closes the box;
        // free-slip walls close top and bottom.
        let mut solid = vec![false; nx * ny];
        for j in 0..ny {
            solid[j * nx] = true;
            solid[j * nx + 1] = true;
            solid[j * nx + nx - 1] = true;
        }
        for j in 4..6 {
            for i in 7..9 {
                solid[j * nx + i] = true;
            }
        }
        let mut kinds = node_kinds(nx, ny, &solid);
        for j in 0..ny {
            // Column 0 is solid here, not an inlet.
            kinds[j * nx] = NodeKind::Solid;
        }
        let mut lat = Lattice::new(nx, ny, 0.7, kinds, links(nx, ny, &solid), |i, j| {
            (0.05 * (i as f64 * 0.7).sin(), 0.03 * (j as f64 * 1.3).cos())
        });
        let mass = |lat: &Lattice| -> f64 {
            let mut m = 0.0;
            for j in 0..ny {
                for i in 0..nx {
                    if !solid[j * nx + i] {
                        m += lat.moments(i, j).0;
                    }
                }
            }
            m
        };
        let m0 = mass(&lat);
        for _ in 0..300 {
            lat.step();
        }
        let m1 = mass(&lat);
        assert!((m1 - m0).abs() < 1e-11 * m0, "mass {m0} -> {m1}");
    }
}
