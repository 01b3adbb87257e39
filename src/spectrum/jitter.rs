//! Integrated phase jitter over offset bands (docs/design.md §6):
//!
//! σ_φ² = ∫_{f1}^{f2} S_φ(f)·|H(f)|² df + Σ_spurs 2·10^{L_s/10}·|H(f_s)|²  (rad²),
//!
//! rms time jitter σ_t = σ_φ/(2πν0) (s), in unit intervals σ_t·R for a line
//! rate R, in degrees σ_φ·180/π.
//!
//! - S_φ is the table interpolated linearly in log f / dB; with no weighting
//!   (or only a filter file) every segment is a power law and the integral is
//!   exact ([`super::loglog`]).
//! - Weightings ([`super::weighting`]): Butterworth high- and low-passes,
//!   loop responses (`pll`, `cdr`, `pll-diff`); several multiply. With one
//!   of these the integral is done by adaptive Gauss–Legendre quadrature in
//!   log f on each table segment (relative tolerance 10⁻⁹).
//! - A filter file gives |H(f)|² in dB against f, interpolated linearly in
//!   log f / dB like the table; several files multiply.
//! - Spurs: a discrete line shown at L_s dBc (the level of one sideband,
//!   as an analyser displays it) at offset f_s is a pure phase modulation
//!   φ(t) = β·sin(2πf_s t) with sidebands of (β/2)² = 10^{L_s/10} each side,
//!   so its mean-square phase is β²/2 = 2·10^{L_s/10} rad². This is the
//!   same factor 2 as S_φ = 2·10^{L/10} for the continuous part (SSB
//!   convention, IEEE Std 1139). A spur counts when f1 ≤ f_s ≤ f2.
//!
//! Outside the table (or the filter file) the band is an error unless
//! extrapolation is allowed; then the end segments' power laws are continued
//! and the extrapolated ranges are reported with the result.

use super::loglog::{power_integral_from, Extend, LogLog};
use super::quad::adaptive;
use super::{Quantity, Spectrum};
use crate::error::{Error, Result};
use crate::units::{format_si, parse_frequency, UnitError};
use crate::verdict::{Coverage, Judgement};
use std::f64::consts::PI;

pub use super::weighting::{SecondOrderLoop, Weighting};

/// An integration band [from, to] in Hz.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Band {
    /// Lower offset in Hz.
    pub from: f64,
    /// Upper offset in Hz.
    pub to: f64,
}

impl Band {
    /// Parse `FROM:TO` with units (`12k:20M`); 0 < FROM < TO.
    pub fn parse(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let (a, b) = t.split_once(':').ok_or_else(|| UnitError::Bad {
            text: t.to_string(),
            what: "band",
            expected: "FROM:TO with units, e.g. 12k:20M",
        })?;
        let band = Band {
            from: parse_frequency(a)?,
            to: parse_frequency(b)?,
        };
        if !(band.from > 0.0 && band.to > band.from) {
            return Err(UnitError::OutOfRange {
                text: t.to_string(),
                what: "a band FROM:TO",
                range: "0 < FROM < TO (e.g. 12k:20M)",
            });
        }
        Ok(band)
    }
}

/// A discrete spur: level in dBc (one sideband) at an offset in Hz.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spur {
    /// Offset in Hz.
    pub f: f64,
    /// Level of the sideband in dBc (< 0).
    pub dbc: f64,
}

impl Spur {
    /// Mean-square phase of the spur, 2·10^{dBc/10} rad² (module notes).
    pub fn phase_power(&self) -> f64 {
        2.0 * 10f64.powf(self.dbc / 10.0)
    }
}

/// A weighting table: |H(f)|² against f (linear), from a filter file of dB
/// values, with its name (the file) for the description.
#[derive(Debug, Clone)]
pub struct FilterTable {
    /// A name for the description (the file).
    pub name: String,
    /// |H(f)|², interpolated linearly in log f / dB.
    pub table: LogLog,
}

/// Period jitter asked for: the period and cycle-to-cycle jitter of every
/// band, and the jitter over `periods` periods when given.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PeriodRequest {
    /// N of the N-period jitter (≥ 1), when asked for.
    pub periods: Option<u32>,
}

/// Weighting and extras applied to every band.
#[derive(Debug, Clone, Default)]
pub struct JitterSetup {
    /// Weightings (Butterworth and loops; multiplied).
    pub filters: Vec<Weighting>,
    /// Weighting tables from filter files (multiplied).
    pub filter_tables: Vec<FilterTable>,
    /// Spurs added when inside a band.
    pub spurs: Vec<Spur>,
    /// Allow bands outside the table (and filter tables) by continuing the end slopes.
    pub extrapolate: bool,
    /// Period jitter too ([`period_kernels`]).
    pub period: Option<PeriodRequest>,
}

impl JitterSetup {
    /// A description of the weighting (`none` when unweighted).
    pub fn describe(&self) -> String {
        let mut parts: Vec<String> = self.filters.iter().map(|w| w.describe()).collect();
        parts.extend(
            self.filter_tables
                .iter()
                .map(|t| format!("file:{}", t.name)),
        );
        if parts.is_empty() {
            "none".into()
        } else {
            parts.join("+")
        }
    }

    fn weight(&self, f: f64) -> f64 {
        let mut h = self.filters.iter().map(|w| w.h2(f)).product::<f64>();
        for t in &self.filter_tables {
            h *= t.table.eval(f, Extend::EndSlope).unwrap_or(0.0);
        }
        h
    }
}

/// The kernels K(f) that turn S_φ into the mean square of a difference of
/// clock edges, with the spacing of their zeros (ν0/N for N periods):
///
/// - period jitter, P_k − T₀ = x(t + T₀) − x(t): K = 4 sin²(πf/ν0);
/// - cycle-to-cycle, P_{k+1} − P_k, the second difference: K = 16 sin⁴(πf/ν0);
/// - N-period jitter, x(t + N T₀) − x(t): K = 4 sin²(πNf/ν0);
///
/// each in time through σ² = (2πν0)⁻² ∫ S_φ(f)·K(f) df (S_φ one-sided; the
/// |1 − e^{−j2πfT}|² = 4 sin²(πfT) of a difference over T, analytic).
pub fn period_kernels(nu0: f64, periods: Option<u32>) -> Vec<(PeriodKind, f64)> {
    let mut k = vec![(PeriodKind::Period, nu0), (PeriodKind::CycleToCycle, nu0)];
    if let Some(n) = periods {
        k.push((PeriodKind::NPeriods(n), nu0 / n as f64));
    }
    k
}

/// Which difference of edges a period kernel gives.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PeriodKind {
    /// One period: 4 sin²(πf/ν0).
    Period,
    /// Cycle to cycle: 16 sin⁴(πf/ν0).
    CycleToCycle,
    /// N periods: 4 sin²(πNf/ν0).
    NPeriods(u32),
}

impl PeriodKind {
    /// K(f) at carrier ν0.
    pub fn kernel(self, f: f64, nu0: f64) -> f64 {
        match self {
            PeriodKind::Period => 4.0 * (PI * f / nu0).sin().powi(2),
            PeriodKind::CycleToCycle => 16.0 * (PI * f / nu0).sin().powi(4),
            PeriodKind::NPeriods(n) => 4.0 * (PI * n as f64 * f / nu0).sin().powi(2),
        }
    }
}

/// Period jitter of a band, seconds rms (module notes of [`period_kernels`]).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PeriodJitter {
    /// rms period jitter, s.
    pub period_rms_s: f64,
    /// rms cycle-to-cycle jitter, s.
    pub c2c_rms_s: f64,
    /// N of the N-period jitter.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub periods: Option<u32>,
    /// rms jitter over N periods, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub n_period_rms_s: Option<f64>,
}

/// The jitter in one band.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BandJitter {
    /// Lower offset in Hz.
    pub from: f64,
    /// Upper offset in Hz.
    pub to: f64,
    /// The weighting applied (`none`, `highpass:1:12 kHz`, …).
    pub filter: String,
    /// rms phase jitter in rad.
    pub rms_rad: f64,
    /// rms phase jitter in degrees.
    pub rms_deg: f64,
    /// rms time jitter in seconds.
    pub rms_s: f64,
    /// rms jitter in unit intervals of the given line rate.
    pub rms_ui: Option<f64>,
    /// Mean-square phase contributed by spurs, rad².
    pub spurs_rad2: f64,
    /// Number of spurs inside the band.
    pub spurs: usize,
    /// Offset ranges [from, to] in Hz that were extrapolated beyond the table
    /// or the filter file.
    pub extrapolated: Vec<(f64, f64)>,
    /// Period, cycle-to-cycle and N-period jitter in the band, when asked for.
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub period: Option<PeriodJitter>,
}

/// A limit on the rms jitter of a band, in one of the units jitter is given
/// in. The unit is required: `--limit 1.5` is refused ("give a unit").
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
#[serde(tag = "unit", content = "value", rename_all = "lowercase")]
pub enum JitterLimit {
    /// rms time jitter, seconds (`1ps`, `300fs`).
    S(f64),
    /// rms phase jitter, radians (`10mrad`, `0.01rad`).
    Rad(f64),
    /// rms phase jitter, degrees (`0.5deg`).
    Deg(f64),
    /// rms jitter in unit intervals of the line rate (`0.01UI`; needs the rate).
    Ui(f64),
}

impl JitterLimit {
    /// Parse a limit with its unit: a duration (`fs ps ns us ms s`), `rad`,
    /// `mrad`, `urad`, `deg` or `UI`.
    ///
    /// ```
    /// use tauwise::spectrum::jitter::JitterLimit;
    /// assert_eq!(JitterLimit::parse("1ps").unwrap(), JitterLimit::S(1e-12));
    /// assert_eq!(JitterLimit::parse("10mrad").unwrap(), JitterLimit::Rad(0.01));
    /// assert_eq!(JitterLimit::parse("0.1UI").unwrap(), JitterLimit::Ui(0.1));
    /// assert!(JitterLimit::parse("1.5").unwrap_err().to_string().contains("give a unit"));
    /// ```
    pub fn parse(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let num = |n: &str| -> Result<f64, UnitError> {
            n.trim()
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite() && *v > 0.0)
                .ok_or_else(|| UnitError::NotPositive {
                    text: t.to_string(),
                    what: "jitter limit with its unit",
                })
        };
        let lower = t.to_ascii_lowercase();
        let limit = if let Some(n) = lower.strip_suffix("mrad") {
            JitterLimit::Rad(num(n)? * 1e-3)
        } else if let Some(n) = lower.strip_suffix("urad") {
            JitterLimit::Rad(num(n)? * 1e-6)
        } else if let Some(n) = lower.strip_suffix("rad") {
            JitterLimit::Rad(num(n)?)
        } else if let Some(n) = lower.strip_suffix("deg").or_else(|| t.strip_suffix('°')) {
            JitterLimit::Deg(num(n)?)
        } else if let Some(n) = lower.strip_suffix("ui") {
            JitterLimit::Ui(num(n)?)
        } else {
            let d = crate::parse::Duration::positive_with_unit(t).map_err(|e| match e {
                UnitError::Bad { .. } => UnitError::Bad {
                    text: t.to_string(),
                    what: "jitter limit",
                    expected:
                        "a number with one of the units fs ps ns us ms s, rad mrad urad, deg, UI",
                },
                other => other,
            })?;
            JitterLimit::S(d.seconds())
        };
        Ok(limit)
    }

    /// The limit in words with its unit (`1.000 ps rms`).
    pub fn describe(&self) -> String {
        match *self {
            JitterLimit::S(v) => format!("{} rms", format_si(v, "s", 4)),
            JitterLimit::Rad(v) => format!("{} rms", format_si(v, "rad", 4)),
            JitterLimit::Deg(v) => format!("{} ° rms", crate::units::format_sig(v, 4)),
            JitterLimit::Ui(v) => format!("{} UI rms", crate::units::format_sig(v, 4)),
        }
    }

    /// The band's rms jitter in this limit's unit (None for UI without a
    /// line rate).
    pub fn measured(&self, b: &BandJitter) -> Option<f64> {
        match self {
            JitterLimit::S(_) => Some(b.rms_s),
            JitterLimit::Rad(_) => Some(b.rms_rad),
            JitterLimit::Deg(_) => Some(b.rms_deg),
            JitterLimit::Ui(_) => b.rms_ui,
        }
    }

    /// The limit's value in its unit.
    pub fn value(&self) -> f64 {
        match *self {
            JitterLimit::S(v) | JitterLimit::Rad(v) | JitterLimit::Deg(v) | JitterLimit::Ui(v) => v,
        }
    }

    /// Judge a band against the limit: `meets` when the rms is at or below
    /// it, `exceeds` above it; `not-judged` when the band could not be
    /// integrated (`band` is the error: outside the table, no carrier, …),
    /// when the rms is not finite, or a UI limit has no line rate. A band
    /// that reaches beyond the table by extrapolation is judged, with
    /// partial coverage and the extrapolated offsets named.
    pub fn judge_with(
        &self,
        band: std::result::Result<&BandJitter, &str>,
        rule: &crate::decision::DecisionRule,
    ) -> Judgement {
        let mut j = self.judge(band);
        rule.decide(
            &mut j,
            crate::decision::Probabilities::Unavailable(JITTER_NO_DISTRIBUTION),
        );
        j
    }

    /// [`JitterLimit::judge_with`] under the simple rule (see there).
    pub fn judge(&self, band: std::result::Result<&BandJitter, &str>) -> Judgement {
        let b = match band {
            Ok(b) => b,
            Err(e) => return Judgement::not_judged(format!("the band was not computed: {e}")),
        };
        let Some(v) = self.measured(b) else {
            return Judgement::not_judged(
                "a limit in UI needs the line rate (--ui-rate, or ui_rate in the DUT file)",
            );
        };
        if !v.is_finite() {
            return Judgement::not_judged(format!(
                "the band's rms jitter is {} (the integral overflowed or is undefined)",
                if v.is_nan() { "NaN" } else { "infinite" }
            ));
        }
        if b.extrapolated.is_empty() {
            Judgement::judged(v > self.value(), Coverage::Full)
        } else {
            let parts: Vec<String> = b
                .extrapolated
                .iter()
                .map(|(a, c)| format!("{} – {}", format_si(*a, "Hz", 4), format_si(*c, "Hz", 4)))
                .collect();
            Judgement::judged(v > self.value(), Coverage::Partial).because(format!(
                "partial coverage: the table does not reach {}; the end slopes were continued there",
                parts.join(", ")
            ))
        }
    }
}

/// Integrate the jitter of `spectrum` (any quantity; needs the carrier) over
/// `band` (module notes). `ui_rate` is the line rate in Hz (UI = 1/rate).
///
/// ```
/// use tauwise::spectrum::{Quantity, Spectrum};
/// use tauwise::spectrum::jitter::{integrate_band, Band, JitterSetup};
/// // Flat −150 dBc/Hz, 12 kHz–20 MHz, 100 MHz carrier (docs/checks.md §E, analytic).
/// let s = Spectrum::new(vec![1e3, 1e8], vec![-150.0, -150.0], Quantity::Lf, Some(100e6)).unwrap();
/// let j = integrate_band(&s, Band { from: 12e3, to: 20e6 }, &JitterSetup::default(), None).unwrap();
/// assert!((j.rms_rad / 1.99940e-4 - 1.0).abs() < 1e-5);
/// ```
pub fn integrate_band(
    spectrum: &Spectrum,
    band: Band,
    setup: &JitterSetup,
    ui_rate: Option<f64>,
) -> Result<BandJitter> {
    let nu0 = spectrum.carrier.ok_or_else(|| {
        Error::invalid("integrated jitter needs the carrier frequency (--carrier)")
    })?;
    if !(band.from > 0.0 && band.to > band.from) {
        return Err(Error::invalid(format!(
            "band {} Hz to {} Hz must satisfy 0 < from < to",
            band.from, band.to
        )));
    }
    let sphi = spectrum.to(Quantity::Sphi)?;
    let table = LogLog::new(&sphi.f, &sphi.values)?;
    let mut extrapolated = Vec::new();
    let mut check_cover = |name: &str, t: &LogLog| -> Result<()> {
        let (lo, hi) = t.range();
        let tol = 1e-9;
        if band.from < lo * (1.0 - tol) || band.to > hi * (1.0 + tol) {
            if !setup.extrapolate {
                return Err(Error::invalid(format!(
                    "band {} to {} reaches outside the {name} ({} to {}); narrow the band or allow --extrapolate",
                    format_si(band.from, "Hz", 4),
                    format_si(band.to, "Hz", 4),
                    format_si(lo, "Hz", 4),
                    format_si(hi, "Hz", 4)
                )));
            }
            if band.from < lo * (1.0 - tol) {
                extrapolated.push((band.from, lo.min(band.to)));
            }
            if band.to > hi * (1.0 + tol) {
                extrapolated.push((hi.max(band.from), band.to));
            }
        }
        Ok(())
    };
    check_cover("table", &table)?;
    for ft in &setup.filter_tables {
        check_cover(&format!("filter file {}", ft.name), &ft.table)?;
    }
    extrapolated.sort_by(|a, b| a.0.total_cmp(&b.0));
    extrapolated.dedup();
    let mut weighted = table.clone();
    for ft in &setup.filter_tables {
        weighted = weighted.product(&ft.table, band.from, band.to, Extend::EndSlope)?;
    }
    let var = weighted_integral(&weighted, band, setup, None)?;
    let inside: Vec<&Spur> = setup
        .spurs
        .iter()
        .filter(|s| s.f >= band.from && s.f <= band.to)
        .collect();
    let spur_var: f64 = inside
        .iter()
        .fold(0.0, |acc, s| acc + s.phase_power() * setup.weight(s.f));
    let rad = (var + spur_var).sqrt();
    let secs = rad / (2.0 * PI * nu0);
    let period = match setup.period {
        Some(req) => {
            let mut values = Vec::new();
            for (kind, spacing) in period_kernels(nu0, req.periods) {
                let k = |f: f64| kind.kernel(f, nu0);
                let cont = weighted_integral(&weighted, band, setup, Some((&k, spacing)))?;
                let lines: f64 = inside
                    .iter()
                    .map(|s| s.phase_power() * setup.weight(s.f) * k(s.f))
                    .sum();
                values.push((cont + lines).sqrt() / (2.0 * PI * nu0));
            }
            Some(PeriodJitter {
                period_rms_s: values[0],
                c2c_rms_s: values[1],
                periods: req.periods,
                n_period_rms_s: values.get(2).copied(),
            })
        }
        None => None,
    };
    Ok(BandJitter {
        from: band.from,
        to: band.to,
        filter: setup.describe(),
        rms_rad: rad,
        rms_deg: rad.to_degrees(),
        rms_s: secs,
        rms_ui: ui_rate.map(|r| secs * r),
        spurs_rad2: spur_var,
        spurs: inside.len(),
        extrapolated,
        period,
    })
}

/// A band's jitter (or why it could not be computed) and its judgement
/// against its limit, when it has one.
pub type JudgedBand = (std::result::Result<BandJitter, String>, Option<Judgement>);

/// Every band of `bands` integrated ([`integrate_band`]) and, when limits
/// are given — one for every band, or one per band in order — judged
/// ([`JitterLimit::judge`]). Without limits a band that cannot be computed
/// is an error; with limits it is a result of its own, `not-judged` with the
/// reason, so that a gate fails on it.
pub fn judge_bands(
    spectrum: &Spectrum,
    bands: &[Band],
    setup: &JitterSetup,
    ui_rate: Option<f64>,
    limits: &[JitterLimit],
) -> Result<Vec<JudgedBand>> {
    judge_bands_with(
        spectrum,
        bands,
        setup,
        ui_rate,
        limits,
        &crate::decision::DecisionRule::default(),
    )
}

/// Why a jitter verdict has no probability of conformance.
pub const JITTER_NO_DISTRIBUTION: &str = "the band's jitter is integrated from a table with no \
stated uncertainty, or from a record's spectrum, which carries no EDF in tauwise";

/// [`judge_bands`] with a decision rule ([`JitterLimit::judge_with`]).
pub fn judge_bands_with(
    spectrum: &Spectrum,
    bands: &[Band],
    setup: &JitterSetup,
    ui_rate: Option<f64>,
    limits: &[JitterLimit],
    rule: &crate::decision::DecisionRule,
) -> Result<Vec<JudgedBand>> {
    if !(limits.len() <= 1 || limits.len() == bands.len()) {
        return Err(Error::option(
            "--limit",
            format!(
                "{} --limit for {} --band: give one limit for every band, or one per band in the same order",
                limits.len(),
                bands.len()
            ),
        ));
    }
    bands
        .iter()
        .enumerate()
        .map(|(i, &b)| {
            let outcome = integrate_band(spectrum, b, setup, ui_rate);
            let limit = limits.get(if limits.len() == 1 { 0 } else { i });
            match (outcome, limit) {
                (Err(e), None) => Err(e),
                (o, _) => {
                    let o = o.map_err(|e| e.to_string());
                    let j = limit.map(|l| l.judge_with(o.as_ref().map_err(|e| e.as_str()), rule));
                    Ok((o, j))
                }
            }
        })
        .collect()
}

/// The most sub-intervals an oscillating integrand is split into.
const MAX_SPLITS: usize = 2_000_000;

/// ∫ over `band` of the piecewise power law `weighted` times the weightings
/// of `setup` and an optional kernel K(f) whose zeros are `spacing` Hz
/// apart. Each table piece is a power law: with nothing else it is
/// integrated exactly; otherwise by adaptive Gauss–Legendre in u = ln f,
/// ∫ v_a·(f/a)^e·f·Π|H|²·K du, the piece first cut at every half zero
/// spacing of K and of any loop difference's delay (1/T) so that each
/// sub-interval holds at most half an oscillation.
fn weighted_integral(
    weighted: &LogLog,
    band: Band,
    setup: &JitterSetup,
    kernel: Option<(&dyn Fn(f64) -> f64, f64)>,
) -> Result<f64> {
    let mut spacing = kernel.map(|k| k.1).unwrap_or(f64::INFINITY);
    for w in &setup.filters {
        if let Weighting::PllDiff { delay_s, .. } = w {
            if *delay_s > 0.0 {
                spacing = spacing.min(1.0 / delay_s);
            }
        }
    }
    let step = 0.5 * spacing;
    let mut var = 0.0;
    for (a, b) in weighted.pieces(band.from, band.to) {
        let (_, e) = weighted.law_at(0.5 * (a + b));
        let va = weighted.value_on_piece(a, b, a);
        if setup.filters.is_empty() && kernel.is_none() {
            var += power_integral_from(va, a, e, b);
            continue;
        }
        let g = |u: f64| {
            let f = u.exp();
            let k = kernel.map(|k| (k.0)(f)).unwrap_or(1.0);
            va * (f / a).powf(e) * f * setup.filters.iter().map(|w| w.h2(f)).product::<f64>() * k
        };
        let splits = ((b - a) / step).ceil();
        if !(splits <= MAX_SPLITS as f64) {
            return Err(Error::invalid(format!(
                "the band {} to {} holds more than {MAX_SPLITS} half-oscillations of the                  weighting (a long loop delay or a large N of periods); narrow the band",
                format_si(band.from, "Hz", 4),
                format_si(band.to, "Hz", 4)
            )));
        }
        let mut lo = a;
        let mut m = (a / step).floor() + 1.0;
        while lo < b {
            let hi = (m * step).min(b);
            if hi > lo {
                var += adaptive(&g, lo.ln(), hi.ln(), 1e-9);
            }
            lo = hi;
            m += 1.0;
        }
    }
    Ok(var)
}

/// Period jitter measured directly from a time record of edge times (TIE)
/// sampled once per period: P_k − T₀ = x_{k+1} − x_k.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RecordPeriodJitter {
    /// The standard deviation of x_{k+1} − x_k (the mean period error, a
    /// frequency offset, removed), s.
    pub period_rms_s: f64,
    /// The rms of the second difference x_{k+2} − 2x_{k+1} + x_k, s.
    pub c2c_rms_s: f64,
    /// N of the N-period jitter.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub periods: Option<u32>,
    /// The standard deviation of x_{k+N} − x_k, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub n_period_rms_s: Option<f64>,
    /// How many periods (first differences) the figures rest on.
    pub count: usize,
}

/// Period, cycle-to-cycle and N-period jitter of a phase record `x` (s; NaN
/// = gap, differences across a gap are left out) whose samples are one
/// period of the carrier apart: τ0·ν0 = 1 within 10⁻⁶ (otherwise the
/// differences are not of one period and this is an error naming both).
/// All frequencies up to ν0/2 count, which is what the spectrum's integral
/// over the whole band (0, ν0/2] gives (analytic: the kernels of
/// [`period_kernels`] are the transfer functions of these differences).
pub fn record_period_jitter(
    x: &[f64],
    tau0: f64,
    nu0: f64,
    periods: Option<u32>,
) -> Result<RecordPeriodJitter> {
    if !((tau0 * nu0 - 1.0).abs() <= 1e-6) {
        return Err(Error::invalid(format!(
            "period jitter from a record needs one sample per period: τ0 = {} but 1/ν0 = {} \
             (a TIE capture of every edge; give --carrier as 1/τ0 for such a record)",
            format_si(tau0, "s", 6),
            format_si(1.0 / nu0, "s", 6)
        )));
    }
    fn spread(d: impl Iterator<Item = f64>, remove_mean: bool) -> (f64, usize) {
        let v: Vec<f64> = d.filter(|v| v.is_finite()).collect();
        let n = v.len();
        if n == 0 {
            return (f64::NAN, 0);
        }
        let mean = if remove_mean {
            v.iter().sum::<f64>() / n as f64
        } else {
            0.0
        };
        let dof = if remove_mean { n.saturating_sub(1) } else { n };
        let ss: f64 = v.iter().map(|d| (d - mean) * (d - mean)).sum();
        ((ss / dof.max(1) as f64).sqrt(), n)
    }
    let (period, count) = spread(x.windows(2).map(|w| w[1] - w[0]), true);
    let (c2c, _) = spread(x.windows(3).map(|w| w[2] - 2.0 * w[1] + w[0]), false);
    if count < 3 {
        return Err(Error::insufficient(format!(
            "period jitter needs at least 3 periods without gaps; the record has {count}"
        )));
    }
    let n_period = match periods {
        Some(n) => {
            let n = n as usize;
            if x.len() <= n + 2 {
                return Err(Error::insufficient(format!(
                    "{n}-period jitter needs more than {} samples; the record has {}",
                    n + 2,
                    x.len()
                )));
            }
            Some(spread(x.iter().zip(&x[n..]).map(|(a, b)| b - a), true).0)
        }
        None => None,
    };
    Ok(RecordPeriodJitter {
        period_rms_s: period,
        c2c_rms_s: c2c,
        periods,
        n_period_rms_s: n_period,
        count,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_filters_and_bands() {
        assert_eq!(
            Weighting::parse("highpass:2:12k").unwrap(),
            Weighting::HighPass { order: 2, fc: 12e3 }
        );
        assert_eq!(
            Weighting::parse("lowpass:1:20MHz").unwrap(),
            Weighting::LowPass { order: 1, fc: 20e6 }
        );
        assert!(Weighting::parse("bandpass:1:1k").is_err());
        assert!(Weighting::parse("highpass:0:1k").is_err());
        assert!(Weighting::parse("highpass:1").is_err());
        assert_eq!(
            Band::parse("12k:20M").unwrap(),
            Band {
                from: 12e3,
                to: 20e6
            }
        );
        assert!(Band::parse("20M:12k").is_err());
        assert!(Band::parse("12k").is_err());
    }

    /// Butterworth weighting against a dense trapezoid of the textbook
    /// integrand ∫ S_φ |H|² df (direct check of the quadrature).
    #[test]
    fn weighted_matches_dense_trapezoid() {
        let s = Spectrum::new(
            vec![10.0, 1e3, 1e5, 1e7],
            vec![-90.0, -130.0, -150.0, -155.0],
            Quantity::Lf,
            Some(10e6),
        )
        .unwrap();
        let setup = JitterSetup {
            filters: vec![
                Weighting::HighPass { order: 3, fc: 5e3 },
                Weighting::LowPass { order: 2, fc: 2e6 },
            ],
            ..Default::default()
        };
        let band = Band {
            from: 100.0,
            to: 5e6,
        };
        let got = integrate_band(&s, band, &setup, None)
            .unwrap()
            .rms_rad
            .powi(2);
        let t = LogLog::new(&s.f, &s.to(Quantity::Sphi).unwrap().values).unwrap();
        let n = 2_000_000;
        let l = (band.to / band.from).ln();
        let mut want = 0.0;
        let g = |f: f64| t.eval(f, Extend::No).unwrap() * setup.weight(f);
        for i in 0..n {
            let a = band.from * (l * i as f64 / n as f64).exp();
            let b = band.from * (l * (i + 1) as f64 / n as f64).exp();
            want += 0.5 * (g(a) + g(b)) * (b - a);
        }
        assert!((got / want - 1.0).abs() < 1e-6, "{got} {want}");
    }
}
