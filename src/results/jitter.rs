//! The `jitter` document: integrated phase jitter per band, with its limit
//! and verdict.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, plain, Result};
use crate::spectrum::jitter::{Band, BandJitter, JitterLimit, RecordPeriodJitter};
use crate::spectrum::spurs::FoundSpur;
use crate::units::format_si;
use crate::verdict::Judgement;
use serde::Serialize;

/// What `jitter` integrates — a phase-noise table, or the Welch spectrum of
/// a time record — with the input its document names and the trace its
/// chart draws.
#[derive(Debug, Clone)]
pub struct JitterTrace {
    /// The input, for the JSON document.
    pub input: super::Input,
    /// The spectrum integrated.
    pub spectrum: crate::spectrum::Spectrum,
    /// Where it came from, in words (table titles and chart).
    pub source: String,
    /// The trace drawn: the table itself, or the record's spectrum averaged
    /// into 10 log-spaced bins per decade (readable, same level).
    pub drawn: crate::spectrum::Spectrum,
    /// The record's spectrum: its window, equivalent noise bandwidth (Hz)
    /// and how its gaps were handled (`None` for a table).
    pub welch: Option<(&'static str, f64, String)>,
}

impl JitterTrace {
    /// A phase-noise table read from `path`.
    pub fn of_table(t: &crate::io::lf_table::LfTable, path: &std::path::Path) -> Self {
        JitterTrace {
            input: super::Input::Table(super::TableInput::of(t)),
            spectrum: t.spectrum.clone(),
            source: format!("table {}", path.display()),
            drawn: t.spectrum.clone(),
            welch: None,
        }
    }

    /// The Welch spectrum ([`crate::spectrum::welch::welch_record`]) of a
    /// record, as L(f) at `carrier`; with the estimator's warnings.
    pub fn of_record(
        series: &crate::io::series::Series,
        carrier: f64,
        options: &crate::spectrum::welch::WelchOptions,
    ) -> crate::Result<(Self, Vec<String>)> {
        let name = series.info.path.display().to_string();
        Self::of_named_record(&series.record, series.into(), &name, carrier, options)
    }

    /// [`JitterTrace::of_record`] for a record that did not come from a
    /// file read here (the Python package's arrays): `input` is what its
    /// document names, `name` where it came from in words.
    pub fn of_named_record(
        record: &crate::Record,
        input: super::Input,
        name: &str,
        carrier: f64,
        options: &crate::spectrum::welch::WelchOptions,
    ) -> crate::Result<(Self, Vec<String>)> {
        let w = crate::spectrum::welch::welch_record(record, options)?;
        let trace = JitterTrace {
            input,
            spectrum: w.spectrum(Some(carrier))?,
            source: format!("Welch spectrum of {name}"),
            drawn: w.log_binned(10, Some(carrier))?,
            welch: Some((w.window.name(), w.enbw_hz, w.gap_note())),
        };
        Ok((trace, w.warnings))
    }
}

/// The `jitter` results: `{"carrier","ui_rate","spur_convention","bands",
/// "caution"}`, and for a record's spectrum `"window","enbw_hz",
/// "gaps_handling"`.
#[derive(Debug, Clone, Serialize)]
pub struct JitterBody {
    /// Carrier, Hz.
    pub carrier: f64,
    /// Line rate for jitter in UI, Hz (`null`: not given).
    pub ui_rate: Option<f64>,
    /// How a spur level is read.
    pub spur_convention: &'static str,
    /// One entry per `--band`, in order.
    pub bands: Vec<JitterBand>,
    /// The decision caution.
    pub caution: &'static str,
    /// The data window of a record's spectrum.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window: Option<&'static str>,
    /// Its equivalent noise bandwidth, Hz.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub enbw_hz: Option<f64>,
    /// How its gaps were handled.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gaps_handling: Option<String>,
    /// The name of the filter set the weightings came from (`--filters`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub filter_set: Option<String>,
    /// The rule spurs were looked for by (`null`: not looked for).
    pub spur_rule: Option<String>,
    /// Spurs found in the trace (taken out of the noise and counted once,
    /// unless a listed spur took their place).
    pub found_spurs: Vec<FoundSpur>,
    /// Period jitter measured from the record's edge differences (`--record`
    /// with `--period`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub record_period: Option<RecordPeriodJitter>,
    /// With `--limit-file`: the L(f) limit checks (`"limits"`,
    /// `"limits_elsewhere"`, `"limits_caution"`).
    #[serde(flatten)]
    pub limits: super::LimitsPart,
}

/// How a spur level is read, in words.
pub const SPUR_CONVENTION: &str = "spur level in dBc of one sideband; pure PM, 2·10^(dBc/10) rad²";

/// One band: its result ([`BandJitter`]'s keys) or, when it could not be
/// computed, `{"from","to","not_computed"}`; then `"limit"` and the
/// judgement (`"verdict","coverage","reason"`; `"verdict": null` without a
/// limit).
#[derive(Debug, Clone, Serialize)]
pub struct JitterBand {
    /// The result.
    #[serde(flatten)]
    pub outcome: BandOutcome,
    /// The limit, `{"unit","value"}`.
    pub limit: Option<JitterLimit>,
    /// The verdict.
    #[serde(flatten)]
    pub judgement: MaybeJudged,
}

/// A band's result.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum BandOutcome {
    /// Computed.
    Computed(BandJitter),
    /// Not computed, and why.
    NotComputed {
        /// Lower offset, Hz.
        from: f64,
        /// Upper offset, Hz.
        to: f64,
        /// Why.
        not_computed: String,
    },
}

/// A judgement, or `"verdict": null` when there is no limit.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum MaybeJudged {
    /// Judged against a limit.
    Judged(Judgement),
    /// No limit.
    NoLimit {
        /// Always `null`.
        verdict: (),
    },
}

impl JitterBand {
    /// The entry of `band` with its outcome, limit and judgement.
    pub fn new(
        band: &Band,
        outcome: &std::result::Result<BandJitter, String>,
        limit: Option<&JitterLimit>,
        judgement: Option<&Judgement>,
    ) -> Self {
        Self {
            outcome: match outcome {
                Ok(r) => BandOutcome::Computed(r.clone()),
                Err(e) => BandOutcome::NotComputed {
                    from: band.from,
                    to: band.to,
                    not_computed: e.clone(),
                },
            },
            limit: limit.copied(),
            judgement: match judgement {
                Some(j) => MaybeJudged::Judged(j.clone()),
                None => MaybeJudged::NoLimit { verdict: () },
            },
        }
    }
}

/// What `jitter` computes on a trace besides the trace itself.
#[derive(Debug, Clone, Default)]
pub struct JitterRequest {
    /// The bands, in order.
    pub bands: Vec<Band>,
    /// Weightings, listed spurs, extrapolation and period jitter.
    pub setup: crate::spectrum::jitter::JitterSetup,
    /// Line rate for jitter in UI, Hz.
    pub ui_rate: Option<f64>,
    /// The limits: one for every band, or one per band in order.
    pub limits: Vec<JitterLimit>,
    /// The rule spurs are looked for by in the trace (`None`: not looked for).
    pub spur_rule: Option<crate::spectrum::spurs::SpurRule>,
    /// The name of the filter set the weightings came from.
    pub filter_set: Option<String>,
    /// The decision rule the bands' limits are judged by.
    pub decision: crate::decision::DecisionRule,
}

impl JitterBody {
    /// `jitter` on one trace: spurs found by `req.spur_rule` leave the
    /// noise and count once as tones, a listed spur in the same place
    /// taking precedence ([`crate::spectrum::spurs::prepare_trace`]); then
    /// each band integrated and judged
    /// ([`crate::spectrum::jitter::judge_bands`]). `record_period` and
    /// `limits` (the L(f) limit checks) come from the record or table the
    /// trace was made from. Returns the body and each band's outcome and
    /// judgement, in band order.
    pub fn compute(
        trace: &JitterTrace,
        carrier: f64,
        mut req: JitterRequest,
        record_period: Option<RecordPeriodJitter>,
        limits: super::LimitsPart,
    ) -> crate::Result<(Self, Vec<crate::spectrum::jitter::JudgedBand>)> {
        use crate::spectrum::spurs::prepare_trace;
        let prepared = prepare_trace(&trace.spectrum, &req.setup.spurs, req.spur_rule.as_ref())?;
        req.setup.spurs = prepared.spurs;
        let judged = crate::spectrum::jitter::judge_bands_with(
            &prepared.spectrum,
            &req.bands,
            &req.setup,
            req.ui_rate,
            &req.limits,
            &req.decision,
        )?;
        let limit_of = |i: usize| req.limits.get(if req.limits.len() == 1 { 0 } else { i });
        let body = JitterBody {
            carrier,
            ui_rate: req.ui_rate,
            spur_convention: SPUR_CONVENTION,
            bands: (judged.iter().zip(&req.bands).enumerate())
                .map(|(i, ((o, j), b))| JitterBand::new(b, o, limit_of(i), j.as_ref()))
                .collect(),
            caution: crate::DECISION_CAUTION,
            window: trace.welch.as_ref().map(|r| r.0),
            enbw_hz: trace.welch.as_ref().map(|r| r.1),
            gaps_handling: trace.welch.as_ref().map(|r| r.2.clone()),
            filter_set: req.filter_set,
            spur_rule: req.spur_rule.map(|r| r.describe()),
            found_spurs: prepared.found,
            record_period,
            limits,
        };
        Ok((body, judged))
    }
}

/// The extrapolated ranges of a band as `from:to from:to` (Hz).
pub fn extrapolated_text(r: &BandJitter) -> String {
    r.extrapolated
        .iter()
        .map(|(a, b)| format!("{}:{}", plain(*a), plain(*b)))
        .collect::<Vec<_>>()
        .join(" ")
}

impl JitterBody {
    /// CSV: `from,to,filter,rms_rad,rms_deg,rms_s,rms_ui,spurs,extrapolated`,
    /// then, when period jitter was asked for, `period_rms_s,c2c_rms_s,
    /// n_period_rms_s`; one row per computed band (a weighting named by a
    /// file whose name holds a comma is quoted).
    pub fn csv(&self) -> Result<String> {
        let computed = || {
            self.bands.iter().filter_map(|b| match &b.outcome {
                BandOutcome::Computed(r) => Some(r),
                BandOutcome::NotComputed { .. } => None,
            })
        };
        let with_period = computed().any(|r| r.period.is_some());
        let mut header = vec![
            "from",
            "to",
            "filter",
            "rms_rad",
            "rms_deg",
            "rms_s",
            "rms_ui",
            "spurs",
            "extrapolated",
        ];
        if with_period {
            header.extend(["period_rms_s", "c2c_rms_s", "n_period_rms_s"]);
        }
        csv_text(
            &header,
            computed().map(|r| {
                let mut row = vec![
                    plain(r.from),
                    plain(r.to),
                    r.filter.clone(),
                    plain(r.rms_rad),
                    plain(r.rms_deg),
                    plain(r.rms_s),
                    r.rms_ui.map(plain).unwrap_or_default(),
                    r.spurs.to_string(),
                    extrapolated_text(r),
                ];
                if with_period {
                    let p = r.period.as_ref();
                    row.push(p.map(|p| plain(p.period_rms_s)).unwrap_or_default());
                    row.push(p.map(|p| plain(p.c2c_rms_s)).unwrap_or_default());
                    row.push(
                        p.and_then(|p| p.n_period_rms_s)
                            .map(plain)
                            .unwrap_or_default(),
                    );
                }
                row
            }),
        )
    }
}

impl JitterBody {
    /// The table for reading: per band the weighting and the rms jitter in
    /// rad, degrees, time and UI, its spurs and extrapolation, the limit
    /// and verdict; the decision caution last. `source` names the
    /// spectrum (`table FILE`, `Welch spectrum of FILE`).
    pub fn table(&self, source: &str) -> Text {
        let mut t = Text::new();
        t.line(format!(
            "Integrated phase jitter, {source}, carrier {}",
            format_si(self.carrier, "Hz", 4)
        ));
        t.blank();
        let mut tab = Table::new(vec![
            Column::right("band", 23),
            Column::right("weighting", 24).gap(2),
            Column::right("rms rad", 11).unit(Unit::Exp(4)).gap(2),
            Column::right("rms deg", 10).unit(Unit::Exp(4)).gap(2),
            Column::right("rms time", 11).unit(Unit::Si("s")).gap(2),
            Column::right("rms UI", 10)
                .unit(Unit::Exp(4))
                .gap(2)
                .missing("-"),
        ]);
        let hz = |v: f64| format_si(v, "Hz", 4);
        for b in &self.bands {
            let (from, to) = match &b.outcome {
                BandOutcome::Computed(r) => (r.from, r.to),
                BandOutcome::NotComputed { from, to, .. } => (*from, *to),
            };
            let name = format!("{} – {}", hz(from), hz(to));
            match &b.outcome {
                BandOutcome::Computed(r) => {
                    // A long weighting (loops with their converted values)
                    // gets a line of its own under the row.
                    let long = r.filter.chars().count() > 24;
                    tab.row(vec![
                        Cell::text(name),
                        Cell::text(if long {
                            "(below)".to_string()
                        } else {
                            r.filter.clone()
                        }),
                        Cell::num(r.rms_rad),
                        Cell::num(r.rms_deg),
                        Cell::num(r.rms_s),
                        Cell::opt(r.rms_ui),
                    ]);
                    if long {
                        tab.span(Cell::text(""), format!("weighting {}", r.filter));
                    }
                    if r.spurs > 0 {
                        tab.span(
                            Cell::text(""),
                            format!("includes {} spur(s), {:.4e} rad²", r.spurs, r.spurs_rad2),
                        );
                    }
                    if let Some(p) = &r.period {
                        tab.span(
                            Cell::text(""),
                            period_words(p.period_rms_s, p.c2c_rms_s, p.periods, p.n_period_rms_s),
                        );
                    }
                    for (a, b) in &r.extrapolated {
                        tab.span(
                            Cell::text(""),
                            format!("extrapolated {} – {} (end slope continued)", hz(*a), hz(*b)),
                        );
                    }
                }
                BandOutcome::NotComputed { not_computed, .. } => {
                    tab.span(Cell::text(name), format!("not computed: {not_computed}"));
                }
            }
            if let (Some(l), MaybeJudged::Judged(j)) = (&b.limit, &b.judgement) {
                tab.span(
                    Cell::text(""),
                    format!(
                        "limit {}: {}{}",
                        l.describe(),
                        j.cell(),
                        j.reason
                            .as_ref()
                            .map(|why| format!(" — {why}"))
                            .unwrap_or_default()
                    ),
                );
                if j.verdict != crate::verdict::Verdict::NotJudged {
                    tab.span(Cell::text(""), j.rule_words());
                }
            }
        }
        tab.note("");
        tab.note(self.caution);
        t.table(tab);
        if let Some(name) = &self.filter_set {
            t.line(format!("Weightings from the filter set '{name}'."));
        }
        if let Some(r) = &self.record_period {
            t.line(format!(
                "From the record's edge differences ({} periods, all offsets to ν0/2): {}.",
                r.count,
                period_words(r.period_rms_s, r.c2c_rms_s, r.periods, r.n_period_rms_s)
            ));
        }
        for s in &self.found_spurs {
            t.line(format!(
                "Spur found in the trace at {}: {:.1} dBc as a tone ({:.1} dB above the floor){}.",
                format_si(s.offset_hz, "Hz", 4),
                s.level_dbc,
                s.above_floor_db,
                if s.replaced_by_listed {
                    "; a listed spur there is used instead"
                } else {
                    "; taken out of the noise and counted once"
                }
            ));
        }
        t.extend(self.limits.table());
        t
    }
}

/// `period jitter … rms, cycle-to-cycle … rms[, over N periods …]`: the same
/// words for a band's figures and a record's.
fn period_words(period: f64, c2c: f64, periods: Option<u32>, n_period: Option<f64>) -> String {
    format!(
        "period jitter {} rms, cycle-to-cycle {} rms{}",
        format_si(period, "s", 4),
        format_si(c2c, "s", 4),
        match (periods, n_period) {
            (Some(n), Some(v)) => format!(", over {n} periods {}", format_si(v, "s", 4)),
            _ => String::new(),
        }
    )
}
