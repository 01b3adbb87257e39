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
//! The check itself is the one of every limit,
//! [`crate::limits::check::check_curve`]; this module gives it the
//! mask's words and the `masks[]` shape of the `wander` document.
//!
//! The verdict is the shared [`crate::verdict::Judgement`]: `meets` /
//! `exceeds` for what was checked, with the coverage of the mask's τ range
//! (`full` or `partial`, and in words which τ were not checked and why), or
//! `not-judged` with the reason when nothing was checked or a value that
//! feeds the verdict is not finite.

use super::masks::{Mask, Metric, CONDITIONS_NOTE};
use crate::limits::check::{check_curve, Words};
use crate::verdict::{Judgement, Verdict};

/// A τ interval in seconds; `to` is `None` for a mask with no upper end.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TauRange {
    /// Lowest τ, s.
    pub from: f64,
    /// Highest τ, s (`None`: no upper end).
    pub to: Option<f64>,
}

pub use crate::limits::check::Support;

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
    /// TDEV masks: every checked τ with its value, limit, EDF and
    /// probability of conformance ([`crate::decision`]); empty (and absent
    /// in JSON) for MTIE, which has no distribution here.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub checked_points: Vec<crate::decision::CheckedPoint>,
}

impl MaskCheck {
    /// The verdict.
    pub fn verdict(&self) -> Verdict {
        self.judgement.verdict
    }
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
    let metric = mask.metric.name().to_uppercase();
    let words = Words {
        metric: &metric,
        what: "mask",
        axis: "τ",
        axis_unit: "s",
        value_unit: "s",
    };
    let c = check_curve(&|t| mask.limit(t), (lo, hi), curve, support, &words);
    let worst = c.worst;
    MaskCheck {
        name: mask.name.clone(),
        source_note: mask.source_note.clone(),
        metric: mask.metric,
        judgement: c.judgement,
        worst_ratio: worst.map(|w| w.0),
        // A value exactly at the limit has margin 0, not −0.
        worst_margin_db: worst
            .map(|w| 0.0 - 20.0 * w.0.log10())
            .filter(|m| m.is_finite()),
        worst_tau: worst.map(|w| w.1),
        crossing_tau: c.crossing,
        checked: c.checked,
        checked_range: c
            .checked_range
            .map(|(from, to)| TauRange { from, to: Some(to) }),
        mask_range: TauRange {
            from: lo,
            to: hi.is_finite().then_some(hi),
        },
        violations: c
            .excesses
            .iter()
            .map(|e| Violation {
                tau: e.at,
                value: e.value,
                limit: e.limit,
                ratio: e.ratio,
            })
            .collect(),
        conditions: CONDITIONS_NOTE,
        checked_points: Vec::new(),
    }
}
