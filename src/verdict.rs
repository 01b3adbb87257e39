//! The verdict vocabulary every check shares — wander masks, jitter limits,
//! holdover budgets, and whatever later builds on them (a fleet matrix,
//! decision rules).
//!
//! A check ends in a [`Judgement`]:
//! - [`Verdict`]: `meets` (every checked point is within the limit),
//!   `exceeds` (at least one checked point is beyond it), or `not-judged`
//!   (the check could not be made: a quantity that feeds it is NaN or
//!   infinite, nothing of the criterion's range could be checked, too few
//!   Monte Carlo paths, a band outside the table …); a `not-judged` verdict
//!   always carries its reason;
//! - [`Coverage`]: `full` when the check covered the whole range the
//!   criterion sets (a mask's τ range), `partial` when only part of it
//!   (the verdict then speaks for the checked part only, and says so),
//!   `none` when nothing was checked.
//!
//! [`gate`] is the rule behind `--fail-on-violation`: a set of judgements
//! passes only when none `exceeds` and none is `not-judged`. A `partial`
//! coverage does not fail the gate by itself; it is written beside the
//! verdict in every output.
//!
//! ```
//! use tauwise::verdict::{gate, Coverage, Gate, Judgement, Verdict};
//! let a = Judgement::judged(false, Coverage::Full);
//! let b = Judgement::not_judged("TDEV at τ = 10 s is not finite");
//! assert_eq!(a.verdict, Verdict::Meets);
//! assert_eq!(gate([&a]), Gate::Pass);
//! assert_eq!(gate([&a, &b]), Gate::NotJudged);
//! assert_eq!(serde_json::to_value(&b).unwrap()["verdict"], "not-judged");
//! ```

use serde::{Deserialize, Serialize};

/// The outcome of one check.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// Every checked point is within the limit.
    Meets,
    /// At least one checked point is beyond the limit.
    Exceeds,
    /// The check could not be made (the reason is given beside it).
    NotJudged,
}

impl Verdict {
    /// `meets`, `exceeds`, `not-judged` (the JSON and CSV word).
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Meets => "meets",
            Verdict::Exceeds => "exceeds",
            Verdict::NotJudged => "not-judged",
        }
    }

    /// The word for tables and reports: `MEETS`, `EXCEEDS`, `NOT JUDGED`.
    pub fn shout(self) -> &'static str {
        match self {
            Verdict::Meets => "MEETS",
            Verdict::Exceeds => "EXCEEDS",
            Verdict::NotJudged => "NOT JUDGED",
        }
    }
}

/// How much of the criterion's range a check covered.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Coverage {
    /// The whole range the criterion sets.
    Full,
    /// Part of it: the verdict speaks for the checked part only.
    Partial,
    /// Nothing was checked.
    None,
}

impl Coverage {
    /// `full`, `partial`, `none`.
    pub fn name(self) -> &'static str {
        match self {
            Coverage::Full => "full",
            Coverage::Partial => "partial",
            Coverage::None => "none",
        }
    }
}

/// A check's verdict, its coverage and, when it is not a plain full
/// `meets`/`exceeds`, the reason in words. Serialised flat:
/// `{"verdict": "meets", "coverage": "partial", "reason": "…"}`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Judgement {
    /// Meets, exceeds or not judged.
    pub verdict: Verdict,
    /// Full, partial or no coverage of the criterion's range.
    pub coverage: Coverage,
    /// Why the check was not judged, or what part it did not cover;
    /// `None` for a judged check of full coverage.
    pub reason: Option<String>,
}

impl Judgement {
    /// A judged check: `exceeds` when `exceeded`, else `meets`.
    pub fn judged(exceeded: bool, coverage: Coverage) -> Self {
        Self {
            verdict: if exceeded {
                Verdict::Exceeds
            } else {
                Verdict::Meets
            },
            coverage,
            reason: None,
        }
    }

    /// A check that could not be judged, with the reason.
    pub fn not_judged(reason: impl Into<String>) -> Self {
        Self {
            verdict: Verdict::NotJudged,
            coverage: Coverage::None,
            reason: Some(reason.into()),
        }
    }

    /// The same judgement with a reason (or coverage note) attached.
    pub fn because(mut self, reason: impl Into<String>) -> Self {
        self.reason = Some(reason.into());
        self
    }

    /// Whether this judgement fails `--fail-on-violation` (exceeds or not judged).
    pub fn fails_gate(&self) -> bool {
        self.verdict != Verdict::Meets
    }

    /// The verdict cell of a table: `MEETS`, `EXCEEDS`, `NOT JUDGED`, with
    /// `(partial coverage)` after a judged verdict of partial coverage.
    pub fn cell(&self) -> String {
        match (self.verdict, self.coverage) {
            (Verdict::NotJudged, _) => Verdict::NotJudged.shout().to_string(),
            (v, Coverage::Partial) => format!("{} (partial coverage)", v.shout()),
            (v, _) => v.shout().to_string(),
        }
    }
}

/// What a set of judgements means for `--fail-on-violation`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Gate {
    /// Every judgement meets its limit (or there is none).
    Pass,
    /// At least one exceeds its limit.
    Exceeds,
    /// None exceeds, but at least one could not be judged.
    NotJudged,
}

/// The gate over a set of judgements: [`Gate::Exceeds`] when any exceeds,
/// else [`Gate::NotJudged`] when any is not judged, else [`Gate::Pass`].
pub fn gate<'a>(judgements: impl IntoIterator<Item = &'a Judgement>) -> Gate {
    let mut out = Gate::Pass;
    for j in judgements {
        match j.verdict {
            Verdict::Exceeds => return Gate::Exceeds,
            Verdict::NotJudged => out = Gate::NotJudged,
            Verdict::Meets => {}
        }
    }
    out
}

/// Name the first non-finite value among `values` (`what` at `where`) for a
/// not-judged reason: `"p95 of |TE| at t = 3.2e196 s is inf"`.
pub fn first_non_finite<'a>(
    values: impl IntoIterator<Item = (&'a str, f64, f64)>,
    unit_of_where: &str,
) -> Option<String> {
    values
        .into_iter()
        .find(|v| !v.1.is_finite())
        .map(|(what, v, at)| {
            format!(
                "{what} at {} is {} (the computation overflowed or is undefined there)",
                crate::units::format_si(at, unit_of_where, 4),
                if v.is_nan() { "NaN" } else { "infinite" }
            )
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gate_orders_exceeds_before_not_judged() {
        let m = Judgement::judged(false, Coverage::Full);
        let p = Judgement::judged(false, Coverage::Partial);
        let e = Judgement::judged(true, Coverage::Partial);
        let n = Judgement::not_judged("x");
        assert_eq!(gate([&m, &p]), Gate::Pass);
        assert_eq!(gate([&m, &n, &e]), Gate::Exceeds);
        assert_eq!(gate([&n, &m]), Gate::NotJudged);
        assert_eq!(gate(std::iter::empty::<&Judgement>()), Gate::Pass);
        assert_eq!(p.cell(), "MEETS (partial coverage)");
        assert_eq!(n.cell(), "NOT JUDGED");
    }

    #[test]
    fn serde_round_trip() {
        let j = Judgement::judged(true, Coverage::Partial).because("τ above 3 h not checked");
        let v = serde_json::to_value(&j).unwrap();
        assert_eq!(v["verdict"], "exceeds");
        assert_eq!(v["coverage"], "partial");
        let back: Judgement = serde_json::from_value(v).unwrap();
        assert_eq!(back, j);
    }
}
