//! Input options shared by every subcommand that reads a velocity dataset.

use sillage::field::{LengthUnit, Series, TimeUnit};
use sillage::io::{read_paths, ReadOptions};
use std::path::PathBuf;

#[derive(clap::Args, Debug)]
pub struct InputArgs {
    /// Velocity data: one .npz, a set of .npy files, text tables (one per snapshot) or a
    /// folder holding any of these.
    #[arg(required = true, value_name = "DATA")]
    pub data: Vec<PathBuf>,
    /// Unit of lengths in the input: m, cm, mm, um or unitless. Overrides the files.
    #[arg(long, value_name = "UNIT")]
    pub length_unit: Option<LengthUnit>,
    /// Unit of time in the input: s, ms, us or unitless. Overrides the files.
    #[arg(long, value_name = "UNIT")]
    pub time_unit: Option<TimeUnit>,
    /// Time between snapshots, in the input's time unit. Replaces times found in the files;
    /// needed when they carry none.
    #[arg(long, value_name = "DT")]
    pub dt: Option<f64>,
    /// Time of the first snapshot when times come from --dt.
    #[arg(long, value_name = "T", default_value_t = 0.0, allow_negative_numbers = true)]
    pub t_start: f64,
}

impl InputArgs {
    pub fn read(&self) -> Result<Series, String> {
        read_paths(&self.data, &self.read_options()).map_err(|e| e.to_string())
    }

    /// The reading options, for other files read alongside DATA (e.g. `--model FILE`).
    pub fn read_options(&self) -> ReadOptions {
        ReadOptions {
            length_unit: self.length_unit,
            time_unit: self.time_unit,
            dt: self.dt,
            t_start: self.t_start,
        }
    }

    /// The inputs as one display string.
    pub fn describe(&self) -> String {
        self.data.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(", ")
    }
}
