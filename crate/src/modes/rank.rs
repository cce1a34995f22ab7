//! Truncation rank of a snapshot SVD: by energy, fixed, or the optimal hard threshold.
//!
//! Optimal hard threshold: Gavish, M. & Donoho, D. L. 2014, "The optimal hard threshold for
//! singular values is 4/√3", IEEE Trans. Inf. Theory 60:5040–5053. For an n × m matrix with
//! white noise of unknown level, keep singular values above ω(β)·median(s), β = min/max
//! aspect ratio, with the paper's cubic approximation
//! ω(β) ≈ 0.56β³ − 0.95β² + 1.82β + 1.43 (from memory; 2.858 at β = 1, the paper's value
//! for square matrices).
//!
//! Failure mode: on noise-free data whose rank exceeds half the columns, the median is a
//! signal value and the threshold cuts signal (seen on an exact rank-8, 15-column test):
//! use `Energy` or `Fixed` for clean synthetic data.

use super::ModesError;

/// How many singular triplets to keep.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum RankRule {
    /// Smallest r whose leading singular values hold this fraction of Σs² (0 < f ≤ 1).
    Energy(f64),
    /// Exactly r (fewer if the numerical rank is lower).
    Fixed(usize),
    /// Gavish–Donoho threshold for unknown noise.
    OptimalHardThreshold,
}

/// ω(β) of the module doc.
pub fn hard_threshold_factor(beta: f64) -> f64 {
    0.56 * beta.powi(3) - 0.95 * beta.powi(2) + 1.82 * beta + 1.43
}

impl RankRule {
    /// A guess of the rank this rule will pick for a matrix with `cols` ≤ rows columns,
    /// before the singular values are known: exact for `Fixed` (unless the numerical rank is
    /// lower), a quarter of the columns otherwise. Only for progress plans, which are revised
    /// once the rank is known.
    pub fn guess(&self, cols: usize) -> usize {
        match *self {
            RankRule::Fixed(r) => r.clamp(1, cols.max(1)),
            _ => (cols / 4).max(1),
        }
    }

    /// The rank this rule picks from the singular values `s` (nonincreasing) of an
    /// `rows × cols` matrix; values dropped as round-off before count as zeros.
    pub fn pick(&self, s: &[f64], rows: usize, cols: usize) -> Result<usize, ModesError> {
        let r = match *self {
            RankRule::Fixed(r) => {
                if r == 0 {
                    return Err(ModesError::BadOption {
                        name: "rank",
                        rule: "must be at least 1".into(),
                    });
                }
                r.min(s.len())
            }
            RankRule::Energy(f) => {
                if !(f > 0.0 && f <= 1.0) {
                    return Err(ModesError::BadOption {
                        name: "energy",
                        rule: format!("the energy fraction must be in (0, 1], not {f}"),
                    });
                }
                let total: f64 = s.iter().map(|x| x * x).sum();
                let mut acc = 0.0;
                let mut r = s.len();
                for (j, x) in s.iter().enumerate() {
                    acc += x * x;
                    if acc >= f * total * (1.0 - 1e-12) {
                        r = j + 1;
                        break;
                    }
                }
                r
            }
            RankRule::OptimalHardThreshold => {
                let k = rows.min(cols);
                let beta = k as f64 / rows.max(cols) as f64;
                let mut all: Vec<f64> = s.to_vec();
                all.resize(k, 0.0);
                all.sort_by(|a, b| a.total_cmp(b));
                let median =
                    if k % 2 == 1 { all[k / 2] } else { 0.5 * (all[k / 2 - 1] + all[k / 2]) };
                let tau = hard_threshold_factor(beta) * median;
                s.iter().take_while(|&&x| x > tau).count()
            }
        };
        Ok(r.max(1).min(s.len()))
    }
}
