//! The text reader end to end: several files, grids, units, times and the errors.

use crate::field::{LengthUnit, TimeUnit};
use crate::io::{read_series, IoError, NamedBytes, ReadOptions};

fn file(name: &str, text: &str) -> NamedBytes {
    NamedBytes::new(name, text.as_bytes().to_vec())
}

/// A table of a 3 × 2 grid, u = x + 10 y + k, v = -u, rows listed in `order`.
fn snapshot(k: usize, header: &str, order: &[usize]) -> String {
    let mut s = format!("{header}\n");
    for &c in order {
        let (i, j) = (c % 3, c / 3);
        let (x, y) = (i as f64 * 0.5, 2.0 - j as f64);
        let u = x + 10.0 * y + k as f64;
        s.push_str(&format!("{x},{y},{u},{}\n", -u));
    }
    s
}

const ALL: [usize; 6] = [0, 1, 2, 3, 4, 5];

#[test]
fn several_files_in_natural_order_with_dt() {
    let files = vec![
        file("run/f10.csv", &snapshot(10, "x,y,u,v", &ALL)),
        file("run/f2.csv", &snapshot(2, "x,y,u,v", &[5, 3, 1, 0, 2, 4])),
        file("run/f1.csv", &snapshot(1, "x,y,u,v", &ALL)),
    ];
    let e = read_series(&files, &ReadOptions::default()).unwrap_err();
    assert!(matches!(e, IoError::NeedDt { .. }) && e.to_string().contains("3 text files"), "{e}");
    let opts = ReadOptions { dt: Some(0.1), ..Default::default() };
    let s = read_series(&files, &opts).unwrap();
    assert_eq!((s.nx(), s.ny(), s.nt()), (3, 2, 3));
    // y was listed descending (2 then 1): the grid ascends from 1.
    assert_eq!((s.grid().y.start, s.grid().y.step), (1.0, 1.0));
    // Node (i=2, j=0) is x = 1, y = 1; snapshot order f1, f2, f10.
    for (k, offset) in [(0, 1.0), (1, 2.0), (2, 10.0)] {
        assert_eq!(s.u_at(k)[2], (1.0 + 10.0 + offset) as f32);
        assert_eq!(s.v_at(k)[2], -(1.0 + 10.0 + offset) as f32);
    }
    assert_eq!(s.times()[2], 0.2);
}

#[test]
fn units_from_decorations_and_options() {
    // Coordinates in mm, velocities in m/s: a common PIV export (common practice).
    let text = snapshot(0, "x [mm],y [mm],U (m/s),V (m/s)", &ALL);
    let s = read_series(&[file("a.csv", &text)], &ReadOptions::default()).unwrap();
    assert_eq!(s.source_units().length, LengthUnit::Mm);
    assert!((s.grid().x.step - 0.5e-3).abs() < 1e-15);
    // u at node 0 (x = 0, y = 1 mm) = 10 m/s, kept in m/s after conversion to SI.
    assert!((s.u()[0] - 10.0).abs() < 1e-5, "{}", s.u()[0]);

    // Velocity in mm/s with coordinates in mm: no conversion beyond SI.
    let text = snapshot(0, "x(mm),y(mm),u(mm/s),v(mm/s)", &ALL);
    let s = read_series(&[file("a.csv", &text)], &ReadOptions::default()).unwrap();
    assert!((s.u()[0] - 0.010).abs() < 1e-8);

    // Times from the t column decoration.
    let text = "x,y,u,v,t [ms]\n0,0,1,1,5\n1,0,1,1,5\n0,1,1,1,5\n1,1,1,1,5\n";
    let s = read_series(&[file("a.csv", text)], &ReadOptions::default()).unwrap();
    assert_eq!(s.source_units().time, TimeUnit::Ms);
    assert!((s.times()[0] - 5e-3).abs() < 1e-15);
    // 1 m/ms = 1000 m/s.
    assert!((s.u()[0] - 1000.0).abs() < 1e-3);

    let e = read_series(
        &[file("a.csv", &snapshot(0, "x [mm],y [cm],u,v", &ALL))],
        &ReadOptions::default(),
    )
    .unwrap_err();
    assert!(e.to_string().contains("different length units"), "{e}");
    let px = snapshot(0, "x [px],y [px],u [px/frame],v [px/frame]", &ALL);
    let e = read_series(&[file("a.csv", &px)], &ReadOptions::default()).unwrap_err();
    assert!(e.to_string().contains("'x [px]'"), "{e}");
    let opts = ReadOptions { length_unit: Some(LengthUnit::Mm), ..Default::default() };
    let s = read_series(&[file("a.csv", &px)], &opts).unwrap();
    assert!((s.u()[0] - 0.010).abs() < 1e-8);
}

#[test]
fn missing_nodes_are_masked_and_flags_become_gaps() {
    // Node (1, 1) is absent; node (0, 0) is flagged bad in the second file.
    let a = "x y u v flag\n0 0 1 1 0\n1 0 1 1 0\n2 0 1 1 0\n0 1 1 1 0\n2 1 1 1 0\n";
    let b = "x y u v flag\n0 0 9 9 1\n1 0 1 1 0\n2 0 1 1 0\n0 1 1 1 0\n2 1 1 1 0\n";
    let opts = ReadOptions { dt: Some(1.0), ..Default::default() };
    let s = read_series(&[file("a.txt", a), file("b.txt", b)], &opts).unwrap();
    assert!(s.mask()[4] && s.masked_count() == 1);
    assert!(s.gaps_at(1).unwrap()[0]);
    assert_eq!(s.u_at(1)[0], 0.0);
}

#[test]
fn time_columns() {
    let with_t =
        |t: &str| format!("x,y,u,v,time\n0,0,1,1,{t}\n1,0,1,1,{t}\n0,1,1,1,{t}\n1,1,1,1,{t}\n");
    let files = [file("s_2.csv", &with_t("0.5")), file("s_1.csv", &with_t("0.25"))];
    let s = read_series(&files, &ReadOptions::default()).unwrap();
    assert_eq!(s.times(), [0.25, 0.5]);
    let files = [file("s_2.csv", &with_t("0.1")), file("s_1.csv", &with_t("0.25"))];
    let e = read_series(&files, &ReadOptions::default()).unwrap_err().to_string();
    assert!(e.contains("'s_2.csv'") && e.contains("does not come after"), "{e}");
    let varying = "x,y,u,v,t\n0,0,1,1,0\n1,0,1,1,0\n0,1,1,1,1\n1,1,1,1,0\n";
    let e = read_series(&[file("v.csv", varying)], &ReadOptions::default()).unwrap_err();
    assert!(e.to_string().contains("line 4") && e.to_string().contains("changes"), "{e}");
}

#[test]
fn inconsistent_files_are_reported() {
    let opts = ReadOptions { dt: Some(1.0), ..Default::default() };
    let full = snapshot(0, "x,y,u,v", &ALL);
    let short = snapshot(0, "x,y,u,v", &[0, 1, 2, 3, 4]);
    let files = [file("a.csv", &full), file("b7.csv", &short), file("c.csv", &full)];
    let e = read_series(&files, &opts).unwrap_err().to_string();
    assert_eq!(e, "file 'b7.csv' has 5 rows, the others 6");

    let moved = full.replace("\n1,2,", "\n1.25,2,");
    let e =
        read_series(&[file("a.csv", &full), file("b.csv", &moved)], &opts).unwrap_err().to_string();
    assert!(e.contains("'b.csv' line") && e.contains("not one of the points"), "{e}");

    let dup = "x,y,u,v\n0,0,1,1\n1,0,1,1\n0,1,1,1\n0,0,2,2\n";
    let e = read_series(&[file("d.csv", dup)], &opts).unwrap_err().to_string();
    assert!(e.contains("line 5") && e.contains("appears twice, also on line 2"), "{e}");

    let stretched: String = std::iter::once("x,y,u,v\n".to_string())
        .chain((0..12).flat_map(|i| {
            let x = 1.3f64.powi(i);
            [format!("{x},0,1,1\n"), format!("{x},1,1,1\n")]
        }))
        .collect();
    let e = read_series(&[file("s.csv", &stretched)], &opts).unwrap_err().to_string();
    assert!(e.contains("'s.csv'") && e.contains("not uniformly spaced"), "{e}");

    let e = read_series(&[file("e.csv", "")], &opts).unwrap_err();
    assert!(matches!(e, IoError::EmptyFile { .. }), "{e}");
    let e = read_series(&[file("m.csv", "x,y,vel\n0,0,1\n")], &opts).unwrap_err();
    assert!(matches!(e, IoError::MissingColumn { .. }), "{e}");
    let e = read_series(
        &[file("a.csv", &full), file("b.csv", &full.replace("x,y", "x [mm],y [mm]"))],
        &opts,
    )
    .unwrap_err();
    assert!(e.to_string().contains("units differ"), "{e}");
}
