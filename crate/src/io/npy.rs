//! `.npy` arrays: a reader and a writer for the open NumPy array format, versions 1.0, 2.0
//! and 3.0.
//!
//! Layout of a file: the magic bytes `\x93NUMPY`, a major and a minor version byte, the
//! header length (2 bytes little-endian in version 1, 4 bytes in versions 2 and 3), the
//! header (a Python dict literal, see [`super::npy_header`]; Latin-1 text up to version 2,
//! UTF-8 in version 3) padded with spaces and a newline so the data starts on a multiple of
//! 64 bytes, then the raw data in C (row-major) or Fortran (column-major) order.
//!
//! Read: floats (`f2`, `f4`, `f8`), booleans (`b1`), signed and unsigned integers of 1, 2, 4
//! and 8 bytes, and Unicode (`U`) or byte (`S`) strings of one element, in either byte
//! order and either memory order. Fortran-ordered data is reordered to C order on reading,
//! so every [`NpyArray`] is row-major. Complex, object, structured and date-time arrays are
//! refused with a message saying why. Written: C order, little-endian, version 1.0 (2.0 when
//! the header needs more than 65,535 bytes).

use super::npy_header::{format_header, parse_header};

/// The values of an array, in C (row-major) order.
#[derive(Debug, Clone, PartialEq)]
pub enum NpyData {
    F32(Vec<f32>),
    F64(Vec<f64>),
    Bool(Vec<bool>),
    U8(Vec<u8>),
    I64(Vec<i64>),
    /// A string array of one element (typically 0-d), e.g. a unit name.
    Str(String),
}

/// A named n-dimensional array as stored in `.npy` / `.npz` files.
#[derive(Debug, Clone, PartialEq)]
pub struct NpyArray {
    pub name: String,
    /// Dimensions, slowest-varying first; empty for a 0-d (scalar) array.
    pub shape: Vec<usize>,
    pub data: NpyData,
}

const MAGIC: &[u8] = b"\x93NUMPY";
/// The data starts on a multiple of this many bytes (format specification, version 1.0+).
const ALIGN: usize = 64;

impl NpyData {
    /// Number of elements held.
    pub fn len(&self) -> usize {
        match self {
            NpyData::F32(v) => v.len(),
            NpyData::F64(v) => v.len(),
            NpyData::Bool(v) => v.len(),
            NpyData::U8(v) => v.len(),
            NpyData::I64(v) => v.len(),
            NpyData::Str(_) => 1,
        }
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// A short name of the element type for messages, e.g. `float32`.
    pub fn type_name(&self) -> &'static str {
        match self {
            NpyData::F32(_) => "float32",
            NpyData::F64(_) => "float64",
            NpyData::Bool(_) => "bool",
            NpyData::U8(_) => "uint8",
            NpyData::I64(_) => "int64",
            NpyData::Str(_) => "string",
        }
    }
}

impl NpyArray {
    /// Builds an array, checking that `shape` holds as many elements as `data`.
    ///
    /// # Panics
    /// If the element count of `shape` differs from `data.len()`: a programming error.
    #[track_caller]
    pub fn new(name: impl Into<String>, shape: Vec<usize>, data: NpyData) -> NpyArray {
        let n: usize = shape.iter().product();
        assert_eq!(
            n,
            data.len(),
            "NpyArray::new: shape {shape:?} holds {n} elements but the data has {}",
            data.len()
        );
        NpyArray { name: name.into(), shape, data }
    }

    /// Number of elements (product of the shape; 1 for a 0-d array).
    pub fn len(&self) -> usize {
        self.shape.iter().product()
    }
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The values as `f64` if the array is numeric (floats or integers).
    pub fn to_f64(&self) -> Option<Vec<f64>> {
        match &self.data {
            NpyData::F32(v) => Some(v.iter().map(|&x| x as f64).collect()),
            NpyData::F64(v) => Some(v.clone()),
            NpyData::U8(v) => Some(v.iter().map(|&x| x as f64).collect()),
            NpyData::I64(v) => Some(v.iter().map(|&x| x as f64).collect()),
            NpyData::Bool(_) | NpyData::Str(_) => None,
        }
    }

    /// The values as `f32` if the array is numeric.
    pub fn to_f32(&self) -> Option<Vec<f32>> {
        match &self.data {
            NpyData::F32(v) => Some(v.clone()),
            NpyData::F64(v) => Some(v.iter().map(|&x| x as f32).collect()),
            NpyData::U8(v) => Some(v.iter().map(|&x| x as f32).collect()),
            NpyData::I64(v) => Some(v.iter().map(|&x| x as f32).collect()),
            NpyData::Bool(_) | NpyData::Str(_) => None,
        }
    }

    /// The values as flags: booleans as they are, numbers as "nonzero".
    pub fn to_bool(&self) -> Option<Vec<bool>> {
        match &self.data {
            NpyData::Bool(v) => Some(v.clone()),
            NpyData::Str(_) => None,
            _ => self.to_f64().map(|v| v.iter().map(|&x| x != 0.0).collect()),
        }
    }

    /// The `.npy` file bytes of this array.
    pub fn to_npy_bytes(&self) -> Vec<u8> {
        write_npy(self)
    }
}

/// The element type described by a dtype string such as `<f4`.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Kind {
    Float,
    Int,
    UInt,
    Bool,
    Unicode,
    Bytes,
}

#[derive(Debug, Clone, Copy)]
struct Dtype {
    kind: Kind,
    /// Bytes per element (for `U`, 4 per character).
    size: usize,
    big_endian: bool,
}

fn parse_dtype(descr: &str) -> Result<Dtype, String> {
    let (order, rest) = match descr.chars().next() {
        Some(c @ ('<' | '>' | '|' | '=')) => (c, &descr[1..]),
        _ => ('=', descr),
    };
    // '=' is the writer's native order; every platform this crate targets is little-endian.
    let big_endian = order == '>';
    let code = rest.chars().next().unwrap_or(' ');
    let num: Option<usize> = rest.get(1..).and_then(|s| s.parse().ok());
    let unsupported = |what: &str| {
        Err(format!(
            "dtype '{descr}' ({what}) is not supported; save real numbers (float32/float64), \
             integers, booleans or a single string"
        ))
    };
    let dtype = |kind, size| Ok(Dtype { kind, size, big_endian });
    match (code, num) {
        ('f', Some(s @ (2 | 4 | 8))) => dtype(Kind::Float, s),
        ('i', Some(s @ (1 | 2 | 4 | 8))) => dtype(Kind::Int, s),
        ('u', Some(s @ (1 | 2 | 4 | 8))) => dtype(Kind::UInt, s),
        ('b', Some(1)) | ('?', _) => dtype(Kind::Bool, 1),
        ('U', Some(n)) => dtype(Kind::Unicode, 4 * n),
        ('S', Some(n)) | ('a', Some(n)) => dtype(Kind::Bytes, n),
        ('c', _) => unsupported("complex numbers"),
        ('O', _) => Err(format!(
            "dtype '{descr}' is an object array (pickled Python objects), which cannot be read \
             safely; save plain numeric arrays instead"
        )),
        ('V', _) => unsupported("raw or structured records"),
        ('M' | 'm', _) => unsupported("dates or time deltas"),
        ('f', Some(16)) => unsupported("extended precision floats"),
        _ => Err(format!("dtype '{descr}' is not a known array type")),
    }
}

/// Converts IEEE 754 half-precision bits to `f32` (exact: every half is an f32).
fn half_to_f32(h: u16) -> f32 {
    let sign = ((h >> 15) as u32) << 31;
    let exp = ((h >> 10) & 0x1f) as u32;
    let frac = (h & 0x3ff) as u32;
    let bits = match (exp, frac) {
        (0, 0) => sign,
        (0, f) => {
            // Subnormal half: value = f · 2^-24, exactly representable in f32.
            let v = f as f32 * (1.0 / 16_777_216.0);
            return if sign != 0 { -v } else { v };
        }
        (0x1f, f) => sign | 0x7f80_0000 | (f << 13),
        (e, f) => sign | ((e + 112) << 23) | (f << 13),
    };
    f32::from_bits(bits)
}

/// Reads fixed-size elements, swapping bytes for the file's order.
fn elements<const N: usize>(raw: &[u8], big_endian: bool) -> impl Iterator<Item = [u8; N]> + '_ {
    raw.chunks_exact(N).map(move |c| {
        let mut b = [0u8; N];
        b.copy_from_slice(c);
        if big_endian {
            b.reverse();
        }
        b
    })
}

fn decode(dt: Dtype, raw: &[u8], count: usize) -> Result<NpyData, String> {
    let be = dt.big_endian;
    Ok(match (dt.kind, dt.size) {
        (Kind::Float, 2) => NpyData::F32(
            elements::<2>(raw, be).map(|b| half_to_f32(u16::from_le_bytes(b))).collect(),
        ),
        (Kind::Float, 4) => NpyData::F32(elements::<4>(raw, be).map(f32::from_le_bytes).collect()),
        (Kind::Float, _) => NpyData::F64(elements::<8>(raw, be).map(f64::from_le_bytes).collect()),
        (Kind::Bool, _) => NpyData::Bool(raw.iter().map(|&b| b != 0).collect()),
        (Kind::UInt, 1) => NpyData::U8(raw.to_vec()),
        (Kind::Int, 1) => NpyData::I64(raw.iter().map(|&b| b as i8 as i64).collect()),
        (Kind::Int, 2) => {
            NpyData::I64(elements::<2>(raw, be).map(|b| i16::from_le_bytes(b) as i64).collect())
        }
        (Kind::UInt, 2) => {
            NpyData::I64(elements::<2>(raw, be).map(|b| u16::from_le_bytes(b) as i64).collect())
        }
        (Kind::Int, 4) => {
            NpyData::I64(elements::<4>(raw, be).map(|b| i32::from_le_bytes(b) as i64).collect())
        }
        (Kind::UInt, 4) => {
            NpyData::I64(elements::<4>(raw, be).map(|b| u32::from_le_bytes(b) as i64).collect())
        }
        (Kind::Int, _) => NpyData::I64(elements::<8>(raw, be).map(i64::from_le_bytes).collect()),
        (Kind::UInt, _) => NpyData::I64(
            elements::<8>(raw, be)
                .enumerate()
                .map(|(i, b)| {
                    let x = u64::from_le_bytes(b);
                    i64::try_from(x).map_err(|_| {
                        format!("element {i} ({x}) does not fit a signed 64-bit integer")
                    })
                })
                .collect::<Result<_, _>>()?,
        ),
        (Kind::Unicode, _) | (Kind::Bytes, _) => {
            if count != 1 {
                return Err(format!(
                    "string arrays are read only with a single element (a name or a unit); \
                     this one has {count}"
                ));
            }
            let text = if dt.kind == Kind::Unicode {
                let mut s = String::new();
                for (i, b) in elements::<4>(raw, be).enumerate() {
                    let code = u32::from_le_bytes(b);
                    if code == 0 {
                        break;
                    }
                    let c = char::from_u32(code).ok_or_else(|| {
                        format!("character {i} of the string is not valid Unicode ({code:#x})")
                    })?;
                    s.push(c);
                }
                s
            } else {
                let end = raw.iter().position(|&b| b == 0).unwrap_or(raw.len());
                String::from_utf8_lossy(&raw[..end]).into_owned()
            };
            NpyData::Str(text)
        }
    })
}

/// Reorders column-major elements of `shape` into row-major order.
fn fortran_to_c<T: Clone>(data: &[T], shape: &[usize]) -> Vec<T> {
    let nd = shape.len();
    if nd < 2 || data.is_empty() {
        return data.to_vec();
    }
    // Column-major strides: the first index varies fastest.
    let mut fstride = vec![1usize; nd];
    for k in 1..nd {
        fstride[k] = fstride[k - 1] * shape[k - 1];
    }
    let mut idx = vec![0usize; nd];
    let mut out = Vec::with_capacity(data.len());
    let mut offset = 0usize;
    for _ in 0..data.len() {
        out.push(data[offset].clone());
        // Advance the row-major multi-index (last index fastest), updating the offset.
        for k in (0..nd).rev() {
            idx[k] += 1;
            offset += fstride[k];
            if idx[k] < shape[k] {
                break;
            }
            offset -= fstride[k] * shape[k];
            idx[k] = 0;
        }
    }
    out
}

fn reorder(data: NpyData, shape: &[usize]) -> NpyData {
    match data {
        NpyData::F32(v) => NpyData::F32(fortran_to_c(&v, shape)),
        NpyData::F64(v) => NpyData::F64(fortran_to_c(&v, shape)),
        NpyData::Bool(v) => NpyData::Bool(fortran_to_c(&v, shape)),
        NpyData::U8(v) => NpyData::U8(fortran_to_c(&v, shape)),
        NpyData::I64(v) => NpyData::I64(fortran_to_c(&v, shape)),
        s @ NpyData::Str(_) => s,
    }
}

/// Parses the bytes of one `.npy` file. The error is a plain reason; the caller adds the
/// file and array names.
pub(crate) fn parse_npy(name: &str, bytes: &[u8]) -> Result<NpyArray, String> {
    if bytes.len() < MAGIC.len() || &bytes[..MAGIC.len()] != MAGIC {
        return Err(if bytes.is_empty() {
            "the file is empty".into()
        } else {
            "not a .npy array: the file does not start with the magic bytes \\x93NUMPY".into()
        });
    }
    if bytes.len() < 10 {
        return Err(format!("truncated: {} bytes, too short for the .npy preamble", bytes.len()));
    }
    let major = bytes[6];
    let (len_bytes, utf8) = match major {
        1 => (2, false),
        2 => (4, false),
        3 => (4, true),
        m => {
            return Err(format!(
                "format version {m}.{} is not supported (1.0, 2.0 and 3.0 are)",
                bytes[7]
            ))
        }
    };
    let start = 8 + len_bytes;
    if bytes.len() < start {
        return Err("truncated inside the header length".into());
    }
    let header_len = if len_bytes == 2 {
        u16::from_le_bytes([bytes[8], bytes[9]]) as usize
    } else {
        u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]) as usize
    };
    let data_start =
        start.checked_add(header_len).filter(|&e| e <= bytes.len()).ok_or_else(|| {
            format!(
                "truncated: the header should be {header_len} bytes but the file ends after {}",
                bytes.len().saturating_sub(start)
            )
        })?;
    let header_bytes = &bytes[start..data_start];
    if utf8 && std::str::from_utf8(header_bytes).is_err() {
        return Err("the version 3.0 header is not valid UTF-8".into());
    }
    let header = parse_header(header_bytes).map_err(|e| format!("malformed header: {e}"))?;
    let dt = parse_dtype(&header.descr)?;
    let count = header
        .shape
        .iter()
        .try_fold(1usize, |acc, &d| acc.checked_mul(d))
        .ok_or_else(|| format!("shape {:?} is too large", header.shape))?;
    let need = count
        .checked_mul(dt.size)
        .ok_or_else(|| format!("shape {:?} is too large", header.shape))?;
    let raw = &bytes[data_start..];
    if raw.len() < need {
        return Err(format!(
            "truncated: shape {:?} of dtype '{}' needs {need} bytes of data but only {} are present",
            header.shape,
            header.descr,
            raw.len()
        ));
    }
    if raw.len() > need {
        return Err(format!(
            "{} bytes follow the data of shape {:?} and dtype '{}' ({need} bytes); \
             the header does not describe this file",
            raw.len() - need,
            header.shape,
            header.descr
        ));
    }
    let mut data = decode(dt, raw, count)?;
    if header.fortran_order {
        data = reorder(data, &header.shape);
    }
    Ok(NpyArray { name: name.to_string(), shape: header.shape, data })
}

/// The `.npy` bytes of `a`: C order, little-endian.
pub(crate) fn write_npy(a: &NpyArray) -> Vec<u8> {
    let (descr, body): (String, Vec<u8>) = match &a.data {
        NpyData::F32(v) => ("<f4".into(), v.iter().flat_map(|x| x.to_le_bytes()).collect()),
        NpyData::F64(v) => ("<f8".into(), v.iter().flat_map(|x| x.to_le_bytes()).collect()),
        NpyData::Bool(v) => ("|b1".into(), v.iter().map(|&b| b as u8).collect()),
        NpyData::U8(v) => ("|u1".into(), v.clone()),
        NpyData::I64(v) => ("<i8".into(), v.iter().flat_map(|x| x.to_le_bytes()).collect()),
        NpyData::Str(s) => {
            // A zero-length Unicode dtype is not valid; an empty string is stored as '<U1'.
            let n = s.chars().count().max(1);
            let mut body: Vec<u8> = s.chars().flat_map(|c| (c as u32).to_le_bytes()).collect();
            body.resize(4 * n, 0);
            (format!("<U{n}"), body)
        }
    };
    let shape = if matches!(a.data, NpyData::Str(_)) && a.len() != 1 {
        Vec::new()
    } else {
        a.shape.clone()
    };
    let dict = format_header(&descr, &shape);
    // Version 1.0 stores the header length in 2 bytes; larger headers need version 2.0.
    let (major, prefix) =
        if dict.len() + 1 + 10 <= u16::MAX as usize { (1u8, 10usize) } else { (2u8, 12usize) };
    let total = (prefix + dict.len() + 1).div_ceil(ALIGN) * ALIGN;
    let header_len = total - prefix;
    let mut out = Vec::with_capacity(total + body.len());
    out.extend_from_slice(MAGIC);
    out.extend_from_slice(&[major, 0]);
    if major == 1 {
        out.extend_from_slice(&(header_len as u16).to_le_bytes());
    } else {
        out.extend_from_slice(&(header_len as u32).to_le_bytes());
    }
    out.extend_from_slice(dict.as_bytes());
    out.resize(total - 1, b' ');
    out.push(b'\n');
    out.extend_from_slice(&body);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Builds a .npy file by hand, as the format specification describes it.
    fn handmade(major: u8, descr: &str, fortran: bool, shape: &str, body: &[u8]) -> Vec<u8> {
        let dict = format!(
            "{{'descr': '{descr}', 'fortran_order': {}, 'shape': {shape}, }}\n",
            if fortran { "True" } else { "False" }
        );
        let mut out = MAGIC.to_vec();
        out.extend_from_slice(&[major, 0]);
        if major == 1 {
            out.extend_from_slice(&(dict.len() as u16).to_le_bytes());
        } else {
            out.extend_from_slice(&(dict.len() as u32).to_le_bytes());
        }
        out.extend_from_slice(dict.as_bytes());
        out.extend_from_slice(body);
        out
    }

    #[test]
    fn written_files_follow_the_spec_and_read_back() {
        let arrays = [
            NpyArray::new("a", vec![2, 3], NpyData::F32(vec![1.0, 2.5, -3.0, 4.0, 5.0, 6.0])),
            NpyArray::new("b", vec![3], NpyData::F64(vec![0.1, 1e-300, f64::MAX])),
            NpyArray::new("c", vec![2, 2], NpyData::Bool(vec![true, false, false, true])),
            NpyArray::new("d", vec![2], NpyData::U8(vec![0, 255])),
            NpyArray::new("e", vec![1, 2], NpyData::I64(vec![i64::MIN, 7])),
            NpyArray::new("f", vec![], NpyData::Str("µm".into())),
            NpyArray::new("g", vec![0, 4], NpyData::F64(vec![])),
        ];
        for a in &arrays {
            let bytes = write_npy(a);
            // Format specification: the data start is aligned to 64 bytes, header ends in '\n'.
            let header_len = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
            assert_eq!((10 + header_len) % 64, 0);
            assert_eq!(bytes[9 + header_len], b'\n');
            let back = parse_npy(&a.name, &bytes).unwrap();
            assert_eq!(&back, a);
        }
    }

    #[test]
    fn reads_every_integer_width_and_byte_order() {
        let cases: [(&str, Vec<u8>, Vec<i64>); 8] = [
            ("|i1", vec![0xff, 0x05], vec![-1, 5]),
            ("<i2", vec![0xfe, 0xff, 0x00, 0x01], vec![-2, 256]),
            (">i2", vec![0xff, 0xfe, 0x01, 0x00], vec![-2, 256]),
            ("<u2", vec![0xff, 0xff, 0x01, 0x00], vec![65535, 1]),
            (
                "<i4",
                (-7i32).to_le_bytes().into_iter().chain(9i32.to_le_bytes()).collect(),
                vec![-7, 9],
            ),
            (
                ">u4",
                4_000_000_000u32.to_be_bytes().into_iter().chain(1u32.to_be_bytes()).collect(),
                vec![4_000_000_000, 1],
            ),
            (
                "<i8",
                (-3i64).to_le_bytes().into_iter().chain(3i64.to_le_bytes()).collect(),
                vec![-3, 3],
            ),
            (
                ">u8",
                10u64.to_be_bytes().into_iter().chain(11u64.to_be_bytes()).collect(),
                vec![10, 11],
            ),
        ];
        for (descr, body, want) in cases {
            let a = parse_npy("n", &handmade(1, descr, false, "(2,)", &body)).unwrap();
            assert_eq!(a.data, NpyData::I64(want), "{descr}");
        }
        let a = parse_npy("n", &handmade(1, "|u1", false, "(2,)", &[3, 250])).unwrap();
        assert_eq!(a.data, NpyData::U8(vec![3, 250]));
        let too_big = u64::MAX.to_le_bytes();
        let e = parse_npy("n", &handmade(1, "<u8", false, "(1,)", &too_big)).unwrap_err();
        assert!(e.contains("does not fit"), "{e}");
    }

    #[test]
    fn reads_floats_in_both_orders_and_versions() {
        let be: Vec<u8> = [1.5f32, -2.0].iter().flat_map(|x| x.to_be_bytes()).collect();
        for major in [1, 2, 3] {
            let a = parse_npy("f", &handmade(major, ">f4", false, "(2,)", &be)).unwrap();
            assert_eq!(a.data, NpyData::F32(vec![1.5, -2.0]));
        }
        // IEEE 754 binary16: 0x3c00 = 1.0, 0xc000 = -2.0, 0x0001 = 2^-24, 0x7c00 = +inf.
        let half: Vec<u8> =
            [0x3c00u16, 0xc000, 0x0001, 0x7c00].iter().flat_map(|h| h.to_le_bytes()).collect();
        let a = parse_npy("h", &handmade(1, "<f2", false, "(4,)", &half)).unwrap();
        assert_eq!(a.data, NpyData::F32(vec![1.0, -2.0, 2f32.powi(-24), f32::INFINITY]));
    }

    #[test]
    fn fortran_order_is_reordered_to_c_order() {
        // The 2×3 matrix [[0,1,2],[3,4,5]] in column-major order is 0,3,1,4,2,5.
        let body: Vec<u8> =
            [0.0f64, 3.0, 1.0, 4.0, 2.0, 5.0].iter().flat_map(|x| x.to_le_bytes()).collect();
        let a = parse_npy("m", &handmade(1, "<f8", true, "(2, 3)", &body)).unwrap();
        assert_eq!(a.data, NpyData::F64(vec![0.0, 1.0, 2.0, 3.0, 4.0, 5.0]));
        // 3-D: element [i,j,k] of shape (2,3,4) sits at i + 2j + 6k in column-major order.
        let shape = [2usize, 3, 4];
        let mut fdata = vec![0i64; 24];
        for i in 0..2 {
            for j in 0..3 {
                for k in 0..4 {
                    fdata[i + 2 * j + 6 * k] = (100 * i + 10 * j + k) as i64;
                }
            }
        }
        let c = fortran_to_c(&fdata, &shape);
        let want: Vec<i64> = (0..2)
            .flat_map(|i| {
                (0..3).flat_map(move |j| (0..4).map(move |k| (100 * i + 10 * j + k) as i64))
            })
            .collect();
        assert_eq!(c, want);
    }

    #[test]
    fn malformed_files_are_reported() {
        let ok = write_npy(&NpyArray::new("a", vec![4], NpyData::F64(vec![1.0; 4])));
        let e = parse_npy("a", &ok[..ok.len() - 3]).unwrap_err();
        assert!(e.contains("truncated") && e.contains("32 bytes"), "{e}");
        let e = parse_npy("a", &ok[..40]).unwrap_err();
        assert!(e.contains("truncated"), "{e}");
        let e = parse_npy("a", &ok[..9]).unwrap_err();
        assert!(e.contains("truncated"), "{e}");
        let e = parse_npy("a", b"PK\x03\x04 not numpy").unwrap_err();
        assert!(e.contains("magic"), "{e}");
        assert!(parse_npy("a", b"").unwrap_err().contains("empty"));
        let mut extra = ok.clone();
        extra.extend_from_slice(&[0; 8]);
        assert!(parse_npy("a", &extra).unwrap_err().contains("8 bytes follow"));
        let mut v9 = ok.clone();
        v9[6] = 9;
        assert!(parse_npy("a", &v9).unwrap_err().contains("version 9.0"));
        for (descr, word) in [
            ("<c16", "complex"),
            ("|O", "object"),
            ("<M8[s]", "dates"),
            ("|V8", "records"),
            ("<x4", "not a known"),
        ] {
            let e = parse_npy("a", &handmade(1, descr, false, "(1,)", &[0; 16])).unwrap_err();
            assert!(e.contains(word), "{descr}: {e}");
        }
        let e = parse_npy("s", &handmade(1, "<U1", false, "(2,)", &[0; 8])).unwrap_err();
        assert!(e.contains("single element"), "{e}");
    }
}
