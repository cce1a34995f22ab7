//! `sillage convert`: any supported input to the canonical .npz, VTK image data or CSV.

use crate::input::InputArgs;
use crate::output::{describe_written, write_series};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub input: InputArgs,
    /// Output file: .npz (canonical layout, SI units), a folder name without extension (one
    /// .npy file per canonical array), .vti or .csv (one file per snapshot, numbered
    /// stem_0000.vti, … when there are several).
    #[arg(long, short, value_name = "FILE")]
    pub out: PathBuf,
}

pub fn run(args: Args) -> Result<(), String> {
    crate::output::format_of(&args.out)?;
    let series = args.input.read()?;
    let written = write_series(&series, &args.out)?;
    println!(
        "{} snapshot(s) of {} × {} vectors; {}",
        series.nt(),
        series.nx(),
        series.ny(),
        describe_written(&written)
    );
    Ok(())
}
