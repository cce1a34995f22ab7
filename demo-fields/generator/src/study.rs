//! The blockage study (`--blockage-study`): the demo wake in taller channels, to measure how
//! much of the demo's Strouhal number is due to the channel's confinement.

use crate::scenario::Scenario;
use crate::shedding::PeriodicityRule;
use crate::simulate::simulate;

/// Strouhal number of the demo wake in a channel twice as high: how much of the demo's St
/// is confinement, measured with the same solver, resolution and Re.
///
/// The taller channel sheds with a slow modulation (about ±0.7 % in period), so the rule
/// is looser than the demo's and the mean period is taken over about twenty cycles. Other
/// heights tried (12 D and 24 D) never settled within the spin-up budget (periods varying
/// by ±10 %). A probable cause is the lattice's finite sound speed: the channel's first
/// transverse acoustic mode, period 2H/c_s, comes close to the shedding period in wide
/// channels and is not a feature of the incompressible flow; hence only these two heights.
pub fn blockage_study(base: &Scenario) -> Result<(), String> {
    println!("blockage  channel  St (probe)  cycles  period spread  spin-up steps");
    for height in [8, 16] {
        let mut s = base.with_channel_height(height * base.fin_diameter_cells as usize);
        s.frames = 480;
        let rule = PeriodicityRule {
            cycles: 6,
            period_tolerance: 0.03,
            swing_tolerance: 0.3,
            min_swing: 0.1 * s.inflow_lattice,
        };
        let rec = simulate(&s, &rule, &mut |_| {})?;
        let period = rec.recorded_cycles.mean_period * s.step_duration;
        let st = s.fin_diameter() / (period * s.free_stream_speed());
        println!(
            "{:>7.2} %  {:>4} D   {:.4}      {:>3}     {:>6.3} %      {}",
            100.0 * s.blockage(),
            height,
            st,
            rec.recorded_cycles.count,
            100.0 * rec.recorded_cycles.period_spread,
            rec.spinup_steps
        );
    }
    Ok(())
}
