//! Checks that the colour maps stay readable without full colour vision.
//!
//! Two properties, tested on the 8-bit colours the page actually paints:
//!
//! * **Lightness order.** The sequential map's Oklab lightness rises strictly from end to
//!   end; the diverging map's lightness is symmetric about its centre and rises strictly
//!   towards it from both ends. Lightness is what greyscale print and every kind of
//!   colour-vision deficiency (CVD) keep, so the order of values survives (common practice;
//!   Crameri, Shephard & Heron 2020, Nature Communications 11:5444, on perceptually uniform,
//!   CVD-friendly scientific colour maps).
//! * **Simulated dichromacy.** Each colour is passed through the protanopia, deuteranopia
//!   and tritanopia simulations of Machado, Oliveira & Fernandes (2009, IEEE TVCG
//!   15(6):1291–1298) at severity 1.0 (3 × 3 matrices on linear sRGB). Consecutive samples
//!   of a 32-step colour bar must then still differ by more than [`MIN_STEP`] in Oklab, and
//!   their lightness must keep the order above.

#[cfg(test)]
mod tests {
    use crate::render::oklab::{delta_e, linear_srgb_to_oklab, oklab_to_linear_srgb, srgb_decode};
    use crate::render::{Colormap, ColormapKind, LUT_SIZE};

    /// Simulation matrices of Machado, Oliveira & Fernandes (2009), severity 1.0, acting on
    /// linear sRGB. Written from memory; they agree digit for digit with several independent
    /// public implementations, but were not checked against the paper's own table here.
    const PROTANOPIA: [[f64; 3]; 3] = [
        [0.152_286, 1.052_583, -0.204_868],
        [0.114_503, 0.786_281, 0.099_216],
        [-0.003_882, -0.048_116, 1.051_998],
    ];
    const DEUTERANOPIA: [[f64; 3]; 3] = [
        [0.367_322, 0.860_646, -0.227_968],
        [0.280_085, 0.672_501, 0.047_413],
        [-0.011_820, 0.042_940, 0.968_881],
    ];
    const TRITANOPIA: [[f64; 3]; 3] = [
        [1.255_528, -0.076_749, -0.178_779],
        [-0.078_411, 0.930_809, 0.147_602],
        [0.004_733, 0.691_367, 0.303_900],
    ];

    /// Colour-bar samples checked: 32 steps (33 samples) from end to end.
    const STEPS: usize = 32;

    /// Smallest Oklab ΔE allowed between consecutive samples after simulation: half of the
    /// just-noticeable difference of about 0.02 (from memory).
    const MIN_STEP: f64 = 0.01;

    fn visions() -> [(&'static str, Option<[[f64; 3]; 3]>); 4] {
        [
            ("normal vision", None),
            ("protanopia", Some(PROTANOPIA)),
            ("deuteranopia", Some(DEUTERANOPIA)),
            ("tritanopia", Some(TRITANOPIA)),
        ]
    }

    /// The Oklab colour an 8-bit pixel shows, seen with `matrix` (None: normal vision).
    /// Simulated colours outside the gamut are clipped, as a display would.
    fn seen(px: [u8; 4], matrix: Option<[[f64; 3]; 3]>) -> [f64; 3] {
        let rgb = [px[0], px[1], px[2]].map(|c| srgb_decode(c as f64 / 255.0));
        let rgb = match matrix {
            None => rgb,
            Some(m) => [0, 1, 2]
                .map(|r| (m[r][0] * rgb[0] + m[r][1] * rgb[1] + m[r][2] * rgb[2]).clamp(0.0, 1.0)),
        };
        linear_srgb_to_oklab(rgb)
    }

    /// Entries of a colour bar of `STEPS` steps: evenly spread, both ends included.
    fn bar_entries() -> Vec<usize> {
        (0..=STEPS).map(|i| (i * (LUT_SIZE - 1) + STEPS / 2) / STEPS).collect()
    }

    /// Every entry, and the colour bar's samples, in Oklab as seen with `matrix`.
    fn seen_map(kind: ColormapKind, matrix: Option<[[f64; 3]; 3]>) -> Vec<[f64; 3]> {
        Colormap::get(kind).rgba().iter().map(|&p| seen(p, matrix)).collect()
    }

    /// Lightness rises strictly along `l`.
    fn rises(l: &[f64]) -> Result<(), String> {
        match l.windows(2).position(|w| w[1] <= w[0]) {
            None => Ok(()),
            Some(i) => Err(format!("lightness does not rise at {i}: {} → {}", l[i], l[i + 1])),
        }
    }

    /// The designed (unrounded) colours of `kind` in Oklab as seen with `matrix`.
    fn seen_design(kind: ColormapKind, matrix: Option<[[f64; 3]; 3]>) -> Vec<[f64; 3]> {
        Colormap::get(kind)
            .lab()
            .iter()
            .map(|&c| {
                let rgb = oklab_to_linear_srgb(c).map(|x| x.clamp(0.0, 1.0));
                let rgb = match matrix {
                    None => rgb,
                    Some(m) => [0, 1, 2].map(|r| {
                        (m[r][0] * rgb[0] + m[r][1] * rgb[1] + m[r][2] * rgb[2]).clamp(0.0, 1.0)
                    }),
                };
                linear_srgb_to_oklab(rgb)
            })
            .collect()
    }

    /// Sequential map: lightness rises strictly over all 256 designed entries for every
    /// vision. The 8-bit entries rise strictly with normal vision (`colormap` tests); after
    /// a simulation, rounding each channel to 8 bits may flatten a single step (one entry
    /// step is ~0.003 in lightness), so there they must not fall by more than 5e-4.
    #[test]
    fn sequential_lightness_rises_for_every_vision() {
        for (name, m) in visions() {
            let l: Vec<f64> = seen_design(ColormapKind::Tide, m).iter().map(|c| c[0]).collect();
            rises(&l).unwrap_or_else(|e| panic!("tide design, {name}: {e}"));
            let l: Vec<f64> = seen_map(ColormapKind::Tide, m).iter().map(|c| c[0]).collect();
            let worst = l.windows(2).map(|w| w[0] - w[1]).fold(f64::NEG_INFINITY, f64::max);
            assert!(worst < 5e-4, "tide 8-bit, {name}: lightness falls by {worst}");
        }
    }

    /// Diverging map: lightness symmetric about the centre (the designed colours exactly,
    /// the 8-bit ones to rounding) and strictly rising from each end to the centre, for
    /// every vision.
    #[test]
    fn diverging_lightness_is_symmetric_and_rises_to_the_centre() {
        let half = LUT_SIZE / 2;
        let lab = Colormap::get(ColormapKind::Eddy).lab();
        for i in 0..half {
            assert!((lab[i][0] - lab[LUT_SIZE - 1 - i][0]).abs() < 1e-12, "design entry {i}");
        }
        for (name, m) in visions() {
            let d: Vec<f64> = seen_design(ColormapKind::Eddy, m).iter().map(|c| c[0]).collect();
            rises(&d[..half]).unwrap_or_else(|e| panic!("eddy design negative half, {name}: {e}"));
            let back: Vec<f64> = d[half..].iter().rev().copied().collect();
            rises(&back).unwrap_or_else(|e| panic!("eddy design positive half, {name}: {e}"));
            let l: Vec<f64> = seen_map(ColormapKind::Eddy, m).iter().map(|c| c[0]).collect();
            let negative = &l[..half];
            let positive: Vec<f64> = l[half..].iter().rev().copied().collect();
            rises(negative).unwrap_or_else(|e| panic!("eddy negative half, {name}: {e}"));
            rises(&positive).unwrap_or_else(|e| panic!("eddy positive half, {name}: {e}"));
            if m.is_none() {
                for i in 0..half {
                    let d = (negative[i] - positive[i]).abs();
                    assert!(d < 4e-3, "eddy: 8-bit lightness of mirror entries {i} differs by {d}");
                }
            }
        }
    }

    /// Consecutive colour-bar samples stay apart (ΔE > MIN_STEP) and keep the lightness
    /// order (sequential: rising; diverging: rising to the centre, falling after it) under
    /// each simulated dichromacy.
    #[test]
    fn colour_bar_steps_survive_simulated_dichromacy() {
        let entries = bar_entries();
        assert_eq!((entries[0], entries[STEPS]), (0, LUT_SIZE - 1));
        for kind in ColormapKind::ALL {
            for (name, m) in visions() {
                let all = seen_map(kind, m);
                let bar: Vec<[f64; 3]> = entries.iter().map(|&i| all[i]).collect();
                let mut smallest = f64::INFINITY;
                for (k, w) in bar.windows(2).enumerate() {
                    let d = delta_e(w[0], w[1]);
                    smallest = smallest.min(d);
                    assert!(
                        d > MIN_STEP,
                        "{kind}, {name}: samples {k} and {} (entries {} and {}) only ΔE {d:.4} apart",
                        k + 1,
                        entries[k],
                        entries[k + 1]
                    );
                    let (a, b) = (w[0][0], w[1][0]);
                    let centre = LUT_SIZE / 2;
                    let ordered = if !kind.is_diverging() || entries[k + 1] < centre {
                        b > a
                    } else if entries[k] >= centre {
                        b < a
                    } else {
                        true // the pair across the centre: same lightness, told apart by hue
                    };
                    assert!(
                        ordered,
                        "{kind}, {name}: lightness order lost at sample {k}: {a} → {b}"
                    );
                }
                eprintln!("{kind}, {name}: smallest step ΔE {smallest:.4}");
            }
        }
    }
}
