//! # sillage — the numerical core
//!
//! Turns 2D velocity snapshots (PIV or CFD) into clean velocity series, modal decompositions,
//! Lagrangian transport diagnostics (flow maps, FTLE) and their model / mode sensitivity.
//! The browser page (through [`wasm`]) and the `sillage` command-line tool are thin drivers
//! of the calls in this crate; neither holds numerical code.
//!
//! ## Conventions (stated once, relied on everywhere)
//!
//! * Arrays of a series are stored row-major as `(nt, ny, nx)`: index `k*ny*nx + j*nx + i`
//!   for snapshot `k`, row `j` (y), column `i` (x). Spatial fields are `(ny, nx)`.
//! * Axes ascend: readers flip data given with descending coordinates.
//! * The core computes in SI units (metre, second); [`field::Units`] records what the
//!   user's files used so outputs can say where numbers came from.
//! * Stored fields are `f32`; positions, times and accumulations are `f64`.
//! * Masked cells (no valid data: a solid body, outside the light sheet) hold `0.0`, never
//!   NaN; their mask entry is `true`.

pub mod advice;
pub mod clean;
pub mod field;
pub mod io;
pub mod lagrangian;
pub mod memory;
pub mod modes;
pub mod progress;
pub mod recipe;
pub mod render;
pub mod sensitivity;

#[cfg(target_arch = "wasm32")]
pub mod wasm;
