//! `sillage ftle --ridges`: the ridge polylines written as JSON and CSV, on a sampled steady
//! double gyre whose forward-FTLE ridge is known.
#![cfg(feature = "cli")]

use sillage::io::write_npz;
use sillage::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
use std::process::Command;

fn sillage(args: &[&str], dir: &std::path::Path) -> std::process::Output {
    let out = Command::new(env!("CARGO_BIN_EXE_sillage")).args(args).current_dir(dir).output();
    out.expect("the sillage binary runs")
}

/// METHODS.md check 4 [D]: x = 1 is the stable manifold of the saddle (1, 0) of the steady
/// double gyre, so the forward-FTLE ridge in the interior is x = 1 (the gyre sampled on a
/// grid symmetric about x = 1 keeps that symmetry under bilinear interpolation). The JSON
/// holds the documented fields, ridges longest first, the longest within one tracer
/// spacing of x = 1 over most of the height, lengths equal to the polylines' lengths; the
/// CSV holds the same points, and a wrong extension is refused before any work is done.
#[test]
fn ridges_are_written_with_units_as_json_and_csv() {
    let dir = std::env::temp_dir().join(format!("sillage-ridge-export-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let series = sample_series(
        &DoubleGyre::steady(0.1),
        &linspace(0.0, 2.0, 41),
        &linspace(0.0, 1.0, 21),
        &linspace(0.0, 16.0, 3),
    )
    .unwrap();
    std::fs::write(dir.join("gyre.npz"), write_npz(&series)).unwrap();
    let run = |ridges: &str| {
        let res = sillage(
            &[
                "ftle",
                "gyre.npz",
                "--t0",
                "0",
                "--horizon",
                "15",
                "--grid",
                "80x40",
                "--out",
                "ftle.npz",
                "--ridges",
                ridges,
            ],
            &dir,
        );
        assert!(res.status.success(), "{}", String::from_utf8_lossy(&res.stderr));
        String::from_utf8_lossy(&res.stdout).into_owned()
    };
    let said = run("ridges.json");
    assert!(said.contains("wrote ridges.json"), "{said}");
    run("ridges.csv");

    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("ridges.json")).unwrap()).unwrap();
    // The sampled series is written without unit attributes, which read as SI.
    assert_eq!(doc["length_unit"], "m");
    assert_eq!(doc["time_unit"], "s");
    assert_eq!(doc["t0"], 0.0);
    assert_eq!(doc["horizon"], 15.0);
    assert!(doc["options"]["min_ftle_fraction"].is_number());
    let ridges = doc["ridges"].as_array().unwrap();
    assert_eq!(doc["count"].as_u64().unwrap() as usize, ridges.len());
    assert!(!ridges.is_empty());
    let points = |r: &serde_json::Value| -> Vec<[f64; 2]> {
        serde_json::from_value(r["points"].clone()).unwrap()
    };
    let mut last = f64::INFINITY;
    for r in ridges {
        let len = r["length"].as_f64().unwrap();
        assert!(len <= last, "ridges are not longest first");
        last = len;
        let p = points(r);
        let sum: f64 = p.windows(2).map(|w| (w[1][0] - w[0][0]).hypot(w[1][1] - w[0][1])).sum();
        assert!((sum - len).abs() <= 1e-12 * len.max(1.0), "length {len} vs polyline {sum}");
    }
    let h = 2.0 / 79.0; // tracer spacing in x
    let longest = points(&ridges[0]);
    assert!(longest.iter().all(|p| (p[0] - 1.0).abs() <= h), "longest ridge off x = 1");
    let (lo, hi) =
        longest.iter().fold((f64::MAX, f64::MIN), |(a, b), p| (a.min(p[1]), b.max(p[1])));
    assert!(hi - lo > 0.6, "longest ridge spans y {lo}..{hi} only");

    let csv = std::fs::read_to_string(dir.join("ridges.csv")).unwrap();
    let mut lines = csv.lines();
    assert_eq!(lines.next(), Some("ridge,point,x_m,y_m"));
    let rows: Vec<Vec<f64>> =
        lines.map(|l| l.split(',').map(|v| v.parse().unwrap()).collect()).collect();
    let total: usize = ridges.iter().map(|r| points(r).len()).sum();
    assert_eq!(rows.len(), total);
    // Same numbers; serde_json's default float parser may be an ulp off, hence 1e-15.
    for row in rows.iter().filter(|r| r[0] == 0.0) {
        let p = longest[row[1] as usize];
        for c in 0..2 {
            assert!(
                (row[2 + c] - p[c]).abs() <= 1e-15 * p[c].abs().max(1.0),
                "CSV {row:?}, JSON {p:?}"
            );
        }
    }

    let bad =
        sillage(&["ftle", "gyre.npz", "--t0", "0", "--horizon", "15", "--ridges", "r.txt"], &dir);
    assert!(!bad.status.success());
    assert!(String::from_utf8_lossy(&bad.stderr).contains("must end in .json or .csv"));
    std::fs::remove_dir_all(&dir).ok();
}
