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
}

impl Default for StatsOptions {
    fn default() -> Self {
        Self {
            confidence: DEFAULT_CONFIDENCE,
            forced_alpha: None,
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
            // MTOT, TTOT and HTOT: SP 1065 tabulates EDF coefficients for
            // them, but no value for those coefficients is known here
            // reliably, so they get no interval rather than a borrowed one.
            // Theo1 and TheoH have their own EDF rules and are annotated by
            // `annotate` directly (`theo1_edf`; TheoH's ADEV part by the
            // overlapping Allan EDF), so they have no VarianceKind either.
            Estimator::Mtot
            | Estimator::Ttot
            | Estimator::Htot
            | Estimator::Theo1
            | Estimator::Theoh
            | Estimator::Mtie
            | Estimator::Tierms => None,
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
            VarianceKind::Modified | VarianceKind::Time => terms + (d + 1) * m - 1,
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
/// identification at τ (rounded to a whole m); where the record is too short
/// for it at that τ (Theo1 reaches 0.75 of the record), the type identified
/// at the longest τ below that worked is carried on (an engineering choice:
/// the noise type at the end of the ADEV range stands for the long-τ end).
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
    let identifier = Identifier::new(&x.x, x.tau0, oa);
    let ids: Vec<Option<i32>> = estimates
        .par_iter()
        .map(|e| match opts.forced_alpha {
            Some(a) => Some(a),
            None => {
                let m = ((e.tau / x.tau0).round() as usize).max(1);
                identifier.at(m).map(|id| id.alpha)
            }
        })
        .collect();
    let mut carried = None;
    let mut out = Vec::with_capacity(estimates.len());
    for (e, id) in estimates.iter().zip(ids) {
        if id.is_some() {
            carried = id;
        }
        let alpha = id.or(carried);
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
        });
    }
    Ok(out)
}

/// Annotate the estimates of `est` on the record `x`: the noise type at each
/// τ ([`crate::stats::identify`], or `opts.forced_alpha`), its EDF ([`edf`]) and the
/// two-sided interval at `opts.confidence` ([`interval`]).
///
/// A type found by the short-series fallback is capped at the type of the
/// next shorter τ, and a τ too short for any identification takes that type
/// (see [`settle_short_series`]).
///
/// The EDF is evaluated for the gap-free record that would give the same
/// number of terms ([`VarianceKind::equivalent_points`]), so gaps widen the
/// interval. Estimators without an EDF rule (MTIE, TIE rms; MTOT, TTOT, HTOT —
/// see [`VarianceKind::of_estimator`]), and points with no identified or
/// carried-over noise type, keep `None` in every statistic.
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
    // Noise type per point (in parallel), then the short-series rule.
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
        settle_short_series(estimates, &ids, &mut alphas);
    }
    estimates
        .par_iter()
        .zip(alphas.par_iter())
        .map(|(e, &alpha)| {
            let nu = alpha.and_then(|a| edf(kind, a, e.m, kind.equivalent_points(e.m, e.terms)));
            let (lo, hi) = match nu {
                Some(v) if e.value.is_finite() => {
                    let (lo, hi) = interval(e.value, v, opts.confidence)?;
                    (Some(lo), Some(hi))
                }
                _ => (None, None),
            };
            Ok(Point {
                estimate: *e,
                edf: nu,
                lo,
                hi,
                alpha,
            })
        })
        .collect()
}

/// The dominant power law of a sum of power laws can only get redder as τ
/// grows (σ²_α(τ) ∝ τ^(−α−1): a lower α gains on a higher one). A type
/// found by the short-series B1 fallback is therefore not allowed to be
/// whiter than the type at the next shorter τ: its α is capped there. This
/// keeps a poorly determined long-τ point from borrowing the large EDF of
/// white PM. Where too few points remain for any identification (fewer than
/// four frequency averages), the type of the next shorter τ is carried over.
/// (Our rules; the lag-1 identifications are left as found.)
fn settle_short_series(
    estimates: &[Estimate],
    ids: &[Option<NoiseId>],
    alphas: &mut [Option<i32>],
) {
    let mut order: Vec<usize> = (0..estimates.len()).collect();
    order.sort_by_key(|&i| estimates[i].m);
    let mut previous: Option<i32> = None;
    for i in order {
        match (ids[i], previous) {
            (Some(id), Some(cap)) if id.method == IdMethod::B1 => {
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
