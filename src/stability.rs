//! The σ(τ) picture of one record: the requested estimators evaluated over a
//! τ grid, each point annotated with its statistics (EDF, confidence interval,
//! noise type) by [`crate::stats`]. Used by the `stability` command and the
//! report, so both print the same numbers.

use crate::deviation::{compute, Curve, Estimator, Origin, Point};
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
    // Phase of extreme magnitude (beyond 1e100 s) would overflow the sums
    // of squares: compute on an exactly rescaled copy and scale back.
    let rescaled = x.rescaled_for_squares();
    let (x, back) = match &rescaled {
        Some((r, k)) => (r, *k),
        None => (x, 1.0),
    };
    // One identification of the record's noise, shared by every estimator.
    let ids = NoiseIdentifier::new(x);
    let mut curves = Vec::with_capacity(req.estimators.len());
    for &est in &req.estimators {
        let ms = req.grid.ms_for(est, x.tau0, n)?;
        let estimates = compute(est, x, &ms);
        let mut points = annotate_with(est, x, &ids, &estimates, &opts)?;
        if back != 1.0 {
            for p in &mut points {
                p.estimate.value *= back;
                p.lo = p.lo.map(|v| v * back);
                p.hi = p.hi.map(|v| v * back);
            }
        }
        curves.push(Curve::measured(est, points));
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
    use crate::model::fit::{fit_variances, FitPoint};
    let request = |grid: &TauGrid| Request {
        estimators: vec![Estimator::Oadev, Estimator::Mdev],
        grid: grid.clone(),
        confidence: crate::stats::DEFAULT_CONFIDENCE,
        forced_alpha: None,
        bias_correction: true,
    };
    let octave = analyse(x, &request(&TauGrid::Octave))?;
    let mut points = Vec::new();
    for curve in &octave {
        let kind = curve.estimator;
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
/// Curves not measured on the record ([`crate::deviation::Origin`]) are
/// skipped.
pub fn best(curves: &[Curve], n_phase: usize, tau0: f64) -> Vec<BestPoint> {
    let mut cands: Vec<(usize, BestPoint)> = Vec::new();
    let sigma_y = |c: &Curve| {
        (c.origin == Origin::Measured)
            .then_some(c.estimator)
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

/// The [`best`] points as a curve of origin [`Origin::Best`] whose
/// estimator is the plain estimator of the variance they estimate (the
/// estimator of each point is dropped; keep the [`BestPoint`]s to report
/// it).
pub fn best_curve(points: &[BestPoint]) -> Curve {
    Curve {
        estimator: points
            .first()
            .and_then(|b| b.from.estimates())
            .unwrap_or(Estimator::Oadev),
        origin: Origin::Best,
        points: points.iter().map(|b| b.point).collect(),
    }
}

/// What `stability` adds to the curves of one record: the `best` curve,
/// σ limits, and a phase-noise table's view beside the measured curves.
#[derive(Debug, Clone, Default)]
pub struct Additions<'a> {
    /// Add the `best` curve ([`best`]).
    pub best: bool,
    /// σ limits to check ([`crate::limits::check_sigma`]).
    pub limits: &'a [crate::limits::Limit],
    /// The limits given that other commands check (named in the document).
    pub elsewhere: Vec<crate::limits::Elsewhere>,
    /// A phase-noise table to convert beside the measured curves
    /// ([`from_phase_noise`]) and how.
    pub phase_noise: Option<(&'a crate::spectrum::Spectrum, ViewOptions)>,
    /// The decision rule the σ limits are judged by.
    pub decision: crate::decision::DecisionRule,
}

/// The `stability` result of one record: its document body and the curves
/// its chart draws.
#[derive(Debug, Clone)]
pub struct RecordStability {
    /// The document body (`stability --format json` of this record).
    pub body: crate::results::StabilityBody,
    /// The curves measured on the record ([`analyse`]).
    pub measured: Vec<Curve>,
    /// The measured curves and those converted from the table.
    pub shown: Vec<Curve>,
    /// The `best` curve, when asked for.
    pub best: Option<Curve>,
}

/// Everything `stability` computes for one record `x`: [`analyse`], then
/// the [`Additions`]. The command line (for each FILE) and the Python
/// package call this one function, so they give the same document.
pub fn record_stability(
    x: &PhaseRecord,
    req: &Request,
    add: &Additions,
) -> Result<RecordStability> {
    use crate::results::{AnyCurve, BestCurve, LimitsPart, StabilityBody};
    let measured = analyse(x, req)?;
    let best_points = add.best.then(|| best(&measured, x.len(), x.tau0));
    let checks = crate::limits::check_sigma_with(x, req, add.limits, &add.decision)?;
    let view = match &add.phase_noise {
        Some((s, opts)) => Some(from_phase_noise(&measured, s, x.tau0, opts)?),
        None => None,
    };
    let mut shown = measured.clone();
    if let Some(v) = &view {
        shown.extend(v.curves.iter().cloned());
    }
    let mut curves: Vec<AnyCurve> = shown.iter().cloned().map(AnyCurve::Plain).collect();
    if let Some(b) = &best_points {
        curves.push(AnyCurve::Best(BestCurve::new(b)));
    }
    Ok(RecordStability {
        body: StabilityBody {
            confidence: req.confidence,
            curves,
            consistency: view.map(|v| v.comparisons),
            limits: LimitsPart::new(checks, add.elsewhere.clone()),
        },
        best: best_points.as_deref().map(best_curve),
        measured,
        shown,
    })
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
            interval_method: None,
            approximation: None,
        }
    }

    fn curve(name: &str, pts: Vec<Point>) -> Curve {
        Curve::measured(Estimator::from_name(name).unwrap(), pts)
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
        assert_eq!(best_curve(&b).origin, Origin::Best);
        assert_eq!(best_curve(&b).name(), "best");
        assert_eq!(best_curve(&b).estimator, Estimator::Oadev);
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

/// The L(f) uncertainty assumed for a phase-noise table that states none,
/// dB (common practice: phase-noise analysers quote about ±2 dB).
pub const DEFAULT_TABLE_UNCERTAINTY_DB: f64 = 2.0;

/// A converted point is compared only when at most this share of its
/// variance comes from offsets below the table's lowest one (the table's
/// reach).
pub const MAX_BELOW_TABLE: f64 = 0.1;

/// How the two views are put side by side.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ViewOptions {
    /// The record's measurement bandwidth f_h, Hz (`None`: the record's
    /// Nyquist frequency 1/(2τ0)).
    pub bandwidth: Option<f64>,
    /// The table's own uncertainty, dB of L(f).
    pub table_uncertainty_db: f64,
}

impl Default for ViewOptions {
    fn default() -> Self {
        Self {
            bandwidth: None,
            table_uncertainty_db: DEFAULT_TABLE_UNCERTAINTY_DB,
        }
    }
}

/// One τ where a measured point and the table's σ(τ) at the record's
/// bandwidth are compared.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Agreement {
    /// τ, s.
    pub tau: f64,
    /// The measured deviation.
    pub measured: f64,
    /// Its confidence interval.
    pub lo: f64,
    /// Its confidence interval.
    pub hi: f64,
    /// The deviation from the table at the record's bandwidth.
    pub converted: f64,
    /// measured / converted.
    pub ratio: f64,
    /// The largest |ln(measured/converted)| taken as agreement (see
    /// [`agreement`]).
    pub tolerance: f64,
    /// Share of the converted variance from offsets below the table.
    pub below_table: f64,
    /// The two agree within the tolerance.
    pub agree: bool,
}

/// Why two views share no τ, and how far apart they are.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Apart {
    /// In words.
    pub reason: String,
    /// How far apart, as a ratio of offsets or of τ (`reason` says which):
    /// ≥ 1 when they do not overlap at all, below 1 when the table starts
    /// below the record's bandwidth but too close to it to cover any τ.
    pub factor: f64,
}

/// The comparison of one measured curve with the table.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Comparison {
    /// The measured estimator.
    pub estimator: String,
    /// The bandwidth both sides are taken at, Hz.
    pub f_h: f64,
    /// f_h was stated by the user (else it is 1/(2τ0)).
    pub bandwidth_given: bool,
    /// The table's uncertainty used, dB of L(f).
    pub table_uncertainty_db: f64,
    /// The τ range compared (first and last compared τ), when any.
    pub common: Option<[f64; 2]>,
    /// Every compared τ.
    pub points: Vec<Agreement>,
    /// Measured points inside the common range without a confidence
    /// interval (not compared).
    pub without_interval: usize,
    /// Set when the two views share no τ.
    pub apart: Option<Apart>,
}

impl Comparison {
    /// True when every compared point agrees; `None` when nothing was
    /// compared.
    pub fn agree(&self) -> Option<bool> {
        (!self.points.is_empty()).then(|| self.points.iter().all(|p| p.agree))
    }
}

/// Whether a measured point and a converted value agree:
/// |ln(measured/converted)| ≤ √(δ_m² + δ_t²), with δ_m the half-width in log
/// of the measured confidence interval on the side of the converted value
/// (ln(hi/measured) when converted > measured, else ln(measured/lo)), and
/// δ_t = (u/20)·ln 10 for a table uncertain by ±u dB (an uncertainty of u dB
/// in L(f) is u/2 dB, a factor 10^(u/20), in σ). The two uncertainties are
/// independent and added in quadrature, each at the interval's confidence.
/// Returns (tolerance, agree).
///
/// ```
/// use tauwise::stability::agreement;
/// // Inside the measured interval: agree, whatever the table's uncertainty.
/// assert!(agreement(1.0, 0.9, 1.1, 1.05, 0.0).1);
/// // Twice the measured value (a table 6 dB too high) is far outside.
/// assert!(!agreement(1.0, 0.9, 1.1, 2.0, 2.0).1);
/// ```
pub fn agreement(measured: f64, lo: f64, hi: f64, converted: f64, table_db: f64) -> (f64, bool) {
    let dm = if converted > measured {
        (hi / measured).ln()
    } else {
        (measured / lo).ln()
    };
    let dt = table_db / 20.0 * std::f64::consts::LN_10;
    let tol = (dm * dm + dt * dt).sqrt();
    let d = (measured / converted).ln().abs();
    (tol, d.is_finite() && tol.is_finite() && d <= tol)
}

/// The phase-noise side of the combined short/long-τ view.
#[derive(Debug, Clone)]
pub struct PhaseNoiseView {
    /// Per convertible measured curve: origin [`Origin::FromLf`], the table's
    /// σ(τ) at the record's bandwidth over the compared τ; and
    /// [`Origin::FromLfFullBand`], the table's σ(τ) with its whole
    /// bandwidth at τ below the record's τ0 (what the record cannot see;
    /// not for MDEV/TDEV, which need τ = nτ0). Points below τ0 carry m = 0
    /// and terms = 0.
    pub curves: Vec<Curve>,
    /// One comparison per convertible measured curve.
    pub comparisons: Vec<Comparison>,
    /// The table's highest offset (the full-band curves' f_h), Hz.
    pub table_f_h: f64,
}

fn bare(tau: f64, tau0: f64, value: f64) -> Point {
    let m = if tau < tau0 * (1.0 - 1e-9) {
        0
    } else {
        (tau / tau0).round() as usize
    };
    Point::bare(crate::deviation::Estimate {
        tau,
        m,
        value,
        terms: 0,
    })
}

/// Put the `measured` curves of a record sampled at `tau0` beside the
/// spectrum `s` (normally an L(f) table), comparing like with like:
///
/// - both sides at the record's bandwidth f_h ([`ViewOptions::bandwidth`],
///   else 1/(2τ0)): σ²(τ) = ∫_0^{f_h} S_y(f)|H(f)|² df from the table
///   ([`crate::spectrum::sigma::sigma_points`]), because where white or
///   flicker PM matters σ(τ) depends on the bandwidth;
/// - only over the τ both cover: the measured τ at which at most
///   [`MAX_BELOW_TABLE`] of the converted variance comes from offsets below
///   the table's lowest one (and the integral is not truncated there), and
///   from 2τ0 when f_h is the default 1/(2τ0) (at τ0 a sampled record's σ
///   depends on how the instrument sampled: point samples alias white FM
///   from above 1/(2τ0), by 25 % at τ0, an anti-alias filter does not);
/// - with a tolerance that holds the table's own uncertainty
///   ([`agreement`]).
///
/// When the views share no τ, [`Comparison::apart`] says why and how far
/// apart they are: the table starts above the record's bandwidth, ends
/// below it, or its reach ends at a τ below the record's shortest.
pub fn from_phase_noise(
    measured: &[Curve],
    s: &crate::spectrum::Spectrum,
    tau0: f64,
    opts: &ViewOptions,
) -> Result<PhaseNoiseView> {
    use crate::spectrum::sigma::{sigma_points, SigmaOptions};
    if !(opts.table_uncertainty_db.is_finite() && opts.table_uncertainty_db >= 0.0) {
        return Err(Error::invalid(format!(
            "the table's uncertainty must be a number of dB ≥ 0, got {}",
            opts.table_uncertainty_db
        )));
    }
    let (f_lo, f_top) = s.range();
    let f_h = opts.bandwidth.unwrap_or(0.5 / tau0);
    if !(f_h.is_finite() && f_h > 0.0) {
        return Err(Error::invalid(format!(
            "the record's bandwidth must be a positive frequency, got {f_h} Hz"
        )));
    }
    let mut curves = Vec::new();
    let mut comparisons = Vec::new();
    for c in measured {
        if c.origin != Origin::Measured || c.estimator.transfer_function().is_none() {
            continue;
        }
        let kind = c.estimator;
        let mut cmp = Comparison {
            estimator: c.estimator.name().to_string(),
            f_h,
            bandwidth_given: opts.bandwidth.is_some(),
            table_uncertainty_db: opts.table_uncertainty_db,
            common: None,
            points: Vec::new(),
            without_interval: 0,
            apart: None,
        };
        // The short-τ view: the table with its whole bandwidth below τ0.
        if !kind.needs_whole_tau0() {
            let k_min = ((1.0 / (f_top * tau0)).log2().ceil() as i32).clamp(-14, 0);
            let taus: Vec<f64> = (k_min..0).map(|k| tau0 * 2f64.powi(k)).collect();
            if !taus.is_empty() {
                let pts = sigma_points(s, kind, &taus, SigmaOptions { tau0, f_h: f_top })?;
                curves.push(Curve {
                    estimator: c.estimator,
                    origin: Origin::FromLfFullBand,
                    points: pts
                        .iter()
                        .filter(|p| !p.truncated && p.dev > 0.0)
                        .map(|p| bare(p.tau, tau0, p.dev))
                        .collect(),
                });
            }
        }
        let tau_min = c
            .points
            .iter()
            .map(|p| p.estimate.tau)
            .fold(f64::INFINITY, f64::min);
        if f_h > f_top * (1.0 + 1e-12) {
            cmp.apart = Some(Apart {
                reason: format!(
                    "the table ends at {f_top} Hz, below the record's bandwidth of {f_h} Hz: it cannot give σ(τ) at that bandwidth"
                ),
                factor: f_h / f_top,
            });
        } else if f_h <= f_lo {
            cmp.apart = Some(Apart {
                reason: format!(
                    "the table starts at {f_lo} Hz, above the record's bandwidth of {f_h} Hz: the two cover different offsets"
                ),
                factor: f_lo / f_h,
            });
        } else if tau_min.is_finite() {
            let opt = SigmaOptions { tau0, f_h };
            let taus: Vec<f64> = c.points.iter().map(|p| p.estimate.tau).collect();
            let conv = sigma_points(s, kind, &taus, opt)?;
            let mut kept = Vec::new();
            // At the default f_h = 1/(2τ0), τ = τ0 itself is left out: there
            // a sampled record's σ depends on how its instrument sampled
            // (point samples alias white FM from above 1/(2τ0), an
            // anti-alias filter does not) — for white FM the two differ by
            // 25 % — which neither the record nor the table says.
            let from_tau = if opts.bandwidth.is_some() {
                0.0
            } else {
                2.0 * tau0 * (1.0 - 1e-9)
            };
            for (p, q) in c.points.iter().zip(&conv) {
                if q.tau < from_tau
                    || q.truncated
                    || q.below_table > MAX_BELOW_TABLE
                    || !(q.dev > 0.0)
                {
                    continue;
                }
                kept.push(bare(q.tau, tau0, q.dev));
                match (p.lo, p.hi) {
                    (Some(lo), Some(hi)) if lo > 0.0 && hi > 0.0 => {
                        let m = p.estimate.value;
                        let (tolerance, agree) =
                            agreement(m, lo, hi, q.dev, opts.table_uncertainty_db);
                        cmp.points.push(Agreement {
                            tau: q.tau,
                            measured: m,
                            lo,
                            hi,
                            converted: q.dev,
                            ratio: m / q.dev,
                            tolerance,
                            below_table: q.below_table,
                            agree,
                        });
                    }
                    _ => cmp.without_interval += 1,
                }
            }
            if let (Some(a), Some(b)) = (kept.first(), kept.last()) {
                cmp.common = Some([a.estimate.tau, b.estimate.tau]);
            } else {
                // The table's reach: the longest τ (octaves down from the
                // record's shortest) whose σ² comes at most MAX_BELOW_TABLE
                // from below the table (Allan form, which exists below τ0).
                let mut reach = None;
                for k in 1..=40 {
                    let tau = tau_min * 2f64.powi(-k);
                    let q = sigma_points(s, Estimator::Oadev, &[tau], opt)?[0];
                    if !q.truncated && q.below_table <= MAX_BELOW_TABLE {
                        reach = Some(tau);
                        break;
                    }
                }
                cmp.apart = Some(match reach {
                    Some(r) => Apart {
                        reason: format!(
                            "the table reaches τ ≤ {r} s (beyond it more than {:.0} % of σ² would come from below its lowest offset, {f_lo} Hz); the record's shortest τ is {tau_min} s",
                            MAX_BELOW_TABLE * 100.0
                        ),
                        factor: tau_min / r,
                    },
                    None => Apart {
                        reason: format!(
                            "the table starts at {f_lo} Hz, too close to the record's bandwidth of {f_h} Hz: at every τ more than {:.0} % of σ² would come from below it (the factor is of offsets)",
                            MAX_BELOW_TABLE * 100.0
                        ),
                        factor: f_lo / f_h,
                    },
                });
            }
            if !kept.is_empty() {
                curves.push(Curve {
                    estimator: c.estimator,
                    origin: Origin::FromLf,
                    points: kept,
                });
            }
        }
        comparisons.push(cmp);
    }
    if comparisons.is_empty() {
        return Err(Error::insufficient(format!(
            "no measured estimator can be converted from the phase-noise table ({} can)",
            Estimator::names(&Estimator::convertible())
        )));
    }
    Ok(PhaseNoiseView {
        curves,
        comparisons,
        table_f_h: f_top,
    })
}
