//! VTK XML image data (`.vti`): one `(ny, nx)` plane of point data on the uniform grid,
//! readable by general-purpose VTK-based viewers.
//!
//! Layout (VTK file formats document, "XML File Formats", ImageData): a `VTKFile` of type
//! `ImageData`, `WholeExtent="0 nx-1 0 ny-1 0 0"`, `Origin="x0 y0 0"`, `Spacing="dx dy 1"`,
//! one `Piece` whose `PointData` holds the arrays, x index fastest. The numbers are in an
//! `AppendedData` block in raw binary (little-endian): each array is an 8-byte
//! (`header_type="UInt64"`) byte count followed by its bytes, at the `offset` given in its
//! `DataArray` tag, counted from the byte after the `_` that opens the block. Binary keeps
//! files compact and exact; the XML part stays readable.
//!
//! Arrays written: scalar and vector `Float32` fields (vectors get a zero third component,
//! as viewers expect 3-vectors), `mask` as `UInt8` (1 = no valid data), and the snapshot
//! time as the field-data array `TimeValue` that viewers use to order files in time.

use crate::field::{speed, Grid, Series};
use std::fmt::Write as _;

enum Values<'a> {
    F32 { comps: usize, data: Vec<f32> },
    U8(&'a [u8]),
}

struct Array<'a> {
    name: &'a str,
    values: Values<'a>,
}

/// Escapes text for an XML attribute value.
fn xml_attr(s: &str) -> String {
    s.replace('&', "&amp;").replace('"', "&quot;").replace('<', "&lt;").replace('>', "&gt;")
}

#[cold]
#[inline(never)]
#[track_caller]
fn length_mismatch(what: &str, name: &str, got: usize, want: usize) -> ! {
    panic!("write_vti: {what} '{name}' has {got} values but the grid has {want} nodes")
}

/// Appends one block (8-byte length, then the bytes) and returns its offset.
fn push_block(bytes: &[u8], blob: &mut Vec<u8>) -> usize {
    let offset = blob.len();
    blob.extend_from_slice(&(bytes.len() as u64).to_le_bytes());
    blob.extend_from_slice(bytes);
    offset
}

fn encode(grid: &Grid, arrays: &[Array<'_>], time: Option<f64>) -> Vec<u8> {
    let (nx, ny) = (grid.nx(), grid.ny());
    let extent = format!("0 {} 0 {} 0 0", nx - 1, ny - 1);
    let mut xml = String::new();
    xml.push_str("<?xml version=\"1.0\"?>\n");
    xml.push_str(
        "<VTKFile type=\"ImageData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n",
    );
    let _ = writeln!(
        xml,
        "  <ImageData WholeExtent=\"{extent}\" Origin=\"{} {} 0\" Spacing=\"{} {} 1\">",
        grid.x.start, grid.y.start, grid.x.step, grid.y.step
    );
    let mut blob: Vec<u8> = Vec::new();
    if let Some(t) = time {
        let off = push_block(&t.to_le_bytes(), &mut blob);
        let _ = writeln!(
            xml,
            "    <FieldData>\n      <DataArray type=\"Float64\" Name=\"TimeValue\" NumberOfTuples=\"1\" format=\"appended\" offset=\"{off}\"/>\n    </FieldData>"
        );
    }
    let _ = writeln!(xml, "    <Piece Extent=\"{extent}\">");
    let scalars = arrays
        .iter()
        .find(|a| matches!(a.values, Values::F32 { comps: 1, .. }))
        .map(|a| format!(" Scalars=\"{}\"", xml_attr(a.name)))
        .unwrap_or_default();
    let vectors = arrays
        .iter()
        .find(|a| matches!(a.values, Values::F32 { comps: 3, .. }))
        .map(|a| format!(" Vectors=\"{}\"", xml_attr(a.name)))
        .unwrap_or_default();
    let _ = writeln!(xml, "      <PointData{scalars}{vectors}>");
    for a in arrays {
        let (ty, comps, off) = match &a.values {
            Values::F32 { comps, data } => {
                let bytes: Vec<u8> = data.iter().flat_map(|x| x.to_le_bytes()).collect();
                ("Float32", *comps, push_block(&bytes, &mut blob))
            }
            Values::U8(data) => ("UInt8", 1, push_block(data, &mut blob)),
        };
        let _ = writeln!(
            xml,
            "        <DataArray type=\"{ty}\" Name=\"{}\" NumberOfComponents=\"{comps}\" format=\"appended\" offset=\"{off}\"/>",
            xml_attr(a.name)
        );
    }
    xml.push_str(
        "      </PointData>\n      <CellData>\n      </CellData>\n    </Piece>\n  </ImageData>\n",
    );
    xml.push_str("  <AppendedData encoding=\"raw\">\n   _");
    let mut out = xml.into_bytes();
    out.extend_from_slice(&blob);
    out.extend_from_slice(b"\n  </AppendedData>\n</VTKFile>\n");
    out
}

/// One `.vti` file of one `(ny, nx)` plane: scalar fields, vector fields given by their two
/// components, an optional snapshot time and an optional mask (`true` = no valid data,
/// written as the `UInt8` array `mask`). Arrays are `(ny, nx)`, row-major.
///
/// # Panics
/// If an array does not have one value per grid node: a programming error of the caller.
#[track_caller]
pub fn write_vti(
    grid: &Grid,
    fields: &[(&str, &[f32])],
    vectors: &[(&str, &[f32], &[f32])],
    time: Option<f64>,
    mask: Option<&[bool]>,
) -> Vec<u8> {
    let n = grid.len();
    let mut arrays = Vec::new();
    for &(name, a, b) in vectors {
        if a.len() != n || b.len() != n {
            length_mismatch("vector", name, a.len().min(b.len()), n);
        }
        let data = a.iter().zip(b).flat_map(|(&p, &q)| [p, q, 0.0]).collect();
        arrays.push(Array { name, values: Values::F32 { comps: 3, data } });
    }
    for &(name, a) in fields {
        if a.len() != n {
            length_mismatch("field", name, a.len(), n);
        }
        arrays.push(Array { name, values: Values::F32 { comps: 1, data: a.to_vec() } });
    }
    let mask_bytes: Vec<u8>;
    if let Some(m) = mask {
        if m.len() != n {
            length_mismatch("mask", "mask", m.len(), n);
        }
        mask_bytes = m.iter().map(|&b| b as u8).collect();
        arrays.push(Array { name: "mask", values: Values::U8(&mask_bytes) });
    }
    encode(grid, &arrays, time)
}

/// One `.vti` file per snapshot: `velocity` (vector), `speed`, `mask`, `gap` (when the
/// series has missing vectors; 1 = missing in this snapshot) and the time. Returns
/// `(suffix, bytes)` pairs with suffixes such as `_0007.vti`, zero-padded to at least four
/// digits so that plain alphabetical order is time order.
pub fn write_series_vti(series: &Series) -> Vec<(String, Vec<u8>)> {
    let nt = series.nt();
    let width = (nt.saturating_sub(1)).to_string().len().max(4);
    let mask: Vec<u8> = series.mask().iter().map(|&b| b as u8).collect();
    (0..nt)
        .map(|k| {
            let mut arrays = vec![
                Array {
                    name: "velocity",
                    values: Values::F32 {
                        comps: 3,
                        data: series
                            .u_at(k)
                            .iter()
                            .zip(series.v_at(k))
                            .flat_map(|(&p, &q)| [p, q, 0.0])
                            .collect(),
                    },
                },
                Array { name: "speed", values: Values::F32 { comps: 1, data: speed(series, k) } },
                Array { name: "mask", values: Values::U8(&mask) },
            ];
            let gap: Option<Vec<u8>> =
                series.gaps_at(k).map(|g| g.iter().map(|&b| b as u8).collect());
            if let Some(g) = &gap {
                arrays.push(Array { name: "gap", values: Values::U8(g) });
            }
            let bytes = encode(series.grid(), &arrays, Some(series.times()[k]));
            (format!("_{k:0width$}.vti"), bytes)
        })
        .collect()
}
