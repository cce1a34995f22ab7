//! Eulerian fields derived from one snapshot: speed and vorticity.

use super::Series;

/// Speed |u| of snapshot `k`, `(ny, nx)`; `0` at masked cells and gaps.
pub fn speed(s: &Series, k: usize) -> Vec<f32> {
    s.u_at(k).iter().zip(s.v_at(k)).map(|(u, v)| u.hypot(*v)).collect()
}

/// Derivative of `f` along one axis at a node, from the valid neighbours: central where both
/// exist, one-sided where only one does, zero where neither does (an isolated node).
#[inline]
fn diff(
    f: &[f32],
    valid: &dyn Fn(usize) -> bool,
    c: usize,
    prev: Option<usize>,
    next: Option<usize>,
    h: f64,
) -> f64 {
    let p = prev.filter(|&p| valid(p));
    let n = next.filter(|&n| valid(n));
    match (p, n) {
        (Some(p), Some(n)) => (f[n] as f64 - f[p] as f64) / (2.0 * h),
        (Some(p), None) => (f[c] as f64 - f[p] as f64) / h,
        (None, Some(n)) => (f[n] as f64 - f[c] as f64) / h,
        (None, None) => 0.0,
    }
}

/// Vorticity ω = ∂v/∂x − ∂u/∂y of snapshot `k`, `(ny, nx)`, in 1/time.
///
/// Second-order central differences in the interior; first-order one-sided differences at
/// the window edge and next to masked cells or gaps, so no difference ever reaches into a
/// cell without data (common practice for PIV vorticity). Masked cells and gaps get 0.
pub fn vorticity(s: &Series, k: usize) -> Vec<f32> {
    let (nx, ny) = (s.nx(), s.ny());
    let (u, v) = (s.u_at(k), s.v_at(k));
    let mask = s.mask();
    let gaps = s.gaps_at(k);
    let valid = |c: usize| !mask[c] && gaps.is_none_or(|g| !g[c]);
    let (hx, hy) = (s.grid().x.step, s.grid().y.step);
    let mut out = vec![0.0f32; nx * ny];
    for j in 0..ny {
        for i in 0..nx {
            let c = j * nx + i;
            if !valid(c) {
                continue;
            }
            let left = (i > 0).then(|| c - 1);
            let right = (i + 1 < nx).then(|| c + 1);
            let down = (j > 0).then(|| c - nx);
            let up = (j + 1 < ny).then(|| c + nx);
            let dvdx = diff(v, &valid, c, left, right, hx);
            let dudy = diff(u, &valid, c, down, up, hy);
            out[c] = (dvdx - dudy) as f32;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;

    /// Solid-body rotation u = (−Ωy, Ωx) has vorticity 2Ω everywhere [D: definition];
    /// finite differences are exact on a linear field, edges and holes included.
    #[test]
    fn solid_body_rotation_has_vorticity_two_omega() {
        let (nx, ny, omega) = (7usize, 5usize, 0.3f64);
        let x: Vec<f64> = (0..nx).map(|i| -1.0 + 0.5 * i as f64).collect();
        let y: Vec<f64> = (0..ny).map(|j| -0.8 + 0.4 * j as f64).collect();
        let mut u = vec![0.0f32; nx * ny];
        let mut v = vec![0.0f32; nx * ny];
        for j in 0..ny {
            for i in 0..nx {
                u[j * nx + i] = (-omega * y[j]) as f32;
                v[j * nx + i] = (omega * x[i]) as f32;
            }
        }
        let mut mask = vec![false; nx * ny];
        mask[2 * nx + 3] = true;
        let s = Series::from_parts(SeriesParts {
            x,
            y,
            t: vec![0.0],
            u,
            v,
            mask: Some(mask),
            ..Default::default()
        })
        .unwrap();
        let w = vorticity(&s, 0);
        for (c, &wc) in w.iter().enumerate() {
            let expect = if c == 2 * nx + 3 { 0.0 } else { 2.0 * omega };
            assert!((wc as f64 - expect).abs() < 1e-6, "cell {c}: {wc}");
        }
        let sp = speed(&s, 0);
        assert!((sp[0] as f64 - omega * (1.0f64 + 0.64).sqrt()).abs() < 1e-6);
    }
}
