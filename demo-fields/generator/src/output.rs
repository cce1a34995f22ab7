//! Writing the dataset with the core library's writers: the canonical `.npz` (plus two
//! scalars the Strouhal check needs) and a few snapshots as CSV tables for the text reader.

use sillage::field::{Series, SeriesParts};
use sillage::io::{
    read_arrays_npz, write_arrays_npz, write_csv_snapshot_untimed, write_npz, NpyArray, NpyData,
};
use std::path::Path;

/// Base name of every file of the dataset.
pub const STEM: &str = "fin-wake";
/// Number of consecutive snapshots written as CSV tables.
pub const CSV_SNAPSHOTS: usize = 8;

/// The recording as a validated series in SI units (mask = fin, no gaps).
pub fn to_series(
    x: &[f64],
    y: &[f64],
    t: &[f64],
    u: &[f64],
    v: &[f64],
    mask: &[bool],
) -> Result<Series, String> {
    Series::from_parts(SeriesParts {
        x: x.to_vec(),
        y: y.to_vec(),
        t: t.to_vec(),
        u: u.iter().map(|&a| a as f32).collect(),
        v: v.iter().map(|&a| a as f32).collect(),
        mask: Some(mask.to_vec()),
        ..Default::default()
    })
    .map_err(|e| format!("the recording does not form a valid series: {e}"))
}

/// The canonical archive with two extra 0-d float64 arrays, `free_stream_speed` (m/s) and
/// `fin_diameter` (m), so the data carries what St = f D / U∞ needs; readers skip arrays
/// they do not know.
pub fn npz_bytes(
    series: &Series,
    free_stream_speed: f64,
    fin_diameter: f64,
) -> Result<Vec<u8>, String> {
    let mut arrays = read_arrays_npz(&write_npz(series))
        .map_err(|e| format!("re-reading the canonical archive failed: {e}"))?;
    arrays.push(NpyArray::new("free_stream_speed", vec![], NpyData::F64(vec![free_stream_speed])));
    arrays.push(NpyArray::new("fin_diameter", vec![], NpyData::F64(vec![fin_diameter])));
    Ok(write_arrays_npz(&arrays))
}

/// Snapshot `k` as a CSV table without the time column: the demo tables stand for an
/// export that does not record time, so loading them exercises giving Δt by hand.
pub fn csv_without_time(series: &Series, k: usize) -> String {
    write_csv_snapshot_untimed(series, k)
}

/// Writes `fin-wake.npz` and `fin-wake-csv/fin-wake-0001.csv` … into `dir`.
/// Returns the paths written and their sizes.
pub fn write_dataset(
    dir: &Path,
    series: &Series,
    free_stream_speed: f64,
    fin_diameter: f64,
) -> Result<Vec<(String, usize)>, String> {
    let io = |path: &Path, e: std::io::Error| format!("cannot write {}: {e}", path.display());
    std::fs::create_dir_all(dir).map_err(|e| io(dir, e))?;
    let mut written = Vec::new();
    let npz = npz_bytes(series, free_stream_speed, fin_diameter)?;
    let path = dir.join(format!("{STEM}.npz"));
    std::fs::write(&path, &npz).map_err(|e| io(&path, e))?;
    written.push((path.display().to_string(), npz.len()));
    let csv_dir = dir.join(format!("{STEM}-csv"));
    std::fs::create_dir_all(&csv_dir).map_err(|e| io(&csv_dir, e))?;
    for k in 0..CSV_SNAPSHOTS.min(series.nt()) {
        let text = csv_without_time(series, k);
        let path = csv_dir.join(format!("{STEM}-{:04}.csv", k + 1));
        std::fs::write(&path, &text).map_err(|e| io(&path, e))?;
        written.push((path.display().to_string(), text.len()));
    }
    Ok(written)
}

#[cfg(test)]
mod tests {
    use super::*;
    use sillage::io::{read_series, NamedBytes, ReadOptions};

    fn small() -> Series {
        let (nx, ny, nt) = (4, 3, 2);
        let n = nx * ny * nt;
        let mut mask = vec![false; nx * ny];
        mask[5] = true;
        to_series(
            &(0..nx).map(|i| i as f64 * 6e-4).collect::<Vec<_>>(),
            &(0..ny).map(|j| -3e-4 + j as f64 * 6e-4).collect::<Vec<_>>(),
            &[0.0, 0.025],
            &(0..n).map(|k| 0.03 + 1e-4 * k as f64).collect::<Vec<_>>(),
            &(0..n).map(|k| -1e-3 * k as f64).collect::<Vec<_>>(),
            &mask,
        )
        .unwrap()
    }

    /// The archive reads back through the core reader to the same series, and the two
    /// scalars are present.
    #[test]
    fn npz_round_trip_with_scalars() {
        let s = small();
        let bytes = npz_bytes(&s, 0.0375, 4e-3).unwrap();
        let back = read_series(&[NamedBytes::new("a.npz", bytes.clone())], &ReadOptions::default())
            .unwrap();
        assert_eq!(back.u(), s.u());
        assert_eq!(back.mask(), s.mask());
        let arrays = read_arrays_npz(&bytes).unwrap();
        let get = |name: &str| arrays.iter().find(|a| a.name == name).unwrap().to_f64().unwrap();
        assert_eq!(get("free_stream_speed"), vec![0.0375]);
        assert_eq!(get("fin_diameter"), vec![4e-3]);
    }

    /// Without a time column the tables need Δt; given it, they read back to the series.
    #[test]
    fn csv_without_time_reads_back_with_dt() {
        let s = small();
        let files: Vec<NamedBytes> = (0..2)
            .map(|k| NamedBytes::new(format!("f-{k}.csv"), csv_without_time(&s, k).into_bytes()))
            .collect();
        assert!(!csv_without_time(&s, 0).lines().next().unwrap().contains("t ["));
        assert!(read_series(&files, &ReadOptions::default()).is_err());
        let opts = ReadOptions { dt: Some(0.025), ..Default::default() };
        let back = read_series(&files, &opts).unwrap();
        assert_eq!(back.u(), s.u());
        assert_eq!(back.v(), s.v());
        assert_eq!(back.mask(), s.mask());
        assert_eq!(back.times(), s.times());
    }
}
