//! The `noise` document: the dominant noise at each τ and the power-law
//! model fitted to the record.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, Result};
use crate::model::fit::{LeftOut, ModelFit};
use crate::model::noise_label;
use crate::stats::noise_id::NoiseRow;
use crate::units::{format_si, format_sig};
use serde::Serialize;
use std::collections::BTreeMap;

/// The `noise` results: `{"points","drift_per_day","model"}`.
#[derive(Debug, Clone, Serialize)]
pub struct NoiseBody {
    /// The noise at each τ of the grid.
    pub points: Vec<NoiseRow>,
    /// The record's linear frequency drift, per day (`null` when there are
    /// too few points to fit one).
    pub drift_per_day: Option<f64>,
    /// The fitted model.
    pub model: ModelSummary,
}

impl NoiseBody {
    /// `noise` on one record: the noise identified at each τ of `grid`
    /// (OADEV's range; [`crate::stats::noise_id::NoiseIdentifier`]), the
    /// linear drift per day, and the power-law model fitted to the record
    /// ([`crate::stability::fit_record_model`], returned too for its
    /// chart). The command line and the Python package call this one
    /// function.
    pub fn of_record(
        x: &crate::record::PhaseRecord,
        grid: &crate::tau::TauGrid,
    ) -> crate::Result<(Self, crate::stability::RecordModel)> {
        use crate::deviation::Estimator;
        let ms = grid.ms(x.tau0, Estimator::Oadev.max_m(x.len()))?;
        let ids = crate::stats::NoiseIdentifier::new(x);
        let points = (ms.iter())
            .map(|&m| NoiseRow::new(m, x.tau0, ids.at(m)))
            .collect();
        let drift_per_day = ids.drift_rate().map(|d| d * 86_400.0);
        let model = crate::stability::fit_record_model(x, grid)?;
        let body = NoiseBody {
            points,
            drift_per_day,
            model: ModelSummary::of(&model.fit),
        };
        Ok((body, model))
    }
}

/// A fitted power-law model: `{"h":{"2","1","0","-1","-2"},"std_err",
/// "left_out","significance_sigma","fh","dominant","model_string",
/// "residual_db_rms"}`, `null` for a term the fit left out.
#[derive(Debug, Clone, Serialize)]
pub struct ModelSummary {
    /// h_α by α (`null`: not in the model).
    pub h: BTreeMap<String, Option<f64>>,
    /// One standard error of each h_α (`null`: none).
    pub std_err: BTreeMap<String, Option<f64>>,
    /// The candidate terms not in the model, and why.
    pub left_out: Vec<LeftOut>,
    /// A term is kept when h_α ≥ this many standard errors.
    pub significance_sigma: f64,
    /// The model's cut-off f_h, Hz.
    pub fh: f64,
    /// The dominant term over consecutive τ ranges.
    pub dominant: Vec<DominantRange>,
    /// The model in h_α notation (for `--model`).
    pub model_string: String,
    /// rms of the fit's residuals, dB.
    pub residual_db_rms: f64,
}

/// `{"noise","tau_from","tau_to"}`: the label of the term dominating σ_y
/// from `tau_from` to `tau_to` (s).
#[derive(Debug, Clone, Serialize)]
pub struct DominantRange {
    /// The noise label (WPM … RWFM).
    pub noise: Option<&'static str>,
    /// Start, s.
    pub tau_from: f64,
    /// End, s.
    pub tau_to: f64,
}

/// rms of a list of residuals (NaN when empty).
pub fn rms(v: &[f64]) -> f64 {
    if v.is_empty() {
        return f64::NAN;
    }
    (v.iter().map(|r| r * r).sum::<f64>() / v.len() as f64).sqrt()
}

impl ModelSummary {
    /// The summary of a variance fit.
    pub fn of(fit: &ModelFit) -> Self {
        let by_alpha = |f: &dyn Fn(usize) -> Option<f64>| {
            (-2i32..=2)
                .map(|a| (a.to_string(), f((a + 2) as usize)))
                .collect::<BTreeMap<_, _>>()
        };
        Self {
            h: by_alpha(&|k| fit.fitted[k].then_some(fit.model.h[k])),
            std_err: by_alpha(&|k| fit.std_err[k]),
            left_out: fit.left_out.clone(),
            significance_sigma: crate::model::fit::SIGNIFICANCE,
            fh: fit.model.f_h,
            dominant: fit
                .dominant
                .iter()
                .map(|d| DominantRange {
                    noise: noise_label(d.alpha),
                    tau_from: d.tau_from,
                    tau_to: d.tau_to,
                })
                .collect(),
            model_string: fit.model.to_model_string(),
            residual_db_rms: rms(&fit.residual_db),
        }
    }
}

/// The cells of a noise row: α, label, method, r1 (4 decimals); empty
/// where nothing was identified.
pub fn noise_cells(r: &NoiseRow) -> [String; 4] {
    [
        r.alpha.map(|a| a.to_string()).unwrap_or_default(),
        r.noise.map(|l| l.name().to_string()).unwrap_or_default(),
        r.method.map(|m| m.name().to_string()).unwrap_or_default(),
        r.r1.map(|v| format!("{v:.4}")).unwrap_or_default(),
    ]
}

impl NoiseBody {
    /// CSV: `tau,m,alpha,noise,method,r1`, one row per τ.
    pub fn csv(&self) -> Result<String> {
        csv_text(
            &["tau", "m", "alpha", "noise", "method", "r1"],
            self.points.iter().map(|r| {
                let [a, l, me, r1] = noise_cells(r);
                [super::plain(r.tau), r.m.to_string(), a, l, me, r1]
            }),
        )
    }
}

impl NoiseBody {
    /// The table for reading: the dominant noise per τ, then the fitted
    /// power-law model with its standard errors, the terms left out and
    /// where each term dominates. `path` names the record.
    pub fn table(&self, path: &str) -> Text {
        let mut t = Text::new();
        t.line(format!("# {path}"));
        t.blank();
        let mut rows = Table::new(vec![
            Column::right("tau", 10).unit(Unit::Si("s")),
            Column::right("m", 9),
            Column::right("alpha", 6),
            Column::right("noise", 6),
            Column::right("method", 8),
            Column::right("r1", 8),
        ])
        .heading("dominant noise per τ");
        for r in &self.points {
            let [a, l, me, r1] = noise_cells(r);
            let me = if r.capped == Some(true) {
                format!("{me}^")
            } else {
                me
            };
            let cell = |t: String| {
                if t.is_empty() {
                    Cell::none()
                } else {
                    Cell::text(t)
                }
            };
            rows.row(vec![
                Cell::num(r.tau),
                Cell::int(r.m),
                cell(a),
                cell(l),
                cell(me),
                cell(r1),
            ]);
        }
        if self
            .points
            .iter()
            .any(|r| r.noise == Some(crate::stats::NoiseLabel::Drift))
        {
            rows.note(format!(
                "drift: σ_y there follows |D|·τ/√2 of the record's linear frequency drift D = {} per day \
                 (NIST SP 1065), the noise beneath (alpha) is what the Hadamard family sees; the Allan \
                 family has no interval there (--remove-drift linear shows the noise beneath)",
                self.drift_per_day.map_or("?".to_string(), |d| format_sig(d, 4))
            ));
        }
        if self.points.iter().any(|r| r.capped == Some(true)) {
            rows.note("^ capped at the type of the record's octave τ below (the dominant power law only gets redder with τ)");
        }
        t.table(rows);
        t.blank();
        t.extend(self.model.table());
        t
    }
}

impl ModelSummary {
    /// The fitted model for reading: h_α ± standard error, the terms left
    /// out and why, where each term dominates, the residual and the model
    /// in `--model` notation.
    pub fn table(&self) -> Text {
        let mut t = Text::new();
        t.line(format!(
            "power-law model fitted to OADEV and MDEV (EDF-weighted, log space; ± one standard error), f_h = {}",
            format_si(self.fh, "Hz", 4)
        ));
        let mut h = Table::new(vec![
            Column::left("", 4),
            Column::right("", 22),
            Column::left("", 0).gap(3),
        ])
        .indent(2);
        for a in (-2i32..=2).rev() {
            let key = a.to_string();
            let v = match self.h.get(&key).copied().flatten() {
                Some(v) => match self.std_err.get(&key).copied().flatten() {
                    Some(se) => format!("{} ± {}", format_sig(v, 4), format_sig(se, 2)),
                    None => format_sig(v, 4),
                },
                None => "not in the fit".to_string(),
            };
            h.row(vec![
                Cell::text(format!("h{a}")),
                Cell::text(v),
                Cell::text(format!("({})", noise_label(a).unwrap_or(""))),
            ]);
        }
        for l in &self.left_out {
            let why = match l.reason {
                crate::model::LeftOutReason::AtZero => {
                    "the non-negative fit put it at zero".to_string()
                }
                crate::model::LeftOutReason::NotSignificant => format!(
                    "{} ± {} is below {}σ, so it was removed and the model refitted",
                    format_sig(l.h, 3),
                    l.std_err.map_or("?".into(), |e| format_sig(e, 2)),
                    self.significance_sigma
                ),
            };
            h.note(format!(
                "  left out h{} ({}): {why}",
                l.alpha,
                noise_label(l.alpha).unwrap_or("")
            ));
        }
        h.note("dominant terms:");
        for d in &self.dominant {
            h.note(format!(
                "  {:<5} from {} to {}",
                d.noise.unwrap_or("?"),
                format_si(d.tau_from, "s", 4),
                format_si(d.tau_to, "s", 4)
            ));
        }
        h.note(format!("residual rms: {:.2} dB", self.residual_db_rms));
        h.note(format!("model (for --model): {}", self.model_string));
        t.table(h);
        t
    }
}
