//! `fin-wake-generator [OUTPUT_DIR]`: simulates the wake behind the pin fin with a D2Q9
//! lattice-Boltzmann solver, waits for periodic vortex shedding, records it as a planar PIV
//! campaign would (window-averaged vectors, pixel noise, spurious vectors, masked fin) and
//! writes `fin-wake.npz` and a few CSV snapshots into OUTPUT_DIR (default: demo-fields/).
//!
//! Single-threaded and seeded: the same build writes the same bytes every time.

mod body;
mod boundaries;
mod lattice;
mod noise;
mod output;
mod sampling;
mod scenario;
mod shedding;
mod simulate;
mod study;

use std::path::PathBuf;
use std::process::ExitCode;

const USAGE: &str = "usage: fin-wake-generator [OUTPUT_DIR]
       fin-wake-generator --blockage-study

Regenerates the fin-wake demo dataset into OUTPUT_DIR (default: the demo-fields folder).
--blockage-study runs the same wake in channels 8 and 16 fin diameters high and prints
the Strouhal number of each (several minutes; writes nothing).";

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let result = match args.as_slice() {
        [] => run(&scenario::Scenario::fin_wake(), &default_output_dir()),
        [flag] if flag == "-h" || flag == "--help" => {
            println!("{USAGE}");
            return ExitCode::SUCCESS;
        }
        [flag] if flag == "--blockage-study" => {
            study::blockage_study(&scenario::Scenario::fin_wake())
        }
        [dir] if !dir.starts_with('-') => run(&scenario::Scenario::fin_wake(), &PathBuf::from(dir)),
        _ => {
            eprintln!("error: unexpected arguments {args:?}\n\n{USAGE}");
            return ExitCode::from(2);
        }
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}

/// The demo-fields folder of this source tree (the generator crate's parent), wherever
/// the command is run from.
fn default_output_dir() -> PathBuf {
    let manifest = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    manifest.parent().map_or_else(|| PathBuf::from("demo-fields"), |p| p.to_path_buf())
}

/// Simulate, add the measurement errors, check the result, write the files.
fn run(s: &scenario::Scenario, out_dir: &std::path::Path) -> Result<(), String> {
    use rand::SeedableRng;
    let clock = std::time::Instant::now();
    println!(
        "fin-wake: lattice {}×{}, D = {} cells, U = {} cells/step, Re = {}, τ = {:.4}, blockage {:.1} %",
        s.nx,
        s.ny,
        s.fin_diameter_cells,
        s.inflow_lattice,
        s.reynolds,
        s.tau(),
        100.0 * s.blockage()
    );
    println!(
        "  water: D = {} mm, U∞ = {} mm/s, ν = {:.3e} m²/s, cell {} mm, step {} ms",
        1e3 * s.fin_diameter(),
        1e3 * s.free_stream_speed(),
        s.viscosity(),
        1e3 * s.cell_size,
        1e3 * s.step_duration
    );
    let rule = simulate::demo_rule(s);
    let mut rec = simulate::simulate(s, &rule, &mut |line| println!("  {line}"))?;
    let plane = rec.x.len() * rec.y.len();
    let model = noise::ErrorModel {
        speed_per_pixel: s.speed_per_pixel(),
        noise_px: s.displacement_noise_px,
        spurious_probability: s.spurious_probability,
        zero_share: s.spurious_zero_share,
        max_displacement_px: 0.5 * s.window_pixels(),
    };
    let mut rng = rand_pcg::Pcg64::seed_from_u64(s.seed);
    let mut report = noise::ErrorReport::default();
    for (u, v) in rec.u.chunks_exact_mut(plane).zip(rec.v.chunks_exact_mut(plane)) {
        report.merge(&model.apply(u, v, &rec.mask, &mut rng));
    }
    let fraction = report.spurious_fraction();
    if !(0.01..=0.02).contains(&fraction) {
        return Err(format!(
            "spurious-vector fraction {:.3} % is outside the intended 1–2 %",
            100.0 * fraction
        ));
    }
    let period_s = rec.recorded_cycles.mean_period * s.step_duration;
    let strouhal = s.fin_diameter() / (period_s * s.free_stream_speed());
    let duration = rec.t.len() as f64 * s.frame_interval();
    println!(
        "  spin-up {} steps ({:.2} s of flow)",
        rec.spinup_steps,
        rec.spinup_steps as f64 * s.step_duration
    );
    println!(
        "  recorded {} snapshots of {}×{} vectors at {} Hz ({:.3} s, {:.2} shedding periods)",
        rec.t.len(),
        rec.x.len(),
        rec.y.len(),
        1.0 / s.frame_interval(),
        duration,
        duration / period_s
    );
    println!(
        "  shedding at the probe: f = {:.4} Hz, St = f D / U∞ = {:.4} (period spread {:.3} % over {} cycles)",
        1.0 / period_s,
        strouhal,
        100.0 * rec.recorded_cycles.period_spread,
        rec.recorded_cycles.count
    );
    println!(
        "  errors: {} valid vectors, {} spurious ({:.3} %, {} at zero), Gaussian RMS {:.3e} m/s ({:.2} % of U∞)",
        report.valid,
        report.spurious,
        100.0 * fraction,
        report.zero_locked,
        report.rms_noise,
        100.0 * report.rms_noise / s.free_stream_speed()
    );
    let series = output::to_series(&rec.x, &rec.y, &rec.t, &rec.u, &rec.v, &rec.mask)?;
    for (path, bytes) in
        output::write_dataset(out_dir, &series, s.free_stream_speed(), s.fin_diameter())?
    {
        println!("  wrote {path} ({bytes} bytes)");
    }
    println!("  done in {:.1} s", clock.elapsed().as_secs_f64());
    Ok(())
}
