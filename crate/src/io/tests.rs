//! Round trips through the writers and readers, and the canonical-layout rules.

use super::*;
use crate::field::SeriesParts;

/// A small series with a masked cell, one gap and non-trivial values.
fn sample(nt: usize) -> Series {
    let (nx, ny) = (4, 3);
    let n = nx * ny * nt;
    let mut mask = vec![false; nx * ny];
    mask[5] = true;
    let mut gaps = vec![false; n];
    gaps[2] = true;
    Series::from_parts(SeriesParts {
        x: (0..nx).map(|i| 0.1 + 0.25 * i as f64).collect(),
        y: (0..ny).map(|j| -1.0 + 0.5 * j as f64).collect(),
        t: (0..nt).map(|k| 0.01 * k as f64).collect(),
        u: (0..n).map(|i| (i as f32).sin()).collect(),
        v: (0..n).map(|i| 1.0 / (1.0 + i as f32)).collect(),
        mask: Some(mask),
        gaps: Some(gaps),
        ..Default::default()
    })
    .unwrap()
}

fn npz(name: &str, arrays: &[NpyArray]) -> Vec<NamedBytes> {
    vec![NamedBytes::new(name, write_arrays_npz(arrays))]
}

fn arr(name: &str, shape: Vec<usize>, data: NpyData) -> NpyArray {
    NpyArray::new(name, shape, data)
}

fn f64s(n: usize, f: impl Fn(usize) -> f64) -> NpyData {
    NpyData::F64((0..n).map(f).collect())
}

fn f32s(n: usize, f: impl Fn(usize) -> f32) -> NpyData {
    NpyData::F32((0..n).map(f).collect())
}

#[test]
fn npz_round_trip_is_exact() {
    for nt in [1, 3] {
        let s = sample(nt);
        let bytes = write_npz(&s);
        let back =
            read_series(&[NamedBytes::new("s.npz", bytes)], &ReadOptions::default()).unwrap();
        assert_eq!(back, s);
    }
}

#[test]
fn unitless_series_round_trip() {
    use crate::field::{LengthUnit, TimeUnit, Units};
    let s = Series::from_parts(SeriesParts {
        x: vec![0.0, 1.0, 2.0],
        y: vec![0.0, 1.0],
        t: vec![3.0],
        u: vec![1.0; 6],
        v: vec![-1.0; 6],
        units: Units { length: LengthUnit::Unitless, time: TimeUnit::Unitless },
        ..Default::default()
    })
    .unwrap();
    let arrays = read_arrays_npz(&write_npz(&s)).unwrap();
    assert!(arrays.contains(&NpyArray::new(
        "length_unit",
        vec![],
        NpyData::Str("unitless".into())
    )));
    let back =
        read_series(&[NamedBytes::new("s.npz", write_npz(&s))], &ReadOptions::default()).unwrap();
    assert_eq!(back, s);
    // Unitless CSV ("x [1]", "u [1]") reads back unitless too.
    let csv = write_csv_snapshot(&s, 0);
    assert!(csv.starts_with("x [1],y [1],u [1],v [1],valid,t [1]\n"), "{csv}");
    let back = read_series(&[NamedBytes::new("s.csv", csv.into_bytes())], &ReadOptions::default())
        .unwrap();
    assert_eq!(back, s);
}

#[test]
fn npz_writes_units_and_gaps() {
    let arrays = read_arrays_npz(&write_npz(&sample(2))).unwrap();
    let names: Vec<&str> = arrays.iter().map(|a| a.name.as_str()).collect();
    assert_eq!(names, ["x", "y", "t", "u", "v", "mask", "length_unit", "time_unit", "gaps"]);
    assert_eq!(arrays[6].data, NpyData::Str("m".into()));
    assert_eq!(arrays[7].data, NpyData::Str("s".into()));
    assert_eq!(arrays[3].shape, [2, 3, 4]);
}

#[test]
fn npy_set_reads_like_npz() {
    let s = sample(3);
    let files: Vec<NamedBytes> = read_arrays_npz(&write_npz(&s))
        .unwrap()
        .into_iter()
        .map(|a| NamedBytes::new(format!("run/{}.npy", a.name.to_uppercase()), a.to_npy_bytes()))
        .collect();
    assert_eq!(read_series(&files, &ReadOptions::default()).unwrap(), s);
}

#[test]
fn csv_round_trip() {
    let s = sample(3);
    let files: Vec<NamedBytes> = (0..s.nt())
        .map(|k| NamedBytes::new(format!("snap{k}.csv"), write_csv_snapshot(&s, k).into_bytes()))
        .rev()
        .collect();
    let back = read_series(&files, &ReadOptions::default()).unwrap();
    assert_eq!(back.grid(), s.grid());
    assert_eq!(back.times(), s.times());
    assert_eq!(back.mask(), s.mask());
    assert_eq!(back.gaps(), s.gaps());
    assert_eq!(back.u(), s.u());
    assert_eq!(back.v(), s.v());
    let text = write_csv_snapshot(&s, 1);
    assert!(text.starts_with("x [m],y [m],u [m/s],v [m/s],valid,t [s]\n"), "{text}");
}

#[test]
fn tolerant_canonical_layouts() {
    let (nx, ny, nt) = (3, 2, 2);
    let n = nx * ny * nt;
    // Upper-case names, one f64 snapshot as (ny, nx), no t, meshgrid coordinates.
    let xs: Vec<f64> = (0..ny * nx).map(|c| (c % nx) as f64).collect();
    let ys: Vec<f64> = (0..ny * nx).map(|c| 10.0 + 2.0 * (c / nx) as f64).collect();
    let one = npz(
        "one.npz",
        &[
            arr("X", vec![ny, nx], NpyData::F64(xs.clone())),
            arr("Y", vec![ny, nx], NpyData::F64(ys.clone())),
            arr("U", vec![ny, nx], f64s(nx * ny, |i| i as f64)),
            arr("V", vec![ny, nx], f64s(nx * ny, |_| 1.0)),
            arr("notes", vec![], NpyData::Str("ignored".into())),
        ],
    );
    let s = read_series(&one, &ReadOptions::default()).unwrap();
    assert_eq!((s.nx(), s.ny(), s.nt(), s.times()), (3, 2, 1, &[0.0][..]));
    assert_eq!(s.grid().y.start, 10.0);
    assert_eq!(s.u()[4], 4.0);

    // Matrix-indexed (ij) meshgrids: x varies down the rows, data stored (nx, ny).
    let xij: Vec<f64> = (0..nx * ny).map(|c| (c / ny) as f64).collect();
    let yij: Vec<f64> = (0..nx * ny).map(|c| 10.0 + 2.0 * (c % ny) as f64).collect();
    let uij: Vec<f32> = (0..nx * ny).map(|c| (10 * (c / ny) + c % ny) as f32).collect();
    let ij = npz(
        "ij.npz",
        &[
            arr("x", vec![nx, ny], NpyData::F64(xij)),
            arr("y", vec![nx, ny], NpyData::F64(yij)),
            arr("u", vec![nx, ny], NpyData::F32(uij)),
            arr("v", vec![nx, ny], f32s(nx * ny, |_| 0.0)),
        ],
    );
    let s = read_series(&ij, &ReadOptions::default()).unwrap();
    assert_eq!((s.nx(), s.ny()), (3, 2));
    // u = 10 i + j at node (i, j).
    assert_eq!(s.u_at(0)[s.grid().index(2, 1)], 21.0);

    // No t with several snapshots: dt from the options, or an error asking for it.
    let many = npz(
        "many.npz",
        &[
            arr("x", vec![nx], f64s(nx, |i| i as f64)),
            arr("y", vec![ny], f64s(ny, |j| j as f64)),
            arr("u", vec![nt, ny, nx], f32s(n, |i| if i == 3 { f32::NAN } else { 0.5 })),
            arr("v", vec![nt, ny, nx], f32s(n, |_| 0.5)),
            arr("mask", vec![ny, nx], NpyData::U8(vec![0, 0, 0, 0, 0, 1])),
            arr("length_unit", vec![], NpyData::Str("mm".into())),
        ],
    );
    let e = read_series(&many, &ReadOptions::default()).unwrap_err();
    assert!(matches!(e, IoError::NeedDt { .. }), "{e}");
    assert!(e.to_string().contains("2 snapshots"), "{e}");
    let opts = ReadOptions { dt: Some(0.5), t_start: 1.0, ..Default::default() };
    let s = read_series(&many, &opts).unwrap();
    assert_eq!(s.times(), [1.0, 1.5]);
    assert_eq!(s.source_units().length, crate::field::LengthUnit::Mm);
    assert!((s.grid().x.step - 1e-3).abs() < 1e-15);
    assert_eq!(s.gap_count(), 1); // NaN velocity
    assert!(s.mask()[5]);
    // Options override the file's unit.
    let opts = ReadOptions {
        dt: Some(0.5),
        length_unit: Some(crate::field::LengthUnit::Cm),
        ..Default::default()
    };
    assert!((read_series(&many, &opts).unwrap().grid().x.step - 1e-2).abs() < 1e-15);
}

#[test]
fn canonical_layout_errors_name_the_problem() {
    let (nx, ny) = (3, 2);
    let good = || {
        vec![
            arr("x", vec![nx], f64s(nx, |i| i as f64)),
            arr("y", vec![ny], f64s(ny, |j| j as f64)),
            arr("t", vec![1], f64s(1, |_| 0.0)),
            arr("u", vec![1, ny, nx], f32s(nx * ny, |_| 1.0)),
            arr("v", vec![1, ny, nx], f32s(nx * ny, |_| 1.0)),
        ]
    };
    let err = |arrays: Vec<NpyArray>| {
        read_series(&npz("d.npz", &arrays), &ReadOptions::default()).unwrap_err().to_string()
    };
    assert!(read_series(&npz("d.npz", &good()), &ReadOptions::default()).is_ok());

    let mut a = good();
    a.remove(4);
    let e = err(a);
    assert!(e.contains("no array 'v'") && e.contains("x, y, t, u"), "{e}");

    let mut a = good();
    a[4] = arr("v", vec![ny, nx], f32s(nx * ny, |_| 1.0));
    assert!(err(a).contains("u has shape (1, 2, 3) but v has shape (2, 3)"));

    let mut a = good();
    a[3] = arr("u", vec![nx * ny], f32s(nx * ny, |_| 1.0));
    a[4] = arr("v", vec![nx * ny], f32s(nx * ny, |_| 1.0));
    assert!(err(a).contains("(nt, ny, nx)"));

    let mut a = good();
    a[0] = arr("x", vec![4], f64s(4, |i| i as f64));
    assert!(err(a).contains("x has 4 values"));

    let mut a = good();
    a[3] = arr("u", vec![1, nx, ny], f32s(nx * ny, |_| 1.0));
    a[4] = arr("v", vec![1, nx, ny], f32s(nx * ny, |_| 1.0));
    assert!(err(a).contains("stored (nx, ny)"));

    let mut a = good();
    a[2] = arr("t", vec![2], f64s(2, |k| k as f64));
    assert!(err(a).contains("t has shape (2,) but u and v hold 1 snapshot"));

    let mut a = good();
    a[3] = arr("u", vec![1, ny, nx], NpyData::Bool(vec![true; nx * ny]));
    assert!(err(a).contains("'u' must hold numbers, not bool"));

    let mut a = good();
    a.push(arr("mask", vec![nx, ny], NpyData::Bool(vec![false; nx * ny])));
    assert!(err(a).contains("mask has shape (3, 2)"));

    let mut a = good();
    a.push(arr("U", vec![1, ny, nx], f32s(nx * ny, |_| 1.0)));
    assert!(err(a).contains("'u' and 'U' differ only in case"));

    let mut a = good();
    a.push(arr("time_unit", vec![], NpyData::Str("fortnight".into())));
    assert!(err(a).contains("fortnight"));

    let mut a = good();
    a[0] = arr("x", vec![nx], NpyData::F64(vec![0.0, 1.0, 5.0]));
    let e = err(a);
    assert!(e.contains("'d.npz'") && e.contains("not uniformly spaced"), "{e}");

    // Complex data is refused with the array named (dtype written by hand).
    let mut complex = b"\x93NUMPY\x01\x00".to_vec();
    let dict = "{'descr': '<c8', 'fortran_order': False, 'shape': (2, 3), }\n";
    complex.extend_from_slice(&(dict.len() as u16).to_le_bytes());
    complex.extend_from_slice(dict.as_bytes());
    complex.extend_from_slice(&[0; 48]);
    let mut files: Vec<NamedBytes> = good()
        .into_iter()
        .filter(|a| a.name != "u")
        .map(|a| NamedBytes::new(format!("{}.npy", a.name), a.to_npy_bytes()))
        .collect();
    files.push(NamedBytes::new("u.npy", complex));
    let e = read_series(&files, &ReadOptions::default()).unwrap_err().to_string();
    assert!(e.contains("'u.npy': array 'u'") && e.contains("complex"), "{e}");
}

#[test]
fn dispatch_errors() {
    let opts = ReadOptions::default();
    assert!(matches!(read_series(&[], &opts), Err(IoError::NoInput)));
    let s = write_npz(&sample(1));
    let two = [NamedBytes::new("a.npz", s.clone()), NamedBytes::new("b.npz", s.clone())];
    assert!(read_series(&two, &opts).unwrap_err().to_string().contains("one .npz"));
    let mixed =
        [NamedBytes::new("a.npz", s.clone()), NamedBytes::new("b.csv", b"x,y,u,v\n".to_vec())];
    assert!(read_series(&mixed, &opts).unwrap_err().to_string().contains("mixture"));
    let e = read_series(&[NamedBytes::new("a.bin", vec![0, 159, 146, 150])], &opts).unwrap_err();
    assert!(e.to_string().contains("unknown format"), "{e}");
    // Without an extension the content decides.
    assert!(read_series(&[NamedBytes::new("noext", s.clone())], &opts).is_ok());
    let truncated = [NamedBytes::new("a.npz", s[..s.len() / 2].to_vec())];
    let e = read_series(&truncated, &opts).unwrap_err().to_string();
    assert!(e.contains("'a.npz' is not a readable .npz"), "{e}");
    let bad = ReadOptions { dt: Some(-1.0), ..Default::default() };
    let e = read_series(&[NamedBytes::new("a.npz", s)], &bad).unwrap_err();
    assert!(matches!(e, IoError::BadOption { option: "dt", .. }), "{e}");
}

#[test]
fn vti_follows_the_image_data_layout() {
    let s = sample(2);
    let files = write_series_vti(&s);
    assert_eq!(files.len(), 2);
    assert_eq!(files[1].0, "_0001.vti");
    let bytes = &files[1].1;
    let split = bytes.windows(5).position(|w| w == b"\n   _").unwrap();
    let head = String::from_utf8_lossy(&bytes[..split]);
    // VTK XML file formats: ImageData with WholeExtent, Origin, Spacing, PointData.
    assert!(head.contains("type=\"ImageData\""), "{head}");
    assert!(head.contains("WholeExtent=\"0 3 0 2 0 0\""), "{head}");
    assert!(head.contains("Origin=\"0.1 -1 0\" Spacing=\"0.25 0.5 1\""), "{head}");
    // The velocity block is the second one (after the time): read it back and compare.
    // The appended block starts after the '_' that follows the AppendedData tag.
    let marker = b"<AppendedData encoding=\"raw\">\n   _";
    let base = bytes.windows(marker.len()).position(|w| w == marker).unwrap() + marker.len();
    let len_at = |off: usize| {
        u64::from_le_bytes(bytes[base + off..base + off + 8].try_into().unwrap()) as usize
    };
    assert_eq!(len_at(0), 8);
    let t = f64::from_le_bytes(bytes[base + 8..base + 16].try_into().unwrap());
    assert_eq!(t, s.times()[1]);
    let n = s.grid().len();
    assert_eq!(len_at(16), 12 * n);
    let vel = &bytes[base + 24..base + 24 + 12 * n];
    let comp = |c: usize, i: usize| {
        f32::from_le_bytes(vel[12 * i + 4 * c..12 * i + 4 * c + 4].try_into().unwrap())
    };
    for i in 0..n {
        assert_eq!(comp(0, i), s.u_at(1)[i]);
        assert_eq!(comp(1, i), s.v_at(1)[i]);
        assert_eq!(comp(2, i), 0.0);
    }
    let plain = write_vti(s.grid(), &[("w", s.u_at(0))], &[], None, Some(s.mask()));
    let text = String::from_utf8_lossy(&plain);
    assert!(
        text.contains("Name=\"w\"")
            && text.contains("Name=\"mask\"")
            && !text.contains("TimeValue")
    );
}
