//! What the headers of a data file say before the file is read: the name, shape and item
//! size of each array of an `.npy` file or an `.npz` archive, from a few pieces of the file.
//!
//! The page uses this to estimate the memory a file will take before it reads the file
//! into the core ([`crate::memory`]). It cannot hand over a multi-gigabyte file just to
//! learn its size, so the probe works on pieces: it says which byte ranges it needs (the
//! head, the zip central directory at the end, the local header and `.npy` header of each
//! array), the page reads those ranges and asks again. Nothing here fails: a file whose
//! headers cannot be made sense of is [`FileLook::Unknown`], and the reader reports what is
//! wrong with it when it is read.
//!
//! Formats: `.npy` per the NumPy format specification (versions 1.0–3.0: magic, version,
//! little-endian header length, Python dict literal); zip per the PKWARE APPNOTE (end of
//! central directory, zip64 locator and record, central directory entries with the zip64
//! extra field, local file headers).

use super::npy_header::parse_header;
use flate2::{Decompress, FlushDecompress};

/// Bytes of the head and of the tail asked for first (the tail holds the zip directory).
pub const FIRST_LOOK: u64 = 64 * 1024;
/// Bytes asked for at each zip entry: the local header and, usually, the `.npy` header.
const ENTRY_LOOK: u64 = 4096;
/// An `.npy` header longer than this is not believed (the format pads it to a few hundred).
const MAX_NPY_HEADER: u64 = 1 << 20;

/// Bytes of a file starting at `offset`.
#[derive(Debug, Clone)]
pub struct Piece {
    pub offset: u64,
    pub bytes: Vec<u8>,
}

/// What the page has read of one file so far.
#[derive(Debug, Clone)]
pub struct FileSketch {
    pub name: String,
    pub size: u64,
    pub pieces: Vec<Piece>,
}

/// One array as its header describes it.
#[derive(Debug, Clone, PartialEq)]
pub struct ArrayHeader {
    /// The array name (`u`, `x`, …): the entry name without `.npy`, or the file stem.
    pub name: String,
    pub shape: Vec<u64>,
    /// Bytes per element.
    pub item_size: u64,
    /// Bytes of the array once decompressed (zip: the entry's uncompressed size).
    pub decoded: u64,
}

impl ArrayHeader {
    /// Elements of the array (saturating: a header may claim anything).
    pub fn elements(&self) -> u64 {
        self.shape.iter().fold(1u64, |a, &d| a.saturating_mul(d))
    }
}

/// What kind of content a file holds, as far as its headers tell.
#[derive(Debug, Clone, PartialEq)]
pub enum FileLook {
    /// `.npy` or `.npz`: the arrays whose headers could be read.
    Arrays(Vec<ArrayHeader>),
    /// A text table (one snapshot).
    Text,
    /// Anything else, or headers that make no sense (the reader will say why).
    Unknown,
}

/// The probe's answer: what is known so far and the byte ranges `(offset, length)` it still
/// needs to know more (empty when done).
#[derive(Debug, Clone, PartialEq)]
pub struct Probe {
    pub look: FileLook,
    pub need: Vec<(u64, u64)>,
}

impl Probe {
    fn done(look: FileLook) -> Probe {
        Probe { look, need: Vec::new() }
    }
    fn needs(look: FileLook, need: Vec<(u64, u64)>) -> Probe {
        Probe { look, need }
    }
}

impl FileSketch {
    /// `len` bytes at `offset`, if one piece holds them.
    fn at(&self, offset: u64, len: u64) -> Option<&[u8]> {
        self.pieces.iter().find_map(|p| {
            let start = offset.checked_sub(p.offset)?;
            let end = start.checked_add(len)?;
            (end <= p.bytes.len() as u64).then(|| &p.bytes[start as usize..end as usize])
        })
    }

    /// The longest run of known bytes starting at `offset`.
    fn from(&self, offset: u64) -> &[u8] {
        self.pieces
            .iter()
            .filter_map(|p| {
                let start = offset.checked_sub(p.offset)?;
                (start < p.bytes.len() as u64).then(|| &p.bytes[start as usize..])
            })
            .max_by_key(|s| s.len())
            .unwrap_or(&[])
    }

    /// The range `(offset, len)` clipped to the file.
    fn range(&self, offset: u64, len: u64) -> (u64, u64) {
        let offset = offset.min(self.size);
        (offset, len.min(self.size - offset))
    }
}

fn u16_at(b: &[u8], i: usize) -> u64 {
    u16::from_le_bytes([b[i], b[i + 1]]) as u64
}
fn u32_at(b: &[u8], i: usize) -> u64 {
    u32::from_le_bytes(b[i..i + 4].try_into().unwrap()) as u64
}
fn u64_at(b: &[u8], i: usize) -> u64 {
    u64::from_le_bytes(b[i..i + 8].try_into().unwrap())
}

/// Bytes per element of a dtype string (`<f4` → 4, `|b1` → 1, `<U8` → 32); 8 if unreadable.
fn item_size(descr: &str) -> u64 {
    let d = descr.trim_start_matches(['<', '>', '|', '=']);
    let kind = d.chars().next().unwrap_or('f');
    let n: u64 = d[kind.len_utf8()..].parse().unwrap_or(8);
    if kind == 'U' {
        4 * n
    } else {
        n
    }
}

/// The header of an `.npy` array whose first bytes are given.
enum NpyHead {
    Read {
        descr: String,
        shape: Vec<u64>,
        data_offset: u64,
    },
    /// The header needs this many bytes from the start of the array.
    More(u64),
    Bad,
}

fn npy_head(bytes: &[u8]) -> NpyHead {
    if bytes.len() < 10 {
        return NpyHead::More(12);
    }
    if !bytes.starts_with(b"\x93NUMPY") {
        return NpyHead::Bad;
    }
    let (len, start) = match bytes[6] {
        1 => (u16_at(bytes, 8), 10u64),
        2 | 3 if bytes.len() >= 12 => (u32_at(bytes, 8), 12),
        2 | 3 => return NpyHead::More(12),
        _ => return NpyHead::Bad,
    };
    if len > MAX_NPY_HEADER {
        return NpyHead::Bad;
    }
    let end = start + len;
    if (bytes.len() as u64) < end {
        return NpyHead::More(end);
    }
    match parse_header(&bytes[start as usize..end as usize]) {
        Ok(h) => NpyHead::Read {
            descr: h.descr,
            shape: h.shape.iter().map(|&d| d as u64).collect(),
            data_offset: end,
        },
        Err(_) => NpyHead::Bad,
    }
}

fn extension(name: &str) -> String {
    let base = super::base_name(name);
    base.rfind('.').filter(|&i| i > 0).map_or(String::new(), |i| base[i + 1..].to_lowercase())
}

fn stem(name: &str) -> String {
    let base = super::base_name(name);
    base.rfind('.').filter(|&i| i > 0).map_or(base, |i| &base[..i]).to_string()
}

/// What the headers of `file` say, from the pieces read so far.
pub fn probe(file: &FileSketch) -> Probe {
    let head_len = file.size.min(FIRST_LOOK);
    let Some(head) = file.at(0, head_len.min(8)) else {
        let mut need = vec![(0, head_len)];
        if file.size > FIRST_LOOK {
            need.push(file.range(file.size - FIRST_LOOK, FIRST_LOOK));
        }
        return Probe::needs(FileLook::Unknown, need);
    };
    let ext = extension(&file.name);
    if head.starts_with(b"\x93NUMPY") {
        probe_npy(file)
    } else if head.starts_with(b"PK\x03\x04") || head.starts_with(b"PK\x05\x06") {
        probe_npz(file)
    } else if super::TEXT_EXTENSIONS.contains(&ext.as_str()) {
        Probe::done(FileLook::Text)
    } else {
        Probe::done(FileLook::Unknown)
    }
}

fn probe_npy(file: &FileSketch) -> Probe {
    match npy_head(file.from(0)) {
        NpyHead::Read { descr, shape, data_offset } => {
            Probe::done(FileLook::Arrays(vec![ArrayHeader {
                name: stem(&file.name),
                shape,
                item_size: item_size(&descr),
                decoded: file.size.saturating_sub(data_offset),
            }]))
        }
        NpyHead::More(n) if n <= file.size => {
            Probe::needs(FileLook::Unknown, vec![file.range(0, n)])
        }
        _ => Probe::done(FileLook::Unknown),
    }
}

/// A `.npy` member of a zip archive, from the central directory.
struct Entry {
    name: String,
    method: u64,
    compressed: u64,
    decoded: u64,
    local: u64,
}

/// The central directory's `(offset, size)`, or the ranges needed to find it.
fn central_directory(file: &FileSketch) -> Result<(u64, u64), Vec<(u64, u64)>> {
    let tail_len = file.size.min(FIRST_LOOK);
    let tail_start = file.size - tail_len;
    let Some(tail) = file.at(tail_start, tail_len) else {
        return Err(vec![(tail_start, tail_len)]);
    };
    let Some(pos) =
        (0..tail.len().saturating_sub(21)).rev().find(|&i| tail[i..].starts_with(b"PK\x05\x06"))
    else {
        return Err(Vec::new());
    };
    let (size, offset) = (u32_at(tail, pos + 12), u32_at(tail, pos + 16));
    if size != 0xFFFF_FFFF && offset != 0xFFFF_FFFF {
        return Ok((offset, size));
    }
    // Zip64: the locator sits just before the end record and points at the zip64 record.
    let locator = tail_start + pos as u64;
    let Some(loc) = locator.checked_sub(20).and_then(|at| file.at(at, 20)) else {
        return Err(Vec::new());
    };
    if !loc.starts_with(b"PK\x06\x07") {
        return Err(Vec::new());
    }
    let record = u64_at(loc, 8);
    match file.at(record, 56) {
        Some(r) if r.starts_with(b"PK\x06\x06") => Ok((u64_at(r, 48), u64_at(r, 40))),
        Some(_) => Err(Vec::new()),
        None if record < file.size => Err(vec![file.range(record, 56)]),
        None => Err(Vec::new()),
    }
}

fn entries(dir: &[u8]) -> Vec<Entry> {
    let mut out = Vec::new();
    let mut p = 0usize;
    while p + 46 <= dir.len() && dir[p..].starts_with(b"PK\x01\x02") {
        let method = u16_at(dir, p + 10);
        let (mut compressed, mut decoded) = (u32_at(dir, p + 20), u32_at(dir, p + 24));
        let (nlen, elen, clen) = (
            u16_at(dir, p + 28) as usize,
            u16_at(dir, p + 30) as usize,
            u16_at(dir, p + 32) as usize,
        );
        let mut local = u32_at(dir, p + 42);
        let end = p + 46 + nlen + elen + clen;
        if end > dir.len() {
            break;
        }
        let name = String::from_utf8_lossy(&dir[p + 46..p + 46 + nlen]).into_owned();
        // The zip64 extra field holds, in this order, only the values saturated above.
        let mut e = p + 46 + nlen;
        while e + 4 <= p + 46 + nlen + elen {
            let (id, len) = (u16_at(dir, e), u16_at(dir, e + 2) as usize);
            if id == 1 {
                let mut q = e + 4;
                for field in [&mut decoded, &mut compressed, &mut local] {
                    if *field == 0xFFFF_FFFF && q + 8 <= e + 4 + len {
                        *field = u64_at(dir, q);
                        q += 8;
                    }
                }
            }
            e += 4 + len;
        }
        if let Some(array) = name.strip_suffix(".npy") {
            out.push(Entry { name: array.to_string(), method, compressed, decoded, local });
        }
        p = end;
    }
    out
}

/// The first bytes of an entry's contents (inflated if deflated), at most `want`.
fn entry_start(file: &FileSketch, data: u64, e: &Entry, want: usize) -> Vec<u8> {
    let known = file.from(data);
    let known = &known[..known.len().min(e.compressed as usize)];
    match e.method {
        0 => known[..known.len().min(want)].to_vec(),
        8 => {
            let mut out = Vec::with_capacity(want);
            let _ = Decompress::new(false).decompress_vec(known, &mut out, FlushDecompress::None);
            out
        }
        _ => Vec::new(),
    }
}

fn probe_npz(file: &FileSketch) -> Probe {
    let (offset, size) = match central_directory(file) {
        Ok(found) => found,
        Err(need) if need.is_empty() => return Probe::done(FileLook::Unknown),
        Err(need) => return Probe::needs(FileLook::Unknown, need),
    };
    if offset.saturating_add(size) > file.size {
        return Probe::done(FileLook::Unknown);
    }
    let Some(dir) = file.at(offset, size) else {
        return Probe::needs(FileLook::Unknown, vec![(offset, size)]);
    };
    let mut arrays = Vec::new();
    let mut need = Vec::new();
    for e in entries(dir) {
        let Some(local) = file.at(e.local, 30) else {
            if e.local + 30 <= file.size {
                need.push(file.range(e.local, ENTRY_LOOK));
            }
            continue;
        };
        if !local.starts_with(b"PK\x03\x04") {
            continue;
        }
        let data = e.local + 30 + u16_at(local, 26) + u16_at(local, 28);
        let start = entry_start(file, data, &e, FIRST_LOOK as usize);
        match npy_head(&start) {
            NpyHead::Read { descr, shape, .. } => arrays.push(ArrayHeader {
                name: e.name,
                shape,
                item_size: item_size(&descr),
                decoded: e.decoded,
            }),
            NpyHead::More(n) => {
                // Compressed bytes rarely exceed the header they hold; ask for a margin.
                let have = file.from(data).len() as u64;
                let more = (2 * n).max(have * 2).min(e.compressed);
                if more > have {
                    need.push(file.range(data, more));
                }
            }
            NpyHead::Bad => {}
        }
    }
    Probe::needs(FileLook::Arrays(arrays), need)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::{write_arrays_npz, NpyArray, NpyData};

    /// Runs the probe as the page does: read what it asks for until it asks for nothing.
    fn probe_all(name: &str, bytes: &[u8]) -> (FileLook, usize) {
        let mut file = FileSketch { name: name.into(), size: bytes.len() as u64, pieces: vec![] };
        for round in 1..10 {
            let p = probe(&file);
            if p.need.is_empty() {
                return (p.look, round);
            }
            for (o, l) in p.need {
                file.pieces
                    .push(Piece { offset: o, bytes: bytes[o as usize..(o + l) as usize].to_vec() });
            }
        }
        panic!("the probe keeps asking");
    }

    fn header_only(shape: &str) -> Vec<u8> {
        let dict = format!("{{'descr': '<f4', 'fortran_order': False, 'shape': {shape}, }}");
        let mut h = dict.into_bytes();
        while (h.len() + 11) % 64 != 0 {
            h.push(b' ');
        }
        h.push(b'\n');
        let mut out = b"\x93NUMPY\x01\x00".to_vec();
        out.extend_from_slice(&(h.len() as u16).to_le_bytes());
        out.extend_from_slice(&h);
        out.extend_from_slice(&[0u8; 100]); // truncated data
        out
    }

    #[test]
    fn npy_header_of_a_truncated_file() {
        let (look, _) = probe_all("data/u.npy", &header_only("(5000, 2000, 2000)"));
        let FileLook::Arrays(a) = look else { panic!("{look:?}") };
        assert_eq!(a[0].name, "u");
        assert_eq!(a[0].shape, vec![5000, 2000, 2000]);
        assert_eq!(a[0].item_size, 4);
        assert_eq!(a[0].elements(), 20_000_000_000);
    }

    #[test]
    fn npz_arrays_from_the_central_directory_and_headers() {
        // Large enough that the tail does not reach the first local headers.
        let (nt, ny, nx) = (40, 30, 50);
        let noise = |n: usize| {
            let mut state = 0x2545_f491_u32;
            (0..n)
                .map(|_| {
                    state ^= state << 13;
                    state ^= state >> 17;
                    state ^= state << 5;
                    state as f32 / u32::MAX as f32
                })
                .collect()
        };
        let bytes = write_arrays_npz(&[
            NpyArray::new("x", vec![nx], NpyData::F64(vec![0.0; nx])),
            NpyArray::new("u", vec![nt, ny, nx], NpyData::F32(noise(nt * ny * nx))),
            NpyArray::new("v", vec![nt, ny, nx], NpyData::F64(vec![1.0; nt * ny * nx])),
            NpyArray::new("mask", vec![ny, nx], NpyData::Bool(vec![false; ny * nx])),
        ]);
        assert!(bytes.len() as u64 > FIRST_LOOK * 2);
        let (look, rounds) = probe_all("run.npz", &bytes);
        assert!(rounds <= 3, "{rounds} rounds");
        let FileLook::Arrays(a) = look else { panic!("{look:?}") };
        let names: Vec<&str> = a.iter().map(|h| h.name.as_str()).collect();
        assert_eq!(names, ["x", "u", "v", "mask"]);
        assert_eq!(a[1].shape, vec![40, 30, 50]);
        assert_eq!((a[1].item_size, a[2].item_size, a[3].item_size), (4, 8, 1));
        assert_eq!(a[2].decoded, (nt * ny * nx * 8) as u64 + 128);
    }

    #[test]
    fn text_and_garbage() {
        assert_eq!(probe_all("a.csv", b"x,y,u,v\n0,0,1,1\n").0, FileLook::Text);
        assert_eq!(probe_all("a.bin", &[1, 2, 3, 4, 5, 6, 7, 8, 9]).0, FileLook::Unknown);
        assert_eq!(probe_all("a.npz", b"PK\x03\x04 not really a zip").0, FileLook::Unknown);
        assert_eq!(probe_all("a.npy", b"\x93NUMPY\x01\x00\xff\xffshort").0, FileLook::Unknown);
        assert_eq!(probe_all("empty.npy", b"").0, FileLook::Unknown);
    }

    #[test]
    fn item_sizes() {
        assert_eq!(item_size("<f8"), 8);
        assert_eq!(item_size("|b1"), 1);
        assert_eq!(item_size("<U3"), 12);
        assert_eq!(item_size("nonsense"), 8);
    }
}
