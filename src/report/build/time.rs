//! Time-domain sections, one block per `[[record]]`: what the record looks
//! like (data quality), what was done to it before the analysis (the
//! `prepare` step list of its DUT entry: outliers, drift, gap filling — by
//! default a linear drift removed), its frequency stability (the
//! `stability` command's library path) and the power-law noise model fitted
//! to it.

use super::{method, BuildOptions, Loaded};
use crate::deviation::Curve;
use crate::io::dut::Dut;
use crate::plot::stability::{regions_from_curve, SigmaCurve, StabilityPlot};
use crate::prepare::pipeline::{gap_runs, OutlierReport, Prepared};
use crate::prepare::{summarize, DriftModel, DAY};
use crate::report::*;
use crate::stability::{analyse, Request};
use crate::tau::TauGrid;
use crate::units::{format_si, format_sig};

/// The MAD limit at which a record's outliers are looked for when its DUT
/// entry does not take them out (the `inspect` command's default).
pub const OUTLIER_LOOK: f64 = 5.0;

/// How many outliers are named one by one in the report.
const NAMED_OUTLIERS: usize = 20;

/// Bootstrap records behind a drift's standard uncertainty in the report.
const DRIFT_REPLICATES: usize = 200;

/// One record after its preparation, for the other sections.
pub(super) struct Worked {
    /// The record's σ(τ) curves (empty when not computed).
    pub curves: Vec<Curve>,
    /// The prepared record (None when the preparation failed).
    pub prepared: Option<Prepared>,
}

fn when(t: f64) -> String {
    if t >= 3600.0 {
        format!("{} ({:.3} h)", format_si(t, "s", 6), t / 3600.0)
    } else {
        format_si(t, "s", 6)
    }
}

/// Outliers in words: how many, and each one's time (the first few).
pub(super) fn outlier_words(o: &OutlierReport, removed: bool) -> Vec<String> {
    let mut out = vec![format!(
        "{} frequency outlier{} beyond {} scaled MADs ({}) from the median {}{}",
        o.events.len(),
        if o.events.len() == 1 { "" } else { "s" },
        format_sig(o.limit, 3),
        format_sig(o.mad, 4),
        format_sig(o.median, 4),
        if removed {
            format!(
                ": taken out ({} sample{} made gaps{})",
                o.samples_made_gaps,
                if o.samples_made_gaps == 1 { "" } else { "s" },
                if o.steps_removed > 0 {
                    format!(
                        ", {} phase step{} taken out of the later phase",
                        o.steps_removed,
                        if o.steps_removed == 1 { "" } else { "s" }
                    )
                } else {
                    String::new()
                }
            )
        } else if o.events.is_empty() {
            String::new()
        } else {
            ": kept (set outliers = K in this [[record]] of the DUT file to take them out)"
                .to_string()
        }
    )];
    for e in o.events.iter().take(NAMED_OUTLIERS) {
        out.push(format!(
            "outlier at t = {} from the first sample: y = {} ({} MAD){}",
            when(e.t),
            format_sig(e.y, 4),
            format_sig(e.mads, 3),
            e.action
                .map(|a| format!(" — {}", a.words()))
                .unwrap_or_default()
        ));
    }
    if o.events.len() > NAMED_OUTLIERS {
        out.push(format!(
            "… and {} more outliers",
            o.events.len() - NAMED_OUTLIERS
        ));
    }
    out
}

fn per_day(v: f64, sigma: Option<f64>) -> String {
    match sigma {
        Some(s) => {
            let z = if s > 0.0 { v.abs() / s } else { f64::INFINITY };
            format!(
                "{} ± {} per day (1σ; {})",
                format_sig(v, 4),
                format_sig(s, 2),
                if z >= crate::holdover::SIGNIFICANT_Z {
                    format!("{z:.1}σ from zero")
                } else {
                    format!("{z:.1}σ from zero: not significant at 2σ")
                }
            )
        }
        None => format!("{} per day", format_sig(v, 4)),
    }
}

/// Data quality, preparation and the stability picture of every record;
/// returns each record's work for the other sections.
/// `prepared` is each record's preparation
/// ([`crate::prepare::pipeline::prepare`] with its DUT
/// entry's steps), made beforehand because holdover needs it first.
pub(super) fn stability(
    dut: &Dut,
    records: &[Loaded],
    prepared: Vec<Result<Prepared>>,
    opts: &BuildOptions,
    r: &mut Report,
) -> Result<Vec<Worked>> {
    if records.is_empty() {
        r.stability = Part::not_requested("the DUT file lists no [[record]].");
        return Ok(Vec::new());
    }
    let mut sections = Vec::new();
    let mut work = Vec::new();
    let mut any_ci = false;
    let mut any_noise = false;
    for (l, prepared) in records.iter().zip(prepared) {
        let rec = &l.series.record;
        let steps = l.src.prepare;
        let mut notes = Vec::new();
        let mut preparation = Vec::new();
        // The record as read.
        let look = steps.outliers.unwrap_or(OUTLIER_LOOK);
        let summary = summarize(rec, look).ok();
        let phase = rec.to_phase();
        let runs = gap_runs(&phase);
        // The noise model of the record with its linear drift removed (as
        // holdover fits it), for the drift's σ.
        let noise = crate::prepare::fit_drift(rec, DriftModel::Linear)
            .ok()
            .map(|d| crate::prepare::remove_drift(rec, &d).to_phase())
            .and_then(|x| crate::holdover::fit::fit_noise_spread(&x).ok());
        let sigma = |model: DriftModel| -> Option<f64> {
            let span = summary.as_ref()?.span;
            let (fit, spread) = noise.as_ref()?;
            crate::holdover::fit::drift_sigma(
                &fit.model,
                spread.as_ref(),
                model,
                span,
                rec.tau0(),
                DRIFT_REPLICATES,
                1,
            )
            .ok()
        };
        let linear_sigma = sigma(DriftModel::Linear);
        let quality = summary.as_ref().map(|s| DataQuality {
            points: s.points,
            tau0: s.tau0,
            span: s.span,
            gaps: s.gaps,
            gap_runs: runs.len(),
            longest_gap: runs.iter().map(|r| r.1).max().unwrap_or(0) as f64 * s.tau0,
            offset: s.frequency_offset,
            drift_per_day: s.drift.map(|d| d.per_day()),
            drift_sigma_per_day: linear_sigma.map(|v| v * DAY),
            outliers: s.outliers.as_ref().map(|o| OutlierReport::found(o, rec)),
        });
        // The preparation.
        let prepared = match prepared {
            Ok(p) => Some(p),
            Err(e) => {
                notes.push(format!(
                    "The preparation failed ({e}); the record is analysed as read."
                ));
                None
            }
        };
        if let Some(p) = &prepared {
            if let Some(o) = &p.outliers {
                preparation.extend(outlier_words(o, true));
            } else if let Some(o) = quality.as_ref().and_then(|q| q.outliers.as_ref()) {
                if !o.events.is_empty() {
                    preparation.extend(outlier_words(o, false));
                }
            }
            match &p.drift {
                Some(d) => {
                    let s = if d.model == DriftModel::Linear {
                        linear_sigma
                    } else {
                        sigma(d.model)
                    };
                    preparation.push(format!(
                        "{} frequency drift removed: {}{}; the frequency at the record's centre is kept. Holdover fits its own aging law on the record with its drift kept.",
                        match d.model {
                            DriftModel::Linear => "Linear",
                            DriftModel::Quadratic => "Quadratic",
                        },
                        per_day(d.per_day(), s.map(|v| v * DAY)),
                        if d.model == DriftModel::Quadratic {
                            format!(
                                " at the centre, changing by {} per day²",
                                format_sig(d.curvature_per_day2(), 3)
                            )
                        } else {
                            String::new()
                        }
                    ));
                }
                None => preparation.push(
                    "No drift removed (drift = \"none\"): an aging drift shows as a rise of σ_y ∝ τ at long τ (NIST SP 1065), not as noise.".into(),
                ),
            }
            match &p.gaps {
                Some(g) => preparation.push(format!(
                    "Gaps filled by linear interpolation: {} samples ({} left at the ends).",
                    g.filled, g.left
                )),
                None if rec.gaps() > 0 => preparation.push(format!(
                    "{} gaps kept as gaps: every estimator skips the terms that touch one.",
                    rec.gaps()
                )),
                None => {}
            }
        }
        let x = prepared
            .as_ref()
            .map(|p| p.record.to_phase())
            .unwrap_or(phase);
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
                notes.push(format!("σ(τ) not computed: {e}"));
                Vec::new()
            }
        };
        let has_ci = curves
            .iter()
            .any(|c| c.points.iter().any(|p| p.lo.is_some()));
        any_ci |= has_ci;
        any_noise |= curves
            .iter()
            .any(|c| c.points.iter().any(|p| p.alpha.is_some()));
        let rows = curves
            .iter()
            .flat_map(|c| {
                c.points.iter().map(|p| StabilityRow {
                    estimator: c.estimator,
                    tau: p.estimate.tau,
                    m: p.estimate.m,
                    dev: p.estimate.value,
                    lo: p.lo,
                    hi: p.hi,
                    edf: p.edf,
                    noise: p.noise().map(str::to_string),
                    terms: p.estimate.terms,
                    approximation: p.approximation,
                })
            })
            .collect();
        let plot = (!curves.is_empty()).then(|| StabilityPlot {
            title: format!("{} — {}", dut.name, l.src.name),
            curves: curves.iter().map(SigmaCurve::from_curve).collect(),
            regions: curves.first().map(regions_from_curve).unwrap_or_default(),
            confidence: has_ci.then_some(opts.confidence),
            notes: Vec::new(),
        });
        sections.push(StabilitySection {
            source: l.src.name.clone(),
            quality,
            preparation,
            plot,
            rows,
            confidence: opts.confidence,
            notes,
            limits: Vec::new(),
            limit_checks: Vec::new(),
        });
        work.push(Worked { curves, prepared });
    }
    let names: Vec<String> = opts
        .estimators
        .iter()
        .map(|e| e.name().to_string())
        .collect();
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
    r.methods.push(method(
        "record preparation",
        "outliers by the median absolute deviation of the frequency (NIST SP 1065 §5, from memory); drift by least squares on the frequency (NIST SP 1065 §5); its uncertainty by a parametric bootstrap on the record's noise model (Kasdin & Walter 1992 synthesis)",
    ));
    if any_ci {
        r.methods.push(method(
            "EDF and confidence intervals",
            "Greenhall & Riley, PTTI 2003 (EDF); χ² quantiles; NIST SP 1065 for TOTDEV",
        ));
    }
    if any_noise {
        r.methods.push(method(
            "noise type per τ",
            "lag-1 autocorrelation, Riley & Greenhall 2004; B1 ratio (Barnes 1969) and R(n) for short records",
        ));
    }
    r.stability = Part::Done(sections);
    Ok(work)
}

/// Fit the power-law model of each prepared record to its OADEV and MDEV
/// curves together (so that white and flicker PM separate), weighted by
/// each point's EDF ([`crate::stability::fit_record_model`]): the record as
/// the stability section shows it — by default with its linear drift
/// removed, since drift is not noise and left in would pose as RWFM.
pub(super) fn noise_model(
    records: &[Loaded],
    work: &[Worked],
    opts: &BuildOptions,
    r: &mut Report,
) {
    if records.is_empty() {
        r.noise_model = Part::not_requested("the DUT file lists no [[record]].");
        return;
    }
    let mut sections = Vec::new();
    for (l, w) in records.iter().zip(work) {
        let x = w
            .prepared
            .as_ref()
            .map(|p| p.record.to_phase())
            .unwrap_or_else(|| l.series.record.to_phase());
        let drift_note = match w.prepared.as_ref().and_then(|p| p.drift) {
            Some(d) => format!(
                "Fitted on the record as the stability section shows it ({} drift of {} per day removed).",
                d.model.name(),
                format_sig(d.per_day(), 4)
            ),
            None => "Fitted on the record with its drift kept (drift = \"none\"): an aging drift would pose as random-walk FM.".to_string(),
        };
        let fitted = match crate::stability::fit_record_model(&x, &opts.grid) {
            Ok(f) => f,
            Err(e) => {
                sections.push(NoiseModelSection {
                    source: l.src.name.clone(),
                    model_string: String::new(),
                    terms: Vec::new(),
                    identified: Vec::new(),
                    notes: vec![format!("Not computed: the model fit failed: {e}")],
                });
                continue;
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
        let mut notes = vec![
            drift_note,
            format!(
                "Fitted to {} OADEV/MDEV points, f_h = {}; largest residual {:.2} dB (10·log10 model/measured).",
                n_points,
                format_si(f_h, "Hz", 4),
                worst
            ),
            "Weights: each point's EDF; points without one are left out.".into(),
        ];
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
                            method: "oadev of the prepared record".into(),
                        })
                    })
                    .collect()
            })
            .unwrap_or_default();
        sections.push(NoiseModelSection {
            source: l.src.name.clone(),
            model_string: fit.model.to_model_string(),
            terms,
            identified,
            notes,
        });
    }
    r.methods.push(method(
        "power-law model fit",
        "IEEE Std 1139-2008 σ_y(τ) ↔ S_y(f) table; non-negative least squares in log space",
    ));
    r.noise_model = Part::Done(sections);
}
