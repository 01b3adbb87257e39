//! The σ(τ) picture of one record: the requested estimators evaluated over a
//! τ grid, each point annotated with its statistics (EDF, confidence interval,
//! noise type) by [`crate::stats`]. Used by the `stability` command and the
//! report, so both print the same numbers.

use crate::deviation::{compute, Curve, Estimator, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::{annotate_with, NoiseIdentifier, StatsOptions};
use crate::tau::TauGrid;

/// What to compute.
#[derive(Debug, Clone)]
pub struct Request {
    /// Estimators, in output order.
    pub estimators: Vec<Estimator>,
    /// The τ grid.
    pub grid: TauGrid,
    /// Two-sided confidence level of the intervals, in (0, 1).
    pub confidence: f64,
    /// A noise type forced for every τ (α), instead of identifying it per τ.
    pub forced_alpha: Option<i32>,
    /// Divide the total family's values by their bias for the noise type
    /// (see [`crate::stats::totals`]); true unless raw values are wanted.
    pub bias_correction: bool,
}

impl Request {
    /// The usual request: the given estimators on the octave grid at 68.3 %.
    pub fn new(estimators: Vec<Estimator>) -> Self {
        Self {
            estimators,
            grid: TauGrid::Octave,
            confidence: 0.683,
            forced_alpha: None,
            bias_correction: true,
        }
    }
}

/// Evaluate every requested estimator on `x` and annotate the points.
///
/// Fails when the confidence level is outside (0, 1), or when the record is
/// too short for a single τ of any requested estimator.
pub fn analyse(x: &PhaseRecord, req: &Request) -> Result<Vec<Curve>> {
    if !(req.confidence > 0.0 && req.confidence < 1.0) {
        return Err(Error::invalid(format!(
            "confidence {} is outside (0, 1): expected e.g. 0.683 or 0.95",
            req.confidence
        )));
    }
    if req.estimators.is_empty() {
        return Err(Error::invalid("no estimator requested"));
    }
    let opts = StatsOptions {
        confidence: req.confidence,
        forced_alpha: req.forced_alpha,
        bias_correction: req.bias_correction,
    };
    let n = x.len();
    // One identification of the record's noise, shared by every estimator.
    let ids = NoiseIdentifier::new(x);
    let mut curves = Vec::with_capacity(req.estimators.len());
    for &est in &req.estimators {
        let ms = req.grid.ms_for(est, x.tau0, n)?;
        let estimates = compute(est, x, &ms);
        let points = annotate_with(est, x, &ids, &estimates, &opts)?;
        curves.push(Curve {
            estimator: est.name().to_string(),
            points,
        });
    }
    if curves.iter().all(|c| c.points.is_empty()) {
        return Err(Error::insufficient(format!(
            "the record ({n} phase points, {} gaps) is too short, or too broken by gaps, for any τ of {}",
            x.gaps(),
            req.estimators
                .iter()
                .map(|e| e.name())
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    Ok(curves)
}

/// The power-law model of a record, fitted to its OADEV and MDEV curves
/// together (so that white and flicker PM, which OADEV alone cannot tell
/// apart, are separated by MDEV's different slope), each point weighted by
/// its EDF ([`crate::model::fit::fit_variances`]). The cut-off is the
/// record's Nyquist frequency f_h = 1/(2τ0).
#[derive(Debug, Clone)]
pub struct RecordModel {
    /// The OADEV and MDEV curves the model was fitted to (annotated).
    pub curves: Vec<Curve>,
    /// The fit: h_α, dominant ranges, residual per fitted point (dB), OADEV
    /// points first.
    pub fit: crate::model::fit::ModelFit,
}

/// Fit the power-law model of `x` (see [`RecordModel`]): OADEV and MDEV
/// annotated by the statistics layer on the record's octave grid, then
/// [`crate::model::fit::fit_variances`] on the variances σ² with the EDF as
/// weight (the variance of ln σ̂² is about 2/EDF), f_h = 1/(2τ0). The fit
/// always uses the octave grid, so the model (and its standard errors,
/// whose calibration assumes that grid) does not depend on the τ requested;
/// the curves returned for display are on `grid`. Points without an EDF —
/// where no noise type could be identified, or where linear drift dominates
/// (no power-law EDF there) — are left out. Remove aging first
/// ([`crate::prepare::remove_drift`]) to fit the noise beneath it.
pub fn fit_record_model(x: &PhaseRecord, grid: &TauGrid) -> Result<RecordModel> {
    use crate::model::fit::{fit_variances, FitPoint, VarKind};
    let request = |grid: &TauGrid| Request {
        estimators: vec![Estimator::Oadev, Estimator::Mdev],
        grid: grid.clone(),
        confidence: crate::stats::DEFAULT_CONFIDENCE,
        forced_alpha: None,
        bias_correction: true,
    };
    let octave = analyse(x, &request(&TauGrid::Octave))?;
    let mut points = Vec::new();
    for (curve, kind) in octave.iter().zip([VarKind::Avar, VarKind::Mvar]) {
        for p in &curve.points {
            let e = p.estimate;
            if let Some(edf) = p.edf.filter(|v| v.is_finite() && *v > 0.0) {
                if e.value.is_finite() && e.value > 0.0 {
                    points.push(FitPoint {
                        kind,
                        tau: e.tau,
                        tau0: x.tau0,
                        var: e.value * e.value,
                        weight: edf,
                    });
                }
            }
        }
    }
    if points.is_empty() {
        return Err(Error::insufficient(format!(
            "fitting the noise model needs OADEV or MDEV points with a known EDF; the record \
             ({} phase points) gives none",
            x.len()
        )));
    }
    let fit = fit_variances(&points, 0.5 / x.tau0)?;
    let curves = if *grid == TauGrid::Octave {
        octave
    } else {
        analyse(x, &request(grid))?
    };
    Ok(RecordModel { curves, fit })
}

/// One point of the `best` curve: the chosen point and the estimator it
/// came from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BestPoint {
    /// The chosen point, as its estimator gave it (its own τ, m, EDF and
    /// interval).
    pub point: Point,
    /// The estimator the point came from.
    pub from: Estimator,
}

/// Name of the derived curve made by [`best`].
pub const BEST_CURVE: &str = "best";

/// τ values within this ratio of the first τ of a group are taken as the
/// same averaging time (a quarter octave): Theo1 and TheoH sit on their own
/// lattice τ = 0.75·m·τ0, next to, not on, the m·τ0 of the other estimators.
pub const SAME_TAU_RATIO: f64 = 1.189_207_115_002_721; // 2^(1/4)

/// The best estimate at each τ: among the requested curves that estimate
/// the same σ_y variance as the first requested σ_y estimator
/// ([`Estimator::estimates`]: ADEV, OADEV, TOTDEV and TheoH the Allan
/// variance; MDEV and MTOT the modified Allan variance; HDEV, OHDEV and
/// HTOT the Hadamard variance), group the points by τ (within
/// [`SAME_TAU_RATIO`]) and take, in each group, the point of the estimator
/// chosen for that τ.
///
/// **Only honest intervals.** A point is eligible when it has an interval
/// (an EDF rule for its noise that the seeded Monte Carlo of
/// [`crate::stats::coverage`] checks): not where drift dominates an
/// estimator that sees it, nor where no noise was identified; never a time
/// deviation, Theo1 (biased except for white FM: request TheoH) or an
/// estimator of another variance — the Hadamard variance ignores a
/// frequency drift that the Allan variance sees, so a curve that hopped
/// between them would show steps that are not in the oscillator.
///
/// **The choice does not follow the value.** Were the narrowest interval
/// of each record taken, the choice would depend on the noise type
/// identified in that record, which itself leans on the values (a record
/// whose long-τ values run high looks redder, and its bias correction
/// changes with the type) — the choice would follow the value and bias the
/// curve. So the estimator at each τ is chosen from the EDFs alone, the
/// same for every record of that length: the candidate whose EDF, over the
/// five noise types WPM … RWFM, stays nearest the best candidate's (the
/// largest minimum over α of ν_est(α)/max_est′ ν_est′(α), each for its own
/// m, τ and terms); ties go to the estimator requested first. `n_phase` and
/// `tau0` are those of the record.
///
/// The total family is compared bias-corrected for the identified noise
/// type ([`crate::stats::totals`]) and TheoH is bias-corrected by design,
/// so the members of a family estimate the same quantity; each point still
/// says where it came from. An engineering estimate: the governing
/// standard, the equipment maker's data and local acceptance procedures
/// decide.
///
/// Curves whose name is not an estimator (derived curves) are skipped.
pub fn best(curves: &[Curve], n_phase: usize, tau0: f64) -> Vec<BestPoint> {
    let mut cands: Vec<(usize, BestPoint)> = Vec::new();
    let sigma_y = |c: &Curve| {
        Estimator::from_name(&c.estimator)
            .ok()
            .filter(|e| !e.is_time_deviation())
            .and_then(|e| e.estimates().map(|target| (e, target)))
    };
    let Some(family) = curves.iter().find_map(sigma_y).map(|(_, target)| target) else {
        return Vec::new();
    };
    for (order, c) in curves.iter().enumerate() {
        let Some((est, target)) = sigma_y(c) else {
            continue;
        };
        if target != family {
            continue;
        }
        for p in &c.points {
            cands.push((
                order,
                BestPoint {
                    point: *p,
                    from: est,
                },
            ));
        }
    }
    cands.sort_by(|a, b| {
        a.1.point
            .estimate
            .tau
            .total_cmp(&b.1.point.estimate.tau)
            .then(a.0.cmp(&b.0))
    });
    let honest = |b: &BestPoint| {
        matches!((b.point.lo, b.point.hi), (Some(lo), Some(hi)) if lo > 0.0 && hi.is_finite())
            && b.point.estimate.tau > 0.0
    };
    let mut out: Vec<BestPoint> = Vec::new();
    let mut i = 0;
    while i < cands.len() {
        let start = cands[i].1.point.estimate.tau;
        let mut j = i;
        while j < cands.len() && cands[j].1.point.estimate.tau <= start * SAME_TAU_RATIO {
            j += 1;
        }
        let group = &cands[i..j];
        // The choice from the EDFs alone (see above), among the estimators
        // present at this τ.
        let edfs: Vec<[Option<f64>; 5]> = group
            .iter()
            .map(|(_, b)| {
                std::array::from_fn(|k| {
                    crate::stats::annotate::edf_of(
                        b.from,
                        2 - k as i32,
                        n_phase,
                        tau0,
                        &b.point.estimate,
                    )
                })
            })
            .collect();
        let score = |g: usize| -> f64 {
            (0..5)
                .filter_map(|k| {
                    let top = edfs.iter().filter_map(|e| e[k]).fold(0.0f64, f64::max);
                    (top > 0.0).then(|| edfs[g][k].unwrap_or(0.0) / top)
                })
                .fold(f64::INFINITY, f64::min)
        };
        let mut ranked: Vec<usize> = (0..group.len()).collect();
        ranked.sort_by(|&a, &b| {
            score(b)
                .total_cmp(&score(a))
                .then(group[a].0.cmp(&group[b].0))
        });
        // The chosen estimator's point, if its interval is honest here.
        if let Some(&g) = ranked.first() {
            if honest(&group[g].1) {
                out.push(group[g].1);
            }
        }
        i = j;
    }
    out
}

/// The [`best`] points as a plain curve named [`BEST_CURVE`] (the estimator
/// of each point is dropped; keep the [`BestPoint`]s to report it).
pub fn best_curve(points: &[BestPoint]) -> Curve {
    Curve {
        estimator: BEST_CURVE.to_string(),
        points: points.iter().map(|b| b.point).collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::deviation::Estimate;

    fn pt(tau: f64, value: f64, lo: f64, hi: f64) -> Point {
        Point {
            estimate: Estimate {
                tau,
                m: tau as usize,
                value,
                terms: 10,
            },
            edf: Some(5.0),
            lo: Some(lo),
            hi: Some(hi),
            alpha: Some(0),
            bias: None,
            drift: false,
        }
    }

    fn curve(name: &str, pts: Vec<Point>) -> Curve {
        Curve {
            estimator: name.into(),
            points: pts,
        }
    }

    #[test]
    fn best_takes_only_eligible_points() {
        let curves = vec![
            // A time deviation is never chosen, however narrow, nor does it
            // set the family.
            curve("tdev", vec![pt(1.0, 1.0, 0.999, 1.001)]),
            curve(
                "oadev",
                vec![pt(1.0, 1.0, 0.9, 1.1), pt(2.0, 1.0, 0.5, 2.0)],
            ),
            // Theo1 is biased except for white FM: never chosen.
            curve("theo1", vec![pt(6.0, 1.0, 0.99, 1.01)]),
            // Another variance (the first σ_y curve, oadev, sets the
            // Allan family): never chosen, however narrow.
            curve(
                "mdev",
                vec![pt(4.0, 1.0, 0.99, 1.01), pt(8.0, 1.0, 0.5, 2.0)],
            ),
            curve("htot", vec![pt(16.0, 1.0, 0.99, 1.01)]),
            // No interval: not eligible.
            curve(
                "adev",
                vec![Point::bare(Estimate {
                    tau: 32.0,
                    m: 32,
                    value: 1.0,
                    terms: 3,
                })],
            ),
        ];
        let b = best(&curves, 1000, 1.0);
        let got: Vec<(f64, Estimator)> = b.iter().map(|p| (p.point.estimate.tau, p.from)).collect();
        assert_eq!(got, vec![(1.0, Estimator::Oadev), (2.0, Estimator::Oadev)]);
        assert_eq!(best_curve(&b).estimator, "best");
        assert_eq!(best_curve(&b).points.len(), 2);
        assert!(best(&[], 1000, 1.0).is_empty());
        assert!(best(&[curve("mtie", vec![pt(1.0, 1.0, 0.9, 1.1)])], 1000, 1.0).is_empty());
    }

    /// The estimator chosen at a τ depends on the EDF rules only: swapping
    /// which candidate has the narrower interval (and the larger value)
    /// does not change it.
    #[test]
    fn best_choice_does_not_follow_the_value() {
        let at = |terms: usize, value: f64, lo: f64, hi: f64| {
            let mut p = pt(64.0, value, lo, hi);
            p.estimate.terms = terms;
            p
        };
        // N = 1000, m = 64: OADEV has N − 2m terms, TOTDEV N − 2.
        let a = vec![
            curve("oadev", vec![at(872, 1.0, 0.9, 1.1)]),
            curve("totdev", vec![at(998, 2.0, 1.0, 4.0)]),
        ];
        let b = vec![
            curve("oadev", vec![at(872, 2.0, 1.0, 4.0)]),
            curve("totdev", vec![at(998, 1.0, 0.99, 1.01)]),
        ];
        let ca = best(&a, 1000, 1.0)[0].from;
        let cb = best(&b, 1000, 1.0)[0].from;
        assert_eq!(ca, cb);
        // For white PM the reflected ends cost TOTDEV most of its EDF at
        // T/τ ≈ 16 (stats::totals), so OADEV is never far from the best.
        assert_eq!(ca, Estimator::Oadev);
    }

    /// At m = 1 TOTDEV is OADEV term for term (the same EDF for every noise):
    /// the tie goes to the estimator requested first.
    #[test]
    fn best_ties_go_to_the_first_requested() {
        let at = |terms| {
            let mut p = pt(1.0, 1.0, 0.9, 1.1);
            p.estimate.terms = terms;
            p
        };
        let ot = vec![
            curve("oadev", vec![at(998)]),
            curve("totdev", vec![at(998)]),
        ];
        assert_eq!(best(&ot, 1000, 1.0)[0].from, Estimator::Oadev);
        let to = vec![
            curve("totdev", vec![at(998)]),
            curve("oadev", vec![at(998)]),
        ];
        assert_eq!(best(&to, 1000, 1.0)[0].from, Estimator::Totdev);
    }
}

/// The phase-noise side of the combined short/long-τ view: σ(τ) converted
/// from a spectrum (normally an L(f) table) for every measured curve whose
/// estimator has a spectral form, and the consistency of the two where both
/// exist.
#[derive(Debug, Clone)]
pub struct PhaseNoiseView {
    /// One curve per convertible measured curve, named `<estimator>-from-lf`.
    /// Points below the record's τ0 come from the table alone and carry
    /// m = 0 and terms = 0.
    pub curves: Vec<Curve>,
    /// Per converted estimator: measured/converted ratio and whether the
    /// converted value lies in the measured interval, at every shared τ.
    pub checks: Vec<(String, Vec<crate::spectrum::sigma::Consistency>)>,
    /// The upper integration limit used (the table's highest offset).
    pub f_h: f64,
}

/// Suffix of the curves converted from a phase-noise table.
pub const FROM_LF: &str = "-from-lf";

/// Convert `s` to σ(τ) beside the `measured` curves of a record sampled at
/// `tau0` (see [`PhaseNoiseView`]). The τ values are the measured ones up to
/// 1/(the table's lowest offset), plus octaves below τ0 down to 1/f_h (at
/// most 14 octaves; not for MDEV/TDEV, which need τ = nτ0), so the view shows where the short-τ (phase-noise) and
/// long-τ (counter) sides meet. σ²(τ) = ∫ S_y(f)|H(f)|² df up to f_h, the
/// table's highest offset ([`crate::spectrum::sigma::sigma_from_spectrum`]).
///
/// Where white or flicker PM dominates, σ(τ) depends on the measurement
/// bandwidth, so the two sides may differ there without either being wrong.
pub fn from_phase_noise(
    measured: &[Curve],
    s: &crate::spectrum::Spectrum,
    tau0: f64,
) -> Result<PhaseNoiseView> {
    use crate::deviation::{Estimate, Point};
    use crate::spectrum::sigma::{consistency, sigma_from_spectrum, SigmaKind};
    let (f_lo, f_h) = s.range();
    let tau_max = 1.0 / f_lo * (1.0 + 1e-9);
    let k_min = ((1.0 / (f_h * tau0)).log2().ceil() as i32).clamp(-14, 0);
    let mut curves = Vec::new();
    let mut checks = Vec::new();
    for c in measured {
        let Ok(kind) = SigmaKind::from_name(&c.estimator) else {
            continue;
        };
        // MDEV and TDEV are defined on τ = nτ0 of the record's sampling:
        // no points below τ0 for them.
        let below = if matches!(kind, SigmaKind::Mdev | SigmaKind::Tdev) {
            0
        } else {
            k_min
        };
        let mut taus: Vec<f64> = (below..0).map(|k| tau0 * 2f64.powi(k)).collect();
        taus.extend(c.points.iter().map(|p| p.estimate.tau));
        taus.retain(|&t| t <= tau_max);
        taus.sort_by(f64::total_cmp);
        taus.dedup();
        if taus.is_empty() {
            continue;
        }
        let converted = sigma_from_spectrum(s, kind, &taus, tau0, f_h)?;
        checks.push((c.estimator.clone(), consistency(c, &converted)));
        curves.push(Curve {
            estimator: format!("{}{FROM_LF}", c.estimator),
            points: converted
                .iter()
                .map(|&(tau, value)| {
                    let m = (tau / tau0).round();
                    let m = if tau < tau0 * (1.0 - 1e-9) {
                        0
                    } else {
                        m as usize
                    };
                    Point::bare(Estimate {
                        tau,
                        m,
                        value,
                        terms: 0,
                    })
                })
                .collect(),
        });
    }
    if curves.is_empty() {
        return Err(Error::insufficient(format!(
            "no requested estimator can be converted from the phase-noise table (adev, oadev, mdev, tdev, hdev and ohdev can), or the table's offsets ({f_lo} – {f_h} Hz) support no τ"
        )));
    }
    Ok(PhaseNoiseView {
        curves,
        checks,
        f_h,
    })
}
