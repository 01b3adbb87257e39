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
//! - Butterworth magnitude weightings of order n and corner f_c:
//!   high-pass |H|² = 1/(1 + (f_c/f)^{2n}), low-pass |H|² = 1/(1 + (f/f_c)^{2n});
//!   several multiply. With one of these the integral is done by adaptive
//!   Gauss–Legendre quadrature in log f on each table segment (relative
//!   tolerance 10⁻⁹).
//! - A filter file gives |H(f)|² in dB against f, interpolated linearly in
//!   log f / dB like the table.
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

/// A Butterworth magnitude weighting.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Weighting {
    /// High-pass of order n at corner f_c: |H|² = 1/(1 + (f_c/f)^{2n}).
    HighPass {
        /// Order n ≥ 1.
        order: u32,
        /// Corner frequency f_c in Hz.
        fc: f64,
    },
    /// Low-pass of order n at corner f_c: |H|² = 1/(1 + (f/f_c)^{2n}).
    LowPass {
        /// Order n ≥ 1.
        order: u32,
        /// Corner frequency f_c in Hz.
        fc: f64,
    },
}

impl Weighting {
    /// Parse `highpass:ORDER:FC` or `lowpass:ORDER:FC` (FC with units, e.g.
    /// `highpass:1:12k`) through the one filter parser,
    /// [`crate::parse::Filter`].
    pub fn parse(text: &str) -> Result<Self> {
        Ok(text.parse::<crate::parse::Filter>()?.into())
    }

    /// |H(f)|².
    pub fn h2(&self, f: f64) -> f64 {
        match *self {
            Weighting::HighPass { order, fc } => 1.0 / (1.0 + (fc / f).powi(2 * order as i32)),
            Weighting::LowPass { order, fc } => 1.0 / (1.0 + (f / fc).powi(2 * order as i32)),
        }
    }

    /// A short description (`highpass:1:12 kHz`).
    pub fn describe(&self) -> String {
        match *self {
            Weighting::HighPass { order, fc } => {
                format!("highpass:{order}:{}", format_si(fc, "Hz", 4))
            }
            Weighting::LowPass { order, fc } => {
                format!("lowpass:{order}:{}", format_si(fc, "Hz", 4))
            }
        }
    }
}

impl From<crate::parse::Filter> for Weighting {
    fn from(f: crate::parse::Filter) -> Self {
        if f.highpass {
            Weighting::HighPass {
                order: f.order,
                fc: f.corner,
            }
        } else {
            Weighting::LowPass {
                order: f.order,
                fc: f.corner,
            }
        }
    }
}

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

/// Weighting and extras applied to every band.
#[derive(Debug, Clone, Default)]
pub struct JitterSetup {
    /// Butterworth weightings (multiplied).
    pub filters: Vec<Weighting>,
    /// |H(f)|² as a linear table (from a filter file of dB values).
    pub filter_table: Option<LogLog>,
    /// A name for the filter table (the file), for the description.
    pub filter_table_name: Option<String>,
    /// Spurs added when inside a band.
    pub spurs: Vec<Spur>,
    /// Allow bands outside the table (and filter table) by continuing the end slopes.
    pub extrapolate: bool,
}

impl JitterSetup {
    /// A description of the weighting (`none` when unweighted).
    pub fn describe(&self) -> String {
        let mut parts: Vec<String> = self.filters.iter().map(|w| w.describe()).collect();
        if let Some(n) = &self.filter_table_name {
            parts.push(format!("file:{n}"));
        } else if self.filter_table.is_some() {
            parts.push("file".into());
        }
        if parts.is_empty() {
            "none".into()
        } else {
            parts.join("+")
        }
    }

    fn weight(&self, f: f64) -> f64 {
        let mut h = self.filters.iter().map(|w| w.h2(f)).product::<f64>();
        if let Some(t) = &self.filter_table {
            h *= t.eval(f, Extend::EndSlope).unwrap_or(0.0);
        }
        h
    }
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
    if let Some(ft) = &setup.filter_table {
        check_cover("filter file", ft)?;
    }
    extrapolated.sort_by(|a, b| a.0.total_cmp(&b.0));
    extrapolated.dedup();
    let weighted = match &setup.filter_table {
        Some(ft) => table.product(ft, band.from, band.to, Extend::EndSlope)?,
        None => table.clone(),
    };
    let mut var = 0.0;
    for (a, b) in weighted.pieces(band.from, band.to) {
        let (_, e) = weighted.law_at(0.5 * (a + b));
        let va = weighted.value_on_piece(a, b, a);
        var += if setup.filters.is_empty() {
            power_integral_from(va, a, e, b)
        } else {
            // In u = ln f: ∫ v_a·(f/a)^e·f·Π|H|² du, smooth on each piece.
            let g = |u: f64| {
                let f = u.exp();
                va * (f / a).powf(e) * f * setup.filters.iter().map(|w| w.h2(f)).product::<f64>()
            };
            adaptive(&g, a.ln(), b.ln(), 1e-9)
        };
    }
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
