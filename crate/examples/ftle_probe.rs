//! Prints FTLE values at given points as JSON, for the reference checks in
//! tests/python/test_ftle_reference.py (which compares them with scipy's solve_ivp).
//!
//! Reads one JSON request on stdin:
//! `{"flow": "periodic_gyre" | "steady_gyre", "points": [[x, y], …], "t0": 0, "horizon": 15,
//!   "integrator": {"rk4": {"max_step": 0.01}} | {"dormand_prince": {"rtol":…, "atol":…, "max_steps":…}},
//!   "sampled": null | {"nx": 81, "ny": 41, "nt": 151, "t_end": 15, "space": "cubic", "time": "hermite"}}`
//! and writes `{"ftle": […], "tau": […], "flag": […], "rhs_calls": n}`. With `sampled`, the
//! flow is first sampled on that grid over [0, 2] × [0, 1] × [0, t_end] (f32 storage, like
//! measured data) and the FTLE computed from the data.

use serde::Deserialize;
use sillage::lagrangian::analytic::{linspace, sample_series, DoubleGyre};
use sillage::lagrangian::{
    ftle_points, AdvectOptions, BoundaryPolicy, FtleOptions, GradientRoute, GriddedField,
    Integrator, SpaceInterp, TimeInterp,
};
use std::io::Read;

#[derive(Deserialize)]
struct Sampled {
    nx: usize,
    ny: usize,
    nt: usize,
    t_end: f64,
    space: SpaceInterp,
    time: TimeInterp,
}

#[derive(Deserialize)]
struct Request {
    flow: String,
    points: Vec<[f64; 2]>,
    t0: f64,
    horizon: f64,
    integrator: Integrator,
    sampled: Option<Sampled>,
}

fn main() -> Result<(), String> {
    let mut text = String::new();
    std::io::stdin().read_to_string(&mut text).map_err(|e| e.to_string())?;
    let req: Request = serde_json::from_str(&text).map_err(|e| format!("bad request: {e}"))?;
    let flow = match req.flow.as_str() {
        "periodic_gyre" => DoubleGyre::periodic(),
        "steady_gyre" => DoubleGyre::steady(0.1),
        other => return Err(format!("unknown flow '{other}'")),
    };
    let o = FtleOptions {
        advect: AdvectOptions {
            t0: req.t0,
            horizon: req.horizon,
            integrator: req.integrator,
            boundary: BoundaryPolicy::Stop,
        },
        route: GradientRoute::Variational,
    };
    let r = match &req.sampled {
        None => ftle_points(&flow, &req.points, &o),
        Some(s) => {
            let series = sample_series(
                &flow,
                &linspace(0.0, 2.0, s.nx),
                &linspace(0.0, 1.0, s.ny),
                &linspace(0.0, s.t_end, s.nt),
            )
            .map_err(|e| e.to_string())?;
            let field = GriddedField::new(&series, s.space, s.time);
            ftle_points(&field, &req.points, &o)
        }
    }
    .map_err(|e| e.to_string())?;
    let out = serde_json::json!({
        "ftle": r.ftle,
        "tau": r.tau,
        "flag": r.flag,
        "rhs_calls": r.stats.rhs_calls,
    });
    println!("{out}");
    Ok(())
}
