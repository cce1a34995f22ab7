//! `sillage select`: the velocity field formed by a selection of modes (see
//! `sillage::modes::selection` for the syntax), written in the canonical layout.

use crate::input::InputArgs;
use crate::output::{describe_written, format_of, write_series};
use sillage::modes::{SelectOptions, Selection};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// What forms the field: a sum of `data`, `mean`, `pod(i-j)` (modes i to j, 1 = most
    /// energetic), `dmd(i-j)` or `dmd(f=a..b)` (conjugate pairs kept together), `spod(f=a..b)`
    /// or `spod(f=a..b, modes=i-j)`, `residual(S)` (data minus S), `noise(rms=A, seed=N)`
    /// (white noise of RMS speed A in m/s), each optionally scaled (`0.5*pod(3)`) or
    /// subtracted. Example: "mean + pod(1-2)".
    #[arg(long, value_name = "SELECTION")]
    pub keep: String,
    /// Where to write the field (.npz, or .vti / .csv: one file per snapshot).
    #[arg(long, short, value_name = "FILE")]
    pub out: PathBuf,
}

pub fn run(args: Args) -> Result<(), String> {
    let selection = Selection::parse(&args.keep).map_err(|e| e.to_string())?;
    format_of(&args.out)?;
    let series = args.input.read()?;
    let field =
        selection.materialize(&series, &SelectOptions::default()).map_err(|e| e.to_string())?;
    let written = write_series(&field, &args.out)?;
    println!("{}", describe_written(&written));
    Ok(())
}
