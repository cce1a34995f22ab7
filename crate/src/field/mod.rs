//! The data model: a uniform rectilinear [`Grid`], a velocity [`Series`] on it, its units,
//! and Eulerian derived fields (speed, vorticity).

mod derived;
mod error;
mod grid;
mod series;
mod summary;
mod units;

pub use derived::{speed, vorticity};
pub use error::FieldError;
pub use grid::{Axis, Grid, GRID_TOLERANCE};
pub use series::{Series, SeriesParts};
pub use summary::Summary;
pub use units::{LengthUnit, TimeUnit, Units};
