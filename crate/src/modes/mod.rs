//! Modal decompositions of a velocity series and selections of modes that become velocity
//! fields again.
//!
//! * [`pod`] — proper orthogonal decomposition (snapshot method, direct or randomized SVD);
//! * [`selection`] — a small text language saying which parts of the data form a field
//!   ("mean + pod(1-2)", "residual(mean + pod(1-2))", "noise(rms=0.05, seed=3)"), each
//!   materialized as a [`crate::field::Series`] on the data grid.
//!
//! Conventions (all decompositions): a snapshot vector stacks u then v at the unmasked cells
//! ([`SnapshotLayout`]); inner products use trapezoidal cell-area weights; modes are sorted
//! by energy (POD) and unit-norm in the weighted inner product; mode numbers in the text
//! syntax start at 1, indices in the API at 0. Computation is in f64; fields come back as
//! f32 series. Series with missing vectors are refused: clean them first.

pub mod dmd;
mod error;
pub mod linalg;
pub mod overview;
pub mod pod;
pub mod randomized;
pub mod rank;
pub mod reduced;
pub mod selection;
pub mod snapshots;
pub mod spod;
pub mod transfer;

pub use dmd::{dmd, dmd_with_progress, Dmd, DmdOptions, DmdVariant};
pub use error::ModesError;
pub use linalg::{SvdRoute, ThinSvd};
pub use pod::{pod, pod_with_progress, Pod, PodOptions, PodSolver};
pub use randomized::RandomizedSvd;
pub use rank::RankRule;
pub use reduced::{ReducedModel, ReducedModelError};
pub use selection::{SelectOptions, Selection, Term};
pub use snapshots::{uniform_step, SnapshotLayout};
pub use spod::{default_block, spod, spod_with_progress, Spod, SpodOptions};
