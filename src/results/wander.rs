//! The `wander` document: TIE statistics, MTIE and TDEV (in the point
//! shape of `stability`), and the mask checks.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, Result};
use crate::deviation::{Estimate, Point};
use crate::units::{format_margin_db, format_si};
use crate::verdict::Verdict;
use crate::wander::WanderResult;
use serde::Serialize;

/// The `wander` results: `{"tie","mtie","tdev","masks","filter"?,"te"?,
/// "observation"?,"caution"?}` ([`WanderResult`]); `"caution"` when masks
/// were checked or the time-error metrics computed.
#[derive(Debug, Clone, Serialize)]
pub struct WanderBody {
    /// The analysis.
    #[serde(flatten)]
    pub result: WanderResult,
    /// The conditions of the masks and the decision caution.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub caution: Option<String>,
    /// Limits of a limit file that `wander` leaves to another command
    /// (`"limits_elsewhere"`, absent when none).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub limits_elsewhere: Vec<crate::limits::Elsewhere>,
}

impl WanderBody {
    /// The document body of `result`.
    pub fn new(result: WanderResult) -> Self {
        let judged = !result.checks.is_empty() || !result.te_checks.is_empty();
        let caution = (judged || result.te.is_some()).then(|| {
            format!(
                "{} {}",
                crate::wander::masks::CONDITIONS_NOTE,
                crate::DECISION_CAUTION
            )
        });
        Self {
            result,
            caution,
            limits_elsewhere: Vec::new(),
        }
    }

    /// The same body, naming the limits left to other commands.
    pub fn with_elsewhere(mut self, limits: Vec<crate::limits::Elsewhere>) -> Self {
        self.limits_elsewhere = limits;
        self
    }

    /// CSV: `estimator` (`mtie`, `tdev`; with the time-error metrics also
    /// `dte_l_mtie`, `dte_l_tdev`), `origin` (`measured`), then
    /// [`Point::COLUMNS`], as the rows of `stability`.
    pub fn csv(&self) -> Result<String> {
        let mut header = vec!["estimator", "origin"];
        header.extend(Point::COLUMNS);
        let mut curves = vec![("mtie", &self.result.mtie), ("tdev", &self.result.tdev)];
        if let Some(te) = &self.result.te {
            curves.push(("dte_l_mtie", &te.dte_l_mtie));
            curves.push(("dte_l_tdev", &te.dte_l_tdev));
        }
        let rows = curves.into_iter().flat_map(|(name, c)| {
            c.iter().map(move |e: &Estimate| {
                let mut r = vec![name.to_string(), "measured".to_string()];
                r.extend(Point::bare(*e).cells());
                r
            })
        });
        csv_text(&header, rows)
    }
}

impl WanderBody {
    /// The table for reading: TIE over the record, MTIE and TDEV per τ,
    /// then each mask check (verdict, source, worst point, what it
    /// covered, violations) and the caution. `input` is the record.
    pub fn table(&self, input: &super::RecordInput) -> Text {
        let r = &self.result;
        let si = |v: f64| format_si(v, "s", 4);
        let mut s = Text::new();
        s.line(format!(
            "{}: {} points at τ0 = {}, {} gaps",
            input.path,
            input.points,
            si(input.tau0),
            input.gaps
        ));
        if let Some(f) = &r.filter {
            s.line(format!("measurement filter: {}", f.line()));
        }
        if let Some(o) = &r.observation {
            s.line(o.line());
            for w in &o.warnings {
                s.line(format!("  warning: {w}"));
            }
        }
        s.blank();
        s.line(if r.filter.is_some() {
            "TIE over the record, through the measurement filter"
        } else {
            "TIE over the record"
        });
        if let Some(y) = r.tie.offset_removed {
            s.line(format!("  frequency offset removed  {y:.4e}"));
        }
        let mut tie = Table::new(vec![
            Column::left("", 12),
            Column::left("", 0).unit(Unit::Si("s")),
        ])
        .indent(2);
        for (k, v) in [
            ("max |TIE|", r.tie.max_abs),
            ("peak-to-peak", r.tie.pk_pk),
            ("rms", r.tie.rms),
        ] {
            tie.row(vec![Cell::text(k), Cell::num(v)]);
        }
        s.table(tie);
        s.blank();
        let mut tab = Table::new(vec![
            Column::right("τ", 12).unit(Unit::Si("s")),
            Column::right("MTIE", 12).unit(Unit::Si("s")).gap(2),
            Column::right("TDEV", 12).unit(Unit::Si("s")).gap(2),
        ]);
        let mut taus: Vec<f64> = r.mtie.iter().chain(&r.tdev).map(|p| p.tau).collect();
        taus.sort_by(f64::total_cmp);
        taus.dedup();
        for t in taus {
            let find = |c: &[Estimate]| Cell::opt(c.iter().find(|p| p.tau == t).map(|p| p.value));
            tab.row(vec![Cell::num(t), find(&r.mtie), find(&r.tdev)]);
        }
        s.table(tab);
        if let Some(te) = &r.te {
            te_table(&mut s, te);
        }
        for c in &r.checks {
            s.blank();
            s.line(format!(
                "mask {} ({}): {}",
                c.name,
                c.metric.name().to_uppercase(),
                c.judgement.cell()
            ));
            s.line(format!("  {}", c.source_note));
            if c.judgement.verdict != Verdict::NotJudged {
                s.line(format!("  {}", c.judgement.rule_words()));
            }
            if let (Some(ratio), Some(t)) = (c.worst_ratio, c.worst_tau) {
                s.line(format!(
                    "  worst: {:.3} of the limit ({} margin) at τ = {}",
                    ratio,
                    c.worst_margin_db
                        .map(format_margin_db)
                        .unwrap_or_else(|| "unlimited".into()),
                    si(t)
                ));
            }
            let mask_to = c
                .mask_range
                .to
                .map(si)
                .unwrap_or_else(|| "no upper end".into());
            match (&c.checked_range, c.judgement.verdict) {
                (Some(r), v) if v != Verdict::NotJudged => {
                    s.line(format!(
                        "  checked {} τ from {} to {} (the mask: {} to {}); coverage {}",
                        c.checked,
                        si(r.from),
                        si(r.to.unwrap_or(r.from)),
                        si(c.mask_range.from),
                        mask_to,
                        c.judgement.coverage.name()
                    ));
                }
                _ => {}
            }
            if let Some(why) = &c.judgement.reason {
                let lead = if c.judgement.verdict == Verdict::NotJudged {
                    "not judged: "
                } else {
                    ""
                };
                s.line(format!("  {lead}{why}"));
            }
            if !c.violations.is_empty() {
                if let Some(t) = c.crossing_tau {
                    s.line(format!("  first exceeds the limit near τ = {}", si(t)));
                }
                let list: Vec<String> = c.violations.iter().map(|v| si(v.tau)).collect();
                let shown = super::table::short_list(&list);
                s.line(format!("  {} violating τ: {shown}", c.violations.len()));
            }
        }
        for c in &r.te_checks {
            s.blank();
            s.extend(super::limits::check_text(c));
        }
        for e in &self.limits_elsewhere {
            s.blank();
            s.line(e.words());
        }
        if !r.checks.is_empty() || r.te.is_some() || !r.te_checks.is_empty() {
            s.blank();
            s.line(crate::wander::masks::CONDITIONS_NOTE);
            s.line(crate::DECISION_CAUTION);
        }
        s
    }
}

/// The time-error metrics for reading.
fn te_table(s: &mut Text, te: &crate::wander::te::TeMetrics) {
    let si = |v: f64| format_si(v, "s", 4);
    s.blank();
    s.line("time error (the values as read, not relative to the first sample)");
    let mut t = Table::new(vec![
        Column::left("", 44),
        Column::left("", 0).unit(Unit::Si("s")),
    ])
    .indent(2);
    t.row(vec![
        Cell::text("cTE, mean over the record"),
        Cell::num(te.cte),
    ]);
    t.row(vec![
        Cell::text(format!(
            "cTE, largest |mean| over {} windows",
            si(te.cte_window)
        )),
        Cell::opt(te.cte_windowed_max_abs),
    ]);
    t.row(vec![Cell::text("max |TE|"), Cell::num(te.max_abs)]);
    t.row(vec![
        Cell::text("max |TE_L|, through the low-pass"),
        Cell::num(te.max_abs_l),
    ]);
    t.row(vec![
        Cell::text("dTE_H, peak-to-peak through the high-pass"),
        Cell::num(te.dte_h_pkpk),
    ]);
    s.table(t);
    if let Some(at) = te.cte_windowed_at {
        s.line(format!(
            "  the largest windowed cTE: window starting at t = {} ({} windows, sliding by one sample)",
            si(at),
            te.cte_windows
        ));
    }
    s.line(format!("  dTE_L low-pass: {}", te.lowpass.line()));
    s.line(format!("  dTE_H high-pass: {}", te.highpass.line()));
    let mut tab = Table::new(vec![
        Column::right("τ", 12).unit(Unit::Si("s")),
        Column::right("dTE_L MTIE", 12).unit(Unit::Si("s")).gap(2),
        Column::right("dTE_L TDEV", 12).unit(Unit::Si("s")).gap(2),
    ]);
    let mut taus: Vec<f64> = te
        .dte_l_mtie
        .iter()
        .chain(&te.dte_l_tdev)
        .map(|p| p.tau)
        .collect();
    taus.sort_by(f64::total_cmp);
    taus.dedup();
    for t in taus {
        let find = |c: &[Estimate]| Cell::opt(c.iter().find(|p| p.tau == t).map(|p| p.value));
        tab.row(vec![
            Cell::num(t),
            find(&te.dte_l_mtie),
            find(&te.dte_l_tdev),
        ]);
    }
    s.blank();
    s.table(tab);
    for n in &te.notes {
        s.line(format!("  {n}"));
    }
}
