//! [`Series`]: the velocity snapshots every later step works on, validated once on
//! construction so no kernel has to re-check sizes, spacing, ordering or finiteness.

use super::{Axis, FieldError, Grid, Units};

/// The raw pieces of a series as a reader finds them, before validation.
///
/// Arrays are row-major: `u`, `v` and `gaps` are `(nt, ny, nx)`, `mask` is `(ny, nx)`.
/// Numbers are in `units`; [`Series::from_parts`] converts them to SI.
#[derive(Debug, Clone, Default)]
pub struct SeriesParts {
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    pub t: Vec<f64>,
    pub u: Vec<f32>,
    pub v: Vec<f32>,
    /// `true` = this cell never has valid data (solid body, outside the light sheet).
    pub mask: Option<Vec<bool>>,
    /// `true` = this vector is missing in this snapshot (flagged by the source).
    pub gaps: Option<Vec<bool>>,
    /// Treat NaN / infinite velocities as missing vectors (gaps) instead of an error.
    /// Readers set this: NaN is how most tools write "no vector here".
    pub nan_is_gap: bool,
    pub units: Units,
}

/// A validated velocity series on a uniform grid, in SI units (or unitless throughout).
///
/// Invariants: `nx, ny ≥ 2`, `nt ≥ 1`, times strictly increasing, every velocity finite,
/// masked cells and gaps hold `0.0`, at least one unmasked cell. A cell that is a gap in
/// every snapshot is moved into the mask: there is nothing to fill it from in time.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    grid: Grid,
    times: Vec<f64>,
    u: Vec<f32>,
    v: Vec<f32>,
    mask: Vec<bool>,
    gaps: Option<Vec<bool>>,
    units: Units,
    source_units: Units,
}

fn check_len(
    name: &'static str,
    got: usize,
    expected: usize,
    shape: String,
) -> Result<(), FieldError> {
    if got != expected {
        return Err(FieldError::ShapeMismatch { name, got, expected, shape });
    }
    Ok(())
}

/// Reverses the order of the x (`flip_x`) and/or y (`flip_y`) index in each `(ny, nx)`
/// plane of `a` (which holds `planes` such planes).
fn flip_planes<T: Copy>(a: &mut [T], nx: usize, ny: usize, flip_x: bool, flip_y: bool) {
    if !flip_x && !flip_y {
        return;
    }
    for plane in a.chunks_exact_mut(nx * ny) {
        if flip_y {
            for j in 0..ny / 2 {
                let (top, bottom) = plane.split_at_mut((ny - 1 - j) * nx);
                top[j * nx..(j + 1) * nx].swap_with_slice(&mut bottom[..nx]);
            }
        }
        if flip_x {
            for row in plane.chunks_exact_mut(nx) {
                row.reverse();
            }
        }
    }
}

impl Series {
    /// Validates the parts, flips descending axes, converts to SI and builds the series.
    pub fn from_parts(p: SeriesParts) -> Result<Series, FieldError> {
        let (ax, flip_x) = Axis::from_coords("x", &p.x)?;
        let (ay, flip_y) = Axis::from_coords("y", &p.y)?;
        let (nx, ny, nt) = (ax.n, ay.n, p.t.len());
        if nt == 0 {
            return Err(FieldError::NoSnapshots);
        }
        for (k, &t) in p.t.iter().enumerate() {
            if !t.is_finite() {
                return Err(FieldError::NonFiniteTime { index: k, value: t });
            }
            if k > 0 && t <= p.t[k - 1] {
                return Err(FieldError::TimesNotIncreasing {
                    index: k,
                    value: t,
                    previous: p.t[k - 1],
                });
            }
        }
        let shape3 = format!("(nt, ny, nx) = ({nt}, {ny}, {nx})");
        let shape2 = format!("(ny, nx) = ({ny}, {nx})");
        let n3 = nt * ny * nx;
        check_len("u", p.u.len(), n3, shape3.clone())?;
        check_len("v", p.v.len(), n3, shape3.clone())?;
        let mut mask = p.mask.unwrap_or_else(|| vec![false; nx * ny]);
        check_len("mask", mask.len(), nx * ny, shape2)?;
        let mut gaps = match p.gaps {
            Some(g) => {
                check_len("gaps", g.len(), n3, shape3)?;
                g
            }
            None => vec![false; n3],
        };
        let (mut u, mut v) = (p.u, p.v);
        flip_planes(&mut u, nx, ny, flip_x, flip_y);
        flip_planes(&mut v, nx, ny, flip_x, flip_y);
        flip_planes(&mut mask, nx, ny, flip_x, flip_y);
        flip_planes(&mut gaps, nx, ny, flip_x, flip_y);

        let plane = nx * ny;
        for idx in 0..n3 {
            let cell = idx % plane;
            let masked = mask[cell];
            for (name, comp) in [("u", &mut u), ("v", &mut v)] {
                let val = comp[idx];
                if !val.is_finite() && !masked && !gaps[idx] {
                    if p.nan_is_gap {
                        gaps[idx] = true;
                    } else {
                        return Err(FieldError::NonFiniteValue {
                            component: name,
                            value: val,
                            snapshot: idx / plane,
                            i: cell % nx,
                            j: cell / nx,
                        });
                    }
                }
            }
        }
        // A cell missing in every snapshot has no data to fill from: it belongs to the mask.
        for cell in 0..plane {
            if !mask[cell] && (0..nt).all(|k| gaps[k * plane + cell]) {
                mask[cell] = true;
            }
        }
        if mask.iter().all(|&m| m) {
            return Err(FieldError::AllMasked);
        }
        let lf = p.units.length.to_si();
        let tf = p.units.time.to_si();
        let vf = (lf / tf) as f32;
        for idx in 0..n3 {
            let cell = idx % plane;
            if mask[cell] {
                gaps[idx] = false;
            }
            if mask[cell] || gaps[idx] {
                u[idx] = 0.0;
                v[idx] = 0.0;
            } else if vf != 1.0 {
                u[idx] *= vf;
                v[idx] *= vf;
            }
        }
        let grid = Grid { x: ax, y: ay }.scaled(lf);
        let times = p.t.iter().map(|t| t * tf).collect();
        let gaps = if gaps.iter().any(|&g| g) { Some(gaps) } else { None };
        Ok(Series {
            grid,
            times,
            u,
            v,
            mask,
            gaps,
            units: p.units.computational(),
            source_units: p.units,
        })
    }

    /// The same series with new velocities (e.g. after cleaning), keeping grid, times,
    /// mask and units. `gaps` replaces the gap flags (`None` = none left).
    ///
    /// # Panics
    /// If the arrays do not have this series' size: that is a programming error, not bad data.
    #[track_caller]
    pub fn with_velocity(&self, u: Vec<f32>, v: Vec<f32>, gaps: Option<Vec<bool>>) -> Series {
        let n = self.u.len();
        assert!(
            u.len() == n && v.len() == n,
            "with_velocity: expected {n} values, got {} and {}",
            u.len(),
            v.len()
        );
        if let Some(g) = &gaps {
            assert_eq!(g.len(), n, "with_velocity: gaps length");
        }
        Series { u, v, gaps, ..self.clone() }
    }

    pub fn grid(&self) -> &Grid {
        &self.grid
    }
    pub fn nx(&self) -> usize {
        self.grid.x.n
    }
    pub fn ny(&self) -> usize {
        self.grid.y.n
    }
    pub fn nt(&self) -> usize {
        self.times.len()
    }
    /// Snapshot times (s, or unitless).
    pub fn times(&self) -> &[f64] {
        &self.times
    }
    /// All u values, `(nt, ny, nx)`.
    pub fn u(&self) -> &[f32] {
        &self.u
    }
    /// All v values, `(nt, ny, nx)`.
    pub fn v(&self) -> &[f32] {
        &self.v
    }
    /// u of snapshot `k`, `(ny, nx)`.
    pub fn u_at(&self, k: usize) -> &[f32] {
        let p = self.grid.len();
        &self.u[k * p..(k + 1) * p]
    }
    /// v of snapshot `k`, `(ny, nx)`.
    pub fn v_at(&self, k: usize) -> &[f32] {
        let p = self.grid.len();
        &self.v[k * p..(k + 1) * p]
    }
    /// `(ny, nx)`, `true` = no valid data at this cell.
    pub fn mask(&self) -> &[bool] {
        &self.mask
    }
    /// `(nt, ny, nx)` missing-vector flags, if any vector is missing.
    pub fn gaps(&self) -> Option<&[bool]> {
        self.gaps.as_deref()
    }
    /// Gap flags of snapshot `k`, if any vector of the series is missing.
    pub fn gaps_at(&self, k: usize) -> Option<&[bool]> {
        let p = self.grid.len();
        self.gaps.as_deref().map(|g| &g[k * p..(k + 1) * p])
    }
    /// Number of missing vectors over all snapshots (masked cells not counted).
    pub fn gap_count(&self) -> usize {
        self.gaps.as_ref().map_or(0, |g| g.iter().filter(|&&x| x).count())
    }
    /// Number of masked cells in one snapshot.
    pub fn masked_count(&self) -> usize {
        self.mask.iter().filter(|&&m| m).count()
    }
    /// Units the series is in (SI, or unitless).
    pub fn units(&self) -> Units {
        self.units
    }
    /// Units the source file used.
    pub fn source_units(&self) -> Units {
        self.source_units
    }
    /// Bytes held by the velocity arrays and flags (for memory estimates).
    pub fn byte_size(&self) -> usize {
        self.u.len() * 8 + self.mask.len() + self.gaps.as_ref().map_or(0, |g| g.len())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::{LengthUnit, TimeUnit};

    fn parts(nx: usize, ny: usize, nt: usize) -> SeriesParts {
        let n = nx * ny * nt;
        SeriesParts {
            x: (0..nx).map(|i| i as f64).collect(),
            y: (0..ny).map(|j| j as f64 * 2.0).collect(),
            t: (0..nt).map(|k| k as f64 * 0.1).collect(),
            u: (0..n).map(|i| i as f32).collect(),
            v: vec![1.0; n],
            ..Default::default()
        }
    }

    #[test]
    fn builds_and_indexes() {
        let s = Series::from_parts(parts(4, 3, 2)).unwrap();
        assert_eq!((s.nx(), s.ny(), s.nt()), (4, 3, 2));
        assert_eq!(s.u_at(1)[0], 12.0);
        assert_eq!(s.grid().y.step, 2.0);
        assert_eq!(s.gaps(), None);
    }

    #[test]
    fn descending_y_is_flipped_with_data() {
        let mut p = parts(2, 3, 1);
        p.y = vec![4.0, 2.0, 0.0];
        p.u = vec![0.0, 1.0, 10.0, 11.0, 20.0, 21.0];
        let s = Series::from_parts(p).unwrap();
        assert_eq!(s.grid().y.start, 0.0);
        assert_eq!(s.u(), &[20.0, 21.0, 10.0, 11.0, 0.0, 1.0]);
    }

    #[test]
    fn descending_x_is_flipped_with_data() {
        let mut p = parts(3, 2, 1);
        p.x = vec![2.0, 1.0, 0.0];
        p.u = vec![0.0, 1.0, 2.0, 10.0, 11.0, 12.0];
        let s = Series::from_parts(p).unwrap();
        assert_eq!(s.u(), &[2.0, 1.0, 0.0, 12.0, 11.0, 10.0]);
    }

    #[test]
    fn units_convert_to_si() {
        let mut p = parts(2, 2, 2);
        p.units = Units { length: LengthUnit::Mm, time: TimeUnit::Ms };
        let s = Series::from_parts(p).unwrap();
        assert!((s.grid().x.step - 1e-3).abs() < 1e-15);
        assert!((s.times()[1] - 1e-4).abs() < 1e-15);
        assert_eq!(s.v()[0], 1.0); // 1 mm/ms = 1 m/s
        assert_eq!(s.source_units().length, LengthUnit::Mm);
    }

    #[test]
    fn nan_becomes_gap_or_error() {
        let mut p = parts(3, 3, 2);
        p.u[4] = f32::NAN;
        let e = Series::from_parts(p.clone()).unwrap_err();
        assert!(matches!(e, FieldError::NonFiniteValue { snapshot: 0, i: 1, j: 1, .. }), "{e}");
        p.nan_is_gap = true;
        let s = Series::from_parts(p.clone()).unwrap();
        assert_eq!(s.gap_count(), 1);
        assert_eq!(s.u()[4], 0.0);
        // Missing in every snapshot: moved to the mask.
        p.v[4 + 9] = f32::NAN;
        let s = Series::from_parts(p).unwrap();
        assert!(s.mask()[4]);
        assert_eq!(s.gap_count(), 0);
    }

    #[test]
    fn bad_shapes_and_times_are_named() {
        let mut p = parts(3, 3, 2);
        p.v.pop();
        let e = Series::from_parts(p).unwrap_err().to_string();
        assert!(e.contains("v has 17 values but 18"), "{e}");
        let mut p = parts(3, 3, 3);
        p.t = vec![0.0, 1.0, 1.0];
        assert!(matches!(
            Series::from_parts(p).unwrap_err(),
            FieldError::TimesNotIncreasing { index: 2, .. }
        ));
        let mut p = parts(2, 2, 1);
        p.mask = Some(vec![true; 4]);
        assert_eq!(Series::from_parts(p).unwrap_err(), FieldError::AllMasked);
        let mut p = parts(2, 2, 1);
        p.t.clear();
        p.u.clear();
        p.v.clear();
        assert_eq!(Series::from_parts(p).unwrap_err(), FieldError::NoSnapshots);
    }
}
