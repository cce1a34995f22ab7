//! The synthetic POD benchmark set, shared by crate/benches/modes.rs (criterion) and
//! crate/examples/modes_bench.rs (native and wasm timing), so both decompose the same numbers.

use sillage::field::{Series, SeriesParts};

/// The synthetic set: 40 travelling waves on the unit square,
/// u = Σ a_j sin(k_j·x − ω_j t − φ_j), v = Σ a_j cos(k_j·x − ω_j t − φ_j + 0.5), a_j = e^{−j/8},
/// k_j = (1 + j, 2 + j/2), ω_j = 3 + 1.7 j, φ_j = 0.37 j, Δt = 0.01; each wave's term is
/// rounded to f32 and summed in f32, wave by wave. The angle sums are expanded
/// (sin(P − c) = sin P cos c − cos P sin c, P = k_j·x), so the set costs two multiply-adds
/// per value and wave instead of two sines: a second natively, not a minute.
pub fn synthetic(nx: usize, ny: usize, nt: usize) -> Series {
    let x: Vec<f64> = (0..nx).map(|i| i as f64 / (nx - 1) as f64).collect();
    let y: Vec<f64> = (0..ny).map(|j| j as f64 / (ny - 1) as f64).collect();
    let t: Vec<f64> = (0..nt).map(|k| k as f64 * 0.01).collect();
    let plane = nx * ny;
    let (mut u, mut v) = (vec![0.0f32; nt * plane], vec![0.0f32; nt * plane]);
    let (mut sp, mut cp, mut sq, mut cq) =
        (vec![0.0; plane], vec![0.0; plane], vec![0.0; plane], vec![0.0; plane]);
    for j in 0..40 {
        let jf = j as f64;
        let a = (-jf / 8.0).exp();
        let (kx, ky) = (1.0 + jf, 2.0 + 0.5 * jf);
        let om = 3.0 + 1.7 * jf;
        let ph = 0.37 * jf;
        for (jj, &yj) in y.iter().enumerate() {
            for (i, &xi) in x.iter().enumerate() {
                let p = kx * xi + ky * yj;
                let c = jj * nx + i;
                (sp[c], cp[c]) = p.sin_cos();
                (sq[c], cq[c]) = (p + 0.5).sin_cos();
            }
        }
        for (k, &tk) in t.iter().enumerate() {
            let (sc, cc) = (om * tk + ph).sin_cos();
            let (su, cu) = (a * cc, a * sc);
            let (uk, vk) = (&mut u[k * plane..(k + 1) * plane], &mut v[k * plane..(k + 1) * plane]);
            for c in 0..plane {
                // sin(P − c) and cos(P + 0.5 − c).
                uk[c] += (sp[c] * su - cp[c] * cu) as f32;
                vk[c] += (cq[c] * su + sq[c] * cu) as f32;
            }
        }
    }
    Series::from_parts(SeriesParts { x, y, t, u, v, ..Default::default() })
        .expect("synthetic series is valid")
}
