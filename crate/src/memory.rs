//! The memory a dataset will take in the page, estimated from file sizes and array headers
//! before the files are read ([`crate::io::probe`]), and whether the tab can hold it.
//!
//! The page refuses a dataset that would not fit instead of letting the tab run out of
//! memory halfway through reading it (which loses what was open). The arithmetic is here so
//! that the page only measures files and shows the result.
//!
//! **The estimate.** With `N` vectors (`nt · ny · nx`) and `S` bytes of files:
//! * the series `B = 9 N + ny·nx` bytes: u and v as `f32` (8 bytes per vector), the gap
//!   flags (1 byte per vector) and the mask (1 byte per cell);
//! * reading holds at once the file bytes copied into the core (`S`), the arrays decoded
//!   from them (`D`: the uncompressed size of the arrays; text tables four `f64` columns per
//!   row) and the series being built (`B`);
//! * after reading, the page's core holds up to `6 B`: the series as read (1, kept for "Undo
//!   cleaning"), the cleaned copy (1), the modes returned by a worker (2: a POD keeps up to
//!   `nt` modes of `2·ny·nx` `f64`, twice the `f32` series) and their bytes in transit (2);
//! * so the page's core needs `max(S + D + B, 6 B)`, and the whole tab that plus the files
//!   kept by the page for "Read again" (`S`), each compute worker's own copy of the series
//!   (`B` each) and one worker's modes computation (`4 B`: the snapshot matrix of `2·ny·nx
//!   × nt` `f64` values and as many modes).
//!
//! **The limit.** The core is a 32-bit WebAssembly module: it can address 4 GiB at most; a
//! headroom of 0.5 GiB stays for its code, stack and results (FTLE maps, pictures), so the
//! core's part must stay under 3.5 GiB. When the browser says the device is small, the whole
//! tab must also stay under half its memory (`navigator.deviceMemory`, which browsers report
//! rounded and at most 8 GiB, so only values below 8 count) and under the JavaScript heap
//! limit when that is below 2 GiB (`performance.memory.jsHeapSizeLimit`; browsers lower it
//! on small devices). An explicit limit (the page's `?memlimit=` in MB) replaces both.

use crate::io::probe::{ArrayHeader, FileLook};
use crate::render::format::{format_count, format_sig};
use serde::{Deserialize, Serialize};

/// What a 32-bit WebAssembly module can address.
pub const WASM32_BYTES: u64 = 4 << 30;
/// Kept free of data in the core: its code, stack, results and the allocator's slack.
pub const HEADROOM_BYTES: u64 = 1 << 29;
/// Text tables: bytes of text per row assumed when the row count is unknown (a short row of
/// four numbers, e.g. `0.0123,0.0456,0.1234,-0.0012`; more text per row means fewer rows).
pub const TEXT_ROW_BYTES: u64 = 24;
/// `navigator.deviceMemory` values at or above this are the browsers' cap, not a size.
const DEVICE_MEMORY_CAP_GIB: f64 = 8.0;
/// A JavaScript heap limit below this marks a small device.
const SMALL_HEAP_BYTES: f64 = 2.0 * (1u64 << 30) as f64;

/// What the page knows about the device (JSON from the page; every field optional).
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Hints {
    /// `navigator.deviceMemory`, GiB.
    pub device_memory_gib: Option<f64>,
    /// `performance.memory.jsHeapSizeLimit`, bytes.
    pub heap_limit: Option<f64>,
    /// A limit set by hand (the page's `?memlimit=`), MB (10⁶ bytes); replaces the others.
    pub limit_mb: Option<f64>,
    /// Compute workers, each holding a copy of the series.
    pub workers: usize,
}

/// The estimate and the verdict.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LoadEstimate {
    pub file_bytes: u64,
    /// Arrays as decoded from the files.
    pub decoded_bytes: u64,
    /// `[nt, ny, nx]` when the headers say.
    pub shape: Option<[u64; 3]>,
    pub vectors: Option<u64>,
    /// The series in the core (`B` of the module doc).
    pub series_bytes: u64,
    /// The page's core at its fullest.
    pub core_bytes: u64,
    /// The whole tab.
    pub tab_bytes: u64,
    pub core_limit: u64,
    /// `None`: no limit for the tab beyond the core's.
    pub tab_limit: Option<u64>,
    pub fits: bool,
    /// The estimate in words, e.g. "about 111 MB in this tab (…)".
    pub text: String,
    /// Why the files are refused, with the numbers and the rule; `None` when they fit.
    pub refusal: Option<String>,
}

/// Bytes for people, in decimal units: `310 MB`, `3.76 GB`.
pub fn format_bytes(b: u64) -> String {
    let b = b as f64;
    let (value, unit) = match b {
        _ if b >= 1e12 => (b / 1e12, "TB"),
        _ if b >= 1e9 => (b / 1e9, "GB"),
        _ if b >= 1e6 => (b / 1e6, "MB"),
        _ if b >= 1e3 => (b / 1e3, "kB"),
        _ => return format!("{b} bytes"),
    };
    format!("{} {unit}", format_sig(value, if value >= 100.0 { 3 } else { 2 }))
}

fn find<'a>(arrays: &'a [&ArrayHeader], name: &str) -> Option<&'a ArrayHeader> {
    arrays.iter().copied().find(|a| a.name.eq_ignore_ascii_case(name))
}

/// `[nt, ny, nx]` of the series the arrays make: from `u` (`(nt, ny, nx)` or one snapshot
/// `(ny, nx)`), else from the lengths of `t`, `y` and `x` (a reduced model rebuilds the
/// whole series from those).
fn series_shape(arrays: &[&ArrayHeader]) -> Option<[u64; 3]> {
    if let Some(u) = find(arrays, "u") {
        return match u.shape.as_slice() {
            [nt, ny, nx] => Some([*nt, *ny, *nx]),
            [ny, nx] => Some([1, *ny, *nx]),
            _ => None,
        };
    }
    let (x, y) = (find(arrays, "x")?, find(arrays, "y")?);
    let nt = find(arrays, "t").map_or(1, |t| t.elements());
    match x.shape.as_slice() {
        [ny, nx] => Some([nt, *ny, *nx]),
        _ => Some([nt, y.elements(), x.elements()]),
    }
}

/// Estimates the memory of reading `files` (`(size in bytes, what the probe found)`) and
/// judges it against the limits of `hints`.
pub fn estimate_load(files: &[(u64, FileLook)], hints: &Hints) -> LoadEstimate {
    let file_bytes: u64 = files.iter().map(|(s, _)| *s).sum();
    let arrays: Vec<&ArrayHeader> = files
        .iter()
        .filter_map(|(_, l)| if let FileLook::Arrays(a) = l { Some(a) } else { None })
        .flatten()
        .collect();
    let text_bytes: u64 = files.iter().filter(|(_, l)| *l == FileLook::Text).map(|(s, _)| *s).sum();
    let unknown_bytes: u64 =
        files.iter().filter(|(_, l)| *l == FileLook::Unknown).map(|(s, _)| *s).sum();
    let text_rows = text_bytes / TEXT_ROW_BYTES;
    let shape = series_shape(&arrays);
    let decoded_bytes = arrays.iter().map(|a| a.decoded).sum::<u64>() + text_rows * 4 * 8;
    let vectors = match shape {
        Some([nt, ny, nx]) => Some(nt.saturating_mul(ny).saturating_mul(nx)),
        None if text_rows > 0 => Some(text_rows),
        None => None,
    };
    let plane = shape.map_or(0, |[_, ny, nx]| ny.saturating_mul(nx));
    // Files whose content is unknown count as a series of their own size.
    let series_bytes =
        vectors.map_or(0, |n| n.saturating_mul(9).saturating_add(plane)) + unknown_bytes;
    let reading = file_bytes.saturating_add(decoded_bytes).saturating_add(series_bytes);
    let core_bytes = reading.max(series_bytes.saturating_mul(6));
    let tab_bytes = file_bytes
        .saturating_add(core_bytes)
        .saturating_add(series_bytes.saturating_mul(hints.workers as u64 + 4));

    let gib = (1u64 << 30) as f64;
    let (core_limit, tab_limit, rule) = match hints.limit_mb.filter(|l| *l > 0.0) {
        Some(mb) => {
            let l = (mb * 1e6) as u64;
            (l, Some(l), "the limit set for this page".to_string())
        }
        None => {
            let mut tab: Option<(u64, String)> = None;
            let mut lower = |bytes: f64, why: String| {
                if tab.as_ref().is_none_or(|(b, _)| (bytes as u64) < *b) {
                    tab = Some((bytes as u64, why));
                }
            };
            if let Some(dm) = hints.device_memory_gib.filter(|d| *d > 0.0) {
                if dm < DEVICE_MEMORY_CAP_GIB {
                    lower(
                        dm * gib / 2.0,
                        format!("half of the {} GB this device reports", format_sig(dm, 2)),
                    );
                }
            }
            if let Some(h) = hints.heap_limit.filter(|h| *h > 0.0 && *h < SMALL_HEAP_BYTES) {
                lower(h, "the memory limit the browser sets for this tab".into());
            }
            let core = WASM32_BYTES - HEADROOM_BYTES;
            let core_rule = "the 4 GiB a WebAssembly core can address, less 0.5 GiB for its \
                             code and results"
                .to_string();
            match tab {
                Some((b, why)) => (core, Some(b), format!("{why}; at most {core_rule}")),
                None => (core, None, core_rule),
            }
        }
    };
    let core_fits = core_bytes <= core_limit;
    let tab_fits = tab_limit.is_none_or(|l| tab_bytes <= l);
    let what = match shape {
        Some([nt, ny, nx]) => format!(
            "{} snapshot{} of {} × {} vectors",
            format_count(nt as usize),
            if nt == 1 { "" } else { "s" },
            format_count(nx as usize),
            format_count(ny as usize)
        ),
        None => match vectors {
            Some(n) => format!("about {} vectors", format_count(n as usize)),
            None => "contents unknown until read".into(),
        },
    };
    let text = format!(
        "about {} in this tab ({what}; {} of files)",
        format_bytes(tab_bytes),
        format_bytes(file_bytes)
    );
    let refusal = (!(core_fits && tab_fits)).then(|| {
        let (need, limit) = if !core_fits {
            (format!("about {} in the page's core at once", format_bytes(core_bytes)), core_limit)
        } else {
            (format!("about {} in this tab", format_bytes(tab_bytes)), tab_limit.unwrap_or(0))
        };
        format!(
            "these data ({what}) would need {need}, more than the limit of {} ({rule}). The \
             data already open stay as they are; the command-line tool has no such limit.",
            format_bytes(limit)
        )
    });
    LoadEstimate {
        file_bytes,
        decoded_bytes,
        shape,
        vectors,
        series_bytes,
        core_bytes,
        tab_bytes,
        core_limit,
        tab_limit,
        fits: refusal.is_none(),
        text,
        refusal,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn array(name: &str, shape: &[u64], item_size: u64) -> ArrayHeader {
        let elements: u64 = shape.iter().product();
        ArrayHeader {
            name: name.into(),
            shape: shape.to_vec(),
            item_size,
            decoded: elements * item_size + 128,
        }
    }

    /// The demo's layout: 240 snapshots of 100 × 40, float32, in a 6.9 MB archive.
    fn demo() -> (u64, FileLook) {
        (
            6_900_000,
            FileLook::Arrays(vec![
                array("x", &[100], 8),
                array("y", &[40], 8),
                array("t", &[240], 8),
                array("u", &[240, 40, 100], 4),
                array("v", &[240, 40, 100], 4),
                array("mask", &[40, 100], 1),
            ]),
        )
    }

    #[test]
    fn the_demo_fits_and_the_arithmetic_is_the_documented_one() {
        let e = estimate_load(&[demo()], &Hints { workers: 2, ..Hints::default() });
        let n = 240 * 40 * 100;
        let b = 9 * n + 4000;
        assert_eq!(e.shape, Some([240, 40, 100]));
        assert_eq!(e.series_bytes, b);
        let d = 2 * (n * 4 + 128) + (100 + 40 + 240) * 8 + 4000 + 4 * 128;
        assert_eq!(e.decoded_bytes, d);
        assert_eq!(e.core_bytes, (6_900_000 + d + b).max(6 * b));
        assert_eq!(e.tab_bytes, 6_900_000 + e.core_bytes + 6 * b);
        assert!(e.fits);
        assert_eq!(
            e.text,
            "about 111 MB in this tab (240 snapshots of 100 × 40 vectors; 6.9 MB of files)"
        );
        assert_eq!(e.refusal, None);
    }

    #[test]
    fn a_huge_header_is_refused_with_the_reason_and_the_limit() {
        let file = (1000, FileLook::Arrays(vec![array("u", &[5000, 2000, 2000], 4)]));
        let e = estimate_load(&[file], &Hints::default());
        assert!(!e.fits);
        let why = e.refusal.unwrap();
        assert!(
            why.starts_with(
                "these data (5,000 snapshots of 2,000 × 2,000 vectors) would need about 1"
            ),
            "{why}"
        );
        assert!(why.contains("in the page's core at once"), "{why}");
        assert!(
            why.contains("more than the limit of 3.8 GB (the 4 GiB a WebAssembly core"),
            "{why}"
        );
        assert_eq!(e.core_limit, 7u64 << 29);
    }

    #[test]
    fn small_devices_and_explicit_limits_lower_the_limit() {
        let small = Hints { device_memory_gib: Some(0.5), workers: 1, ..Hints::default() };
        let e = estimate_load(&[demo()], &small);
        assert_eq!(e.tab_limit, Some(1 << 28));
        assert!(e.fits, "111 MB fit in 256 MiB");
        let tiny = Hints { device_memory_gib: Some(0.25), workers: 8, ..Hints::default() };
        let e = estimate_load(&[demo()], &tiny);
        assert!(!e.fits);
        assert!(e.refusal.unwrap().contains("half of the 0.25 GB this device reports"));
        // The browsers' cap (8) says nothing about the device.
        let capped =
            Hints { device_memory_gib: Some(8.0), heap_limit: Some(4.29e9), ..Hints::default() };
        assert_eq!(estimate_load(&[demo()], &capped).tab_limit, None);
        let set = Hints { limit_mb: Some(50.0), ..Hints::default() };
        let e = estimate_load(&[demo()], &set);
        assert!(!e.fits);
        assert!(e.refusal.unwrap().contains("(the limit set for this page)"));
    }

    #[test]
    fn text_and_unknown_files_count_by_size() {
        let e = estimate_load(
            &[(24_000, FileLook::Text), (5_000, FileLook::Unknown)],
            &Hints::default(),
        );
        assert_eq!(e.vectors, Some(1000));
        assert_eq!(e.series_bytes, 9000 + 5000);
        assert_eq!(e.decoded_bytes, 1000 * 32);
    }

    #[test]
    fn a_reduced_model_counts_the_series_it_rebuilds() {
        let file = (
            100_000,
            FileLook::Arrays(vec![
                array("x", &[100], 8),
                array("y", &[40], 8),
                array("t", &[240], 8),
                array("mode_u", &[2, 40, 100], 4),
            ]),
        );
        assert_eq!(estimate_load(&[file], &Hints::default()).shape, Some([240, 40, 100]));
    }

    #[test]
    fn bytes_for_people() {
        assert_eq!(format_bytes(310_400_000), "310 MB");
        assert_eq!(format_bytes(3_758_096_384), "3.8 GB");
        assert_eq!(format_bytes(512), "512 bytes");
    }
}
