//! Wander: TIE statistics, MTIE and TDEV of a phase (TIE) record, checked
//! against network masks.
//!
//! - [`tie`] — max |TIE|, peak-to-peak, rms; constant-frequency-offset removal.
//! - MTIE and TDEV come from the estimator registry
//!   ([`crate::deviation::Estimator::Mtie`], [`crate::deviation::Estimator::Tdev`],
//!   ITU-T G.810 / NIST SP 1065), which holds their fast forms and the direct
//!   references they are tested against.
//! - [`masks`] — built-in ITU-T masks (values recalled from memory) and the
//!   mask type; user masks come from limit files ([`crate::limits`]).
//! - [`check`] — a measured curve against a mask: verdict, worst margin,
//!   crossing τ, violations.
//!
//! - [`te`] — measurement filters on the time-error record
//!   ([`te::filter`]) and the time-error metrics (cTE, max |TE|, dTE_L,
//!   dTE_H); [`observation`] — what the record's span lets a mask check.
//!
//! [`analyse`] runs all of it on one record.

pub mod check;
pub mod masks;
pub mod observation;
pub mod te;
pub mod tie;

use crate::deviation::{compute, Estimate, Estimator};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::tau::TauGrid;
use check::{MaskCheck, Support};
use masks::{Mask, Metric};

/// The default τ grid of the wander analysis: [`TauGrid::PerDecade`]`(10)`
/// (m = round(10^(k/10)), deduplicated), from τ0 to the longest τ the record
/// supports for each metric (see [`max_m`]), with the record's longest τ
/// itself and the τ on both sides of every mask breakpoint added, so that
/// the check reaches the ends of every mask segment.
pub const DEFAULT_GRID: TauGrid = TauGrid::PerDecade(10);

/// The longest averaging factor the wander check uses for `metric` on a
/// record of `points` phase samples: MTIE over the whole record,
/// m = N − 1 (ITU-T G.810: MTIE is defined up to the observation period);
/// TDEV up to a third of it, m = (N − 1)/3 (the longest τ with one
/// second difference of averages, NIST SP 1065 §5.2.6).
///
/// ```
/// use tauwise::wander::{masks::Metric, max_m};
/// assert_eq!(max_m(Metric::Mtie, 108_000), 107_999);
/// assert_eq!(max_m(Metric::Tdev, 108_000), 35_999);
/// ```
pub fn max_m(metric: Metric, points: usize) -> usize {
    let n = points.saturating_sub(1);
    match metric {
        Metric::Mtie => n,
        Metric::Tdev => n / 3,
    }
}

/// How the τ of the wander analysis are chosen.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Options {
    /// The τ grid; `None`: [`DEFAULT_GRID`] with the record's end and the
    /// masks' breakpoints added. A grid given here is used as given.
    pub grid: Option<TauGrid>,
    /// Only τ in this range (s), inclusive; `None`: every τ the record
    /// supports.
    pub range: Option<(f64, f64)>,
    /// Remove the least-squares constant frequency offset first.
    pub remove_offset: bool,
    /// A measurement filter applied to the record (after the offset removal)
    /// before the TIE statistics, MTIE, TDEV and the mask checks.
    pub filter: Option<te::filter::MeasurementFilter>,
    /// Compute the time-error metrics ([`te`]) too, with these options.
    pub te: Option<te::TeOptions>,
    /// The decision rule of the mask verdicts ([`crate::decision`]; simple
    /// by default).
    pub decision: crate::decision::DecisionRule,
}

/// The averaging factors of one metric's curve for a record of `points`
/// samples at `tau0` (see [`Options`] and [`DEFAULT_GRID`]), together with
/// the [`Support`] a mask check needs to state its coverage.
///
/// ```
/// use tauwise::wander::{masks::{builtin, Metric}, plan, Options};
/// let masks = builtin("g8262-opt1").unwrap();
/// // 3 h at 100 ms: MTIE reaches the record's span, 10 799.9 s.
/// let (ms, support) = plan(Metric::Mtie, 108_000, 0.1, &Options::default(), &masks).unwrap();
/// assert_eq!(*ms.last().unwrap(), 107_999);
/// assert!(ms.contains(&10_000)); // the mask's end, 1000 s
/// assert!((support.top - 10_799.9).abs() < 1e-9);
/// ```
pub fn plan(
    metric: Metric,
    points: usize,
    tau0: f64,
    opts: &Options,
    masks: &[Mask],
) -> Result<(Vec<usize>, Support)> {
    let top_m = max_m(metric, points);
    let mut ms = match &opts.grid {
        Some(g) => g.ms(tau0, top_m)?,
        None => {
            let mut v = DEFAULT_GRID.ms(tau0, top_m)?;
            if top_m >= 1 {
                v.push(top_m);
            }
            for m in masks.iter().filter(|m| m.metric == metric) {
                let (lo, _) = m.tau_range();
                let mut edges = m.breakpoints();
                edges.push(lo);
                for b in edges.into_iter().filter(|b| b.is_finite() && *b > 0.0) {
                    let k = b / tau0;
                    if !(k < top_m as f64 + 2.0) {
                        continue;
                    }
                    let f = (k + 1e-9).floor();
                    // The last τ = m·τ0 at or below the breakpoint, and the first above.
                    for c in [f, f + 1.0] {
                        if c >= 1.0 && c <= top_m as f64 {
                            v.push(c as usize);
                        }
                    }
                }
            }
            v.sort_unstable();
            v.dedup();
            v
        }
    };
    let what = match metric {
        Metric::Mtie => "the record's span",
        Metric::Tdev => "a third of the record's span, the longest TDEV",
    };
    let mut support = Support {
        tau0,
        bottom: tau0,
        bottom_why: "the record's τ0".into(),
        top: top_m as f64 * tau0,
        top_why: what.into(),
    };
    if let Some((a, b)) = opts.range {
        if !(a.is_finite() && b.is_finite() && a > 0.0 && b >= a) {
            return Err(Error::invalid(format!(
                "wander τ range {a} s to {b} s: expected 0 < FROM ≤ TO"
            )));
        }
        let tol = 1e-9;
        ms.retain(|&m| {
            let t = m as f64 * tau0;
            t >= a * (1.0 - tol) && t <= b * (1.0 + tol)
        });
        if a > support.bottom {
            support.bottom = a;
            support.bottom_why = "the requested τ range".into();
        }
        if b < support.top {
            support.top = b;
            support.top_why = "the requested τ range".into();
        }
    }
    Ok((ms, support))
}

/// Everything the wander analysis reports for one record.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct WanderResult {
    /// TIE statistics over the record.
    pub tie: tie::TieStats,
    /// MTIE at each τ (serialised in the shape of a
    /// [`crate::deviation::Point`], as in `stability`).
    #[serde(serialize_with = "crate::deviation::serialize_as_points")]
    pub mtie: Vec<Estimate>,
    /// TDEV at each τ (serialised as MTIE).
    #[serde(serialize_with = "crate::deviation::serialize_as_points")]
    pub tdev: Vec<Estimate>,
    /// One check per mask given (`"masks"` in the `wander` document).
    #[serde(rename = "masks")]
    pub checks: Vec<MaskCheck>,
    /// The measurement filter applied before everything above, when asked.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub filter: Option<te::filter::AppliedFilter>,
    /// The time-error metrics, when asked (or when a time-error limit
    /// was given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub te: Option<te::TeMetrics>,
    /// The time-error limits judged on them (`cte`, `max-te`, `max-te-l`,
    /// `dte-h`, `dte-l`, `dte-l-tdev`; `"te_limits"`, absent when none).
    #[serde(rename = "te_limits", skip_serializing_if = "Vec::is_empty")]
    pub te_checks: Vec<crate::limits::LimitCheck>,
    /// The observation the verdicts (and the time-error metrics) rest on,
    /// when masks were checked or the metrics asked for.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub observation: Option<observation::Observation>,
}

/// Run the wander analysis: TIE statistics, MTIE and TDEV on the τ of
/// [`plan`] (by default over the whole record: MTIE to its span, TDEV to a
/// third of it), and every mask against the curve of its metric. With
/// `remove_offset`, the least-squares constant frequency offset is removed
/// from the record before everything else (MTIE of an offset alone is y·τ
/// and would hide the wander); TDEV is unaffected by it (second
/// differences). With a measurement filter (`opts.filter`), the record
/// (offset removed when asked) goes through it first and everything above
/// is computed on the filtered record, its settling intervals dropped
/// ([`te::filter`]). With `opts.te`, the time-error metrics of the record
/// (offset removed when asked, never through the measurement filter: their
/// filters are part of their definition) are added ([`te`]); with masks or
/// `opts.te`, the observation they rest on ([`observation`]).
pub fn analyse(rec: &PhaseRecord, opts: &Options, masks: &[Mask]) -> Result<WanderResult> {
    analyse_limits(rec, opts, masks, &[])
}

/// [`analyse`], and the time-error limits of `limits` (metrics `cte`,
/// `max-te`, `max-te-l`, `dte-h`, `dte-l`, `dte-l-tdev`; others are
/// skipped) judged on the time-error metrics
/// ([`te::metrics_checked`]), which are then computed whether or not
/// `opts.te` asks for them (with `opts.te`'s options, or the defaults).
/// When they cannot be computed and `opts.te` did not ask for them (a τ0
/// too long for the 0.1 Hz split), `max-te` and `cte` are judged on the
/// record as read and the filtered metrics are `not-judged` with the
/// reason ([`te::check_unfiltered`]).
pub fn analyse_limits(
    rec: &PhaseRecord,
    opts: &Options,
    masks: &[Mask],
    limits: &[crate::limits::Limit],
) -> Result<WanderResult> {
    let te_limits: Vec<crate::limits::Limit> = limits
        .iter()
        .filter(|l| matches!(l.metric, crate::limits::LimitMetric::Te(_)))
        .cloned()
        .collect();
    // The record the time-error metrics and the measurement filter see: as
    // read, or with the least-squares frequency offset removed.
    let te_opts = opts
        .te
        .or((!te_limits.is_empty()).then(te::TeOptions::default));
    let offset = if opts.remove_offset && (opts.filter.is_some() || te_opts.is_some()) {
        Some(tie::frequency_offset(rec)?)
    } else {
        None
    };
    let base_owned;
    let base = match offset {
        Some(y) => {
            base_owned = tie::remove_offset(rec, y);
            &base_owned
        }
        None => rec,
    };
    // The measurement filter first: its settling interval shortens the record
    // every τ is planned on.
    let filtered = opts.filter.map(|f| f.apply(base)).transpose()?;
    let (work, remove) = match &filtered {
        Some(f) => (&f.record, false),
        None => (rec, opts.remove_offset),
    };
    let n = work.len();
    let (mtie_ms, mtie_support) = plan(Metric::Mtie, n, work.tau0, opts, masks)?;
    let (tdev_ms, tdev_support) = plan(Metric::Tdev, n, work.tau0, opts, masks)?;
    // Each mask is checked on the τ of its own plan (the grid, the record's
    // end and its own breakpoints), so that its verdict does not depend on
    // which other masks were asked for; the curves hold the union.
    let own = masks
        .iter()
        .map(|m| plan(m.metric, n, work.tau0, opts, std::slice::from_ref(m)).map(|p| p.0))
        .collect::<Result<Vec<_>>>()?;
    let mut res = run(
        work,
        (&mtie_ms, &mtie_support),
        (&tdev_ms, &tdev_support),
        remove,
        masks,
        Some(&own),
        &opts.decision,
    )?;
    if let Some(f) = &filtered {
        res.filter = Some(f.applied.clone());
        res.tie.offset_removed = offset;
    }
    if let Some(t) = &te_opts {
        match te::metrics_checked(base, t, opts, &te_limits) {
            Ok((m, c)) => {
                res.te = Some(m);
                res.te_checks = c;
            }
            Err(e) if opts.te.is_none() => {
                res.te_checks = te::check_unfiltered(
                    base,
                    t,
                    &te_limits,
                    &format!("the time-error metrics could not be computed: {e}"),
                );
            }
            Err(e) => return Err(e),
        }
    }
    // Time-error values of one record have no distribution here: a guarded
    // rule decides them at the estimate and says so.
    for c in &mut res.te_checks {
        let why = crate::decision::Probabilities::Unavailable(TE_NO_DISTRIBUTION);
        opts.decision.decide(&mut c.judgement, why);
    }
    if !masks.is_empty() || te_opts.is_some() {
        res.observation = Some(observation::observe(work, masks));
    }
    Ok(res)
}

/// [`analyse`] on given averaging factors for MTIE and TDEV, each with the
/// [`Support`] its mask checks state their coverage against.
pub fn analyse_at(
    rec: &PhaseRecord,
    mtie_at: (&[usize], &Support),
    tdev_at: (&[usize], &Support),
    remove_offset: bool,
    masks: &[Mask],
) -> Result<WanderResult> {
    run(
        rec,
        mtie_at,
        tdev_at,
        remove_offset,
        masks,
        None,
        &crate::decision::DecisionRule::default(),
    )
}

/// The analysis; `own[k]`, when given, are the averaging factors mask k is
/// checked on (a subset of its metric's curve).
fn run(
    rec: &PhaseRecord,
    mtie_at: (&[usize], &Support),
    tdev_at: (&[usize], &Support),
    remove_offset: bool,
    masks: &[Mask],
    own: Option<&[Vec<usize>]>,
    rule: &crate::decision::DecisionRule,
) -> Result<WanderResult> {
    let valid = rec.x.iter().filter(|v| !v.is_nan()).count();
    if valid < 2 {
        return Err(Error::insufficient(format!(
            "wander needs at least two valid phase samples, the record has {valid}"
        )));
    }
    // Phase of extreme magnitude would overflow TDEV's and the TIE rms's
    // squares: work on an exactly rescaled copy, scale the results back.
    let rescaled = rec.rescaled_for_squares();
    let (rec, back) = match &rescaled {
        Some((r, k)) => (r, *k),
        None => (rec, 1.0),
    };
    let mut tie = tie::tie_stats(rec, remove_offset)?;
    let owned;
    let rec = match tie.offset_removed {
        Some(y) => {
            owned = tie::remove_offset(rec, y);
            &owned
        }
        None => rec,
    };
    if mtie_at.0.is_empty() && tdev_at.0.is_empty() {
        return Err(Error::invalid("wander needs at least one τ"));
    }
    let mut mtie = compute(Estimator::Mtie, rec, mtie_at.0);
    let mut tdev = compute(Estimator::Tdev, rec, tdev_at.0);
    if back != 1.0 {
        for e in mtie.iter_mut().chain(tdev.iter_mut()) {
            e.value *= back;
        }
        tie.max_abs *= back;
        tie.pk_pk *= back;
        tie.rms *= back;
        tie.offset_removed = tie.offset_removed.map(|y| y * back);
    }
    let curve = |e: &[Estimate], keep: Option<&Vec<usize>>| -> Vec<(f64, f64)> {
        e.iter()
            .filter(|p| keep.map_or(true, |k| k.binary_search(&p.m).is_ok()))
            .map(|p| (p.tau, p.value))
            .collect()
    };
    // The EDF of each TDEV point a mask checks (the noise identified at
    // that τ alone, as `stability` annotates TDEV), for the probability of
    // conformance.
    let tdev_edf: Vec<Option<f64>> = if masks.iter().any(|m| m.metric == Metric::Tdev) {
        tdev_edfs(rec, &tdev)
    } else {
        Vec::new()
    };
    let checks = masks
        .iter()
        .enumerate()
        .map(|(k, m)| {
            let keep = own.map(|o| &o[k]);
            match m.metric {
                Metric::Mtie => {
                    let mut c = check::check_mask(m, &curve(&mtie, keep), mtie_at.1);
                    rule.decide(
                        &mut c.judgement,
                        crate::decision::Probabilities::Unavailable(MTIE_NO_DISTRIBUTION),
                    );
                    c
                }
                Metric::Tdev => {
                    let pts = curve(&tdev, keep);
                    let mut c = check::check_mask(m, &pts, tdev_at.1);
                    c.checked_points = pts
                        .iter()
                        .filter(|(t, _)| t.is_finite() && *t > 0.0)
                        .filter_map(|&(t, v)| {
                            let l = m.limit(t)?;
                            let edf = tdev
                                .iter()
                                .position(|e| e.tau == t)
                                .and_then(|i| tdev_edf[i]);
                            Some(crate::decision::CheckedPoint::sigma(t, v, l, edf))
                        })
                        .collect();
                    let probs = crate::decision::point_probabilities(&c.checked_points);
                    rule.decide(
                        &mut c.judgement,
                        crate::decision::Probabilities::Points(&probs),
                    );
                    c
                }
            }
        })
        .collect();
    Ok(WanderResult {
        tie,
        mtie,
        tdev,
        checks,
        filter: None,
        te: None,
        te_checks: Vec::new(),
        observation: None,
    })
}

/// Why an MTIE verdict has no probability of conformance.
pub const MTIE_NO_DISTRIBUTION: &str = "MTIE is the largest time-error excursion of this one \
record, and tauwise has no distribution for it";

/// Why a time-error limit (cTE, max|TE|, dTE) has no probability of
/// conformance.
pub const TE_NO_DISTRIBUTION: &str = "time-error values (cTE, max|TE|, dTE) of this one record \
have no distribution in tauwise";

/// The EDF of each TDEV estimate of `rec` (in order): the noise type
/// identified at its τ ([`crate::stats::NoiseIdentifier`], the record and
/// that τ alone) and the TDEV rule of [`crate::stats::annotate::point_edf`]
/// — the EDF `stability --dev tdev` prints. `None` where no noise type was
/// identified or the estimator has no rule for it.
fn tdev_edfs(rec: &PhaseRecord, tdev: &[Estimate]) -> Vec<Option<f64>> {
    use crate::stats::annotate::{identification_factor, point_edf};
    let ids = crate::stats::NoiseIdentifier::new(rec);
    tdev.iter()
        .map(|e| {
            if !e.value.is_finite() {
                return None;
            }
            let m_id = identification_factor(Estimator::Tdev, e, rec.tau0);
            let id = ids.at(m_id)?;
            point_edf(Estimator::Tdev, rec.len(), rec.tau0, e, &id)
        })
        .collect()
}
