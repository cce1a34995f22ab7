//! Selections: which parts of a series form a velocity field, written as a short text and
//! materialized as a [`Series`] on the data grid (so the tracer engine needs no special
//! path for modal fields).
//!
//! ## Syntax (our own)
//!
//! A selection is a sum of terms, each optionally scaled: `term (('+' | '-') term)*`, where
//! a term is `[number '*'] primary` and a primary is one of
//!
//! | text | field |
//! |---|---|
//! | `data` | the series itself |
//! | `mean` | its time mean (the same at every snapshot) |
//! | `pod(i)`, `pod(i-j)` | POD modes i..=j (1 = most energetic) with their coefficients |
//! | `dmd(i)`, `dmd(i-j)` | DMD modes i..=j in amplitude order, each with its complex-conjugate partner |
//! | `dmd(f=a..b)` | DMD modes with \|frequency\| in [a, b] (cycles per unit time: Hz for SI data) |
//! | `spod(f=a..b)`, `spod(f=a..b, modes=i-j)` | SPOD modes i..=j (default 1) of every frequency bin in [a, b], projected back onto the snapshots |
//! | `residual(S)` | `data` minus the selection S, e.g. `residual(mean + pod(1-2))` |
//! | `noise(rms=A)`, `noise(rms=A, seed=N)` | Gaussian white noise in space and time with RMS speed A (m/s, or unitless), seed N (default 0) |
//! | `(S)` | a parenthesised selection |
//!
//! Spaces are ignored; names are lower case. Examples: `mean + pod(1-2)` (a model flow f),
//! `residual(mean + pod(1-2))` (the perturbation g = data − f), `pod(3-12)`,
//! `0.5*noise(rms=0.02, seed=7)`, `mean + pod(1-2) + noise(rms=0.01)`.
//!
//! POD and SPOD terms are fluctuations (add `mean` for the full flow); DMD works on the raw
//! snapshots, so its zero-frequency mode carries the mean. Decompositions use the defaults
//! of [`SelectOptions`]: POD by the `Auto` route, DMD exact with the optimal hard threshold,
//! SPOD with the default block size.
//!
//! ## Noise
//! Each component of each valid vector is drawn independently from N(0, A²/2), so the
//! expected mean of |g|² over the field and the window is A² (the RMS speed the
//! sensitivity diagnostics use as reference). The stream is a PCG-64 seeded with N and
//! consumed snapshot by snapshot, u rows then v rows: the same text gives the same field on
//! every machine. Masked cells stay 0.

use super::dmd::{dmd, Dmd, DmdOptions};
use super::pod::{pod, Pod, PodOptions};
use super::snapshots::SnapshotLayout;
use super::spod::{spod, Spod, SpodOptions};
use super::ModesError;
use crate::field::Series;
use rand::SeedableRng;
use rand_distr::{Distribution, Normal};
use rand_pcg::Pcg64;
use std::cell::OnceCell;

/// One primary of the syntax.
#[derive(Debug, Clone, PartialEq)]
pub enum Term {
    Data,
    Mean,
    /// POD modes `first..=last`, 0-based.
    Pod {
        first: usize,
        last: usize,
    },
    /// DMD modes `first..=last`, 0-based.
    Dmd {
        first: usize,
        last: usize,
    },
    /// DMD modes with |f| in [fmin, fmax].
    DmdBand {
        fmin: f64,
        fmax: f64,
    },
    /// SPOD modes `first..=last` of the bins in [fmin, fmax].
    Spod {
        fmin: f64,
        fmax: f64,
        first: usize,
        last: usize,
    },
    Residual(Box<Selection>),
    Noise {
        rms: f64,
        seed: u64,
    },
    Group(Box<Selection>),
}

/// A parsed selection: Σ coefficient × term.
#[derive(Debug, Clone, PartialEq)]
pub struct Selection {
    pub terms: Vec<(f64, Term)>,
}

struct Parser<'a> {
    text: &'a str,
    s: Vec<char>,
    pos: usize,
}

impl<'a> Parser<'a> {
    fn err(&self, reason: impl Into<String>) -> ModesError {
        ModesError::Syntax { text: self.text.to_string(), at: self.pos + 1, reason: reason.into() }
    }
    fn skip(&mut self) {
        while self.pos < self.s.len() && self.s[self.pos].is_whitespace() {
            self.pos += 1;
        }
    }
    fn peek(&mut self) -> Option<char> {
        self.skip();
        self.s.get(self.pos).copied()
    }
    fn eat(&mut self, c: char) -> bool {
        if self.peek() == Some(c) {
            self.pos += 1;
            true
        } else {
            false
        }
    }
    fn expect(&mut self, c: char) -> Result<(), ModesError> {
        if self.eat(c) {
            Ok(())
        } else {
            Err(self.err(format!("expected '{c}'")))
        }
    }
    fn word(&mut self) -> String {
        self.skip();
        let start = self.pos;
        while self.pos < self.s.len()
            && (self.s[self.pos].is_ascii_alphabetic() || self.s[self.pos] == '_')
        {
            self.pos += 1;
        }
        self.s[start..self.pos].iter().collect()
    }
    fn number(&mut self) -> Result<f64, ModesError> {
        self.skip();
        let start = self.pos;
        while self.pos < self.s.len()
            && (self.s[self.pos].is_ascii_digit()
                || (self.s[self.pos] == '.' && self.s.get(self.pos + 1) != Some(&'.'))
                || matches!(self.s[self.pos], 'e' | 'E')
                || (matches!(self.s[self.pos], '+' | '-')
                    && self.pos > start
                    && matches!(self.s[self.pos - 1], 'e' | 'E')))
        {
            self.pos += 1;
        }
        let t: String = self.s[start..self.pos].iter().collect();
        t.parse::<f64>().ok().filter(|v| v.is_finite()).ok_or_else(|| {
            self.pos = start;
            self.err("expected a number")
        })
    }
    fn index(&mut self) -> Result<usize, ModesError> {
        self.skip();
        let start = self.pos;
        while self.pos < self.s.len() && self.s[self.pos].is_ascii_digit() {
            self.pos += 1;
        }
        let t: String = self.s[start..self.pos].iter().collect();
        match t.parse::<usize>() {
            Ok(i) if i >= 1 => Ok(i),
            _ => {
                self.pos = start;
                Err(self.err("expected a mode number (1 = the first)"))
            }
        }
    }
    /// `i` or `i-j`, 1-based in the text, 0-based out.
    fn range(&mut self) -> Result<(usize, usize), ModesError> {
        let first = self.index()?;
        let last = if self.eat('-') { self.index()? } else { first };
        if last < first {
            return Err(self.err(format!("mode range {first}-{last} runs backwards")));
        }
        Ok((first - 1, last - 1))
    }
    /// `f=a..b` with 0 ≤ a ≤ b.
    fn band(&mut self) -> Result<(f64, f64), ModesError> {
        if self.word() != "f" {
            return Err(self.err("expected a frequency band f=LOW..HIGH"));
        }
        self.expect('=')?;
        let a = self.number()?;
        self.expect('.')?;
        self.expect('.')?;
        let b = self.number()?;
        if a < 0.0 || b < a {
            return Err(self.err(format!("frequency band {a}..{b}: need 0 ≤ LOW ≤ HIGH")));
        }
        Ok((a, b))
    }
    fn selection(&mut self) -> Result<Selection, ModesError> {
        let mut terms = Vec::new();
        let mut sign = if self.eat('-') {
            -1.0
        } else {
            self.eat('+');
            1.0
        };
        loop {
            let (c, t) = self.term()?;
            terms.push((sign * c, t));
            if self.eat('+') {
                sign = 1.0;
            } else if self.eat('-') {
                sign = -1.0;
            } else {
                break;
            }
        }
        Ok(Selection { terms })
    }
    fn term(&mut self) -> Result<(f64, Term), ModesError> {
        let c = match self.peek() {
            Some(ch) if ch.is_ascii_digit() || ch == '.' => {
                let c = self.number()?;
                self.expect('*')?;
                c
            }
            _ => 1.0,
        };
        Ok((c, self.primary()?))
    }
    fn primary(&mut self) -> Result<Term, ModesError> {
        if self.eat('(') {
            let inner = self.selection()?;
            self.expect(')')?;
            return Ok(Term::Group(Box::new(inner)));
        }
        let at = self.pos;
        let name = self.word();
        match name.as_str() {
            "data" => Ok(Term::Data),
            "mean" => Ok(Term::Mean),
            "pod" => {
                self.expect('(')?;
                let (first, last) = self.range()?;
                self.expect(')')?;
                Ok(Term::Pod { first, last })
            }
            "dmd" => {
                self.expect('(')?;
                let t = if self.peek() == Some('f') {
                    let (fmin, fmax) = self.band()?;
                    Term::DmdBand { fmin, fmax }
                } else {
                    let (first, last) = self.range()?;
                    Term::Dmd { first, last }
                };
                self.expect(')')?;
                Ok(t)
            }
            "spod" => {
                self.expect('(')?;
                let (fmin, fmax) = self.band()?;
                let (mut first, mut last) = (0, 0);
                if self.eat(',') {
                    let key = self.word();
                    if key != "modes" {
                        return Err(self.err(format!("spod takes f=… and modes=…, not '{key}'")));
                    }
                    self.expect('=')?;
                    (first, last) = self.range()?;
                }
                self.expect(')')?;
                Ok(Term::Spod {
                    fmin,
                    fmax,
                    first,
                    last,
                })
            }
            "residual" => {
                self.expect('(')?;
                let inner = self.selection()?;
                self.expect(')')?;
                Ok(Term::Residual(Box::new(inner)))
            }
            "noise" => {
                self.expect('(')?;
                let (mut rms, mut seed) = (None, 0u64);
                loop {
                    let key = self.word();
                    self.expect('=')?;
                    match key.as_str() {
                        "rms" => {
                            let v = self.number()?;
                            if v < 0.0 {
                                return Err(self.err("rms must not be negative"));
                            }
                            rms = Some(v);
                        }
                        "seed" => {
                            let v = self.number()?;
                            if v < 0.0 || v.fract() != 0.0 || v > u64::MAX as f64 {
                                return Err(self.err("seed must be a whole number ≥ 0"));
                            }
                            seed = v as u64;
                        }
                        other => {
                            return Err(
                                self.err(format!("noise takes rms= and seed=, not '{other}='"))
                            )
                        }
                    }
                    if !self.eat(',') {
                        break;
                    }
                }
                self.expect(')')?;
                let rms = rms.ok_or_else(|| self.err("noise needs rms=AMPLITUDE"))?;
                Ok(Term::Noise { rms, seed })
            }
            "" => {
                Err(self
                    .err("expected a term: data, mean, pod(i-j), dmd(i-j), dmd(f=a..b), spod(f=a..b), residual(…), noise(rms=…) or (…)"))
            }
            other => {
                self.pos = at;
                Err(self.err(format!(
                    "unknown term '{other}': use data, mean, pod(i-j), dmd(i-j), dmd(f=a..b), spod(f=a..b), residual(…), noise(rms=…)"
                )))
            }
        }
    }
}

impl Selection {
    /// Parses the text syntax of the module doc.
    pub fn parse(text: &str) -> Result<Selection, ModesError> {
        let mut p = Parser { text, s: text.chars().collect(), pos: 0 };
        let sel = p.selection()?;
        if p.peek().is_some() {
            return Err(p.err("unexpected text after the selection"));
        }
        Ok(sel)
    }

    /// Largest POD mode number (0-based) used anywhere, if any.
    fn max_pod(&self) -> Option<usize> {
        self.terms
            .iter()
            .filter_map(|(_, t)| match t {
                Term::Pod { last, .. } => Some(*last),
                Term::Residual(s) | Term::Group(s) => s.max_pod(),
                _ => None,
            })
            .max()
    }

    /// Largest SPOD mode number (0-based) used anywhere, if any.
    fn max_spod(&self) -> Option<usize> {
        self.terms
            .iter()
            .filter_map(|(_, t)| match t {
                Term::Spod { last, .. } => Some(*last),
                Term::Residual(s) | Term::Group(s) => s.max_spod(),
                _ => None,
            })
            .max()
    }

    /// The selected field as a series on `series`' grid, times, mask and units.
    pub fn materialize(&self, series: &Series, opts: &SelectOptions) -> Result<Series, ModesError> {
        let ctx = Context {
            series,
            layout: SnapshotLayout::new(series)?,
            pod: OnceCell::new(),
            dmd: OnceCell::new(),
            spod: OnceCell::new(),
            spod_modes: self.max_spod().map(|j| j + 1),
            opts: *opts,
            rank: self.max_pod().map(|j| j + 1),
        };
        let n = ctx.layout.len();
        let mut acc = vec![vec![0.0f64; n]; series.nt()];
        self.add_into(1.0, &ctx, &mut acc)?;
        Ok(ctx.layout.to_series(series, |k| std::mem::take(&mut acc[k])))
    }

    fn add_into(&self, scale: f64, ctx: &Context, acc: &mut [Vec<f64>]) -> Result<(), ModesError> {
        for (c, term) in &self.terms {
            term.add_into(scale * c, ctx, acc)?;
        }
        Ok(())
    }
}

/// Options of the decompositions a selection may need.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct SelectOptions {
    /// POD settings (`rank` is raised to the largest mode the selection names).
    pub pod: PodOptions,
    pub dmd: DmdOptions,
    /// SPOD settings (`modes` is raised to the largest mode the selection names).
    pub spod: SpodOptions,
}

struct Context<'a> {
    series: &'a Series,
    layout: SnapshotLayout,
    pod: OnceCell<Pod>,
    dmd: OnceCell<Dmd>,
    spod: OnceCell<Spod>,
    spod_modes: Option<usize>,
    opts: SelectOptions,
    rank: Option<usize>,
}

impl Context<'_> {
    fn pod(&self) -> Result<&Pod, ModesError> {
        if let Some(p) = self.pod.get() {
            return Ok(p);
        }
        let mut o = self.opts.pod;
        o.subtract_mean = true;
        o.rank = match (o.rank, self.rank) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        let p = pod(self.series, &o)?;
        Ok(self.pod.get_or_init(|| p))
    }
}

impl Context<'_> {
    fn dmd(&self) -> Result<&Dmd, ModesError> {
        if let Some(d) = self.dmd.get() {
            return Ok(d);
        }
        let d = dmd(self.series, &self.opts.dmd)?;
        Ok(self.dmd.get_or_init(|| d))
    }
    fn spod(&self) -> Result<&Spod, ModesError> {
        if let Some(s) = self.spod.get() {
            return Ok(s);
        }
        let mut o = self.opts.spod;
        o.modes = match (o.modes, self.spod_modes) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
        let s = spod(self.series, &o)?;
        Ok(self.spod.get_or_init(|| s))
    }
    fn add_dmd(&self, c: f64, which: &[usize], acc: &mut [Vec<f64>]) -> Result<(), ModesError> {
        let d = self.dmd()?;
        let which = d.with_partners(which);
        for (k, a) in acc.iter_mut().enumerate() {
            axpy(c, &d.reconstruct(k, &which), a);
        }
        Ok(())
    }
}

fn axpy(c: f64, x: &[f64], y: &mut [f64]) {
    for (a, b) in y.iter_mut().zip(x) {
        *a += c * b;
    }
}

impl Term {
    fn add_into(&self, c: f64, ctx: &Context, acc: &mut [Vec<f64>]) -> Result<(), ModesError> {
        let nt = acc.len();
        match self {
            Term::Data => {
                for (k, a) in acc.iter_mut().enumerate() {
                    axpy(c, &ctx.layout.snapshot(ctx.series, k), a);
                }
            }
            Term::Mean => {
                let mean = ctx.layout.mean(ctx.series);
                acc.iter_mut().for_each(|a| axpy(c, &mean, a));
            }
            Term::Pod { first, last } => {
                let p = ctx.pod()?;
                if *last >= p.rank() {
                    return Err(ModesError::Selection(format!(
                        "pod({}-{}) asks for mode {} but the data have {} POD modes above round-off",
                        first + 1,
                        last + 1,
                        last + 1,
                        p.rank()
                    )));
                }
                for j in *first..=*last {
                    let phi = p.modes.col_as_slice(j);
                    for (k, a) in acc.iter_mut().enumerate() {
                        axpy(c * p.coefficients[(k, j)], phi, a);
                    }
                }
            }
            Term::Dmd { first, last } => {
                let r = ctx.dmd()?.rank();
                if *last >= r {
                    return Err(ModesError::Selection(format!(
                        "dmd({}-{}) asks for mode {} but the DMD has rank {r}",
                        first + 1,
                        last + 1,
                        last + 1
                    )));
                }
                let which: Vec<usize> = (*first..=*last).collect();
                ctx.add_dmd(c, &which, acc)?;
            }
            Term::DmdBand { fmin, fmax } => {
                let which = ctx.dmd()?.band(*fmin, *fmax);
                if which.is_empty() {
                    return Err(ModesError::Selection(format!(
                        "no DMD mode has a frequency in {fmin}..{fmax}"
                    )));
                }
                ctx.add_dmd(c, &which, acc)?;
            }
            Term::Spod { fmin, fmax, first, last } => {
                let s = ctx.spod()?;
                let band = s.band(*fmin, *fmax);
                if band.is_empty() {
                    return Err(ModesError::Selection(format!(
                        "no SPOD frequency bin in {fmin}..{fmax} (bins are {:.4} apart)",
                        s.frequencies.get(1).copied().unwrap_or(0.0)
                    )));
                }
                let rec = s.reconstruct_band(ctx.series, &band, *first, *last)?;
                for (a, q) in acc.iter_mut().zip(&rec) {
                    axpy(c, q, a);
                }
            }
            Term::Residual(inner) => {
                Term::Data.add_into(c, ctx, acc)?;
                inner.add_into(-c, ctx, acc)?;
            }
            Term::Group(inner) => inner.add_into(c, ctx, acc)?,
            Term::Noise { rms, seed } => {
                let normal = Normal::new(0.0, rms / std::f64::consts::SQRT_2).map_err(|_| {
                    ModesError::Selection(format!("noise rms {rms} is not a valid amplitude"))
                })?;
                let mut rng = Pcg64::seed_from_u64(*seed);
                for a in acc.iter_mut().take(nt) {
                    for x in a.iter_mut() {
                        let d: f64 = normal.sample(&mut rng);
                        *x += c * d;
                    }
                }
            }
        }
        Ok(())
    }
}
