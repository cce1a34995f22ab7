//! Advice for a transport run: settings derived from the data, and plain warnings about the
//! settings a person chose and about the result they got.
//!
//! The page fills its transport panel from [`transport_defaults`], shows
//! [`settings_warnings`] before a run (and refuses to start on a [`Level::Refuse`]) and
//! [`result_warnings`] next to the map afterwards. [`TransportSettings`] is the one
//! description of a run that the page, its workers and these checks share; it resolves to
//! the engine's options with [`TransportSettings::resolve`], with the same defaults as the
//! command-line tool's `ftle` subcommand.
//!
//! Units: every time and length here is in the units of the series as the core holds it
//! (SI, or unitless throughout), the units the page shows.

use crate::clean::{count_outliers, MedianTest};
use crate::field::{Series, SeriesParts};
use crate::lagrangian::{
    AdvectOptions, BoundaryPolicy, DopriOptions, FtleFlag, FtleOptions, FtleRows, FtleStats,
    GradientRoute, Integrator, LagrangianError, Rect, Ridge, SpaceInterp, TimeInterp, TracerGrid,
};
use crate::render::format::format_sig;
use rustfft::num_complex::Complex;
use rustfft::FftPlanner;
use serde::{Deserialize, Serialize};
use thiserror::Error;

/// Why settings cannot be turned into a run.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum AdviceError {
    #[error("{0}")]
    Settings(String),
    #[error(transparent)]
    Lagrangian(#[from] LagrangianError),
}

/// Direction of integration in time.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// Forward in time: FTLE ridges mark repelling material lines at t₀.
    #[default]
    Forward,
    /// Backward in time: ridges mark attracting material lines at t₀.
    Backward,
}

/// Which integrator a run uses (its parameters are separate settings).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum IntegratorChoice {
    /// Fixed-step RK4 with steps no longer than `step`.
    #[default]
    Rk4,
    /// Dormand–Prince 5(4) with error control (`rtol`, `atol`).
    DormandPrince,
}

/// Which route to ∇F a run uses (names as in the command-line tool's `--route`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RouteChoice {
    #[default]
    Variational,
    Auxiliary,
    TracerGrid,
}

/// Everything that defines one FTLE run, as the page writes it (JSON). Optional values
/// take the command-line tool's defaults.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TransportSettings {
    /// Start time t₀.
    pub t0: f64,
    /// Integration time |T| > 0; the direction says which way.
    pub horizon: f64,
    #[serde(default)]
    pub direction: Direction,
    /// Tracer grid `[nx, ny]`.
    pub grid: [usize; 2],
    /// Seeding rectangle `[x0, x1, y0, y1]` (default: the data window).
    #[serde(default)]
    pub region: Option<[f64; 4]>,
    #[serde(default)]
    pub integrator: IntegratorChoice,
    /// Largest RK4 step (default: the rule of [`default_step`]).
    #[serde(default)]
    pub step: Option<f64>,
    /// Relative tolerance of Dormand–Prince (default 1e-6).
    #[serde(default)]
    pub rtol: Option<f64>,
    /// Absolute tolerance of Dormand–Prince, a length (default 1e-6 of the data spacing).
    #[serde(default)]
    pub atol: Option<f64>,
    #[serde(default)]
    pub boundary: BoundaryPolicy,
    #[serde(default)]
    pub route: RouteChoice,
    /// Satellite offset of the auxiliary route (default a tenth of the tracer spacing).
    #[serde(default)]
    pub offset: Option<f64>,
    #[serde(default)]
    pub space: SpaceInterp,
    #[serde(default)]
    pub time: TimeInterp,
}

/// Settings turned into what the engine takes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResolvedRun {
    pub options: FtleOptions,
    pub grid: TracerGrid,
    pub space: SpaceInterp,
    pub time: TimeInterp,
}

impl TransportSettings {
    /// Parses settings from JSON, with a message that names the problem.
    pub fn from_json(text: &str) -> Result<TransportSettings, AdviceError> {
        serde_json::from_str(text).map_err(|e| {
            AdviceError::Settings(format!("the transport settings are not valid: {e}"))
        })
    }

    /// Signed horizon T (negative backward).
    pub fn signed_horizon(&self) -> f64 {
        match self.direction {
            Direction::Forward => self.horizon,
            Direction::Backward => -self.horizon,
        }
    }

    /// The tracer grid over the region (or the data window).
    pub fn tracer_grid(&self, s: &Series) -> Result<TracerGrid, AdviceError> {
        let g = s.grid();
        let rect = match self.region {
            None => Rect { x0: g.x.start, x1: g.x.end(), y0: g.y.start, y1: g.y.end() },
            Some([x0, x1, y0, y1]) => Rect { x0, x1, y0, y1 },
        };
        Ok(TracerGrid::new(rect, self.grid[0], self.grid[1])?)
    }

    /// Engine options, grid and interpolation for `s`; checks everything the engine would.
    pub fn resolve(&self, s: &Series) -> Result<ResolvedRun, AdviceError> {
        if !(self.horizon.is_finite() && self.horizon > 0.0) {
            return Err(AdviceError::Settings(format!(
                "the horizon must be a positive time (got {}); choose the direction separately",
                self.horizon
            )));
        }
        let grid = self.tracer_grid(s)?;
        let h = data_spacing(s);
        let integrator = match self.integrator {
            IntegratorChoice::Rk4 => {
                Integrator::Rk4 { max_step: self.step.unwrap_or_else(|| default_step(s)) }
            }
            IntegratorChoice::DormandPrince => Integrator::DormandPrince(DopriOptions {
                rtol: self.rtol.unwrap_or(1e-6),
                atol: self.atol.unwrap_or(1e-6 * h),
                ..DopriOptions::default()
            }),
        };
        let route = match self.route {
            RouteChoice::Variational => GradientRoute::Variational,
            RouteChoice::TracerGrid => GradientRoute::TracerGrid,
            RouteChoice::Auxiliary => GradientRoute::Auxiliary {
                offset: self.offset.unwrap_or(0.1 * grid.x.step.min(grid.y.step)),
            },
        };
        let advect = AdvectOptions {
            t0: self.t0,
            horizon: self.signed_horizon(),
            integrator,
            boundary: self.boundary,
        };
        Ok(ResolvedRun {
            options: FtleOptions { advect, route },
            grid,
            space: self.space,
            time: self.time,
        })
    }
}

/// Smallest spacing of the data grid.
fn data_spacing(s: &Series) -> f64 {
    s.grid().x.step.min(s.grid().y.step)
}

/// Largest speed over every stored vector (masked cells hold 0).
fn max_speed(s: &Series) -> f64 {
    s.u().iter().zip(s.v()).map(|(a, b)| (*a as f64).hypot(*b as f64)).fold(0.0, f64::max)
}

/// The RK4 step rule of the command-line tool: a tracer at the highest speed of the data
/// crosses half a grid spacing per step (|u|max·Δt ≲ h/2, a starting rule from memory,
/// METHODS.md §1), and no step is longer than one snapshot interval.
pub fn default_step(s: &Series) -> f64 {
    let h = data_spacing(s);
    let vmax = max_speed(s);
    let mut step = if vmax > 0.0 { 0.5 * h / vmax } else { f64::INFINITY };
    let t = s.times();
    if t.len() > 1 {
        step = step.min((t[t.len() - 1] - t[0]) / (t.len() - 1) as f64);
    }
    if step.is_finite() {
        step
    } else {
        1.0
    }
}

/// `v > 0` to `sig` significant digits, rounded down when `down` (so a rounded step never
/// breaks the rule it came from), to the nearest otherwise. The result prints short.
fn round_sig(v: f64, sig: usize, down: bool) -> f64 {
    if !(v.is_finite() && v > 0.0) {
        return v;
    }
    let e = v.log10().floor() as i32 - (sig as i32 - 1);
    let scaled = v / 10f64.powi(e);
    let m = if down { (scaled * (1.0 + 1e-12)).floor() } else { scaled.round() };
    // Through text, so the value is the short decimal a person would type.
    format!("{m}e{e}").parse().unwrap_or(v)
}

// --- the dominant period ------------------------------------------------------------------

/// Fewest snapshots for a spectrum worth reading.
pub const MIN_SNAPSHOTS_FOR_PERIOD: usize = 16;
/// Points sampled for the spectrum (evenly over the valid cells).
const SPECTRUM_POINTS: usize = 256;
/// A peak counts as a clear period when its power is at least this many times the median
/// power of the spectrum (a judgement: a periodic wake gives 10²–10⁴, broadband turbulence
/// or noise 2–5).
pub const PEAK_PROMINENCE: f64 = 20.0;
/// Lowest frequency bin a period may sit in: at least two whole periods in the record.
const MIN_PEAK_BIN: usize = 2;

/// A period found in the data.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PeriodEstimate {
    /// The period, in time units.
    pub period: f64,
    /// Peak power over the median power of the spectrum.
    pub prominence: f64,
}

/// Whether the times are evenly spaced to within 1 % of their mean interval.
fn evenly_spaced(t: &[f64]) -> Option<f64> {
    let n = t.len();
    if n < 2 {
        return None;
    }
    let dt = (t[n - 1] - t[0]) / (n - 1) as f64;
    t.windows(2).all(|w| ((w[1] - w[0]) - dt).abs() <= 0.01 * dt).then_some(dt)
}

/// The dominant period of the flow, if the record shows a clear one.
///
/// The power spectra (periodogram with a Hann window, mean removed) of u and v at up to
/// [`SPECTRUM_POINTS`] valid cells are summed, so oscillations that are out of phase across
/// the window (a vortex street) add up instead of cancelling as a spatial average of the
/// velocity would. The highest bin from the second up is the candidate; it is accepted
/// when it stands [`PEAK_PROMINENCE`] times above the median of the spectrum, and its
/// frequency is refined by a parabola through the logarithms of the peak and its two
/// neighbours (common practice for windowed spectra). Needs at least
/// [`MIN_SNAPSHOTS_FOR_PERIOD`] evenly spaced snapshots; cells with a missing vector in any
/// snapshot are left out.
pub fn dominant_period(s: &Series) -> Option<PeriodEstimate> {
    let nt = s.nt();
    if nt < MIN_SNAPSHOTS_FOR_PERIOD {
        return None;
    }
    let dt = evenly_spaced(s.times())?;
    let plane = s.nx() * s.ny();
    let gaps = s.gaps();
    let usable: Vec<usize> = (0..plane)
        .filter(|&c| !s.mask()[c])
        .filter(|&c| gaps.is_none_or(|g| (0..nt).all(|k| !g[k * plane + c])))
        .collect();
    if usable.is_empty() {
        return None;
    }
    let stride = usable.len().div_ceil(SPECTRUM_POINTS);
    let window: Vec<f64> = (0..nt)
        .map(|k| 0.5 - 0.5 * (2.0 * std::f64::consts::PI * k as f64 / (nt - 1) as f64).cos())
        .collect();
    let fft = FftPlanner::<f64>::new().plan_fft_forward(nt);
    let half = nt / 2;
    let mut power = vec![0.0f64; half + 1];
    let mut buf = vec![Complex::new(0.0, 0.0); nt];
    for &c in usable.iter().step_by(stride) {
        for comp in [s.u(), s.v()] {
            let mean = (0..nt).map(|k| comp[k * plane + c] as f64).sum::<f64>() / nt as f64;
            for (k, b) in buf.iter_mut().enumerate() {
                *b = Complex::new((comp[k * plane + c] as f64 - mean) * window[k], 0.0);
            }
            fft.process(&mut buf);
            for (p, b) in power.iter_mut().zip(&buf) {
                *p += b.norm_sqr();
            }
        }
    }
    if half < MIN_PEAK_BIN + 1 {
        return None;
    }
    let (k, &peak) = power
        .iter()
        .enumerate()
        .skip(MIN_PEAK_BIN)
        .max_by(|a, b| a.1.total_cmp(b.1))
        .expect("the spectrum has bins past the second");
    let mut rest: Vec<f64> = power[1..].to_vec();
    rest.sort_by(f64::total_cmp);
    let median = rest[rest.len() / 2];
    if peak.is_nan() || peak <= 0.0 {
        return None;
    }
    let prominence = if median > 0.0 { peak / median } else { f64::INFINITY };
    if prominence < PEAK_PROMINENCE {
        return None;
    }
    let mut bin = k as f64;
    if k < half && power[k - 1] > 0.0 && power[k + 1] > 0.0 {
        let (a, b, c) = (power[k - 1].ln(), peak.ln(), power[k + 1].ln());
        let den = a - 2.0 * b + c;
        if den < 0.0 {
            bin += (0.5 * (a - c) / den).clamp(-0.5, 0.5);
        }
    }
    let frequency = bin / (nt as f64 * dt);
    Some(PeriodEstimate { period: 1.0 / frequency, prominence })
}

// --- defaults -----------------------------------------------------------------------------

/// Fraction of the record used as the horizon when the record shows no clear period.
pub const RECORD_FRACTION: f64 = 0.25;
/// Longest side of the default tracer grid: one tracer per data node up to this size.
pub const MAX_DEFAULT_SIDE: usize = 400;

/// Where the default horizon came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum HorizonBasis {
    /// One period of the dominant oscillation.
    DominantPeriod,
    /// [`RECORD_FRACTION`] of the record length.
    RecordFraction,
    /// A steady field: the time to cross half the window at the mean speed.
    SteadyCrossing,
}

/// Settings derived from the data, with the reasons in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TransportDefaults {
    pub settings: TransportSettings,
    pub basis: HorizonBasis,
    /// The dominant period, when one was found.
    pub period: Option<f64>,
    /// One sentence per derived value.
    pub notes: Vec<String>,
}

/// Default settings for `s`: t₀ = the first snapshot; horizon = one dominant period
/// ([`dominant_period`]), else [`RECORD_FRACTION`] of the record; one tracer per data node
/// (at most [`MAX_DEFAULT_SIDE`] along the longer side, same aspect); RK4 with the step of
/// [`default_step`], rounded down to two significant digits; stop at the boundary;
/// variational ∇F; bilinear and linear interpolation.
pub fn transport_defaults(s: &Series) -> TransportDefaults {
    let units = s.units();
    let tu = units.time.symbol();
    let tunit = if tu == "1" { String::new() } else { format!(" {tu}") };
    let t = s.times();
    let (first, last) = (t[0], t[t.len() - 1]);
    let record = last - first;
    let mut notes = Vec::new();
    let period = dominant_period(s);
    let (horizon, basis) = match period {
        Some(p) => {
            notes.push(format!(
                "Horizon: one period of the dominant oscillation, {}{tunit} (the peak of the \
                 velocity spectrum stands {}× above its median).",
                format_sig(p.period, 3),
                format_sig(p.prominence.min(1e9), 2)
            ));
            (round_sig(p.period, 3, false), HorizonBasis::DominantPeriod)
        }
        None if s.nt() > 1 => {
            notes.push(format!(
                "Horizon: the record shows no clear period, so a quarter of its length \
                 ({}{tunit} of {}{tunit}).",
                format_sig(RECORD_FRACTION * record, 3),
                format_sig(record, 3)
            ));
            (round_sig(RECORD_FRACTION * record, 3, true), HorizonBasis::RecordFraction)
        }
        None => {
            let g = s.grid();
            let (w, hgt) = (g.x.end() - g.x.start, g.y.end() - g.y.start);
            let n = s.mask().iter().filter(|&&m| !m).count().max(1) as f64;
            let mean = s
                .u()
                .iter()
                .zip(s.v())
                .zip(s.mask())
                .filter(|(_, &m)| !m)
                .map(|((a, b), _)| (*a as f64).hypot(*b as f64))
                .sum::<f64>()
                / n;
            let span = 0.5 * w.max(hgt);
            let h = if mean > 0.0 { span / mean } else { 1.0 };
            notes.push(format!(
                "Horizon: a steady field, so the time to cross half the window at the mean \
                 speed, {}{tunit}.",
                format_sig(h, 3)
            ));
            (round_sig(h, 3, false), HorizonBasis::SteadyCrossing)
        }
    };
    let (nx, ny) = (s.nx(), s.ny());
    let side = nx.max(ny);
    let grid = if side <= MAX_DEFAULT_SIDE {
        [nx, ny]
    } else {
        let f = MAX_DEFAULT_SIDE as f64 / side as f64;
        [((nx as f64 * f).round() as usize).max(2), ((ny as f64 * f).round() as usize).max(2)]
    };
    notes.push(if grid == [nx, ny] {
        format!("Tracers: one per data node ({nx} × {ny}).")
    } else {
        format!(
            "Tracers: {} × {}, coarser than the {nx} × {ny} data nodes to keep the first run \
             quick.",
            grid[0], grid[1]
        )
    });
    let step = round_sig(default_step(s), 2, true);
    notes.push(format!(
        "RK4 step: {}{tunit}, so the fastest tracer moves at most half a grid spacing per \
         step (and no step is longer than one snapshot interval).",
        format_sig(step, 2)
    ));
    notes.push(format!("Start time: the first snapshot, t = {}{tunit}.", format_sig(first, 4)));
    TransportDefaults {
        settings: TransportSettings {
            t0: first,
            horizon,
            direction: Direction::Forward,
            grid,
            region: None,
            integrator: IntegratorChoice::Rk4,
            step: Some(step),
            rtol: None,
            atol: None,
            boundary: BoundaryPolicy::Stop,
            route: RouteChoice::Variational,
            offset: None,
            space: SpaceInterp::Bilinear,
            time: TimeInterp::Linear,
        },
        basis,
        period: period.map(|p| p.period),
        notes,
    }
}

// --- warnings -----------------------------------------------------------------------------

/// How serious a warning is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Level {
    /// Worth knowing; the result is fine to use.
    Note,
    /// The result may mislead; read the text before trusting it.
    Caution,
    /// The run cannot be made with these settings.
    Refuse,
}

/// One warning in plain words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Warning {
    pub level: Level,
    /// Stable identifier, for tests and styling.
    pub code: &'static str,
    pub text: String,
}

fn warn(level: Level, code: &'static str, text: String) -> Warning {
    Warning { level, code, text }
}

/// Snapshots sampled for the outlier count: enough for a fraction to a few tenths of a per
/// cent, quick enough to run when a dataset opens.
pub const QUALITY_SNAPSHOTS: usize = 12;
/// Outlier fraction from which the data are called noisy (a judgement: PIV evaluations
/// commonly leave well under 1 % spurious vectors after validation, common practice).
pub const NOISY_FRACTION: f64 = 0.01;

/// Measurement quality as far as transport advice needs it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DataQuality {
    /// Vectors that fail the normalized median test (default threshold), in the sample.
    pub outliers: usize,
    /// Vectors judged (valid vectors of the sampled snapshots).
    pub judged: usize,
    pub outlier_fraction: f64,
    /// Snapshots sampled.
    pub snapshots: usize,
}

/// The outlier fraction of `s` by [`count_outliers`] (default normalized median test) over
/// up to [`QUALITY_SNAPSHOTS`] evenly spaced snapshots.
pub fn data_quality(s: &Series) -> DataQuality {
    let nt = s.nt();
    let picks: Vec<usize> = if nt <= QUALITY_SNAPSHOTS {
        (0..nt).collect()
    } else {
        let last = (nt - 1) as f64;
        let m = (QUALITY_SNAPSHOTS - 1) as f64;
        (0..QUALITY_SNAPSHOTS).map(|i| (i as f64 * last / m).round() as usize).collect()
    };
    let sample;
    let series = if picks.len() == nt {
        s
    } else {
        let plane = s.nx() * s.ny();
        let take = |a: &[f32]| -> Vec<f32> {
            picks.iter().flat_map(|&k| a[k * plane..(k + 1) * plane].iter().copied()).collect()
        };
        let gaps = s.gaps().map(|g| {
            picks.iter().flat_map(|&k| g[k * plane..(k + 1) * plane].iter().copied()).collect()
        });
        let parts = SeriesParts {
            x: s.grid().x.coords(),
            y: s.grid().y.coords(),
            t: picks.iter().map(|&k| s.times()[k]).collect(),
            u: take(s.u()),
            v: take(s.v()),
            mask: Some(s.mask().to_vec()),
            gaps,
            nan_is_gap: false,
            units: s.units(),
        };
        match Series::from_parts(parts) {
            Ok(sub) => {
                sample = sub;
                &sample
            }
            Err(_) => s,
        }
    };
    let outliers: usize = count_outliers(series, &MedianTest::default()).iter().sum();
    let plane = series.nx() * series.ny();
    let valid_cells = plane - series.masked_count();
    let judged = (valid_cells * series.nt()).saturating_sub(series.gap_count());
    DataQuality {
        outliers,
        judged,
        outlier_fraction: outliers as f64 / judged.max(1) as f64,
        snapshots: series.nt(),
    }
}

/// Ratio of tracer spacing to data spacing below which the tracer grid counts as finer
/// than the data (a Note), and much finer (a Caution).
const FINER: f64 = 2.0;
const MUCH_FINER: f64 = 8.0;

/// Warnings about `settings` for `s`, before a run: a [`Level::Refuse`] means the run
/// cannot start. `quality` (from [`data_quality`]) adds the noise warning.
pub fn settings_warnings(
    s: &Series,
    settings: &TransportSettings,
    quality: Option<&DataQuality>,
) -> Vec<Warning> {
    let mut out = Vec::new();
    let units = s.units();
    let tu = units.time.symbol();
    let tunit = if tu == "1" { String::new() } else { format!(" {tu}") };
    let lu = units.length.symbol();
    let lunit = if lu == "1" { String::new() } else { format!(" {lu}") };
    let f = |v: f64| format_sig(v, 3);
    let t = s.times();
    let (first, last) = (t[0], t[t.len() - 1]);
    let record = last - first;
    let big = settings.horizon;
    if s.nt() > 1 && big.is_finite() && big > 0.0 {
        let slack = 1e-9 * record.abs().max(1e-300);
        if settings.t0 < first - slack || settings.t0 > last + slack {
            out.push(warn(
                Level::Refuse,
                "start_outside_record",
                format!(
                    "The start time t0 = {}{tunit} is outside the record, which runs from \
                     {}{tunit} to {}{tunit}.",
                    f(settings.t0),
                    f(first),
                    f(last)
                ),
            ));
        } else if big > record + slack {
            out.push(warn(
                Level::Refuse,
                "horizon_exceeds_record",
                format!(
                    "The horizon ({}{tunit}) is longer than the whole record ({}{tunit}, from \
                     {}{tunit} to {}{tunit}): tracers cannot be followed beyond the data. \
                     Choose a horizon of at most {}{tunit}.",
                    f(big),
                    f(record),
                    f(first),
                    f(last),
                    f(record)
                ),
            ));
        } else {
            let (avail, side) = match settings.direction {
                Direction::Forward => (last - settings.t0, "after"),
                Direction::Backward => (settings.t0 - first, "before"),
            };
            if big > avail + slack {
                let fix = match settings.direction {
                    Direction::Forward => format!("start at t0 ≤ {}{tunit}", f(last - big)),
                    Direction::Backward => format!("start at t0 ≥ {}{tunit}", f(first + big)),
                };
                out.push(warn(
                    Level::Refuse,
                    "horizon_exceeds_remaining",
                    format!(
                        "The horizon ({}{tunit}) is longer than the part of the record {side} \
                         the start time ({}{tunit}): {fix}, or shorten the horizon.",
                        f(big),
                        f(avail)
                    ),
                ));
            }
        }
    }
    let grid = match settings.resolve(s) {
        Ok(r) => Some(r.grid),
        Err(e) => {
            out.push(warn(Level::Refuse, "invalid_settings", capitalise(&e.to_string())));
            None
        }
    };
    let g = s.grid();
    if let Some(tg) = grid {
        let ratio = (g.x.step / tg.x.step).max(g.y.step / tg.y.step);
        if ratio >= FINER {
            out.push(warn(
                if ratio >= MUCH_FINER { Level::Caution } else { Level::Note },
                "tracers_finer_than_data",
                format!(
                    "The tracer grid (spacing {}{lunit}) is {}× finer than the data \
                     ({}{lunit}): FTLE detail below the data spacing is interpolation, not \
                     measurement.",
                    f(tg.x.step.min(tg.y.step)),
                    format_sig(ratio, 2),
                    f(data_spacing(s))
                ),
            ));
        }
    }
    if settings.integrator == IntegratorChoice::Rk4 {
        if let Some(step) = settings.step.filter(|v| v.is_finite() && *v > 0.0) {
            let cells = step * max_speed(s) / data_spacing(s);
            if cells > 1.0 {
                out.push(warn(
                    Level::Caution,
                    "step_too_long",
                    format!(
                        "With an RK4 step of {}{tunit} the fastest tracer moves {} grid \
                         spacings per step; about half a spacing or less is advisable \
                         (step ≤ {}{tunit}).",
                        f(step),
                        format_sig(cells, 2),
                        format_sig(default_step(s), 2)
                    ),
                ));
            }
        }
    }
    if let Some(q) = quality {
        if q.outlier_fraction >= NOISY_FRACTION {
            out.push(warn(
                Level::Caution,
                "noisy_data",
                format!(
                    "The data look noisy: {} % of the vectors fail the normalized median test \
                     (sampled over {} snapshots). Spurious vectors bend trajectories and show \
                     up as false ridges; clean the data first (the command-line tool's \
                     `clean`).",
                    format_sig(100.0 * q.outlier_fraction, 2),
                    q.snapshots
                ),
            ));
        }
    }
    out
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(first) => first.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// Share of seeded tracers that stopped at the edge from which the result gets a Caution
/// ("most tracers leave"), and a Note.
pub const MOST_EXITED: f64 = 0.5;
pub const MANY_EXITED: f64 = 0.2;

/// Counts of an assembled status map (`flag` bytes of [`FtleFlag`]).
pub fn flag_counts(flags: &[u8]) -> FtleStats {
    let mut st = FtleStats::default();
    for &b in flags {
        match b {
            0 => st.full += 1,
            1 => st.exited += 1,
            2 => st.short += 1,
            3 => st.masked += 1,
            _ => st.no_value += 1,
        }
    }
    st
}

/// Warnings about a finished run, from its status map: how many tracers left the window.
pub fn result_warnings(flags: &[u8]) -> Vec<Warning> {
    let st = flag_counts(flags);
    let seeded = st.full + st.exited + st.short + st.no_value;
    let mut out = Vec::new();
    if seeded == 0 {
        out.push(warn(
            Level::Caution,
            "no_tracers",
            "No tracer started on valid data: the seeding region lies in the mask or outside \
             the data."
                .into(),
        ));
        return out;
    }
    let left = st.exited + st.short;
    let frac = left as f64 / seeded as f64;
    let pct = |v: f64| format_sig(100.0 * v, 2);
    if frac >= MANY_EXITED {
        out.push(warn(
            if frac >= MOST_EXITED { Level::Caution } else { Level::Note },
            "tracers_left_window",
            format!(
                "{} % of the tracers left the measurement window before the horizon ({} % \
                 within the first half of it). Their FTLE is taken over the time they stayed \
                 (see the exit-time map); a shorter horizon, or letting tracers continue with \
                 the 'extrapolate' boundary policy, keeps more of them.",
                pct(frac),
                pct(st.short as f64 / seeded as f64)
            ),
        ));
    }
    let none = st.no_value as f64 / seeded as f64;
    if none >= 0.05 {
        out.push(warn(
            Level::Note,
            "nodes_without_value",
            format!(
                "{} % of the tracers have no FTLE value (stopped at once, or no usable \
                 neighbours); they are drawn as no data.",
                pct(none)
            ),
        ));
    }
    out
}

// --- whole maps assembled from row ranges ---------------------------------------------------

/// The flag byte as an [`FtleFlag`].
pub fn flag_from_byte(b: u8) -> FtleFlag {
    match b {
        0 => FtleFlag::Full,
        1 => FtleFlag::Exited,
        2 => FtleFlag::Short,
        3 => FtleFlag::Masked,
        _ => FtleFlag::NoValue,
    }
}

/// Ridges of a whole FTLE map assembled from row ranges (`ftle` and `flag`, `(ny, nx)` of
/// the tracer grid of `settings`), with the default thresholds, longest first.
pub fn ridges_of_map(
    s: &Series,
    settings: &TransportSettings,
    ftle: &[f32],
    flags: &[u8],
) -> Result<Vec<Ridge>, AdviceError> {
    use crate::lagrangian::{extract_ridges, RidgeOptions};
    let grid = settings.tracer_grid(s)?;
    if ftle.len() != grid.len() || flags.len() != grid.len() {
        return Err(AdviceError::Settings(format!(
            "the FTLE map holds {} values and {} flags, but the tracer grid has {} × {} nodes",
            ftle.len(),
            flags.len(),
            grid.nx(),
            grid.ny()
        )));
    }
    let map = FtleRows {
        grid,
        j0: 0,
        j1: grid.ny(),
        horizon: settings.signed_horizon(),
        ftle: ftle.to_vec(),
        tau: vec![0.0; grid.len()],
        det_deviation: vec![0.0; grid.len()],
        flag: flags.iter().map(|&b| flag_from_byte(b)).collect(),
        stats: flag_counts(flags),
    };
    let mut ridges = extract_ridges(&map, &RidgeOptions::default());
    ridges.sort_by(|a, b| b.length().total_cmp(&a.length()));
    Ok(ridges)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lagrangian::{ftle_field, GriddedField};

    /// A travelling wave u = U + A sin(2π(t/P − x/λ)), v = A cos(2π(t/P − x/λ)), λ = 0.4,
    /// on a 24 × 12 grid (spacing 0.01), `nt` snapshots `dt` apart, plus deterministic
    /// pseudo-random noise of amplitude 1e-4.
    fn wave(nt: usize, dt: f64, period: f64, amp: f64) -> Series {
        let (nx, ny) = (24usize, 12usize);
        let x: Vec<f64> = (0..nx).map(|i| i as f64 * 0.01).collect();
        let y: Vec<f64> = (0..ny).map(|j| j as f64 * 0.01).collect();
        let t: Vec<f64> = (0..nt).map(|k| k as f64 * dt).collect();
        let mut u = Vec::new();
        let mut v = Vec::new();
        let mut state = 0x2545_f491_4f6c_dd1du64;
        let mut noise = move || {
            state = state.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1);
            ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 2e-4
        };
        for &tk in &t {
            for _ in 0..ny {
                for &xi in &x {
                    let ph = 2.0 * std::f64::consts::PI * (tk / period - xi / 0.4);
                    u.push((0.05 + amp * ph.sin() + noise()) as f32);
                    v.push((amp * ph.cos() + noise()) as f32);
                }
            }
        }
        Series::from_parts(SeriesParts { x, y, t, u, v, ..Default::default() }).unwrap()
    }

    #[test]
    fn finds_the_period_of_a_travelling_wave() {
        // 240 snapshots, 0.025 apart (6 time units), period 0.53: not on a bin centre.
        let s = wave(240, 0.025, 0.53, 0.01);
        let p = dominant_period(&s).expect("a clear period");
        assert!((p.period - 0.53).abs() < 0.01 * 0.53, "period {}", p.period);
        assert!(p.prominence > 100.0, "prominence {}", p.prominence);
        let d = transport_defaults(&s);
        assert_eq!(d.basis, HorizonBasis::DominantPeriod);
        assert!((d.settings.horizon - 0.53).abs() < 0.01, "{}", d.settings.horizon);
        assert_eq!(d.settings.t0, 0.0);
        assert_eq!(d.settings.grid, [24, 12]);
    }

    #[test]
    fn no_period_without_oscillation_falls_back_to_a_record_fraction() {
        // Amplitude 0: only the noise, no clear peak.
        let s = wave(64, 0.1, 0.5, 0.0);
        assert_eq!(dominant_period(&s), None);
        let d = transport_defaults(&s);
        assert_eq!(d.basis, HorizonBasis::RecordFraction);
        // Record 6.3 → a quarter, 1.575, rounded down to three digits.
        assert!((d.settings.horizon - 1.57).abs() < 1e-12, "{}", d.settings.horizon);
        assert!(d.notes[0].contains("no clear period"), "{}", d.notes[0]);
        // Too few snapshots for a spectrum.
        assert_eq!(dominant_period(&wave(8, 0.1, 0.3, 0.01)), None);
    }

    #[test]
    fn default_step_follows_the_half_spacing_rule_rounded_down() {
        let s = wave(32, 0.1, 0.5, 0.01);
        // |u|max ≈ 0.06 (+ noise), spacing 0.01: rule 0.5·0.01/0.06 ≈ 0.083.
        let exact = default_step(&s);
        let d = transport_defaults(&s);
        let step = d.settings.step.unwrap();
        assert!(step <= exact && step > 0.9 * exact, "{step} vs {exact}");
        assert_eq!(format!("{step}"), "0.083");
        // Capped by the snapshot interval when the flow is slow.
        let slow = wave(32, 0.01, 0.5, 0.0);
        assert!((default_step(&slow) - 0.01).abs() < 1e-12);
    }

    #[test]
    fn rounding_to_significant_digits() {
        assert_eq!(round_sig(0.0016379, 2, true), 0.0016);
        assert_eq!(round_sig(0.52987, 3, false), 0.53);
        assert_eq!(round_sig(1234.5, 2, true), 1200.0);
        assert_eq!(round_sig(0.3, 2, true), 0.3);
    }

    fn settings(t0: f64, horizon: f64, grid: [usize; 2]) -> TransportSettings {
        TransportSettings::from_json(&format!(
            r#"{{"t0": {t0}, "horizon": {horizon}, "grid": [{}, {}]}}"#,
            grid[0], grid[1]
        ))
        .unwrap()
    }

    fn codes(w: &[Warning]) -> Vec<&'static str> {
        w.iter().map(|w| w.code).collect()
    }

    #[test]
    fn horizons_beyond_the_record_are_refused_with_the_reason() {
        let s = wave(32, 0.1, 0.5, 0.01); // record 0 … 3.1
        let w = settings_warnings(&s, &settings(0.0, 5.0, [24, 12]), None);
        assert_eq!(codes(&w), ["horizon_exceeds_record"]);
        assert_eq!(w[0].level, Level::Refuse);
        assert!(w[0].text.contains("longer than the whole record"), "{}", w[0].text);
        let w = settings_warnings(&s, &settings(2.0, 2.0, [24, 12]), None);
        assert_eq!(codes(&w), ["horizon_exceeds_remaining"]);
        assert!(w[0].text.contains("t0 ≤ 1.1"), "{}", w[0].text);
        let mut back = settings(2.0, 2.0, [24, 12]);
        back.direction = Direction::Backward;
        assert!(settings_warnings(&s, &back, None).is_empty());
        assert!(settings_warnings(&s, &settings(0.0, 1.0, [24, 12]), None).is_empty());
        let w = settings_warnings(&s, &settings(0.0, 1.0, [1, 12]), None);
        assert_eq!(codes(&w), ["invalid_settings"]);
        assert!(w[0].text.contains("at least 2 nodes"), "{}", w[0].text);
    }

    #[test]
    fn fine_tracer_grids_long_steps_and_noise_are_flagged() {
        let s = wave(32, 0.1, 0.5, 0.01);
        let w = settings_warnings(&s, &settings(0.0, 1.0, [48, 24]), None);
        assert_eq!(codes(&w), ["tracers_finer_than_data"]);
        assert_eq!(w[0].level, Level::Note);
        assert!(w[0].text.contains("interpolation, not measurement"), "{}", w[0].text);
        let w = settings_warnings(&s, &settings(0.0, 1.0, [200, 100]), None);
        assert_eq!(w[0].level, Level::Caution);
        let mut long = settings(0.0, 1.0, [24, 12]);
        long.step = Some(0.5);
        assert_eq!(codes(&settings_warnings(&s, &long, None)), ["step_too_long"]);
        let q = DataQuality { outliers: 30, judged: 1000, outlier_fraction: 0.03, snapshots: 12 };
        let w = settings_warnings(&s, &settings(0.0, 1.0, [24, 12]), Some(&q));
        assert_eq!(codes(&w), ["noisy_data"]);
        assert!(w[0].text.contains("3 %"), "{}", w[0].text);
    }

    #[test]
    fn data_quality_counts_spurious_vectors() {
        let clean = wave(32, 0.1, 0.5, 0.01);
        assert_eq!(data_quality(&clean).outliers, 0);
        // One spurious vector in every snapshot: 12 sampled, 12 found.
        let plane = 24 * 12;
        let mut u = clean.u().to_vec();
        for k in 0..32 {
            u[k * plane + 5 * 24 + 10] += 0.5;
        }
        let noisy = clean.with_velocity(u, clean.v().to_vec(), None);
        let q = data_quality(&noisy);
        assert_eq!((q.outliers, q.snapshots, q.judged), (12, 12, 12 * plane));
    }

    #[test]
    fn exits_are_reported_from_the_status_map() {
        let mut flags = vec![0u8; 100];
        assert!(result_warnings(&flags).is_empty());
        flags[..30].fill(1);
        flags[30..40].fill(2);
        flags[90..].fill(3);
        let w = result_warnings(&flags);
        // 40 of 90 seeded tracers left: a note (≥ 20 %, < 50 %).
        assert_eq!(codes(&w), ["tracers_left_window"]);
        assert_eq!(w[0].level, Level::Note);
        assert!(w[0].text.starts_with("44 %"), "{}", w[0].text);
        flags[40..70].fill(1);
        assert_eq!(result_warnings(&flags)[0].level, Level::Caution);
        assert_eq!(codes(&result_warnings(&[3u8; 10])), ["no_tracers"]);
    }

    #[test]
    fn resolved_settings_run_and_ridges_come_from_the_assembled_map() {
        let s = wave(32, 0.1, 0.5, 0.01);
        let mut set = settings(0.0, 1.0, [24, 12]);
        set.step = Some(0.05);
        let r = set.resolve(&s).unwrap();
        assert_eq!(r.options.advect.horizon, 1.0);
        assert_eq!(r.options.advect.integrator, Integrator::Rk4 { max_step: 0.05 });
        let field = GriddedField::new(&s, r.space, r.time);
        let map = ftle_field(&field, &r.grid, &r.options).unwrap();
        let flags: Vec<u8> = map.flag.iter().map(|&f| f as u8).collect();
        assert!(flags.iter().all(|&b| flag_from_byte(b) as u8 == b));
        let ridges = ridges_of_map(&s, &set, &map.ftle, &flags).unwrap();
        assert!(ridges.windows(2).all(|w| w[0].length() >= w[1].length()));
        assert!(ridges_of_map(&s, &set, &map.ftle[1..], &flags).is_err());
        let json = TransportSettings::from_json(
            r#"{"t0": 0, "horizon": 1, "grid": [4, 4],
            "integrator": "dormand_prince", "boundary": "extrapolate", "route": "tracer_grid",
            "space": "cubic", "time": "hermite", "direction": "backward"}"#,
        )
        .unwrap();
        let r = json.resolve(&s).unwrap();
        assert_eq!(r.options.advect.horizon, -1.0);
        assert_eq!(r.options.route, GradientRoute::TracerGrid);
        assert_eq!(r.options.advect.boundary, BoundaryPolicy::Extrapolate);
        assert!(matches!(r.options.advect.integrator, Integrator::DormandPrince(_)));
        assert_eq!((r.space, r.time), (SpaceInterp::Cubic, TimeInterp::Hermite));
        let bad = TransportSettings::from_json(
            r#"{"t0": 0, "horizon": 1, "grid": [4, 4], "route": "x"}"#,
        );
        assert!(bad.unwrap_err().to_string().contains("not valid"));
    }

    /// The demo wake: demo-fields/README.md reports the shedding frequency measured on the
    /// data, f = 1.8265 Hz (period 0.5475 s); the spectrum here must find that period.
    #[test]
    fn demo_wake_defaults_find_the_shedding_period() {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../demo-fields/fin-wake.npz");
        let bytes = std::fs::read(path).expect("the demo file is in the repository");
        let s = crate::io::read_series(
            &[crate::io::NamedBytes::new("fin-wake.npz", bytes)],
            &Default::default(),
        )
        .unwrap();
        let d = transport_defaults(&s);
        assert_eq!(d.basis, HorizonBasis::DominantPeriod, "{:?}", d.notes);
        let p = d.period.unwrap();
        assert!((p - 0.5475).abs() < 0.02 * 0.5475, "period {p}");
        assert_eq!(d.settings.grid, [100, 40]);
        assert!(settings_warnings(&s, &d.settings, None).is_empty());
        let q = data_quality(&s);
        // `sillage inspect` counts 1.86 % over all 240 snapshots; the sample is close.
        assert!((0.01..0.03).contains(&q.outlier_fraction), "{q:?}");
    }
}
