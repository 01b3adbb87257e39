//! The σ(τ) picture of one record: the requested estimators evaluated over a
//! τ grid, each point annotated with its statistics (EDF, confidence interval,
//! noise type) by [`crate::stats`]. Used by the `stability` command and the
//! report, so both print the same numbers.

use crate::deviation::{compute, Curve, Estimator};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::{annotate, StatsOptions};
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
}

impl Request {
    /// The usual request: the given estimators on the octave grid at 68.3 %.
    pub fn new(estimators: Vec<Estimator>) -> Self {
        Self {
            estimators,
            grid: TauGrid::Octave,
            confidence: 0.683,
            forced_alpha: None,
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
    };
    let n = x.len();
    let mut curves = Vec::with_capacity(req.estimators.len());
    for &est in &req.estimators {
        let ms = req.grid.ms(x.tau0, est.max_m(n))?;
        let estimates = compute(est, x, &ms);
        let points = annotate(est, x, &estimates, &opts)?;
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
    /// The fit: h_α, dominant ranges, residual per point (dB) in the order
    /// of the points of `curves`, OADEV first.
    pub fit: crate::model::fit::ModelFit,
}

/// Fit the power-law model of `x` over the τ grid `grid` (see [`RecordModel`]).
/// Points without an EDF (noise not identified) are weighted by their number
/// of terms over m, a rough count of independent averages.
pub fn fit_record_model(x: &PhaseRecord, grid: &TauGrid) -> Result<RecordModel> {
    use crate::model::fit::{fit_variances, FitPoint, VarKind};
    let req = Request {
        estimators: vec![Estimator::Oadev, Estimator::Mdev],
        grid: grid.clone(),
        confidence: crate::stats::DEFAULT_CONFIDENCE,
        forced_alpha: None,
    };
    let curves = analyse(x, &req)?;
    let mut points = Vec::new();
    for (curve, kind) in curves.iter().zip([VarKind::Avar, VarKind::Mvar]) {
        for p in &curve.points {
            let e = p.estimate;
            if !(e.value > 0.0) {
                continue;
            }
            let weight = p.edf.unwrap_or(e.terms as f64 / e.m as f64).max(1.0);
            points.push(FitPoint {
                kind,
                tau: e.tau,
                tau0: x.tau0,
                var: e.value * e.value,
                weight,
            });
        }
    }
    let fit = fit_variances(&points, 0.5 / x.tau0)?;
    Ok(RecordModel { curves, fit })
}
