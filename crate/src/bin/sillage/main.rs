//! `sillage`: the command-line driver of the sillage core, for batch runs and data too big
//! for a browser tab. One subcommand per step of the data flow; every subcommand only parses
//! options, calls the core and writes files.

mod clean;
mod convert;
mod ftle;
mod input;
mod inspect;
mod lagrangian_args;
mod modes;
mod output;
mod run;
mod select;
mod sensitivity;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

/// Analyse 2D velocity fields from PIV or CFD: inspect, clean and convert snapshot series.
///
/// Inputs are a canonical .npz (x, y, t, u, v, optional mask), a set of .npy files, or text
/// exports (one table per snapshot; a folder or several files). Everything is computed in
/// SI units; outputs say which.
#[derive(Parser)]
#[command(name = "sillage", version, propagate_version = true, max_term_width = 100)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Summarise a dataset: grid, units, times, mask, missing vectors and outliers.
    Inspect(inspect::Args),
    /// Flag outliers with the normalized median test, fill them and missing vectors, and
    /// write the cleaned series.
    Clean(clean::Args),
    /// Convert any supported input to .npz, VTK image data (.vti) or CSV.
    Convert(convert::Args),
    /// Finite-time Lyapunov exponents of one start time over a tracer grid: the FTLE map,
    /// the time each tracer was integrated, and the det ∇F = 1 quality map.
    Ftle(ftle::Args),
    /// Modal decomposition (POD, DMD or SPOD): energies, eigenvalues or spectra, modes, coefficients as .npz.
    Modes(modes::Args),
    /// The velocity field formed by a selection of modes, e.g. "mean + pod(1-2)".
    Select(select::Args),
    /// Model / mode sensitivity of the FTLE field: MS, MS_g, the strain bound, ξ, σ_MS and
    /// ζ = σ_MS − FTLE for a model flow f and a perturbation g (selections or files).
    Sensitivity(sensitivity::Args),
    /// Replay a whole analysis from a recipe saved by the page (cleaning, modes, f and g,
    /// FTLE, sensitivity, exports).
    Run(run::Args),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Inspect(a) => inspect::run(a),
        Command::Clean(a) => clean::run(a),
        Command::Convert(a) => convert::run(a),
        Command::Ftle(a) => ftle::run(a),
        Command::Modes(a) => modes::run(a),
        Command::Select(a) => select::run(a),
        Command::Sensitivity(a) => sensitivity::run(a),
        Command::Run(a) => run::run(a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(message) => {
            eprintln!("sillage: {message}");
            ExitCode::FAILURE
        }
    }
}
