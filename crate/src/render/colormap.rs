//! Colour maps designed for this project in the Oklab space (see [`super::oklab`]).
//!
//! Two maps, each a 256-entry RGBA lookup table computed once on first use:
//!
//! * **tide** (sequential, for magnitudes such as speed or FTLE): deep ink blue through
//!   teal and green to pale straw. Oklab lightness rises strictly along the map, so the
//!   order of values stays readable in greyscale print and for readers with any form of
//!   colour-vision deficiency: lightness does not depend on hue discrimination.
//! * **eddy** (diverging, for signed fields such as vorticity): blue for negative, a
//!   near-white neutral centre for zero, red for positive. Entries at equal distance from
//!   the centre have the same lightness and chroma and differ only in hue, so neither sign
//!   looks stronger than the other; lightness falls monotonically away from the centre on
//!   both sides, so |value| stays readable without colour.
//!
//! How a map is built: a path in Oklab is given by lightness and hue as smooth functions of
//! the position along it, and a chroma profile. The chroma is limited to a fraction of the
//! largest chroma sRGB can show at that lightness and hue, smoothed with a Hann window
//! (so the gamut limit does not put kinks in the path) and limited once more, which keeps
//! every entry inside the sRGB gamut. Finally the path is resampled at equal Oklab arc
//! length, so neighbouring entries differ by the same perceived amount ΔE: no band of the
//! map hides or exaggerates structure.

use super::oklab::{delta_e, from_lch, max_chroma, oklab_to_rgba8};
use std::fmt;
use std::str::FromStr;
use std::sync::OnceLock;

/// Entries per lookup table: one per 8-bit level, finer than colour bars can show.
pub const LUT_SIZE: usize = 256;

/// Dense samples along a design path before resampling at equal arc length.
const DENSE: usize = 2049;

/// Lightness of the neutral grey used for masked cells and missing vectors: mid-way, and
/// achromatic, so it is far in ΔE from every entry of both maps (checked by a test).
pub const MASK_LIGHTNESS: f64 = 0.58;

/// The colour maps the core offers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ColormapKind {
    /// Sequential: magnitudes that start at zero or a minimum.
    Tide,
    /// Diverging: signed quantities centred on zero.
    Eddy,
}

impl ColormapKind {
    pub const ALL: [ColormapKind; 2] = [ColormapKind::Tide, ColormapKind::Eddy];

    /// Name used in the page, the CLI and recipes.
    pub fn name(self) -> &'static str {
        match self {
            ColormapKind::Tide => "tide",
            ColormapKind::Eddy => "eddy",
        }
    }

    /// Whether the map has a neutral centre meant for zero.
    pub fn is_diverging(self) -> bool {
        matches!(self, ColormapKind::Eddy)
    }
}

impl fmt::Display for ColormapKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for ColormapKind {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        ColormapKind::ALL.into_iter().find(|k| k.name().eq_ignore_ascii_case(s.trim())).ok_or_else(
            || {
                let names: Vec<_> = ColormapKind::ALL.iter().map(|k| k.name()).collect();
                format!("unknown colour map '{s}' (available: {})", names.join(", "))
            },
        )
    }
}

/// A colour lookup table: entry 0 is the low end of the range, entry 255 the high end.
#[derive(Debug, Clone)]
pub struct Colormap {
    kind: ColormapKind,
    lab: Vec<[f64; 3]>,
    rgba: Vec<[u8; 4]>,
}

impl Colormap {
    /// The table of `kind`, built on first use and shared afterwards.
    pub fn get(kind: ColormapKind) -> &'static Colormap {
        static TIDE: OnceLock<Colormap> = OnceLock::new();
        static EDDY: OnceLock<Colormap> = OnceLock::new();
        match kind {
            ColormapKind::Tide => TIDE.get_or_init(|| Colormap::from_lab(kind, tide_lab())),
            ColormapKind::Eddy => EDDY.get_or_init(|| Colormap::from_lab(kind, eddy_lab())),
        }
    }

    fn from_lab(kind: ColormapKind, lab: Vec<[f64; 3]>) -> Colormap {
        let rgba = lab.iter().map(|&c| oklab_to_rgba8(c)).collect();
        Colormap { kind, lab, rgba }
    }

    pub fn kind(&self) -> ColormapKind {
        self.kind
    }

    /// The designed colours in Oklab, before rounding to 8 bits.
    pub fn lab(&self) -> &[[f64; 3]] {
        &self.lab
    }

    /// The 8-bit sRGB entries, opaque.
    pub fn rgba(&self) -> &[[u8; 4]] {
        &self.rgba
    }

    /// Entry for a position `frac` in `[0, 1]` along the range; outside values clamp to the
    /// end colours, NaN maps to entry 0.
    #[inline]
    pub fn index(frac: f64) -> usize {
        // `as usize` saturates: negatives and NaN give 0.
        ((frac * LUT_SIZE as f64) as usize).min(LUT_SIZE - 1)
    }
}

/// The neutral grey drawn where there is no data.
pub fn mask_rgba() -> [u8; 4] {
    oklab_to_rgba8([MASK_LIGHTNESS, 0.0, 0.0])
}

/// Weighted moving average with a Hann window of `width` samples (odd), ends padded with
/// the end values so the profile keeps its end points' level.
fn hann_smooth(v: &[f64], width: usize) -> Vec<f64> {
    let half = width / 2;
    let w: Vec<f64> = (0..width)
        .map(|i| {
            let x = (i + 1) as f64 / (width + 1) as f64;
            (std::f64::consts::PI * x).sin().powi(2)
        })
        .collect();
    let total: f64 = w.iter().sum();
    let n = v.len() as isize;
    (0..n)
        .map(|i| {
            let s: f64 = w
                .iter()
                .enumerate()
                .map(|(k, wk)| wk * v[(i + k as isize - half as isize).clamp(0, n - 1) as usize])
                .sum();
            s / total
        })
        .collect()
}

/// Chroma along a path: the wanted profile, kept to `frac` of the gamut limit, smoothed
/// over `window` (a fraction of the path), then kept to 97 % of the limit again.
fn gamut_safe_chroma(want: &[f64], limit: &[f64], frac: f64, window: f64) -> Vec<f64> {
    let first: Vec<f64> = want.iter().zip(limit).map(|(w, l)| w.min(frac * l)).collect();
    let width = ((window * DENSE as f64) as usize) | 1;
    hann_smooth(&first, width).iter().zip(limit).map(|(c, l)| c.min(0.97 * l)).collect()
}

/// Cumulative Oklab arc length along dense path samples.
fn arc_length(path: &[[f64; 3]]) -> Vec<f64> {
    let mut s = Vec::with_capacity(path.len());
    let mut acc = 0.0;
    s.push(0.0);
    for w in path.windows(2) {
        acc += delta_e(w[0], w[1]);
        s.push(acc);
    }
    s
}

/// Point of the dense path at arc length `a` (linear between samples).
fn at_arc(path: &[[f64; 3]], s: &[f64], a: f64) -> [f64; 3] {
    let k = s.partition_point(|&x| x < a).clamp(1, s.len() - 1);
    let span = s[k] - s[k - 1];
    let f = if span > 0.0 { ((a - s[k - 1]) / span).clamp(0.0, 1.0) } else { 0.0 };
    [0, 1, 2].map(|c| path[k - 1][c] + f * (path[k][c] - path[k - 1][c]))
}

/// The sequential map's design: lightness 0.22 → 0.96 linear in the path parameter, hue
/// 272° → 92° (blue, teal, green, straw), chroma swelling to ~0.16 mid-way and falling at
/// both ends, where sRGB has little room.
fn tide_lab() -> Vec<[f64; 3]> {
    let (l0, l1) = (0.22, 0.96);
    let (h0, h1) = (272f64.to_radians(), 92f64.to_radians());
    let t: Vec<f64> = (0..DENSE).map(|i| i as f64 / (DENSE - 1) as f64).collect();
    let l: Vec<f64> = t.iter().map(|t| l0 + (l1 - l0) * t).collect();
    let h: Vec<f64> = t.iter().map(|t| h0 + (h1 - h0) * t).collect();
    let limit: Vec<f64> = l.iter().zip(&h).map(|(&l, &h)| max_chroma(l, h)).collect();
    let want: Vec<f64> =
        t.iter().map(|t| 0.05 + 0.11 * (std::f64::consts::PI * t).sin().powf(0.7)).collect();
    let c = gamut_safe_chroma(&want, &limit, 0.88, 0.08);
    let path: Vec<[f64; 3]> = (0..DENSE).map(|i| from_lch(l[i], c[i], h[i])).collect();
    let s = arc_length(&path);
    let total = s[DENSE - 1];
    (0..LUT_SIZE).map(|i| at_arc(&path, &s, total * i as f64 / (LUT_SIZE - 1) as f64)).collect()
}

/// The diverging map's design: one half-path from the neutral centre (L = 0.97, no chroma)
/// out to L = 0.40, chroma growing to ~0.17, limited by the gamut of *both* end hues (255°
/// blue, 32° red) so the two halves can share lightness and chroma exactly. Entry `i` sits at
/// signed position `2(i + ½)/256 − 1`; its half-path point is found at `|position|` times the
/// half-path's arc length, its hue from the sign.
fn eddy_lab() -> Vec<[f64; 3]> {
    let (lc, le) = (0.97, 0.40);
    let (h_neg, h_pos) = (255f64.to_radians(), 32f64.to_radians());
    let u: Vec<f64> = (0..DENSE).map(|i| i as f64 / (DENSE - 1) as f64).collect();
    let l: Vec<f64> = u.iter().map(|u| lc - (lc - le) * u).collect();
    let limit: Vec<f64> =
        l.iter().map(|&l| max_chroma(l, h_neg).min(max_chroma(l, h_pos))).collect();
    let want: Vec<f64> = u.iter().map(|u| 0.17 * u.powf(0.8)).collect();
    let mut c = gamut_safe_chroma(&want, &limit, 0.9, 0.06);
    c[0] = 0.0; // the centre is neutral
                // Lightness–chroma plane: the hue is constant on each half, so ΔE there is in (L, C).
    let half: Vec<[f64; 3]> = (0..DENSE).map(|i| [l[i], c[i], 0.0]).collect();
    let s = arc_length(&half);
    let total = s[DENSE - 1];
    (0..LUT_SIZE)
        .map(|i| {
            let pos = 2.0 * (i as f64 + 0.5) / LUT_SIZE as f64 - 1.0;
            let [l, c, _] = at_arc(&half, &s, pos.abs() * total);
            from_lch(l, c, if pos < 0.0 { h_neg } else { h_pos })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::super::oklab::{in_srgb_gamut, rgba8_to_oklab};
    use super::*;

    fn steps(lab: &[[f64; 3]]) -> Vec<f64> {
        lab.windows(2).map(|w| delta_e(w[0], w[1])).collect()
    }

    fn mean(v: &[f64]) -> f64 {
        v.iter().sum::<f64>() / v.len() as f64
    }

    /// [D] Every designed colour is displayable: each linear sRGB channel within 0–1.
    #[test]
    fn all_entries_in_srgb_gamut() {
        for kind in ColormapKind::ALL {
            for (i, &c) in Colormap::get(kind).lab().iter().enumerate() {
                assert!(in_srgb_gamut(c, 1e-9), "{kind} entry {i} {c:?} out of gamut");
            }
        }
    }

    /// [D] Sequential: lightness rises strictly, in the design and in the 8-bit pixels.
    #[test]
    fn tide_lightness_strictly_increases() {
        let map = Colormap::get(ColormapKind::Tide);
        assert!(map.lab().windows(2).all(|w| w[1][0] > w[0][0]));
        let shown: Vec<f64> = map.rgba().iter().map(|&p| rgba8_to_oklab(p)[0]).collect();
        for (i, w) in shown.windows(2).enumerate() {
            assert!(w[1] > w[0], "8-bit lightness falls at entry {i}: {w:?}");
        }
        assert!(map.lab()[0][0] < 0.25 && map.lab()[LUT_SIZE - 1][0] > 0.95);
    }

    /// Uniform perceptual steps [D, by the construction's definition of ΔE]: design steps
    /// within 5 % of their mean (entries sit at equal arc length; where the path bends, at
    /// the light end, the straight step between two entries is a few per cent shorter than
    /// the arc). Rounding to 8 bits moves a colour by up to ~1e-3 in Oklab, a third of a
    /// step, so single 8-bit steps scatter more: each within a factor 3 of the design mean,
    /// their RMS deviation from it below 30 %.
    #[test]
    fn steps_are_perceptually_uniform() {
        for kind in ColormapKind::ALL {
            let map = Colormap::get(kind);
            let mut d = steps(map.lab());
            let shown: Vec<[f64; 3]> = map.rgba().iter().map(|&p| rgba8_to_oklab(p)).collect();
            let mut q = steps(&shown);
            if kind.is_diverging() {
                // Across the centre the straight Oklab distance cuts the corner between the
                // two hues; the path itself has a full step there. Check that pair apart.
                let centre = LUT_SIZE / 2 - 1;
                let m = mean(&d);
                assert!(d[centre] > 0.6 * m && d[centre] <= 1.05 * m, "{}", d[centre]);
                d.remove(centre);
                q.remove(centre);
            }
            let m = mean(&d);
            for (i, s) in d.iter().enumerate() {
                assert!((s / m - 1.0).abs() < 0.05, "{kind} design step {i}: {s} vs {m}");
            }
            for (i, s) in q.iter().enumerate() {
                assert!(s / m > 1.0 / 3.0 && s / m < 3.0, "{kind} 8-bit step {i}: {s} vs {m}");
            }
            let rms =
                (q.iter().map(|s| (s / m - 1.0).powi(2)).sum::<f64>() / q.len() as f64).sqrt();
            assert!(rms < 0.3, "{kind}: 8-bit steps deviate by {rms} (RMS) from the mean");
        }
    }

    /// [D] Diverging: mirror entries share lightness and chroma exactly (design) and to
    /// 8-bit rounding in the pixels; lightness falls away from the centre on both sides.
    #[test]
    fn eddy_is_symmetric_about_its_centre() {
        let map = Colormap::get(ColormapKind::Eddy);
        let lab = map.lab();
        let chroma = |c: [f64; 3]| c[1].hypot(c[2]);
        for i in 0..LUT_SIZE / 2 {
            let (a, b) = (lab[i], lab[LUT_SIZE - 1 - i]);
            assert!((a[0] - b[0]).abs() < 1e-12, "lightness differs at {i}");
            assert!((chroma(a) - chroma(b)).abs() < 1e-12, "chroma differs at {i}");
            let (pa, pb) = (rgba8_to_oklab(map.rgba()[i]), rgba8_to_oklab(map.rgba()[255 - i]));
            assert!((pa[0] - pb[0]).abs() < 4e-3, "8-bit lightness differs at {i}");
            if i > 0 {
                assert!(lab[i][0] > lab[i - 1][0], "lightness not rising to centre at {i}");
            }
        }
        // Negative side blue (b < 0), positive side red (a > 0).
        assert!(lab[0][2] < 0.0 && lab[LUT_SIZE - 1][1] > 0.0);
        assert!(chroma(lab[LUT_SIZE / 2]) < 0.01);
    }

    /// The mask grey must not be mistaken for data: at least 0.05 from every entry of both
    /// maps, 2.5× the just-noticeable Oklab difference of about 0.02 (from memory).
    #[test]
    fn mask_grey_stands_apart() {
        let grey = rgba8_to_oklab(mask_rgba());
        assert!(grey[1].abs() < 1e-3 && grey[2].abs() < 1e-3);
        for kind in ColormapKind::ALL {
            let nearest = Colormap::get(kind)
                .lab()
                .iter()
                .map(|&c| delta_e(c, grey))
                .fold(f64::INFINITY, f64::min);
            assert!(nearest > 0.05, "{kind}: mask grey only {nearest} from the map");
        }
    }

    #[test]
    fn index_clamps_and_names_parse() {
        assert_eq!(Colormap::index(-0.5), 0);
        assert_eq!(Colormap::index(f64::NAN), 0);
        assert_eq!(Colormap::index(0.5), 128);
        assert_eq!(Colormap::index(1.0), 255);
        assert_eq!(Colormap::index(7.0), 255);
        assert_eq!("Eddy".parse::<ColormapKind>().unwrap(), ColormapKind::Eddy);
        assert!("rainbow".parse::<ColormapKind>().unwrap_err().contains("tide, eddy"));
    }
}
