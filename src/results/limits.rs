//! The limit checks of a document (`stability`, `jitter`): the checks
//! themselves ([`crate::limits::LimitCheck`]), the limits left to another
//! command, and the caution — serialised flat into the document as
//! `"limits"`, `"limits_elsewhere"`, `"limits_caution"` (each absent when
//! empty), and their text for reading.

use super::table::Text;
use crate::limits::{Axis, Elsewhere, LimitCheck, LimitMetric};
use crate::units::{format_margin_db, format_si};
use crate::verdict::Verdict;
use serde::Serialize;

/// The limit part of a document.
#[derive(Debug, Clone, Default, Serialize)]
pub struct LimitsPart {
    /// One check per limit the command checks, in file order.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub limits: Vec<LimitCheck>,
    /// Limits of the files given that another command checks.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub limits_elsewhere: Vec<Elsewhere>,
    /// What a limit verdict rests on, and the decision caution (present
    /// when any limit was checked).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub limits_caution: Option<String>,
}

impl LimitsPart {
    /// The part for these checks.
    pub fn new(limits: Vec<LimitCheck>, elsewhere: Vec<Elsewhere>) -> Self {
        let caution = (!limits.is_empty())
            .then(|| format!("{} {}", crate::limits::LIMIT_NOTE, crate::DECISION_CAUTION));
        Self {
            limits,
            limits_elsewhere: elsewhere,
            limits_caution: caution,
        }
    }

    /// The text for reading: per check its verdict, note, worst point,
    /// what it checked, the reason, where it first exceeds, the excesses;
    /// then the limits left to other commands and the caution.
    pub fn table(&self) -> Text {
        let mut s = Text::new();
        for c in &self.limits {
            s.blank();
            s.extend(check_text(c));
        }
        for e in &self.limits_elsewhere {
            s.blank();
            s.line(e.words());
        }
        if let Some(c) = &self.limits_caution {
            s.blank();
            s.line(c.clone());
        }
        s
    }
}

/// The lines of one check.
pub fn check_text(c: &LimitCheck) -> Text {
    let u = c.axis.unit();
    let x = c.axis.symbol();
    let at = |v: f64| format_si(v, u, 4);
    let mut s = Text::new();
    s.line(format!(
        "limit {} ({}, line {}): {}",
        c.label(),
        c.file,
        c.line,
        c.judgement.cell()
    ));
    if let Some(n) = &c.note {
        s.line(format!("  {n}"));
    }
    if c.metric.is_single() {
        // One value over the record: no τ to name, no crossing.
        if let (Some(r), true) = (c.worst_ratio, c.judgement.verdict != Verdict::NotJudged) {
            s.line(format!(
                "  measured {r:.3} of the limit ({} margin)",
                c.worst_margin_db
                    .map(format_margin_db)
                    .unwrap_or_else(|| "unlimited".into())
            ));
            s.line(format!("  {}", c.checked_words()));
        }
        if let Some(why) = &c.judgement.reason {
            let lead = if c.judgement.verdict == Verdict::NotJudged {
                "not judged: "
            } else {
                ""
            };
            s.line(format!("  {lead}{why}"));
        }
        return s;
    }
    if c.judgement.verdict != Verdict::NotJudged {
        s.line(format!("  {}", c.judgement.rule_words()));
    }
    if c.judgement.verdict != Verdict::NotJudged {
        if let (Some(r), Some(w)) = (c.worst_ratio, c.worst_at) {
            if c.metric == LimitMetric::Lf {
                let e = c.worst_excess_db.unwrap_or(f64::NAN);
                s.line(format!(
                    "  worst: L(f) {:.2} dB {} the limit at {x} = {}",
                    e.abs(),
                    if e > 0.0 { "above" } else { "below" },
                    at(w)
                ));
            } else {
                s.line(format!(
                    "  worst: {r:.3} of the limit ({} margin) at {x} = {}",
                    c.worst_margin_db
                        .map(format_margin_db)
                        .unwrap_or_else(|| "unlimited".into()),
                    at(w)
                ));
            }
        }
        s.line(format!("  {}", c.checked_words()));
    }
    if let Some(why) = &c.judgement.reason {
        let lead = if c.judgement.verdict == Verdict::NotJudged {
            "not judged: "
        } else {
            ""
        };
        s.line(format!("  {lead}{why}"));
    }
    if !c.excesses.is_empty() {
        if let Some(t) = c.crossing_at {
            s.line(format!("  first exceeds the limit near {x} = {}", at(t)));
        }
        let list: Vec<String> = c.excesses.iter().map(|v| at(v.at)).collect();
        let shown = super::table::short_list(&list);
        s.line(format!(
            "  {} {x} above the limit: {shown}",
            c.excesses.len()
        ));
    }
    if !c.interval_reaches_limit.is_empty() && c.axis == Axis::Tau {
        let list: Vec<String> = c.interval_reaches_limit.iter().map(|&t| at(t)).collect();
        s.line(format!(
            "  the estimate meets but its confidence interval reaches over the limit at {x} = {}: the record cannot tell there",
            list.join(", ")
        ));
    }
    s
}
