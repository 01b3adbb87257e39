//! Limit files: one TOML file of limits on any metric — MTIE and TDEV
//! (checked by `wander`), the σ estimators of the registry (checked by
//! `stability`) and L(f) (checked by `jitter`) — and the one check of a
//! measured curve against a limit that all of them use.
//!
//! - [`file`](mod@file) — the format (documented in `docs/limit-file.md`): parse,
//!   refuse with file and line, write back; an old-syntax mask file gets a
//!   message that shows its TOML form ([`legacy`]).
//! - [`check`] — a curve against a limit: verdict, coverage, worst ratio,
//!   crossing, excesses; also behind `wander`'s mask checks.
//! - [`check_limit`], [`check_sigma`], [`check_lf`] — a [`Limit`] against a
//!   measured curve, a record (σ estimators) or an L(f) table, into the
//!   serialisable [`LimitCheck`] every command and the report print.

pub mod check;
pub mod file;
pub mod legacy;

use crate::deviation::Estimator;
use crate::error::Result;
use crate::record::PhaseRecord;
use crate::spectrum::Spectrum;
use crate::tau::TauGrid;
use crate::units::format_si;
use crate::verdict::{Judgement, Verdict};
use crate::wander::masks::{Mask, Metric, Segment, Shape};
use check::{check_curve, Support, Words};
use serde::Serialize;

pub use file::{parse_limit_file, read_limit_file, write_limit_file, LimitFile};

/// The caution printed beside every limit verdict.
pub const LIMIT_NOTE: &str = "A limit from a file is checked only where it sets a value (between \
its first and last point) and only at the τ or offsets the measurement reaches; a data sheet's \
or a contract's own test conditions (bandwidth, temperature, warm-up, measurement set-up) are \
not known to this tool.";

/// What a limit limits: an estimator of the registry, L(f), or a
/// time-error metric.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum LimitMetric {
    /// An estimator of the registry (`adev`, `mdev`, `mtie`, `tdev`, …).
    Estimator(Estimator),
    /// Single-sideband phase noise L(f) in dBc/Hz (IEEE Std 1139).
    Lf,
    /// A time-error metric of `wander --te` (docs/time-error.md).
    Te(TeMetric),
}

/// The time-error metrics a limit file may limit (checked by `wander`
/// on the metrics of [`crate::wander::te`]): four single values — a
/// duration that holds over the whole record — and the MTIE and TDEV of the
/// low-passed time error over τ.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TeMetric {
    /// `cte`: |cTE|, the largest |mean TE| over the cTE windows (the mean
    /// over the whole record when no window fits).
    Cte,
    /// `max-te`: max |TE| of the record as read.
    MaxTe,
    /// `max-te-l`: max |TE_L| of the record through the dTE_L low-pass.
    MaxTeL,
    /// `dte-h`: peak-to-peak of the record through the dTE_H high-pass.
    DteH,
    /// `dte-l`: MTIE(τ) of the low-passed record (dTE_L), over τ.
    DteL,
    /// `dte-l-tdev`: TDEV(τ) of the low-passed record (dTE_L), over τ.
    DteLTdev,
}

impl TeMetric {
    /// Every time-error metric, in the order of the docs.
    pub const ALL: [TeMetric; 6] = [
        TeMetric::Cte,
        TeMetric::MaxTe,
        TeMetric::MaxTeL,
        TeMetric::DteH,
        TeMetric::DteL,
        TeMetric::DteLTdev,
    ];

    /// The name in limit files and JSON.
    pub fn name(self) -> &'static str {
        match self {
            TeMetric::Cte => "cte",
            TeMetric::MaxTe => "max-te",
            TeMetric::MaxTeL => "max-te-l",
            TeMetric::DteH => "dte-h",
            TeMetric::DteL => "dte-l",
            TeMetric::DteLTdev => "dte-l-tdev",
        }
    }

    /// The label in tables.
    pub fn label(self) -> &'static str {
        match self {
            TeMetric::Cte => "cTE",
            TeMetric::MaxTe => "max|TE|",
            TeMetric::MaxTeL => "max|TE_L|",
            TeMetric::DteH => "dTE_H pk-pk",
            TeMetric::DteL => "dTE_L MTIE",
            TeMetric::DteLTdev => "dTE_L TDEV",
        }
    }

    /// A single value over the whole record (not a curve over τ).
    pub fn is_single(self) -> bool {
        !matches!(self, TeMetric::DteL | TeMetric::DteLTdev)
    }
}

/// What the limit values of a metric are.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueKind {
    /// A duration with its unit (MTIE, TDEV, TTOT, TIE rms).
    Duration,
    /// A fractional frequency, bare or with ppm/ppb/ppt (σ_y).
    Fraction,
    /// A level in dBc/Hz (L(f)).
    DbcHz,
}

impl LimitMetric {
    /// Every metric a limit file may name, in registry order then `lf`:
    /// the estimators of the registry except Theo1 and TheoH (their τ lie
    /// on their own lattice; a data sheet's σ_y(τ) is written for ADEV or
    /// OADEV, which TheoH estimates), then `lf`.
    pub fn all() -> Vec<LimitMetric> {
        Estimator::ALL
            .iter()
            .copied()
            .filter(|e| !e.uses_theo_lattice())
            .map(LimitMetric::Estimator)
            .chain([LimitMetric::Lf])
            .chain(TeMetric::ALL.map(LimitMetric::Te))
            .collect()
    }

    /// The names of [`LimitMetric::all`], comma-separated.
    pub fn known_names() -> String {
        Self::all()
            .iter()
            .map(|m| m.name())
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// Look a metric up by name (case ignored); the error lists the known
    /// names.
    pub fn from_name(text: &str) -> std::result::Result<Self, String> {
        let t = text.trim();
        if t.eq_ignore_ascii_case("lf") {
            return Ok(LimitMetric::Lf);
        }
        if let Some(m) = TeMetric::ALL
            .iter()
            .find(|m| m.name().eq_ignore_ascii_case(t))
        {
            return Ok(LimitMetric::Te(*m));
        }
        match Estimator::ALL
            .iter()
            .copied()
            .find(|e| e.name().eq_ignore_ascii_case(t))
        {
            Some(e) if e.uses_theo_lattice() => Err(format!(
                "metric '{t}' cannot carry a limit: its τ lie on their own lattice (τ = 0.75·m·τ0); \
                 write the limit for oadev (which {} estimates): expected one of {}",
                e.name(),
                Self::known_names()
            )),
            Some(e) => Ok(LimitMetric::Estimator(e)),
            None => Err(format!(
                "unknown metric '{t}': expected one of {}",
                Self::known_names()
            )),
        }
    }

    /// The name in limit files and JSON (`adev`, `mtie`, `lf`).
    pub fn name(self) -> &'static str {
        match self {
            LimitMetric::Estimator(e) => e.name(),
            LimitMetric::Lf => "lf",
            LimitMetric::Te(t) => t.name(),
        }
    }

    /// The label in tables (`ADEV`, `MTIE`, `L(f)`).
    pub fn label(self) -> String {
        match self {
            LimitMetric::Estimator(e) => e.name().to_uppercase(),
            LimitMetric::Lf => "L(f)".into(),
            LimitMetric::Te(t) => t.label().into(),
        }
    }

    /// The command that checks this metric: `wander` (MTIE, TDEV, the
    /// time-error metrics), `jitter` (L(f)), `stability` (every other
    /// estimator).
    pub fn command(self) -> &'static str {
        match self {
            LimitMetric::Estimator(Estimator::Mtie | Estimator::Tdev) => "wander",
            LimitMetric::Te(_) => "wander",
            LimitMetric::Estimator(_) => "stability",
            LimitMetric::Lf => "jitter",
        }
    }

    /// The wander metric, for MTIE and TDEV.
    pub fn wander(self) -> Option<Metric> {
        match self {
            LimitMetric::Estimator(Estimator::Mtie) => Some(Metric::Mtie),
            LimitMetric::Estimator(Estimator::Tdev) => Some(Metric::Tdev),
            _ => None,
        }
    }

    /// What the limit values are.
    pub fn values(self) -> ValueKind {
        match self {
            LimitMetric::Lf => ValueKind::DbcHz,
            LimitMetric::Te(_) => ValueKind::Duration,
            LimitMetric::Estimator(e) if e.is_time_deviation() => ValueKind::Duration,
            LimitMetric::Estimator(_) => ValueKind::Fraction,
        }
    }

    /// The axis: τ for the estimators, the offset for L(f).
    pub fn axis(self) -> Axis {
        match self {
            LimitMetric::Lf => Axis::Offset,
            LimitMetric::Estimator(_) | LimitMetric::Te(_) => Axis::Tau,
        }
    }

    /// A single value over the whole record (`cte`, `max-te`, `max-te-l`,
    /// `dte-h`): written `max = "50ns"`, not as points over τ.
    pub fn is_single(self) -> bool {
        matches!(self, LimitMetric::Te(t) if t.is_single())
    }
}

impl Serialize for LimitMetric {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// The axis of a limit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Axis {
    /// Averaging or observation time τ, s.
    Tau,
    /// Offset frequency f, Hz.
    Offset,
}

impl Axis {
    /// `τ` or `f`.
    pub fn symbol(self) -> &'static str {
        match self {
            Axis::Tau => "τ",
            Axis::Offset => "f",
        }
    }
    /// `s` or `Hz`.
    pub fn unit(self) -> &'static str {
        match self {
            Axis::Tau => "s",
            Axis::Offset => "Hz",
        }
    }
}

/// One `[[limit]]` of a limit file.
#[derive(Debug, Clone, PartialEq)]
pub struct Limit {
    /// The file's name (`name`, default its stem): names the limit in
    /// every output, with the metric.
    pub name: String,
    /// The file's `note`, printed beside every verdict.
    pub note: Option<String>,
    /// The file, as given.
    pub file: String,
    /// The line of the entry's `metric` key.
    pub line: u64,
    /// The metric limited.
    pub metric: LimitMetric,
    /// `step` rather than `loglog`.
    pub step: bool,
    /// The points as written: (τ s or offset Hz, limit in s, fraction or
    /// dBc/Hz). A formula limit ([`Limit::segments`]): its break points
    /// with the limit there (each segment's start, as the limit just above
    /// it, and the last segment's end if it has one). A single-value limit
    /// ([`LimitMetric::is_single`]): one point `(0, max)`.
    pub points: Vec<(f64, f64)>,
    /// `shape = "formula"`: segments `limit(τ) = a·τ^p + b` on `(from, to]`
    /// (τ in s; empty for the other shapes).
    pub segments: Vec<Segment>,
}

impl Limit {
    /// The limit as a function of x on linear values (L(f) as the power
    /// ratio 10^(L/10), so that log–log interpolation is dB linear in
    /// log f).
    pub fn shape(&self) -> Shape {
        if !self.segments.is_empty() {
            return Shape::Formula(self.segments.clone());
        }
        let rows: Vec<(f64, f64)> = self
            .points
            .iter()
            .map(|&(x, v)| (x, self.linear(v)))
            .collect();
        if self.step {
            Shape::Step(rows)
        } else {
            Shape::LogLog(rows)
        }
    }

    /// A limit value as compared: 10^(L/10) for L(f), itself otherwise.
    pub fn linear(&self, v: f64) -> f64 {
        match self.metric {
            LimitMetric::Lf => 10f64.powf(v / 10.0),
            _ => v,
        }
    }

    /// The value of a single-value limit ([`LimitMetric::is_single`]).
    pub fn single_value(&self) -> Option<f64> {
        self.metric
            .is_single()
            .then(|| self.points.first().map(|p| p.1))
            .flatten()
    }

    /// The same limit as a `wander` mask (MTIE and TDEV only).
    pub fn as_mask(&self) -> Option<Mask> {
        Some(Mask {
            name: self.name.clone(),
            source_note: self
                .note
                .clone()
                .unwrap_or_else(|| format!("user mask from {}", self.file)),
            metric: self.metric.wander()?,
            shape: self.shape(),
        })
    }

    /// The range the limit covers, (first x, last x).
    pub fn range(&self) -> (f64, f64) {
        self.shape().range()
    }
}

/// An x interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Range {
    /// Lowest x (τ s or offset Hz).
    pub from: f64,
    /// Highest x.
    pub to: f64,
}

/// One checked point above the limit (values as written: s, fraction, or
/// dBc/Hz for L(f)).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LimitExcess {
    /// τ (s) or offset (Hz).
    pub at: f64,
    /// Measured value.
    pub value: f64,
    /// The limit there.
    pub limit: f64,
    /// measured/limit (L(f): of the power ratios) — above 1.
    pub ratio: f64,
}

/// The result of checking one limit (a `limits[]` member of the
/// `stability`, `jitter` and `wander` documents and of the report).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LimitCheck {
    /// The limit file's name.
    pub name: String,
    /// The metric.
    pub metric: LimitMetric,
    /// The file's note, if any.
    pub note: Option<String>,
    /// The limit file, as given, and the line of the entry.
    pub file: String,
    /// Line of the entry's `metric` key.
    pub line: u64,
    /// Verdict, coverage, reason.
    #[serde(flatten)]
    pub judgement: Judgement,
    /// What the check ran along: `tau` (s) or `offset` (Hz).
    pub axis: Axis,
    /// The largest measured/limit over the checked points (L(f): of the
    /// power ratios, 10^((L − limit)/10)).
    pub worst_ratio: Option<f64>,
    /// Where, s or Hz.
    pub worst_at: Option<f64>,
    /// The margin in dB: 20·log10(limit/measured) for σ, MTIE, TDEV;
    /// limit − L for L(f). Negative when exceeded.
    pub worst_margin_db: Option<f64>,
    /// L(f) only: the excess L − limit in dB at the worst point (negative
    /// when met).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub worst_excess_db: Option<f64>,
    /// Where the measured curve first rises above the limit (interpolated
    /// between checked points).
    pub crossing_at: Option<f64>,
    /// Number of checked points.
    pub checked: usize,
    /// The first and last checked x.
    pub checked_range: Option<Range>,
    /// The limit's own range (first and last point).
    pub limit_range: Range,
    /// Every checked point above the limit.
    pub excesses: Vec<LimitExcess>,
    /// σ limits: the τ where the estimate meets the limit but the upper
    /// end of its confidence interval does not — the record cannot tell
    /// there.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub interval_reaches_limit: Vec<f64>,
    /// σ limits: every checked τ with its estimate, limit, EDF and
    /// probability of conformance ([`crate::decision`]); empty (absent in
    /// JSON) for L(f), which has no distribution here.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub checked_points: Vec<crate::decision::CheckedPoint>,
}

impl LimitCheck {
    /// The verdict.
    pub fn verdict(&self) -> Verdict {
        self.judgement.verdict
    }

    /// The same check, `not-judged` with the reason (nothing checked).
    pub fn not_judged_because(mut self, why: &str) -> Self {
        self.judgement = Judgement::not_judged(why.to_string());
        self.worst_ratio = None;
        self.worst_at = None;
        self.worst_margin_db = None;
        self.checked = 0;
        self.checked_range = None;
        self.excesses.clear();
        self
    }

    /// The label of the check in tables and the fleet matrix, with the
    /// limit's range so that two limits of one metric in one file differ:
    /// `lab-acceptance ADEV 1 s–100 s`, `datasheet L(f) at 100 Hz`.
    pub fn label(&self) -> String {
        if self.metric.is_single() {
            return format!("{} {} over the record", self.name, self.metric.label());
        }
        let u = self.axis.unit();
        let r = self.limit_range;
        let range = if r.from == r.to {
            format!("at {}", format_si(r.from, u, 3))
        } else {
            format!("{}–{}", format_si(r.from, u, 3), format_si(r.to, u, 3))
        };
        format!("{} {} {range}", self.name, self.metric.label())
    }

    /// What was checked, in words: `ADEV τ 1 s to 100 s (the limit: 1 s to
    /// 100 s), 8 points`.
    pub fn checked_words(&self) -> String {
        let u = self.axis.unit();
        if self.metric.is_single() {
            return match &self.checked_range {
                Some(r) => format!(
                    "checked over the record's {} (one value); coverage {}",
                    format_si(r.to, u, 4),
                    self.judgement.coverage.name()
                ),
                None => "nothing checked".into(),
            };
        }
        let x = self.axis.symbol();
        let lim = format!(
            "{} to {}",
            format_si(self.limit_range.from, u, 4),
            format_si(self.limit_range.to, u, 4)
        );
        match &self.checked_range {
            Some(r) => format!(
                "checked {} {x} from {} to {} (the limit: {lim}); coverage {}",
                self.checked,
                format_si(r.from, u, 4),
                format_si(r.to, u, 4),
                self.judgement.coverage.name()
            ),
            None => format!("nothing checked (the limit: {x} {lim})"),
        }
    }
}

/// Check a limit against a measured curve, `(x, value)` in increasing x
/// with values as the limit's (s, fraction, or dBc/Hz for L(f)), `support`
/// saying which x the measurement reaches.
pub fn check_limit(limit: &Limit, curve: &[(f64, f64)], support: &Support) -> LimitCheck {
    let shape = limit.shape();
    let (lo, hi) = shape.range();
    let metric = limit.metric.label();
    let axis = limit.metric.axis();
    let power = limit.metric == LimitMetric::Lf;
    let words = Words {
        metric: &metric,
        what: "limit",
        axis: axis.symbol(),
        axis_unit: axis.unit(),
        value_unit: if limit.metric.values() == ValueKind::Duration {
            "s"
        } else {
            ""
        },
    };
    let linear: Vec<(f64, f64)> = curve.iter().map(|&(x, v)| (x, limit.linear(v))).collect();
    let c = check_curve(&|x| shape.eval(x), (lo, hi), &linear, support, &words);
    let natural = |v: f64| if power { 10.0 * v.log10() } else { v };
    let db = |r: f64| {
        if power {
            0.0 - 10.0 * r.log10()
        } else {
            0.0 - 20.0 * r.log10()
        }
    };
    LimitCheck {
        name: limit.name.clone(),
        metric: limit.metric,
        note: limit.note.clone(),
        file: limit.file.clone(),
        line: limit.line,
        judgement: c.judgement,
        axis,
        worst_ratio: c.worst.map(|w| w.0),
        worst_at: c.worst.map(|w| w.1),
        worst_margin_db: c.worst.map(|w| db(w.0)).filter(|m| m.is_finite()),
        worst_excess_db: c
            .worst
            .filter(|_| power)
            .map(|w| 10.0 * w.0.log10())
            .filter(|m| m.is_finite()),
        crossing_at: c.crossing,
        checked: c.checked,
        checked_range: c.checked_range.map(|(from, to)| Range { from, to }),
        limit_range: Range { from: lo, to: hi },
        excesses: c
            .excesses
            .iter()
            .map(|e| LimitExcess {
                at: e.at,
                value: natural(e.value),
                limit: natural(e.limit),
                ratio: e.ratio,
            })
            .collect(),
        interval_reaches_limit: Vec::new(),
        checked_points: Vec::new(),
    }
}

/// Check a single-value limit ([`LimitMetric::is_single`]: `cte`,
/// `max-te`, `max-te-l`, `dte-h`) against the one measured value it
/// limits, over a record of `span` seconds: the limit is met when
/// |value| ≤ max (the ratio |value|/max ≤ 1; margin 20·log10(max/|value|)
/// dB). `value` None, or a value or ratio that is not finite, is
/// `not-judged` with `why`; `partial`, when given, makes the coverage
/// partial with that reason (e.g. a cTE taken over the whole record
/// because no cTE window fits).
pub fn check_single(
    limit: &Limit,
    value: Option<f64>,
    span: f64,
    why: &str,
    partial: Option<String>,
) -> LimitCheck {
    let max = limit.single_value().unwrap_or(f64::NAN);
    let mut c = LimitCheck {
        name: limit.name.clone(),
        metric: limit.metric,
        note: limit.note.clone(),
        file: limit.file.clone(),
        line: limit.line,
        judgement: Judgement::not_judged(why.to_string()),
        axis: Axis::Tau,
        worst_ratio: None,
        worst_at: None,
        worst_margin_db: None,
        worst_excess_db: None,
        crossing_at: None,
        checked: 0,
        checked_range: None,
        limit_range: Range {
            from: span,
            to: span,
        },
        excesses: Vec::new(),
        interval_reaches_limit: Vec::new(),
        checked_points: Vec::new(),
    };
    let Some(v) = value else {
        return c;
    };
    let r = v.abs() / max;
    if !(v.is_finite() && r.is_finite() && max > 0.0) {
        c.judgement = Judgement::not_judged(format!(
            "{} = {v:e} s against {max:e} s cannot be judged (not finite)",
            limit.metric.label()
        ));
        return c;
    }
    let coverage = if partial.is_some() {
        crate::verdict::Coverage::Partial
    } else {
        crate::verdict::Coverage::Full
    };
    c.judgement = Judgement::judged(r > 1.0, coverage);
    c.judgement.reason = partial;
    c.worst_ratio = Some(r);
    c.worst_at = Some(span);
    c.worst_margin_db = Some(0.0 - 20.0 * r.log10()).filter(|m| m.is_finite());
    c.checked = 1;
    c.checked_range = Some(Range {
        from: span,
        to: span,
    });
    if r > 1.0 {
        c.crossing_at = Some(span);
        c.excesses.push(LimitExcess {
            at: span,
            value: v.abs(),
            limit: max,
            ratio: r,
        });
    }
    c
}

/// The averaging factors a σ limit is checked on, for estimator `est` on a
/// record of `n` phase points at `tau0`: the request's grid and the
/// record's longest τ for the estimator (as `wander` does), plus the τ on
/// both sides of each of the limit's points (the last m·τ0 at or below it
/// and the first above), kept inside the limit's range.
pub fn sigma_ms(
    limit: &Limit,
    est: Estimator,
    grid: &TauGrid,
    n: usize,
    tau0: f64,
) -> Result<Vec<usize>> {
    let top = est.max_m(n);
    let mut ms = grid.ms_for(est, tau0, n)?;
    if top >= 1 {
        ms.push(top);
    }
    for &(t, _) in &limit.points {
        let k = t / tau0;
        if !(k < top as f64 + 2.0) {
            continue;
        }
        let f = (k + 1e-9).floor();
        for c in [f, f + 1.0] {
            if c >= 1.0 && c <= top as f64 {
                ms.push(c as usize);
            }
        }
    }
    let shape = limit.shape();
    ms.retain(|&m| shape.eval(m as f64 * tau0).is_some());
    ms.sort_unstable();
    ms.dedup();
    Ok(ms)
}

/// Check σ limits (every metric `stability` checks) on a record: each limit
/// against its own estimator, computed by [`crate::stability::analyse`]
/// (the same function, the same statistics as the `stability` curves, so a
/// τ on both has one value) on [`sigma_ms`], with the request's confidence,
/// noise type and bias correction. Limits of other metrics are skipped.
///
/// The verdict is on the estimate; [`LimitCheck::interval_reaches_limit`]
/// lists the τ where the estimate meets but the interval's upper end does
/// not.
pub fn check_sigma(
    x: &PhaseRecord,
    req: &crate::stability::Request,
    limits: &[Limit],
) -> Result<Vec<LimitCheck>> {
    check_sigma_with(x, req, limits, &crate::decision::DecisionRule::default())
}

/// [`check_sigma`] with a decision rule: each checked τ gets its
/// probability of conformance from its EDF
/// ([`crate::decision::sigma_conformance`]) and the verdict is reached by
/// `rule` ([`crate::decision::DecisionRule::decide`]).
pub fn check_sigma_with(
    x: &PhaseRecord,
    req: &crate::stability::Request,
    limits: &[Limit],
    rule: &crate::decision::DecisionRule,
) -> Result<Vec<LimitCheck>> {
    let n = x.len();
    let mut out = Vec::new();
    for limit in limits.iter().filter(|l| l.metric.command() == "stability") {
        let LimitMetric::Estimator(est) = limit.metric else {
            continue;
        };
        let ms = sigma_ms(limit, est, &req.grid, n, x.tau0)?;
        let support = Support {
            tau0: x.tau0,
            bottom: x.tau0,
            bottom_why: "the record's τ0".into(),
            top: est.max_m(n) as f64 * x.tau0,
            top_why: format!("the longest τ of {} for the record", est.name()),
        };
        let points = if ms.is_empty() {
            Vec::new()
        } else {
            let sub = crate::stability::Request {
                estimators: vec![est],
                grid: TauGrid::Explicit(ms.iter().map(|&m| m as f64 * x.tau0).collect()),
                ..req.clone()
            };
            match crate::stability::analyse(x, &sub) {
                Ok(c) => c.into_iter().next().map(|c| c.points).unwrap_or_default(),
                Err(crate::Error::Insufficient(_)) => Vec::new(),
                Err(e) => return Err(e),
            }
        };
        let curve: Vec<(f64, f64)> = points
            .iter()
            .map(|p| (p.estimate.tau, p.estimate.value))
            .collect();
        let mut c = check_limit(limit, &curve, &support);
        if c.judgement.verdict != Verdict::NotJudged {
            let shape = limit.shape();
            c.interval_reaches_limit = points
                .iter()
                .filter_map(|p| {
                    let l = shape.eval(p.estimate.tau)?;
                    (p.estimate.value <= l && p.hi.is_some_and(|h| h > l)).then_some(p.estimate.tau)
                })
                .collect();
            c.checked_points = points
                .iter()
                .filter(|p| p.estimate.tau.is_finite() && p.estimate.tau > 0.0)
                .filter_map(|p| {
                    let l = shape.eval(p.estimate.tau)?;
                    Some(crate::decision::CheckedPoint::sigma(
                        p.estimate.tau,
                        p.estimate.value,
                        l,
                        p.edf,
                    ))
                })
                .collect();
        }
        let probs = crate::decision::point_probabilities(&c.checked_points);
        rule.decide(
            &mut c.judgement,
            crate::decision::Probabilities::Points(&probs),
        );
        out.push(c);
    }
    Ok(out)
}

/// Check L(f) limits against a phase-noise table: the table's points
/// inside each limit's range, and the table's own interpolation (dB linear
/// in log f) at each of the limit's points inside the table; coverage by
/// the table's offset range. Limits of other metrics are skipped. A table
/// that is not L(f) is converted first (needs its carrier).
pub fn check_lf(table: &Spectrum, limits: &[Limit]) -> Result<Vec<LimitCheck>> {
    check_lf_with(table, limits, &crate::decision::DecisionRule::default())
}

/// Why an L(f) limit or a jitter limit has no probability of conformance.
pub const TABLE_NO_DISTRIBUTION: &str = "the phase-noise table carries no stated uncertainty \
(and tauwise's spectrum estimate from a record carries no EDF)";

/// [`check_lf`] with a decision rule: an L(f) table has no distribution
/// here, so each verdict says "no uncertainty available" and a guarded rule
/// decides at the estimate ([`crate::decision::DecisionRule::decide`]).
pub fn check_lf_with(
    table: &Spectrum,
    limits: &[Limit],
    rule: &crate::decision::DecisionRule,
) -> Result<Vec<LimitCheck>> {
    let mut out = check_lf_simple(table, limits)?;
    for c in &mut out {
        rule.decide(
            &mut c.judgement,
            crate::decision::Probabilities::Unavailable(TABLE_NO_DISTRIBUTION),
        );
    }
    Ok(out)
}

fn check_lf_simple(table: &Spectrum, limits: &[Limit]) -> Result<Vec<LimitCheck>> {
    let lf = table.to(crate::spectrum::Quantity::Lf)?;
    let (fa, fb) = lf.range();
    let support = Support::continuous(
        fa,
        "the table's lowest offset",
        fb,
        "the table's highest offset",
    );
    let mut out = Vec::new();
    for limit in limits.iter().filter(|l| l.metric == LimitMetric::Lf) {
        let pts = lf_points(&lf, limit)?;
        out.push(check_limit(limit, &pts, &support));
    }
    Ok(out)
}

/// The (offset Hz, L dBc/Hz) points an `lf` limit is checked at on an L(f)
/// table (already L(f)): the table's own points, and the table's
/// interpolation (dB linear in log f) at each of the limit's offsets inside
/// the table, in increasing offset — what [`check_lf`] checks, and what
/// the report's L(f)-against-limit table lists.
pub fn lf_points(lf: &Spectrum, limit: &Limit) -> Result<Vec<(f64, f64)>> {
    let linear: Vec<f64> = lf.values.iter().map(|v| 10f64.powf(v / 10.0)).collect();
    let trace = crate::spectrum::loglog::LogLog::new(&lf.f, &linear)?;
    let mut pts: Vec<(f64, f64)> =
        lf.f.iter()
            .copied()
            .zip(lf.values.iter().copied())
            .collect();
    for &(f, _) in &limit.points {
        if let Some(v) = trace.eval(f, crate::spectrum::loglog::Extend::No) {
            pts.push((f, 10.0 * v.log10()));
        }
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    pts.dedup_by(|a, b| a.0 == b.0);
    Ok(pts)
}

/// The metrics of `limits` that `command` does not check, each with the
/// command that does: `("adev", "stability")`.
pub fn elsewhere(limits: &[Limit], command: &str) -> Vec<Elsewhere> {
    let mut out: Vec<Elsewhere> = Vec::new();
    for l in limits.iter().filter(|l| l.metric.command() != command) {
        let e = Elsewhere {
            name: l.name.clone(),
            metric: l.metric,
            command: l.metric.command(),
        };
        if !out.contains(&e) {
            out.push(e);
        }
    }
    out
}

/// A limit a command leaves to another (stated in its output).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Elsewhere {
    /// The limit file's name.
    pub name: String,
    /// The metric.
    pub metric: LimitMetric,
    /// The command that checks it.
    pub command: &'static str,
}

impl Elsewhere {
    /// `limit lab ADEV: not checked here (tauwise stability checks it)`.
    pub fn words(&self) -> String {
        format!(
            "limit {} {}: not checked here (`tauwise {}` checks it)",
            self.name,
            self.metric.label(),
            self.command
        )
    }
}

/// A judgement for the gate, from each check.
pub fn judgements(checks: &[LimitCheck]) -> impl Iterator<Item = &Judgement> {
    checks.iter().map(|c| &c.judgement)
}

/// The limits `command` is given in `files`: each file read
/// ([`read_limit_file`]) and required to hold one that `command` checks
/// ([`LimitFile::require_for`]); all their entries, with those left to
/// other commands ([`elsewhere`]).
pub fn read_for(
    files: &[std::path::PathBuf],
    command: &str,
) -> Result<(Vec<Limit>, Vec<Elsewhere>)> {
    let (mut all, mut other) = (Vec::new(), Vec::new());
    for f in files {
        let file = read_limit_file(f)?;
        file.require_for(command)?;
        other.extend(elsewhere(&file.limits, command));
        all.extend(file.limits);
    }
    Ok((all, other))
}
