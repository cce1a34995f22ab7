//! Velocity evaluation on gridded data: exactness on the polynomials each interpolant
//! reproduces, gradient consistent with the interpolant, masks, gaps and edges.

mod lagrangian_common;

use lagrangian_common::assert_close;
use sillage::field::{Series, SeriesParts};
use sillage::lagrangian::analytic::linspace;
use sillage::lagrangian::{GriddedField, SpaceInterp, TimeInterp, VelocityField};

/// A series of u = fu(x, y, t), v = fv(x, y, t) on the given axes.
fn series(
    x: &[f64],
    y: &[f64],
    t: &[f64],
    fu: impl Fn(f64, f64, f64) -> f64,
    fv: impl Fn(f64, f64, f64) -> f64,
    mask: Option<Vec<bool>>,
) -> Series {
    let mut u = Vec::new();
    let mut v = Vec::new();
    for &tk in t {
        for &yj in y {
            for &xi in x {
                u.push(fu(xi, yj, tk) as f32);
                v.push(fv(xi, yj, tk) as f32);
            }
        }
    }
    Series::from_parts(SeriesParts {
        x: x.to_vec(),
        y: y.to_vec(),
        t: t.to_vec(),
        u,
        v,
        mask,
        ..Default::default()
    })
    .unwrap()
}

/// Points spread over the window, including edges and corners.
fn probe_points() -> Vec<[f64; 2]> {
    let mut p = vec![[0.0, 0.0], [2.0, 1.0], [2.0, 0.0], [0.0, 1.0], [1.0, 0.5]];
    for k in 0..40 {
        let a = k as f64 * 0.618_033_988_75;
        p.push([2.0 * a.fract(), (a * 1.37).fract()]);
    }
    p
}

/// Bilinear interpolation reproduces functions linear in x and in y (a + bx + cy + dxy)
/// exactly, gradient included [D]; values stored as f32, hence the 1e-6 tolerance.
#[test]
fn bilinear_exact_on_bilinear_functions() {
    let (x, y) = (linspace(0.0, 2.0, 9), linspace(0.0, 1.0, 6));
    let fu = |x: f64, y: f64, _t: f64| 0.3 + 0.5 * x - 0.2 * y + 0.7 * x * y;
    let fv = |x: f64, y: f64, _t: f64| -0.1 + 0.4 * x * y;
    let s = series(&x, &y, &[0.0], fu, fv, None);
    let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    for p in probe_points() {
        let (u, g) = f.velocity_gradient(p, 3.0).unwrap();
        let want = [
            fu(p[0], p[1], 0.0),
            fv(p[0], p[1], 0.0),
            0.5 + 0.7 * p[1],
            -0.2 + 0.7 * p[0],
            0.4 * p[1],
            0.4 * p[0],
        ];
        assert_close(
            "bilinear u, v, ∇u",
            &[u[0], u[1], g[0][0], g[0][1], g[1][0], g[1][1]],
            &want,
            0.0,
            1e-6,
        );
    }
    assert!(f.velocity([2.01, 0.5], 0.0).is_none());
    assert!(f.velocity([1.0, -0.01], 0.0).is_none());
}

/// Keys' cubic convolution (a = −1/2) with his boundary rule reproduces polynomials of
/// degree ≤ 2 in each variable exactly, up to the window edge (Keys 1981, IEEE Trans.
/// Acoust. Speech Signal Process. 29:1153–1160); its gradient is the interpolant's.
#[test]
fn cubic_exact_on_quadratics() {
    let (x, y) = (linspace(0.0, 2.0, 11), linspace(0.0, 1.0, 7));
    let fu = |x: f64, y: f64, _t: f64| 0.2 + 0.3 * x * x - 0.4 * x * y + 0.5 * y * y;
    let fv = |x: f64, y: f64, _t: f64| x * x * y - 0.3 * y;
    let s = series(&x, &y, &[0.0], fu, fv, None);
    let f = GriddedField::new(&s, SpaceInterp::Cubic, TimeInterp::Linear);
    assert_eq!(f.space(), SpaceInterp::Cubic);
    for p in probe_points() {
        let (u, g) = f.velocity_gradient(p, 0.0).unwrap();
        let want = [
            fu(p[0], p[1], 0.0),
            fv(p[0], p[1], 0.0),
            0.6 * p[0] - 0.4 * p[1],
            -0.4 * p[0] + p[1],
            2.0 * p[0] * p[1],
            p[0] * p[0] - 0.3,
        ];
        assert_close(
            "cubic u, v, ∇u",
            &[u[0], u[1], g[0][0], g[0][1], g[1][0], g[1][1]],
            &want,
            0.0,
            1e-5,
        );
    }
}

/// The gradient returned is the derivative of the velocity returned, for both spatial
/// interpolants and both time interpolants, on a non-polynomial field (central differences
/// inside a cell; common practice derivative check).
#[test]
fn gradient_is_the_interpolants_derivative() {
    let (x, y, t) = (linspace(0.0, 2.0, 13), linspace(0.0, 1.0, 8), linspace(0.0, 3.0, 7));
    let fu = |x: f64, y: f64, t: f64| (1.3 * x + 0.4 * t).sin() * (2.0 * y).cos();
    let fv = |x: f64, y: f64, t: f64| (0.7 * x * y - 0.3 * t).cos();
    let s = series(&x, &y, &t, fu, fv, None);
    let h = 1e-7;
    for space in [SpaceInterp::Bilinear, SpaceInterp::Cubic] {
        for time in [TimeInterp::Linear, TimeInterp::Hermite] {
            let f = GriddedField::new(&s, space, time);
            let inside = |p: &[f64; 2]| p[0] > 1e-3 && p[0] < 1.999 && p[1] > 1e-3 && p[1] < 0.999;
            for p in probe_points().into_iter().skip(5).filter(inside) {
                let tt = 1.1 + 0.3 * p[0];
                let (_, g) = f.velocity_gradient(p, tt).unwrap();
                let d = |q: [f64; 2]| f.velocity(q, tt).unwrap();
                let (xp, xm) = (d([p[0] + h, p[1]]), d([p[0] - h, p[1]]));
                let (yp, ym) = (d([p[0], p[1] + h]), d([p[0], p[1] - h]));
                let fd = [
                    (xp[0] - xm[0]) / (2.0 * h),
                    (yp[0] - ym[0]) / (2.0 * h),
                    (xp[1] - xm[1]) / (2.0 * h),
                    (yp[1] - ym[1]) / (2.0 * h),
                ];
                assert_close(
                    &format!("{space:?}/{time:?} gradient at {p:?}"),
                    &[g[0][0], g[0][1], g[1][0], g[1][1]],
                    &fd,
                    1e-6,
                    1e-6,
                );
            }
        }
    }
}

/// Linear-in-time interpolation is exact for fields linear in t; Hermite for quadratics in
/// t on uniform snapshots away from the ends (centred-difference slopes are exact there;
/// common practice). Snapshot times themselves are reproduced exactly.
#[test]
fn time_interpolation_exactness() {
    let (x, y, t) = (linspace(0.0, 2.0, 5), linspace(0.0, 1.0, 4), linspace(0.0, 5.0, 11));
    let s = series(&x, &y, &t, |x, _, t| x + 0.5 * t, |_, _, t| 0.2 * t * t - t, None);
    let lin = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let her = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Hermite);
    for &tt in &[0.75, 1.3, 2.5, 3.9, 4.4] {
        let p = [0.7, 0.4];
        let u = lin.velocity(p, tt).unwrap();
        assert!((u[0] - (0.7 + 0.5 * tt)).abs() < 1e-6);
        let w = her.velocity(p, tt).unwrap();
        assert!((w[1] - (0.2 * tt * tt - tt)).abs() < 1e-6, "t = {tt}: {}", w[1]);
    }
    assert!(lin.velocity([0.5, 0.5], 5.01).is_none());
    assert!(lin.velocity([0.5, 0.5], -0.01).is_none());
    assert_eq!(lin.time_range(), Some((0.0, 5.0)));
}

/// A masked node makes the four bilinear cells around it undefined and nothing else; with
/// cubic, cells whose 4×4 stencil touches it fall back to bilinear (same values as the
/// bilinear field there) and the rest stay cubic. A one-snapshot series is steady.
#[test]
fn masks_and_fallback() {
    let (x, y) = (linspace(0.0, 2.0, 9), linspace(0.0, 1.0, 9));
    let nx = x.len();
    let mut mask = vec![false; nx * y.len()];
    mask[4 * nx + 4] = true; // node (1.0, 0.5)
    let fu = |x: f64, y: f64, _t: f64| (x * 2.0).sin() + y;
    let s = series(&x, &y, &[0.0], fu, |_, _, _| 0.0, Some(mask));
    let bl = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let cu = GriddedField::new(&s, SpaceInterp::Cubic, TimeInterp::Linear);
    for p in [[0.9, 0.45], [1.1, 0.45], [0.9, 0.55], [1.1, 0.55]] {
        assert!(bl.velocity(p, 0.0).is_none(), "{p:?} touches the masked node");
        assert!(cu.velocity(p, 0.0).is_none());
    }
    // Next ring: bilinear defined, cubic falls back to it.
    let p = [1.3, 0.55];
    assert_eq!(bl.velocity(p, 0.0), cu.velocity(p, 0.0));
    assert!(bl.velocity(p, 0.0).is_some());
    // Far away: cubic differs from bilinear (the field is not bilinear) and is closer.
    let q = [0.3, 0.1];
    let (b, c) = (bl.velocity(q, 0.0).unwrap(), cu.velocity(q, 0.0).unwrap());
    let exact = fu(q[0], q[1], 0.0);
    assert!((c[0] - exact).abs() < (b[0] - exact).abs());
    // Steady: any time is fine.
    assert!(bl.velocity(q, 1e6).is_some());
    assert_eq!(bl.time_range(), None);
}

/// A missing vector (gap) in one snapshot makes the cells around it undefined only while
/// that snapshot is in the time stencil (DESIGN: treat a gap like a masked cell).
#[test]
fn gaps_act_like_masks_in_their_snapshot() {
    let (x, y, t) = (linspace(0.0, 2.0, 5), linspace(0.0, 1.0, 5), linspace(0.0, 4.0, 5));
    let n = 25;
    let mut u = vec![1.0f32; n * 5];
    u[2 * n + 2 * 5 + 2] = f32::NAN; // snapshot 2, node (1.0, 0.5)
    let s = Series::from_parts(SeriesParts {
        x,
        y,
        t,
        u,
        v: vec![0.0; n * 5],
        nan_is_gap: true,
        ..Default::default()
    })
    .unwrap();
    assert_eq!(s.gap_count(), 1);
    let f = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Linear);
    let p = [0.9, 0.45];
    assert!(f.velocity(p, 0.5).is_some());
    assert!(f.velocity(p, 1.5).is_none()); // stencil snapshots 1, 2
    assert!(f.velocity(p, 2.5).is_none()); // 2, 3
    assert!(f.velocity(p, 3.5).is_some());
    let h = GriddedField::new(&s, SpaceInterp::Bilinear, TimeInterp::Hermite);
    // Hermite on [0, 1] uses snapshots 0, 1, 2 (slope at t = 1), so the gap reaches it.
    assert!(h.velocity(p, 0.5).is_none());
}
