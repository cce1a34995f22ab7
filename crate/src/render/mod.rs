//! From numbers to pictures and words: colour maps, value → RGBA mapping, default colour
//! ranges, tick labels, time labels and dataset summaries.
//!
//! The page and the CLI draw through this module so that every colour and every number a
//! user sees is decided in one place, in the core; the page only places the pixels and
//! strings it receives.

mod accessibility;
pub mod arrows;
pub mod colormap;
mod error;
pub mod format;
pub mod labels;
pub mod oklab;
pub mod paint;
pub mod quantity;
pub mod range;
pub mod sensitivity;
pub mod summary;
pub mod ticks;
pub mod transport;

pub use arrows::velocity_arrows;
pub use colormap::{mask_rgba, Colormap, ColormapKind, LUT_SIZE};
pub use error::RenderError;
pub use labels::{snapshot_label, TimeFormat};
pub use paint::{image_extent, paint_rgba, quantity_image, ColorRange};
pub use quantity::{valid_cells, Quantity};
pub use range::{default_range, percentile, RangeScope};
pub use sensitivity::SensitivityMap;
pub use summary::{summary, SummaryRow};
pub use ticks::{nice_ticks, Tick, Ticks};
pub use transport::TransportMap;
