//! Errors of the modal decompositions and selections: bad user input or a numerical
//! failure, each with a message a person can act on.

use thiserror::Error;

#[derive(Debug, Error, Clone, PartialEq)]
pub enum ModesError {
    #[error(
        "the series has {count} missing vectors; modal decompositions need complete snapshots: \
         run `clean` first (it fills missing vectors) or mask the cells"
    )]
    MissingVectors { count: usize },
    #[error("{method} needs at least {needed} snapshots, the series has {got}")]
    TooFewSnapshots { method: &'static str, needed: usize, got: usize },
    #[error("{method} needs uniformly spaced snapshot times: step {index} is {step} but the first is {first}")]
    UnevenTimes { method: &'static str, index: usize, step: f64, first: f64 },
    #[error("invalid option {name}: {rule}")]
    BadOption { name: &'static str, rule: String },
    #[error("the {what} did not converge")]
    NoConvergence { what: &'static str },
    #[error("the data have no fluctuation energy (every snapshot equals the mean)")]
    NoEnergy,
    #[error("selection '{text}': {reason} (at character {at})")]
    Syntax { text: String, at: usize, reason: String },
    #[error("selection: {0}")]
    Selection(String),
    #[error("the decomposition sent by the compute worker cannot be read: {0}")]
    Transfer(String),
}
