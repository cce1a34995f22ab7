//! Readers and writers, one file per format.
//!
//! Every reader turns bytes into a [`Series`] (SI units, ascending axes, masked cells 0.0);
//! every writer takes a series or plain arrays. Reading works on bytes in memory
//! ([`NamedBytes`]) so the browser and the command line share it; only [`read_paths`]
//! touches the file system.
//!
//! Accepted inputs ([`read_series`]):
//! * one `.npz` archive in the canonical layout (below);
//! * a set of `.npy` files named after the canonical arrays (`x.npy`, `y.npy`, `t.npy`,
//!   `u.npy`, `v.npy`, optional `mask.npy`, `gaps.npy`);
//! * one or more text tables (`.csv`, `.txt`, `.dat`, `.tsv`), one snapshot per file (see
//!   the `text` module).
//!
//! Canonical layout: `x (nx)`, `y (ny)`, `t (nt)`, `u`, `v (nt, ny, nx)`, optional
//! `mask (ny, nx)` bool (`true` = no valid data), optional `gaps (nt, ny, nx)` bool, optional
//! 0-d strings `length_unit`, `time_unit`. Names are case-insensitive; `(ny, nx)` velocity
//! arrays are one snapshot; 2-D meshgrid coordinates are reduced to axes; NaN velocities
//! are missing vectors.

mod canonical;
mod csv_out;
mod error;
mod field_out;
mod fragment;
mod natural;
mod npy;
mod npy_header;
mod npz;
#[cfg(not(target_arch = "wasm32"))]
mod paths;
pub mod probe;
mod text;
mod vti;

pub use csv_out::{write_csv_snapshot, write_csv_snapshot_untimed};
pub use error::IoError;
pub use field_out::{MapFormat, ScalarMap};
pub use fragment::{base64url_decode, base64url_encode, pack_text, unpack_text, FragmentError};
pub use natural::natural_cmp;
pub use npy::{NpyArray, NpyData};
pub use npz::{read_arrays_npz, read_npz_named, write_arrays_npz};
#[cfg(not(target_arch = "wasm32"))]
pub use paths::read_paths;
pub use vti::{write_series_vti, write_vti};

use crate::field::{LengthUnit, Series, TimeUnit};
use canonical::{canonical_name, check_unique, series_from_found, Found};

/// What the user says about the files; each given value overrides what the files say.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReadOptions {
    /// Unit of the coordinates (and of the length in velocities).
    pub length_unit: Option<LengthUnit>,
    /// Unit of the times (and of the time in velocities).
    pub time_unit: Option<TimeUnit>,
    /// Time between snapshots, in the input's time unit: times become `t_start + k·dt`,
    /// replacing any in the files.
    pub dt: Option<f64>,
    /// Time of the first snapshot (input's time unit) when times come from `dt`, or for a
    /// single snapshot without a time.
    pub t_start: f64,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions { length_unit: None, time_unit: None, dt: None, t_start: 0.0 }
    }
}

impl ReadOptions {
    /// Rejects option values no file could make sensible.
    pub(crate) fn check(&self) -> Result<(), IoError> {
        if let Some(dt) = self.dt {
            if !(dt.is_finite() && dt > 0.0) {
                return Err(IoError::BadOption {
                    option: "dt",
                    reason: format!(
                        "the time between snapshots must be a positive number, not {dt}"
                    ),
                });
            }
        }
        if !self.t_start.is_finite() {
            return Err(IoError::BadOption {
                option: "t_start",
                reason: format!("the start time must be a finite number, not {}", self.t_start),
            });
        }
        Ok(())
    }
}

/// A file in memory. The name picks the format (by extension), orders snapshots (natural
/// sort) and appears in messages.
#[derive(Debug, Clone, PartialEq)]
pub struct NamedBytes {
    pub name: String,
    pub bytes: Vec<u8>,
}

impl NamedBytes {
    pub fn new(name: impl Into<String>, bytes: Vec<u8>) -> NamedBytes {
        NamedBytes { name: name.into(), bytes }
    }
}

/// Kinds of input file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Kind {
    Npz,
    Npy,
    Text,
}

impl Kind {
    fn label(self) -> &'static str {
        match self {
            Kind::Npz => "an .npz archive",
            Kind::Npy => "a .npy array",
            Kind::Text => "a text table",
        }
    }
}

/// File extensions read as text tables.
pub(crate) const TEXT_EXTENSIONS: [&str; 4] = ["csv", "txt", "dat", "tsv"];

/// The part of a name after the last `/` or `\`.
pub(crate) fn base_name(name: &str) -> &str {
    name.rsplit(['/', '\\']).next().unwrap_or(name)
}

/// Whether the name has an extension the readers know.
#[cfg(not(target_arch = "wasm32"))]
pub(crate) fn extension_supported(name: &str) -> bool {
    matches!(extension(name).as_deref(), Some(e) if e == "npz" || e == "npy" || TEXT_EXTENSIONS.contains(&e))
}

/// Lower-case extension of a name, if any.
fn extension(name: &str) -> Option<String> {
    let base = base_name(name);
    base.rfind('.').filter(|&i| i > 0).map(|i| base[i + 1..].to_ascii_lowercase())
}

/// Whether the first few kilobytes are UTF-8 text (a character cut at the end of the sample
/// does not count against it).
fn looks_like_text(bytes: &[u8]) -> bool {
    let sample = &bytes[..bytes.len().min(4096)];
    !sample.is_empty()
        && match std::str::from_utf8(sample) {
            Ok(_) => true,
            Err(e) => e.error_len().is_none(),
        }
}

/// The kind of a file: by extension, else by its first bytes.
pub(crate) fn kind_of(name: &str, bytes: &[u8]) -> Result<Kind, IoError> {
    match extension(name).as_deref() {
        Some("npz") => return Ok(Kind::Npz),
        Some("npy") => return Ok(Kind::Npy),
        Some(e) if TEXT_EXTENSIONS.contains(&e) => return Ok(Kind::Text),
        _ => {}
    }
    if bytes.starts_with(b"PK\x03\x04") {
        Ok(Kind::Npz)
    } else if bytes.starts_with(b"\x93NUMPY") {
        Ok(Kind::Npy)
    } else if looks_like_text(bytes) {
        Ok(Kind::Text)
    } else {
        Err(IoError::Unsupported {
            file: name.into(),
            reason: "unknown format: expected .npz, .npy or a text table (.csv .txt .dat .tsv)"
                .into(),
        })
    }
}

/// Reads a series from files in memory: one `.npz`, a set of `.npy` files, or one or more
/// text tables (one snapshot each, ordered by natural sort of their names).
pub fn read_series(files: &[NamedBytes], opts: &ReadOptions) -> Result<Series, IoError> {
    opts.check()?;
    let first = files.first().ok_or(IoError::NoInput)?;
    let kind = kind_of(&first.name, &first.bytes)?;
    for f in &files[1..] {
        let k = kind_of(&f.name, &f.bytes)?;
        if k != kind {
            return Err(IoError::Unsupported {
                file: f.name.clone(),
                reason: format!(
                    "is {} but '{}' is {}; give one .npz, a set of .npy files, or text \
                     tables, not a mixture",
                    k.label(),
                    first.name,
                    kind.label()
                ),
            });
        }
    }
    match kind {
        Kind::Npz => {
            if files.len() > 1 {
                return Err(IoError::Unsupported {
                    file: files[1].name.clone(),
                    reason: format!(
                        "only one .npz archive can be read at a time (also given: '{}')",
                        first.name
                    ),
                });
            }
            read_npz_series(first, opts)
        }
        Kind::Npy => read_npy_set(files, opts),
        Kind::Text => text::read_text_series(files, opts),
    }
}

fn read_npz_series(file: &NamedBytes, opts: &ReadOptions) -> Result<Series, IoError> {
    let mut npz = npz::Npz::open(&file.name, &file.bytes)?;
    let all_names = npz.names();
    check_unique(&file.name, &all_names)?;
    let mut arrays = Vec::new();
    for (k, name) in all_names.iter().enumerate() {
        if canonical_name(name).is_some() {
            arrays.push(npz.read(k)?);
        }
    }
    let found = Found { file: file.name.clone(), arrays, all_names };
    series_from_found(&found, opts)
}

fn read_npy_set(files: &[NamedBytes], opts: &ReadOptions) -> Result<Series, IoError> {
    let stems: Vec<String> = files
        .iter()
        .map(|f| {
            let base = base_name(&f.name);
            let lower = base.to_ascii_lowercase();
            match lower.strip_suffix(".npy") {
                Some(_) => base[..base.len() - 4].to_string(),
                None => base.to_string(),
            }
        })
        .collect();
    let label = "the .npy files";
    check_unique(label, &stems)?;
    let mut arrays = Vec::new();
    for (f, stem) in files.iter().zip(&stems) {
        if canonical_name(stem).is_none() {
            continue;
        }
        if f.bytes.is_empty() {
            return Err(IoError::EmptyFile { file: f.name.clone() });
        }
        let a = npy::parse_npy(stem, &f.bytes).map_err(|reason| IoError::Npy {
            file: f.name.clone(),
            array: stem.clone(),
            reason,
        })?;
        arrays.push(a);
    }
    let found = Found { file: label.into(), arrays, all_names: stems };
    series_from_found(&found, opts)
}

/// The series as a canonical `.npz` archive (deflated): `x`, `y`, `t` (f64), `u`, `v`
/// (f32, `(nt, ny, nx)`), `mask` (bool), `length_unit` and `time_unit` (`'m'`/`'s'` or
/// `'unitless'`), and `gaps` (bool, `(nt, ny, nx)`) if any vector is missing.
pub fn write_npz(series: &Series) -> Vec<u8> {
    write_arrays_npz(&canonical::series_arrays(series))
}

/// The series as a set of `.npy` files (`x.npy`, `y.npy`, `t.npy`, `u.npy`, `v.npy`,
/// `mask.npy`, the unit strings, and `gaps.npy` if any vector is missing): the same arrays
/// as [`write_npz`], one file each, readable back by [`read_series`] as a set.
pub fn write_npy_set(series: &Series) -> Vec<(String, Vec<u8>)> {
    canonical::series_arrays(series)
        .iter()
        .map(|a| (format!("{}.npy", a.name), a.to_npy_bytes()))
        .collect()
}

#[cfg(test)]
mod tests;
