//! Every number of the demo scenario in one place: the lattice, its mapping to water, the
//! PIV window, the camera and the measurement-error model. The README copies these values;
//! a unit test below checks that the derived physical quantities (Re, ν, U∞) agree.
//!
//! The scenario is invented: a planar PIV campaign in a small water channel behind a round
//! pin fin of a heat-sink test rig, at a Reynolds number of 150 based on the fin diameter.

/// Parameters of one generator run. [`Scenario::fin_wake`] is the committed demo; other
/// values exist only so tests can build small variants.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Lattice nodes along the channel (x, streamwise).
    pub nx: usize,
    /// Lattice nodes across the channel (y). The free-slip walls lie half a cell outside the
    /// first and last rows, so the channel is exactly `ny` cells high.
    pub ny: usize,
    /// Fin centre in lattice node coordinates (x node index, y node index; y may be a half
    /// integer so the fin sits on the channel centre line between two rows).
    pub fin_centre: (f64, f64),
    /// Fin diameter in cells. Nodes with centre distance ≤ D/2 are solid.
    pub fin_diameter_cells: f64,
    /// Inflow speed in lattice units (cells per step); ≲ 0.1 keeps the Mach number low.
    pub inflow_lattice: f64,
    /// Reynolds number U∞ D / ν.
    pub reynolds: f64,
    /// Physical size of one lattice cell (m).
    pub cell_size: f64,
    /// Physical duration of one lattice step (s).
    pub step_duration: f64,
    /// Lattice steps between two recorded PIV snapshots.
    pub steps_per_frame: usize,
    /// Number of recorded snapshots.
    pub frames: usize,
    /// Spin-up budget: the run fails if shedding is not periodic after this many steps.
    pub max_spinup_steps: usize,
    /// Lattice node of the first vector (lowest x, lowest y).
    pub first_vector_node: (usize, usize),
    /// Vectors per row and per column of the PIV window (nx, ny).
    pub vectors: (usize, usize),
    /// Vector spacing in cells (50 % overlap: half the interrogation window).
    pub vector_pitch_cells: usize,
    /// Side of the square interrogation window in cells.
    pub window_cells: usize,
    /// Camera calibration: object size of one pixel (m/px).
    pub pixel_size: f64,
    /// Time between the two frames of a PIV recording pair (s).
    pub pulse_separation: f64,
    /// Standard deviation of the random displacement error per component (px).
    pub displacement_noise_px: f64,
    /// Probability that a valid vector is spurious.
    pub spurious_probability: f64,
    /// Share of spurious vectors that lock onto a zero-displacement peak (stationary
    /// reflections); the rest report a displacement uniformly distributed over the range a
    /// correlation peak can reach (± half the interrogation window).
    pub spurious_zero_share: f64,
    /// Seed of the measurement-error generator (PCG64).
    pub seed: u64,
}

impl Scenario {
    /// The committed demo dataset `fin-wake`.
    ///
    /// D = 20 cells with U = 0.09375 = 3/32 cells/step gives τ = 0.5375 at Re = 150 (above
    /// the τ ≈ 0.53 practical floor of BGK). Mapping one cell to 0.2 mm and one step to
    /// 0.5 ms makes the fin 4 mm across, U∞ = 37.5 mm/s and ν = 1.0e-6 m²/s (water at about
    /// 20 °C, common practice), and a frame every 50 steps is an acquisition rate of 40 Hz.
    /// The channel is 8 D high (blockage 12.5 %): METHODS.md §5 measured how much this
    /// confinement raises the shedding frequency with the same recipe (+8 % at Re = 100),
    /// so the Strouhal check has a sourced allowance.
    pub fn fin_wake() -> Scenario {
        Scenario {
            nx: 500,
            ny: 160,
            fin_centre: (100.0, 79.5),
            fin_diameter_cells: 20.0,
            inflow_lattice: 0.09375,
            reynolds: 150.0,
            cell_size: 0.2e-3,
            step_duration: 0.5e-3,
            steps_per_frame: 50,
            frames: 240,
            max_spinup_steps: 80_000,
            first_vector_node: (70, 21),
            vectors: (100, 40),
            vector_pitch_cells: 3,
            window_cells: 6,
            pixel_size: 0.05e-3,
            pulse_separation: 8e-3,
            displacement_noise_px: 0.1,
            spurious_probability: 0.015,
            spurious_zero_share: 0.2,
            seed: 20_241_150,
        }
    }

    /// The same scenario in a channel `ny` cells high, fin and PIV window moved with the
    /// centre line: used to measure how confinement shifts the shedding frequency.
    pub fn with_channel_height(&self, ny: usize) -> Scenario {
        let shift = (ny as f64 - self.ny as f64) / 2.0;
        let mut s = self.clone();
        s.ny = ny;
        s.fin_centre.1 += shift;
        s.first_vector_node.1 = (s.first_vector_node.1 as f64 + shift).round() as usize;
        s
    }

    /// Lattice kinematic viscosity ν = U D / Re (cells²/step).
    pub fn viscosity_lattice(&self) -> f64 {
        self.inflow_lattice * self.fin_diameter_cells / self.reynolds
    }

    /// BGK relaxation time τ = ½ + 3ν (lattice sound speed² = 1/3).
    pub fn tau(&self) -> f64 {
        0.5 + 3.0 * self.viscosity_lattice()
    }

    /// Free-stream speed U∞ (m/s). (Divided before multiplying: for the demo values this
    /// order rounds to exactly 0.0375.)
    pub fn free_stream_speed(&self) -> f64 {
        self.inflow_lattice / self.step_duration * self.cell_size
    }

    /// Fin diameter D (m).
    pub fn fin_diameter(&self) -> f64 {
        self.fin_diameter_cells * self.cell_size
    }

    /// Kinematic viscosity the mapping implies (m²/s).
    pub fn viscosity(&self) -> f64 {
        self.viscosity_lattice() * self.cell_size * self.cell_size / self.step_duration
    }

    /// Fin diameter over channel height.
    pub fn blockage(&self) -> f64 {
        self.fin_diameter_cells / self.ny as f64
    }

    /// Time between two recorded snapshots (s).
    pub fn frame_interval(&self) -> f64 {
        self.steps_per_frame as f64 * self.step_duration
    }

    /// Velocity that moves a particle image by one pixel between the two frames (m/s per px).
    pub fn speed_per_pixel(&self) -> f64 {
        self.pixel_size / self.pulse_separation
    }

    /// Interrogation window side in pixels.
    pub fn window_pixels(&self) -> f64 {
        self.window_cells as f64 * self.cell_size / self.pixel_size
    }

    /// Physical position of the fin centre in lattice coordinates, used as the origin of
    /// the PIV coordinates: returns the position (m) of lattice node (i, j).
    pub fn node_position(&self, i: usize, j: usize) -> (f64, f64) {
        (
            (i as f64 - self.fin_centre.0) * self.cell_size,
            (j as f64 - self.fin_centre.1) * self.cell_size,
        )
    }

    /// Checks that the parameters describe a runnable, stable setup whose PIV window and
    /// interrogation windows lie inside the lattice.
    pub fn validate(&self) -> Result<(), String> {
        let tau = self.tau();
        if tau <= 0.5 {
            return Err(format!("τ = {tau} must exceed 0.5"));
        }
        if self.inflow_lattice <= 0.0 || self.inflow_lattice > 0.15 {
            return Err(format!(
                "inflow speed {} cells/step is outside (0, 0.15]: the Mach number would be too high",
                self.inflow_lattice
            ));
        }
        if self.window_cells % 2 != 0 || self.window_cells == 0 {
            return Err(
                "the interrogation window must span an even, non-zero number of cells".into()
            );
        }
        let half = self.window_cells / 2;
        let (i0, j0) = self.first_vector_node;
        let (nvx, nvy) = self.vectors;
        if nvx < 2 || nvy < 2 || self.frames < 2 || self.steps_per_frame == 0 {
            return Err("need at least 2×2 vectors, 2 frames and 1 step per frame".into());
        }
        let i_last = i0 + (nvx - 1) * self.vector_pitch_cells;
        let j_last = j0 + (nvy - 1) * self.vector_pitch_cells;
        if i0 < half + 1 || j0 < half || i_last + half >= self.nx - 1 || j_last + half >= self.ny {
            return Err(format!(
                "the PIV window (nodes {i0}..={i_last} × {j0}..={j_last}, ± {half} for the \
                 interrogation windows) does not fit inside the {}×{} lattice away from inlet and outlet",
                self.nx, self.ny
            ));
        }
        let r = self.fin_diameter_cells / 2.0;
        let (cx, cy) = self.fin_centre;
        if cx - r < 2.0
            || cx + r > self.nx as f64 - 3.0
            || cy - r < 1.0
            || cy + r > self.ny as f64 - 2.0
        {
            return Err(
                "the fin must lie inside the channel, clear of walls, inlet and outlet".into()
            );
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn demo_mapping_is_water_at_re_150() {
        let s = Scenario::fin_wake();
        s.validate().unwrap();
        // ν of water at about 20 °C is 1.0e-6 m²/s (common practice).
        assert!((s.viscosity() - 1.0e-6).abs() < 1e-18);
        // Re = U∞ D / ν recomputed from the physical values [definition].
        let re = s.free_stream_speed() * s.fin_diameter() / s.viscosity();
        assert!((re - 150.0).abs() < 1e-9, "Re = {re}");
        assert!((s.tau() - 0.5375).abs() < 1e-15);
        assert!((s.free_stream_speed() - 0.0375).abs() < 1e-15);
        assert!((s.frame_interval() - 0.025).abs() < 1e-15);
        assert!((s.window_pixels() - 24.0).abs() < 1e-12);
        // Free-stream displacement 6 px: a quarter of the window, the usual PIV rule of
        // thumb (common practice).
        let d = s.free_stream_speed() / s.speed_per_pixel();
        assert!((d - 6.0).abs() < 1e-9, "displacement {d} px");
    }

    #[test]
    fn taller_channel_keeps_fin_and_window_centred() {
        let s = Scenario::fin_wake().with_channel_height(320);
        s.validate().unwrap();
        assert_eq!(s.fin_centre.1, 159.5);
        // The window stays symmetric about the centre line: rows 101..=218 around 159.5.
        let last = s.first_vector_node.1 + (s.vectors.1 - 1) * s.vector_pitch_cells;
        assert_eq!(s.first_vector_node.1 + last, 319);
        assert!((s.blockage() - 0.0625).abs() < 1e-15);
    }

    #[test]
    fn windows_outside_the_lattice_are_rejected() {
        let mut s = Scenario::fin_wake();
        s.vectors.0 = 200;
        assert!(s.validate().unwrap_err().contains("does not fit"));
    }
}
