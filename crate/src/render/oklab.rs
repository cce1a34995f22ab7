//! Conversions between sRGB and the Oklab perceptual colour space.
//!
//! Oklab (Ottosson 2020, online article "A perceptual color space for image processing") is
//! built so that Euclidean distance approximates perceived colour difference and `L`
//! approximates perceived lightness. The colour maps are designed in it; this module only
//! converts. Linear sRGB → LMS (matrix), cube root, → Lab (matrix); the inverse undoes each
//! step. The sRGB transfer curve is the piecewise one of the sRGB standard (IEC 61966-2-1).

/// Linear sRGB → cone-like LMS response (Ottosson 2020, first matrix).
const RGB_TO_LMS: [[f64; 3]; 3] = [
    [0.412_221_470_8, 0.536_332_536_3, 0.051_445_992_9],
    [0.211_903_498_2, 0.680_699_545_1, 0.107_396_956_6],
    [0.088_302_461_9, 0.281_718_837_6, 0.629_978_700_5],
];

/// Cube-rooted LMS → (L, a, b) (Ottosson 2020, second matrix).
const LMS_TO_LAB: [[f64; 3]; 3] = [
    [0.210_454_255_3, 0.793_617_785_0, -0.004_072_046_8],
    [1.977_998_495_1, -2.428_592_205_0, 0.450_593_709_9],
    [0.025_904_037_1, 0.782_771_766_2, -0.808_675_766_0],
];

/// Inverse of [`LMS_TO_LAB`] (Ottosson 2020).
const LAB_TO_LMS: [[f64; 3]; 3] = [
    [1.0, 0.396_337_777_4, 0.215_803_757_3],
    [1.0, -0.105_561_345_8, -0.063_854_172_8],
    [1.0, -0.089_484_177_5, -1.291_485_548_0],
];

/// Inverse of [`RGB_TO_LMS`] (Ottosson 2020).
const LMS_TO_RGB: [[f64; 3]; 3] = [
    [4.076_741_662_1, -3.307_711_591_3, 0.230_969_929_2],
    [-1.268_438_004_6, 2.609_757_401_1, -0.341_319_396_5],
    [-0.004_196_086_3, -0.703_418_614_7, 1.707_614_701_0],
];

fn mul(m: &[[f64; 3]; 3], v: [f64; 3]) -> [f64; 3] {
    [0, 1, 2].map(|r| m[r][0] * v[0] + m[r][1] * v[1] + m[r][2] * v[2])
}

/// Linear-light sRGB (each channel 0–1 inside the gamut) → Oklab `[L, a, b]`.
pub fn linear_srgb_to_oklab(rgb: [f64; 3]) -> [f64; 3] {
    let lms = mul(&RGB_TO_LMS, rgb).map(f64::cbrt);
    mul(&LMS_TO_LAB, lms)
}

/// Oklab `[L, a, b]` → linear-light sRGB; channels outside 0–1 mean "outside the gamut".
pub fn oklab_to_linear_srgb(lab: [f64; 3]) -> [f64; 3] {
    let lms = mul(&LAB_TO_LMS, lab).map(|c| c * c * c);
    mul(&LMS_TO_RGB, lms)
}

/// sRGB transfer curve: linear light → encoded value (what 8-bit pixels store).
pub fn srgb_encode(c: f64) -> f64 {
    if c <= 0.003_130_8 {
        12.92 * c
    } else {
        1.055 * c.powf(1.0 / 2.4) - 0.055
    }
}

/// Inverse sRGB transfer curve: encoded value → linear light.
pub fn srgb_decode(c: f64) -> f64 {
    if c <= 0.040_45 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// Whether an Oklab colour is displayable in sRGB, allowing `eps` of round-off per channel.
pub fn in_srgb_gamut(lab: [f64; 3], eps: f64) -> bool {
    oklab_to_linear_srgb(lab).iter().all(|&c| (-eps..=1.0 + eps).contains(&c))
}

/// Oklab point of lightness `l`, chroma `c` and hue angle `hue` (radians).
pub fn from_lch(l: f64, c: f64, hue: f64) -> [f64; 3] {
    [l, c * hue.cos(), c * hue.sin()]
}

/// Largest chroma at lightness `l` and hue `hue` (radians) that sRGB can still show, by
/// bisection (the sRGB solid is convex along a ray of constant L and hue from the grey axis).
pub fn max_chroma(l: f64, hue: f64) -> f64 {
    let (mut lo, mut hi) = (0.0, 0.5);
    if !in_srgb_gamut(from_lch(l, 0.0, hue), 0.0) {
        return 0.0;
    }
    // 40 halvings of 0.5 resolve chroma to ~5e-13, far below one 8-bit level.
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        if in_srgb_gamut(from_lch(l, mid, hue), 0.0) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

/// Oklab → 8-bit sRGB, opaque. Channels are clamped first, so call it on in-gamut colours.
pub fn oklab_to_rgba8(lab: [f64; 3]) -> [u8; 4] {
    let rgb = oklab_to_linear_srgb(lab).map(|c| (srgb_encode(c.clamp(0.0, 1.0)) * 255.0).round());
    [rgb[0] as u8, rgb[1] as u8, rgb[2] as u8, 255]
}

/// 8-bit sRGB → Oklab (the colour a pixel actually shows).
pub fn rgba8_to_oklab(px: [u8; 4]) -> [f64; 3] {
    linear_srgb_to_oklab([px[0], px[1], px[2]].map(|c| srgb_decode(c as f64 / 255.0)))
}

/// Euclidean distance in Oklab: the colour difference ΔE the maps are made uniform in.
pub fn delta_e(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Reference values: colour-science 0.4.7, `XYZ_to_Oklab(sRGB_to_XYZ(rgb))`, computed
    /// for this test. That route goes through XYZ with its own D65 matrices, so it differs
    /// from the direct sRGB matrices by ~1e-4 (white comes out at b = −1.1e-4); 3e-4 absorbs it.
    #[test]
    fn matches_independent_implementation() {
        let cases: [([f64; 3], [f64; 3]); 5] = [
            ([1.0, 1.0, 1.0], [1.000002, 0.0, -1.1365e-4]),
            ([1.0, 0.0, 0.0], [0.627926, 0.224888, 0.125805]),
            ([0.0, 1.0, 0.0], [0.866452, -0.233921, 0.179422]),
            ([0.0, 0.0, 1.0], [0.452033, -0.032352, -0.311621]),
            ([0.5, 0.25, 0.75], [0.515223, 0.104966, -0.160464]),
        ];
        for (encoded, want) in cases {
            let got = linear_srgb_to_oklab(encoded.map(srgb_decode));
            for c in 0..3 {
                assert!(
                    (got[c] - want[c]).abs() < 3e-4,
                    "{encoded:?}: component {c} is {}, reference {}",
                    got[c],
                    want[c]
                );
            }
        }
    }

    /// The transfer curve's published break points (IEC 61966-2-1): 0.0031308 ↔ 0.04045 and
    /// 0.5 ↔ 0.214041 (colour-science `eotf_sRGB(0.5)`); the inverse undoes it.
    #[test]
    fn transfer_curve_and_round_trips() {
        assert!((srgb_encode(0.003_130_8) - 0.040_45).abs() < 1e-6);
        assert!((srgb_decode(0.5) - 0.214_041_14).abs() < 1e-7);
        for i in 0..=20 {
            let c = i as f64 / 20.0;
            assert!((srgb_decode(srgb_encode(c)) - c).abs() < 1e-12);
        }
        let lab = [0.6, 0.05, -0.07];
        let back = linear_srgb_to_oklab(oklab_to_linear_srgb(lab));
        assert!(delta_e(lab, back) < 1e-6, "{back:?}");
    }

    /// [D] On the gamut boundary one channel sits at 0 or 1; a bit more chroma leaves it.
    #[test]
    fn max_chroma_lies_on_the_gamut_boundary() {
        for (l, h) in [(0.3, 4.7), (0.6, 3.2), (0.85, 1.9), (0.5, 0.5)] {
            let c = max_chroma(l, h);
            assert!(c > 0.0);
            assert!(in_srgb_gamut(from_lch(l, c, h), 0.0));
            assert!(!in_srgb_gamut(from_lch(l, c + 1e-6, h), 0.0));
        }
        assert_eq!(max_chroma(1.2, 0.0), 0.0);
    }
}
