//! Decision sections: wander against masks (the `wander` command's library
//! path) and holdover against the budget (the `holdover` command's, run
//! once per span so each verdict equals `tauwise holdover --span …`).

use super::{method, Loaded};
use crate::holdover::{model_from_record, FromRecord, Settings};
use crate::io::dut::Dut;
use crate::plot::holdover::HoldoverPlot;
use crate::report::*;
use crate::units::{format_margin_db, format_si};
use crate::verdict::{Judgement, Verdict};
use crate::wander::masks::{builtin_file, CONDITIONS_NOTE, FROM_MEMORY_NOTE};

/// The wander section and one verdict per mask.
pub(super) fn wander(dut: &Dut, records: &[Loaded], ties: &[Loaded], r: &mut Report) -> Result<()> {
    let Some(w) = &dut.wander else {
        r.wander = Part::not_requested("the DUT file has no [wander] section.");
        return Ok(());
    };
    // Built-ins are limit files like the user's (as `tauwise wander`).
    let mut limits = Vec::new();
    for name in &w.masks {
        limits.extend(builtin_file(name)?.limits);
    }
    for f in w.mask_files.iter().chain(&dut.limit_files) {
        limits.extend(crate::limits::read_limit_file(f)?.limits);
    }
    let masks: Vec<_> = limits
        .iter()
        .filter_map(crate::limits::Limit::as_mask)
        .collect();
    let chosen = match &w.source {
        Some(n) => ties.iter().chain(records).find(|l| &l.src.name == n),
        None => ties.first().or(records.first()),
    };
    let Some(l) = chosen else {
        r.wander = Part::not_computed("no TIE capture or record to analyse.");
        return Ok(());
    };
    let rec = l.series.record.to_phase();
    // As `tauwise wander` (same library call): by default over the whole
    // record, MTIE to its span and TDEV to a third of it.
    let opts = crate::wander::Options {
        grid: w.taus.clone(),
        range: w.tau_range,
        remove_offset: w.remove_offset,
        filter: w.te_filter,
        te: w.te,
        decision: r.decision,
    };
    let res = match crate::wander::analyse_limits(&rec, &opts, &masks, &limits) {
        Ok(x) => x,
        Err(e) => {
            r.wander = Part::not_computed(format!("{}: {e}", l.src.name));
            for lim in limits
                .iter()
                .filter(|x| matches!(x.metric, crate::limits::LimitMetric::Te(_)))
            {
                let c = crate::limits::check_single(lim, None, 0.0, "not computed", None);
                let mut line = super::limits::verdict_line(&c, &l.src.name);
                line.brief = super::limits::brief(lim);
                line.judgement = Judgement::not_judged(format!("not computed: {e}"));
                line.result = format!("not computed: {e}");
                r.verdicts.push(line);
            }
            for m in &masks {
                r.verdicts.push(VerdictLine {
                    brief: None,
                    kind: VerdictKind::Mask,
                    item: format!("{} ({})", m.name, m.metric.name().to_uppercase()),
                    criterion: "below the mask at every τ it covers".into(),
                    result: format!("not computed: {e}"),
                    judgement: Judgement::not_judged(format!("not computed: {e}")),
                    ratio: None,
                    hold_time: None,
                });
            }
            return Ok(());
        }
    };
    r.methods.push(method(
        "TIE statistics, MTIE, TDEV",
        "ITU-T G.810 definitions; TDEV as NIST SP 1065 §5.2.6",
    ));
    r.methods.push(method(
        "mask checks",
        "ITU-T G.811, G.8262, G.8272 masks (built-in values recalled from memory) or the user's limit files",
    ));
    if res.te.is_some() || res.filter.is_some() {
        r.methods.push(method(
            "time error",
            "measurement filters: Butterworth by the bilinear transform, corner pre-warped, settling dropped; cTE, max |TE|, dTE_L (MTIE, TDEV through a 0.1 Hz low-pass), dTE_H (peak-to-peak through a 0.1 Hz high-pass), split recalled from memory (ITU-T G.8273.2); docs/time-error.md",
        ));
    }
    let plots = crate::plot::wander::plots_from_result(
        &res,
        &masks,
        &format!("{} — {}", dut.name, l.src.name),
    );
    let mut rows = Vec::new();
    for c in &res.checks {
        let item = format!("{} ({})", c.name, c.metric.name().to_uppercase());
        let range = |a: f64, b: Option<f64>| {
            format!(
                "{} to {}",
                format_si(a, "s", 4),
                b.map(|b| format_si(b, "s", 4))
                    .unwrap_or_else(|| "no upper end".into())
            )
        };
        let mut result = match (c.worst_ratio, c.worst_tau, &c.checked_range) {
            (Some(ratio), Some(tau), Some(cr)) if c.verdict() != Verdict::NotJudged => format!(
                "worst measured/limit {ratio:.3} ({}) at τ = {}; {} violating τ of {} checked from {}",
                c.worst_margin_db
                    .map(format_margin_db)
                    .unwrap_or_else(|| "no margin: the value is zero".into()),
                format_si(tau, "s", 4),
                c.violations.len(),
                c.checked,
                range(cr.from, cr.to)
            ),
            _ => "not judged".into(),
        };
        if let Some(why) = &c.judgement.reason {
            result.push_str(&format!("; {why}"));
        }
        r.verdicts.push(VerdictLine {
            brief: None,
            kind: VerdictKind::Mask,
            item,
            criterion: format!(
                "below the mask at every τ it covers ({})",
                range(c.mask_range.from, c.mask_range.to)
            ),
            result,
            judgement: c.judgement.clone(),
            ratio: c
                .worst_ratio
                .filter(|_| c.judgement.verdict != Verdict::NotJudged),
            hold_time: None,
        });
        rows.push(MaskRow {
            name: c.name.clone(),
            metric: c.metric.name().to_uppercase(),
            judgement: c.judgement.clone(),
            worst_ratio: c.worst_ratio,
            worst_tau: c.worst_tau,
            checked: c.checked_range.map(|r| (r.from, r.to.unwrap_or(r.from))),
            mask_range: (c.mask_range.from, c.mask_range.to),
            violations: c.violations.len(),
            source_note: c.source_note.clone(),
        });
    }
    for c in &res.te_checks {
        let mut line = super::limits::verdict_line(c, &format!("{} (time error)", l.src.name));
        line.brief = limits
            .iter()
            .find(|x| x.file == c.file && x.line == c.line)
            .and_then(super::limits::brief);
        r.verdicts.push(line);
    }
    let mut notes = Vec::new();
    if let Some(f) = &res.filter {
        notes.push(format!(
            "Measurement filter applied before the TIE statistics, MTIE, TDEV and the masks: {}.",
            f.line()
        ));
    }
    if let Some(o) = &res.observation {
        notes.push(format!("{}.", capitalised(&o.line())));
        for w in &o.warnings {
            notes.push(format!("Warning: {w}."));
        }
    }
    notes.push(CONDITIONS_NOTE.to_string());
    if !w.masks.is_empty() {
        notes.push(format!("Built-in masks: {FROM_MEMORY_NOTE}."));
    }
    if let Some(y) = res.tie.offset_removed {
        notes.push(format!(
            "A constant frequency offset of {y:.4e} was removed first."
        ));
    }
    r.cautions.push(CONDITIONS_NOTE.to_string());
    r.wander = Part::Done(WanderSection {
        source: l.src.name.clone(),
        tie: Some(TieStats {
            max_abs: res.tie.max_abs,
            pk_pk: res.tie.pk_pk,
            rms: res.tie.rms,
        }),
        plots,
        masks: rows,
        notes,
        te: res.te.clone(),
    });
    Ok(())
}

/// `text` with its first letter in upper case.
fn capitalised(text: &str) -> String {
    let mut c = text.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// The holdover predictions a report asks for ([`holdover_ask`]) and what
/// its section needs besides; the predictions are made by
/// [`crate::holdover::predict_many`], for this device alone or with the
/// other devices of a comparison (the same numbers either way), and the
/// section is finished by [`holdover_finish`].
pub(crate) struct HoldoverAsk {
    /// The model fitted to the record.
    pub model: crate::holdover::HoldoverModel,
    /// One settings per span, in the DUT file's order.
    pub settings: Vec<Settings>,
    source: String,
    prepared_note: &'static str,
}

/// A verdict line per span, all "not computed", and the section's reason.
fn holdover_not_computed(h: &crate::io::dut::HoldoverSpec, r: &mut Report, why: String) {
    for &span in &h.spans {
        r.verdicts.push(VerdictLine {
            brief: None,
            kind: VerdictKind::Holdover,
            item: format!("{} span", format_si(span / 3600.0, "h", 3)),
            criterion: format!("p95 of |TE| ≤ {}", format_si(h.budget, "s", 3)),
            result: format!("not computed: {why}"),
            judgement: Judgement::not_judged(format!("not computed: {why}")),
            ratio: None,
            hold_time: None,
        });
    }
    r.holdover = Part::not_computed(why);
}

/// What the holdover section will hold, decided before the other sections
/// are made ([`holdover_start`]) and written into the report at the
/// section's place ([`holdover_place`]).
pub(crate) enum HoldoverStart {
    /// The DUT file has no `[holdover]`.
    NotRequested,
    /// No record to predict from.
    NoRecord,
    /// The model could not be made (the reason, naming the record).
    Failed(String),
    /// The predictions to make.
    Ask(Box<HoldoverAsk>),
}

/// The holdover model of the DUT file's `[holdover]` and the settings of
/// its spans, from the records and their preparations (`prepared[i]` for
/// `records[i]`); the verdicts take `decision`.
pub(super) fn holdover_start(
    dut: &Dut,
    records: &[Loaded],
    prepared: &[Result<crate::prepare::pipeline::Prepared>],
    decision: crate::decision::DecisionRule,
) -> HoldoverStart {
    let Some(h) = &dut.holdover else {
        return HoldoverStart::NotRequested;
    };
    let chosen = match &h.record {
        Some(n) => records.iter().position(|l| &l.src.name == n),
        None => (!records.is_empty()).then_some(0),
    };
    let Some((l, p)) = chosen.map(|i| (&records[i], prepared.get(i).and_then(|p| p.as_ref().ok())))
    else {
        return HoldoverStart::NoRecord;
    };
    let opts = FromRecord {
        te0: h.te0.unwrap_or(0.0),
        settle: h.settle,
        aging_given: h.aging,
        y0_given: h.y0.map(|v| (v, h.y0_sigma.unwrap_or(0.0))),
        seed: h.seed.unwrap_or(1),
        ..FromRecord::default()
    };
    // The record as prepared (outliers and gaps as its DUT entry says),
    // with its drift kept: holdover fits its own aging law.
    let (input, prepared_note) = match p {
        Some(p) => (
            &p.before_drift,
            if p.outliers.is_some() || p.gaps.is_some() {
                "The record is used as prepared (outliers taken out, gaps filled as its [[record]] entry says) with its drift kept: the aging law is fitted here, not taken from the stability section."
            } else {
                "The record is used with its drift kept: the aging law is fitted here, not taken from the stability section."
            },
        ),
        None => (
            &l.series.record,
            "The record is used as read: the aging law is fitted here.",
        ),
    };
    let model = match model_from_record(input, &opts) {
        Ok(m) => m,
        Err(e) => return HoldoverStart::Failed(format!("{}: {e}", l.src.name)),
    };
    let settings: Vec<Settings> = h
        .spans
        .iter()
        .map(|&span| {
            let mut settings = Settings::new(span, h.budget);
            settings.decision = decision;
            if let Some(p) = h.paths {
                settings.paths = p;
            }
            if let Some(s) = h.seed {
                settings.seed = s;
            }
            settings
        })
        .collect();
    HoldoverStart::Ask(Box::new(HoldoverAsk {
        model,
        settings,
        source: l.src.name.clone(),
        prepared_note,
    }))
}

/// Write what [`holdover_start`] decided into the report: the section's
/// reason when nothing is predicted (with a "not computed" verdict per
/// span when the model failed), else the predictions to make.
pub(super) fn holdover_place(
    dut: &Dut,
    start: HoldoverStart,
    r: &mut Report,
) -> Option<HoldoverAsk> {
    match start {
        HoldoverStart::NotRequested => {
            r.holdover = Part::not_requested("the DUT file has no [holdover] section.");
            None
        }
        HoldoverStart::NoRecord => {
            r.holdover = Part::not_computed("no record to predict from.");
            None
        }
        HoldoverStart::Failed(why) => {
            if let Some(h) = &dut.holdover {
                holdover_not_computed(h, r, why);
            }
            None
        }
        HoldoverStart::Ask(a) => Some(*a),
    }
}

/// The holdover section and one verdict per span, from the predictions of
/// `ask` (`results[i]` for `ask.settings[i]`; each is the one `tauwise
/// holdover --span` gives alone, bit for bit). The first refusal, in span
/// order, makes the section "not computed".
pub(super) fn holdover_finish(
    dut: &Dut,
    ask: HoldoverAsk,
    results: Vec<Result<crate::holdover::Prediction>>,
    r: &mut Report,
) {
    let Some(h) = &dut.holdover else {
        return;
    };
    let HoldoverAsk {
        model,
        settings: all_settings,
        source,
        prepared_note,
    } = ask;
    let predictions = match results.into_iter().collect::<Result<Vec<_>>>() {
        Ok(p) => p,
        Err(e) => {
            holdover_not_computed(h, r, e.to_string());
            return;
        }
    };
    let mut spans = Vec::new();
    let mut longest: Option<(f64, crate::holdover::Prediction)> = None;
    let mut settings_used = None;
    for ((&span, settings), pred) in h.spans.iter().zip(all_settings).zip(predictions) {
        let end = pred.te.last().copied();
        let judgement = pred.judgement.clone();
        r.verdicts.push(VerdictLine {
            brief: None,
            kind: VerdictKind::Holdover,
            item: format!("{} span", format_si(span / 3600.0, "h", 3)),
            criterion: format!("p95 of |TE| ≤ {}", format_si(h.budget, "s", 3)),
            result: match (&judgement.reason, end, pred.holds_for) {
                (Some(why), _, _) if judgement.verdict == Verdict::NotJudged => {
                    format!("not judged: {why}")
                }
                (_, Some(e), Some(hf)) => format!(
                    "p95 reaches the budget after {}; {} at the span end",
                    format_si(hf / 3600.0, "h", 3),
                    format_si(e.p95, "s", 3)
                ),
                (_, Some(e), None) => format!("p95 {} at the span end", format_si(e.p95, "s", 3)),
                _ => "no time points".into(),
            },
            judgement: judgement.clone(),
            ratio: end
                .map(|e| e.p95 / h.budget)
                .filter(|_| judgement.verdict != Verdict::NotJudged),
            hold_time: pred.holds_for,
        });
        if let Some(e) = end {
            spans.push(SpanRow {
                span,
                deterministic: e.deterministic,
                p95: e.p95,
                p99: e.p99,
                judgement,
            });
        }
        if !longest.as_ref().is_some_and(|(s, _)| span <= *s) {
            longest = Some((span, pred));
            settings_used = Some(settings);
        }
    }
    let (Some((span, pred)), Some(settings)) = (longest, settings_used) else {
        r.holdover = Part::not_computed("no span given.");
        return;
    };
    r.methods.push(method(
        "holdover time error",
        "TE(t) = te0 + y0·t + aging term; random part by seeded Monte Carlo of the fitted power-law noise (Kasdin & Walter 1992); percentiles of |TE|",
    ));
    let parameters = vec![
        (
            "initial time error te0".to_string(),
            format_si(model.te0, "s", 4),
        ),
        (
            "initial frequency y0".to_string(),
            format!(
                "{:.4e} ± {:.2e} ({})",
                model.y0,
                model.y0_sigma,
                match model.uncertainty.y0_window {
                    Some(wdw) => format!(
                        "mean over the last {} of the record, carried by the aging law",
                        format_si(wdw / 3600.0, "h", 3)
                    ),
                    None => "given in the DUT file".to_string(),
                }
            ),
        ),
        (
            format!("aging ({})", model.aging.model().name()),
            format!(
                "{:.4e} per day at the start{}",
                model.aging.rate(model.start) * 86400.0,
                match model.aging {
                    _ if h.aging.is_some() => " (given)".to_string(),
                    crate::holdover::aging::Aging::Linear { d_sigma, .. } => format!(
                        " ± {:.2e} per day (1σ, fitted; {})",
                        d_sigma * 86400.0,
                        model.aging_significance_words().unwrap_or_default()
                    ),
                    crate::holdover::aging::Aging::Log { a_sigma, .. } => {
                        format!(" (fitted, A ± {a_sigma:.2e})")
                    }
                }
            ),
        ),
        (
            "uncertainty of y0 and aging".to_string(),
            if model.uncertainty.replicates > 0 {
                format!(
                    "parametric bootstrap: the fit repeated on {} records drawn from the noise model{}; drawn per Monte Carlo path{}",
                    model.uncertainty.replicates,
                    if model.uncertainty.rwfm_drawn {
                        " (each with its own random-walk FM level, as the record could have measured it)"
                    } else {
                        ""
                    },
                    if model.uncertainty.y0_window.is_some() && h.aging.is_none() {
                        format!(
                            " jointly (correlation {:+.2})",
                            model.uncertainty.y0_aging_corr
                        )
                    } else {
                        String::new()
                    }
                )
            } else {
                "given values".to_string()
            },
        ),
        ("noise model".to_string(), model.noise.to_model_string()),
        (
            "Monte Carlo".to_string(),
            format!(
                "{} paths, seed {}, step {}",
                pred.paths,
                settings.seed,
                format_si(pred.step, "s", 4)
            ),
        ),
    ];
    let caution = crate::holdover::caution();
    r.cautions.push(crate::holdover::HOLDOVER_NOTE.to_string());
    r.holdover = Part::Done(HoldoverSection {
        source: source.clone(),
        budget: h.budget,
        plot: HoldoverPlot::from_prediction(
            &format!("{} — holdover from {}", dut.name, source),
            &pred,
            span,
            h.budget,
            vec![caution.clone()],
        ),
        spans,
        holds_for: pred.holds_for,
        aging_per_day: Some((
            model.aging.rate(model.start) * 86400.0,
            match model.aging {
                _ if h.aging.is_some() => None,
                crate::holdover::aging::Aging::Linear { d_sigma, .. } => Some(d_sigma * 86400.0),
                crate::holdover::aging::Aging::Log { .. } => None,
            },
        )),
        parameters,
        notes: vec![prepared_note.to_string(), caution],
    });
}
