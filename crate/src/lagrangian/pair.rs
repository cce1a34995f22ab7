//! Two f64 lanes, (u, v), computed together: the bilinear value and gradient of a velocity
//! sample, on a lockstep slice ([`super::lockstep`], whose nodes hold u and v side by side)
//! and in the gridded field's own bilinear × linear samples ([`super::gridded`], whose
//! corners are blended in time as pairs).
//!
//! Why by hand: the compiler does not pair the two components' arithmetic on its own
//! (measured: the flow map's samples compiled to scalar loads and products), and the two
//! lanes halve the loads and the products of a sample. Each lane does exactly the IEEE
//! operations of the scalar expression it replaces, in the same order (no fused
//! multiply–add), so results stay bit-identical to the field's own samples; the tests of
//! `lockstep` check that. SSE2 (part of every x86-64 processor) natively, simd128 in the
//! page's WebAssembly build (`.cargo/config.toml`), plain scalars anywhere else.

use super::velocity::Mat2;

#[cfg(target_arch = "x86_64")]
mod lanes {
    use std::arch::x86_64::*;

    #[derive(Clone, Copy)]
    pub struct Pair(__m128d);

    // The comparisons and clamps serve `locate_in_pairs`, which the WebAssembly build uses
    // (and the tests check against the scalar locator natively).
    #[cfg_attr(not(test), allow(dead_code))]
    impl Pair {
        #[inline(always)]
        pub fn load(a: &[f64; 2]) -> Pair {
            // SAFETY: SSE2 is part of x86-64; the load reads the two values of `a`.
            unsafe { Pair(_mm_loadu_pd(a.as_ptr())) }
        }
        #[inline(always)]
        pub fn splat(x: f64) -> Pair {
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_set1_pd(x)) }
        }
        #[inline(always)]
        pub fn add(self, o: Pair) -> Pair {
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_add_pd(self.0, o.0)) }
        }
        #[inline(always)]
        pub fn sub(self, o: Pair) -> Pair {
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_sub_pd(self.0, o.0)) }
        }
        #[inline(always)]
        pub fn mul(self, o: Pair) -> Pair {
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_mul_pd(self.0, o.0)) }
        }
        #[inline(always)]
        pub fn get(self) -> [f64; 2] {
            let mut out = [0.0; 2];
            // SAFETY: SSE2 is part of x86-64; the store writes the two values of `out`.
            unsafe { _mm_storeu_pd(out.as_mut_ptr(), self.0) };
            out
        }
        #[inline(always)]
        pub fn non_negative(self) -> Pair {
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_and_pd(_mm_cmpge_pd(self.0, _mm_setzero_pd()), self.0)) }
        }
        #[inline(always)]
        pub fn at_most(self, max: Pair) -> Pair {
            // minpd: self < max ? self : max.
            // SAFETY: SSE2 is part of x86-64.
            unsafe { Pair(_mm_min_pd(self.0, max.0)) }
        }
        #[inline(always)]
        pub fn within(self, lo: Pair, hi: Pair) -> bool {
            // SAFETY: SSE2 is part of x86-64.
            unsafe {
                let both = _mm_and_pd(_mm_cmpge_pd(self.0, lo.0), _mm_cmple_pd(self.0, hi.0));
                _mm_movemask_pd(both) == 3
            }
        }
        #[inline(always)]
        pub fn floor_in_range(self) -> Pair {
            // SAFETY: SSE2 is part of x86-64; the lanes fit in i32 (the caller's contract).
            unsafe { Pair(_mm_cvtepi32_pd(_mm_cvttpd_epi32(self.0))) }
        }
    }
}

#[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
mod lanes {
    use std::arch::wasm32::*;

    #[derive(Clone, Copy)]
    pub struct Pair(v128);

    impl Pair {
        #[inline(always)]
        pub fn load(a: &[f64; 2]) -> Pair {
            Pair(f64x2(a[0], a[1]))
        }
        #[inline(always)]
        pub fn splat(x: f64) -> Pair {
            Pair(f64x2_splat(x))
        }
        #[inline(always)]
        pub fn add(self, o: Pair) -> Pair {
            Pair(f64x2_add(self.0, o.0))
        }
        #[inline(always)]
        pub fn sub(self, o: Pair) -> Pair {
            Pair(f64x2_sub(self.0, o.0))
        }
        #[inline(always)]
        pub fn mul(self, o: Pair) -> Pair {
            Pair(f64x2_mul(self.0, o.0))
        }
        #[inline(always)]
        pub fn get(self) -> [f64; 2] {
            [f64x2_extract_lane::<0>(self.0), f64x2_extract_lane::<1>(self.0)]
        }
        #[inline(always)]
        pub fn non_negative(self) -> Pair {
            Pair(v128_and(f64x2_ge(self.0, f64x2_splat(0.0)), self.0))
        }
        #[inline(always)]
        pub fn at_most(self, max: Pair) -> Pair {
            // pmin(a, b) = b < a ? b : a: one minpd, unlike f64x2_min's NaN handling.
            Pair(f64x2_pmin(self.0, max.0))
        }
        #[inline(always)]
        pub fn within(self, lo: Pair, hi: Pair) -> bool {
            i64x2_bitmask(v128_and(f64x2_ge(self.0, lo.0), f64x2_le(self.0, hi.0))) == 3
        }
        #[inline(always)]
        pub fn floor_in_range(self) -> Pair {
            Pair(f64x2_floor(self.0))
        }
    }
}

#[cfg(not(any(target_arch = "x86_64", all(target_arch = "wasm32", target_feature = "simd128"))))]
mod lanes {
    #[derive(Clone, Copy)]
    pub struct Pair([f64; 2]);

    #[cfg_attr(not(test), allow(dead_code))]
    impl Pair {
        #[inline(always)]
        pub fn load(a: &[f64; 2]) -> Pair {
            Pair(*a)
        }
        #[inline(always)]
        pub fn splat(x: f64) -> Pair {
            Pair([x, x])
        }
        #[inline(always)]
        pub fn add(self, o: Pair) -> Pair {
            Pair([self.0[0] + o.0[0], self.0[1] + o.0[1]])
        }
        #[inline(always)]
        pub fn sub(self, o: Pair) -> Pair {
            Pair([self.0[0] - o.0[0], self.0[1] - o.0[1]])
        }
        #[inline(always)]
        pub fn mul(self, o: Pair) -> Pair {
            Pair([self.0[0] * o.0[0], self.0[1] * o.0[1]])
        }
        #[inline(always)]
        pub fn get(self) -> [f64; 2] {
            self.0
        }
        #[inline(always)]
        pub fn non_negative(self) -> Pair {
            Pair(self.0.map(|v| if v >= 0.0 { v } else { 0.0 }))
        }
        #[inline(always)]
        pub fn at_most(self, max: Pair) -> Pair {
            Pair([0, 1].map(|i| if self.0[i] < max.0[i] { self.0[i] } else { max.0[i] }))
        }
        #[inline(always)]
        pub fn within(self, lo: Pair, hi: Pair) -> bool {
            (0..2).all(|i| self.0[i] >= lo.0[i] && self.0[i] <= hi.0[i])
        }
        #[inline(always)]
        pub fn floor_in_range(self) -> Pair {
            Pair(self.0.map(|v| v as i32 as f64))
        }
    }
}

pub(super) use lanes::Pair;

// What the lane operations without a doc comment above do, on every backend:
// - `non_negative`: per lane `v >= 0 ? v : +0`: −0 stays, NaN becomes +0 (one compare and
//   one mask, no branch).
// - `at_most(max)`: per lane `v < max ? v : max` for `v` not NaN, which is `min(v, max)`
//   with the value of `max` when they are equal (minpd natively, pmin in wasm: one
//   instruction each, where `f64::min`'s NaN rules cost a branch per lane).
// - `within(lo, hi)`: both lanes in `[lo, hi]` (false for NaN).
// - `floor_in_range`: ⌊v⌋ per lane for `v` in [0, i32::MAX] (truncation there), exact.

impl Pair {
    /// The pair (a, b).
    #[inline(always)]
    pub fn new(a: f64, b: f64) -> Pair {
        Pair::load(&[a, b])
    }
}

/// The four corners of a cell as pairs.
#[inline(always)]
pub(super) fn pairs(c: &[[f64; 2]; 4]) -> [Pair; 4] {
    [Pair::load(&c[0]), Pair::load(&c[1]), Pair::load(&c[2]), Pair::load(&c[3])]
}

/// Bilinear (u, v) from the corners: per lane the field's expression
/// (1 − sy)((1 − sx)c₀ + sx c₁) + sy((1 − sx)c₂ + sx c₃).
#[inline(always)]
pub(super) fn lerp(c: &[Pair; 4], sx: f64, sy: f64) -> [f64; 2] {
    let (ax, bx) = (Pair::splat(1.0 - sx), Pair::splat(sx));
    let (ay, by) = (Pair::splat(1.0 - sy), Pair::splat(sy));
    let low = ax.mul(c[0]).add(bx.mul(c[1]));
    let high = ax.mul(c[2]).add(bx.mul(c[3]));
    ay.mul(low).add(by.mul(high)).get()
}

/// The Jacobian [[∂u/∂x, ∂u/∂y], [∂v/∂x, ∂v/∂y]] from the corners: per lane the field's
/// expressions ((1 − sy)(c₁ − c₀) + sy(c₃ − c₂))/Δx and ((1 − sx)(c₂ − c₀) + sx(c₃ − c₁))/Δy.
#[inline(always)]
pub(super) fn gradient(c: &[Pair; 4], sx: f64, sy: f64, inv_dx: f64, inv_dy: f64) -> Mat2 {
    let (ax, bx) = (Pair::splat(1.0 - sx), Pair::splat(sx));
    let (ay, by) = (Pair::splat(1.0 - sy), Pair::splat(sy));
    let dx = ay.mul(c[1].sub(c[0])).add(by.mul(c[3].sub(c[2]))).mul(Pair::splat(inv_dx)).get();
    let dy = ax.mul(c[2].sub(c[0])).add(bx.mul(c[3].sub(c[1]))).mul(Pair::splat(inv_dy)).get();
    [[dx[0], dy[0]], [dx[1], dy[1]]]
}
