//! A decomposition as bytes, to move it from the compute worker that computed it to the
//! page that shows it. Every number travels as its exact little-endian bits, so the page
//! holds the same decomposition as the worker, bit for bit; the small descriptive part
//! (method, solver, sizes) is JSON.
//!
//! Layout: the magic `SLGMODE1`, the JSON length (`u32` little-endian), the JSON of
//! [`Meta`], then the `f64` values in the order [`encode`] writes them (matrices column by
//! column, complex numbers as real then imaginary part). The snapshot layout (which cells,
//! which quadrature weights) is not sent: the receiver rebuilds it from its own copy of the
//! series, the one the worker decomposed.

use super::overview::Decomposition;
use super::{Dmd, DmdVariant, ModesError, Pod, PodSolver, SnapshotLayout, Spod};
use crate::field::Series;
use faer::{c64, Mat};
use serde::{Deserialize, Serialize};

const MAGIC: &[u8; 8] = b"SLGMODE1";

/// Everything but the arrays of numbers, and the sizes of those.
#[derive(Debug, Serialize, Deserialize)]
enum Meta {
    Pod {
        rows: usize,
        rank: usize,
        snapshots: usize,
        singular: usize,
        solver: PodSolver,
    },
    Dmd {
        rows: usize,
        rank: usize,
        singular: usize,
        variant: DmdVariant,
    },
    Spod {
        rows: usize,
        block: usize,
        overlap: usize,
        blocks: usize,
        energies: Vec<usize>,
        modes: Vec<usize>,
    },
}

/// The `f64` values, appended in order.
/// The values as little-endian bytes, written straight into the output (no intermediate
/// copy: the modes of a large series are the bulk of the page's memory at that moment).
struct Writer(Vec<u8>);

impl Writer {
    fn reals(&mut self, v: &[f64]) {
        for x in v {
            self.0.extend_from_slice(&x.to_le_bytes());
        }
    }
    fn complex(&mut self, v: impl IntoIterator<Item = c64>) {
        for z in v {
            self.0.extend_from_slice(&z.re.to_le_bytes());
            self.0.extend_from_slice(&z.im.to_le_bytes());
        }
    }
    fn real_matrix(&mut self, m: &Mat<f64>) {
        for j in 0..m.ncols() {
            self.reals(m.col_as_slice(j));
        }
    }
    fn complex_matrix(&mut self, m: &Mat<c64>) {
        for j in 0..m.ncols() {
            self.complex((0..m.nrows()).map(|i| m[(i, j)]));
        }
    }
}

/// The `f64` values, taken in order.
struct Reader<'a> {
    bytes: &'a [u8],
}

impl Reader<'_> {
    fn reals(&mut self, n: usize) -> Result<Vec<f64>, ModesError> {
        let len = n.checked_mul(8).filter(|&l| l <= self.bytes.len()).ok_or_else(|| {
            ModesError::Transfer(format!("{} values are missing", n - self.bytes.len() / 8))
        })?;
        let (head, rest) = self.bytes.split_at(len);
        self.bytes = rest;
        Ok(head.chunks_exact(8).map(|c| f64::from_le_bytes(c.try_into().unwrap())).collect())
    }
    fn one(&mut self) -> Result<f64, ModesError> {
        Ok(self.reals(1)?[0])
    }
    fn complex(&mut self, n: usize) -> Result<Vec<c64>, ModesError> {
        let v = self.reals(n.saturating_mul(2))?;
        Ok(v.chunks_exact(2).map(|p| c64::new(p[0], p[1])).collect())
    }
    fn real_matrix(&mut self, rows: usize, cols: usize) -> Result<Mat<f64>, ModesError> {
        let v = self.reals(rows.saturating_mul(cols))?;
        Ok(Mat::from_fn(rows, cols, |i, j| v[j * rows + i]))
    }
    fn complex_matrix(&mut self, rows: usize, cols: usize) -> Result<Mat<c64>, ModesError> {
        let v = self.complex(rows.saturating_mul(cols))?;
        Ok(Mat::from_fn(rows, cols, |i, j| v[j * rows + i]))
    }
}

/// The decomposition as bytes (layout in the module doc).
pub fn encode(d: &Decomposition) -> Vec<u8> {
    let (meta, values) = match d {
        Decomposition::Pod(p) => (
            Meta::Pod {
                rows: p.modes.nrows(),
                rank: p.modes.ncols(),
                snapshots: p.coefficients.nrows(),
                singular: p.singular_values.len(),
                solver: p.solver,
            },
            p.mean.len()
                + p.modes.nrows() * p.modes.ncols()
                + p.singular_values.len()
                + p.coefficients.nrows() * p.coefficients.ncols()
                + 1,
        ),
        Decomposition::Dmd(d) => (
            Meta::Dmd {
                rows: d.modes.nrows(),
                rank: d.modes.ncols(),
                singular: d.singular_values.len(),
                variant: d.variant,
            },
            2 + 2 * (d.eigenvalues.len() + d.modes.nrows() * d.modes.ncols() + d.amplitudes.len())
                + d.singular_values.len(),
        ),
        Decomposition::Spod(s) => (
            Meta::Spod {
                rows: s.mean.len(),
                block: s.block,
                overlap: s.overlap,
                blocks: s.blocks,
                energies: s.energies.iter().map(Vec::len).collect(),
                modes: s.modes.iter().map(|m| m.ncols()).collect(),
            },
            s.mean.len()
                + 1
                + s.frequencies.len()
                + s.energies.iter().map(Vec::len).sum::<usize>()
                + 2 * s.modes.iter().map(|m| m.nrows() * m.ncols()).sum::<usize>(),
        ),
    };
    let json = serde_json::to_vec(&meta).expect("the metadata always serializes");
    let mut w = Writer(Vec::with_capacity(12 + json.len() + 8 * values));
    w.0.extend_from_slice(MAGIC);
    w.0.extend_from_slice(&(json.len() as u32).to_le_bytes());
    w.0.extend_from_slice(&json);
    match d {
        Decomposition::Pod(p) => {
            w.reals(&p.mean);
            w.real_matrix(&p.modes);
            w.reals(&p.singular_values);
            w.real_matrix(&p.coefficients);
            w.reals(&[p.total_energy]);
        }
        Decomposition::Dmd(d) => {
            w.reals(&[d.dt, d.t0]);
            w.complex(d.eigenvalues.iter().copied());
            w.complex_matrix(&d.modes);
            w.complex(d.amplitudes.iter().copied());
            w.reals(&d.singular_values);
        }
        Decomposition::Spod(s) => {
            w.reals(&s.mean);
            w.reals(&[s.dt]);
            w.reals(&s.frequencies);
            for e in &s.energies {
                w.reals(e);
            }
            for m in &s.modes {
                w.complex_matrix(m);
            }
        }
    }
    debug_assert_eq!(w.0.len(), 12 + json.len() + 8 * values, "the size reserved");
    w.0
}

/// Reads bytes written by [`encode`] for a decomposition of `series` (the same series the
/// worker decomposed: its snapshot layout is rebuilt from it).
pub fn decode(bytes: &[u8], series: &Series) -> Result<Decomposition, ModesError> {
    let bad = |why: &str| ModesError::Transfer(why.into());
    if bytes.len() < 12 || &bytes[..8] != MAGIC {
        return Err(bad("it does not start with the expected signature"));
    }
    let len = u32::from_le_bytes(bytes[8..12].try_into().unwrap()) as usize;
    let json = bytes.get(12..12 + len).ok_or_else(|| bad("its description is cut short"))?;
    let meta: Meta =
        serde_json::from_slice(json).map_err(|e| ModesError::Transfer(e.to_string()))?;
    let layout = SnapshotLayout::new(series)?;
    let check_rows = |rows: usize| {
        if rows == layout.len() {
            Ok(())
        } else {
            Err(ModesError::Transfer(format!(
                "its modes have {rows} rows but the series has {} values per snapshot",
                layout.len()
            )))
        }
    };
    let mut r = Reader { bytes: &bytes[12 + len..] };
    let d = match meta {
        Meta::Pod { rows, rank, snapshots, singular, solver } => {
            check_rows(rows)?;
            Decomposition::Pod(Pod {
                mean: r.reals(rows)?,
                modes: r.real_matrix(rows, rank)?,
                singular_values: r.reals(singular)?,
                coefficients: r.real_matrix(snapshots, rank)?,
                total_energy: r.one()?,
                solver,
                layout,
            })
        }
        Meta::Dmd { rows, rank, singular, variant } => {
            check_rows(rows)?;
            let (dt, t0) = (r.one()?, r.one()?);
            Decomposition::Dmd(Dmd {
                dt,
                t0,
                eigenvalues: r.complex(rank)?,
                modes: r.complex_matrix(rows, rank)?,
                amplitudes: r.complex(rank)?,
                singular_values: r.reals(singular)?,
                variant,
                layout,
            })
        }
        Meta::Spod { rows, block, overlap, blocks, energies, modes } => {
            check_rows(rows)?;
            let mean = r.reals(rows)?;
            let dt = r.one()?;
            let frequencies = r.reals(energies.len())?;
            let energies = energies.iter().map(|&n| r.reals(n)).collect::<Result<_, _>>()?;
            let modes =
                modes.iter().map(|&c| r.complex_matrix(rows, c)).collect::<Result<_, _>>()?;
            Decomposition::Spod(Spod {
                layout,
                mean,
                dt,
                block,
                overlap,
                blocks,
                frequencies,
                energies,
                modes,
            })
        }
    };
    if !r.bytes.is_empty() {
        return Err(bad("it holds more values than its description says"));
    }
    Ok(d)
}

#[cfg(test)]
mod tests {
    use super::super::overview::{decompose, Component, Method, ModesRequest};
    use super::*;
    use crate::field::{SeriesParts, Units};

    fn waves() -> Series {
        let (nx, ny, nt) = (10, 6, 48);
        let mut u = Vec::new();
        let mut v = Vec::new();
        for k in 0..nt {
            for j in 0..ny {
                for i in 0..nx {
                    let a = 2.0 * std::f64::consts::PI * (0.1 * k as f64 - 0.1 * i as f64);
                    let b = 2.0 * std::f64::consts::PI * (0.23 * k as f64 - 0.2 * j as f64);
                    u.push((1.0 + a.sin() + 0.3 * b.cos()) as f32);
                    v.push((0.5 * a.cos() + 0.2 * b.sin()) as f32);
                }
            }
        }
        let mut mask = vec![false; nx * ny];
        mask[13] = true;
        Series::from_parts(SeriesParts {
            x: (0..nx).map(|i| i as f64 * 0.1).collect(),
            y: (0..ny).map(|j| j as f64 * 0.1).collect(),
            t: (0..nt).map(|k| k as f64 * 0.05).collect(),
            u,
            v,
            mask: Some(mask),
            gaps: None,
            nan_is_gap: false,
            units: Units::default(),
        })
        .unwrap()
    }

    #[test]
    fn every_method_round_trips_bit_for_bit() {
        let s = waves();
        for (method, rank) in [(Method::Pod, None), (Method::Dmd, Some(6)), (Method::Spod, Some(2))]
        {
            let d = decompose(&s, &ModesRequest { method, rank }).unwrap();
            let back = decode(&encode(&d), &s).unwrap();
            assert_eq!(back.count(), d.count());
            // The Debug text shows every number with all its digits.
            assert_eq!(format!("{back:?}"), format!("{d:?}"), "{method:?}");
            let o = |x: &Decomposition| serde_json::to_string(&x.overview(s.units())).unwrap();
            assert_eq!(o(&back), o(&d));
            for k in 0..d.count() {
                assert_eq!(back.shape(k, Component::Magnitude), d.shape(k, Component::Magnitude));
            }
        }
    }

    #[test]
    fn damaged_or_foreign_bytes_are_refused() {
        let s = waves();
        let d = decompose(&s, &ModesRequest { method: Method::Pod, rank: Some(3) }).unwrap();
        let bytes = encode(&d);
        assert!(decode(&bytes[..bytes.len() - 8], &s).is_err());
        assert!(decode(b"something else", &s).is_err());
        let mut longer = bytes.clone();
        longer.extend_from_slice(&[0; 8]);
        assert!(decode(&longer, &s).is_err());
    }
}
