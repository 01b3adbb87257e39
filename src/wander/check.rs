//! Checking a measured MTIE or TDEV curve against a [`Mask`].
//!
//! For every measured τ inside the mask's range the ratio r = value / limit
//! is formed; the mask passes when every r ≤ 1. The worst margin is the
//! largest r, also given in dB as 20·log10(1/r) (an amplitude ratio: positive
//! = headroom, negative = excess). Where the curve first rises above the
//! limit between two measured τ, the crossing is located by interpolating the
//! measured curve linearly in log τ / log value (exact for a power law, such
//! as the MTIE y0·τ of a frequency offset) and solving against the mask's own
//! limit function by bisection.
//!
//! The verdict is the shared [`crate::verdict::Judgement`]: `meets` /
//! `exceeds` for what was checked, with the coverage of the mask's τ range
//! (`full` or `partial`, and in words which τ were not checked and why), or
//! `not-judged` with the reason when nothing was checked or a value that
//! feeds the verdict is not finite.

use super::masks::{Mask, Metric, CONDITIONS_NOTE};
use crate::units::format_si;
use crate::verdict::{Coverage, Judgement, Verdict};

/// A τ interval in seconds; `to` is `None` for a mask with no upper end.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TauRange {
    /// Lowest τ, s.
    pub from: f64,
    /// Highest τ, s (`None`: no upper end).
    pub to: Option<f64>,
}

/// The τ a record (and the requested range) lets a check reach for one
/// metric: from `bottom` to `top`, each with the reason for the limit in
/// words, for the coverage note.
#[derive(Debug, Clone, PartialEq)]
pub struct Support {
    /// Sampling interval τ0 of the record, s (the checked τ are m·τ0).
    pub tau0: f64,
    /// Lowest τ that may be checked, s.
    pub bottom: f64,
    /// Why nothing below `bottom` (e.g. "the record's τ0").
    pub bottom_why: String,
    /// Highest τ that may be checked, s.
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
}

/// One measured τ above the limit.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Violation {
    /// τ, s.
    pub tau: f64,
    /// Measured value, s.
    pub value: f64,
    /// The mask's limit at τ, s.
    pub limit: f64,
    /// value / limit (> 1).
    pub ratio: f64,
}

/// The result of checking one curve against one mask (serialised as the
/// `masks[]` members of `tauwise wander --format json`).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MaskCheck {
    /// The mask's name.
    pub name: String,
    /// Where the mask's values come from (for built-ins: recalled from memory).
    pub source_note: String,
    /// The metric checked.
    pub metric: Metric,
    /// Meets, exceeds or not judged; full or partial coverage of the
    /// mask's τ range, and in words what was not covered or why the check
    /// could not be judged.
    #[serde(flatten)]
    pub judgement: Judgement,
    /// Largest value/limit over the checked τ (None when nothing was checked
    /// or the check could not be judged).
    pub worst_ratio: Option<f64>,
    /// The same margin in dB, 20·log10(limit/value): negative when violated.
    pub worst_margin_db: Option<f64>,
    /// τ of the worst ratio, s.
    pub worst_tau: Option<f64>,
    /// Estimated τ where the curve first rises above the limit (interpolated
    /// between measured τ); the first checked τ when it already violates there.
    pub crossing_tau: Option<f64>,
    /// Number of measured τ inside the mask's range.
    pub checked: usize,
    /// Lowest and highest measured τ that were checked, s.
    pub checked_range: Option<TauRange>,
    /// The mask's own τ range, s (its lower end is exclusive for the
    /// built-in formula masks).
    pub mask_range: TauRange,
    /// Every checked τ above the limit.
    pub violations: Vec<Violation>,
    /// What the tool cannot know about formal compliance.
    pub conditions: &'static str,
}

impl MaskCheck {
    /// The verdict.
    pub fn verdict(&self) -> Verdict {
        self.judgement.verdict
    }
}

/// Log–log interpolation of a measured curve between two points.
fn interp_loglog(a: (f64, f64), b: (f64, f64), tau: f64) -> f64 {
    let u = (tau.ln() - a.0.ln()) / (b.0.ln() - a.0.ln());
    (a.1.ln() + u * (b.1.ln() - a.1.ln())).exp()
}

/// Check a measured curve, given as `(τ, value)` pairs in increasing τ
/// (seconds, seconds), against one mask, where `support` says which τ the
/// record (and a requested range) allowed.
///
/// - Every measured τ inside the mask's range is checked; a value or limit
///   there that is NaN, infinite or negative, or a ratio value/limit that
///   overflows, makes the check `not-judged`, naming the τ and the value.
/// - Coverage is `full` when the checked τ reach both ends of the mask's
///   range as far as τ = m·τ0 can (the first checked τ is the first
///   multiple of τ0 inside the mask and τ0 is not above the mask's start;
///   the last is the last multiple of τ0 up to the mask's end, which must
///   be finite), `partial` otherwise — the reason says which τ were not
///   checked and why (the record's τ0 or span, the requested range, a mask
///   with no upper end) — and `none` when no τ was checked (then
///   `not-judged`).
///
/// ```
/// use tauwise::verdict::{Coverage, Verdict};
/// use tauwise::wander::{check::{check_mask, Support}, masks::{builtin, Metric}};
/// let mtie = builtin("g8262-opt1").unwrap().into_iter()
///     .find(|m| m.metric == Metric::Mtie).unwrap();
/// // A frequency offset of 2e-8 gives MTIE(τ) = 2e-8·τ (analytic).
/// let curve: Vec<(f64, f64)> = [1.0, 2.0, 4.0].iter().map(|&t| (t, 2e-8 * t)).collect();
/// let c = check_mask(&mtie, &curve, &Support::unbounded(1.0));
/// assert_eq!(c.judgement.verdict, Verdict::Exceeds);
/// // Checked 1 s to 4 s of a mask that runs from 0.1 s to 1000 s.
/// assert_eq!(c.judgement.coverage, Coverage::Partial);
/// // 2e-8·τ = 40 ns·τ^0.1  ⇒  τ = 2^(1/0.9) s.
/// assert!((c.crossing_tau.unwrap() - 2f64.powf(1.0 / 0.9)).abs() < 1e-9);
/// ```
pub fn check_mask(mask: &Mask, curve: &[(f64, f64)], support: &Support) -> MaskCheck {
    let (lo, hi) = mask.tau_range();
    let mut out = MaskCheck {
        name: mask.name.clone(),
        source_note: mask.source_note.clone(),
        metric: mask.metric,
        judgement: Judgement::not_judged(""),
        worst_ratio: None,
        worst_margin_db: None,
        worst_tau: None,
        crossing_tau: None,
        checked: 0,
        checked_range: None,
        mask_range: TauRange {
            from: lo,
            to: hi.is_finite().then_some(hi),
        },
        violations: Vec::new(),
        conditions: CONDITIONS_NOTE,
    };
    let metric = mask.metric.name().to_uppercase();
    let pts: Vec<(f64, f64, f64)> = curve
        .iter()
        .filter(|(t, _)| t.is_finite() && *t > 0.0)
        .filter_map(|&(t, v)| mask.limit(t).map(|l| (t, v, l)))
        .collect();
    if pts.is_empty() {
        out.judgement = Judgement::not_judged(format!(
            "no measured τ inside the mask's range ({}): nothing was checked",
            range_words(lo, hi)
        ));
        return out;
    }
    out.checked = pts.len();
    let (first, last) = (pts[0].0, pts[pts.len() - 1].0);
    out.checked_range = Some(TauRange {
        from: first,
        to: Some(last),
    });
    // Anything non-finite that feeds the verdict: not judged, say what.
    for &(t, v, l) in &pts {
        let why = if !v.is_finite() || v < 0.0 {
            Some(format!(
                "{metric} at τ = {} is {}",
                format_si(t, "s", 4),
                word(v)
            ))
        } else if !(l.is_finite() && l > 0.0) {
            Some(format!(
                "the mask's limit at τ = {} is {}",
                format_si(t, "s", 4),
                word(l)
            ))
        } else if !(v / l).is_finite() {
            Some(format!(
                "{metric}/limit at τ = {} overflows ({v:e} s / {l:e} s)",
                format_si(t, "s", 4)
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
            out.violations.push(Violation {
                tau: t,
                value: v,
                limit: l,
                ratio: r,
            });
        }
    }
    out.crossing_tau = pts.iter().position(|p| p.1 > p.2).map(|k| {
        if k == 0 {
            return pts[0].0;
        }
        let a = (pts[k - 1].0, pts[k - 1].1);
        let b = (pts[k].0, pts[k].1);
        if !(a.1 > 0.0) {
            return b.0;
        }
        // f(τ) = ln(measured/limit): ≤ 0 at a, > 0 at b. The limit may be
        // undefined between the two only if the mask has a hole; then keep b.
        let f = |tau: f64| mask.limit(tau).map(|l| (interp_loglog(a, b, tau) / l).ln());
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
    out.worst_ratio = worst.map(|w| w.0);
    // A value exactly at the limit has margin 0, not −0.
    out.worst_margin_db = worst
        .map(|w| 0.0 - 20.0 * w.0.log10())
        .filter(|m| m.is_finite());
    out.worst_tau = worst.map(|w| w.1);
    let (coverage, note) = coverage(mask, lo, hi, first, last, support);
    out.judgement = Judgement::judged(!out.violations.is_empty(), coverage);
    out.judgement.reason = note;
    out
}

/// NaN, infinite or negative, in words.
fn word(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        "infinite (the computation overflowed)".into()
    } else if v < 0.0 {
        format!("negative ({v:e} s)")
    } else {
        format!("{v:e} s")
    }
}

fn range_words(lo: f64, hi: f64) -> String {
    if hi.is_finite() {
        format!("{} to {}", format_si(lo, "s", 4), format_si(hi, "s", 4))
    } else {
        format!("{} upwards, no upper end", format_si(lo, "s", 4))
    }
}

/// Coverage of the mask's range [lo, hi] by the checked τ [first, last]
/// (module notes of [`check_mask`]), and the note for a partial one.
fn coverage(
    mask: &Mask,
    lo: f64,
    hi: f64,
    first: f64,
    last: f64,
    s: &Support,
) -> (Coverage, Option<String>) {
    const EPS: f64 = 1e-9;
    let tau0 = s.tau0;
    let mut missing = Vec::new();
    // Low end: the first multiple of τ0 at or above the bottom that the
    // mask limits.
    let bottom = s.bottom.max(tau0);
    let low_ok = if lo < bottom * (1.0 - EPS) {
        false
    } else {
        let mut m = ((lo / tau0) - EPS).ceil().max(1.0);
        if mask.limit(m * tau0).is_none() {
            m += 1.0;
        }
        first <= m * tau0 * (1.0 + EPS)
    };
    if !low_ok {
        let why = if lo < bottom * (1.0 - EPS) {
            format!(" ({})", s.bottom_why)
        } else {
            String::new()
        };
        missing.push(format!(
            "the mask's τ from {} to {} were not checked{why}",
            format_si(lo, "s", 4),
            format_si(first, "s", 4)
        ));
    }
    // High end.
    let high_ok = if !hi.is_finite() || hi > s.top * (1.0 + EPS) {
        false
    } else {
        let mut m = (hi / tau0 + EPS).floor();
        if m >= 1.0 && mask.limit(m * tau0).is_none() {
            m -= 1.0;
        }
        last >= m * tau0 * (1.0 - EPS)
    };
    if !high_ok {
        let why = if !hi.is_finite() && s.top.is_finite() {
            format!(" ({}; the mask has no upper end)", s.top_why)
        } else if !hi.is_finite() {
            " (the mask has no upper end)".to_string()
        } else if hi > s.top * (1.0 + EPS) {
            format!(" ({})", s.top_why)
        } else {
            String::new()
        };
        missing.push(format!(
            "the mask's τ above {} {}were not checked{why}",
            format_si(last, "s", 4),
            if hi.is_finite() {
                format!("up to {} ", format_si(hi, "s", 4))
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
                "partial coverage: checked τ {} to {} of the mask's {}; {}",
                format_si(first, "s", 4),
                format_si(last, "s", 4),
                range_words(lo, hi),
                missing.join("; ")
            )),
        )
    }
}
