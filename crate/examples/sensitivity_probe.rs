//! Prints sensitivity values at given points as JSON, for the independent scipy
//! implementation in tests/python/test_sensitivity_reference.py.
//!
//! Reads one JSON request on stdin:
//! `{"points": [[x, y], …], "t0": 0, "horizon": 5, "step": 0.01, "amplitude": 0.03}`
//! (model: the periodic double gyre; perturbation: `sensitivity::analytic::Wobble`) and
//! writes `{"xi": [[ξx, ξy], …], "ms": […], "ms_g": […], "strain_bound": […], "ftle": […]}`.

use serde::Deserialize;
use sillage::lagrangian::analytic::DoubleGyre;
use sillage::lagrangian::singular_values;
use sillage::sensitivity::analytic::Wobble;
use sillage::sensitivity::{trajectory, TrajectoryBuffer};
use std::io::Read;

#[derive(Deserialize)]
struct Request {
    points: Vec<[f64; 2]>,
    t0: f64,
    horizon: f64,
    step: f64,
    amplitude: f64,
}

fn main() -> Result<(), String> {
    let mut text = String::new();
    std::io::stdin().read_to_string(&mut text).map_err(|e| e.to_string())?;
    let req: Request = serde_json::from_str(&text).map_err(|e| format!("bad request: {e}"))?;
    let f = DoubleGyre::periodic();
    let g = Wobble { amplitude: req.amplitude };
    let n = (req.horizon.abs() / req.step).ceil().max(1.0) as usize;
    let h = req.horizon / n as f64;
    let mut buf = TrajectoryBuffer::default();
    let mut out =
        serde_json::json!({"xi": [], "ms": [], "ms_g": [], "strain_bound": [], "ftle": []});
    for &p in &req.points {
        let s = trajectory(&f, &g, p, req.t0, h, n, &mut buf)
            .ok_or_else(|| format!("no trajectory from {p:?}"))?;
        let push = |out: &mut serde_json::Value, key: &str, v: serde_json::Value| {
            out[key].as_array_mut().expect("array").push(v)
        };
        push(&mut out, "xi", serde_json::json!(s.xi));
        push(&mut out, "ms", s.ms.into());
        push(&mut out, "ms_g", s.ms_g.into());
        push(&mut out, "strain_bound", s.strain_bound.into());
        push(&mut out, "ftle", (singular_values(s.grad).0.ln() / req.horizon.abs()).into());
    }
    println!("{out}");
    Ok(())
}
