use thiserror::Error;

/// Why a set of arrays does not form a valid [`super::Series`]. Each message says what is
/// wrong and where, so a user can fix the file rather than guess.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum FieldError {
    #[error("the {axis} axis has {len} point(s); at least 2 are needed to define a grid")]
    AxisTooShort { axis: &'static str, len: usize },
    #[error("the {axis} coordinate at index {index} is not a finite number ({value})")]
    NonFiniteCoordinate { axis: &'static str, index: usize, value: f64 },
    #[error(
        "the {axis} coordinates are not uniformly spaced: point {index} is at {value}, \
         expected {expected} for a spacing of {spacing} (tolerance {tolerance_percent}% of the spacing)"
    )]
    NonUniformAxis {
        axis: &'static str,
        index: usize,
        value: f64,
        expected: f64,
        spacing: f64,
        tolerance_percent: f64,
    },
    #[error("the {axis} coordinates repeat or do not change (spacing 0 at index {index})")]
    DegenerateAxis { axis: &'static str, index: usize },
    #[error("there are no snapshots (the time axis is empty)")]
    NoSnapshots,
    #[error("time {index} ({value}) is not a finite number")]
    NonFiniteTime { index: usize, value: f64 },
    #[error(
        "snapshot times must strictly increase: time {index} is {value}, the one before is {previous}"
    )]
    TimesNotIncreasing { index: usize, value: f64, previous: f64 },
    #[error("{name} has {got} values but {expected} were expected for shape {shape}")]
    ShapeMismatch { name: &'static str, got: usize, expected: usize, shape: String },
    #[error(
        "{component} is not finite ({value}) at snapshot {snapshot}, x index {i}, y index {j}, \
         and that cell is neither masked nor marked as a gap"
    )]
    NonFiniteValue { component: &'static str, value: f32, snapshot: usize, i: usize, j: usize },
    #[error("every cell is masked: there is no valid velocity data")]
    AllMasked,
    #[error("{0}")]
    Invalid(String),
}
