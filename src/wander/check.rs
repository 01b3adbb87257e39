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

use super::masks::{Mask, Metric, CONDITIONS_NOTE};

/// The outcome of one mask check.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// Every measured τ inside the mask is at or below the limit.
    Pass,
    /// At least one measured τ exceeds the limit.
    Fail,
    /// No measured τ falls inside the mask's τ range: nothing was checked.
    NotCovered,
}

impl Verdict {
    /// `pass`, `fail`, `not-covered`.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Pass => "pass",
            Verdict::Fail => "fail",
            Verdict::NotCovered => "not-covered",
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

/// The result of checking one curve against one mask.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MaskCheck {
    /// The mask's name.
    pub name: String,
    /// Where the mask's values come from (for built-ins: recalled from memory).
    pub source_note: String,
    /// The metric checked.
    pub metric: Metric,
    /// Pass, fail or not covered.
    pub verdict: Verdict,
    /// Largest value/limit over the checked τ (None when nothing was checked).
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
    pub checked_range: Option<(f64, f64)>,
    /// Every checked τ above the limit.
    pub violations: Vec<Violation>,
    /// What the tool cannot know about formal compliance.
    pub conditions: &'static str,
}

/// Log–log interpolation of a measured curve between two points.
fn interp_loglog(a: (f64, f64), b: (f64, f64), tau: f64) -> f64 {
    let u = (tau.ln() - a.0.ln()) / (b.0.ln() - a.0.ln());
    (a.1.ln() + u * (b.1.ln() - a.1.ln())).exp()
}

/// Check a measured curve, given as `(τ, value)` pairs in increasing τ
/// (seconds, seconds), against one mask. Points with non-finite or
/// non-positive values are ignored.
///
/// ```
/// use tauwise::wander::{check::{check_mask, Verdict}, masks::{builtin, Metric}};
/// let mtie = builtin("g8262-opt1").unwrap().into_iter()
///     .find(|m| m.metric == Metric::Mtie).unwrap();
/// // A frequency offset of 2e-8 gives MTIE(τ) = 2e-8·τ (analytic).
/// let curve: Vec<(f64, f64)> = [1.0, 2.0, 4.0].iter().map(|&t| (t, 2e-8 * t)).collect();
/// let c = check_mask(&mtie, &curve);
/// assert_eq!(c.verdict, Verdict::Fail);
/// // 2e-8·τ = 40 ns·τ^0.1  ⇒  τ = 2^(1/0.9) s.
/// assert!((c.crossing_tau.unwrap() - 2f64.powf(1.0 / 0.9)).abs() < 1e-9);
/// ```
pub fn check_mask(mask: &Mask, curve: &[(f64, f64)]) -> MaskCheck {
    let pts: Vec<(f64, f64, f64)> = curve
        .iter()
        .filter(|(t, v)| t.is_finite() && *t > 0.0 && v.is_finite() && *v > 0.0)
        .filter_map(|&(t, v)| mask.limit(t).map(|l| (t, v, l)))
        .collect();
    let mut worst: Option<(f64, f64)> = None;
    let mut violations = Vec::new();
    for &(t, v, l) in &pts {
        let r = v / l;
        if worst.map_or(true, |(w, _)| r > w) {
            worst = Some((r, t));
        }
        if r > 1.0 {
            violations.push(Violation {
                tau: t,
                value: v,
                limit: l,
                ratio: r,
            });
        }
    }
    let crossing_tau = pts.iter().position(|p| p.1 > p.2).map(|k| {
        if k == 0 {
            return pts[0].0;
        }
        let a = (pts[k - 1].0, pts[k - 1].1);
        let b = (pts[k].0, pts[k].1);
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
    let verdict = if pts.is_empty() {
        Verdict::NotCovered
    } else if violations.is_empty() {
        Verdict::Pass
    } else {
        Verdict::Fail
    };
    MaskCheck {
        name: mask.name.clone(),
        source_note: mask.source_note.clone(),
        metric: mask.metric,
        verdict,
        worst_ratio: worst.map(|w| w.0),
        worst_margin_db: worst.map(|w| -20.0 * w.0.log10()),
        worst_tau: worst.map(|w| w.1),
        crossing_tau,
        checked: pts.len(),
        checked_range: pts.first().map(|f| (f.0, pts[pts.len() - 1].0)),
        violations,
        conditions: CONDITIONS_NOTE,
    }
}
