//! Helpers shared by the lagrangian_* integration tests.
#![allow(dead_code)]

/// Asserts |got − want| ≤ atol + rtol·|want| for every element, reporting the worst one.
#[track_caller]
pub fn assert_close(what: &str, got: &[f64], want: &[f64], rtol: f64, atol: f64) {
    assert_eq!(got.len(), want.len(), "{what}: lengths differ");
    let mut worst: Option<(usize, f64)> = None;
    for (i, (&g, &w)) in got.iter().zip(want).enumerate() {
        let excess = (g - w).abs() - (atol + rtol * w.abs());
        // NaN counts as a failure.
        if (excess > 0.0 || excess.is_nan()) && worst.is_none_or(|(_, e)| excess > e) {
            worst = Some((i, excess));
        }
    }
    if let Some((i, _)) = worst {
        panic!(
            "{what}: element {i} is {} but should be {} (rtol {rtol}, atol {atol})",
            got[i], want[i]
        );
    }
}
