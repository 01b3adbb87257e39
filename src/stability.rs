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
