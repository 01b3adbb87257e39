//! The self-contained HTML report for one device under test.
//!
//! A [`Report`] is plain data: each section is a struct of results that the
//! analysis layers fill in (see [`build`] for the assembly from a DUT file).
//! [`render_html`] turns it into one HTML document with inline CSS and inline
//! SVG charts — no script, no font, no image and no style sheet is fetched
//! from anywhere — and every text that came from an input is escaped.
//!
//! Sections (our own names, always present so that a reader sees what was
//! not part of the DUT file as well as what was): verdicts at a glance;
//! frequency stability; noise model; phase noise and jitter; short and long
//! τ together; wander against masks; holdover; inputs; methods and sources;
//! cautions.
//!
//! With several DUT files, [`fleet`] builds each device's report in
//! parallel and writes one comparison: the verdict matrix, overlaid charts,
//! a summary row per device, and each device's sections below.

use crate::error::Result;
use crate::plot::holdover::HoldoverPlot;
use crate::plot::phase_noise::PhaseNoisePlot;
use crate::plot::stability::StabilityPlot;
use crate::plot::wander::WanderPlot;
use std::path::Path;

pub mod added;
pub mod build;
pub mod duts;
pub mod fleet;
pub mod html;
pub mod provenance;
mod sections;

pub use provenance::Provenance;

/// What a verdict is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum VerdictKind {
    /// A wander mask (MTIE or TDEV).
    Mask,
    /// An integrated-jitter limit.
    Jitter,
    /// A holdover span against the budget.
    Holdover,
    /// A limit of a limit file on an amplitude (a σ estimator).
    Limit,
    /// A limit of a limit file on a power density (L(f)): its margin is
    /// 10·log10(limit/measured), the dB difference.
    #[serde(rename = "limit")]
    LimitPower,
}

impl VerdictKind {
    /// Word for the summary table.
    pub fn word(self) -> &'static str {
        match self {
            VerdictKind::Mask => "wander mask",
            VerdictKind::Jitter => "jitter limit",
            VerdictKind::Holdover => "holdover",
            VerdictKind::Limit | VerdictKind::LimitPower => "limit file",
        }
    }
}

/// One line of the verdict summary (the report's verdict matrix; serialised
/// as `{"kind","item","criterion","result","verdict","coverage","reason"}`).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct VerdictLine {
    /// Mask, jitter or holdover.
    pub kind: VerdictKind,
    /// What was judged (mask name, band, span).
    pub item: String,
    /// The criterion (limit, budget), with the range it was checked over.
    pub criterion: String,
    /// The criterion in a few words where the full one would not fit (a
    /// column header of the comparison's verdict matrix): a single-value
    /// limit's metric and value, `max|TE| ≤ 100 ns`, where `criterion` also
    /// names the file, its line and the file's note. `None`: `criterion`
    /// is short already. Not in JSON (`criterion` is).
    #[serde(skip)]
    pub brief: Option<String>,
    /// The result in words (worst margin, rms jitter, p95 TE; why it was
    /// not judged; what a partial check did not cover).
    pub result: String,
    /// The shared verdict: meets, exceeds or not judged, with coverage.
    #[serde(flatten)]
    pub judgement: crate::verdict::Judgement,
    /// Measured over limit at the point that decides (the worst τ of a
    /// mask, the band's rms over a jitter limit, p95 of |TE| at the span's
    /// end over a holdover budget); `None` when not judged.
    pub ratio: Option<f64>,
    /// Holdover only: when p95 of |TE| first reaches the budget (s), when
    /// it does within the span.
    pub hold_time: Option<f64>,
}

impl VerdictLine {
    /// The margin in dB, 20·log10(limit / measured) (the quantities judged
    /// are amplitudes: times, rms jitter, |TE|, σ), 10·log10 for an L(f)
    /// limit (its ratio is of power densities); positive means within the
    /// limit. `None` when there is no finite positive ratio.
    pub fn margin_db(&self) -> Option<f64> {
        // A power density (an L(f) limit): the dB difference itself.
        let k = if self.kind == VerdictKind::LimitPower {
            10.0
        } else {
            20.0
        };
        self.ratio
            .filter(|r| r.is_finite() && *r > 0.0)
            .map(|r| 0.0 - k * r.log10())
    }
}

/// One row of the stability table.
#[derive(Debug, Clone, PartialEq)]
pub struct StabilityRow {
    /// The estimator.
    pub estimator: crate::deviation::Estimator,
    /// τ (s).
    pub tau: f64,
    /// Averaging factor.
    pub m: usize,
    /// Deviation (σ_y, or s for time deviations).
    pub dev: f64,
    /// Lower bound of the interval.
    pub lo: Option<f64>,
    /// Upper bound of the interval.
    pub hi: Option<f64>,
    /// Equivalent degrees of freedom.
    pub edf: Option<f64>,
    /// Noise label at this τ.
    pub noise: Option<String>,
    /// Terms used.
    pub terms: usize,
    /// The approximation the value carries ([`crate::deviation::Point::approximation`]):
    /// the table marks it and says what it is under the table.
    pub approximation: Option<crate::deviation::Approximation>,
}

/// What a record looks like before analysis: the figures `tauwise
/// inspect` gives, with the drift's standard uncertainty.
#[derive(Debug, Clone, PartialEq)]
pub struct DataQuality {
    /// Samples, gaps included.
    pub points: usize,
    /// Sampling interval, s.
    pub tau0: f64,
    /// Time covered, s.
    pub span: f64,
    /// Missing samples.
    pub gaps: usize,
    /// Runs of missing samples.
    pub gap_runs: usize,
    /// The longest run of missing samples, s.
    pub longest_gap: f64,
    /// Mean fractional-frequency offset.
    pub offset: Option<f64>,
    /// Linear frequency drift per day (least squares on y).
    pub drift_per_day: Option<f64>,
    /// Its standard uncertainty per day (parametric bootstrap on the
    /// record's noise model), when found.
    pub drift_sigma_per_day: Option<f64>,
    /// Frequency outliers beyond the record's MAD limit, each with its time
    /// (taken out only when the DUT file asks).
    pub outliers: Option<crate::prepare::pipeline::OutlierReport>,
}

/// Frequency stability of one record: the σ–τ chart and its table.
#[derive(Debug, Clone, PartialEq)]
pub struct StabilitySection {
    /// Which record.
    pub source: String,
    /// The record as read.
    pub quality: Option<DataQuality>,
    /// What was done to the record before the analysis, in words (drift
    /// removed with its value ± σ, outliers with their times, gaps filled).
    pub preparation: Vec<String>,
    /// The chart (`None` when the record gave no σ(τ); see `notes`).
    pub plot: Option<StabilityPlot>,
    /// The table (one row per estimator and τ).
    pub rows: Vec<StabilityRow>,
    /// Confidence level of the intervals.
    pub confidence: f64,
    /// Notes (what is not yet computed, forced noise type, …).
    pub notes: Vec<String>,
    /// The σ limits of the DUT's limit files checked on this record (the
    /// table shows each one's value and measured/limit at its τ; the charts
    /// draw it).
    pub limits: Vec<crate::limits::Limit>,
    /// Their checks on this record (as in the verdict list).
    pub limit_checks: Vec<crate::limits::LimitCheck>,
}

impl StabilitySection {
    /// The σ–τ chart and, when σ_y curves take it, the time-deviation
    /// chart, each with the limit lines of its values
    /// ([`crate::plot::limit_lines`]); `None` without a chart.
    pub fn charts(&self) -> Option<(crate::plot::Chart, Option<crate::plot::Chart>)> {
        use crate::limits::ValueKind;
        use crate::plot::limit_lines::add_limits;
        let plot = self.plot.as_ref()?;
        let mut main = plot.chart();
        let main_is_time = plot.curves.iter().all(|c| c.time_deviation());
        add_limits(
            &mut main,
            &self.limits,
            if main_is_time {
                ValueKind::Duration
            } else {
                ValueKind::Fraction
            },
        );
        let time = plot.time_chart().map(|mut t| {
            add_limits(&mut t, &self.limits, ValueKind::Duration);
            t
        });
        Some((main, time))
    }
}

impl PhaseNoiseSection {
    /// The L(f) chart with the `lf` limit lines.
    pub fn chart(&self) -> crate::plot::Chart {
        let mut c = self.plot.chart();
        crate::plot::limit_lines::add_limits(&mut c, &self.limits, crate::limits::ValueKind::DbcHz);
        c
    }
}

/// One checked point of an L(f) limit on the phase-noise table.
#[derive(Debug, Clone, PartialEq)]
pub struct LfLimitRow {
    /// The check's label (`lab L(f) 10 Hz–100 kHz`).
    pub limit: String,
    /// Offset, Hz.
    pub offset: f64,
    /// L(f) of the table there, dBc/Hz (interpolated between its points
    /// at the limit's own offsets).
    pub measured: f64,
    /// The limit there, dBc/Hz.
    pub value: f64,
}

/// One term of the fitted power-law model.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelTerm {
    /// α of S_y(f) ∝ f^α.
    pub alpha: i32,
    /// Noise label.
    pub label: String,
    /// h_α.
    pub h: f64,
    /// τ range where this term dominates (s), when known.
    pub dominant: Option<(f64, f64)>,
}

/// One noise-identification row.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseIdRow {
    /// τ (s).
    pub tau: f64,
    /// α.
    pub alpha: i32,
    /// Label.
    pub label: String,
    /// Method (`lag1`, `b1`).
    pub method: String,
}

/// The noise model of one record.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseModelSection {
    /// Which record.
    pub source: String,
    /// The model string accepted by `--model`.
    pub model_string: String,
    /// The terms.
    pub terms: Vec<ModelTerm>,
    /// Noise type per τ.
    pub identified: Vec<NoiseIdRow>,
    /// Notes.
    pub notes: Vec<String>,
}

/// One integrated-jitter band.
#[derive(Debug, Clone, PartialEq)]
pub struct JitterRow {
    /// Band name.
    pub name: String,
    /// Lower offset (Hz).
    pub from: f64,
    /// Upper offset (Hz).
    pub to: f64,
    /// Filters in words.
    pub filters: String,
    /// rms phase (rad).
    pub rms_rad: f64,
    /// rms time jitter (s).
    pub rms_s: f64,
    /// rms in unit intervals, when a rate is given.
    pub rms_ui: Option<f64>,
    /// The limit, in words with its unit (`1 ps rms`), when one is given.
    pub limit: Option<String>,
    /// The verdict against the limit (None without a limit).
    pub judgement: Option<crate::verdict::Judgement>,
    /// Period, cycle-to-cycle and N-period jitter, when the DUT's band asks
    /// for it (`period`, `periods`).
    pub period: Option<crate::spectrum::jitter::PeriodJitter>,
}

impl JitterRow {
    /// rms phase in degrees.
    pub fn rms_deg(&self) -> f64 {
        self.rms_rad.to_degrees()
    }
}

/// Phase noise and jitter.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseNoiseSection {
    /// Which table.
    pub source: String,
    /// Carrier ν0 (Hz).
    pub carrier: f64,
    /// The L(f) chart.
    pub plot: PhaseNoisePlot,
    /// Jitter per band.
    pub bands: Vec<JitterRow>,
    /// Notes.
    pub notes: Vec<String>,
    /// The `lf` limits of the DUT's limit files (drawn on the chart).
    pub limits: Vec<crate::limits::Limit>,
    /// Their checks on this table.
    pub limit_checks: Vec<crate::limits::LimitCheck>,
    /// Every point they were checked at.
    pub limit_rows: Vec<LfLimitRow>,
}

/// Short and long τ together, for one record and one table.
#[derive(Debug, Clone, PartialEq)]
pub struct CombinedSection {
    /// Which record.
    pub source: String,
    /// Which table.
    pub table: String,
    /// The σ–τ chart with the measured and converted curves.
    pub plot: StabilityPlot,
    /// The comparison at the record's bandwidth.
    pub comparison: crate::stability::Comparison,
    /// Notes.
    pub notes: Vec<String>,
}

/// One mask result.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskRow {
    /// Mask name.
    pub name: String,
    /// MTIE or TDEV.
    pub metric: String,
    /// The verdict, with the coverage of the mask's τ range.
    pub judgement: crate::verdict::Judgement,
    /// Worst measured/limit ratio (None when not judged).
    pub worst_ratio: Option<f64>,
    /// τ of the worst ratio (s).
    pub worst_tau: Option<f64>,
    /// Lowest and highest τ checked (s).
    pub checked: Option<(f64, f64)>,
    /// The mask's own τ range (s; `None` upper end: no upper end).
    pub mask_range: (f64, Option<f64>),
    /// Number of violating τ.
    pub violations: usize,
    /// Where the mask values come from.
    pub source_note: String,
}

/// TIE statistics (s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TieStats {
    /// max |TIE|.
    pub max_abs: f64,
    /// Peak to peak.
    pub pk_pk: f64,
    /// rms.
    pub rms: f64,
}

/// Wander against masks.
#[derive(Debug, Clone, PartialEq)]
pub struct WanderSection {
    /// Which capture.
    pub source: String,
    /// TIE statistics.
    pub tie: Option<TieStats>,
    /// Charts (MTIE, TDEV).
    pub plots: Vec<WanderPlot>,
    /// Mask results.
    pub masks: Vec<MaskRow>,
    /// Notes.
    pub notes: Vec<String>,
    /// Time-error metrics, when the DUT file asks for them (`te = true`).
    pub te: Option<crate::wander::te::TeMetrics>,
}

/// One holdover span.
#[derive(Debug, Clone, PartialEq)]
pub struct SpanRow {
    /// Span (s).
    pub span: f64,
    /// Deterministic TE at the span end (s).
    pub deterministic: f64,
    /// p95 of |TE| at the span end (s).
    pub p95: f64,
    /// p99 of |TE| at the span end (s).
    pub p99: f64,
    /// The verdict: p95 within the budget through the span, or not judged.
    pub judgement: crate::verdict::Judgement,
}

/// Holdover.
#[derive(Debug, Clone, PartialEq)]
pub struct HoldoverSection {
    /// Which record.
    pub source: String,
    /// Budget (s).
    pub budget: f64,
    /// The chart (longest span).
    pub plot: HoldoverPlot,
    /// One row per span.
    pub spans: Vec<SpanRow>,
    /// When p95 first exceeds the budget (s).
    pub holds_for: Option<f64>,
    /// The aging rate at the start, per day, with its standard uncertainty
    /// per day when it was fitted with one (linear law).
    pub aging_per_day: Option<(f64, Option<f64>)>,
    /// Model and parameters used, in words.
    pub parameters: Vec<(String, String)>,
    /// Notes and the holdover caution.
    pub notes: Vec<String>,
}

/// A method and its published source.
#[derive(Debug, Clone, PartialEq)]
pub struct Method {
    /// What was computed.
    pub name: String,
    /// Where the method is published.
    pub source: String,
}

/// Why a section is empty.
#[derive(Debug, Clone, PartialEq)]
pub enum Absent {
    /// The DUT file does not ask for it.
    NotRequested(String),
    /// It was asked for but could not be computed (the reason).
    NotComputed(String),
}

/// A section that may be absent.
#[derive(Debug, Clone, PartialEq)]
pub enum Part<T> {
    /// The results.
    Done(T),
    /// Why there are none.
    Absent(Absent),
}

impl<T> Part<T> {
    /// Not part of the DUT file.
    pub fn not_requested(why: impl Into<String>) -> Self {
        Part::Absent(Absent::NotRequested(why.into()))
    }
    /// Asked for, not computed.
    pub fn not_computed(why: impl Into<String>) -> Self {
        Part::Absent(Absent::NotComputed(why.into()))
    }
}

/// The whole report.
#[derive(Debug, Clone, PartialEq)]
pub struct Report {
    /// Device name.
    pub device: String,
    /// Device description.
    pub description: Option<String>,
    /// The DUT file (or the quick-form input).
    pub dut_file: Option<String>,
    /// When it was made (UTC, text).
    pub generated: String,
    /// Verdict summary.
    pub verdicts: Vec<VerdictLine>,
    /// Frequency stability, one per record.
    pub stability: Part<Vec<StabilitySection>>,
    /// Noise model, one per record.
    pub noise_model: Part<Vec<NoiseModelSection>>,
    /// Phase noise and jitter.
    pub phase_noise: Part<PhaseNoiseSection>,
    /// Short and long τ together, one per record (against the first table).
    pub combined: Part<Vec<CombinedSection>>,
    /// Wander.
    pub wander: Part<WanderSection>,
    /// Holdover.
    pub holdover: Part<HoldoverSection>,
    /// Inputs.
    pub inputs: Vec<Provenance>,
    /// Methods.
    pub methods: Vec<Method>,
    /// Cautions (the decision caution first).
    pub cautions: Vec<String>,
    /// Sections the DUT file's `[separate]` and `[timeline]` ask for
    /// ([`added`]).
    pub added: Vec<added::AddedSection>,
    /// The decision rule of every verdict ([`crate::decision`]).
    pub decision: crate::decision::DecisionRule,
}

impl Report {
    /// An empty report for a device: every section absent with `why`.
    pub fn empty(device: &str, why: &str) -> Self {
        Self {
            device: device.into(),
            description: None,
            dut_file: None,
            generated: now_utc(),
            verdicts: Vec::new(),
            stability: Part::not_requested(why),
            noise_model: Part::not_requested(why),
            phase_noise: Part::not_requested(why),
            combined: Part::not_requested(why),
            wander: Part::not_requested(why),
            holdover: Part::not_requested(why),
            inputs: Vec::new(),
            methods: Vec::new(),
            cautions: vec![crate::DECISION_CAUTION.to_string()],
            added: Vec::new(),
            decision: crate::decision::DecisionRule::default(),
        }
    }
}

/// The current time in UTC as `YYYY-MM-DD HH:MM UTC`.
pub fn now_utc() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    chrono::DateTime::from_timestamp(secs, 0)
        .map(|d| d.format("%Y-%m-%d %H:%M UTC").to_string())
        .unwrap_or_default()
}

/// The section ids, in document order (for tests and the table of contents).
pub const SECTION_IDS: [(&str, &str); 10] = [
    ("verdicts", "Verdicts at a glance"),
    ("stability", "Frequency stability"),
    ("noise-model", "Noise model"),
    ("phase-noise", "Phase noise and jitter"),
    ("combined", "Short and long τ together"),
    ("wander", "Wander against masks"),
    ("holdover", "Holdover"),
    ("inputs", "Inputs"),
    ("methods", "Methods and sources"),
    ("cautions", "Cautions"),
];

/// Every chart of the report with a file-name stem (`stability`,
/// `stability-time`, `phase-noise`, `combined`, `wander-mtie`,
/// `wander-tdev`, `holdover`; the second and later records' charts get
/// `-2`, `-3`, …: `stability-2`, `stability-2-time`, `combined-2`), for
/// writing them as separate files.
pub fn charts(report: &Report) -> Vec<(String, crate::plot::Chart)> {
    let mut out = Vec::new();
    let nth = |stem: &str, i: usize| {
        if i == 0 {
            stem.to_string()
        } else {
            format!("{stem}-{}", i + 1)
        }
    };
    if let Part::Done(list) = &report.stability {
        for (i, s) in list.iter().enumerate() {
            if let Some((main, time)) = s.charts() {
                out.push((nth("stability", i), main));
                if let Some(t) = time {
                    out.push((format!("{}-time", nth("stability", i)), t));
                }
            }
        }
    }
    if let Part::Done(s) = &report.phase_noise {
        out.push(("phase-noise".to_string(), s.chart()));
    }
    if let Part::Done(list) = &report.combined {
        for (i, s) in list.iter().enumerate() {
            out.push((nth("combined", i), s.plot.chart()));
        }
    }
    if let Part::Done(s) = &report.wander {
        for p in &s.plots {
            out.push((
                format!("wander-{}", p.metric.name().to_ascii_lowercase()),
                p.chart(),
            ));
        }
    }
    if let Part::Done(s) = &report.holdover {
        out.push(("holdover".to_string(), s.plot.chart()));
    }
    out
}

/// Render the report as one self-contained HTML document.
pub fn render_html(report: &Report) -> Result<String> {
    sections::document(report)
}

/// Render and write the report atomically.
pub fn write(report: &Report, path: &Path) -> Result<()> {
    let html = render_html(report)?;
    crate::io::write_atomic(path, html.as_bytes())?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The verdict matrix serialises with the judgement flat, as every
    /// check does in JSON (docs/verdicts.md).
    #[test]
    fn verdict_line_serialises_flat() {
        let line = VerdictLine {
            brief: None,
            kind: VerdictKind::Jitter,
            item: "12 kHz – 5 MHz".into(),
            criterion: "1 ps".into(),
            result: "0.2 ps".into(),
            judgement: crate::verdict::Judgement::not_judged("no carrier"),
            ratio: None,
            hold_time: None,
        };
        let (v, _) = crate::results::json::to_value(&line).unwrap();
        assert_eq!(v["kind"], "jitter");
        assert_eq!(v["verdict"], "not-judged");
        assert_eq!(v["reason"], "no carrier");
        assert!(v.get("judgement").is_none());
    }
}
