//! wasm-bindgen bindings for the browser page. Only argument conversion lives here: every
//! number is computed by the core modules ([`crate::io`], [`crate::field`],
//! [`crate::render`]); every error reaches JavaScript as an `Error` carrying the core's
//! message.
//!
//! JavaScript sees: the `Dataset` class (a loaded series, what can be drawn from it, and the
//! transport calls: canonical bytes for workers, FTLE row ranges, defaults, warnings,
//! ridges, arrows), free functions for colour maps, ticks, the list of fields and the
//! pictures of computed maps, and `takePanicMessage`, which returns the message of a panic
//! after a call trapped.

mod clean;
mod dataset;
mod display;
mod export;
mod memory;
mod modes;
mod panic;
mod recipe;
mod sensitivity;
mod transport;

pub use clean::{clean_defaults, Cleaning};
pub use dataset::Dataset;
pub use display::{colormap_rgba, format_number, mask_color, quantities, ticks};
pub use export::is_reduced_model;
pub use memory::memory_estimate;
pub use modes::Modes;
pub use panic::take_panic_message;
pub use recipe::{
    recipe_empty, recipe_from_fragment, recipe_normalize, recipe_reading, recipe_to_fragment,
};
pub use sensitivity::{
    sensitivity_agreement, sensitivity_check, sensitivity_image, sensitivity_maps,
    sensitivity_normalisation, sensitivity_range, sensitivity_rows, sensitivity_run_warnings,
};
pub use transport::{
    self_test_panic, transport_image, transport_maps, transport_range, transport_run_warnings,
};

use wasm_bindgen::prelude::*;

/// Runs once when the module is instantiated.
#[wasm_bindgen(start)]
pub fn start() {
    panic::install();
}

/// A core error as a JavaScript `Error` with the core's message.
pub(crate) fn js_error(e: impl std::fmt::Display) -> JsError {
    JsError::new(&e.to_string())
}
