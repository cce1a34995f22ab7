//! Maps computed by a transport run (FTLE, exit time) as pictures: which nodes hold a value,
//! the default colour range and the RGBA pixels. The maps live on the tracer grid, not on
//! the data grid, and come with a status byte per node (the `flag` of
//! [`crate::lagrangian::FtleFlag`]).

use super::colormap::{Colormap, ColormapKind};
use super::paint::{paint_rgba, ColorRange};
use super::range::{percentile, ROBUST_PERCENTILE};
use super::RenderError;
use crate::field::Units;
use serde::Serialize;
use std::str::FromStr;

/// A map a transport run produces.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TransportMap {
    /// σ = (1/τ) ln σ₁(∇F), in 1/time.
    Ftle,
    /// Time actually integrated |τ| (equal to |T| where the tracer stayed in the data).
    ExitTime,
}

/// Status bytes (`FtleFlag as u8`): value over the whole horizon, stopped at the edge after
/// half of it, stopped before half of it, seeded without data, no value.
const FULL: u8 = 0;
const EXITED: u8 = 1;
const SHORT: u8 = 2;
const MASKED: u8 = 3;

impl TransportMap {
    pub const ALL: [TransportMap; 2] = [TransportMap::Ftle, TransportMap::ExitTime];

    /// Identifier used by the page.
    pub fn id(self) -> &'static str {
        match self {
            TransportMap::Ftle => "ftle",
            TransportMap::ExitTime => "exit_time",
        }
    }

    /// Name with its symbol, for selectors and colour bars.
    pub fn label(self) -> &'static str {
        match self {
            TransportMap::Ftle => "FTLE σ",
            TransportMap::ExitTime => "exit time τ",
        }
    }

    /// Unit label in the series' units.
    pub fn unit(self, units: Units) -> String {
        match self {
            TransportMap::Ftle => units.rate_label(),
            TransportMap::ExitTime => units.time.symbol().into(),
        }
    }

    pub fn colormap(self) -> ColormapKind {
        ColormapKind::Tide
    }

    /// Nodes that hold a value of this map: FTLE where the tracer got one (full, exited or
    /// short), exit time wherever a tracer was seeded on data.
    pub fn valid(self, flags: &[u8]) -> Vec<bool> {
        flags
            .iter()
            .map(|&f| match self {
                TransportMap::Ftle => matches!(f, FULL | EXITED | SHORT),
                TransportMap::ExitTime => f != MASKED,
            })
            .collect()
    }

    /// Default colour range: FTLE from 0 (or the robust minimum, if lower) to the 99th
    /// percentile of the valid values (a few tracers that stopped early can carry extreme
    /// values); exit time from 0 to the horizon |T|.
    pub fn default_range(self, values: &[f32], flags: &[u8], horizon: f64) -> (f64, f64) {
        match self {
            TransportMap::ExitTime => {
                let h = horizon.abs();
                (0.0, if h.is_finite() && h > 0.0 { h } else { 1.0 })
            }
            TransportMap::Ftle => {
                let valid = self.valid(flags);
                let mut v: Vec<f32> = values
                    .iter()
                    .zip(&valid)
                    .filter(|(x, &ok)| ok && x.is_finite())
                    .map(|(x, _)| *x)
                    .collect();
                let hi = percentile(&mut v, ROBUST_PERCENTILE).unwrap_or(1.0);
                let lo = percentile(&mut v, 100.0 - ROBUST_PERCENTILE).unwrap_or(0.0).min(0.0);
                if hi > lo {
                    (lo, hi)
                } else {
                    (lo, lo + 1.0)
                }
            }
        }
    }

    /// RGBA picture (first row = largest y) of the map, `nx × ny`, nodes without a value in
    /// `missing`.
    #[allow(clippy::too_many_arguments)]
    pub fn image(
        self,
        values: &[f32],
        flags: &[u8],
        nx: usize,
        ny: usize,
        range: ColorRange,
        map: &Colormap,
        missing: [u8; 4],
    ) -> Result<Vec<u8>, RenderError> {
        if values.len() != nx * ny || flags.len() != nx * ny {
            return Err(RenderError::Invalid(format!(
                "the {} map has {} values and {} flags for a {nx} × {ny} grid",
                self.id(),
                values.len(),
                flags.len()
            )));
        }
        Ok(paint_rgba(values, &self.valid(flags), nx, ny, map, range, missing))
    }
}

impl FromStr for TransportMap {
    type Err = RenderError;
    fn from_str(name: &str) -> Result<Self, RenderError> {
        TransportMap::ALL.into_iter().find(|q| q.id().eq_ignore_ascii_case(name.trim())).ok_or_else(
            || RenderError::UnknownQuantity {
                name: name.to_string(),
                available: TransportMap::ALL.map(TransportMap::id).join(", "),
            },
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::{LengthUnit, TimeUnit};

    #[test]
    fn names_units_and_validity() {
        assert_eq!("exit_time".parse::<TransportMap>().unwrap(), TransportMap::ExitTime);
        assert!("nope".parse::<TransportMap>().is_err());
        let u = Units { length: LengthUnit::Mm, time: TimeUnit::Ms };
        assert_eq!(TransportMap::Ftle.unit(u), "1/ms");
        assert_eq!(TransportMap::ExitTime.unit(u), "ms");
        let flags = [0, 1, 2, 3, 4];
        assert_eq!(TransportMap::Ftle.valid(&flags), [true, true, true, false, false]);
        assert_eq!(TransportMap::ExitTime.valid(&flags), [true, true, true, false, true]);
    }

    #[test]
    fn ranges_ignore_nodes_without_value() {
        let values: Vec<f32> = (0..200).map(|i| i as f32 * 0.01).chain([1e6, -1e6]).collect();
        let mut flags = vec![0u8; 200];
        flags.extend([4, 3]);
        let (lo, hi) = TransportMap::Ftle.default_range(&values, &flags, 1.0);
        assert_eq!(lo, 0.0);
        // numpy.percentile(np.arange(200) * 0.01, 99) = 1.9701 (linear method, by hand).
        assert!((hi - 1.9701).abs() < 1e-5, "{hi}");
        assert_eq!(TransportMap::ExitTime.default_range(&values, &flags, -2.5), (0.0, 2.5));
        // All equal: still a usable range.
        let (lo, hi) = TransportMap::Ftle.default_range(&[0.0; 4], &[0; 4], 1.0);
        assert!(hi > lo);
    }

    #[test]
    fn pictures_grey_out_nodes_without_value() {
        let map = Colormap::get(ColormapKind::Tide);
        let grey = [9, 9, 9, 255];
        let range = ColorRange::new(0.0, 1.0).unwrap();
        let px = TransportMap::Ftle
            .image(&[0.0, 1.0, 0.5, 0.5], &[0, 0, 4, 3], 2, 2, range, map, grey)
            .unwrap();
        // Top image row is j = 1: flags 4 and 3, both without an FTLE value.
        assert_eq!(&px[..8], &[9, 9, 9, 255, 9, 9, 9, 255]);
        assert_eq!(&px[8..12], &map.rgba()[0]);
        assert_eq!(&px[12..16], &map.rgba()[255]);
        assert!(TransportMap::Ftle.image(&[0.0], &[0], 2, 2, range, map, grey).is_err());
    }
}
