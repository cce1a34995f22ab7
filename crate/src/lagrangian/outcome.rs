//! What one trajectory's integration ended with: an expected outcome, not an error.

use serde::{Deserialize, Serialize};

/// How a trajectory ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Stop {
    /// Integrated over the whole horizon.
    Complete,
    /// Met a point without velocity (window edge, masked cell, gap) and stopped there; the
    /// state is the last one reached, `t` the time it was reached at.
    Exited,
    /// The adaptive integrator used its step budget without finishing (a stiff or
    /// discontinuous field, or a tolerance too tight for f64).
    Failed,
}

/// End state of one trajectory.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Outcome<const N: usize> {
    pub y: [f64; N],
    /// Time reached (equal to t₀ + T when complete).
    pub t: f64,
    pub stop: Stop,
    /// Right-hand-side evaluations spent.
    pub rhs_calls: u32,
    /// Steps rejected by the error control (adaptive integration only).
    pub rejected: u32,
}
