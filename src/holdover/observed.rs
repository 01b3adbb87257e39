//! The record after the start of holdover, set beside the prediction.
//!
//! When holdover is started inside the record (`start` before its end), the
//! rest of the record shows what the clock actually did with no reference:
//! the observed time error TE_obs(t) = te0 + x(T + t) − x(T), x the phase of
//! the record and T the start. It is read at the prediction's output times
//! (linear interpolation between samples) and compared with the predicted
//! p95 of |TE|; the first sample at which |TE_obs| exceeds the budget is
//! found at the record's own resolution.
//!
//! One record is one path of the process: it should lie inside the p95
//! envelope at about 95 % of the times, and one record cannot confirm the
//! model by itself — but a record far outside the envelope says the model
//! (aging law, noise fit, settle window) does not describe this clock.

use super::{HoldoverModel, Prediction};
use crate::record::Record;

/// The observed time error at one of the prediction's output times.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ObservedPoint {
    /// Time since the start of holdover, s.
    pub t: f64,
    /// Observed TE (signed), s.
    pub te: f64,
    /// Predicted p95 of |TE| at t, s.
    pub p95: f64,
    /// |TE| ≤ p95.
    pub inside: bool,
}

/// The comparison of the record after the start with the prediction.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Observed {
    /// The output times the record covers (gap-free at both neighbours).
    pub points: Vec<ObservedPoint>,
    /// How far past the start the record reaches, s (at most the span).
    pub covered: f64,
    /// Largest |TE|/p95 over the points, and its t.
    pub worst: Option<(f64, f64)>,
    /// First sample time after the start at which |TE| exceeds the budget.
    pub exceeds_budget_at: Option<f64>,
}

impl Observed {
    /// Number of points with |TE| inside the predicted p95.
    pub fn inside(&self) -> usize {
        self.points.iter().filter(|p| p.inside).count()
    }
}

/// Compare the record after `model.start` with the prediction made from the
/// record before it (module notes), over the prediction's span. `None` when
/// the record does not reach past the start or its phase at the start is a
/// gap.
///
/// ```
/// use tauwise::holdover::{observed::observe, HoldoverModel, Prediction, TePoint};
/// use tauwise::verdict::{Coverage, Judgement};
/// use tauwise::holdover::aging::Aging;
/// use tauwise::{PhaseRecord, Record};
/// use tauwise::model::PowerLaw;
/// // Phase of a constant frequency offset 1e-9: 1 ns per second.
/// let x: Vec<f64> = (0..200).map(|i| 1e-9 * i as f64).collect();
/// let rec = Record::Phase(PhaseRecord::new(x, 1.0).unwrap());
/// let model = HoldoverModel { te0: 0.0, y0: 1e-9, y0_sigma: 0.0,
///     aging: Aging::Linear { c: 0.0, d: 0.0, d_sigma: 0.0 }, start: 100.0,
///     temp_worst: 0.0, noise: PowerLaw::zero(0.5), uncertainty: Default::default() };
/// let pred = Prediction { te: vec![TePoint { t: 50.0, deterministic: 5e-8,
///     p50: 5e-8, p95: 6e-8, p99: 7e-8, rms: 5e-8, within_budget: 1.0 }], holds_for: None,
///     judgement: Judgement::judged(false, Coverage::Full), step: 1.0, paths: 100,
///     paths_within_budget: 100 };
/// let o = observe(&rec, &model, &pred, 80.0, 3.05e-8).unwrap();
/// assert!((o.points[0].te - 5e-8).abs() < 1e-20);
/// assert_eq!(o.inside(), 1);
/// assert_eq!(o.covered, 80.0);
/// assert_eq!(o.exceeds_budget_at, Some(31.0)); // 31 ns > 30.5 ns
/// ```
pub fn observe(
    rec: &Record,
    model: &HoldoverModel,
    pred: &Prediction,
    span: f64,
    budget: f64,
) -> Option<Observed> {
    let phase = rec.to_phase();
    let (x, tau0) = (&phase.x, phase.tau0);
    let k = (model.start / tau0).round() as usize;
    let x0 = *x.get(k).filter(|v| !v.is_nan())?;
    let last = x.len().checked_sub(1)?;
    if last <= k {
        return None;
    }
    let covered = ((last - k) as f64 * tau0).min(span);
    let te_at = |t: f64| -> Option<f64> {
        let u = t / tau0;
        let i = u.floor() as usize;
        let f = u - i as f64;
        let a = *x.get(k + i)?;
        let v = if f > 0.0 {
            let b = *x.get(k + i + 1)?;
            a + f * (b - a)
        } else {
            a
        };
        (!v.is_nan()).then_some(model.te0 + v - x0)
    };
    let points: Vec<ObservedPoint> = pred
        .te
        .iter()
        .filter(|p| p.t <= covered * (1.0 + 1e-12))
        .filter_map(|p| {
            let te = te_at(p.t.min(covered))?;
            Some(ObservedPoint {
                t: p.t,
                te,
                p95: p.p95,
                inside: te.abs() <= p.p95,
            })
        })
        .collect();
    let worst = points
        .iter()
        .filter(|p| p.p95 > 0.0)
        .map(|p| (p.te.abs() / p.p95, p.t))
        .max_by(|a, b| a.0.total_cmp(&b.0));
    let steps = (covered / tau0).round() as usize;
    let exceeds_budget_at = (1..=steps).find_map(|i| {
        let v = x[k + i];
        (!v.is_nan() && (model.te0 + v - x0).abs() > budget).then_some(i as f64 * tau0)
    });
    Some(Observed {
        points,
        covered,
        worst,
        exceeds_budget_at,
    })
}
