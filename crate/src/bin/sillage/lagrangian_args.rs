//! Options shared by every Lagrangian subcommand (the same names for ftle and whatever
//! follows it): start time, horizon, direction, tracer grid, region, integration,
//! interpolation and boundary policy. Times and lengths are given in the input's units and
//! converted to SI here, once.

use sillage::advice::default_step;
use sillage::field::Series;
use sillage::lagrangian::{
    AdvectOptions, BoundaryPolicy, DopriOptions, Integrator, Rect, SpaceInterp, TimeInterp,
    TracerGrid,
};

#[derive(clap::Args, Debug)]
pub struct LagrangianArgs {
    /// Start time t0 of the tracers, in the input's time unit.
    #[arg(long, value_name = "T0", allow_negative_numbers = true)]
    pub t0: f64,
    /// Integration time |T| (positive), in the input's time unit.
    #[arg(long, value_name = "T")]
    pub horizon: f64,
    /// Integrate backward in time (attracting structures) instead of forward.
    #[arg(long)]
    pub backward: bool,
    /// Tracer grid as NXxNY, e.g. 512x256 (default: one tracer per data node). Finer than the
    /// data is allowed.
    #[arg(long, value_name = "NXxNY")]
    pub grid: Option<String>,
    /// Seed only this rectangle, X0,X1,Y0,Y1 in the input's length unit (default: the whole
    /// data window).
    #[arg(long, value_name = "X0,X1,Y0,Y1", allow_hyphen_values = true)]
    pub region: Option<String>,
    /// Largest RK4 time step, in the input's time unit (default: the time a tracer at the
    /// highest speed of the data needs to cross half a grid spacing, at most one snapshot
    /// interval).
    #[arg(long, value_name = "DT")]
    pub step: Option<f64>,
    /// Integrate with Dormand–Prince 5(4) and error control instead of fixed-step RK4.
    #[arg(long)]
    pub adaptive: bool,
    /// Relative tolerance of --adaptive.
    #[arg(long, default_value_t = 1e-6, value_name = "RTOL")]
    pub rtol: f64,
    /// Absolute tolerance of --adaptive, in the input's length unit.
    #[arg(long, value_name = "ATOL")]
    pub atol: Option<f64>,
    /// Interpolation in space: bilinear (fast) or cubic (C¹, smoother gradients).
    #[arg(long, value_enum, default_value = "bilinear")]
    pub space: SpaceArg,
    /// Interpolation in time: linear or hermite (cubic, for coarse snapshot intervals).
    #[arg(long, value_enum, default_value = "linear")]
    pub time: TimeArg,
    /// What tracers do at the edge of the data: stop (keep the time integrated, flagged) or
    /// extrapolate (continue with the edge velocity and its gradient).
    #[arg(long, value_enum, default_value = "stop")]
    pub boundary: BoundaryArg,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum SpaceArg {
    Bilinear,
    Cubic,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum TimeArg {
    Linear,
    Hermite,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum BoundaryArg {
    Stop,
    Extrapolate,
}

impl LagrangianArgs {
    pub fn space(&self) -> SpaceInterp {
        match self.space {
            SpaceArg::Bilinear => SpaceInterp::Bilinear,
            SpaceArg::Cubic => SpaceInterp::Cubic,
        }
    }
    pub fn time(&self) -> TimeInterp {
        match self.time {
            TimeArg::Linear => TimeInterp::Linear,
            TimeArg::Hermite => TimeInterp::Hermite,
        }
    }

    /// Integration options in SI for `series`.
    pub fn advect(&self, series: &Series) -> Result<AdvectOptions, String> {
        let u = series.source_units();
        let (lf, tf) = (u.length.to_si(), u.time.to_si());
        if !(self.horizon.is_finite() && self.horizon > 0.0) {
            return Err(format!(
                "--horizon must be a positive time (got {}); use --backward for backward time",
                self.horizon
            ));
        }
        let horizon = if self.backward { -self.horizon } else { self.horizon } * tf;
        let integrator = if self.adaptive {
            Integrator::DormandPrince(DopriOptions {
                rtol: self.rtol,
                atol: self
                    .atol
                    .map_or(1e-6 * series.grid().x.step.min(series.grid().y.step), |a| a * lf),
                ..DopriOptions::default()
            })
        } else {
            let step = match self.step {
                Some(s) => s * tf,
                None => default_step(series),
            };
            Integrator::Rk4 { max_step: step }
        };
        Ok(AdvectOptions {
            t0: self.t0 * tf,
            horizon,
            integrator,
            boundary: match self.boundary {
                BoundaryArg::Stop => BoundaryPolicy::Stop,
                BoundaryArg::Extrapolate => BoundaryPolicy::Extrapolate,
            },
        })
    }

    /// The tracer grid in SI for `series`.
    pub fn tracer_grid(&self, series: &Series) -> Result<TracerGrid, String> {
        let g = series.grid();
        let lf = series.source_units().length.to_si();
        let rect = match &self.region {
            None => Rect { x0: g.x.start, x1: g.x.end(), y0: g.y.start, y1: g.y.end() },
            Some(text) => {
                let v: Vec<f64> = text
                    .split(',')
                    .map(|s| s.trim().parse::<f64>())
                    .collect::<Result<_, _>>()
                    .map_err(|_| format!("--region '{text}' is not four numbers X0,X1,Y0,Y1"))?;
                if v.len() != 4 {
                    return Err(format!("--region '{text}' needs four numbers X0,X1,Y0,Y1"));
                }
                Rect { x0: v[0] * lf, x1: v[1] * lf, y0: v[2] * lf, y1: v[3] * lf }
            }
        };
        let (nx, ny) = match &self.grid {
            None => (g.nx(), g.ny()),
            Some(text) => parse_grid(text)?,
        };
        TracerGrid::new(rect, nx, ny).map_err(|e| e.to_string())
    }
}

/// `512x256` → (512, 256).
fn parse_grid(text: &str) -> Result<(usize, usize), String> {
    let bad = || format!("--grid '{text}' is not of the form NXxNY, e.g. 512x256");
    let (a, b) = text
        .to_lowercase()
        .split_once('x')
        .map(|(a, b)| (a.to_string(), b.to_string()))
        .ok_or_else(bad)?;
    let nx = a.trim().parse::<usize>().map_err(|_| bad())?;
    let ny = b.trim().parse::<usize>().map_err(|_| bad())?;
    Ok((nx, ny))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_text() {
        assert_eq!(parse_grid("512x256").unwrap(), (512, 256));
        assert_eq!(parse_grid("64X32").unwrap(), (64, 32));
        assert!(parse_grid("512").unwrap_err().contains("NXxNY"));
        assert!(parse_grid("ax3").is_err());
    }
}
