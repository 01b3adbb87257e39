//! Time-domain sections: frequency stability (the `stability` command's
//! library path) and the power-law noise model fitted to it.

use super::{method, BuildOptions, Loaded};
use crate::deviation::Curve;
use crate::io::dut::Dut;
use crate::plot::stability::{regions_from_curve, SigmaCurve, StabilityPlot};
use crate::prepare::{fit_drift, remove_drift, DriftModel};
use crate::report::*;
use crate::stability::{analyse, Request};
use crate::tau::TauGrid;

/// The stability section from the first record; returns its curves for the
/// other sections (empty when there is no record).
pub(super) fn stability(
    dut: &Dut,
    records: &[Loaded],
    opts: &BuildOptions,
    r: &mut Report,
) -> Result<Vec<Curve>> {
    let Some(l) = records.first() else {
        r.stability = Part::not_requested("the DUT file lists no [[record]].");
        return Ok(Vec::new());
    };
    let x = l.series.record.to_phase();
    let req = Request {
        estimators: opts.estimators.clone(),
        grid: opts.grid.clone(),
        confidence: opts.confidence,
        forced_alpha: None,
        bias_correction: true,
    };
    let curves: Vec<Curve> = match analyse(&x, &req) {
        Ok(c) => c.into_iter().filter(|c| !c.points.is_empty()).collect(),
        Err(e) => {
            r.stability = Part::not_computed(format!("{}: {e}", l.src.name));
            return Ok(Vec::new());
        }
    };
    let names: Vec<&str> = curves.iter().map(|c| c.estimator.as_str()).collect();
    r.methods.push(method(
        &format!(
            "{} at {} τ",
            names.join(", "),
            match opts.grid {
                TauGrid::Octave => "octave",
                TauGrid::Decade => "1-2-5",
                _ => "the chosen",
            }
        ),
        "NIST SP 1065 (Riley 2008) §5.2 definitions; terms touching a gap are skipped",
    ));
    let has_ci = curves
        .iter()
        .any(|c| c.points.iter().any(|p| p.lo.is_some()));
    let has_noise = curves
        .iter()
        .any(|c| c.points.iter().any(|p| p.alpha.is_some()));
    if has_ci {
        r.methods.push(method(
            "EDF and confidence intervals",
            "Greenhall & Riley, PTTI 2003 (EDF); χ² quantiles; NIST SP 1065 for TOTDEV",
        ));
    }
    if has_noise {
        r.methods.push(method(
            "noise type per τ",
            "lag-1 autocorrelation, Riley & Greenhall 2004; B1 ratio (Barnes 1969) and R(n) for short records",
        ));
    }
    let rows = curves
        .iter()
        .flat_map(|c| {
            c.points.iter().map(|p| StabilityRow {
                estimator: c.estimator.clone(),
                tau: p.estimate.tau,
                m: p.estimate.m,
                dev: p.estimate.value,
                lo: p.lo,
                hi: p.hi,
                edf: p.edf,
                noise: p.noise().map(str::to_string),
                terms: p.estimate.terms,
            })
        })
        .collect();
    let mut notes = Vec::new();
    if !has_ci {
        notes.push(
            "This build computes no confidence intervals, EDF or noise types yet (the statistics layer is not in it); the table shows them as —."
                .to_string(),
        );
    }
    r.stability = Part::Done(StabilitySection {
        source: l.src.name.clone(),
        plot: StabilityPlot {
            title: format!("{} — {}", dut.name, l.src.name),
            curves: curves.iter().map(SigmaCurve::from_curve).collect(),
            regions: curves.first().map(regions_from_curve).unwrap_or_default(),
            confidence: has_ci.then_some(opts.confidence),
            notes: Vec::new(),
        },
        rows,
        confidence: opts.confidence,
        notes,
    });
    Ok(curves)
}

/// Fit the power-law model to the OADEV and MDEV curves together (so that
/// white and flicker PM separate), weighted by each point's EDF
/// ([`crate::stability::fit_record_model`]). The curves are recomputed on the record
/// with its linear frequency drift removed (least-squares line through y,
/// NIST SP 1065 §5): drift is not noise, and left in it would pose as RWFM.
pub(super) fn noise_model(records: &[Loaded], opts: &BuildOptions, r: &mut Report) {
    let Some(l) = records.first() else {
        r.noise_model = Part::not_requested("the DUT file lists no [[record]].");
        return;
    };
    let rec = &l.series.record;
    let (detrended, drift_note) = match fit_drift(rec, DriftModel::Linear) {
        Ok(fit) => (
            remove_drift(rec, &fit),
            format!(
                "A linear frequency drift of {:.3e} per day was removed before the fit (the stability section shows the record as read).",
                fit.per_day()
            ),
        ),
        Err(e) => (rec.clone(), format!("No drift was removed: {e}")),
    };
    let fitted = match crate::stability::fit_record_model(&detrended.to_phase(), &opts.grid) {
        Ok(f) => f,
        Err(e) => {
            r.noise_model =
                Part::not_computed(format!("{}: the model fit failed: {e}", l.src.name));
            return;
        }
    };
    let fit = &fitted.fit;
    let f_h = fit.model.f_h;
    let n_points = fit.residual_db.len();
    let mut terms = Vec::new();
    for alpha in (-2..=2).rev() {
        if !fit.fitted[(alpha + 2) as usize] {
            continue;
        }
        let dom: Vec<_> = fit.dominant.iter().filter(|d| d.alpha == alpha).collect();
        terms.push(ModelTerm {
            alpha,
            label: crate::model::noise_label(alpha).unwrap_or("?").to_string(),
            h: fit.model.get(alpha),
            dominant: match (dom.first(), dom.last()) {
                (Some(a), Some(b)) => Some((a.tau_from, b.tau_to)),
                _ => None,
            },
        });
    }
    let worst = fit.residual_db.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut notes = vec![drift_note, format!(
        "Fitted to {} OADEV/MDEV points, f_h = {}; largest residual {:.2} dB (10·log10 model/measured).",
        n_points,
        crate::units::format_si(f_h, "Hz", 4),
        worst
    )];
    notes.push("Weights: each point's EDF; points without one are left out.".into());
    for l in &fit.left_out {
        notes.push(match l.reason {
            crate::model::LeftOutReason::AtZero => format!(
                "h{} ({}) is not in the model: the non-negative fit put it at zero.",
                l.alpha,
                crate::model::noise_label(l.alpha).unwrap_or("?")
            ),
            crate::model::LeftOutReason::NotSignificant => format!(
                "h{} ({}) is not in the model: {:.3e} ± {} is below {} standard errors.",
                l.alpha,
                crate::model::noise_label(l.alpha).unwrap_or("?"),
                l.h,
                l.std_err.map_or("?".to_string(), |e| format!("{e:.2e}")),
                crate::model::fit::SIGNIFICANCE
            ),
        });
    }
    r.methods.push(method(
        "power-law model fit",
        "IEEE Std 1139-2008 σ_y(τ) ↔ S_y(f) table; non-negative least squares in log space",
    ));
    let identified = fitted
        .curves
        .first()
        .map(|c| {
            c.points
                .iter()
                .filter_map(|p| {
                    Some(NoiseIdRow {
                        tau: p.estimate.tau,
                        alpha: p.alpha?,
                        label: p.noise()?.to_string(),
                        method: "oadev, drift removed".into(),
                    })
                })
                .collect()
        })
        .unwrap_or_default();
    r.noise_model = Part::Done(NoiseModelSection {
        model_string: fit.model.to_model_string(),
        terms,
        identified,
        notes,
    });
}
