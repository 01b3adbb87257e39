//! The `holdover` document: the model taken from the record, the predicted
//! time error, the verdict, and the record after the start beside it.

use super::{csv_text, plain, Result};
use crate::holdover::aging::Aging;
use crate::holdover::observed::{Observed, ObservedPoint};
use crate::holdover::{HoldoverModel, Prediction, Settings, TePoint, Uncertainty};
use crate::model::PowerLaw;
use crate::verdict::Judgement;
use serde::Serialize;

/// The `holdover` results: `{"span_s","budget_s","model","paths","seed",
/// "step_s","te","holds_for_s","verdict","coverage","reason","after_start",
/// "caution"}`.
#[derive(Debug, Clone, Serialize)]
pub struct HoldoverBody {
    /// Holdover span, s.
    pub span_s: f64,
    /// Time-error budget, s.
    pub budget_s: f64,
    /// The model.
    pub model: ModelOut,
    /// Monte Carlo paths.
    pub paths: usize,
    /// Their seed.
    pub seed: u64,
    /// Simulation step, s.
    pub step_s: f64,
    /// TE at the output times.
    pub te: Vec<TePoint>,
    /// When p95 of |TE| first exceeds the budget, s (`null`: never).
    pub holds_for_s: Option<f64>,
    /// The verdict for the span.
    #[serde(flatten)]
    pub judgement: Judgement,
    /// The record after the start beside the prediction (`null`: none).
    pub after_start: Option<AfterStart>,
    /// The decision caution.
    pub caution: String,
}

/// The holdover model: `{"h","te0","y0","y0_sigma","aging_per_s",
/// "aging_model","aging_sigma_per_s" | "log_law","y0_source","uncertainty",
/// "aging_z","aging_significant","temp_worst","start_s"}`.
#[derive(Debug, Clone, Serialize)]
pub struct ModelOut {
    /// The noise model.
    pub h: PowerLaw,
    /// TE at the start, s.
    pub te0: f64,
    /// Fractional frequency at the start.
    pub y0: f64,
    /// Its standard uncertainty.
    pub y0_sigma: f64,
    /// Aging rate at the start, 1/s.
    pub aging_per_s: f64,
    /// `linear`, `log` or `given`.
    pub aging_model: &'static str,
    /// Standard uncertainty of a linear aging rate, 1/s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub aging_sigma_per_s: Option<f64>,
    /// The logarithmic law.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub log_law: Option<LogLaw>,
    /// `record` or `given`.
    pub y0_source: &'static str,
    /// How the uncertainties were found.
    pub uncertainty: Uncertainty,
    /// Aging rate over its standard error.
    pub aging_z: Option<f64>,
    /// The aging is significant.
    pub aging_significant: Option<bool>,
    /// Worst-case temperature term (fractional).
    pub temp_worst: f64,
    /// Holdover start, s of the record.
    pub start_s: f64,
}

/// y = c + A·ln(1 + t/t_c): `{"c","a","a_sigma","tc_s"}`.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct LogLaw {
    /// c.
    pub c: f64,
    /// A.
    pub a: f64,
    /// Standard uncertainty of A.
    pub a_sigma: f64,
    /// t_c, s.
    pub tc_s: f64,
}

/// The record after the start: `{"covered_s","points","inside",
/// "worst_ratio","worst_t","exceeds_budget_at_s"}`.
#[derive(Debug, Clone, Serialize)]
pub struct AfterStart {
    /// How far past the start the record reaches, s.
    pub covered_s: f64,
    /// Observed TE at the output times it covers.
    pub points: Vec<ObservedPoint>,
    /// Points with |TE| inside the predicted p95.
    pub inside: usize,
    /// Largest |TE|/p95.
    pub worst_ratio: Option<f64>,
    /// Its t, s.
    pub worst_t: Option<f64>,
    /// First time |TE| exceeds the budget, s.
    pub exceeds_budget_at_s: Option<f64>,
}

impl From<&Observed> for AfterStart {
    fn from(o: &Observed) -> Self {
        Self {
            covered_s: o.covered,
            points: o.points.clone(),
            inside: o.inside(),
            worst_ratio: o.worst.map(|w| w.0),
            worst_t: o.worst.map(|w| w.1),
            exceeds_budget_at_s: o.exceeds_budget_at,
        }
    }
}

impl HoldoverBody {
    /// The document body. `aging_given`: the aging rate was given, not fitted.
    pub fn new(
        s: &Settings,
        model: &HoldoverModel,
        p: &Prediction,
        aging_given: bool,
        observed: Option<&Observed>,
    ) -> Self {
        let (aging_sigma_per_s, log_law) = match model.aging {
            Aging::Linear { .. } => (Some(model.aging.sigma()), None),
            Aging::Log { a, a_sigma, tc, c } => (
                None,
                Some(LogLaw {
                    c,
                    a,
                    a_sigma,
                    tc_s: tc,
                }),
            ),
        };
        Self {
            span_s: s.span,
            budget_s: s.budget,
            model: ModelOut {
                h: model.noise,
                te0: model.te0,
                y0: model.y0,
                y0_sigma: model.y0_sigma,
                aging_per_s: model.aging.rate(model.start),
                aging_model: if aging_given {
                    "given"
                } else {
                    model.aging.model().name()
                },
                aging_sigma_per_s,
                log_law,
                y0_source: if model.uncertainty.y0_window.is_some() {
                    "record"
                } else {
                    "given"
                },
                uncertainty: model.uncertainty,
                aging_z: model.aging_z(),
                aging_significant: model.aging_significant(),
                temp_worst: model.temp_worst,
                start_s: model.start,
            },
            paths: p.paths,
            seed: s.seed,
            step_s: p.step,
            te: p.te.clone(),
            holds_for_s: p.holds_for,
            judgement: p.judgement.clone(),
            after_start: observed.map(AfterStart::from),
            caution: crate::holdover::caution(),
        }
    }

    /// CSV: `t,deterministic,p50,p95,p99,rms,observed`, one row per output
    /// time (`observed` empty where the record does not reach).
    pub fn csv(&self) -> Result<String> {
        csv_text(
            &["t", "deterministic", "p50", "p95", "p99", "rms", "observed"],
            self.te.iter().map(|t| {
                let obs = self
                    .after_start
                    .as_ref()
                    .and_then(|o| o.points.iter().find(|q| q.t == t.t))
                    .map(|q| plain(q.te))
                    .unwrap_or_default();
                [
                    plain(t.t),
                    plain(t.deterministic),
                    plain(t.p50),
                    plain(t.p95),
                    plain(t.p99),
                    plain(t.rms),
                    obs,
                ]
            }),
        )
    }
}
