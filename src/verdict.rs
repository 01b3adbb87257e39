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
//! passes only when none `exceeds`, none is `not-judged` and none is
//! `undecided` (the fourth verdict, of the guarded decision rule of
//! [`crate::decision`]). A `partial`
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
    /// The guarded decision rule ([`crate::decision`]) could neither accept
    /// nor reject at its conformance level: the estimate's verdict and the
    /// probability are given beside it.
    Undecided,
}

impl Verdict {
    /// `meets`, `exceeds`, `not-judged` (the JSON and CSV word).
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Meets => "meets",
            Verdict::Exceeds => "exceeds",
            Verdict::NotJudged => "not-judged",
            Verdict::Undecided => "undecided",
        }
    }

    /// The word for tables and reports: `MEETS`, `EXCEEDS`, `NOT JUDGED`.
    pub fn shout(self) -> &'static str {
        match self {
            Verdict::Meets => "MEETS",
            Verdict::Exceeds => "EXCEEDS",
            Verdict::NotJudged => "NOT JUDGED",
            Verdict::Undecided => "UNDECIDED",
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
/// `meets`/`exceeds`, the reason in words; the decision rule that reached
/// it and, where the checked quantity has a distribution, the probability
/// of conformance ([`crate::decision`]). Serialised flat:
/// `{"verdict": "meets", "coverage": "partial", "reason": "…",
/// "decision_rule": "simple", "probability": 0.997}`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Judgement {
    /// Meets, exceeds or not judged.
    pub verdict: Verdict,
    /// Full, partial or no coverage of the criterion's range.
    pub coverage: Coverage,
    /// Why the check was not judged, or what part it did not cover;
    /// `None` for a judged check of full coverage.
    pub reason: Option<String>,
    /// The decision rule the verdict was reached by (`simple` unless a
    /// guarded rule was asked and could apply).
    #[serde(default)]
    pub decision_rule: crate::decision::Rule,
    /// The guarded rule's conformance level (absent for `simple`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub conformance: Option<f64>,
    /// The probability of conformance P(true value within the limit), the
    /// smallest over the checked points (absent where the quantity has no
    /// distribution here, or the check was not judged).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub probability: Option<f64>,
    /// The estimate's own verdict, where the decision rule reached another
    /// (always given beside `undecided`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub at_estimate: Option<Verdict>,
    /// What is known of the uncertainty when no probability (or not one for
    /// every point) is available: `no uncertainty available: …`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub uncertainty: Option<String>,
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
            decision_rule: crate::decision::Rule::Simple,
            conformance: None,
            probability: None,
            at_estimate: None,
            uncertainty: None,
        }
    }

    /// A check that could not be judged, with the reason.
    pub fn not_judged(reason: impl Into<String>) -> Self {
        Self {
            verdict: Verdict::NotJudged,
            coverage: Coverage::None,
            reason: Some(reason.into()),
            decision_rule: crate::decision::Rule::Simple,
            conformance: None,
            probability: None,
            at_estimate: None,
            uncertainty: None,
        }
    }

    /// The same judgement with a reason (or coverage note) attached.
    pub fn because(mut self, reason: impl Into<String>) -> Self {
        self.reason = Some(reason.into());
        self
    }

    /// Whether this judgement fails `--fail-on-violation` (exceeds, not
    /// judged or undecided).
    pub fn fails_gate(&self) -> bool {
        self.verdict != Verdict::Meets
    }

    /// The verdict cell of a table: `MEETS`, `EXCEEDS`, `NOT JUDGED`,
    /// `UNDECIDED`, with the probability of conformance where there is one
    /// (`MEETS, P = 99.7 %`; `UNDECIDED: meets at the estimate, P = 62.0 %`)
    /// and `(partial coverage)` after a judged verdict of partial coverage.
    pub fn cell(&self) -> String {
        let head = match self.verdict {
            Verdict::NotJudged => return Verdict::NotJudged.shout().to_string(),
            v => v.shout().to_string(),
        };
        let cov = if self.coverage == Coverage::Partial {
            " (partial coverage)"
        } else {
            ""
        };
        format!("{head}{}{cov}", self.probability_words())
    }

    /// The probability part of a verdict's words: `, P = 99.7 %`, or for a
    /// verdict the rule changed `: meets at the estimate, P = 62.0 %`;
    /// empty when there is no probability.
    pub fn probability_words(&self) -> String {
        let p = self.probability.map(crate::decision::p_words);
        match (self.at_estimate, p) {
            (Some(e), Some(p)) => format!(": {} at the estimate, {p}", e.name()),
            (Some(e), None) => format!(": {} at the estimate", e.name()),
            (None, Some(p)) => format!(", {p}"),
            (None, None) => String::new(),
        }
    }

    /// The verdict in lower-case words for reports and matrices:
    /// `meets, P = 99.7 %`, `undecided: meets at the estimate, P = 62.0 %`,
    /// `not judged`.
    pub fn words(&self) -> String {
        match self.verdict {
            Verdict::NotJudged => "not judged".into(),
            v => format!("{}{}", v.name(), self.probability_words()),
        }
    }

    /// The decision rule in words: `decision rule: simple; P(conform) is
    /// the smallest over the checked points` and the like, with the
    /// uncertainty note where there is one.
    pub fn rule_words(&self) -> String {
        let rule = match (self.decision_rule, self.conformance) {
            (crate::decision::Rule::Guarded, Some(c)) => {
                format!("guarded at {} conformance", crate::decision::percent(c))
            }
            (r, _) => r.name().to_string(),
        };
        match &self.uncertainty {
            Some(u) => format!("decision rule: {rule}; {u}"),
            None => format!("decision rule: {rule}"),
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
    /// None exceeds and all were judged, but the guarded decision rule left
    /// at least one undecided.
    Undecided,
}

/// The gate over a set of judgements: [`Gate::Exceeds`] when any exceeds,
/// else [`Gate::NotJudged`] when any is not judged, else
/// [`Gate::Undecided`] when any is undecided, else [`Gate::Pass`].
pub fn gate<'a>(judgements: impl IntoIterator<Item = &'a Judgement>) -> Gate {
    let mut out = Gate::Pass;
    for j in judgements {
        match j.verdict {
            Verdict::Exceeds => return Gate::Exceeds,
            Verdict::NotJudged => out = Gate::NotJudged,
            Verdict::Undecided if out == Gate::Pass => out = Gate::Undecided,
            Verdict::Undecided | Verdict::Meets => {}
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
        let mut u = Judgement::judged(false, Coverage::Full);
        u.verdict = Verdict::Undecided;
        u.at_estimate = Some(Verdict::Meets);
        u.probability = Some(0.62);
        assert_eq!(gate([&m, &u]), Gate::Undecided);
        assert_eq!(gate([&u, &n]), Gate::NotJudged);
        assert_eq!(gate([&u, &e]), Gate::Exceeds);
        assert_eq!(u.cell(), "UNDECIDED: meets at the estimate, P = 62.0 %");
        assert_eq!(u.words(), "undecided: meets at the estimate, P = 62.0 %");
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
