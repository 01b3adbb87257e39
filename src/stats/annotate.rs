//! The glue between the estimators and the statistics: every
//! [`Estimate`] of one estimator becomes a [`Point`] with its noise type,
//! EDF and confidence interval.

use crate::deviation::{Estimate, Estimator, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::{
    edf, interval, IdMethod, Identifier, NoiseId, VarianceKind, DEFAULT_CONFIDENCE,
};
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
    /// The variance behind an estimator, or `None` for those without an EDF
    /// rule (MTIE, TIE rms).
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
            // Theo1 and TheoH have their own EDF rules and are annotated by
            // `annotate` directly (`theo1_edf`; TheoH's ADEV part by the
            // overlapping Allan EDF), so they have no VarianceKind.
            Estimator::Theo1 | Estimator::Theoh | Estimator::Mtie | Estimator::Tierms => None,
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

/// Theo1 and TheoH. The noise type comes from the overlapping-Allan
/// identification at τ (rounded to a whole m), settled by the same rule as
/// the other estimators (a type is never whiter than at the next shorter τ;
/// where the record is too short for any identification at that τ — Theo1
/// reaches 0.75 of the record — the type of the next shorter τ is carried
/// on).
/// EDF: Theo1 and TheoH's ThêoBR part by [`crate::deviation::theo1_edf`]
/// (NIST SP 1065 Theo1 EDF; ThêoBR is a scaled Theo1, so its EDF is taken
/// as Theo1's), TheoH's ADEV part by the overlapping Allan EDF (Greenhall &
/// Riley), both for the gap-free record with the same number of terms.
fn annotate_theo(
    est: Estimator,
    x: &PhaseRecord,
    estimates: &[Estimate],
    opts: &StatsOptions,
) -> Result<Vec<Point>> {
    let oa = VarianceKind::OverlappingAllan;
    if let Some(a) = opts.forced_alpha {
        if !(-2..=2).contains(&a) {
            return Err(Error::invalid(format!(
                "noise type α = {a} is outside the range of {} (α = 2 … −2)",
                est.name()
            )));
        }
    }
    let n = x.x.len();
    let switch = est.bias_corrected_from(n, x.tau0);
    let ids: Vec<Option<NoiseId>> = match opts.forced_alpha {
        Some(a) => vec![
            Some(NoiseId {
                alpha: a,
                method: IdMethod::Lag1,
                r1: None,
            });
            estimates.len()
        ],
        None => {
            let identifier = Identifier::new(&x.x, x.tau0, oa);
            estimates
                .par_iter()
                .map(|e| identifier.at(((e.tau / x.tau0).round() as usize).max(1)))
                .collect()
        }
    };
    let mut alphas: Vec<Option<i32>> = ids.iter().map(|id| id.map(|i| i.alpha)).collect();
    if opts.forced_alpha.is_none() {
        // The estimates' m grow with τ for both (Theo1 factor m' ≈ τ/(0.75τ0)).
        settle_noise_types(estimates, &ids, &mut alphas);
    }
    let mut out = Vec::with_capacity(estimates.len());
    for (e, &alpha) in estimates.iter().zip(&alphas) {
        let theo_part = match switch {
            Some(s) => e.tau >= s,
            None => true,
        };
        let nu = alpha.and_then(|a| {
            if theo_part {
                // Theo1 terms: N − m.
                crate::deviation::theo1_edf(a, e.terms + e.m, e.m)
            } else {
                edf(oa, a, e.m, oa.equivalent_points(e.m, e.terms))
            }
        });
        let (lo, hi) = match nu {
            Some(v) if e.value.is_finite() => {
                let (lo, hi) = interval(e.value, v, opts.confidence)?;
                (Some(lo), Some(hi))
            }
            _ => (None, None),
        };
        out.push(Point {
            estimate: *e,
            edf: nu,
            lo,
            hi,
            alpha,
            bias: None,
        });
    }
    Ok(out)
}

/// Annotate the estimates of `est` on the record `x`: the noise type at each
/// τ ([`crate::stats::identify`], or `opts.forced_alpha`), its EDF ([`fn@edf`]) and the
/// two-sided interval at `opts.confidence` ([`fn@interval`]).
///
/// Each identified type is capped at the type of the next shorter τ, and a
/// τ too short for any identification takes that type (our rule: the
/// dominant power law can only get redder as τ grows; see
/// `settle_noise_types`).
///
/// The EDF is evaluated for the gap-free record that would give the same
/// number of terms ([`VarianceKind::equivalent_points`]), so gaps widen the
/// interval. Estimators without an EDF rule (MTIE, TIE rms), and points with
/// no identified or carried-over noise type, keep `None` in every statistic.
///
/// The total family (TOTDEV, MTOT, TTOT, HTOT) is biased by an amount that
/// depends on the noise type; with `opts.bias_correction` each value whose
/// type is known is divided by √B ([`crate::stats::totals::bias`]) and the
/// point records B ([`Point::bias`]). The interval is that of the corrected
/// value.
///
/// Errors: [`Error::Invalid`] when the confidence is outside (0, 1) or the
/// forced α is outside the estimator's range.
pub fn annotate(
    est: Estimator,
    x: &PhaseRecord,
    estimates: &[Estimate],
    opts: &StatsOptions,
) -> Result<Vec<Point>> {
    crate::stats::interval::check_confidence(opts.confidence)?;
    if matches!(est, Estimator::Theo1 | Estimator::Theoh) {
        return annotate_theo(est, x, estimates, opts);
    }
    let Some(kind) = VarianceKind::of_estimator(est) else {
        return Ok(estimates.iter().copied().map(Point::bare).collect());
    };
    if let Some(a) = opts.forced_alpha {
        if !kind.alpha_range().contains(&a) {
            let range = kind.alpha_range();
            return Err(Error::invalid(format!(
                "noise type {} (α = {a}) is outside the range of {} (α = {} … {})",
                crate::model::noise_label(a).unwrap_or("?"),
                est.name(),
                range.end(),
                range.start()
            )));
        }
    }
    // Noise type per point (in parallel), then the never-whiter rule.
    let ids: Vec<Option<NoiseId>> = match opts.forced_alpha {
        Some(a) => vec![
            Some(NoiseId {
                alpha: a,
                method: IdMethod::Lag1,
                r1: None,
            });
            estimates.len()
        ],
        None => {
            let identifier = Identifier::new(&x.x, x.tau0, kind);
            estimates.par_iter().map(|e| identifier.at(e.m)).collect()
        }
    };
    let mut alphas: Vec<Option<i32>> = ids.iter().map(|id| id.map(|i| i.alpha)).collect();
    if opts.forced_alpha.is_none() {
        settle_noise_types(estimates, &ids, &mut alphas);
    }
    estimates
        .par_iter()
        .zip(alphas.par_iter())
        .map(|(e, &alpha)| {
            let n_eff = kind.equivalent_points(e.m, e.terms);
            let nu = alpha.and_then(|a| edf(kind, a, e.m, n_eff));
            let bias = match alpha {
                Some(a) if opts.bias_correction && kind.is_total() => {
                    // B = 1 exactly (TOTDEV at m = 1: no reflected term)
                    // is no correction.
                    crate::stats::totals::bias(kind, a, e.m, n_eff)
                        .filter(|b| b.is_finite() && *b > 0.0 && *b != 1.0)
                }
                _ => None,
            };
            let estimate = Estimate {
                value: e.value / bias.unwrap_or(1.0).sqrt(),
                ..*e
            };
            let (lo, hi) = match nu {
                Some(v) if estimate.value.is_finite() => {
                    let (lo, hi) = interval(estimate.value, v, opts.confidence)?;
                    (Some(lo), Some(hi))
                }
                _ => (None, None),
            };
            Ok(Point {
                estimate,
                edf: nu,
                lo,
                hi,
                alpha,
                bias,
            })
        })
        .collect()
}

/// The dominant power law of a sum of power laws can only get redder as τ
/// grows (σ²_α(τ) ∝ τ^(−α−1): a lower α gains on a higher one). A type
/// identified at a τ is therefore not allowed to be whiter than the type at
/// the next shorter τ: its α is capped there. At long τ the decimated series
/// is short (30 points at N/30 for the lag-1 method, fewer for the B1
/// fallback) and its estimate scatters between neighbouring types; the cap
/// keeps such a point from borrowing the larger EDF of a whiter type, which
/// would make its interval too narrow. Where too few points remain for any
/// identification (fewer than four frequency averages), the type of the
/// next shorter τ is carried over. (Our rules; a bump in σ(τ) from a
/// periodic disturbance keeps the redder type, the conservative side.)
fn settle_noise_types(estimates: &[Estimate], ids: &[Option<NoiseId>], alphas: &mut [Option<i32>]) {
    let mut order: Vec<usize> = (0..estimates.len()).collect();
    order.sort_by_key(|&i| estimates[i].m);
    let mut previous: Option<i32> = None;
    for i in order {
        match (ids[i], previous) {
            (Some(id), Some(cap)) => {
                alphas[i] = Some(id.alpha.min(cap));
            }
            (None, Some(carried)) => alphas[i] = Some(carried),
            _ => {}
        }
        if alphas[i].is_some() {
            previous = alphas[i];
        }
    }
}
