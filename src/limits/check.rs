//! One check of a measured curve against a limit, for every metric: the
//! MTIE/TDEV masks of `wander`, the σ limits of `stability` and the L(f)
//! limits of `jitter` all go through [`check_curve`].
//!
//! For every measured point x (a τ in seconds, or an offset in hertz) inside
//! the limit's range the ratio r = value / limit is formed; the limit is met
//! when every r ≤ 1. The worst margin is the largest r, also given in dB:
//! 20·log10(1/r) for an amplitude (σ, MTIE, TDEV), 10·log10(1/r) for a power
//! density (L(f), whose values enter as 10^(L/10)) — positive = headroom,
//! negative = excess. Where the curve first rises above the limit between two
//! measured points, the crossing is located by interpolating the measured
//! curve linearly in log x / log value (exact for a power law, such as the
//! MTIE y0·τ of a frequency offset, or σ_y ∝ τ^μ; for L(f), dB linear in
//! log f, the interpolation of the table itself) and solving against the
//! limit's own function by bisection.
//!
//! Coverage ([`Support`]): `full` when the checked points reach both ends of
//! the limit's range as far as the measurement can (on a τ lattice m·τ0: the
//! first and last lattice points inside the range; on a continuous axis such
//! as a table's offsets: the ends themselves), `partial` otherwise — the
//! reason says which part was not checked and why — and `none` when nothing
//! was checked (then `not-judged`).

use crate::units::format_si;
use crate::verdict::{Coverage, Judgement};

/// The x values a measurement lets a check reach: from `bottom` to `top`,
/// each with the reason for the limit in words, for the coverage note.
#[derive(Debug, Clone, PartialEq)]
pub struct Support {
    /// The lattice step: measured τ are m·`tau0` (the record's sampling
    /// interval). 0 for a continuous axis (the offsets of an L(f) table,
    /// interpolated between its points).
    pub tau0: f64,
    /// Lowest x that may be checked.
    pub bottom: f64,
    /// Why nothing below `bottom` (e.g. "the record's τ0").
    pub bottom_why: String,
    /// Highest x that may be checked.
    pub top: f64,
    /// Why nothing above `top` (e.g. "the record's span").
    pub top_why: String,
}

impl Support {
    /// No limit but the sampling interval: every τ = m·τ0 may be checked.
    pub fn unbounded(tau0: f64) -> Self {
        Self {
            tau0,
            bottom: tau0,
            bottom_why: "the record's τ0".into(),
            top: f64::INFINITY,
            top_why: String::new(),
        }
    }

    /// A continuous axis from `bottom` to `top` (the offsets of a table).
    pub fn continuous(bottom: f64, bottom_why: &str, top: f64, top_why: &str) -> Self {
        Self {
            tau0: 0.0,
            bottom,
            bottom_why: bottom_why.into(),
            top,
            top_why: top_why.into(),
        }
    }
}

/// How a check speaks of what it checks, in its reasons.
#[derive(Debug, Clone, Copy)]
pub struct Words<'a> {
    /// The metric in upper case (`MTIE`, `ADEV`, `L(f)`).
    pub metric: &'a str,
    /// What the limit is called (`mask`, `limit`).
    pub what: &'a str,
    /// The axis symbol (`τ`, `f`).
    pub axis: &'a str,
    /// The axis unit (`s`, `Hz`).
    pub axis_unit: &'a str,
    /// The unit of the values as compared (`s`, or empty for a fraction or
    /// a power ratio).
    pub value_unit: &'a str,
}

/// One measured point above the limit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Excess {
    /// x (τ, s, or offset, Hz).
    pub at: f64,
    /// Measured value (as compared: linear).
    pub value: f64,
    /// The limit at x.
    pub limit: f64,
    /// value / limit (> 1).
    pub ratio: f64,
}

/// The outcome of [`check_curve`].
#[derive(Debug, Clone, PartialEq)]
pub struct CurveCheck {
    /// Verdict, coverage and reason.
    pub judgement: Judgement,
    /// Largest value/limit over the checked points, and where.
    pub worst: Option<(f64, f64)>,
    /// Estimated x where the curve first rises above the limit (the first
    /// checked x when it already exceeds there).
    pub crossing: Option<f64>,
    /// Number of checked points.
    pub checked: usize,
    /// Lowest and highest checked x.
    pub checked_range: Option<(f64, f64)>,
    /// Every checked point above the limit.
    pub excesses: Vec<Excess>,
}

/// Log–log interpolation of a measured curve between two points.
fn interp_loglog(a: (f64, f64), b: (f64, f64), x: f64) -> f64 {
    let u = (x.ln() - a.0.ln()) / (b.0.ln() - a.0.ln());
    (a.1.ln() + u * (b.1.ln() - a.1.ln())).exp()
}

/// Check a measured curve, `(x, value)` pairs in increasing x (values
/// linear: seconds, a fraction, or a power ratio), against a limit function
/// `limit` (None outside its range) whose range is `range` (`lo`, `hi`; `hi`
/// may be infinite), where `support` says which x the measurement allowed.
///
/// - Every measured x inside the range is checked; a value or limit there
///   that is NaN, infinite or negative, or a ratio value/limit that
///   overflows, makes the check `not-judged`, naming x and the value.
/// - Coverage as in the module notes.
///
/// ```
/// use tauwise::limits::check::{check_curve, Support, Words};
/// use tauwise::verdict::{Coverage, Verdict};
/// // A flat limit of 1e-11 from 1 s to 100 s; σ_y = 1e-12·τ (analytic)
/// // crosses it at τ = 10 s.
/// let limit = |t: f64| (1.0..=100.0).contains(&t).then_some(1e-11);
/// let curve: Vec<(f64, f64)> = [1.0, 4.0, 16.0, 64.0].iter().map(|&t| (t, 1e-12 * t)).collect();
/// let words = Words { metric: "ADEV", what: "limit", axis: "τ", axis_unit: "s", value_unit: "" };
/// let c = check_curve(&limit, (1.0, 100.0), &curve, &Support::unbounded(1.0), &words);
/// assert_eq!(c.judgement.verdict, Verdict::Exceeds);
/// assert_eq!(c.judgement.coverage, Coverage::Partial); // 64 s to 100 s not measured
/// assert!((c.crossing.unwrap() - 10.0).abs() < 1e-9);
/// ```
pub fn check_curve(
    limit: &dyn Fn(f64) -> Option<f64>,
    range: (f64, f64),
    curve: &[(f64, f64)],
    support: &Support,
    w: &Words,
) -> CurveCheck {
    let (lo, hi) = range;
    let mut out = CurveCheck {
        judgement: Judgement::not_judged(""),
        worst: None,
        crossing: None,
        checked: 0,
        checked_range: None,
        excesses: Vec::new(),
    };
    let pts: Vec<(f64, f64, f64)> = curve
        .iter()
        .filter(|(t, _)| t.is_finite() && *t > 0.0)
        .filter_map(|&(t, v)| limit(t).map(|l| (t, v, l)))
        .collect();
    let at = |t: f64| format_si(t, w.axis_unit, 4);
    if pts.is_empty() {
        out.judgement = Judgement::not_judged(format!(
            "no measured {} inside the {}'s range ({}): nothing was checked",
            w.axis,
            w.what,
            range_words(lo, hi, w.axis_unit)
        ));
        return out;
    }
    out.checked = pts.len();
    let (first, last) = (pts[0].0, pts[pts.len() - 1].0);
    out.checked_range = Some((first, last));
    // Anything non-finite that feeds the verdict: not judged, say what.
    for &(t, v, l) in &pts {
        let why = if !v.is_finite() || v < 0.0 {
            Some(format!(
                "{} at {} = {} is {}",
                w.metric,
                w.axis,
                at(t),
                word(v, w.value_unit)
            ))
        } else if !(l.is_finite() && l > 0.0) {
            Some(format!(
                "the {}'s limit at {} = {} is {}",
                w.what,
                w.axis,
                at(t),
                word(l, w.value_unit)
            ))
        } else if !(v / l).is_finite() {
            let u = if w.value_unit.is_empty() {
                String::new()
            } else {
                format!(" {}", w.value_unit)
            };
            Some(format!(
                "{}/limit at {} = {} overflows ({v:e}{u} / {l:e}{u})",
                w.metric,
                w.axis,
                at(t)
            ))
        } else {
            None
        };
        if let Some(why) = why {
            out.judgement = Judgement::not_judged(format!("{why}: the check cannot be judged"));
            return out;
        }
    }
    let mut worst: Option<(f64, f64)> = None;
    for &(t, v, l) in &pts {
        let r = v / l;
        if worst.map_or(true, |(w, _)| r > w) {
            worst = Some((r, t));
        }
        if r > 1.0 {
            out.excesses.push(Excess {
                at: t,
                value: v,
                limit: l,
                ratio: r,
            });
        }
    }
    out.crossing = pts.iter().position(|p| p.1 > p.2).map(|k| {
        if k == 0 {
            return pts[0].0;
        }
        let a = (pts[k - 1].0, pts[k - 1].1);
        let b = (pts[k].0, pts[k].1);
        if !(a.1 > 0.0) {
            return b.0;
        }
        // f(x) = ln(measured/limit): ≤ 0 at a, > 0 at b. The limit may be
        // undefined between the two only if it has a hole; then keep b.
        let f = |x: f64| limit(x).map(|l| (interp_loglog(a, b, x) / l).ln());
        let (mut lo, mut hi) = (a.0.ln(), b.0.ln());
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            match f(mid.exp()) {
                Some(v) if v > 0.0 => hi = mid,
                Some(_) => lo = mid,
                None => return b.0,
            }
            if hi - lo < 1e-15 {
                break;
            }
        }
        hi.exp()
    });
    out.worst = worst;
    let (coverage, note) = coverage(limit, lo, hi, first, last, support, w);
    out.judgement = Judgement::judged(!out.excesses.is_empty(), coverage);
    out.judgement.reason = note;
    out
}

/// NaN, infinite or negative, in words.
fn word(v: f64, unit: &str) -> String {
    let u = if unit.is_empty() {
        String::new()
    } else {
        format!(" {unit}")
    };
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        "infinite (the computation overflowed)".into()
    } else if v < 0.0 {
        format!("negative ({v:e}{u})")
    } else {
        format!("{v:e}{u}")
    }
}

/// `1 s to 100 s`, or `1 s upwards, no upper end`.
pub fn range_words(lo: f64, hi: f64, unit: &str) -> String {
    if hi.is_finite() {
        format!("{} to {}", format_si(lo, unit, 4), format_si(hi, unit, 4))
    } else {
        format!("{} upwards, no upper end", format_si(lo, unit, 4))
    }
}

/// Coverage of the limit's range [lo, hi] by the checked x [first, last]
/// (module notes), and the note for a partial one.
fn coverage(
    limit: &dyn Fn(f64) -> Option<f64>,
    lo: f64,
    hi: f64,
    first: f64,
    last: f64,
    s: &Support,
    w: &Words,
) -> (Coverage, Option<String>) {
    const EPS: f64 = 1e-9;
    let tau0 = s.tau0;
    let lattice = tau0 > 0.0;
    let si = |v: f64| format_si(v, w.axis_unit, 4);
    let mut missing = Vec::new();
    // Low end: the first lattice point at or above the bottom that the
    // limit covers (on a continuous axis, the limit's own start).
    let bottom = if lattice {
        s.bottom.max(tau0)
    } else {
        s.bottom
    };
    let low_ok = if lo < bottom * (1.0 - EPS) {
        false
    } else if lattice {
        let mut m = ((lo / tau0) - EPS).ceil().max(1.0);
        if limit(m * tau0).is_none() {
            m += 1.0;
        }
        first <= m * tau0 * (1.0 + EPS)
    } else {
        first <= lo * (1.0 + EPS)
    };
    if !low_ok {
        let why = if lo < bottom * (1.0 - EPS) {
            format!(" ({})", s.bottom_why)
        } else {
            String::new()
        };
        missing.push(format!(
            "the {}'s {} from {} to {} were not checked{why}",
            w.what,
            w.axis,
            si(lo),
            si(first)
        ));
    }
    // High end.
    let high_ok = if !hi.is_finite() || hi > s.top * (1.0 + EPS) {
        false
    } else if lattice {
        let mut m = (hi / tau0 + EPS).floor();
        if m >= 1.0 && limit(m * tau0).is_none() {
            m -= 1.0;
        }
        last >= m * tau0 * (1.0 - EPS)
    } else {
        last >= hi * (1.0 - EPS)
    };
    if !high_ok {
        let why = if !hi.is_finite() && s.top.is_finite() {
            format!(" ({}; the {} has no upper end)", s.top_why, w.what)
        } else if !hi.is_finite() {
            format!(" (the {} has no upper end)", w.what)
        } else if hi > s.top * (1.0 + EPS) {
            format!(" ({})", s.top_why)
        } else {
            String::new()
        };
        missing.push(format!(
            "the {}'s {} above {} {}were not checked{why}",
            w.what,
            w.axis,
            si(last),
            if hi.is_finite() {
                format!("up to {} ", si(hi))
            } else {
                String::new()
            }
        ));
    }
    if missing.is_empty() {
        (Coverage::Full, None)
    } else {
        (
            Coverage::Partial,
            Some(format!(
                "partial coverage: checked {} {} to {} of the {}'s {}; {}",
                w.axis,
                si(first),
                si(last),
                w.what,
                range_words(lo, hi, w.axis_unit),
                missing.join("; ")
            )),
        )
    }
}
