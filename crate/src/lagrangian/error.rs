use thiserror::Error;

/// Why a transport computation cannot start. Each message names the option or the value at
/// fault and what would be acceptable, so a user can correct the call instead of guessing.
///
/// Tracers that leave the data or hit a masked cell are not errors: they are expected
/// outcomes, reported per tracer in the result (status and time actually integrated).
#[derive(Debug, Error, Clone, PartialEq)]
pub enum LagrangianError {
    #[error("the horizon must be a finite, non-zero time (got {0}); use a negative value for backward time")]
    BadHorizon(f64),
    #[error("the start time t0 must be a finite number (got {0})")]
    BadStartTime(f64),
    #[error(
        "the integration from t0 = {t0} over a horizon of {horizon} needs velocity data from \
         t = {need_from} to t = {need_to}, but the data cover t = {have_from} to t = {have_to}"
    )]
    OutsideTimeRange {
        t0: f64,
        horizon: f64,
        need_from: f64,
        need_to: f64,
        have_from: f64,
        have_to: f64,
    },
    #[error("{name} must be a finite number greater than 0 (got {value})")]
    NotPositive { name: &'static str, value: f64 },
    #[error("the tracer grid needs at least 2 nodes along {axis} (got {n})")]
    TracerGridTooSmall { axis: &'static str, n: usize },
    #[error(
        "the seeding rectangle is empty or not finite: x from {x0} to {x1}, y from {y0} to {y1}"
    )]
    BadRectangle { x0: f64, x1: f64, y0: f64, y1: f64 },
    #[error(
        "the velocity field has no spatial window (an analytic field is defined everywhere): \
         give the seeding rectangle explicitly"
    )]
    NoWindow,
    #[error("row range {j0}..{j1} is not inside the tracer grid's {ny} rows")]
    BadRowRange { j0: usize, j1: usize, ny: usize },
    #[error("{0}")]
    Invalid(String),
}
