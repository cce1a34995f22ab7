//! Sensitivity results as files: one `.npz` with every map and the metadata needed to read
//! it (units, horizon, g_ref, the normalisation of σ_MS), and VTK image data for viewers.

use super::rows::NORMALISATION;
use super::workflow::SensitivityResult;
use crate::field::{Grid, Units};
use crate::io::{write_arrays_npz, write_vti, NpyArray, NpyData};

/// The `.npz` of a whole-grid result: `x`, `y`, the maps `(ny, nx)` (`ms`, `ms_g`,
/// `strain_bound`, `xi`, `xi_x`, `xi_y`, `ftle`, `sigma_ms`, `zeta`, `exit_time`,
/// `det_deviation`, `flag`, and `delta_ftle` when ε was given), scalars `t0`, `horizon`,
/// `g_ref`, `epsilon`, and strings `length_unit`, `time_unit`, `normalisation`.
pub fn sensitivity_npz(r: &SensitivityResult, t0: f64, units: &Units) -> Vec<u8> {
    let m = &r.maps;
    let (nx, ny) = (m.grid.nx(), m.grid.ny());
    let map = |name: &str, v: &[f32]| NpyArray::new(name, vec![ny, nx], NpyData::F32(v.to_vec()));
    let scalar = |name: &str, v: f64| NpyArray::new(name, vec![], NpyData::F64(vec![v]));
    let mut arrays = vec![
        NpyArray::new("x", vec![nx], NpyData::F64(m.grid.x.coords())),
        NpyArray::new("y", vec![ny], NpyData::F64(m.grid.y.coords())),
    ];
    for (name, values) in m.maps() {
        let name = if name == "tau" { "exit_time" } else { name };
        arrays.push(map(name, values));
    }
    arrays.push(NpyArray::new(
        "flag",
        vec![ny, nx],
        NpyData::U8(m.flag.iter().map(|&f| f as u8).collect()),
    ));
    if let Some(d) = &r.delta_ftle {
        arrays.push(map("delta_ftle", d));
    }
    arrays.push(scalar("t0", t0));
    arrays.push(scalar("horizon", m.horizon));
    arrays.push(scalar("g_ref", m.g_ref));
    arrays.push(scalar("epsilon", r.epsilon.unwrap_or(f64::NAN)));
    arrays.push(NpyArray::new("length_unit", vec![], NpyData::Str(units.length.symbol().into())));
    arrays.push(NpyArray::new("time_unit", vec![], NpyData::Str(units.time.symbol().into())));
    arrays.push(NpyArray::new("normalisation", vec![], NpyData::Str(NORMALISATION.into())));
    write_arrays_npz(&arrays)
}

/// The maps as VTK image data (`.vti`), one point array per map, at time `t0`.
pub fn sensitivity_vti(r: &SensitivityResult, t0: f64) -> Vec<u8> {
    let m = &r.maps;
    let grid = Grid { x: m.grid.x, y: m.grid.y };
    let flag: Vec<f32> = m.flag.iter().map(|&f| f as u8 as f32).collect();
    let mut fields: Vec<(&str, &[f32])> = m.maps().to_vec();
    fields.push(("flag", &flag));
    if let Some(d) = &r.delta_ftle {
        fields.push(("delta_ftle", d));
    }
    for f in &mut fields {
        if f.0 == "tau" {
            f.0 = "exit_time";
        }
    }
    write_vti(&grid, &fields, &[], Some(t0), None)
}
