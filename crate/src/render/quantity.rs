//! The scalar fields the viewer can draw from a series, with what each needs for display:
//! a name, a unit, a colour map and whether it is signed.

use super::colormap::ColormapKind;
use super::RenderError;
use crate::field::{speed, vorticity, Series, Units};
use serde::Serialize;
use std::str::FromStr;

/// A scalar field derived from one snapshot of a velocity series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Quantity {
    /// |u|, in velocity units.
    Speed,
    /// ω = ∂v/∂x − ∂u/∂y, in 1/time.
    Vorticity,
}

impl Quantity {
    pub const ALL: [Quantity; 2] = [Quantity::Speed, Quantity::Vorticity];

    /// Identifier used by the page, the CLI and recipes.
    pub fn id(self) -> &'static str {
        match self {
            Quantity::Speed => "speed",
            Quantity::Vorticity => "vorticity",
        }
    }

    /// Human-readable name with its symbol, for selectors and colour bars.
    pub fn label(self) -> &'static str {
        match self {
            Quantity::Speed => "speed |u|",
            Quantity::Vorticity => "vorticity ω",
        }
    }

    /// Unit label in the series' units, e.g. `m/s` or `1/s`.
    pub fn unit(self, units: Units) -> String {
        match self {
            Quantity::Speed => units.velocity_label(),
            Quantity::Vorticity => units.rate_label(),
        }
    }

    /// Signed fields get a diverging map centred on zero; magnitudes a sequential one.
    pub fn is_signed(self) -> bool {
        matches!(self, Quantity::Vorticity)
    }

    pub fn colormap(self) -> ColormapKind {
        if self.is_signed() {
            ColormapKind::Eddy
        } else {
            ColormapKind::Tide
        }
    }

    /// The field of snapshot `k`, `(ny, nx)`, 0 where there is no data.
    pub fn compute(self, s: &Series, k: usize) -> Result<Vec<f32>, RenderError> {
        check_snapshot(s, k)?;
        Ok(match self {
            Quantity::Speed => speed(s, k),
            Quantity::Vorticity => vorticity(s, k),
        })
    }
}

impl FromStr for Quantity {
    type Err = RenderError;
    fn from_str(name: &str) -> Result<Self, RenderError> {
        Quantity::ALL.into_iter().find(|q| q.id().eq_ignore_ascii_case(name.trim())).ok_or_else(
            || RenderError::UnknownQuantity {
                name: name.to_string(),
                available: Quantity::ALL.map(Quantity::id).join(", "),
            },
        )
    }
}

/// Error unless `k` is a snapshot of `s`.
pub fn check_snapshot(s: &Series, k: usize) -> Result<(), RenderError> {
    if k < s.nt() {
        Ok(())
    } else {
        Err(RenderError::SnapshotOutOfRange { index: k, nt: s.nt() })
    }
}

/// Cells of snapshot `k` that hold data: not masked and not a missing vector. `(ny, nx)`.
pub fn valid_cells(s: &Series, k: usize) -> Vec<bool> {
    let gaps = s.gaps_at(k);
    s.mask().iter().enumerate().map(|(c, &m)| !m && gaps.is_none_or(|g| !g[c])).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;

    #[test]
    fn parses_names_and_rejects_unknown_ones() {
        assert_eq!("Speed".parse::<Quantity>().unwrap(), Quantity::Speed);
        let e = "pressure".parse::<Quantity>().unwrap_err().to_string();
        assert_eq!(e, "unknown field 'pressure' (available: speed, vorticity)");
    }

    #[test]
    fn units_maps_and_snapshot_bounds() {
        let s = Series::from_parts(SeriesParts {
            x: vec![0.0, 1.0],
            y: vec![0.0, 1.0],
            t: vec![0.0],
            u: vec![3.0; 4],
            v: vec![4.0; 4],
            ..Default::default()
        })
        .unwrap();
        assert_eq!(Quantity::Speed.unit(s.units()), "m/s");
        assert_eq!(Quantity::Vorticity.unit(s.units()), "1/s");
        assert_eq!(Quantity::Vorticity.colormap(), ColormapKind::Eddy);
        // |(3, 4)| = 5 [D].
        assert_eq!(Quantity::Speed.compute(&s, 0).unwrap(), vec![5.0; 4]);
        let e = Quantity::Speed.compute(&s, 1).unwrap_err().to_string();
        assert!(e.contains("snapshot 1 does not exist") && e.contains("0 to 0"), "{e}");
    }
}
