//! The comparison of several devices: the verdict matrix (one row per
//! device, one column per check), the ranking, the answer in words and a
//! summary row per device — built from the single-device reports' own
//! verdict lines ([`crate::report::VerdictLine`]), so every cell is the
//! verdict the device's own report (and the individual command) gives.
//!
//! Margins: every check tauwise judges compares an amplitude (MTIE or TDEV,
//! rms jitter, |TE|) with its limit, so the margin is
//! 20·log10(limit / measured) dB — positive within the limit — beside the
//! ratio measured/limit. A mask's margin is at its worst τ, a jitter
//! limit's at the band's rms, a holdover span's at the span's end (p95 of
//! |TE|), with the time at which p95 first reaches the budget.
//!
//! Ranking: devices whose every check was judged come first, ordered by
//! their worst margin (largest first); then devices with a check that
//! could not be judged (a not-judged check fails the gate and hides how
//! far the device is from its limit), by the same rule; a device with no
//! judged margin at all comes last. Ties keep the input order.

use crate::report::{Part, Report, VerdictKind, VerdictLine};
use crate::units::{format_margin_db, format_si, format_sig};
use crate::verdict::{gate, Coverage, Gate, Verdict};
use serde::{Deserialize, Serialize};

/// What kind of check a column is (JSON `"kind"`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum CheckKind {
    /// A holdover span against the time-error budget.
    Holdover,
    /// A wander mask (MTIE or TDEV).
    Wander,
    /// An integrated-jitter limit.
    Jitter,
    /// A limit of a limit file (σ or L(f); MTIE/TDEV limits are wander
    /// columns).
    Limit,
}

impl CheckKind {
    fn of(k: VerdictKind) -> Self {
        match k {
            VerdictKind::Holdover => CheckKind::Holdover,
            VerdictKind::Mask => CheckKind::Wander,
            VerdictKind::Jitter => CheckKind::Jitter,
            VerdictKind::Limit | VerdictKind::LimitPower => CheckKind::Limit,
        }
    }
    /// Word for tables.
    pub fn word(self) -> &'static str {
        match self {
            CheckKind::Holdover => "holdover",
            CheckKind::Wander => "wander",
            CheckKind::Jitter => "jitter",
            CheckKind::Limit => "limit",
        }
    }
    fn order(self) -> u8 {
        match self {
            CheckKind::Holdover => 0,
            CheckKind::Wander => 1,
            CheckKind::Jitter => 2,
            CheckKind::Limit => 3,
        }
    }
}

/// One column of the matrix: `{"kind","item","criterion"}`. Two devices
/// share a column when all three are the same (the same span and budget,
/// the same mask and metric, the same band and limit).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct CheckColumn {
    /// Holdover, wander or jitter.
    pub kind: CheckKind,
    /// What is judged (`8.00 h span`, `g8262-opt1 (MTIE)`, a band).
    pub item: String,
    /// The criterion (budget, mask range, limit).
    pub criterion: String,
    /// The criterion in a few words for the column's header, where the
    /// whole one would not fit (a single-value limit: `max|TE| ≤ 100 ns`;
    /// [`crate::report::VerdictLine::brief`]). Not in JSON.
    #[serde(skip)]
    pub brief: Option<String>,
}

/// One cell: `{"kind","item","verdict","coverage","reason","margin_db",
/// "ratio","hold_time_s","result"}`. For a check the device's DUT file
/// does not ask for, `verdict`, `coverage`, `result` are `null` and
/// `reason` says so (the HTML shows "—").
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MatrixCell {
    /// The column's kind.
    pub kind: CheckKind,
    /// The column's item.
    pub item: String,
    /// `meets`, `exceeds`, `not-judged`; `null`: not a check of this device.
    pub verdict: Option<Verdict>,
    /// `full`, `partial`, `none` (a partial check is judged on part of its
    /// range and says which part in `reason`).
    pub coverage: Option<Coverage>,
    /// Why it was not judged, what a partial check left out, or that the
    /// check is not asked for.
    pub reason: Option<String>,
    /// 20·log10(limit / measured), dB; positive within the limit.
    pub margin_db: Option<f64>,
    /// Measured / limit at the deciding point.
    pub ratio: Option<f64>,
    /// Holdover: when p95 of |TE| first reaches the budget, s (`null`
    /// when it stays within the budget through the span).
    pub hold_time_s: Option<f64>,
    /// The result in words, as the device's report gives it.
    pub result: Option<String>,
    /// The decision rule the verdict was reached by (`simple`, `guarded`);
    /// absent for a check the device does not have.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub decision_rule: Option<crate::decision::Rule>,
    /// The guarded rule's conformance level.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub conformance: Option<f64>,
    /// The probability of conformance (smallest over the checked points),
    /// where the checked quantity has a distribution.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub probability: Option<f64>,
    /// The estimate's verdict where the rule reached another (`undecided`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub at_estimate: Option<Verdict>,
}

impl MatrixCell {
    fn of(line: &VerdictLine) -> Self {
        let judged = line.judgement.verdict != Verdict::NotJudged;
        Self {
            kind: CheckKind::of(line.kind),
            item: line.item.clone(),
            verdict: Some(line.judgement.verdict),
            coverage: Some(line.judgement.coverage),
            reason: line.judgement.reason.clone(),
            margin_db: line.margin_db().filter(|_| judged),
            ratio: line.ratio.filter(|_| judged),
            hold_time_s: line.hold_time.filter(|_| judged),
            result: Some(line.result.clone()),
            decision_rule: Some(line.judgement.decision_rule),
            conformance: line.judgement.conformance,
            probability: line.judgement.probability,
            at_estimate: line.judgement.at_estimate,
        }
    }

    fn absent(col: &CheckColumn) -> Self {
        Self {
            kind: col.kind,
            item: col.item.clone(),
            verdict: None,
            coverage: None,
            reason: Some("not a check of this device: its DUT file does not ask for it".into()),
            margin_db: None,
            ratio: None,
            hold_time_s: None,
            result: None,
            decision_rule: None,
            conformance: None,
            probability: None,
            at_estimate: None,
        }
    }

    /// The cell in words for a table: the verdict, then the margin, the
    /// hold time of a holdover span; "—" for a check the device does not have.
    pub fn words(&self) -> String {
        let Some(v) = self.verdict else {
            return "—".into();
        };
        let p = match (self.at_estimate, self.probability) {
            (Some(e), Some(p)) => format!(
                ": {} at the estimate, {}",
                e.name(),
                crate::decision::p_words(p)
            ),
            (Some(e), None) => format!(": {} at the estimate", e.name()),
            (None, Some(p)) => format!(", {}", crate::decision::p_words(p)),
            (None, None) => String::new(),
        };
        let mut out = match (v, self.coverage) {
            (Verdict::NotJudged, _) => "not judged".to_string(),
            (v, Some(Coverage::Partial)) => format!("{}{p} (partial coverage)", v.name()),
            (v, _) => format!("{}{p}", v.name()),
        };
        if let Some(m) = self.margin_db {
            out.push_str(&format!(
                ", {} (ratio {})",
                format_margin_db(m),
                format_sig(self.ratio.unwrap_or(f64::NAN), 3)
            ));
        }
        if self.kind == CheckKind::Holdover && v != Verdict::NotJudged {
            match self.hold_time_s {
                Some(t) => out.push_str(&format!(
                    "; p95 reaches the budget after {}",
                    format_si(t / 3600.0, "h", 3)
                )),
                None => out.push_str("; p95 within the budget through the span"),
            }
        }
        out
    }
}

/// The summary row of a device: `{"model","h","aging_per_day",
/// "aging_sigma_per_day","drift_per_day","drift_sigma_per_day",
/// "sigma_floor","lf_far","points","span_s","gaps","outliers"}` — each
/// `null` when the report does not hold it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeviceSummary {
    /// The fitted power-law model of the first record (h_α notation,
    /// accepted by `--model`).
    pub model: Option<String>,
    /// Its terms: `[{alpha, noise, h}]`.
    pub h: Vec<SummaryTerm>,
    /// Aging at the start of holdover, 1/day (fitted on the holdover record).
    pub aging_per_day: Option<f64>,
    /// Its standard uncertainty, 1/day (parametric bootstrap).
    pub aging_sigma_per_day: Option<f64>,
    /// Linear frequency drift of the first record, 1/day (least squares on y).
    pub drift_per_day: Option<f64>,
    /// Its standard uncertainty, 1/day.
    pub drift_sigma_per_day: Option<f64>,
    /// The lowest OADEV of the first record: `{tau, dev}` (the flicker
    /// floor where FFM dominates).
    pub sigma_floor: Option<FloorPoint>,
    /// The phase-noise table's value at its highest offset: `{f, lf_dbc_hz}`.
    pub lf_far: Option<FarPoint>,
    /// Samples of the first record, gaps included.
    pub points: Option<usize>,
    /// Its span, s.
    pub span_s: Option<f64>,
    /// Its missing samples.
    pub gaps: Option<usize>,
    /// Its frequency outliers beyond the MAD limit.
    pub outliers: Option<usize>,
}

/// One model term of a summary.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SummaryTerm {
    /// α of S_y(f) ∝ f^α.
    pub alpha: i32,
    /// Noise label.
    pub noise: String,
    /// h_α.
    pub h: f64,
}

/// The lowest σ_y of a record.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FloorPoint {
    /// τ, s.
    pub tau: f64,
    /// OADEV there.
    pub dev: f64,
}

/// L(f) at the table's highest offset.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FarPoint {
    /// Offset, Hz.
    pub f: f64,
    /// L(f), dBc/Hz.
    pub lf_dbc_hz: f64,
}

impl DeviceSummary {
    /// The summary of a device's report.
    pub fn of(r: &Report) -> Self {
        let mut s = Self {
            model: None,
            h: Vec::new(),
            aging_per_day: None,
            aging_sigma_per_day: None,
            drift_per_day: None,
            drift_sigma_per_day: None,
            sigma_floor: None,
            lf_far: None,
            points: None,
            span_s: None,
            gaps: None,
            outliers: None,
        };
        if let Part::Done(list) = &r.noise_model {
            if let Some(m) = list.first().filter(|m| !m.model_string.is_empty()) {
                s.model = Some(m.model_string.clone());
                s.h = m
                    .terms
                    .iter()
                    .map(|t| SummaryTerm {
                        alpha: t.alpha,
                        noise: t.label.clone(),
                        h: t.h,
                    })
                    .collect();
            }
        }
        if let Part::Done(h) = &r.holdover {
            if let Some((a, sg)) = h.aging_per_day {
                s.aging_per_day = Some(a);
                s.aging_sigma_per_day = sg;
            }
        }
        if let Part::Done(list) = &r.stability {
            if let Some(st) = list.first() {
                if let Some(q) = &st.quality {
                    s.drift_per_day = q.drift_per_day;
                    s.drift_sigma_per_day = q.drift_sigma_per_day;
                    s.points = Some(q.points);
                    s.span_s = Some(q.span);
                    s.gaps = Some(q.gaps);
                    s.outliers = q.outliers.as_ref().map(|o| o.events.len());
                }
                s.sigma_floor = st
                    .rows
                    .iter()
                    .filter(|r| {
                        r.estimator == crate::deviation::Estimator::Oadev
                            && r.dev.is_finite()
                            && r.dev > 0.0
                    })
                    .min_by(|a, b| a.dev.total_cmp(&b.dev))
                    .map(|r| FloorPoint {
                        tau: r.tau,
                        dev: r.dev,
                    });
            }
        }
        if let Part::Done(p) = &r.phase_noise {
            s.lf_far = p
                .plot
                .traces
                .iter()
                .find(|t| t.kind == crate::plot::phase_noise::TraceKind::Table)
                .and_then(|t| {
                    t.points
                        .iter()
                        .filter(|(f, l)| f.is_finite() && l.is_finite())
                        .max_by(|a, b| a.0.total_cmp(&b.0))
                })
                .map(|&(f, l)| FarPoint { f, lf_dbc_hz: l });
        }
        s
    }
}

/// One row of the matrix: `{"name","dut","rank","worst_margin_db","gate",
/// "checks","summary"}` — `checks` has one cell per column, in the
/// columns' order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MatrixRow {
    /// Device name (from its DUT file).
    pub name: String,
    /// The DUT file.
    pub dut: String,
    /// Place in the ranking, from 1.
    pub rank: usize,
    /// The smallest margin among its judged checks, dB.
    pub worst_margin_db: Option<f64>,
    /// What `--fail-on-violation` makes of its checks: `pass`, `exceeds`,
    /// `not-judged`.
    pub gate: Gate,
    /// One cell per column.
    pub checks: Vec<MatrixCell>,
    /// The device's summary row.
    pub summary: DeviceSummary,
}

/// The verdict matrix of several devices: `{"columns","devices","ranking",
/// "answer","caution"}` (docs/json.md). `devices` are in input order;
/// `ranking` lists their names best first.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FleetMatrix {
    /// The checks, holdover first, then wander, then jitter, each in the
    /// order the devices first name them.
    pub columns: Vec<CheckColumn>,
    /// One row per device, in input order.
    pub devices: Vec<MatrixRow>,
    /// Device names, best first (module notes for the rule).
    pub ranking: Vec<String>,
    /// The answer in words: which device holds each holdover span, which
    /// meets every check, which comes first.
    pub answer: Vec<String>,
    /// The decision caution.
    pub caution: String,
}

/// The `report --format json` document: `{"tool","version","schema",
/// "input": {"data": "dut-files", "paths"}, …}` then the matrix's members.
#[derive(Debug, Clone, Serialize)]
pub struct FleetDocument {
    /// Always `tauwise`.
    pub tool: &'static str,
    /// The crate version.
    pub version: &'static str,
    /// [`super::SCHEMA`].
    pub schema: u32,
    /// The DUT files read.
    pub input: FleetInput,
    /// The matrix.
    #[serde(flatten)]
    pub matrix: FleetMatrix,
}

/// `{"data": "dut-files", "paths": […]}`.
#[derive(Debug, Clone, Serialize)]
pub struct FleetInput {
    /// Always `dut-files`.
    pub data: &'static str,
    /// The DUT files, in input order.
    pub paths: Vec<String>,
}

impl FleetDocument {
    /// The document of a matrix.
    pub fn new(matrix: FleetMatrix) -> Self {
        Self {
            tool: crate::TOOL,
            version: crate::VERSION,
            schema: super::SCHEMA,
            input: FleetInput {
                data: "dut-files",
                paths: matrix.devices.iter().map(|d| d.dut.clone()).collect(),
            },
            matrix,
        }
    }

    /// The JSON text and the members that are not finite.
    pub fn json(&self) -> crate::Result<(String, Vec<String>)> {
        super::json::to_text(self)
            .map_err(|e| crate::Error::invalid(format!("could not write JSON: {e}")))
    }
}

fn column_of(l: &VerdictLine) -> CheckColumn {
    CheckColumn {
        kind: CheckKind::of(l.kind),
        item: l.item.clone(),
        criterion: l.criterion.clone(),
        brief: l.brief.clone(),
    }
}

impl FleetMatrix {
    /// The matrix of `devices`: each a report with its DUT file's path.
    pub fn build(devices: &[(&Report, String)]) -> Self {
        let mut columns: Vec<CheckColumn> = Vec::new();
        for (r, _) in devices {
            for l in &r.verdicts {
                let c = column_of(l);
                if !columns.contains(&c) {
                    columns.push(c);
                }
            }
        }
        // Holdover first (the scenario's question), then wander, jitter;
        // stable within a kind.
        columns.sort_by_key(|c| c.kind.order());
        let rows: Vec<MatrixRow> = devices
            .iter()
            .map(|(r, dut)| {
                let checks: Vec<MatrixCell> = columns
                    .iter()
                    .map(|c| {
                        r.verdicts
                            .iter()
                            .find(|l| column_of(l) == *c)
                            .map(MatrixCell::of)
                            .unwrap_or_else(|| MatrixCell::absent(c))
                    })
                    .collect();
                let worst_margin_db = checks
                    .iter()
                    .filter_map(|c| c.margin_db)
                    .min_by(f64::total_cmp);
                MatrixRow {
                    name: r.device.clone(),
                    dut: dut.clone(),
                    rank: 0,
                    worst_margin_db,
                    gate: gate(r.verdicts.iter().map(|l| &l.judgement)),
                    checks,
                    summary: DeviceSummary::of(r),
                }
            })
            .collect();
        Self::ranked_from(columns, rows)
    }

    /// The matrix of several devices from each device's own matrix
    /// ([`FleetMatrix::build`] of that device's report alone), as a
    /// distributed run gathers them: the columns in the order `build` gives
    /// (holdover, wander, jitter, limits; within a kind, as the devices first
    /// name them), each device's cells moved to those columns (a column its
    /// DUT file does not ask for is absent), then the ranking and the answer
    /// — equal to `build` over all the reports. Two devices of one name are
    /// refused, as the comparison report refuses them.
    pub fn combine(parts: &[FleetMatrix]) -> crate::Result<Self> {
        let mut columns: Vec<CheckColumn> = Vec::new();
        for p in parts {
            for c in &p.columns {
                if !columns.contains(c) {
                    columns.push(c.clone());
                }
            }
        }
        columns.sort_by_key(|c| c.kind.order());
        let mut rows: Vec<MatrixRow> = Vec::new();
        for p in parts {
            for row in &p.devices {
                if let Some(other) = rows.iter().find(|r| r.name == row.name) {
                    return Err(crate::Error::invalid(format!(
                        "{} and {} both name the device \"{}\": give each DUT file its own [device] name",
                        other.dut, row.dut, row.name
                    )));
                }
                let checks = columns
                    .iter()
                    .map(|c| {
                        p.columns
                            .iter()
                            .position(|own| own == c)
                            .and_then(|k| row.checks.get(k).cloned())
                            .unwrap_or_else(|| MatrixCell::absent(c))
                    })
                    .collect();
                rows.push(MatrixRow {
                    checks,
                    rank: 0,
                    ..row.clone()
                });
            }
        }
        Ok(Self::ranked_from(columns, rows))
    }

    /// Rank `rows` (module notes) and write the answer.
    fn ranked_from(columns: Vec<CheckColumn>, mut rows: Vec<MatrixRow>) -> Self {
        let mut order: Vec<usize> = (0..rows.len()).collect();
        order.sort_by(|&a, &b| rank_key(&rows[a]).total_cmp_key(&rank_key(&rows[b])));
        for (place, &i) in order.iter().enumerate() {
            rows[i].rank = place + 1;
        }
        let ranking = order.iter().map(|&i| rows[i].name.clone()).collect();
        let answer = answer(&columns, &rows, &order);
        Self {
            columns,
            devices: rows,
            ranking,
            answer,
            caution: crate::DECISION_CAUTION.to_string(),
        }
    }

    /// The rows in ranked order.
    pub fn ranked(&self) -> Vec<&MatrixRow> {
        let mut v: Vec<&MatrixRow> = self.devices.iter().collect();
        v.sort_by_key(|r| r.rank);
        v
    }
}

/// (has a not-judged check, −worst margin): smaller is better.
struct RankKey(bool, f64);

impl RankKey {
    fn total_cmp_key(&self, o: &RankKey) -> std::cmp::Ordering {
        self.0.cmp(&o.0).then(self.1.total_cmp(&o.1))
    }
}

fn rank_key(r: &MatrixRow) -> RankKey {
    let not_judged = r
        .checks
        .iter()
        .any(|c| c.verdict == Some(Verdict::NotJudged));
    RankKey(not_judged, r.worst_margin_db.map_or(f64::INFINITY, |m| -m))
}

fn list(names: &[String]) -> String {
    if names.is_empty() {
        "none".into()
    } else {
        names.join(", ")
    }
}

/// The answer in words, holdover first.
fn answer(columns: &[CheckColumn], rows: &[MatrixRow], order: &[usize]) -> Vec<String> {
    let mut out = Vec::new();
    for (k, c) in columns.iter().enumerate() {
        if c.kind != CheckKind::Holdover {
            continue;
        }
        let mut meets = Vec::new();
        let mut exceeds = Vec::new();
        let mut other = Vec::new();
        // This column's best margin first.
        let mut by_margin: Vec<usize> = order.to_vec();
        by_margin.sort_by(|&a, &b| {
            let m = |i: usize| rows[i].checks[k].margin_db.map_or(f64::INFINITY, |m| -m);
            m(a).total_cmp(&m(b))
        });
        for &i in &by_margin {
            let r = &rows[i];
            let cell = &r.checks[k];
            match cell.verdict {
                Some(Verdict::Meets) => meets.push(match cell.margin_db {
                    Some(m) => format!("{} ({})", r.name, format_margin_db(m)),
                    None => r.name.clone(),
                }),
                Some(Verdict::Exceeds) => exceeds.push(match cell.hold_time_s {
                    Some(t) => format!(
                        "{} (reaches the budget after {})",
                        r.name,
                        format_si(t / 3600.0, "h", 3)
                    ),
                    None => r.name.clone(),
                }),
                Some(Verdict::NotJudged) => other.push(format!("{} (not judged)", r.name)),
                Some(Verdict::Undecided) => other.push(format!(
                    "{} (undecided{})",
                    r.name,
                    cell.probability
                        .map(|p| format!(", {}", crate::decision::p_words(p)))
                        .unwrap_or_default()
                )),
                None => other.push(format!("{} (not asked)", r.name)),
            }
        }
        out.push(format!(
            "Holdover, {} with {}: holds — {}; does not hold — {}{}.",
            c.item,
            c.criterion,
            list(&meets),
            list(&exceeds),
            if other.is_empty() {
                String::new()
            } else {
                format!("; {}", other.join(", "))
            }
        ));
    }
    let all: Vec<String> = order
        .iter()
        .map(|&i| &rows[i])
        .filter(|r| {
            r.gate == Gate::Pass && r.checks.iter().all(|c| c.verdict == Some(Verdict::Meets))
        })
        .map(|r| r.name.clone())
        .collect();
    if !columns.is_empty() {
        out.push(format!(
            "Meets every check of the matrix: {}.",
            if all.is_empty() {
                "no device".to_string()
            } else {
                all.join(", ")
            }
        ));
    }
    if let Some(&first) = order.first() {
        let r = &rows[first];
        match r.worst_margin_db {
            Some(m) => out.push(format!(
                "First by worst margin: {} ({} at its closest check){}.",
                r.name,
                format_margin_db(m),
                if r.gate == Gate::Pass {
                    ""
                } else {
                    "; it does not pass every check"
                }
            )),
            None => out.push("No device has a judged check to rank by.".into()),
        }
    }
    out
}
