//! The `sillage ftle` subcommand end to end: a sampled linear saddle in, σ = λ out.
#![cfg(feature = "cli")]

use sillage::io::{read_arrays_npz, write_npz};
use sillage::lagrangian::analytic::{linspace, sample_series, LinearSaddle};
use std::process::Command;

/// METHODS.md check 1 [D] through the CLI: the saddle u = (λx, −λy) sampled on a 64×64
/// grid gives σ = λ to 1e-3 at every node with a value, forward and backward, and the file
/// holds the documented arrays with the documented shapes.
#[test]
fn ftle_subcommand_on_a_sampled_saddle() {
    let dir = std::env::temp_dir().join(format!("sillage-ftle-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let data = dir.join("saddle.npz");
    let ax = linspace(-1.0, 1.0, 64);
    let s = sample_series(&LinearSaddle { lambda: 0.5 }, &ax, &ax, &linspace(0.0, 4.0, 5)).unwrap();
    std::fs::write(&data, write_npz(&s)).unwrap();
    for backward in [false, true] {
        let out = dir.join(format!("ftle_{backward}.npz"));
        let mut cmd = Command::new(env!("CARGO_BIN_EXE_sillage"));
        cmd.arg("ftle").arg(&data).args(["--horizon", "2", "--grid", "40x30"]);
        if backward {
            cmd.args(["--t0", "4", "--backward"]);
        } else {
            cmd.args(["--t0", "0"]);
        }
        let res = cmd.arg("--out").arg(&out).output().unwrap();
        assert!(res.status.success(), "{}", String::from_utf8_lossy(&res.stderr));
        let arrays = read_arrays_npz(&std::fs::read(&out).unwrap()).unwrap();
        let get = |n: &str| arrays.iter().find(|a| a.name == n).unwrap_or_else(|| panic!("no {n}"));
        assert_eq!(get("x").shape, vec![40]);
        assert_eq!(get("y").shape, vec![30]);
        for n in ["ftle", "exit_time", "det_deviation", "flag"] {
            assert_eq!(get(n).shape, vec![30, 40], "{n}");
        }
        let ftle = get("ftle").to_f32().unwrap();
        let flag = get("flag").data.clone();
        let sillage::io::NpyData::U8(flag) = flag else { panic!("flag is not u8") };
        let mut valued = 0;
        for (s, f) in ftle.iter().zip(&flag) {
            if *f <= 2 {
                assert!((*s as f64 - 0.5).abs() < 1e-3, "σ = {s}");
                valued += 1;
            }
        }
        assert!(valued > 1000, "{valued}");
    }
    let bad = Command::new(env!("CARGO_BIN_EXE_sillage"))
        .arg("ftle")
        .arg(&data)
        .args(["--t0", "0", "--horizon", "10"])
        .output()
        .unwrap();
    assert!(!bad.status.success());
    assert!(String::from_utf8_lossy(&bad.stderr).contains("data cover t = 0 to t = 4"));
    std::fs::remove_dir_all(&dir).ok();
}
