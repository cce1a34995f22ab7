//! Reading from the file system (native builds only): expands directories and hands the
//! bytes to [`super::read_series`].

use super::{extension_supported, read_series, IoError, NamedBytes, ReadOptions};
use crate::field::Series;
use std::path::PathBuf;

/// Reads the files at `paths`. A directory stands for the supported files directly inside
/// it (not recursively), in natural order of their names.
pub fn read_paths(paths: &[PathBuf], opts: &ReadOptions) -> Result<Series, IoError> {
    let mut files = Vec::new();
    for p in paths {
        let meta = std::fs::metadata(p)
            .map_err(|e| IoError::Read { path: p.display().to_string(), reason: e.to_string() })?;
        if meta.is_dir() {
            let mut inside: Vec<PathBuf> = std::fs::read_dir(p)
                .map_err(|e| IoError::Read {
                    path: p.display().to_string(),
                    reason: e.to_string(),
                })?
                .filter_map(|entry| entry.ok().map(|e| e.path()))
                .filter(|q| q.is_file() && extension_supported(&q.to_string_lossy()))
                .collect();
            if inside.is_empty() {
                return Err(IoError::Read {
                    path: p.display().to_string(),
                    reason: "the directory holds no .npz, .npy, .csv, .txt, .dat or .tsv files"
                        .into(),
                });
            }
            inside.sort_by(|a, b| super::natural_cmp(&a.to_string_lossy(), &b.to_string_lossy()));
            files.extend(inside);
        } else {
            files.push(p.clone());
        }
    }
    let mut named = Vec::with_capacity(files.len());
    for f in files {
        let bytes = std::fs::read(&f)
            .map_err(|e| IoError::Read { path: f.display().to_string(), reason: e.to_string() })?;
        named.push(NamedBytes::new(f.display().to_string(), bytes));
    }
    read_series(&named, opts)
}
