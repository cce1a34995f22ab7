//! D2Q9 lattice-Boltzmann with the BGK collision operator: the velocity set, the
//! equilibrium and the fused stream-and-collide step.
//!
//! Method: Qian, d'Humières & Lallemand 1992, Europhys. Lett. 17:479 (D2Q9 BGK lattice);
//! equilibrium f_i^eq = w_i ρ [1 + 3 c_i·u + 4.5 (c_i·u)² − 1.5 |u|²] with
//! w = 4/9 (rest), 1/9 (axes), 1/36 (diagonals); viscosity ν = (τ − ½)/3 in lattice units.
//!
//! Layout: populations are stored direction-major, `f[q * n_nodes + node]`, node = j·nx + i.
//! Each step *pulls* every population from the node it streams from, through a gather table
//! built by [`crate::boundaries`]; bounce-back, wall reflection and the outlet are entries of
//! that table, so the kernel below has no boundary branches. The table entries are fixed,
//! the loop runs in node order on one thread: a run is bit-for-bit repeatable.

/// Lattice velocities, x components. Order: rest, +x, +y, −x, −y, then the diagonals.
pub const CX: [i32; 9] = [0, 1, 0, -1, 0, 1, -1, -1, 1];
/// Lattice velocities, y components.
pub const CY: [i32; 9] = [0, 0, 1, 0, -1, 1, 1, -1, -1];
/// Quadrature weights of the D2Q9 set.
pub const W: [f64; 9] = [
    4.0 / 9.0,
    1.0 / 9.0,
    1.0 / 9.0,
    1.0 / 9.0,
    1.0 / 9.0,
    1.0 / 36.0,
    1.0 / 36.0,
    1.0 / 36.0,
    1.0 / 36.0,
];
/// Index of the opposite direction (−c_i), for bounce-back.
pub const OPPOSITE: [usize; 9] = [0, 3, 4, 1, 2, 7, 8, 5, 6];
/// Index of the direction mirrored in y ((c_x, −c_y)), for free-slip walls.
pub const MIRROR_Y: [usize; 9] = [0, 1, 4, 3, 2, 8, 7, 6, 5];

/// The second-order equilibrium of the D2Q9 BGK model.
#[inline]
pub fn equilibrium(rho: f64, ux: f64, uy: f64) -> [f64; 9] {
    let usq = 1.5 * (ux * ux + uy * uy);
    let mut feq = [0.0; 9];
    for q in 0..9 {
        let cu = CX[q] as f64 * ux + CY[q] as f64 * uy;
        feq[q] = W[q] * rho * (1.0 + 3.0 * cu + 4.5 * cu * cu - usq);
    }
    feq
}

/// What a node does in a step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NodeKind {
    /// Streams and collides.
    Fluid,
    /// Inside the fin: holds no fluid; its velocity is zero.
    Solid,
    /// Inlet: populations stay at the equilibrium of the inflow (a velocity inlet).
    Fixed,
}

/// A stretch of consecutive fluid nodes of one kind of streaming.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Run {
    start: usize,
    len: usize,
    /// Plain streaming: population q comes from `node − (c_x + c_y·nx)`, so the run can be
    /// processed as contiguous slices (which the compiler vectorises).
    plain: bool,
}

/// Index offset of the upstream neighbour of each direction: node − offset = source node.
fn offsets(nx: usize) -> [isize; 9] {
    std::array::from_fn(|q| CX[q] as isize + CY[q] as isize * nx as isize)
}

/// Groups the fluid nodes into runs, deciding plain streaming from the table itself, so the
/// fast path can never disagree with the boundary rules.
fn find_runs(nx: usize, n: usize, kinds: &[NodeKind], links: &[u32]) -> Vec<Run> {
    let off = offsets(nx);
    let plain = |node: usize| {
        (0..9).all(|q| {
            let expected = (q * n + node) as isize - off[q];
            links[node * 9 + q] as isize == expected
        })
    };
    let mut runs: Vec<Run> = Vec::new();
    for (node, &kind) in kinds.iter().enumerate() {
        if kind != NodeKind::Fluid {
            continue;
        }
        let p = plain(node);
        match runs.last_mut() {
            Some(r) if r.plain == p && r.start + r.len == node => r.len += 1,
            _ => runs.push(Run { start: node, len: 1, plain: p }),
        }
    }
    runs
}

/// BGK update of one node from its pulled populations `g`; returns the post-collision ones.
#[inline(always)]
fn collide(g: [f64; 9], omega: f64) -> [f64; 9] {
    let rho = g[0] + g[1] + g[2] + g[3] + g[4] + g[5] + g[6] + g[7] + g[8];
    let jx = g[1] - g[3] + g[5] - g[6] - g[7] + g[8];
    let jy = g[2] - g[4] + g[5] + g[6] - g[7] - g[8];
    let feq = equilibrium(rho, jx / rho, jy / rho);
    std::array::from_fn(|q| g[q] + omega * (feq[q] - g[q]))
}

/// The populations of the whole channel and the tables that drive a step.
pub struct Lattice {
    nx: usize,
    ny: usize,
    omega: f64,
    kinds: Vec<NodeKind>,
    /// `links[node * 9 + q]` = index into `f` the population q of `node` is pulled from.
    links: Vec<u32>,
    /// Fluid nodes in node order, grouped into runs that stream plainly (every link is the
    /// neighbour's same direction) or need the table.
    runs: Vec<Run>,
    f: Vec<f64>,
    next: Vec<f64>,
    steps: u64,
}

impl Lattice {
    /// Builds a lattice from node kinds, the gather table and an initial velocity field
    /// (density 1, populations at equilibrium). `tau` is the BGK relaxation time.
    pub fn new(
        nx: usize,
        ny: usize,
        tau: f64,
        kinds: Vec<NodeKind>,
        links: Vec<u32>,
        initial_velocity: impl Fn(usize, usize) -> (f64, f64),
    ) -> Lattice {
        let n = nx * ny;
        assert_eq!(kinds.len(), n, "one kind per node");
        assert_eq!(links.len(), 9 * n, "nine links per node");
        assert!(9 * n <= u32::MAX as usize, "lattice too large for 32-bit links");
        let mut f = vec![0.0; 9 * n];
        for j in 0..ny {
            for i in 0..nx {
                let node = j * nx + i;
                if kinds[node] == NodeKind::Solid {
                    continue;
                }
                let (ux, uy) = initial_velocity(i, j);
                let feq = equilibrium(1.0, ux, uy);
                for q in 0..9 {
                    f[q * n + node] = feq[q];
                }
            }
        }
        let runs = find_runs(nx, n, &kinds, &links);
        Lattice { nx, ny, omega: 1.0 / tau, kinds, links, runs, next: f.clone(), f, steps: 0 }
    }

    /// Advances one time step: pull-stream, then BGK collision. `next` keeps the fixed
    /// (inlet) and solid nodes from the start, so only fluid nodes are written.
    pub fn step(&mut self) {
        let n = self.nx * self.ny;
        let off = offsets(self.nx);
        let omega = self.omega;
        let f = &self.f;
        let next = &mut self.next;
        for run in &self.runs {
            if run.plain {
                plain_run(f, next, n, run.start, run.len, &off, omega);
            } else {
                for node in run.start..run.start + run.len {
                    let links = &self.links[node * 9..node * 9 + 9];
                    let g: [f64; 9] = std::array::from_fn(|q| f[links[q] as usize]);
                    let out = collide(g, omega);
                    for q in 0..9 {
                        next[q * n + node] = out[q];
                    }
                }
            }
        }
        std::mem::swap(&mut self.f, &mut self.next);
        self.steps += 1;
    }

    /// Number of steps taken.
    pub fn steps(&self) -> u64 {
        self.steps
    }

    /// Density and velocity at node (i, j); a solid node reports (1, 0, 0). Moments of
    /// the post-collision populations equal those of the pre-collision ones (BGK conserves
    /// mass and momentum), so either may be used.
    pub fn moments(&self, i: usize, j: usize) -> (f64, f64, f64) {
        let n = self.nx * self.ny;
        let node = j * self.nx + i;
        if self.kinds[node] == NodeKind::Solid {
            return (1.0, 0.0, 0.0);
        }
        let g: [f64; 9] = std::array::from_fn(|q| self.f[q * n + node]);
        let rho = g.iter().sum::<f64>();
        let jx = g[1] - g[3] + g[5] - g[6] - g[7] + g[8];
        let jy = g[2] - g[4] + g[5] + g[6] - g[7] - g[8];
        (rho, jx / rho, jy / rho)
    }

    /// True when every population is finite (a blown-up run shows NaN first here).
    pub fn is_finite(&self) -> bool {
        self.f.iter().all(|x| x.is_finite())
    }
}

/// A run of plain-streaming nodes as slices: sources are the same run shifted by each
/// direction's offset, destinations the run itself in each direction's block.
fn plain_run(
    f: &[f64],
    next: &mut [f64],
    n: usize,
    start: usize,
    len: usize,
    off: &[isize; 9],
    omega: f64,
) {
    let src: [&[f64]; 9] = std::array::from_fn(|q| {
        let s = ((q * n + start) as isize - off[q]) as usize;
        &f[s..s + len]
    });
    let mut blocks = next.chunks_exact_mut(n);
    let dst: [&mut [f64]; 9] = std::array::from_fn(|_| {
        let block = blocks.next().expect("nine direction blocks");
        &mut block[start..start + len]
    });
    for k in 0..len {
        let g: [f64; 9] = std::array::from_fn(|q| src[q][k]);
        let out = collide(g, omega);
        for q in 0..9 {
            dst[q][k] = out[q];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Zeroth, first and second moments of the equilibrium reproduce ρ, ρu and
    /// ρ(c_s² δ + u u) with c_s² = 1/3 — the defining property of the D2Q9 equilibrium
    /// (Qian, d'Humières & Lallemand 1992, Europhys. Lett. 17:479).
    #[test]
    fn equilibrium_moments() {
        let (rho, ux, uy) = (1.07, 0.08, -0.05);
        let feq = equilibrium(rho, ux, uy);
        let m = |a: &dyn Fn(usize) -> f64| (0..9).map(|q| feq[q] * a(q)).sum::<f64>();
        let tol = 1e-15;
        assert!((m(&|_| 1.0) - rho).abs() < tol);
        assert!((m(&|q| CX[q] as f64) - rho * ux).abs() < tol);
        assert!((m(&|q| CY[q] as f64) - rho * uy).abs() < tol);
        let pxx = m(&|q| (CX[q] * CX[q]) as f64);
        let pxy = m(&|q| (CX[q] * CY[q]) as f64);
        let pyy = m(&|q| (CY[q] * CY[q]) as f64);
        assert!((pxx - rho * (1.0 / 3.0 + ux * ux)).abs() < tol);
        assert!((pxy - rho * ux * uy).abs() < tol);
        assert!((pyy - rho * (1.0 / 3.0 + uy * uy)).abs() < tol);
    }

    /// A decaying shear wave u_x = A cos(π (y + ½)/H) between free-slip walls (H = ny
    /// cells) is an exact Navier–Stokes solution, u_x ∝ exp(−ν k² t) with k = π/H [D]; its
    /// measured decay must give back ν = (τ − ½)/3, the BGK viscosity relation (Qian,
    /// d'Humières & Lallemand 1992). The lattice error is O(k²): 0.2 % here, bound 2 %.
    #[test]
    fn shear_wave_decays_at_the_bgk_viscosity() {
        use crate::boundaries::links;
        let (nx, ny, tau, amp) = (4, 16, 0.8, 1e-3);
        let k = std::f64::consts::PI / ny as f64;
        let mode = |j: usize| (k * (j as f64 + 0.5)).cos();
        let solid = vec![false; nx * ny];
        // All nodes fluid: the zero-gradient rule at both ends keeps an x-independent
        // field x-independent, as in an unbounded channel.
        let mut lat = Lattice::new(
            nx,
            ny,
            tau,
            vec![NodeKind::Fluid; nx * ny],
            links(nx, ny, &solid),
            |_, j| (amp * mode(j), 0.0),
        );
        let amplitude = |lat: &Lattice| {
            let num: f64 = (0..ny).map(|j| lat.moments(1, j).1 * mode(j)).sum();
            let den: f64 = (0..ny).map(|j| mode(j) * mode(j)).sum();
            num / den
        };
        // Let the initial non-equilibrium part relax for a few τ, then measure.
        for _ in 0..20 {
            lat.step();
        }
        let a0 = amplitude(&lat);
        let steps = 400;
        for _ in 0..steps {
            lat.step();
        }
        let a1 = amplitude(&lat);
        let nu_measured = (a0 / a1).ln() / (k * k * steps as f64);
        let nu = (tau - 0.5) / 3.0;
        assert!((nu_measured / nu - 1.0).abs() < 0.02, "ν measured {nu_measured}, expected {nu}");
    }

    #[test]
    fn direction_tables_are_consistent() {
        for q in 0..9 {
            assert_eq!(CX[OPPOSITE[q]], -CX[q]);
            assert_eq!(CY[OPPOSITE[q]], -CY[q]);
            assert_eq!(CX[MIRROR_Y[q]], CX[q]);
            assert_eq!(CY[MIRROR_Y[q]], -CY[q]);
        }
        assert!((W.iter().sum::<f64>() - 1.0).abs() < 1e-15);
    }
}
