//! Butcher tableaux of the explicit Runge–Kutta methods, kept as data with their sources and
//! checked for consistency in the tests (Σbᵢ = 1, row sums of A equal cᵢ), and the one
//! explicit stage loop both integrators use.

use super::system::System;

/// An explicit Runge–Kutta method with `S` stages: strictly lower-triangular `a`, weights
/// `b`, nodes `c`, and (for embedded pairs) error weights `e = b − b̂`.
#[derive(Debug, Clone, Copy)]
pub struct Tableau<const S: usize> {
    pub a: [[f64; S]; S],
    pub b: [f64; S],
    pub c: [f64; S],
    pub e: [f64; S],
    /// Order of the solution the weights `b` produce.
    pub order: u32,
}

/// The classical fourth-order Runge–Kutta method (Kutta 1901, Z. Math. Phys. 46:435–453).
pub const RK4: Tableau<4> = Tableau {
    a: [[0.0, 0.0, 0.0, 0.0], [0.5, 0.0, 0.0, 0.0], [0.0, 0.5, 0.0, 0.0], [0.0, 0.0, 1.0, 0.0]],
    b: [1.0 / 6.0, 1.0 / 3.0, 1.0 / 3.0, 1.0 / 6.0],
    c: [0.0, 0.5, 0.5, 1.0],
    e: [0.0; 4],
    order: 4,
};

/// Dormand & Prince (1980, J. Comput. Appl. Math. 6:19–26), the 5(4) pair "RK5(4)7M":
/// seven stages, the fifth-order solution propagated (local extrapolation), the last stage
/// evaluated at the new point so it serves as the next step's first (FSAL).
pub const DOPRI54: Tableau<7> = Tableau {
    a: [
        [0.0; 7],
        [1.0 / 5.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        [3.0 / 40.0, 9.0 / 40.0, 0.0, 0.0, 0.0, 0.0, 0.0],
        [44.0 / 45.0, -56.0 / 15.0, 32.0 / 9.0, 0.0, 0.0, 0.0, 0.0],
        [19372.0 / 6561.0, -25360.0 / 2187.0, 64448.0 / 6561.0, -212.0 / 729.0, 0.0, 0.0, 0.0],
        [
            9017.0 / 3168.0,
            -355.0 / 33.0,
            46732.0 / 5247.0,
            49.0 / 176.0,
            -5103.0 / 18656.0,
            0.0,
            0.0,
        ],
        [35.0 / 384.0, 0.0, 500.0 / 1113.0, 125.0 / 192.0, -2187.0 / 6784.0, 11.0 / 84.0, 0.0],
    ],
    b: [35.0 / 384.0, 0.0, 500.0 / 1113.0, 125.0 / 192.0, -2187.0 / 6784.0, 11.0 / 84.0, 0.0],
    c: [0.0, 1.0 / 5.0, 3.0 / 10.0, 4.0 / 5.0, 8.0 / 9.0, 1.0, 1.0],
    // b − b̂ with the fourth-order weights b̂ = (5179/57600, 0, 7571/16695, 393/640,
    // −92097/339200, 187/2100, 1/40).
    e: [
        35.0 / 384.0 - 5179.0 / 57600.0,
        0.0,
        500.0 / 1113.0 - 7571.0 / 16695.0,
        125.0 / 192.0 - 393.0 / 640.0,
        -2187.0 / 6784.0 + 92097.0 / 339200.0,
        11.0 / 84.0 - 187.0 / 2100.0,
        -1.0 / 40.0,
    ],
    order: 5,
};

/// Evaluates the stages of one explicit step from `(t, y)` with step `h` into `k`.
/// `k0`, if given, is the derivative at `(t, y)` already known (FSAL) and is not
/// re-evaluated. Returns `false` if the field had no velocity at some stage point.
///
/// Zero tableau entries are skipped: with the tableau a constant, the test folds away and
/// no work is spent on them.
// Index loops mirror the tableau formulas kᵢ = f(t + cᵢh, y + h Σⱼ aᵢⱼ kⱼ).
#[allow(clippy::needless_range_loop)]
#[inline(always)]
pub fn stages<const N: usize, const S: usize, Sys: System<N>>(
    tab: &Tableau<S>,
    sys: &Sys,
    t: f64,
    h: f64,
    y: &[f64; N],
    k0: Option<[f64; N]>,
    k: &mut [[f64; N]; S],
) -> bool {
    for i in 0..S {
        if i == 0 {
            if let Some(d) = k0 {
                k[0] = d;
                continue;
            }
        }
        let mut yi = *y;
        for j in 0..i {
            let a = tab.a[i][j];
            if a != 0.0 {
                for n in 0..N {
                    yi[n] += h * a * k[j][n];
                }
            }
        }
        match sys.rhs(t + tab.c[i] * h, &yi) {
            Some(d) => k[i] = d,
            None => return false,
        }
    }
    true
}

/// y + h Σ wᵢ kᵢ over the stages with non-zero weight.
#[allow(clippy::needless_range_loop)]
#[inline(always)]
pub fn combine<const N: usize, const S: usize>(
    w: &[f64; S],
    h: f64,
    y: &[f64; N],
    k: &[[f64; N]; S],
) -> [f64; N] {
    let mut out = *y;
    for i in 0..S {
        if w[i] != 0.0 {
            for n in 0..N {
                out[n] += h * w[i] * k[i][n];
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Consistency conditions of a Runge–Kutta tableau (Hairer, Nørsett & Wanner 1993,
    /// Solving Ordinary Differential Equations I, §II.1): Σbᵢ = 1 and Σⱼ aᵢⱼ = cᵢ; the error
    /// weights of an embedded pair sum to 0 (both solutions consistent). Tolerances as in
    /// the tableau tests of scipy.integrate (rtol 1e-15 / 1e-14).
    fn check<const S: usize>(t: &Tableau<S>) {
        let sb: f64 = t.b.iter().sum();
        assert!((sb - 1.0).abs() < 1e-15, "Σb = {sb}");
        for i in 0..S {
            let row: f64 = t.a[i].iter().sum();
            assert!((row - t.c[i]).abs() < 1e-14, "row {i}: {row} vs c = {}", t.c[i]);
            for j in i..S {
                assert_eq!(t.a[i][j], 0.0, "a[{i}][{j}] must be 0 for an explicit method");
            }
        }
        let se: f64 = t.e.iter().sum();
        assert!(se.abs() < 1e-15, "Σe = {se}");
    }

    #[test]
    fn tableaux_are_consistent() {
        check(&RK4);
        check(&DOPRI54);
        // FSAL: the last row of A equals b, and c₇ = 1 (Dormand & Prince 1980).
        assert_eq!(DOPRI54.a[6], DOPRI54.b);
        assert_eq!(DOPRI54.c[6], 1.0);
        // Order conditions up to order 4 for b (Hairer et al. 1993, Table II.2.1):
        // Σbc = 1/2, Σbc² = 1/3, ΣbAc = 1/6, Σbc³ = 1/4.
        fn orders<const S: usize>(t: &Tableau<S>) {
            let c = t.c;
            let bc: f64 = (0..S).map(|i| t.b[i] * c[i]).sum();
            let bc2: f64 = (0..S).map(|i| t.b[i] * c[i] * c[i]).sum();
            let bc3: f64 = (0..S).map(|i| t.b[i] * c[i].powi(3)).sum();
            let bac: f64 =
                (0..S).map(|i| t.b[i] * (0..S).map(|j| t.a[i][j] * c[j]).sum::<f64>()).sum();
            for (got, want) in [(bc, 0.5), (bc2, 1.0 / 3.0), (bac, 1.0 / 6.0), (bc3, 0.25)] {
                assert!((got - want).abs() < 1e-14, "{got} vs {want}");
            }
        }
        orders(&RK4);
        orders(&DOPRI54);
    }
}
