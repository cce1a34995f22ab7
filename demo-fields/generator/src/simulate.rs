//! The simulation run: spin-up until the shedding is periodic, then recording of the
//! window-averaged velocity at the acquisition rate. Measurement errors come later
//! ([`crate::noise`]): this module only produces the error-free PIV-window velocities.

use crate::body::fin_nodes;
use crate::boundaries::{links, node_kinds};
use crate::lattice::Lattice;
use crate::sampling::PivWindow;
use crate::scenario::Scenario;
use crate::shedding::{CrossingTracker, CycleStats, PeriodicityRule};

/// Error-free recording on the PIV vector grid, in SI units.
pub struct CleanRecording {
    /// Vector columns' x (m), origin at the fin centre, x downstream.
    pub x: Vec<f64>,
    /// Vector rows' y (m), origin on the fin centre line.
    pub y: Vec<f64>,
    /// Snapshot times (s), the first at 0.
    pub t: Vec<f64>,
    /// `(nt, ny, nx)` velocities (m/s); masked vectors 0.
    pub u: Vec<f64>,
    pub v: Vec<f64>,
    /// `(ny, nx)`, `true` inside the fin.
    pub mask: Vec<bool>,
    /// Lattice steps of spin-up before the first snapshot.
    pub spinup_steps: u64,
    /// Shedding cycles completed during the recording, from the probe.
    pub recorded_cycles: CycleStats,
}

/// The rule for starting the demo recording: six consecutive cycles whose periods agree
/// within 0.2 % and whose swings agree within 0.5 %, with a swing above a tenth of U
/// (start-up pressure waves are far weaker). Strict enough that the frequency cannot drift
/// by a noticeable share of the 1/(record length) resolution of a spectrum.
pub fn demo_rule(s: &Scenario) -> PeriodicityRule {
    PeriodicityRule {
        cycles: 6,
        period_tolerance: 2e-3,
        swing_tolerance: 5e-3,
        min_swing: 0.1 * s.inflow_lattice,
    }
}

/// Runs the lattice and records the scenario's frames. `progress` receives one line per
/// stage for the console.
/// `rule` decides when the spin-up is over; the recording must then stay within twice its
/// tolerances.
pub fn simulate(
    s: &Scenario,
    rule: &PeriodicityRule,
    progress: &mut dyn FnMut(&str),
) -> Result<CleanRecording, String> {
    s.validate()?;
    let (nx, ny) = (s.nx, s.ny);
    let solid = fin_nodes(nx, ny, s.fin_centre, s.fin_diameter_cells);
    let (xc, yc) = s.fin_centre;
    let r = 0.5 * s.fin_diameter_cells;
    let d = s.fin_diameter_cells;
    let u0 = s.inflow_lattice;
    // Uniform start with a transverse kick just behind the fin, upper half only: breaks the
    // top–bottom symmetry so the wake starts shedding early instead of waiting for
    // round-off to grow; the spin-up is then the approach to a steady cycle.
    let start = |i: usize, j: usize| {
        let (x, y) = (i as f64, j as f64);
        let kicked = x > xc + r && x <= xc + r + d && y > yc && y <= yc + d;
        (u0, if kicked { 0.3 * u0 } else { 0.0 })
    };
    let mut lattice =
        Lattice::new(nx, ny, s.tau(), node_kinds(nx, ny, &solid), links(nx, ny, &solid), start);
    let window = PivWindow::new(s, &solid);

    // Probe: v on the centre line 3 D behind the fin centre (mean of the two rows that
    // straddle a half-integer centre line).
    let probe_i = (xc + 3.0 * d).round() as usize;
    let probe_rows = (yc.floor() as usize, yc.ceil() as usize);
    let probe = |lat: &Lattice| {
        0.5 * (lat.moments(probe_i, probe_rows.0).2 + lat.moments(probe_i, probe_rows.1).2)
    };

    let mut tracker = CrossingTracker::new();
    let spinup_cycles = loop {
        lattice.step();
        let step = lattice.steps();
        tracker.push(step as f64, probe(&lattice));
        if let Some(stats) = rule.is_met(&tracker) {
            break stats;
        }
        if step % 2000 == 0 && !lattice.is_finite() {
            return Err(format!("the lattice blew up (non-finite populations) at step {step}"));
        }
        if step as usize >= s.max_spinup_steps {
            let last = tracker
                .last_stats(rule.cycles)
                .map(|c| {
                    format!(
                        "; the last {} cycles: period {:.1} steps ± {:.3} %, swing {:.4} ± {:.3} %",
                        c.count,
                        c.mean_period,
                        50.0 * c.period_spread,
                        c.mean_swing,
                        50.0 * c.swing_spread
                    )
                })
                .unwrap_or_default();
            return Err(format!(
                "no periodic shedding after {step} steps ({} cycles seen{last}); the spin-up budget is exhausted",
                tracker.cycles().len()
            ));
        }
    };
    let spinup_steps = lattice.steps();
    progress(&format!(
        "periodic after {spinup_steps} steps: period {:.1} steps (spread {:.3} %), probe swing {:.4} (spread {:.3} %)",
        spinup_cycles.mean_period,
        100.0 * spinup_cycles.period_spread,
        spinup_cycles.mean_swing,
        100.0 * spinup_cycles.swing_spread
    ));

    let plane = window.nx() * window.ny();
    let velocity_scale = s.cell_size / s.step_duration;
    let mut u = Vec::with_capacity(s.frames * plane);
    let mut v = Vec::with_capacity(s.frames * plane);
    for frame in 0..s.frames {
        if frame > 0 {
            for _ in 0..s.steps_per_frame {
                lattice.step();
                tracker.push(lattice.steps() as f64, probe(&lattice));
            }
        }
        let (fu, fv) = window.sample(&lattice);
        u.extend(fu.iter().map(|x| x * velocity_scale));
        v.extend(fv.iter().map(|x| x * velocity_scale));
    }
    if !lattice.is_finite() {
        return Err("the lattice blew up during the recording".into());
    }
    let recorded_cycles = tracker
        .stats_after(spinup_steps as f64)
        .ok_or("no complete shedding cycle during the recording")?;
    // The recording must stay as periodic as the spin-up demanded (twice the tolerance
    // allows for the longer run of cycles it is measured over).
    if recorded_cycles.period_spread > 2.0 * rule.period_tolerance
        || recorded_cycles.swing_spread > 2.0 * rule.swing_tolerance
    {
        return Err(format!(
            "shedding drifted during the recording: period spread {:.3} %, swing spread {:.3} %",
            100.0 * recorded_cycles.period_spread,
            100.0 * recorded_cycles.swing_spread
        ));
    }

    let (cols, rows) = window.nodes();
    let x = cols.iter().map(|&i| s.node_position(i, 0).0).collect();
    let y = rows.iter().map(|&j| s.node_position(0, j).1).collect();
    let t = (0..s.frames).map(|k| k as f64 * s.frame_interval()).collect();
    Ok(CleanRecording {
        x,
        y,
        t,
        u,
        v,
        mask: window.mask().to_vec(),
        spinup_steps,
        recorded_cycles,
    })
}
