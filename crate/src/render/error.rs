use thiserror::Error;

/// Why a display request cannot be met. Messages name the offending value and the valid
/// choices, since they reach the page and the command line as they are.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum RenderError {
    #[error("unknown field '{name}' (available: {available})")]
    UnknownQuantity { name: String, available: String },
    #[error("{0}")]
    UnknownColormap(String),
    #[error(
        "snapshot {index} does not exist: the series has {nt} snapshot(s), numbered 0 to {}",
        nt.saturating_sub(1)
    )]
    SnapshotOutOfRange { index: usize, nt: usize },
    #[error(
        "a colour range needs two finite numbers with low < high (got low = {lo}, high = {hi})"
    )]
    BadRange { lo: f64, hi: f64 },
    #[error("at least {min} ticks must be asked for (got {got})")]
    TooFewTicks { min: usize, got: usize },
    #[error("{0}")]
    Invalid(String),
}
