//! Writing a series to the format chosen by the output path's extension.

use sillage::field::Series;
use sillage::io::{write_csv_snapshot, write_npy_set, write_npz, write_series_vti};
use std::path::{Path, PathBuf};

/// Output formats of a series.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    Npz,
    /// A folder of `.npy` files, one per canonical array.
    NpySet,
    Vti,
    Csv,
}

/// The format named by `path`'s extension.
pub fn format_of(path: &Path) -> Result<Format, String> {
    match path.extension().and_then(|e| e.to_str()).map(str::to_lowercase).as_deref() {
        Some("npz") => Ok(Format::Npz),
        Some("vti") => Ok(Format::Vti),
        Some("csv") => Ok(Format::Csv),
        None => Ok(Format::NpySet),
        _ => Err(format!(
            "cannot tell the output format from '{}': use a name ending in .npz, .vti or .csv, \
             or a folder name without extension for a set of .npy files",
            path.display()
        )),
    }
}

/// `dir/stem_0007.ext` for snapshot 7 of a multi-snapshot output (`path` itself for one).
fn numbered(path: &Path, k: usize, nt: usize) -> PathBuf {
    if nt == 1 {
        return path.to_path_buf();
    }
    let stem = path.file_stem().and_then(|s| s.to_str()).unwrap_or("snapshot");
    let ext = path.extension().and_then(|s| s.to_str()).unwrap_or("");
    let width = (nt - 1).to_string().len().max(4);
    path.with_file_name(format!("{stem}_{k:0width$}.{ext}"))
}

fn write(path: &Path, bytes: &[u8]) -> Result<(), String> {
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir)
            .map_err(|e| format!("cannot create folder '{}': {e}", dir.display()))?;
    }
    std::fs::write(path, bytes).map_err(|e| format!("cannot write '{}': {e}", path.display()))
}

/// Writes `series` to `path`: one .npz, a folder of .npy files (a path without extension),
/// or one .vti / .csv per snapshot (numbered
/// `stem_0000.vti`, … when there is more than one). Returns the files written.
pub fn write_series(series: &Series, path: &Path) -> Result<Vec<PathBuf>, String> {
    let nt = series.nt();
    match format_of(path)? {
        Format::Npz => {
            write(path, &write_npz(series))?;
            Ok(vec![path.to_path_buf()])
        }
        Format::NpySet => {
            let mut written = Vec::new();
            for (name, bytes) in write_npy_set(series) {
                let p = path.join(name);
                write(&p, &bytes)?;
                written.push(p);
            }
            Ok(written)
        }
        Format::Vti => {
            let files = write_series_vti(series);
            let mut written = Vec::with_capacity(files.len());
            for (k, (_, bytes)) in files.iter().enumerate() {
                let p = numbered(path, k, nt);
                write(&p, bytes)?;
                written.push(p);
            }
            Ok(written)
        }
        Format::Csv => {
            let mut written = Vec::with_capacity(nt);
            for k in 0..nt {
                let p = numbered(path, k, nt);
                write(&p, write_csv_snapshot(series, k).as_bytes())?;
                written.push(p);
            }
            Ok(written)
        }
    }
}

/// One line saying what was written.
pub fn describe_written(files: &[PathBuf]) -> String {
    match files {
        [] => "nothing written".into(),
        [one] => format!("wrote {}", one.display()),
        [first, .., last] => {
            format!("wrote {} files, {} … {}", files.len(), first.display(), last.display())
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbering_and_formats() {
        assert_eq!(numbered(Path::new("out/a.vti"), 7, 240), PathBuf::from("out/a_0007.vti"));
        assert_eq!(numbered(Path::new("a.csv"), 0, 1), PathBuf::from("a.csv"));
        assert_eq!(format_of(Path::new("x.NPZ")).unwrap(), Format::Npz);
        assert!(format_of(Path::new("x.h5")).unwrap_err().contains(".npz, .vti or .csv"));
        assert_eq!(format_of(Path::new("out/arrays")).unwrap(), Format::NpySet);
    }
}
