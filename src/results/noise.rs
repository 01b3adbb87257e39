//! The `noise` document: the dominant noise at each τ and the power-law
//! model fitted to the record.

use super::{csv_text, Result};
use crate::model::fit::{LeftOut, ModelFit};
use crate::model::noise_label;
use crate::stats::noise_id::NoiseRow;
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
