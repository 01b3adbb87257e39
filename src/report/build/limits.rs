//! Limit files of a DUT (`[device] limit_files`): each σ limit checked on
//! every record as the report prepared it (the `stability` command's
//! library path, [`crate::limits::check_sigma`]), each L(f) limit on every
//! phase-noise table ([`crate::limits::check_lf`], as `jitter TABLE
//! --limit-file`); MTIE and TDEV limits join the `[wander]` masks
//! (decisions.rs). One verdict line per limit, kind `limit`.

use super::{method, BuildOptions, Loaded, LoadedTable};
use crate::io::dut::Dut;
use crate::limits::{Limit, LimitCheck, LimitMetric};
use crate::report::*;
use crate::stability::Request;
use crate::units::{format_margin_db, format_si};
use crate::verdict::{Judgement, Verdict};

/// Every limit of the DUT's limit files, in file order.
pub(super) fn read(dut: &Dut) -> Result<Vec<Limit>> {
    let mut out = Vec::new();
    for f in &dut.limit_files {
        out.extend(crate::limits::read_limit_file(f)?.limits);
    }
    Ok(out)
}

/// The verdict line of one check, `source` the record or table it ran on.
pub fn verdict_line(c: &LimitCheck, source: &str) -> VerdictLine {
    let judged = c.judgement.verdict != Verdict::NotJudged;
    let mut result = if judged && c.metric.is_single() {
        format!(
            "measured/limit {:.3} ({}); {} of {source}",
            c.worst_ratio.unwrap_or(f64::NAN),
            c.worst_margin_db
                .map(format_margin_db)
                .unwrap_or_else(|| "no margin".into()),
            c.checked_words()
        )
    } else if judged {
        let worst = match (c.worst_ratio, c.worst_at) {
            (Some(r), Some(at)) => {
                let at = format!("{} = {}", c.axis.symbol(), format_si(at, c.axis.unit(), 4));
                match (c.metric, c.worst_excess_db) {
                    (LimitMetric::Lf, Some(e)) => format!(
                        "worst: L(f) {:.2} dB {} the limit at {at}",
                        e.abs(),
                        if e > 0.0 { "above" } else { "below" }
                    ),
                    _ => format!(
                        "worst measured/limit {r:.3} ({}) at {at}",
                        c.worst_margin_db
                            .map(format_margin_db)
                            .unwrap_or_else(|| "no margin".into())
                    ),
                }
            }
            _ => String::new(),
        };
        format!("{worst}; {} of {source}", c.checked_words())
    } else {
        format!("not judged on {source}")
    };
    if let Some(why) = &c.judgement.reason {
        result.push_str(&format!("; {why}"));
    }
    if !c.interval_reaches_limit.is_empty() {
        result.push_str(&format!(
            "; the confidence interval reaches over the limit at {} τ",
            c.interval_reaches_limit.len()
        ));
    }
    VerdictLine {
        brief: None,
        kind: if c.metric == LimitMetric::Lf {
            VerdictKind::LimitPower
        } else {
            VerdictKind::Limit
        },
        item: c.label(),
        criterion: format!(
            "{} {} the limit of {} (line {}){}{}",
            c.metric.label(),
            if c.metric.is_single() {
                "over the record at or below"
            } else {
                "below"
            },
            c.file,
            c.line,
            if c.metric.is_single() {
                ""
            } else {
                " wherever it sets one"
            },
            c.note
                .as_ref()
                .map(|n| format!("; {n}"))
                .unwrap_or_default()
        ),
        result,
        judgement: c.judgement.clone(),
        ratio: c.worst_ratio.filter(|_| judged),
        hold_time: None,
    }
}

/// The short criterion of a single-value limit's line ([`VerdictLine::brief`]):
/// its metric and value, `max|TE| ≤ 100 ns`; `None` for a curve.
pub(super) fn brief(l: &Limit) -> Option<String> {
    if !l.metric.is_single() {
        return None;
    }
    let &(_, value) = l.points.first()?;
    let value = match l.metric.values() {
        crate::limits::ValueKind::Duration => format_si(value, "s", 4),
        crate::limits::ValueKind::DbcHz => format!("{value} dBc/Hz"),
        crate::limits::ValueKind::Fraction => format!("{value:.4e}"),
    };
    Some(format!("{} ≤ {value}", l.metric.label()))
}

/// A not-judged verdict line for a limit with nothing to check it on.
fn not_judged_line(r: &mut Report, l: &Limit, why: &str) {
    let c = crate::limits::check_limit(l, &[], &crate::limits::check::Support::unbounded(1.0));
    let mut line = verdict_line(&c, "nothing");
    line.brief = brief(l);
    line.judgement = Judgement::not_judged(why.to_string());
    line.result = format!("not judged: {why}");
    r.verdicts.push(line);
}

/// The σ and L(f) limits of the DUT: one verdict line each.
pub(super) fn check(
    dut: &Dut,
    records: &[Loaded],
    work: &[super::time::Worked],
    tables: &[LoadedTable],
    opts: &BuildOptions,
    r: &mut Report,
) -> Result<()> {
    let limits = read(dut)?;
    let sigma: Vec<Limit> = limits
        .iter()
        .filter(|l| l.metric.command() == "stability")
        .cloned()
        .collect();
    if dut.wander.is_none() {
        for l in limits.iter().filter(|l| l.metric.command() == "wander") {
            not_judged_line(
                r,
                l,
                "an MTIE or TDEV limit is checked with the [wander] masks: the DUT file has no [wander] section",
            );
        }
    }
    let lf: Vec<Limit> = limits
        .iter()
        .filter(|l| l.metric == LimitMetric::Lf)
        .cloned()
        .collect();
    let not_judged = not_judged_line;
    if !sigma.is_empty() {
        if records.is_empty() {
            for l in &sigma {
                not_judged(r, l, "the DUT file lists no [[record]] to check it on");
            }
        }
        // Every record, as the stability section analysed it.
        let req = Request {
            estimators: opts.estimators.clone(),
            grid: opts.grid.clone(),
            confidence: opts.confidence,
            forced_alpha: None,
            bias_correction: true,
        };
        for (i, rec) in records.iter().enumerate() {
            let x = work
                .get(i)
                .and_then(|w| w.prepared.as_ref())
                .map(|p| p.record.to_phase())
                .unwrap_or_else(|| rec.series.record.to_phase());
            let source = format!("the record '{}' as prepared", rec.src.name);
            let checks = crate::limits::check_sigma_with(&x, &req, &sigma, &r.decision)?;
            for c in &checks {
                r.verdicts.push(verdict_line(c, &source));
            }
            if let Part::Done(list) = &mut r.stability {
                if let Some(sec) = list.iter_mut().find(|x| x.source == rec.src.name) {
                    sec.limits = sigma.clone();
                    sec.limit_checks = checks;
                }
            }
        }
    }
    if !lf.is_empty() {
        if tables.is_empty() {
            for l in &lf {
                not_judged(
                    r,
                    l,
                    "the DUT file lists no [[phase_noise]] table to check it on",
                );
            }
        }
        // Every table.
        for t in tables {
            let source = format!("the table '{}'", t.src.name);
            let checks = crate::limits::check_lf_with(&t.table.spectrum, &lf, &r.decision)?;
            for c in &checks {
                r.verdicts.push(verdict_line(c, &source));
            }
            if let Part::Done(sec) = &mut r.phase_noise {
                if sec.source == t.src.name {
                    let lf_table = t.table.spectrum.to(crate::spectrum::Quantity::Lf)?;
                    for (l, c) in lf.iter().zip(&checks) {
                        let shape = l.shape();
                        for (f, v) in crate::limits::lf_points(&lf_table, l)? {
                            if let Some(lim) = shape.eval(f) {
                                sec.limit_rows.push(LfLimitRow {
                                    limit: c.label(),
                                    offset: f,
                                    measured: v,
                                    value: 10.0 * lim.log10(),
                                });
                            }
                        }
                    }
                    sec.limits = lf.clone();
                    sec.limit_checks = checks;
                }
            }
        }
    }
    if !sigma.is_empty() || !lf.is_empty() {
        r.methods.push(method(
            "limit files",
            "measured/limit at every checked τ or offset inside each limit (log–log interpolation between its points; dB linear in log f for L(f)); docs/limit-file.md",
        ));
        r.cautions.push(crate::limits::LIMIT_NOTE.to_string());
    }
    Ok(())
}
