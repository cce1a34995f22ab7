//! `.npz` archives: a zip file whose entries are `.npy` files named `NAME.npy`, stored
//! uncompressed or deflated. Written deflated at a fast level: smooth measured fields
//! shrink to about half, and writing stays quick (see [`DEFLATE_LEVEL`]).

use super::npy::{parse_npy, write_npy, NpyArray};
use super::IoError;
use std::io::{Cursor, Read, Write};
use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, ZipArchive, ZipWriter};

/// Deflate effort (1 = fastest … 9 = smallest). The low mantissa bits of float fields are
/// noise that no level compresses, so effort buys little. Measured (release build, one
/// core) on a smooth 100 × 200 × 200 float32 series with 1 % noise: level 1 wrote it in
/// 0.35 s, 0.3 % larger than level 6, which took 1.9 s.
const DEFLATE_LEVEL: i64 = 1;

/// Entries larger than this need the zip64 extension (zip format: 32-bit sizes).
const ZIP32_LIMIT: u64 = u32::MAX as u64;

/// An opened archive: the array names and lazy access to each, so that a reader can skip
/// entries it does not need.
pub(crate) struct Npz<'a> {
    file: String,
    zip: ZipArchive<Cursor<&'a [u8]>>,
    /// `(array name without .npy, entry index)` in archive order.
    entries: Vec<(String, usize)>,
}

impl<'a> Npz<'a> {
    pub(crate) fn open(file: &str, bytes: &'a [u8]) -> Result<Npz<'a>, IoError> {
        let zip_err = |reason: String| IoError::Zip { file: file.to_string(), reason };
        if bytes.is_empty() {
            return Err(IoError::EmptyFile { file: file.into() });
        }
        if !bytes.starts_with(b"PK") {
            return Err(zip_err("it does not start with the zip signature 'PK'".into()));
        }
        let zip = ZipArchive::new(Cursor::new(bytes)).map_err(|e| zip_err(e.to_string()))?;
        let mut entries = Vec::new();
        for index in 0..zip.len() {
            let name = match zip.name_for_index(index) {
                Some(Ok(n)) => n.into_owned(),
                _ => return Err(zip_err(format!("entry {index} has an unreadable name"))),
            };
            // Entries other than arrays (directories, notes) carry no data for us.
            if let Some(stem) = name.strip_suffix(".npy") {
                entries.push((stem.to_string(), index));
            }
        }
        Ok(Npz { file: file.to_string(), zip, entries })
    }

    /// Array names in archive order.
    pub(crate) fn names(&self) -> Vec<String> {
        self.entries.iter().map(|(n, _)| n.clone()).collect()
    }

    /// Decompresses and parses the array at position `k` of [`Npz::names`].
    pub(crate) fn read(&mut self, k: usize) -> Result<NpyArray, IoError> {
        let (name, index) = self.entries[k].clone();
        let npy_err =
            |reason: String| IoError::Npy { file: self.file.clone(), array: name.clone(), reason };
        let mut entry = self
            .zip
            .by_index(index)
            .map_err(|e| npy_err(format!("cannot open the zip entry: {e}")))?;
        let mut bytes = Vec::with_capacity(entry.size().min(1 << 30) as usize);
        entry
            .read_to_end(&mut bytes)
            .map_err(|e| npy_err(format!("cannot decompress the zip entry: {e}")))?;
        drop(entry);
        parse_npy(&name, &bytes).map_err(npy_err)
    }
}

/// Reads every array of an `.npz` archive (any numeric, boolean or one-element string
/// arrays), in archive order. `file` names the archive in error messages.
pub fn read_npz_named(file: &str, bytes: &[u8]) -> Result<Vec<NpyArray>, IoError> {
    let mut npz = Npz::open(file, bytes)?;
    (0..npz.entries.len()).map(|k| npz.read(k)).collect()
}

/// Reads every array of an `.npz` archive held in memory, in archive order.
pub fn read_arrays_npz(bytes: &[u8]) -> Result<Vec<NpyArray>, IoError> {
    read_npz_named("archive", bytes)
}

/// Writes arrays into a deflated `.npz` archive (entries `NAME.npy`), readable by any
/// conforming reader.
///
/// # Panics
/// If two arrays share a name: a programming error of the caller.
pub fn write_arrays_npz(arrays: &[NpyArray]) -> Vec<u8> {
    let mut zip = ZipWriter::new(Cursor::new(Vec::new()));
    for a in arrays {
        let bytes = write_npy(a);
        // A fixed entry time (the zip epoch, 1980-01-01): the same arrays always give the
        // same bytes, whichever features of the zip crate are enabled (its `time` feature
        // would stamp the current time). The demo data's bit-for-bit check relies on this.
        let options = SimpleFileOptions::default()
            .last_modified_time(zip::DateTime::default())
            .compression_method(CompressionMethod::Deflated)
            .compression_level(Some(DEFLATE_LEVEL))
            .large_file(bytes.len() as u64 >= ZIP32_LIMIT);
        zip.start_file(format!("{}.npy", a.name), options)
            .unwrap_or_else(|e| panic!("write_arrays_npz: entry '{}': {e}", a.name));
        zip.write_all(&bytes).expect("writing into an in-memory zip archive cannot fail");
    }
    zip.finish().expect("finishing an in-memory zip archive cannot fail").into_inner()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::NpyData;

    fn sample() -> Vec<NpyArray> {
        vec![
            NpyArray::new("x", vec![3], NpyData::F64(vec![0.0, 0.5, 1.0])),
            NpyArray::new("u", vec![2, 3], NpyData::F32(vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0])),
            NpyArray::new("mask", vec![3], NpyData::Bool(vec![false, true, false])),
            NpyArray::new("unit", vec![], NpyData::Str("mm".into())),
        ]
    }

    #[test]
    fn round_trip() {
        let bytes = write_arrays_npz(&sample());
        assert_eq!(read_arrays_npz(&bytes).unwrap(), sample());
    }

    #[test]
    fn stored_entries_are_read_too() {
        // np.savez writes entries stored (no compression); build one the same way.
        let mut zip = ZipWriter::new(Cursor::new(Vec::new()));
        let opts = SimpleFileOptions::default().compression_method(CompressionMethod::Stored);
        for a in sample() {
            zip.start_file(format!("{}.npy", a.name), opts).unwrap();
            zip.write_all(&write_npy(&a)).unwrap();
        }
        zip.start_file("README.txt", opts).unwrap();
        zip.write_all(b"not an array").unwrap();
        let bytes = zip.finish().unwrap().into_inner();
        assert_eq!(read_arrays_npz(&bytes).unwrap(), sample());
    }

    #[test]
    fn damaged_archives_give_errors() {
        let bytes = write_arrays_npz(&sample());
        for cut in [bytes.len() / 2, bytes.len() - 10, 30, 3] {
            let e = read_npz_named("run.npz", &bytes[..cut]).unwrap_err().to_string();
            assert!(e.contains("run.npz"), "{e}");
        }
        let e = read_npz_named("run.npz", b"\x93NUMPY not a zip").unwrap_err();
        assert!(e.to_string().contains("zip signature"), "{e}");
        let e = read_npz_named("run.npz", b"").unwrap_err();
        assert!(matches!(e, IoError::EmptyFile { .. }), "{e}");
        // A damaged array inside a sound archive names the array.
        let mut zip = ZipWriter::new(Cursor::new(Vec::new()));
        zip.start_file("u.npy", SimpleFileOptions::default()).unwrap();
        let npy = write_npy(&sample()[1]);
        zip.write_all(&npy[..npy.len() - 4]).unwrap();
        let bytes = zip.finish().unwrap().into_inner();
        let e = read_npz_named("run.npz", &bytes).unwrap_err().to_string();
        assert!(e.contains("'run.npz': array 'u': truncated"), "{e}");
    }
}
