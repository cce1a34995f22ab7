//! wasm-bindgen bindings for the browser page. Only argument conversion lives here: every
//! number is computed by the core modules.
