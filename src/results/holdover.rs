//! The `holdover` document: the model taken from the record, the predicted
//! time error, the verdict, and the record after the start beside it.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, plain, Result};
use crate::holdover::aging::Aging;
use crate::holdover::observed::{Observed, ObservedPoint};
use crate::holdover::{HoldoverModel, Prediction, Settings, TePoint, Uncertainty};
use crate::model::PowerLaw;
use crate::units::format_si;
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
    /// Paths whose |TE| stays within the budget through the span (the
    /// verdict's `probability` is this over `paths`).
    pub paths_within_budget: usize,
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
            paths_within_budget: p.paths_within_budget,
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

/// A time through the span: hours when long, else SI seconds.
fn hours(t: f64) -> String {
    if t >= 3.6e9 {
        format!("{:.3e} h", t / 3600.0)
    } else if t >= 3600.0 {
        format!("{:.1} h", t / 3600.0)
    } else {
        format_si(t, "s", 3)
    }
}

impl HoldoverBody {
    /// The text for reading: the model taken from the record, the time
    /// error through the span (deterministic and the |TE| percentiles), how
    /// long the budget holds, the verdict, the record after the start
    /// beside the prediction, and the caution. `path` names the record;
    /// `start_given` when the holdover starts inside it (`--start`).
    pub fn table(&self, path: &str, start_given: bool) -> Text {
        let si = |v: f64| format_si(v, "s", 4);
        let m = &self.model;
        let u = &m.uncertainty;
        let mut o = Text::new();
        o.line(format!(
            "{path}: holdover of {} against a budget of {}",
            hours(self.span_s),
            si(self.budget_s)
        ));
        o.blank();
        o.line("model");
        let mut kv = Table::new(vec![Column::left("", 12), Column::left("", 0).gap(0)]).indent(2);
        let mut pair = |k: &str, v: String| kv.row(vec![Cell::text(k), Cell::text(v)]);
        pair("te0", si(m.te0));
        pair(
            "y0",
            format!(
                "{:.4e} ± {:.2e} ({})",
                m.y0,
                m.y0_sigma,
                match u.y0_window {
                    Some(w) => format!(
                        "mean over the last {} of the record, carried by the aging law",
                        hours(w)
                    ),
                    None => "given".to_string(),
                }
            ),
        );
        pair(
            "aging",
            format!(
                "{} law, {:.4e}/day at the start{}",
                if u.aging_given {
                    "given linear"
                } else {
                    m.aging_model
                },
                m.aging_per_s * 86400.0,
                match (&m.log_law, m.aging_sigma_per_s) {
                    (Some(l), _) => format!(" (A ± {:.2e}, t_c = {})", l.a_sigma, hours(l.tc_s)),
                    (None, Some(d)) if !u.aging_given => format!(" ± {:.2e}/day (1σ)", d * 86400.0),
                    _ => String::new(),
                }
            ),
        );
        if let Some(z) = m.aging_z {
            pair("", crate::holdover::aging_significance_words(z));
        }
        if u.replicates > 0 {
            pair(
                "uncertainty",
                format!(
                    "parametric bootstrap: the fit repeated on {} records drawn from the noise model below{}{}",
                    u.replicates,
                    if u.rwfm_drawn {
                        " (each with its own random-walk FM level, as the record could have measured it)"
                    } else {
                        ""
                    },
                    if u.y0_window.is_some() && !u.aging_given {
                        format!("; y0 and aging errors correlated {:+.2}, drawn jointly per path", u.y0_aging_corr)
                    } else {
                        "; drawn per path".to_string()
                    }
                ),
            );
        }
        if m.temp_worst > 0.0 {
            pair(
                "temperature",
                format!("worst case {:.3e} (fractional)", m.temp_worst),
            );
        }
        pair("noise", m.h.to_model_string());
        pair(
            "Monte Carlo",
            format!(
                "{} paths, seed {}, step {}",
                self.paths,
                self.seed,
                si(self.step_s)
            ),
        );
        o.table(kv);
        o.blank();
        let mut te = Table::new(vec![
            Column::right("t", 10),
            Column::right("determ.", 12).unit(Unit::Si("s")).gap(2),
            Column::right("p50 |TE|", 12).unit(Unit::Si("s")).gap(2),
            Column::right("p95 |TE|", 12).unit(Unit::Si("s")).gap(2),
            Column::right("p99 |TE|", 12).unit(Unit::Si("s")).gap(2),
        ]);
        for t in &self.te {
            te.row(vec![
                Cell::text(hours(t.t)),
                Cell::num(t.deterministic),
                Cell::num(t.p50),
                Cell::num(t.p95),
                Cell::num(t.p99),
            ]);
        }
        o.table(te);
        o.blank();
        let judged = self.judgement.verdict != crate::verdict::Verdict::NotJudged;
        match self.holds_for_s {
            _ if !judged => {}
            Some(t) => o.line(format!(
                "p95 of |TE| exceeds the budget after about {}: holds 95 % of the time for about {}.",
                hours(t),
                hours(t)
            )),
            None => o.line("p95 of |TE| stays within the budget through the whole span."),
        }
        o.line(format!(
            "verdict for {}: {}",
            hours(self.span_s),
            self.judgement.cell()
        ));
        if let Some(why) = &self.judgement.reason {
            o.line(format!("  not judged: {why}"));
        }
        if judged {
            o.line(format!(
                "  {}; {} of {} paths stay within the budget through the span",
                self.judgement.rule_words(),
                self.paths_within_budget,
                self.paths
            ));
        }
        match &self.after_start {
            Some(ob) => o.extend(self.after_start_table(ob)),
            None if start_given => {
                o.blank();
                o.line("the record after the start: nothing to compare (the record ends at the start, or its phase there is a gap)");
            }
            None => {}
        }
        o.blank();
        o.line(&self.caution);
        o
    }

    /// The record after the start beside the prediction.
    fn after_start_table(&self, ob: &AfterStart) -> Text {
        let si = |v: f64| format_si(v, "s", 4);
        let mut o = Text::new();
        o.blank();
        o.line(format!(
            "the record after the start (holdover from {} of the record; the record covers {} of the span)",
            hours(self.model.start_s),
            hours(ob.covered_s)
        ));
        let mut t = Table::new(vec![
            Column::right("t", 10),
            Column::right("observed TE", 12).unit(Unit::Si("s")).gap(2),
            Column::right("p95 |TE|", 12).unit(Unit::Si("s")).gap(2),
            Column::right("inside", 7).gap(2),
        ]);
        for q in &ob.points {
            t.row(vec![
                Cell::text(hours(q.t)),
                Cell::num(q.te),
                Cell::num(q.p95),
                Cell::text(if q.inside { "yes" } else { "no" }),
            ]);
        }
        t.note(format!(
            "observed |TE| inside the predicted p95 at {} of {} times{}",
            ob.inside,
            ob.points.len(),
            match (ob.worst_ratio, ob.worst_t) {
                (Some(r), Some(t)) => format!("; largest |TE|/p95 {r:.2} at {}", hours(t)),
                _ => String::new(),
            }
        ));
        t.note(match ob.exceeds_budget_at_s {
            Some(t) => format!(
                "observed |TE| first exceeds the budget of {} at {} after the start",
                si(self.budget_s),
                hours(t)
            ),
            None => format!(
                "observed |TE| stays within the budget of {} for the {} the record covers",
                si(self.budget_s),
                hours(ob.covered_s)
            ),
        });
        t.note("One record is one path: it should lie inside p95 at about 95 % of the times, and cannot confirm the model alone.");
        o.table(t);
        o
    }
}
