//! How well ζ (first-order, from the linearisation) predicts the brute-force change
//! Δσ = σ_FTLE[f + εg] − σ_FTLE[f]. ζ is a log-magnitude (how strongly g can move a
//! trajectory), Δσ is signed (what this particular g did), so three figures are reported:
//! Pearson's r of ζ with Δσ, Pearson's r and Spearman's rank correlation of ζ with |Δσ|.

use crate::lagrangian::FtleFlag;
use serde::{Deserialize, Serialize};

/// Correlations of ζ with Δσ over the nodes integrated over the whole horizon.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ZetaAgreement {
    pub nodes: usize,
    /// Pearson's r of ζ and Δσ.
    pub pearson: f64,
    /// Pearson's r of ζ and |Δσ|.
    pub pearson_abs: f64,
    /// Spearman's rank correlation of ζ and |Δσ| (ties share their mean rank).
    pub spearman_abs: f64,
}

/// The agreement figures over nodes whose flag byte is [`FtleFlag::Full`], or `None` with
/// fewer than 3 such nodes or a constant map.
pub fn zeta_agreement(zeta: &[f32], delta: &[f32], flag: &[u8]) -> Option<ZetaAgreement> {
    let (z, d): (Vec<f64>, Vec<f64>) = zeta
        .iter()
        .zip(delta)
        .zip(flag)
        .filter(|(_, &f)| f == FtleFlag::Full as u8)
        .map(|((&z, &d), _)| (z as f64, d as f64))
        .unzip();
    let abs: Vec<f64> = d.iter().map(|v| v.abs()).collect();
    Some(ZetaAgreement {
        nodes: z.len(),
        pearson: pearson(&z, &d)?,
        pearson_abs: pearson(&z, &abs)?,
        spearman_abs: spearman(&z, &abs)?,
    })
}

/// Spearman's rank correlation: Pearson's r of the ranks.
pub fn spearman(a: &[f64], b: &[f64]) -> Option<f64> {
    pearson(&ranks(a), &ranks(b))
}

/// Pearson's correlation coefficient (textbook definition), `None` when undefined.
pub fn pearson(a: &[f64], b: &[f64]) -> Option<f64> {
    let n = a.len();
    if n < 3 || b.len() != n {
        return None;
    }
    let ma = a.iter().sum::<f64>() / n as f64;
    let mb = b.iter().sum::<f64>() / n as f64;
    let (mut sab, mut saa, mut sbb) = (0.0, 0.0, 0.0);
    for (x, y) in a.iter().zip(b) {
        sab += (x - ma) * (y - mb);
        saa += (x - ma) * (x - ma);
        sbb += (y - mb) * (y - mb);
    }
    let r = sab / (saa * sbb).sqrt();
    r.is_finite().then_some(r)
}

/// Ranks 1..n, tied values sharing their mean rank.
fn ranks(v: &[f64]) -> Vec<f64> {
    let mut order: Vec<usize> = (0..v.len()).collect();
    order.sort_by(|&i, &j| v[i].total_cmp(&v[j]));
    let mut r = vec![0.0; v.len()];
    let mut k = 0;
    while k < order.len() {
        let mut m = k;
        while m + 1 < order.len() && v[order[m + 1]] == v[order[k]] {
            m += 1;
        }
        let mean = (k + m) as f64 / 2.0 + 1.0;
        for &i in &order[k..=m] {
            r[i] = mean;
        }
        k = m + 1;
    }
    r
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against scipy.stats.pearsonr (x = 1..5, y = x²: r = 0.981104910251593) and
    /// scipy.stats.rankdata ([3, 1, 3, 2] → [3.5, 1, 3.5, 2]), values printed by scipy 1.x.
    #[test]
    fn textbook_values() {
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.0, 4.0, 9.0, 16.0, 25.0];
        assert!((pearson(&x, &y).unwrap() - 0.981_104_910_251_593).abs() < 1e-12);
        assert_eq!(ranks(&[3.0, 1.0, 3.0, 2.0]), vec![3.5, 1.0, 3.5, 2.0]);
        assert!(pearson(&[1.0, 1.0, 1.0], &[1.0, 2.0, 3.0]).is_none());
    }
}
