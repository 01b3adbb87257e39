//! Decision rules and the probability that a unit conforms
//! (JCGM 106:2012, *Evaluation of measurement data — The role of
//! measurement uncertainty in conformity assessment*; ILAC-G8 for stating
//! a decision rule).
//!
//! A verdict compares a measured value with a limit. The estimate has an
//! uncertainty, so the verdict also carries the **probability of
//! conformance** p_c = P(true value ≤ limit | the measurement), and it is
//! reached by a named **decision rule**:
//!
//! - [`Rule::Simple`] — the estimate against the limit (JCGM 106 §8.2,
//!   "simple acceptance"): `meets` when every checked estimate is within the
//!   limit; the probability is reported beside it.
//! - [`Rule::Guarded`] — accept only where p_c ≥ the chosen conformance
//!   level c, reject only where 1 − p_c ≥ c, and otherwise `undecided`
//!   (JCGM 106 §8.3, guarded acceptance and rejection with the guard band
//!   set by a conformance probability), with the estimate's verdict and
//!   p_c beside it.
//!
//! # Where the probability comes from
//!
//! - **σ_y limits and TDEV masks** ([`sigma_conformance`]): with ν
//!   equivalent degrees of freedom, ν·σ̂²/σ² ~ χ²_ν (NIST SP 1065 §5.3, the
//!   model behind every interval tauwise prints). Read as a statement about
//!   the true σ² given the estimate — the fiducial reading, which is also
//!   the Bayesian posterior for the scale-invariant prior p(σ²) ∝ 1/σ²
//!   (from memory: the textbook result for the variance of a Gaussian
//!   sample, here with ν the EDF) — σ² = ν·σ̂²/χ²_ν, so
//!
//!   p_c = P(σ ≤ L) = P(χ²_ν ≥ ν·σ̂²/L²).
//!
//!   The same reading gives the χ² interval: its upper end at confidence P
//!   is the L where p_c = (1 + P)/2. Checked against a seeded Monte Carlo of
//!   the estimator in `tests/decision.rs`: with the limit at the true σ,
//!   p_c of the simulated estimates is uniform on (0, 1).
//!   (At the last octaves, T/τ ≤ 16, the printed interval uses the exact
//!   distribution of the estimate's quadratic form; the probability keeps
//!   the χ²_ν of the same EDF, whose first two moments it matches.)
//! - **Holdover** ([`path_fraction`]): the Monte Carlo already draws the
//!   whole predictive distribution of the time error (noise paths, y0 and
//!   aging uncertainties); p_c is the fraction of paths whose |TE| stays
//!   within the budget through the span, an exact count.
//! - **No distribution**: MTIE is the largest excursion of this one record
//!   (tauwise has no distribution for it), an L(f) limit or a jitter limit is
//!   judged on a table with no stated uncertainty, and the spectrum tauwise
//!   estimates from a record carries no EDF. These say "no uncertainty
//!   available" ([`NO_UNCERTAINTY`]); a guarded rule asked for them decides
//!   at the estimate and says so. No probability is ever made up.
//!
//! # A verdict's probability
//!
//! A check has many points (τ or offsets); its probability is the smallest
//! over its points. The points of one record are not independent, and the
//! probability that every point conforms at once can be lower than the
//! smallest: the verdict's p_c is the weakest point's, an upper bound on
//! the joint one.
//!
//! An engineering estimate: the governing standard, the equipment maker's
//! data and the local acceptance procedure decide.

use crate::error::{Error, Result};
use crate::verdict::{Judgement, Verdict};
use serde::{Deserialize, Serialize};
use statrs::distribution::{ChiSquared, ContinuousCDF};

/// The conformance level of the guarded rule when none is given.
pub const DEFAULT_CONFORMANCE: f64 = 0.95;

/// The words of a check whose quantity has no distribution here.
pub const NO_UNCERTAINTY: &str = "no uncertainty available";

/// The reference cited wherever a decision rule is explained.
pub const REFERENCE: &str =
    "JCGM 106:2012, The role of measurement uncertainty in conformity assessment";

/// How a verdict is reached from the estimate and its uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Rule {
    /// The estimate against the limit.
    #[default]
    Simple,
    /// Accept only where P(conform) ≥ the level, reject only where
    /// P(non-conform) ≥ the level, else undecided.
    Guarded,
}

impl Rule {
    /// `simple` or `guarded`.
    pub fn name(self) -> &'static str {
        match self {
            Rule::Simple => "simple",
            Rule::Guarded => "guarded",
        }
    }
}

impl std::str::FromStr for Rule {
    type Err = crate::units::UnitError;
    /// `simple` or `guarded` (case ignored).
    fn from_str(s: &str) -> std::result::Result<Self, Self::Err> {
        match s.trim().to_ascii_lowercase().as_str() {
            "simple" => Ok(Rule::Simple),
            "guarded" => Ok(Rule::Guarded),
            _ => Err(crate::units::UnitError::Invalid {
                text: s.to_string(),
                reason: "unknown decision rule: expected simple or guarded".into(),
            }),
        }
    }
}

/// A decision rule with its conformance level.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DecisionRule {
    /// The rule.
    pub rule: Rule,
    /// The conformance level c of the guarded rule, in (0.5, 1).
    pub conformance: f64,
}

impl Default for DecisionRule {
    fn default() -> Self {
        Self {
            rule: Rule::Simple,
            conformance: DEFAULT_CONFORMANCE,
        }
    }
}

impl DecisionRule {
    /// This rule with the parts given on a command line put in its place
    /// (a command line's `--decision-rule` and `--conformance` before a DUT
    /// file's `decision_rule` and `conformance`).
    pub fn overridden(self, rule: Option<Rule>, conformance: Option<f64>) -> Self {
        Self {
            rule: rule.unwrap_or(self.rule),
            conformance: conformance.unwrap_or(self.conformance),
        }
    }

    /// A rule and its level; the level must lie strictly between 0.5 and 1
    /// (at 0.5 or below a unit could be both accepted and rejected).
    ///
    /// ```
    /// use tauwise::decision::{DecisionRule, Rule};
    /// assert!(DecisionRule::new(Rule::Guarded, 0.95).is_ok());
    /// assert!(DecisionRule::new(Rule::Guarded, 0.5).is_err());
    /// assert!(DecisionRule::new(Rule::Guarded, f64::NAN).is_err());
    /// ```
    pub fn new(rule: Rule, conformance: f64) -> Result<Self> {
        check_conformance(conformance)?;
        Ok(Self { rule, conformance })
    }

    /// The rule in words: `simple (the estimate against the limit)` or
    /// `guarded at 95 % conformance`.
    pub fn words(&self) -> String {
        match self.rule {
            Rule::Simple => "simple (the estimate against the limit)".into(),
            Rule::Guarded => format!(
                "guarded at {} conformance (accept where P(conform) ≥ {0}, reject where \
                 P(non-conform) ≥ {0}, else undecided)",
                percent(self.conformance)
            ),
        }
    }

    /// Decide a judged check from the probabilities of conformance of its
    /// checked points (`Probabilities::Points`, `None` for a point without
    /// one) or with none available (`Probabilities::Unavailable`, with why).
    ///
    /// The judgement's verdict on entry is the estimate's (the simple rule).
    /// Always: the rule is named, the probability (smallest over the
    /// points) recorded. Under [`Rule::Guarded`]: `exceeds` where some
    /// point has P(non-conform) ≥ c; else `meets` where every point has
    /// P(conform) ≥ c; else `undecided`, with the estimate's verdict kept in
    /// [`Judgement::at_estimate`] (also where a point has no probability).
    /// With no probability at all, the guarded rule decides at the estimate
    /// and the judgement says so (named `simple`). A `not-judged` check stays
    /// `not-judged`.
    ///
    /// ```
    /// use tauwise::decision::{DecisionRule, Probabilities, Rule};
    /// use tauwise::verdict::{Coverage, Judgement, Verdict};
    /// let rule = DecisionRule::new(Rule::Guarded, 0.95).unwrap();
    /// let mut j = Judgement::judged(false, Coverage::Full);
    /// rule.decide(&mut j, Probabilities::Points(&[Some(0.999), Some(0.62)]));
    /// assert_eq!(j.verdict, Verdict::Undecided);
    /// assert_eq!(j.at_estimate, Some(Verdict::Meets));
    /// assert_eq!(j.probability, Some(0.62));
    /// ```
    pub fn decide(&self, j: &mut Judgement, probs: Probabilities) {
        j.decision_rule = self.rule;
        j.conformance = (self.rule == Rule::Guarded).then_some(self.conformance);
        j.probability = None;
        j.at_estimate = None;
        j.uncertainty = None;
        if matches!(j.verdict, Verdict::NotJudged) {
            return;
        }
        let points = match probs {
            Probabilities::Unavailable(why) => {
                let why = format!("{NO_UNCERTAINTY}: {why}");
                j.uncertainty = Some(match self.rule {
                    Rule::Simple => why,
                    Rule::Guarded => {
                        j.decision_rule = Rule::Simple;
                        j.conformance = None;
                        format!("{why}; the guarded rule cannot apply, decided at the estimate")
                    }
                });
                return;
            }
            Probabilities::Points(p) => p,
        };
        let known: Vec<f64> = points
            .iter()
            .flatten()
            .copied()
            .filter(|p| p.is_finite())
            .collect();
        let missing = points.len() - known.len();
        let smallest = known.iter().copied().fold(f64::INFINITY, f64::min);
        j.probability = smallest.is_finite().then_some(smallest);
        if missing > 0 {
            j.uncertainty = Some(format!(
                "{NO_UNCERTAINTY} at {missing} of {} checked points (no EDF there: drift \
                 dominates or no noise type was identified); the probability is over the others",
                points.len()
            ));
        }
        if self.rule == Rule::Simple {
            return;
        }
        let c = self.conformance;
        let estimate = j.verdict;
        if known.iter().any(|&p| 1.0 - p >= c) {
            j.verdict = Verdict::Exceeds;
        } else if missing == 0 && !known.is_empty() && known.iter().all(|&p| p >= c) {
            j.verdict = Verdict::Meets;
        } else {
            j.verdict = Verdict::Undecided;
        }
        if j.verdict != estimate {
            j.at_estimate = Some(estimate);
        }
    }
}

/// What a check knows of the uncertainty of its points (see
/// [`DecisionRule::decide`]).
#[derive(Debug, Clone, Copy)]
pub enum Probabilities<'a> {
    /// P(conform) of each checked point, `None` where it has none.
    Points(&'a [Option<f64>]),
    /// The quantity has no distribution here; why, in words.
    Unavailable(&'a str),
}

/// Check a conformance level: strictly between 0.5 and 1.
pub fn check_conformance(c: f64) -> Result<()> {
    if c > 0.5 && c < 1.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "conformance level {c} is outside (0.5, 1): expected e.g. 0.95"
        )))
    }
}

/// Parse `--conformance`: a probability in (0.5, 1), e.g. `0.95` (a
/// percentage `95%` is also taken).
pub fn parse_conformance(text: &str) -> std::result::Result<f64, crate::units::UnitError> {
    let t = text.trim();
    let v = match t.strip_suffix('%') {
        Some(p) => p.trim().parse::<f64>().map(|v| v / 100.0),
        None => t.parse::<f64>(),
    };
    match v {
        Ok(v) if v > 0.5 && v < 1.0 => Ok(v),
        _ => Err(crate::units::UnitError::Invalid {
            text: t.to_string(),
            reason: "expected a conformance probability strictly between 0.5 and 1, e.g. 0.95"
                .into(),
        }),
    }
}

/// The probability that the true deviation σ is at or below the limit
/// `limit`, given the estimate `estimate` with `edf` equivalent degrees of
/// freedom (module notes): p_c = P(χ²_ν ≥ ν·σ̂²/L²), the upper tail of χ²
/// (statrs `ChiSquared::sf`).
///
/// `None` when any input is not finite, the limit or the EDF not positive,
/// or the estimate negative.
///
/// ```
/// use tauwise::decision::sigma_conformance;
/// // Analytic: ν = 2, χ²₂ survival is exp(−x/2); σ̂ = L gives exp(−1).
/// let p = sigma_conformance(1e-11, 1e-11, 2.0).unwrap();
/// assert!((p - (-1.0f64).exp()).abs() < 1e-12);
/// ```
pub fn sigma_conformance(estimate: f64, limit: f64, edf: f64) -> Option<f64> {
    if !(estimate.is_finite() && estimate >= 0.0 && limit.is_finite() && limit > 0.0) {
        return None;
    }
    if !(edf.is_finite() && edf > 0.0) {
        return None;
    }
    let r = estimate / limit;
    let x = edf * r * r;
    if !x.is_finite() {
        return None;
    }
    let chi = ChiSquared::new(edf).ok()?;
    let p = chi.sf(x);
    p.is_finite().then_some(p.clamp(0.0, 1.0))
}

/// The fraction `within / paths` of Monte Carlo paths within a budget;
/// `None` without paths.
pub fn path_fraction(within: usize, paths: usize) -> Option<f64> {
    (paths > 0 && within <= paths).then(|| within as f64 / paths as f64)
}

/// One checked point with its probability of conformance (the
/// `checked_points[]` of a limit or mask check in JSON).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CheckedPoint {
    /// τ (s) or offset (Hz).
    pub at: f64,
    /// The estimate (s or a fraction).
    pub value: f64,
    /// The limit there.
    pub limit: f64,
    /// The point's EDF, when it has one.
    pub edf: Option<f64>,
    /// P(true value ≤ limit), when the point has an EDF.
    pub probability: Option<f64>,
}

impl CheckedPoint {
    /// A σ-like point: `value` against `limit` with `edf`
    /// ([`sigma_conformance`]).
    pub fn sigma(at: f64, value: f64, limit: f64, edf: Option<f64>) -> Self {
        Self {
            at,
            value,
            limit,
            edf,
            probability: edf.and_then(|v| sigma_conformance(value, limit, v)),
        }
    }
}

/// The probabilities of a list of checked points, for
/// [`DecisionRule::decide`].
pub fn point_probabilities(points: &[CheckedPoint]) -> Vec<Option<f64>> {
    points.iter().map(|p| p.probability).collect()
}

/// A probability as a percentage for reading: `99.7 %`, `62.0 %`, and at
/// the ends `> 99.9 %` / `< 0.1 %` (a χ² tail never rounds to 100 % or 0 %).
///
/// ```
/// use tauwise::decision::percent;
/// assert_eq!(percent(0.997), "99.7 %");
/// assert_eq!(percent(0.62), "62.0 %");
/// assert_eq!(percent(0.99999), "> 99.9 %");
/// assert_eq!(percent(1e-6), "< 0.1 %");
/// ```
pub fn percent(p: f64) -> String {
    if !p.is_finite() {
        return "not finite".into();
    }
    if p >= 0.9995 {
        "> 99.9 %".into()
    } else if p < 0.0005 {
        "< 0.1 %".into()
    } else {
        format!("{:.1} %", 100.0 * p)
    }
}

/// `P = 99.7 %`, or at the ends `P > 99.9 %` / `P < 0.1 %` ([`percent`]).
///
/// ```
/// assert_eq!(tauwise::decision::p_words(0.62), "P = 62.0 %");
/// assert_eq!(tauwise::decision::p_words(1.0), "P > 99.9 %");
/// ```
pub fn p_words(p: f64) -> String {
    let t = percent(p);
    if t.starts_with(['>', '<']) {
        format!("P {t}")
    } else {
        format!("P = {t}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::verdict::Coverage;

    #[test]
    fn guarded_outcomes_follow_the_level() {
        let g = DecisionRule::new(Rule::Guarded, 0.95).unwrap();
        let mut j = Judgement::judged(false, Coverage::Full);
        g.decide(&mut j, Probabilities::Points(&[Some(0.96), Some(0.99)]));
        assert_eq!(j.verdict, Verdict::Meets);
        assert_eq!(j.at_estimate, None);
        let mut j = Judgement::judged(true, Coverage::Full);
        g.decide(&mut j, Probabilities::Points(&[Some(0.04), Some(0.99)]));
        assert_eq!(j.verdict, Verdict::Exceeds);
        let mut j = Judgement::judged(true, Coverage::Full);
        g.decide(&mut j, Probabilities::Points(&[Some(0.3)]));
        assert_eq!(j.verdict, Verdict::Undecided);
        assert_eq!(j.at_estimate, Some(Verdict::Exceeds));
        // A point without a probability cannot be accepted.
        let mut j = Judgement::judged(false, Coverage::Full);
        g.decide(&mut j, Probabilities::Points(&[Some(0.999), None]));
        assert_eq!(j.verdict, Verdict::Undecided);
        assert!(j.uncertainty.unwrap().contains("1 of 2"));
        // No distribution at all: decided at the estimate, named simple.
        let mut j = Judgement::judged(false, Coverage::Full);
        g.decide(&mut j, Probabilities::Unavailable("MTIE"));
        assert_eq!(j.verdict, Verdict::Meets);
        assert_eq!(j.decision_rule, Rule::Simple);
        assert!(j.uncertainty.unwrap().starts_with(NO_UNCERTAINTY));
        // Not judged stays so.
        let mut j = Judgement::not_judged("x");
        g.decide(&mut j, Probabilities::Points(&[Some(0.999)]));
        assert_eq!(j.verdict, Verdict::NotJudged);
    }

    #[test]
    fn conformance_is_refused_outside_half_to_one() {
        for bad in ["0.5", "1", "1.2", "-0.9", "nan", "x", "50%"] {
            assert!(parse_conformance(bad).is_err(), "{bad}");
        }
        assert_eq!(parse_conformance("95%").unwrap(), 0.95);
        assert_eq!(parse_conformance("0.99").unwrap(), 0.99);
        assert!("Guarded".parse::<Rule>().is_ok());
        assert!("strict".parse::<Rule>().is_err());
    }

    #[test]
    fn chi2_upper_tail_matches_the_interval() {
        // Analytic (NIST SP 1065 §5.3 χ² interval): the upper end of the
        // two-sided interval at P is the limit where p_c = (1 + P)/2.
        for &(nu, conf) in &[(4.0, 0.95), (10.0, 0.683), (37.5, 0.9)] {
            let (_, hi) = crate::stats::interval(1.0, nu, conf).unwrap();
            let p = sigma_conformance(1.0, hi, nu).unwrap();
            assert!((p - 0.5 * (1.0 + conf)).abs() < 1e-9, "{nu} {conf} {p}");
        }
        assert_eq!(sigma_conformance(1.0, 0.0, 4.0), None);
        assert_eq!(sigma_conformance(f64::NAN, 1.0, 4.0), None);
        assert_eq!(sigma_conformance(1.0, 1.0, 0.0), None);
    }
}
