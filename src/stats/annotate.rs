//! The glue between the estimators and the statistics: every
//! [`Estimate`] of one estimator becomes a [`Point`] with its noise type,
//! EDF and confidence interval.

use crate::deviation::{Estimate, Estimator, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::form_interval::IntervalMethod;
use crate::stats::{edf, NoiseAt, NoiseIdentifier, VarianceKind, DEFAULT_CONFIDENCE};
use rayon::prelude::*;

/// How the statistics are computed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StatsOptions {
    /// Two-sided confidence of the intervals, strictly inside (0, 1).
    pub confidence: f64,
    /// A power-law exponent α to use at every τ instead of identifying it.
    pub forced_alpha: Option<i32>,
    /// Divide the total family's values (TOTDEV, MTOT, TTOT, HTOT) by their
    /// bias for the noise type at each τ ([`crate::stats::totals::bias`]).
    pub bias_correction: bool,
}

impl Default for StatsOptions {
    fn default() -> Self {
        Self {
            confidence: DEFAULT_CONFIDENCE,
            forced_alpha: None,
            bias_correction: true,
        }
    }
}

impl VarianceKind {
    /// The variance behind an estimator, or `None` for those without a
    /// Greenhall–Riley or total-family EDF rule (Theo1 and TheoH, which have
    /// their own in [`crate::stats::theo`]; MTIE, TIE rms).
    pub fn of_estimator(est: Estimator) -> Option<VarianceKind> {
        match est {
            Estimator::Adev => Some(VarianceKind::Allan),
            Estimator::Oadev => Some(VarianceKind::OverlappingAllan),
            Estimator::Mdev => Some(VarianceKind::Modified),
            Estimator::Tdev => Some(VarianceKind::Time),
            Estimator::Hdev => Some(VarianceKind::Hadamard),
            Estimator::Ohdev => Some(VarianceKind::OverlappingHadamard),
            Estimator::Totdev => Some(VarianceKind::Total),
            Estimator::Mtot => Some(VarianceKind::ModifiedTotal),
            Estimator::Ttot => Some(VarianceKind::TimeTotal),
            Estimator::Htot => Some(VarianceKind::HadamardTotal),
            Estimator::Theo1 | Estimator::Theoh | Estimator::Mtie | Estimator::TieRms => None,
        }
    }

    /// The record length N that gives `terms` terms at averaging factor m
    /// without gaps (the inverse of the term count of Greenhall & Riley:
    /// overlapping M = N − dm, modified M = N − (d + 1)m + 1,
    /// non-overlapping M = ⌊(N − 1 − dm)/m⌋ + 1, total M = N − 2).
    pub fn equivalent_points(self, m: usize, terms: usize) -> usize {
        let d = self.difference_order();
        match self {
            VarianceKind::Total => terms + 2,
            VarianceKind::Modified
            | VarianceKind::Time
            | VarianceKind::ModifiedTotal
            | VarianceKind::TimeTotal => terms + (d + 1) * m - 1,
            VarianceKind::Allan | VarianceKind::Hadamard => (terms + d - 1) * m + 1,
            _ => terms + d * m,
        }
    }
}

impl From<Estimator> for Option<VarianceKind> {
    fn from(est: Estimator) -> Self {
        VarianceKind::of_estimator(est)
    }
}

/// True when the estimator's value sees a linear frequency drift (every
/// σ estimator but the Hadamard family, which cancels it).
pub fn sees_drift(est: Estimator) -> bool {
    !matches!(est, Estimator::Hdev | Estimator::Ohdev | Estimator::Htot)
}

/// The averaging factor at which the noise of an estimate is identified:
/// its own m, or for Theo1 and TheoH (τ = 0.75·m′·τ0) the whole m nearest
/// τ/τ0 — so every estimator asks [`crate::stats::dominant_noise`] about
/// its own τ.
pub fn identification_factor(est: Estimator, e: &Estimate, tau0: f64) -> usize {
    if est.uses_theo_lattice() {
        ((e.tau / tau0).round() as usize).max(1)
    } else {
        e.m
    }
}

/// The EDF of one estimate for the noise `id` (`None` where the estimator
/// has no rule for that noise, or sees a drift that dominates there: see
/// [`crate::stats::noise_id`]).
pub fn point_edf(
    est: Estimator,
    rec_len: usize,
    tau0: f64,
    e: &Estimate,
    id: &NoiseAt,
) -> Option<f64> {
    if id.is_drift() && sees_drift(est) {
        return None;
    }
    edf_of(est, id.alpha, rec_len, tau0, e)
}

/// The EDF of the estimate `e` of `est` (from a record of `rec_len` samples
/// at τ0) for the power law α: the rule of each estimator
/// ([`fn@edf`], [`crate::stats::totals`], [`crate::stats::theo`]) for the
/// gap-free record with the same number of terms, or the exact EDF of the
/// distribution its interval is taken from where that differs from the
/// rule (OADEV and OHDEV on flicker PM:
/// [`crate::stats::form_interval::form_edf`]; TheoH's ThêoBR part:
/// [`crate::stats::theo::theoh_edf`]). `None` where the
/// estimator has no rule for α. TheoH's part (OADEV or ThêoBR) is told by
/// m alone ([`crate::stats::theo::theoh_ratio_part`]: its τ can fall just
/// below the switch), so τ0 is not needed.
pub fn edf_of(est: Estimator, a: i32, rec_len: usize, _tau0: f64, e: &Estimate) -> Option<f64> {
    match est {
        Estimator::Theo1 => crate::stats::theo::theo1_edf(a, rec_len, e.m),
        Estimator::Theoh => {
            if crate::stats::theo::theoh_ratio_part(rec_len, e.m) {
                crate::stats::theo::theoh_edf(a, rec_len, e.m)
            } else {
                rule_or_form_edf(Estimator::Oadev, a, e)
            }
        }
        _ => rule_or_form_edf(est, a, e),
    }
}

/// The EDF of `e` (an estimate of `est`, one of the [`VarianceKind`]
/// estimators) for α on the gap-free record with the same number of terms:
/// the exact EDF of the form's terms where it is known and the rule is
/// not ([`crate::stats::form_interval::form_edf`]: OADEV and OHDEV on
/// flicker PM, whose rule is 7–9 % high; TOTDEV at m = 1, where it is
/// OADEV term for term), else the estimator's rule ([`fn@edf`]).
fn rule_or_form_edf(est: Estimator, a: i32, e: &Estimate) -> Option<f64> {
    let kind = VarianceKind::of_estimator(est)?;
    let n = kind.equivalent_points(e.m, e.terms);
    let form_est = if est == Estimator::Totdev && e.m == 1 {
        Estimator::Oadev
    } else {
        est
    };
    crate::stats::form_interval::form_edf(form_est, a, e.m, n).or_else(|| edf(kind, a, e.m, n))
}

/// The two-sided interval on the (corrected) estimate `e` of `est` from a
/// record of `rec_len` samples, noise α, EDF `edf`, at `confidence`, and the
/// method used: the exact distribution of the estimate's quadratic form at
/// the last octaves ([`crate::stats::form_interval`]), χ²_ν elsewhere. The
/// one function behind every point's interval.
pub fn point_interval(
    est: Estimator,
    rec_len: usize,
    e: &Estimate,
    alpha: i32,
    edf: f64,
    confidence: f64,
) -> Result<(f64, f64, IntervalMethod)> {
    point_interval_rule(est, rec_len, e, alpha, edf, confidence, true)
}

/// [`point_interval`] with the guard of
/// [`crate::stats::form_interval::interval_for`] (the union with the χ²_ν
/// interval at 90 % and above) on or off; off only to measure what the
/// guard adds (the coverage sweep's `--no-guard`).
pub fn point_interval_rule(
    est: Estimator,
    rec_len: usize,
    e: &Estimate,
    alpha: i32,
    edf: f64,
    confidence: f64,
    guard: bool,
) -> Result<(f64, f64, IntervalMethod)> {
    use crate::stats::form_interval::{interval_for_rule, theoh_interval_rule};
    if est == Estimator::Theoh {
        if crate::stats::theo::theoh_ratio_part(rec_len, e.m) {
            return theoh_interval_rule(alpha, e.m, rec_len, e.value, edf, confidence, guard);
        }
        // Below the switch TheoH's point is OADEV's, and so is its interval.
        let oa = VarianceKind::OverlappingAllan;
        let n = oa.equivalent_points(e.m, e.terms);
        return interval_for_rule(
            Estimator::Oadev,
            alpha,
            e.m,
            n,
            e.value,
            edf,
            confidence,
            guard,
        );
    }
    let n = match VarianceKind::of_estimator(est) {
        Some(kind) => kind.equivalent_points(e.m, e.terms),
        None => rec_len,
    };
    interval_for_rule(est, alpha, e.m, n, e.value, edf, confidence, guard)
}

/// The interval of a statistic that is not one estimator's quadratic form
/// on the record (a separated clock's variance, combined from several
/// pairs' estimates with a Satterthwaite EDF): the χ²_ν interval
/// ([`crate::stats::interval()`]), reported as [`IntervalMethod::Chi2`].
/// The one path for such points, beside [`point_interval`] for an
/// estimator's own points.
pub fn combined_interval(
    dev: f64,
    edf: f64,
    confidence: f64,
) -> Result<(f64, f64, IntervalMethod)> {
    let (lo, hi) = crate::stats::interval(dev, edf, confidence)?;
    Ok((lo, hi, IntervalMethod::Chi2))
}

/// Annotate the estimates of `est` on the record `x`: the noise at each τ
/// ([`crate::stats::dominant_noise`], or `opts.forced_alpha`), its EDF
/// ([`fn@edf`], [`crate::stats::theo`]) and the two-sided interval at
/// `opts.confidence` ([`point_interval`]: χ² or the quadratic form's distribution). The same as [`annotate_with`] with a
/// fresh [`NoiseIdentifier`]; give one identifier to every estimator of a
/// record to share its work.
pub fn annotate(
    est: Estimator,
    x: &PhaseRecord,
    estimates: &[Estimate],
    opts: &StatsOptions,
) -> Result<Vec<Point>> {
    annotate_with(est, x, &NoiseIdentifier::new(x), estimates, opts)
}

/// Annotate the estimates of `est` on the record `x` with the noise given
/// by `ids` (the record's [`NoiseIdentifier`]) at each τ.
///
/// The answer at each τ is that of [`crate::stats::dominant_noise`] for the
/// record and that τ alone, so a point's label, EDF, interval and
/// bias-corrected value do not depend on which other τ were requested.
///
/// The EDF is evaluated for the gap-free record that would give the same
/// number of terms ([`VarianceKind::equivalent_points`]), so gaps widen the
/// interval. Estimators without an EDF rule (MTIE, TIE rms) keep `None` in
/// every statistic; so do points where no noise could be identified, points
/// whose α the estimator's variance does not reach (the Allan family for
/// α ≤ −3), and — for the estimators that see a linear frequency drift —
/// points labelled `drift` (no power-law EDF is pretended there; see
/// [`crate::stats::noise_id`]).
///
/// The total family (TOTDEV, MTOT, TTOT, HTOT) is biased by an amount that
/// depends on the noise type; with `opts.bias_correction` each value whose
/// power law is known (and is not dominated by drift) is divided by √B
/// ([`crate::stats::totals::bias`]) and the point records B
/// ([`Point::bias`]). So is TheoH's ThêoBR part for white and flicker PM,
/// where the record's own bias ratio does not carry to long τ
/// ([`crate::stats::theo::theoh_bias`]). The interval is that of the
/// corrected value.
///
/// Errors: [`Error::Invalid`] when the confidence is outside (0, 1) or the
/// forced α is outside the estimator's range.
pub fn annotate_with(
    est: Estimator,
    x: &PhaseRecord,
    ids: &NoiseIdentifier,
    estimates: &[Estimate],
    opts: &StatsOptions,
) -> Result<Vec<Point>> {
    crate::stats::interval::check_confidence(opts.confidence)?;
    let kind = VarianceKind::of_estimator(est);
    let has_rule = kind.is_some() || matches!(est, Estimator::Theo1 | Estimator::Theoh);
    if !has_rule {
        return Ok(estimates.iter().copied().map(Point::bare).collect());
    }
    if let Some(a) = opts.forced_alpha {
        let range = kind.map_or(-2..=2, |k| k.alpha_range());
        if !range.contains(&a) {
            return Err(Error::invalid(format!(
                "noise type {} (α = {a}) is outside the range of {} (α = {} … {})",
                crate::model::noise_label(a).unwrap_or("?"),
                est.name(),
                range.end(),
                range.start()
            )));
        }
    }
    let n = x.x.len();
    estimates
        .par_iter()
        .map(|e| {
            let m_id = identification_factor(est, e, x.tau0);
            let id = match opts.forced_alpha {
                Some(a) => Some(NoiseAt::given(a, m_id, x.tau0)),
                None => ids.at(m_id),
            };
            let Some(id) = id else {
                return Ok(Point {
                    approximation: est.approximation(n, e.m),
                    ..Point::bare(*e)
                });
            };
            let drift = id.is_drift();
            let nu = point_edf(est, n, x.tau0, e, &id);
            let correct = opts.bias_correction && !(drift && sees_drift(est));
            let bias = match kind {
                Some(k) if correct && k.is_total() => {
                    // B = 1 exactly (TOTDEV at m = 1: no reflected term)
                    // is no correction.
                    crate::stats::totals::bias(k, id.alpha, e.m, k.equivalent_points(e.m, e.terms))
                }
                // TheoH's ThêoBR part for the PM noises, whose Theo1/AVAR
                // ratio changes with τ ([`crate::stats::theo`]).
                None if correct
                    && est == Estimator::Theoh
                    && crate::stats::theo::theoh_ratio_part(n, e.m) =>
                {
                    crate::stats::theo::theoh_bias(id.alpha, n, e.m)
                }
                _ => None,
            }
            .filter(|b| b.is_finite() && *b > 0.0 && *b != 1.0);
            let estimate = Estimate {
                value: e.value / bias.unwrap_or(1.0).sqrt(),
                ..*e
            };
            let (lo, hi, interval_method) = match nu {
                Some(v) if estimate.value.is_finite() => {
                    let (lo, hi, how) =
                        point_interval(est, n, &estimate, id.alpha, v, opts.confidence)?;
                    (Some(lo), Some(hi), Some(how))
                }
                _ => (None, None, None),
            };
            Ok(Point {
                estimate,
                edf: nu,
                lo,
                hi,
                alpha: Some(id.alpha),
                bias,
                drift,
                interval_method,
                approximation: est.approximation(n, e.m),
            })
        })
        .collect()
}
