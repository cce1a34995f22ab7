//! What a person looks at first in a decomposition, ready to draw: the energy spectrum of
//! POD with its cumulative curve, DMD eigenvalues in the complex plane (with the unit
//! circle) and amplitudes against frequency, the SPOD spectrum of the leading mode; the
//! shape of one mode on the data grid; its temporal coefficients; and the selection term
//! that names it ("pod(3)", "dmd(2)", "spod(f=1.7..1.9)").
//!
//! Charts come as [`Chart`]s: curves of points with the axis ranges already chosen, so a
//! drawing routine only maps numbers to pixels. The options of [`decompose`] are those of
//! the command-line tool's `modes` subcommand, so the same rank gives the same numbers.

use super::{
    dmd_with_progress, pod_with_progress, spod_with_progress, Dmd, DmdOptions, ModesError, Pod,
    PodOptions, RankRule, Spod, SpodOptions,
};
use crate::field::{Series, TimeUnit, Units};
use crate::progress::Progress;
use faer::c64;
use serde::{Deserialize, Serialize};
use std::str::FromStr;

/// Which decomposition.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    Pod,
    Dmd,
    Spod,
}

/// A decomposition as the page asks for it (JSON): the method and the rank (POD modes kept,
/// default all; DMD rank, default the optimal hard threshold; SPOD modes per frequency,
/// default 3), as `sillage modes --method … --rank …`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModesRequest {
    pub method: Method,
    #[serde(default)]
    pub rank: Option<usize>,
}

/// A computed decomposition.
#[derive(Debug, Clone)]
pub enum Decomposition {
    Pod(Pod),
    Dmd(Dmd),
    Spod(Spod),
}

/// Computes the decomposition of `series` that `req` names.
pub fn decompose(series: &Series, req: &ModesRequest) -> Result<Decomposition, ModesError> {
    decompose_with_progress(series, req, &mut Progress::silent())
}

/// [`decompose`], reporting its progress (the same numbers: the observer only watches).
pub fn decompose_with_progress(
    series: &Series,
    req: &ModesRequest,
    progress: &mut Progress,
) -> Result<Decomposition, ModesError> {
    if req.rank == Some(0) {
        return Err(ModesError::BadOption { name: "rank", rule: "must be at least 1".into() });
    }
    Ok(match req.method {
        Method::Pod => Decomposition::Pod(pod_with_progress(
            series,
            &PodOptions { rank: req.rank, ..PodOptions::default() },
            progress,
        )?),
        Method::Dmd => Decomposition::Dmd(dmd_with_progress(
            series,
            &DmdOptions {
                rank: req.rank.map_or(RankRule::OptimalHardThreshold, RankRule::Fixed),
                ..DmdOptions::default()
            },
            progress,
        )?),
        Method::Spod => Decomposition::Spod(spod_with_progress(
            series,
            &SpodOptions { modes: Some(req.rank.unwrap_or(3)), ..SpodOptions::default() },
            progress,
        )?),
    })
}

/// Which part of a mode's velocity a map shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Component {
    /// The x component (real part for complex modes).
    U,
    /// The y component (real part for complex modes).
    V,
    /// √(|u|² + |v|²) (moduli for complex modes).
    Magnitude,
}

impl FromStr for Component {
    type Err = ModesError;
    fn from_str(s: &str) -> Result<Self, ModesError> {
        match s.trim() {
            "u" => Ok(Component::U),
            "v" => Ok(Component::V),
            "magnitude" => Ok(Component::Magnitude),
            other => Err(ModesError::BadOption {
                name: "component",
                rule: format!("'{other}' is not one of u, v, magnitude"),
            }),
        }
    }
}

/// One curve of a chart.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Curve {
    pub label: String,
    /// `bars` (from 0), `line`, `points` or `stems` (points with a line down to 0).
    pub style: &'static str,
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// The mode index (0-based, as [`Decomposition::shape`] takes it) of each point, when the
    /// points can be picked.
    pub picks: Option<Vec<usize>>,
}

/// A chart with its axes chosen.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Chart {
    pub id: &'static str,
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    /// `[lo, hi]` of each axis.
    pub x_range: [f64; 2],
    pub y_range: [f64; 2],
    /// Draw both axes at the same scale (the complex plane).
    pub equal_aspect: bool,
    pub curves: Vec<Curve>,
}

/// The energies of a POD, as the command-line tool writes them.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PodNumbers {
    pub energies: Vec<f64>,
    pub energy_fraction: Vec<f64>,
    pub cumulative_energy: Vec<f64>,
    pub total_energy: f64,
}

/// Everything the modes panel shows before a mode is picked.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Overview {
    pub method: Method,
    /// Modes that can be picked: POD and DMD modes, SPOD frequency bins.
    pub count: usize,
    /// What one pick is called ("mode", "frequency").
    pub pick_word: &'static str,
    /// One line describing the result.
    pub text: String,
    pub charts: Vec<Chart>,
    pub pod: Option<PodNumbers>,
}

/// POD modes drawn in the energy chart at most (the rest hold little energy and crowd it).
pub const CHART_MODES: usize = 40;
/// Points of the unit circle.
const CIRCLE_POINTS: usize = 181;

/// `[lo, hi]` widened by 5 % on each side; a unit span around a single value.
fn padded(lo: f64, hi: f64) -> [f64; 2] {
    if !(lo.is_finite() && hi.is_finite()) {
        return [0.0, 1.0];
    }
    if hi > lo {
        let m = 0.05 * (hi - lo);
        [lo - m, hi + m]
    } else {
        let m = if lo == 0.0 { 1.0 } else { 0.5 * lo.abs() };
        [lo - m, lo + m]
    }
}

fn extent(v: &[f64]) -> (f64, f64) {
    v.iter()
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)))
}

/// The frequency unit: Hz for data in seconds, else cycles per unit of the data's time.
pub fn frequency_unit(units: Units) -> String {
    match units.time {
        TimeUnit::S => "Hz".into(),
        _ => units.rate_label(),
    }
}

/// A number as plain decimal text the selection syntax reads (no exponent, no typographic
/// minus), about 6 significant digits.
fn plain(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let decimals = (5 - v.abs().log10().floor() as i32).clamp(0, 15) as usize;
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn pct(f: f64) -> String {
    crate::render::format::format_sig(100.0 * f, 3)
}

fn sig(v: f64) -> String {
    crate::render::format::format_sig(v, 3)
}

impl Decomposition {
    pub fn method(&self) -> Method {
        match self {
            Decomposition::Pod(_) => Method::Pod,
            Decomposition::Dmd(_) => Method::Dmd,
            Decomposition::Spod(_) => Method::Spod,
        }
    }

    /// Modes that can be picked (POD and DMD modes, SPOD frequency bins).
    pub fn count(&self) -> usize {
        match self {
            Decomposition::Pod(p) => p.rank(),
            Decomposition::Dmd(d) => d.rank(),
            Decomposition::Spod(s) => s.frequencies.len(),
        }
    }

    fn check(&self, k: usize) -> Result<(), ModesError> {
        if k < self.count() {
            Ok(())
        } else {
            Err(ModesError::BadOption {
                name: "mode",
                rule: format!("{} is not between 1 and {}", k + 1, self.count()),
            })
        }
    }

    /// The charts and numbers of the whole decomposition, for a series in `units`.
    pub fn overview(&self, units: Units) -> Overview {
        let fu = frequency_unit(units);
        match self {
            Decomposition::Pod(p) => pod_overview(p),
            Decomposition::Dmd(d) => dmd_overview(d, &fu),
            Decomposition::Spod(s) => spod_overview(s, &fu, units),
        }
    }

    /// Mode `k` (0-based; SPOD: the leading mode of frequency bin `k`) as a `(ny, nx)` map of
    /// `component`; masked cells hold 0.
    pub fn shape(&self, k: usize, component: Component) -> Result<Vec<f32>, ModesError> {
        self.check(k)?;
        let (layout, col): (_, Vec<c64>) = match self {
            Decomposition::Pod(p) => {
                (&p.layout, p.modes.col_as_slice(k).iter().map(|&x| c64::new(x, 0.0)).collect())
            }
            Decomposition::Dmd(d) => {
                (&d.layout, (0..d.layout.len()).map(|i| d.modes[(i, k)]).collect())
            }
            Decomposition::Spod(s) => {
                (&s.layout, (0..s.layout.len()).map(|i| s.modes[k][(i, 0)]).collect())
            }
        };
        let cells = layout.cells();
        let nv = cells.len();
        let mut out = vec![0.0f32; layout.grid().len()];
        for (i, &c) in cells.iter().enumerate() {
            let (u, v) = (col[i], col[nv + i]);
            out[c] = match component {
                Component::U => u.re,
                Component::V => v.re,
                Component::Magnitude => (u.norm_sqr() + v.norm_sqr()).sqrt(),
            } as f32;
        }
        Ok(out)
    }

    /// The temporal coefficient of mode `k` at the snapshot `times`: POD b_k(t), DMD
    /// Re(b_k μ_k^n); `None` for SPOD (its modes have no single time history).
    pub fn coefficients(
        &self,
        k: usize,
        times: &[f64],
        units: Units,
    ) -> Result<Option<Chart>, ModesError> {
        self.check(k)?;
        let (y, label, title) = match self {
            Decomposition::Pod(p) => (
                (0..p.coefficients.nrows()).map(|n| p.coefficients[(n, k)]).collect::<Vec<_>>(),
                "b(t)".to_string(),
                format!("Temporal coefficient of POD mode {}", k + 1),
            ),
            Decomposition::Dmd(d) => (
                (0..times.len())
                    .map(|n| (d.amplitudes[k] * d.eigenvalues[k].powu(n as u32)).re)
                    .collect(),
                "Re(b·μⁿ)".to_string(),
                format!("Temporal evolution of DMD mode {}", k + 1),
            ),
            Decomposition::Spod(_) => return Ok(None),
        };
        let x: Vec<f64> = times[..y.len()].to_vec();
        let (xlo, xhi) = extent(&x);
        let big = y.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        Ok(Some(Chart {
            id: "coefficients",
            title,
            x_label: match units.time.symbol() {
                "1" => "time".into(),
                u => format!("time ({u})"),
            },
            y_label: label.clone(),
            x_range: [xlo, if xhi > xlo { xhi } else { xlo + 1.0 }],
            y_range: padded(-big, big),
            equal_aspect: false,
            curves: vec![Curve { label, style: "line", x, y, picks: None }],
        }))
    }

    /// The selection term naming mode `k` ("pod(3)", "dmd(2)", "spod(f=1.7..1.9)").
    pub fn selection_term(&self, k: usize) -> Result<String, ModesError> {
        self.check(k)?;
        Ok(match self {
            Decomposition::Pod(_) => format!("pod({})", k + 1),
            Decomposition::Dmd(_) => format!("dmd({})", k + 1),
            Decomposition::Spod(s) => {
                let df = if s.frequencies.len() > 1 { s.frequencies[1] } else { 1.0 };
                let f = s.frequencies[k];
                format!("spod(f={}..{})", plain((f - 0.5 * df).max(0.0)), plain(f + 0.5 * df))
            }
        })
    }

    /// One line about mode `k` for a person, in `units`.
    pub fn describe(&self, k: usize, units: Units) -> Result<String, ModesError> {
        self.check(k)?;
        let fu = frequency_unit(units);
        Ok(match self {
            Decomposition::Pod(p) => format!(
                "POD mode {}: {} % of the fluctuation energy ({} % with the modes before it)",
                k + 1,
                pct(p.energy_fractions()[k]),
                pct(p.cumulative_energy()[k])
            ),
            Decomposition::Dmd(d) => format!(
                "DMD mode {}: f = {} {fu}, growth rate {} {}, |b| = {}, |μ| = {}",
                k + 1,
                sig(d.frequencies()[k]),
                sig(d.growth_rates()[k]),
                units.rate_label(),
                sig(d.amplitudes[k].norm()),
                sig(d.eigenvalues[k].norm())
            ),
            Decomposition::Spod(s) => format!(
                "SPOD leading mode at f = {} {fu}: {} % of the energy density at that frequency",
                sig(s.frequencies[k]),
                pct(s.energies[k][0] / s.energies[k].iter().sum::<f64>().max(f64::MIN_POSITIVE))
            ),
        })
    }
}

fn pod_overview(p: &Pod) -> Overview {
    let r = p.rank();
    let shown = r.min(CHART_MODES);
    let x: Vec<f64> = (1..=shown).map(|j| j as f64).collect();
    let frac = p.energy_fractions();
    let cum = p.cumulative_energy();
    let title = if shown < r {
        format!("POD energy, first {shown} of {r} modes")
    } else {
        format!("POD energy, {r} modes")
    };
    let chart = Chart {
        id: "energy",
        title,
        x_label: "mode".into(),
        y_label: "fraction of the fluctuation energy".into(),
        x_range: [0.5, shown as f64 + 0.5],
        y_range: [0.0, 1.0],
        equal_aspect: false,
        curves: vec![
            Curve {
                label: "energy of the mode".into(),
                style: "bars",
                x: x.clone(),
                y: frac[..shown].to_vec(),
                picks: Some((0..shown).collect()),
            },
            Curve {
                label: "cumulative".into(),
                style: "line",
                x,
                y: cum[..shown].to_vec(),
                picks: None,
            },
        ],
    };
    let lead: Vec<String> = frac.iter().take(4).map(|f| format!("{} %", pct(*f))).collect();
    Overview {
        method: Method::Pod,
        count: r,
        pick_word: "mode",
        text: format!("POD: {r} modes; energy of the first: {}", lead.join(", ")),
        charts: vec![chart],
        pod: Some(PodNumbers {
            energies: p.energies(),
            energy_fraction: frac,
            cumulative_energy: cum,
            total_energy: p.total_energy,
        }),
    }
}

fn dmd_overview(d: &Dmd, fu: &str) -> Overview {
    let r = d.rank();
    let re: Vec<f64> = d.eigenvalues.iter().map(|z| z.re).collect();
    let im: Vec<f64> = d.eigenvalues.iter().map(|z| z.im).collect();
    let reach = d.eigenvalues.iter().fold(1.0f64, |a, z| a.max(z.norm())) * 1.08;
    let angle = |i: usize| 2.0 * std::f64::consts::PI * i as f64 / (CIRCLE_POINTS - 1) as f64;
    let circle_x: Vec<f64> = (0..CIRCLE_POINTS).map(|i| angle(i).cos()).collect();
    let circle_y: Vec<f64> = (0..CIRCLE_POINTS).map(|i| angle(i).sin()).collect();
    let eig = Chart {
        id: "eigenvalues",
        title: "DMD eigenvalues μ".into(),
        x_label: "Re μ".into(),
        y_label: "Im μ".into(),
        x_range: [-reach, reach],
        y_range: [-reach, reach],
        equal_aspect: true,
        curves: vec![
            Curve {
                label: "unit circle".into(),
                style: "line",
                x: circle_x,
                y: circle_y,
                picks: None,
            },
            Curve {
                label: "eigenvalues".into(),
                style: "points",
                x: re,
                y: im,
                picks: Some((0..r).collect()),
            },
        ],
    };
    let f = d.frequencies();
    let amp: Vec<f64> = d.amplitudes.iter().map(|b| b.norm()).collect();
    let (flo, fhi) = extent(&f);
    let top = amp.iter().fold(0.0f64, |a, &b| a.max(b));
    let amps = Chart {
        id: "amplitudes",
        title: "DMD amplitude against frequency".into(),
        x_label: format!("frequency ({fu})"),
        y_label: "amplitude |b|".into(),
        x_range: padded(flo, fhi),
        y_range: [0.0, if top > 0.0 { 1.05 * top } else { 1.0 }],
        equal_aspect: false,
        curves: vec![Curve {
            label: "modes".into(),
            style: "stems",
            x: f.clone(),
            y: amp,
            picks: Some((0..r).collect()),
        }],
    };
    let lead: Vec<String> = f.iter().take(4).map(|v| format!("{} {fu}", sig(*v))).collect();
    Overview {
        method: Method::Dmd,
        count: r,
        pick_word: "mode",
        text: format!("DMD: rank {r}; frequencies by amplitude: {}", lead.join(", ")),
        charts: vec![eig, amps],
        pod: None,
    }
}

fn spod_overview(s: &Spod, fu: &str, units: Units) -> Overview {
    let nl = s.frequencies.len();
    let floor = |e: f64| e.max(f64::MIN_POSITIVE).log10();
    let modes_shown = s.energies.first().map_or(0, |e| e.len()).min(3);
    let mut curves = Vec::new();
    let mut all = Vec::new();
    for j in (0..modes_shown).rev() {
        let y: Vec<f64> = s.energies.iter().map(|e| floor(e[j])).collect();
        all.extend(y.iter().copied());
        curves.push(Curve {
            label: if j == 0 { "leading mode".into() } else { format!("mode {}", j + 1) },
            style: "line",
            x: s.frequencies.clone(),
            y,
            picks: (j == 0).then(|| (0..nl).collect()),
        });
    }
    let (lo, hi) = extent(&all);
    let lead: Vec<f64> = s.energies.iter().map(|e| e[0]).collect();
    let peak = (1..nl).max_by(|&a, &b| lead[a].total_cmp(&lead[b])).unwrap_or(0);
    let chart = Chart {
        id: "spectrum",
        title: "SPOD energy spectrum".into(),
        x_label: format!("frequency ({fu})"),
        y_label: format!(
            "log₁₀ energy density ({}²·{}²/{fu})",
            units.velocity_label(),
            units.length.symbol()
        ),
        x_range: [0.0, s.frequencies.last().copied().filter(|f| *f > 0.0).unwrap_or(1.0)],
        y_range: padded(lo, hi),
        equal_aspect: false,
        curves,
    };
    Overview {
        method: Method::Spod,
        count: nl,
        pick_word: "frequency",
        text: format!(
            "SPOD: {} blocks of {} snapshots (overlap {}), {nl} frequencies {} {fu} apart; the \
             leading mode's energy peaks at f = {} {fu}",
            s.blocks,
            s.block,
            s.overlap,
            sig(if nl > 1 { s.frequencies[1] } else { 0.0 }),
            sig(s.frequencies[peak])
        ),
        charts: vec![chart],
        pod: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::SeriesParts;
    use crate::modes::pod;

    /// Two travelling waves on a small grid: POD pairs, DMD conjugate pairs, an SPOD peak.
    fn waves() -> Series {
        let (nx, ny, nt) = (12, 8, 64);
        let x: Vec<f64> = (0..nx).map(|i| i as f64 * 0.1).collect();
        let y: Vec<f64> = (0..ny).map(|j| j as f64 * 0.1).collect();
        let t: Vec<f64> = (0..nt).map(|k| k as f64 * 0.05).collect();
        let mut u = Vec::new();
        let mut v = Vec::new();
        for &tk in &t {
            for &yj in &y {
                for &xi in &x {
                    let a = 2.0 * std::f64::consts::PI * (2.0 * tk - xi);
                    let b = 2.0 * std::f64::consts::PI * (5.0 * tk - 2.0 * yj);
                    u.push((1.0 + a.sin() + 0.3 * b.cos()) as f32);
                    v.push((0.5 * a.cos() + 0.2 * b.sin()) as f32);
                }
            }
        }
        Series::from_parts(SeriesParts {
            x,
            y,
            t,
            u,
            v,
            mask: None,
            gaps: None,
            nan_is_gap: false,
            units: Units::default(),
        })
        .unwrap()
    }

    #[test]
    fn pod_overview_matches_the_decomposition() {
        let s = waves();
        let d = decompose(&s, &ModesRequest { method: Method::Pod, rank: None }).unwrap();
        let o = d.overview(s.units());
        let p = pod(&s, &PodOptions::default()).unwrap();
        assert_eq!(o.pod.as_ref().unwrap().energies, p.energies());
        assert_eq!(o.charts[0].curves[0].y[0], p.energy_fractions()[0]);
        assert!(o.charts[0].curves[1].y.windows(2).all(|w| w[1] >= w[0] - 1e-15));
        assert_eq!(d.selection_term(2).unwrap(), "pod(3)");
        let shape = d.shape(0, Component::Magnitude).unwrap();
        assert_eq!(shape.len(), 96);
        assert!(shape.iter().all(|v| *v >= 0.0));
        let c = d.coefficients(1, s.times(), s.units()).unwrap().unwrap();
        assert_eq!(c.curves[0].y.len(), 64);
        assert_eq!(c.y_range[0], -c.y_range[1]);
        assert!(d.shape(p.rank(), Component::U).is_err());
        assert!(d.describe(0, s.units()).unwrap().starts_with("POD mode 1: "));
    }

    #[test]
    fn dmd_and_spod_overviews() {
        let s = waves();
        let d = decompose(&s, &ModesRequest { method: Method::Dmd, rank: Some(5) }).unwrap();
        let o = d.overview(s.units());
        assert_eq!(o.count, 5);
        let eig = &o.charts[0];
        assert!(eig.equal_aspect);
        // Pure oscillations: eigenvalues on the unit circle, inside the axis range.
        for (&re, &im) in eig.curves[1].x.iter().zip(&eig.curves[1].y) {
            assert!(((re * re + im * im).sqrt() - 1.0).abs() < 1e-6);
            assert!(re.abs() < eig.x_range[1] && im.abs() < eig.y_range[1]);
        }
        assert!(o.charts[1].x_label.contains("Hz"));
        assert_eq!(d.selection_term(1).unwrap(), "dmd(2)");
        assert!(d.coefficients(0, s.times(), s.units()).unwrap().is_some());

        let sp = decompose(&s, &ModesRequest { method: Method::Spod, rank: None }).unwrap();
        let o = sp.overview(s.units());
        assert_eq!(o.pick_word, "frequency");
        assert!(sp.coefficients(0, s.times(), s.units()).unwrap().is_none());
        let Decomposition::Spod(inner) = &sp else { unreachable!() };
        let df = inner.frequencies[1];
        let term = sp.selection_term(2).unwrap();
        assert_eq!(term, format!("spod(f={}..{})", plain(1.5 * df), plain(2.5 * df)));
        // The term reads back as a selection of that one bin.
        let sel = super::super::Selection::parse(&term).unwrap();
        assert_eq!(sel.terms.len(), 1);
    }

    #[test]
    fn plain_numbers_read_back() {
        assert_eq!(plain(1.8265), "1.8265");
        assert_eq!(plain(0.0), "0");
        assert_eq!(plain(125.0), "125");
        assert_eq!(plain(0.00012345678), "0.000123457");
    }
}
