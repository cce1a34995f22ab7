//! Maps of a sensitivity run (MS, MS_g, the strain bound, ξ, σ_MS, ζ, Δσ) as pictures: which
//! nodes hold a value, the default colour range, the colour map and the unit. Like the FTLE
//! maps they live on the tracer grid with a status byte per node
//! ([`crate::lagrangian::FtleFlag`]).
//!
//! Colour ranges are robust (the 99th percentile, [`ROBUST_PERCENTILE`]): magnitudes from 0,
//! signed maps symmetric about 0 on the diverging map, and ζ symmetric about its **median**
//! (ζ = σ_MS − σ_FTLE shifts by a constant when g_ref changes, so its level carries no
//! meaning of its own; its spread does).

use super::colormap::{Colormap, ColormapKind};
use super::paint::{paint_rgba, ColorRange};
use super::range::{percentile, ROBUST_PERCENTILE};
use super::RenderError;
use crate::field::Units;
use std::str::FromStr;

/// A map of a sensitivity run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SensitivityMap {
    /// MS, uniform-bound form (time).
    Ms,
    /// MS_g, pointwise form (length).
    MsG,
    /// Eulerian rate-of-strain bound on MS (time).
    StrainBound,
    /// |ξ(t₀ + T)| (length per unit ε).
    Xi,
    /// ξ_x (length per unit ε).
    XiX,
    /// ξ_y (length per unit ε).
    XiY,
    /// σ_FTLE of the model flow f (1/time).
    Ftle,
    /// σ_MS (1/time).
    SigmaMs,
    /// ζ = σ_MS − σ_FTLE (1/time).
    Zeta,
    /// Δσ = σ_FTLE[f + εg] − σ_FTLE[f] (1/time).
    DeltaFtle,
}

/// What a map measures, for its unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Dimension {
    Time,
    Length,
    Rate,
}

/// How the default colour range is chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Scale {
    /// From 0 to the 99th percentile.
    Magnitude,
    /// Symmetric about 0.
    Signed,
    /// Symmetric about the median.
    AboutMedian,
    /// From the 1st to the 99th percentile.
    Span,
}

const FULL: u8 = 0;
const EXITED: u8 = 1;
const SHORT: u8 = 2;

impl SensitivityMap {
    /// Every map, in menu order.
    pub const ALL: [SensitivityMap; 10] = [
        SensitivityMap::Ms,
        SensitivityMap::MsG,
        SensitivityMap::StrainBound,
        SensitivityMap::Xi,
        SensitivityMap::XiX,
        SensitivityMap::XiY,
        SensitivityMap::Ftle,
        SensitivityMap::SigmaMs,
        SensitivityMap::Zeta,
        SensitivityMap::DeltaFtle,
    ];

    /// Identifier: the array name of the `.npz` the command-line tool writes.
    pub fn id(self) -> &'static str {
        match self {
            SensitivityMap::Ms => "ms",
            SensitivityMap::MsG => "ms_g",
            SensitivityMap::StrainBound => "strain_bound",
            SensitivityMap::Xi => "xi",
            SensitivityMap::XiX => "xi_x",
            SensitivityMap::XiY => "xi_y",
            SensitivityMap::Ftle => "ftle",
            SensitivityMap::SigmaMs => "sigma_ms",
            SensitivityMap::Zeta => "zeta",
            SensitivityMap::DeltaFtle => "delta_ftle",
        }
    }

    /// Name with its symbol, for selectors and colour bars.
    pub fn label(self) -> &'static str {
        match self {
            SensitivityMap::Ms => "MS (uniform bound)",
            SensitivityMap::MsG => "MS_g (pointwise)",
            SensitivityMap::StrainBound => "strain bound on MS",
            SensitivityMap::Xi => "deviation |ξ|",
            SensitivityMap::XiX => "deviation ξ_x",
            SensitivityMap::XiY => "deviation ξ_y",
            SensitivityMap::Ftle => "FTLE σ of f",
            SensitivityMap::SigmaMs => "σ_MS",
            SensitivityMap::Zeta => "ζ = σ_MS − σ",
            SensitivityMap::DeltaFtle => "Δσ (brute force)",
        }
    }

    fn dimension(self) -> Dimension {
        match self {
            SensitivityMap::Ms | SensitivityMap::StrainBound => Dimension::Time,
            SensitivityMap::MsG
            | SensitivityMap::Xi
            | SensitivityMap::XiX
            | SensitivityMap::XiY => Dimension::Length,
            _ => Dimension::Rate,
        }
    }

    fn scale(self) -> Scale {
        match self {
            SensitivityMap::Ms
            | SensitivityMap::MsG
            | SensitivityMap::StrainBound
            | SensitivityMap::Xi
            | SensitivityMap::Ftle => Scale::Magnitude,
            SensitivityMap::XiX | SensitivityMap::XiY | SensitivityMap::DeltaFtle => Scale::Signed,
            SensitivityMap::Zeta => Scale::AboutMedian,
            SensitivityMap::SigmaMs => Scale::Span,
        }
    }

    /// Unit label in the series' units.
    pub fn unit(self, units: Units) -> String {
        match self.dimension() {
            Dimension::Time => units.time.symbol().into(),
            Dimension::Length => units.length.symbol().into(),
            Dimension::Rate => units.rate_label(),
        }
    }

    /// Whether the map carries the normalisation of σ_MS (it must be shown with it).
    pub fn needs_normalisation(self) -> bool {
        matches!(self, SensitivityMap::SigmaMs | SensitivityMap::Zeta)
    }

    pub fn colormap(self) -> ColormapKind {
        match self.scale() {
            Scale::Signed | Scale::AboutMedian => ColormapKind::Eddy,
            Scale::Magnitude | Scale::Span => ColormapKind::Tide,
        }
    }

    /// How the colour range was chosen, in words (for the legend).
    pub fn range_note(self) -> &'static str {
        match self.scale() {
            Scale::Magnitude => "colours from 0 to the 99th percentile",
            Scale::Signed => "colours symmetric about 0 (99th percentile of |value|)",
            Scale::AboutMedian => {
                "colours centred on the median of ζ (its level shifts with g_ref; its spread \
                 does not)"
            }
            Scale::Span => "colours from the 1st to the 99th percentile",
        }
    }

    /// Nodes with a value: where the tracer of f got one (full, exited or short).
    pub fn valid(self, flags: &[u8]) -> Vec<bool> {
        flags.iter().map(|&f| matches!(f, FULL | EXITED | SHORT)).collect()
    }

    /// Default colour range from the values of the valid nodes (module doc).
    pub fn default_range(self, values: &[f32], flags: &[u8]) -> (f64, f64) {
        let valid = self.valid(flags);
        let v: Vec<f32> = values
            .iter()
            .zip(&valid)
            .filter(|(x, &ok)| ok && x.is_finite())
            .map(|(x, _)| *x)
            .collect();
        match self.scale() {
            Scale::Magnitude => magnitude_range(&v),
            Scale::Signed => centred_range(&v, 0.0),
            Scale::AboutMedian => {
                let centre = percentile(&mut v.clone(), 50.0).unwrap_or(0.0);
                centred_range(&v, centre)
            }
            Scale::Span => {
                let mut w = v;
                let hi = percentile(&mut w, ROBUST_PERCENTILE).unwrap_or(1.0);
                let lo = percentile(&mut w, 100.0 - ROBUST_PERCENTILE).unwrap_or(0.0);
                if hi > lo {
                    (lo, hi)
                } else {
                    (lo - 0.5, lo + 0.5)
                }
            }
        }
    }

    /// RGBA picture (first row = largest y) of the map, nodes without a value in `missing`.
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

/// `(0, p99)` of non-negative values; a usable range when everything is 0.
pub fn magnitude_range(values: &[f32]) -> (f64, f64) {
    let mut v: Vec<f32> = values.iter().map(|x| x.abs()).collect();
    let mut hi = percentile(&mut v, ROBUST_PERCENTILE).unwrap_or(0.0);
    if hi <= 0.0 {
        hi = v.iter().copied().fold(0.0f32, f32::max) as f64;
    }
    (0.0, if hi > 0.0 { hi } else { 1.0 })
}

/// `centre ± p99(|value − centre|)`; a usable range when every value equals the centre.
pub fn centred_range(values: &[f32], centre: f64) -> (f64, f64) {
    let mut d: Vec<f32> = values.iter().map(|&x| (x as f64 - centre).abs() as f32).collect();
    let mut half = percentile(&mut d, ROBUST_PERCENTILE).unwrap_or(0.0);
    if half <= 0.0 {
        half = d.iter().copied().fold(0.0f32, f32::max) as f64;
    }
    if half <= 0.0 {
        half = 1.0;
    }
    (centre - half, centre + half)
}

impl FromStr for SensitivityMap {
    type Err = RenderError;
    fn from_str(name: &str) -> Result<Self, RenderError> {
        SensitivityMap::ALL
            .into_iter()
            .find(|q| q.id().eq_ignore_ascii_case(name.trim()))
            .ok_or_else(|| RenderError::UnknownQuantity {
                name: name.to_string(),
                available: SensitivityMap::ALL.map(SensitivityMap::id).join(", "),
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::{LengthUnit, TimeUnit};

    #[test]
    fn names_units_and_maps() {
        let u = Units { length: LengthUnit::Mm, time: TimeUnit::Ms };
        assert_eq!("zeta".parse::<SensitivityMap>().unwrap(), SensitivityMap::Zeta);
        assert!("nope".parse::<SensitivityMap>().is_err());
        assert_eq!(SensitivityMap::Ms.unit(u), "ms");
        assert_eq!(SensitivityMap::MsG.unit(u), "mm");
        assert_eq!(SensitivityMap::Xi.unit(u), "mm");
        assert_eq!(SensitivityMap::Zeta.unit(u), "1/ms");
        assert_eq!(SensitivityMap::StrainBound.unit(u), "ms");
        for m in [SensitivityMap::Zeta, SensitivityMap::XiX, SensitivityMap::XiY] {
            assert!(m.colormap().is_diverging(), "{m:?}");
        }
        assert!(SensitivityMap::DeltaFtle.colormap().is_diverging());
        assert!(!SensitivityMap::Ms.colormap().is_diverging());
        assert!(SensitivityMap::Zeta.needs_normalisation());
        assert!(!SensitivityMap::Xi.needs_normalisation());
    }

    #[test]
    fn ranges() {
        // ζ all negative (a small g_ref shifts it down): centred on its median, not on 0.
        let zeta: Vec<f32> = (0..101).map(|i| -10.0 + 0.01 * i as f32).collect();
        let flags = vec![0u8; 101];
        let (lo, hi) = SensitivityMap::Zeta.default_range(&zeta, &flags);
        assert!(((lo + hi) / 2.0 + 9.5).abs() < 1e-5, "{lo} {hi}");
        assert!(hi < 0.0);
        // Signed: symmetric about 0; nodes without value ignored.
        let mut flags2 = flags.clone();
        flags2[0] = 3;
        let mut xi = zeta.clone();
        xi[0] = -1e6;
        let (lo, hi) = SensitivityMap::XiX.default_range(&xi, &flags2);
        assert_eq!(lo, -hi);
        assert!(hi < 10.0);
        // Magnitude from 0; all zero still draws.
        assert_eq!(SensitivityMap::Ms.default_range(&[0.0; 4], &[0; 4]), (0.0, 1.0));
        let (lo, hi) = SensitivityMap::Xi.default_range(&[1.0, 2.0, 3.0], &[0, 0, 0]);
        assert_eq!(lo, 0.0);
        assert!(hi > 2.9 && hi <= 3.0);
    }

    #[test]
    fn pictures_grey_out_nodes_without_value() {
        let map = Colormap::get(ColormapKind::Eddy);
        let grey = [9, 9, 9, 255];
        let range = ColorRange::new(-1.0, 1.0).unwrap();
        let px = SensitivityMap::Zeta
            .image(&[0.0, 1.0, 0.5, 0.5], &[0, 0, 4, 3], 2, 2, range, map, grey)
            .unwrap();
        assert_eq!(&px[..8], &[9, 9, 9, 255, 9, 9, 9, 255]);
        assert_eq!(&px[12..16], &map.rgba()[255]);
        assert!(SensitivityMap::Zeta.image(&[0.0], &[0], 2, 2, range, map, grey).is_err());
    }
}
