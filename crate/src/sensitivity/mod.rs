//! Model sensitivity and mode sensitivity of Lagrangian transport: how far the trajectories
//! of a model flow f move, to first order, when the flow is f + εg, and what that does to the
//! FTLE field (METHODS.md §2).
//!
//! Kaszás & Haller (2020, Chaos 30:093132) bound the deviation of a model trajectory x from
//! the true one y = x + εξ + O(ε²), where dξ/dt = ∇f(x, t) ξ + g(x, t), ξ(t₀) = 0:
//!
//! * ξ(t) = ∫_{t₀}^{t} ∇F_s^t g(x(s), s) ds, the first-order deviation;
//! * MS = ∫ ‖∇F_s^t‖ ds (time), the uniform-bound form: |ξ| ≤ sup|g| · MS, depends on f only;
//! * MS_g = ∫ ‖∇F_s^t‖ |g(x(s), s)| ds (length), the pointwise form ≥ |ξ| used when g is
//!   known: a set of modes, the residual, a noise model. Taking f from a modal
//!   decomposition and g from other modes is mode sensitivity (arXiv:2410.20802);
//! * the Eulerian bound ∫ exp(∫_s^t λmax(S) dr) ds ≥ MS from the rate of strain S of f, an
//!   upper bound that needs no variational equation (exact for a saddle, loose for shear);
//! * σ_MS = (1/|T|) ln(MS_g / (|T| g_ref)) puts MS_g on the FTLE's footing, and the FTLE
//!   perturbation field is ζ = σ_MS − σ_FTLE[f] ([`NORMALISATION`]).
//!
//! All of it is computed per trajectory with the stable backward sweep of one-step
//! propagators ([`trajectory`]), on row ranges of a tracer grid ([`sensitivity_rows`]) like
//! the FTLE engine, so the CLI's threads and the page's workers split the work the same
//! way. The brute-force comparator Δσ = σ_FTLE[f + εg] − σ_FTLE[f] is [`delta_ftle_rows`].

mod agreement;
pub mod analytic;
mod error;
mod export;
mod lockstep;
#[cfg(feature = "cli")]
pub mod parallel;
mod perturbed;
mod quadrature;
mod reference;
mod rows;
mod trajectory;
mod workflow;

pub use agreement::{pearson, spearman, zeta_agreement, ZetaAgreement};
pub use error::SensitivityError;
pub use export::{sensitivity_npz, sensitivity_vti};
pub use perturbed::{delta_ftle_rows, Perturbed};
pub use quadrature::node_weights;
pub use reference::rms_speed;
pub use rows::{
    sensitivity_rows, SensitivityOptions, SensitivityRows, SensitivityStats, NORMALISATION,
};
pub use trajectory::{max_strain_rate, trajectory, TrajectoryBuffer, TrajectorySensitivity};
pub use workflow::{prepare, SensitivityPlan, SensitivityResult, SensitivitySpec};
