//! Assembly of a [`Report`] from a DUT file: read every input, hash it, run
//! the analyses the DUT file asks for through the same library calls as the
//! individual commands (`stability`, `jitter`, `wander`, `holdover`), and
//! fill each section's struct — so the report's verdicts are the commands'
//! verdicts.
//!
//! A question the DUT file asks that cannot be answered (a band outside the
//! table, a record too short) is listed as "not computed" with the reason —
//! never left out silently, never invented.

use super::*;
use crate::deviation::Estimator;
use crate::io::dut::{Dut, LfQuantity, LfSource, TimeSource};
use crate::io::lf_table::{read_lf_table, LfTable, TableOptions, TableQuantity};
use crate::io::series::{read_series, Series, SeriesOptions};
use crate::tau::TauGrid;

mod decisions;
mod freq;
mod limits;
pub use limits::verdict_line as limit_verdict_line;
mod time;

/// Choices for the report that the DUT file does not hold.
#[derive(Debug, Clone, PartialEq)]
pub struct BuildOptions {
    /// Confidence level of the intervals.
    pub confidence: f64,
    /// Estimators for the stability section.
    pub estimators: Vec<Estimator>,
    /// τ grid for the stability section.
    pub grid: TauGrid,
    /// The decision rule given on the command line (overrides the DUT
    /// file's `decision_rule`).
    pub decision_rule: Option<crate::decision::Rule>,
    /// The conformance level given on the command line (overrides the DUT
    /// file's `conformance`).
    pub conformance: Option<f64>,
}

impl BuildOptions {
    /// The decision rule of `dut`'s verdicts: the command line's rule and
    /// level where given, else the DUT file's, else simple at 0.95.
    pub fn decision_for(&self, dut: &Dut) -> crate::decision::DecisionRule {
        (dut.decision.unwrap_or_default()).overridden(self.decision_rule, self.conformance)
    }
}

impl Default for BuildOptions {
    fn default() -> Self {
        Self {
            confidence: crate::stats::DEFAULT_CONFIDENCE,
            estimators: vec![
                Estimator::Oadev,
                Estimator::Mdev,
                Estimator::Ohdev,
                Estimator::Tdev,
            ],
            grid: TauGrid::Octave,
            decision_rule: None,
            conformance: None,
        }
    }
}

/// A time record as read, with its DUT entry.
pub(super) struct Loaded<'a> {
    pub src: &'a TimeSource,
    pub series: Series,
}

/// A phase-noise table as read, with its DUT entry.
pub(super) struct LoadedTable<'a> {
    pub src: &'a LfSource,
    pub table: LfTable,
}

fn series_options(src: &TimeSource, carrier: Option<f64>) -> SeriesOptions {
    src.series_options(carrier)
}

fn load<'a>(
    role: &str,
    src: &'a TimeSource,
    carrier: Option<f64>,
) -> Result<(Loaded<'a>, Provenance)> {
    let mut prov = Provenance::of_file(role, &src.name, &src.path)?;
    let s = read_series(&src.path, &series_options(src, carrier))?;
    prov.points = Some(s.record.len());
    prov.tau0 = Some(s.record.tau0());
    prov.span = Some(s.record.len().saturating_sub(1) as f64 * s.record.tau0());
    prov.gaps = Some(s.record.gaps());
    Ok((Loaded { src, series: s }, prov))
}

fn load_table(src: &LfSource) -> Result<(LoadedTable<'_>, Provenance)> {
    let mut prov = Provenance::of_file("phase-noise table", &src.name, &src.path)?;
    let quantity = match src.quantity {
        LfQuantity::Lf => TableQuantity::Lf,
        LfQuantity::Sphi => TableQuantity::Sphi,
        LfQuantity::SphiDb => TableQuantity::SphiDb,
        LfQuantity::Sy => TableQuantity::Sy,
    };
    let table = read_lf_table(
        &src.path,
        &TableOptions {
            quantity: Some(quantity),
            offset_column: None,
            value_column: None,
            carrier: Some(src.carrier),
        },
    )?;
    prov.points = Some(table.spectrum.len());
    Ok((LoadedTable { src, table }, prov))
}

pub(super) fn method(name: &str, source: &str) -> Method {
    Method {
        name: name.into(),
        source: source.into(),
    }
}

/// Build the report for a DUT file.
pub fn from_dut(dut: &Dut, opts: &BuildOptions) -> Result<Report> {
    from_dut_with_progress(dut, opts, &mut |_, _, _| {})
}

/// The number of steps [`from_dut_with_progress`] reports for a DUT file.
pub fn steps(dut: &Dut) -> usize {
    dut.records.len() + dut.tie.len() + dut.phase_noise.len() + 6
}

/// Build the report, calling `progress(done, total, what)` before each
/// step (reading a file, each analysis) so that a caller can show progress.
///
/// As in a comparison ([`crate::report::fleet::build`]), the holdover Monte
/// Carlo runs beside the other sections once the inputs are read and the
/// holdover model fitted; the results do not depend on it (the predictions
/// are those of the seeds, the sections are written in their fixed order).
pub fn from_dut_with_progress(
    dut: &Dut,
    opts: &BuildOptions,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<Report> {
    let (begun, holdover) = begin(dut, opts, progress)?;
    let jobs = holdover.jobs();
    let (report, results) = std::thread::scope(|s| {
        let predictions = s.spawn(|| crate::holdover::predict_many(&jobs));
        let report = analyse(dut, opts, begun, progress);
        let results = predictions
            .join()
            .unwrap_or_else(|e| std::panic::resume_unwind(e));
        (report, results)
    });
    let report = report?;
    drop(jobs);
    Ok(finish(dut, report, holdover, results))
}

/// A report's first part ([`begin`]): every input read, each record
/// prepared, the report's header filled. The holdover model is made from
/// it too (it needs only the records), so that a comparison can start the
/// Monte Carlo of all its devices while their other sections are computed
/// ([`analyse`]).
pub(crate) struct Begun<'a> {
    report: Report,
    records: Vec<Loaded<'a>>,
    ties: Vec<Loaded<'a>>,
    tables: Vec<LoadedTable<'a>>,
    /// Each record's preparation (its DUT entry's steps), in order.
    prepared: Vec<Result<crate::prepare::pipeline::Prepared>>,
    /// Steps done so far (for the progress).
    done: usize,
}

/// What the holdover section will hold: the predictions to make
/// ([`decisions::HoldoverAsk`]) or why there are none. Decided by
/// [`begin`], written into the report by [`finish`] (at the place the
/// section has among the others, so the verdict list's order does not
/// depend on when the model was made).
pub(crate) struct HoldoverStart(decisions::HoldoverStart);

impl HoldoverStart {
    /// The holdover predictions this report asks for, one per span.
    pub(crate) fn jobs(
        &self,
    ) -> Vec<(&crate::holdover::HoldoverModel, &crate::holdover::Settings)> {
        match &self.0 {
            decisions::HoldoverStart::Ask(a) => a.settings.iter().map(|s| (&a.model, s)).collect(),
            _ => Vec::new(),
        }
    }
}

/// The report, with the results of [`HoldoverStart::jobs`] in order.
pub(crate) fn finish(
    dut: &Dut,
    mut r: Report,
    holdover: HoldoverStart,
    results: Vec<Result<crate::holdover::Prediction>>,
) -> Report {
    if let Some(ask) = decisions::holdover_place(dut, holdover.0, &mut r) {
        decisions::holdover_finish(dut, ask, results, &mut r);
    }
    if !r.cautions.iter().any(|c| c == crate::DECISION_CAUTION) {
        r.cautions.insert(0, crate::DECISION_CAUTION.to_string());
    }
    r
}

/// The first steps of a report: read and hash every input, prepare each
/// record as its DUT entry says, and fit the holdover model (the
/// `holdover` command's library path) — the parts the holdover Monte
/// Carlo waits for. [`analyse`] makes the rest.
pub(crate) fn begin<'a>(
    dut: &'a Dut,
    opts: &BuildOptions,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<(Begun<'a>, HoldoverStart)> {
    let total = steps(dut);
    let mut done = 0usize;
    let mut step = |what: &str| {
        progress(done, total, what);
        done += 1;
    };
    let mut r = Report::empty(&dut.name, "");
    r.description = dut.description.clone();
    r.dut_file = Some(dut.file.display().to_string());
    r.decision = opts.decision_for(dut);
    r.methods.push(method(
        &format!(
            "Decision rule: {}. Each verdict also gives the probability that the true value \
             is within its limit (P(σ ≤ limit) from χ² with the point's EDF; holdover: the \
             fraction of Monte Carlo paths within the budget through the span), where the \
             quantity has a distribution.",
            r.decision.words()
        ),
        crate::decision::REFERENCE,
    ));

    // Inputs: read and hash every file.
    let mut records = Vec::new();
    for src in &dut.records {
        step(&format!("reading {}", src.name));
        let (l, p) = load("time record", src, dut.carrier)?;
        r.inputs.push(p);
        records.push(l);
    }
    let mut ties = Vec::new();
    for src in &dut.tie {
        step(&format!("reading {}", src.name));
        let (l, p) = load("TIE capture", src, dut.carrier)?;
        r.inputs.push(p);
        ties.push(l);
    }
    let mut tables = Vec::new();
    for src in &dut.phase_noise {
        step(&format!("reading {}", src.name));
        let (t, p) = load_table(src)?;
        r.inputs.push(p);
        tables.push(t);
    }
    for j in &dut.jitter {
        for f in &j.filter_files {
            r.inputs
                .push(Provenance::of_file("jitter filter table", &j.name, f)?);
        }
    }
    for f in &dut.limit_files {
        r.inputs.push(Provenance::of_file(
            "limit file",
            &f.display().to_string(),
            f,
        )?);
    }
    if let Some(w) = &dut.wander {
        for f in &w.mask_files {
            r.inputs.push(Provenance::of_file(
                "limit file",
                &f.display().to_string(),
                f,
            )?);
        }
    }
    let prepared: Vec<_> = records
        .iter()
        .map(|l| crate::prepare::pipeline::prepare(&l.series.record, &l.src.prepare))
        .collect();
    step("holdover model");
    let holdover = decisions::holdover_start(dut, &records, &prepared, r.decision);
    Ok((
        Begun {
            report: r,
            records,
            ties,
            tables,
            prepared,
            done,
        },
        HoldoverStart(holdover),
    ))
}

/// Every section of a [`Begun`] report but holdover: stability and noise
/// model, phase noise and jitter, wander, the limit files and the sections
/// the DUT file adds. [`finish`] adds holdover from the predictions.
pub(crate) fn analyse(
    dut: &Dut,
    opts: &BuildOptions,
    begun: Begun<'_>,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<Report> {
    let Begun {
        report: mut r,
        records,
        ties,
        tables,
        prepared,
        mut done,
    } = begun;
    let total = steps(dut);
    let mut step = |what: &str| {
        progress(done, total, what);
        done += 1;
    };
    step("stability and noise model");
    let work = time::stability(dut, &records, prepared, opts, &mut r)?;
    time::noise_model(&records, &work, opts, &mut r);
    step("phase noise and jitter");
    freq::phase_noise(dut, &records, &tables, &mut r)?;
    freq::combined(dut, &records, &tables, &work, opts.confidence, &mut r);
    step("wander");
    decisions::wander(dut, &records, &ties, &mut r)?;
    step("limit files");
    limits::check(dut, &records, &work, &tables, opts, &mut r)?;
    step("holdover Monte Carlo");
    r.added = super::added::sections(dut, opts.confidence);
    Ok(r)
}
