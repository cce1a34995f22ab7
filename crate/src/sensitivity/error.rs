use crate::lagrangian::LagrangianError;
use crate::modes::ModesError;
use thiserror::Error;

/// Why a sensitivity computation cannot start. Messages name the option at fault and what
/// would be acceptable.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum SensitivityError {
    #[error(transparent)]
    Transport(#[from] LagrangianError),
    #[error(transparent)]
    Modes(#[from] ModesError),
    #[error(
        "sensitivity needs the fixed-step RK4 integrator: its equal steps are the quadrature \
         nodes of MS (choose RK4 and a step)"
    )]
    NeedsFixedStep,
    #[error(
        "the reference speed g_ref must be a finite number greater than 0 (got {0}); with \
         the default (RMS of |g|) this means the perturbation is zero everywhere in the window"
    )]
    BadReference(f64),
    #[error("the perturbation amplitude epsilon must be a finite number greater than 0 (got {0})")]
    BadEpsilon(f64),
    #[error("row range {j0}..{j1} is not inside the tracer grid's {ny} rows")]
    BadRowRange { j0: usize, j1: usize, ny: usize },
    #[error("no row ranges to join, or ranges that do not follow each other on one grid")]
    NoRows,
}
