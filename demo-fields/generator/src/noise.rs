//! The measurement-error model, applied in pixel-displacement terms as a PIV evaluation
//! would produce it:
//!
//! * every valid vector gets an independent Gaussian displacement error per component
//!   (standard deviation a tenth of a pixel for a well-seeded, well-focused recording,
//!   common practice);
//! * with a small probability a vector is spurious: the correlation picked a wrong peak.
//!   Most such vectors report a displacement anywhere in the range the correlation plane
//!   allows (uniform over ± half the interrogation window per component); a share lock onto
//!   zero displacement (a stationary reflection's peak).
//!
//! Masked vectors are untouched (they hold 0). The random draws per vector are the same in
//! number whatever happens to the vector, so the stream, and therefore the output, depends
//! only on the seed and the vector order.

use rand::RngExt;
use rand_distr::{Distribution, StandardNormal};
use rand_pcg::Pcg64;

/// Parameters of the error model.
#[derive(Debug, Clone, Copy)]
pub struct ErrorModel {
    /// m/s of velocity per pixel of displacement.
    pub speed_per_pixel: f64,
    /// Standard deviation of the displacement error, per component (px).
    pub noise_px: f64,
    /// Probability that a valid vector is spurious.
    pub spurious_probability: f64,
    /// Share of spurious vectors at zero displacement.
    pub zero_share: f64,
    /// Largest displacement a correlation peak can report, per component (px).
    pub max_displacement_px: f64,
}

/// What the model did to one series.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ErrorReport {
    /// Vectors outside the mask.
    pub valid: usize,
    /// Spurious vectors of any kind.
    pub spurious: usize,
    /// Of those, vectors locked at zero displacement.
    pub zero_locked: usize,
    /// Root-mean-square of the Gaussian error actually added, per component (m/s).
    pub rms_noise: f64,
}

impl ErrorReport {
    /// Spurious vectors as a fraction of the valid ones.
    pub fn spurious_fraction(&self) -> f64 {
        self.spurious as f64 / self.valid.max(1) as f64
    }

    /// Adds the counts of another snapshot.
    pub fn merge(&mut self, other: &ErrorReport) {
        let n0 = self.valid as f64;
        let n1 = other.valid as f64;
        let ms = if n0 + n1 > 0.0 {
            (n0 * self.rms_noise.powi(2) + n1 * other.rms_noise.powi(2)) / (n0 + n1)
        } else {
            0.0
        };
        self.valid += other.valid;
        self.spurious += other.spurious;
        self.zero_locked += other.zero_locked;
        self.rms_noise = ms.sqrt();
    }
}

impl ErrorModel {
    /// Applies the model in place to one snapshot's velocities (m/s), `mask` = `true` for
    /// vectors that hold no data.
    pub fn apply(
        &self,
        u: &mut [f64],
        v: &mut [f64],
        mask: &[bool],
        rng: &mut Pcg64,
    ) -> ErrorReport {
        let mut report = ErrorReport::default();
        let mut sum_sq = 0.0;
        for k in 0..u.len() {
            // Six draws per vector, always, masked or not: keeps the stream aligned.
            let nx: f64 = StandardNormal.sample(rng);
            let ny: f64 = StandardNormal.sample(rng);
            let pick: f64 = rng.random();
            let kind: f64 = rng.random();
            let rx: f64 = rng.random_range(-1.0..1.0);
            let ry: f64 = rng.random_range(-1.0..1.0);
            if mask[k] {
                continue;
            }
            report.valid += 1;
            let mut dx = u[k] / self.speed_per_pixel;
            let mut dy = v[k] / self.speed_per_pixel;
            if pick < self.spurious_probability {
                report.spurious += 1;
                if kind < self.zero_share {
                    report.zero_locked += 1;
                    dx = 0.0;
                    dy = 0.0;
                } else {
                    dx = rx * self.max_displacement_px;
                    dy = ry * self.max_displacement_px;
                }
            } else {
                dx += self.noise_px * nx;
                dy += self.noise_px * ny;
                sum_sq +=
                    0.5 * (nx * nx + ny * ny) * (self.noise_px * self.speed_per_pixel).powi(2);
            }
            u[k] = dx * self.speed_per_pixel;
            v[k] = dy * self.speed_per_pixel;
        }
        let clean = report.valid - report.spurious;
        report.rms_noise = if clean > 0 { (sum_sq / clean as f64).sqrt() } else { 0.0 };
        report
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    fn model() -> ErrorModel {
        ErrorModel {
            speed_per_pixel: 6.25e-3,
            noise_px: 0.1,
            spurious_probability: 0.015,
            zero_share: 0.2,
            max_displacement_px: 12.0,
        }
    }

    /// Counts follow the binomial law: with n = 200,000 valid vectors and p = 0.015 the
    /// spurious count has standard deviation √(np(1−p)) ≈ 54; 5σ bounds [binomial law].
    /// The Gaussian error has the requested standard deviation (relative error of an RMS
    /// estimate over ~400,000 draws is ≈ 0.1 %; 1 % bound) [normal law].
    #[test]
    fn rates_and_noise_level() {
        let m = model();
        let n = 200_000;
        let mut u = vec![0.03; n];
        let mut v = vec![-0.01; n];
        let mut mask = vec![false; n];
        mask[7] = true;
        u[7] = 0.0;
        v[7] = 0.0;
        let mut rng = Pcg64::seed_from_u64(1);
        let r = m.apply(&mut u, &mut v, &mask, &mut rng);
        assert_eq!(r.valid, n - 1);
        let expected = 0.015 * r.valid as f64;
        let sd = (expected * 0.985).sqrt();
        assert!((r.spurious as f64 - expected).abs() < 5.0 * sd, "{}", r.spurious);
        let z = 0.2 * r.spurious as f64;
        assert!((r.zero_locked as f64 - z).abs() < 5.0 * (z * 0.8).sqrt());
        assert!((r.rms_noise / 6.25e-4 - 1.0).abs() < 0.01, "{}", r.rms_noise);
        assert_eq!((u[7], v[7]), (0.0, 0.0));
        // Spurious vectors stay inside the correlation plane: |d| ≤ 12 px = 0.075 m/s.
        assert!(u.iter().chain(&v).all(|x| x.abs() <= 0.075 + 1e-12));
    }

    /// Same seed, same output; another seed, another output.
    #[test]
    fn seeded_and_repeatable() {
        let m = model();
        let run = |seed| {
            let mut u = vec![0.02; 1000];
            let mut v = vec![0.0; 1000];
            let mut rng = Pcg64::seed_from_u64(seed);
            m.apply(&mut u, &mut v, &[false; 1000], &mut rng);
            u
        };
        assert_eq!(run(5), run(5));
        assert_ne!(run(5), run(6));
    }
}
