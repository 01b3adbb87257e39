//! `tauwise._tauwise`: the Rust side of the Python package.
//!
//! Every function here does what the matching `tauwise` command does, by
//! the same library calls in the same order (`src/cli/*.rs`), and returns
//! the command's JSON document as text ([`tauwise::results::Document`]), so
//! that `Result.to_dict()` in Python equals `tauwise COMMAND --format json`
//! by construction. Nothing here builds JSON by hand or computes a
//! statistic: it parses the options with the library's own parsers
//! (`tauwise::parse`, the ones behind the command line, so a refused value
//! gets the command line's message), calls the library with the GIL
//! released, and hands back the library's result.
//!
//! Records cross the boundary once: a numpy array becomes the record's
//! `Vec<f64>` in one pass (float64 of any layout, float32 and integer
//! arrays converted element by element), and a record's values go back
//! to numpy as one array.

use numpy::{PyArray1, PyReadonlyArray1};
use pyo3::exceptions::{PyOSError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::PyBytes;
use std::fmt::Display;
use std::path::{Path, PathBuf};
use tauwise::io::series::{read_series, Series, SeriesInfo, SeriesOptions};
use tauwise::parse::{Duration, Frequency, Probability};
use tauwise::results::{Document, FleetDocument, FleetMatrix, Input, RecordInput};
use tauwise::{DataKind, FrequencyRecord, PhaseRecord};

/// What a record-taking function is told about where the record came from
/// (the JSON document's `"input"`), when it is not a file.
const ARRAY_PATH: &str = "<array>";

// ---------------------------------------------------------------------------
// Errors

/// A library error as a Python exception with the library's message: a
/// file that could not be opened, read or written is `OSError`; a file
/// read but refused (a line that is not a reading, a unit that disagrees,
/// a DUT file against its schema) is `tauwise.FileContentError`, both an
/// `OSError` and a `ValueError`; a refused option value or options that do
/// not go together, and data the computation cannot use, are `ValueError`.
fn to_py(py: Python<'_>, e: tauwise::Error) -> PyErr {
    use tauwise::io::ReadCause;
    let msg = e.to_string();
    match &e {
        tauwise::Error::Read(r) if r.cause == ReadCause::Access => PyOSError::new_err(msg),
        tauwise::Error::Read(_) => match py
            .import("tauwise._errors")
            .and_then(|m| m.getattr("FileContentError"))
        {
            Ok(cls) => PyErr::from_value(match cls.call1((msg.clone(),)) {
                Ok(v) => v,
                Err(err) => return err,
            }),
            Err(_) => PyOSError::new_err(msg),
        },
        tauwise::Error::Write(_) => PyOSError::new_err(msg),
        _ => PyValueError::new_err(msg),
    }
}

/// `Result<T, tauwise::Error>` → `PyResult<T>`.
trait OrPy<T> {
    fn py(self, py: Python<'_>) -> PyResult<T>;
}

impl<T, E: Into<tauwise::Error>> OrPy<T> for Result<T, E> {
    fn py(self, py: Python<'_>) -> PyResult<T> {
        self.map_err(|e| to_py(py, e.into()))
    }
}

/// Parse the keyword `name`'s value `text` with one of the library's
/// parsers; a refusal is a `ValueError` naming the keyword, the value and
/// the parser's reason (the command line's message with the keyword in
/// place of the option).
fn parse_kw<T, E: Display>(
    name: &str,
    text: &str,
    parser: impl FnOnce(&str) -> Result<T, E>,
) -> PyResult<T> {
    parser(text).map_err(|e| PyValueError::new_err(format!("{name}='{text}': {e}")))
}

/// [`parse_kw`] for an optional keyword.
fn parse_opt<T, E: Display>(
    name: &str,
    text: Option<&str>,
    parser: impl FnOnce(&str) -> Result<T, E>,
) -> PyResult<Option<T>> {
    text.map(|t| parse_kw(name, t, parser)).transpose()
}

/// A whole number (a seed, a column, a count of periods) from its text;
/// a negative, fractional or too large value is a `ValueError`.
fn whole<T: std::str::FromStr>(name: &str, text: &str) -> PyResult<T> {
    text.trim().parse::<T>().map_err(|_| {
        PyValueError::new_err(format!(
            "{name}='{text}': expected a whole number that is not negative (e.g. 7)"
        ))
    })
}

/// A `FromStr` parser as a function.
fn from_str<T: std::str::FromStr>(text: &str) -> Result<T, T::Err> {
    text.parse()
}

/// The parts of a decision rule given as keywords (`decision_rule`:
/// `simple` or `guarded`; `conformance` in (0.5, 1), also as `95%`),
/// parsed by the command line's parsers (`--decision-rule`,
/// `--conformance`).
fn decision_parts(
    rule: Option<&str>,
    conformance: Option<&str>,
) -> PyResult<(Option<tauwise::decision::Rule>, Option<f64>)> {
    Ok((
        parse_opt("decision_rule", rule, from_str::<tauwise::decision::Rule>)?,
        parse_opt(
            "conformance",
            conformance,
            tauwise::decision::parse_conformance,
        )?,
    ))
}

/// The decision rule of a command that gives verdicts: the keywords given,
/// then the defaults (simple; 0.95), as the command line's
/// [`tauwise::decision::DecisionRule::overridden`].
fn decision(
    rule: Option<&str>,
    conformance: Option<&str>,
) -> PyResult<tauwise::decision::DecisionRule> {
    let (r, c) = decision_parts(rule, conformance)?;
    Ok(tauwise::decision::DecisionRule::default().overridden(r, c))
}

/// Before any computing, as the command line's `--plot FILE`: the chart
/// file is not one of `inputs` and its directory takes files.
fn check_plot(py: Python<'_>, inputs: &[&Path], plot: Option<&Path>) -> PyResult<()> {
    match plot {
        Some(p) => tauwise::io::output_paths::check_output_paths(inputs, &[Some(p)]).py(py),
        None => Ok(()),
    }
}

/// The file a record was read from, if any (an input a chart may not
/// overwrite).
fn record_file(record: &PyRecord) -> Vec<&Path> {
    record
        .info
        .as_ref()
        .map(|i| i.path.as_path())
        .into_iter()
        .collect()
}

/// The JSON text of a command's document (`"tool"`, `"version"`,
/// `"schema"`, `"input"`, then the body), exactly as the command writes it.
fn document<B: serde::Serialize>(py: Python<'_>, input: Input, body: B) -> PyResult<String> {
    Ok(Document::new(input, body).json().py(py)?.0)
}

/// The word of a gate (`pass`, `exceeds`, `not-judged`), as serde writes it.
fn gate_word(g: tauwise::verdict::Gate) -> String {
    serde_json::to_value(g)
        .ok()
        .and_then(|v| v.as_str().map(str::to_string))
        .unwrap_or_default()
}

// ---------------------------------------------------------------------------
// Records

/// A phase or frequency record with where it came from: the values in SI
/// units (phase in seconds, fractional frequency), τ0, and the description
/// the JSON documents carry under `"input"`.
#[pyclass(module = "tauwise._tauwise", name = "Record", frozen)]
pub struct PyRecord {
    record: tauwise::Record,
    path: String,
    preamble: Vec<String>,
    /// How the file was read (`tauwise inspect`'s facts; `None` for an
    /// array or a record made here).
    info: Option<SeriesInfo>,
    notes: Vec<String>,
    warnings: Vec<String>,
}

impl PyRecord {
    /// The `"input"` of a document about `record`, a record made from this
    /// one (a drift removed), as the command line describes its file.
    fn input_for(&self, record: &tauwise::Record) -> Input {
        input_of(&self.path, &self.preamble, record)
    }

    /// A record read from a file, with how it was read.
    fn of_series(series: Series) -> Self {
        Self {
            path: series.info.path.display().to_string(),
            preamble: series.info.preamble.clone(),
            notes: series.info.notes.clone(),
            warnings: series.info.warnings.clone(),
            info: Some(series.info),
            record: series.record,
        }
    }

    /// The time of the first sample, s, when the file had stamps.
    fn start_time(&self) -> Option<f64> {
        self.info.as_ref().and_then(|i| i.start_time)
    }

    fn of_record(record: tauwise::Record, path: &str) -> Self {
        Self {
            record,
            path: path.to_string(),
            preamble: Vec::new(),
            info: None,
            notes: Vec::new(),
            warnings: Vec::new(),
        }
    }
}

/// The `"input"` of a document about `record`, read from `path` with
/// `preamble` (what `RecordInput::of` gives for a file).
fn input_of(path: &str, preamble: &[String], record: &tauwise::Record) -> Input {
    Input::Record(RecordInput {
        path: path.to_string(),
        data: record.kind().name(),
        tau0: record.tau0(),
        points: record.len(),
        gaps: record.gaps(),
        preamble_lines: preamble.to_vec(),
    })
}

/// Samples copied and checked together: a block small enough to stay in
/// the first-level cache between its copy and its check.
const BLOCK: usize = 4096;

/// True when a value of `v` is ±inf (no early exit, so that the loop is
/// vectorised).
fn any_infinite(v: &[f64]) -> bool {
    v.iter().fold(false, |bad, x| bad | x.is_infinite())
}

/// A contiguous float64 slice copied block by block, each block checked
/// for ±inf while it is still in cache ([`check_finite_or_gap`] then finds
/// the first one only when there is one).
fn copy_checked(s: &[f64]) -> (Vec<f64>, bool) {
    let mut v = Vec::with_capacity(s.len());
    let mut bad = false;
    for block in s.chunks(BLOCK) {
        v.extend_from_slice(block);
        bad |= any_infinite(block);
    }
    (v, bad)
}

/// The values of a 1-D numpy array as a `Vec<f64>`, in one pass: float64
/// (any layout; contiguous ones copied as a block), float32, int64 and
/// int32 converted element by element; with whether a value is ±inf.
/// Anything else is refused (the Python layer converts other types first).
fn values_of(py: Python<'_>, values: &Bound<'_, PyAny>) -> PyResult<(Vec<f64>, bool)> {
    let checked = |v: Vec<f64>| {
        let bad = any_infinite(&v);
        (v, bad)
    };
    if let Ok(a) = values.extract::<PyReadonlyArray1<'_, f64>>() {
        return Ok(match a.as_slice() {
            Ok(s) => {
                let s: &[f64] = s;
                py.detach(|| copy_checked(s))
            }
            Err(_) => checked(a.as_array().iter().copied().collect()),
        });
    }
    if let Ok(a) = values.extract::<PyReadonlyArray1<'_, f32>>() {
        return Ok(checked(
            a.as_array().iter().map(|&v| f64::from(v)).collect(),
        ));
    }
    if let Ok(a) = values.extract::<PyReadonlyArray1<'_, i64>>() {
        return Ok((a.as_array().iter().map(|&v| v as f64).collect(), false));
    }
    if let Ok(a) = values.extract::<PyReadonlyArray1<'_, i32>>() {
        return Ok((a.as_array().iter().map(|&v| f64::from(v)).collect(), false));
    }
    Err(PyValueError::new_err(
        "expected a 1-D numpy array of float64, float32, int64 or int32 readings (NaN marks a gap)",
    ))
}

/// Refuse infinite readings (NaN is a gap; ±inf is no reading at all);
/// `bad` says whether [`values_of`] saw one.
fn check_finite_or_gap(v: &[f64], bad: bool) -> PyResult<()> {
    if !bad {
        return Ok(());
    }
    match v.iter().position(|x| x.is_infinite()) {
        Some(i) => Err(PyValueError::new_err(format!(
            "reading {i} (0-based) is {}: a reading must be finite (NaN marks a gap)",
            v[i]
        ))),
        None => Ok(()),
    }
}

#[pymethods]
impl PyRecord {
    /// A record from a numpy array of readings in SI units (phase in
    /// seconds, fractional frequency), NaN for a gap.
    #[staticmethod]
    #[pyo3(signature = (values, tau0, kind, path=None))]
    fn from_array(
        py: Python<'_>,
        values: &Bound<'_, PyAny>,
        tau0: &str,
        kind: &str,
        path: Option<String>,
    ) -> PyResult<Self> {
        let tau0 = parse_kw("tau0", tau0, Duration::positive)?.seconds();
        let (v, bad) = values_of(py, values)?;
        check_finite_or_gap(&v, bad)?;
        let record = match kind {
            "phase" => tauwise::Record::Phase(PhaseRecord::new(v, tau0).py(py)?),
            "freq" | "frequency" => {
                tauwise::Record::Frequency(FrequencyRecord::new(v, tau0).py(py)?)
            }
            other => {
                return Err(PyValueError::new_err(format!(
                    "kind='{other}': expected \"phase\" (time error, s) or \"freq\" (fractional frequency)"
                )))
            }
        };
        Ok(Self::of_record(
            record,
            path.as_deref().unwrap_or(ARRAY_PATH),
        ))
    }

    /// `phase` or `freq`.
    #[getter]
    fn kind(&self) -> &'static str {
        self.record.kind().name()
    }

    /// Sampling interval, s.
    #[getter]
    fn tau0(&self) -> f64 {
        self.record.tau0()
    }

    /// Missing samples (NaN).
    #[getter]
    fn gaps(&self) -> usize {
        self.record.gaps()
    }

    /// Where the record came from (a file's path as given, or `<array>`).
    #[getter]
    fn path(&self) -> &str {
        &self.path
    }

    /// The lines of the file before the first reading.
    #[getter]
    fn preamble(&self) -> Vec<String> {
        self.preamble.clone()
    }

    /// How the file was read, as JSON text (`None` for an array).
    #[getter]
    fn info_json(&self) -> Option<String> {
        self.info
            .as_ref()
            .and_then(|i| serde_json::to_string(i).ok())
    }

    /// The reader's notes.
    #[getter]
    fn notes(&self) -> Vec<String> {
        self.notes.clone()
    }

    /// The reader's warnings.
    #[getter]
    fn warnings(&self) -> Vec<String> {
        self.warnings.clone()
    }

    fn __len__(&self) -> usize {
        self.record.len()
    }

    /// The record as phase x, s (a new array; integrated from frequency
    /// readings when the record holds frequency).
    fn phase<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v = match &self.record {
            tauwise::Record::Phase(p) => p.x.clone(),
            r => py.detach(|| r.to_phase().x),
        };
        PyArray1::from_vec(py, v)
    }

    /// The record as fractional frequency y (a new array; differenced from
    /// phase readings when the record holds phase).
    fn frequency<'py>(&self, py: Python<'py>) -> Bound<'py, PyArray1<f64>> {
        let v = match &self.record {
            tauwise::Record::Frequency(f) => f.y.clone(),
            r => py.detach(|| r.to_frequency().y),
        };
        PyArray1::from_vec(py, v)
    }
}

/// Read a time record with the reader every command uses.
#[pyfunction]
#[pyo3(signature = (path, data=None, tau0=None, units=None, carrier=None, value_column=None,
    time_column=None, snap=None, wrap=None, comment=None, decimal_comma=false, binary=None))]
#[allow(clippy::too_many_arguments)]
fn read(
    py: Python<'_>,
    path: PathBuf,
    data: Option<&str>,
    tau0: Option<&str>,
    units: Option<&str>,
    carrier: Option<&str>,
    value_column: Option<&str>,
    time_column: Option<&str>,
    snap: Option<&str>,
    wrap: Option<&str>,
    comment: Option<&str>,
    decimal_comma: bool,
    binary: Option<&str>,
) -> PyResult<PyRecord> {
    use tauwise::parse::TimeColumn;
    let kind = match data {
        None => None,
        Some("phase") => Some(DataKind::Phase),
        Some("freq") | Some("frequency") => Some(DataKind::Freq),
        Some(other) => {
            return Err(PyValueError::new_err(format!(
                "data='{other}': expected \"phase\" or \"freq\""
            )))
        }
    };
    let time_column = parse_opt("time_column", time_column, tauwise::parse::time_column)?;
    let opts = SeriesOptions {
        kind,
        unit: parse_opt("units", units, tauwise::units::parse_value_unit)?,
        tau0: parse_opt("tau0", tau0, Duration::positive)?.map(Duration::seconds),
        carrier: parse_opt("carrier", carrier, Frequency::positive)?.map(Frequency::hertz),
        value_column: value_column.map(|v| whole("value_column", v)).transpose()?,
        time_column: match time_column {
            Some(TimeColumn::Number(n)) => Some(n),
            _ => None,
        },
        no_time_column: time_column == Some(TimeColumn::None),
        snap: parse_opt("snap", snap, tauwise::parse::snap_fraction)?,
        wrap: parse_opt("wrap", wrap, Duration::positive)?.map(Duration::seconds),
        comments: parse_opt("comment", comment, tauwise::parse::comment_chars)?.unwrap_or_default(),
        decimal_comma,
        binary: parse_opt("binary", binary, from_str::<tauwise::parse::BinaryFormat>)?,
    };
    let series = py.detach(|| read_series(&path, &opts)).py(py)?;
    Ok(PyRecord::of_series(series))
}

/// `record` with its least-squares drift removed when `model` asks
/// (`--remove-drift`), as the command line's `DriftArgs::apply`.
fn drift_removed(
    record: &tauwise::Record,
    model: Option<tauwise::prepare::DriftModel>,
) -> tauwise::Result<std::borrow::Cow<'_, tauwise::Record>> {
    match model {
        None => Ok(std::borrow::Cow::Borrowed(record)),
        Some(m) => {
            let fit = tauwise::prepare::fit_drift(record, m)?;
            Ok(std::borrow::Cow::Owned(tauwise::prepare::remove_drift(
                record, &fit,
            )))
        }
    }
}

/// The record as phase: a phase record borrowed as it is (no copy; the
/// command line's `to_phase` copies it, with the same values), a frequency
/// record integrated.
fn as_phase(record: &tauwise::Record) -> std::borrow::Cow<'_, PhaseRecord> {
    match record {
        tauwise::Record::Phase(p) => std::borrow::Cow::Borrowed(p),
        r => std::borrow::Cow::Owned(r.to_phase()),
    }
}

fn paths(list: &[String]) -> Vec<PathBuf> {
    list.iter().map(PathBuf::from).collect()
}

// ---------------------------------------------------------------------------
// stability

/// `tauwise stability`: σ(τ) curves with intervals and noise types; returns
/// (JSON document, gate of the limit checks).
#[pyfunction]
#[pyo3(signature = (record, dev, taus, confidence, noise_type=None, uncorrected=false,
    best=false, remove_drift=None, limit_files=Vec::new(), lf=None, carrier=None,
    bandwidth=None, lf_uncertainty=None, decision_rule=None, conformance=None, plot=None))]
#[allow(clippy::too_many_arguments)]
fn stability(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    dev: &str,
    taus: &str,
    confidence: &str,
    noise_type: Option<&str>,
    uncorrected: bool,
    best: bool,
    remove_drift: Option<&str>,
    limit_files: Vec<String>,
    lf: Option<PathBuf>,
    carrier: Option<&str>,
    bandwidth: Option<&str>,
    lf_uncertainty: Option<&str>,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<(String, String)> {
    let rule = decision(decision_rule, conformance)?;
    let time_plot = plot
        .as_deref()
        .map(tauwise::plot::stability::time_chart_path);
    {
        let mut ins = record_file(&record);
        ins.extend(lf.as_deref());
        let lf_ins: Vec<PathBuf> = paths(&limit_files);
        ins.extend(lf_ins.iter().map(PathBuf::as_path));
        check_plot(py, &ins, plot.as_deref())?;
        check_plot(py, &ins, time_plot.as_deref())?;
    }
    let estimators = parse_kw("dev", dev, from_str::<tauwise::parse::EstimatorList>)?.0;
    let grid = parse_kw("taus", taus, tauwise::tau::TauGrid::parse)?;
    let confidence = parse_kw("confidence", confidence, from_str::<Probability>)?.value();
    let forced_alpha = parse_opt("noise_type", noise_type, tauwise::model::parse_noise)?;
    let drift = parse_opt(
        "remove_drift",
        remove_drift,
        from_str::<tauwise::prepare::DriftModel>,
    )?;
    let carrier = parse_opt("carrier", carrier, Frequency::positive)?.map(Frequency::hertz);
    let bandwidth = parse_opt("bandwidth", bandwidth, Frequency::positive)?.map(Frequency::hertz);
    let lf_uncertainty = parse_opt(
        "lf_uncertainty",
        lf_uncertainty,
        tauwise::parse::uncertainty_db,
    )?;
    if lf.is_none() && (bandwidth.is_some() || lf_uncertainty.is_some()) {
        return Err(PyValueError::new_err(
            "bandwidth and lf_uncertainty go with lf (a phase-noise table to set beside the record)",
        ));
    }
    let limit_files = paths(&limit_files);
    let rec = &record.record;
    let (rpath, rpre) = (record.path.as_str(), record.preamble.as_slice());
    let (input, body, gate) = py
        .detach(|| -> tauwise::Result<_> {
            let (limit_set, elsewhere) = tauwise::limits::read_for(&limit_files, "stability")?;
            let processed = drift_removed(rec, drift)?;
            let request = tauwise::stability::Request {
                estimators,
                grid,
                confidence,
                forced_alpha,
                bias_correction: !uncorrected,
            };
            let table = match &lf {
                Some(table) => {
                    let carrier = carrier.ok_or_else(|| {
                        tauwise::Error::option(
                            "lf",
                            "needs carrier (the carrier frequency of the phase-noise table, e.g. \"10MHz\")",
                        )
                    })?;
                    let opts = tauwise::io::lf_table::TableOptions {
                        carrier: Some(carrier),
                        ..Default::default()
                    };
                    Some(tauwise::io::lf_table::read_lf_table(table, &opts)?)
                }
                None => None,
            };
            let view = tauwise::stability::ViewOptions {
                bandwidth,
                table_uncertainty_db: lf_uncertainty
                    .unwrap_or(tauwise::stability::DEFAULT_TABLE_UNCERTAINTY_DB),
            };
            // The one library function `tauwise stability` calls per record.
            let additions = tauwise::stability::Additions {
                best,
                limits: &limit_set,
                elsewhere,
                phase_noise: table.as_ref().map(|t| (&t.spectrum, view)),
                decision: rule,
            };
            let phase = as_phase(&processed);
            let r = tauwise::stability::record_stability(&phase, &request, &additions)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE` (and FILE-time for time deviations).
                let results = [(rpath.to_string(), r)];
                let (main, time) = tauwise::plot::stability::records_charts(
                    &results,
                    request.confidence,
                    &limit_set,
                );
                tauwise::plot::render(&main, path, (960, 600))?;
                if let (Some(time), Some(tp)) = (time, &time_plot) {
                    tauwise::plot::render(&time, tp, (960, 600))?;
                }
                let [(_, r)] = results;
                let body = r.body;
                let gate =
                    tauwise::verdict::gate(tauwise::limits::judgements(&body.limits.limits));
                return Ok((input_of(rpath, rpre, &processed), body, gate));
            }
            let body = r.body;
            let gate = tauwise::verdict::gate(tauwise::limits::judgements(&body.limits.limits));
            Ok((input_of(rpath, rpre, &processed), body, gate))
        })
        .py(py)?;
    Ok((document(py, input, body)?, gate_word(gate)))
}

// ---------------------------------------------------------------------------
// noise

/// `tauwise noise`: the dominant noise at each τ and the fitted model.
#[pyfunction]
#[pyo3(signature = (record, taus, remove_drift=None))]
fn noise(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    taus: &str,
    remove_drift: Option<&str>,
) -> PyResult<String> {
    let grid = parse_kw("taus", taus, tauwise::tau::TauGrid::parse)?;
    let drift = parse_opt(
        "remove_drift",
        remove_drift,
        from_str::<tauwise::prepare::DriftModel>,
    )?;
    let rec = &record.record;
    let (rpath, rpre) = (record.path.as_str(), record.preamble.as_slice());
    let (input, body) = py
        .detach(|| -> tauwise::Result<_> {
            let processed = drift_removed(rec, drift)?;
            let x = as_phase(&processed);
            // The one library function `tauwise noise` calls.
            let body = tauwise::results::NoiseBody::of_record(&x, &grid)?.0;
            Ok((input_of(rpath, rpre, &processed), body))
        })
        .py(py)?;
    document(py, input, body)
}

// ---------------------------------------------------------------------------
// spectrum

/// `tauwise spectrum`: Welch PSD of a record; returns (document, warnings).
#[pyfunction]
#[pyo3(signature = (record, quantity, window, overlap, per_decade, all_bins=false,
    segment=None, carrier=None))]
#[allow(clippy::too_many_arguments)]
fn spectrum(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    quantity: &str,
    window: &str,
    overlap: &str,
    per_decade: &str,
    all_bins: bool,
    segment: Option<&str>,
    carrier: Option<&str>,
) -> PyResult<(String, Vec<String>)> {
    use tauwise::results::{SpectrumBody, SpectrumRows};
    use tauwise::spectrum::welch::{welch_record, WelchOptions, Window};
    use tauwise::spectrum::Quantity;
    let quantity = parse_kw("quantity", quantity, Quantity::parse)?;
    let window = parse_kw("window", window, Window::parse)?;
    let overlap = parse_kw("overlap", overlap, tauwise::parse::overlap_fraction)?;
    let per_decade = parse_kw("per_decade", per_decade, tauwise::parse::count)?;
    let segment = parse_opt("segment", segment, tauwise::parse::count)?;
    let carrier = parse_opt("carrier", carrier, Frequency::positive)?.map(Frequency::hertz);
    if carrier.is_none() && matches!(quantity, Quantity::Lf | Quantity::Sphi) {
        return Err(PyValueError::new_err(format!(
            "quantity='{}': needs the carrier frequency: give carrier (e.g. carrier=\"10MHz\"), or ask for quantity=\"sy\" or \"sx\"",
            quantity.name()
        )));
    }
    let rec = &record.record;
    let (body, warnings) = py
        .detach(|| -> tauwise::Result<_> {
            let w = welch_record(
                rec,
                &WelchOptions {
                    window,
                    segment,
                    overlap,
                },
            )?;
            let spec = if all_bins {
                w.spectrum(carrier)?
            } else {
                w.log_binned(per_decade, carrier)?
            };
            let rows = SpectrumRows::new(&spec)?;
            let bins = if all_bins {
                "all".to_string()
            } else {
                format!("log, {per_decade} per decade")
            };
            Ok((
                SpectrumBody::new(&w, carrier, bins, rows),
                w.warnings.clone(),
            ))
        })
        .py(py)?;
    Ok((document(py, record.input_for(rec), body)?, warnings))
}

// ---------------------------------------------------------------------------
// wander

/// `tauwise wander`: TIE statistics, MTIE, TDEV against masks; returns
/// (document, gate).
#[pyfunction]
#[pyo3(signature = (record, taus=None, tau_range=None, masks=Vec::new(),
    limit_files=Vec::new(), remove_offset=false, te_filter=None, te=false, cte_window=None,
    decision_rule=None, conformance=None, plot=None))]
#[allow(clippy::too_many_arguments)]
fn wander(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    taus: Option<&str>,
    tau_range: Option<&str>,
    masks: Vec<String>,
    limit_files: Vec<String>,
    remove_offset: bool,
    te_filter: Option<&str>,
    te: bool,
    cte_window: Option<&str>,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<(String, String)> {
    use tauwise::wander::te::{TeOptions, DEFAULT_CTE_WINDOW};
    let rule = decision(decision_rule, conformance)?;
    {
        let mut ins = record_file(&record);
        let lf_ins: Vec<PathBuf> = paths(&limit_files);
        ins.extend(lf_ins.iter().map(PathBuf::as_path));
        check_plot(py, &ins, plot.as_deref())?;
    }
    let grid = parse_opt("taus", taus, tauwise::tau::TauGrid::parse)?;
    let range = parse_opt("tau_range", tau_range, tauwise::parse::parse_tau_range)?;
    let filter = parse_opt("te_filter", te_filter, from_str::<tauwise::parse::TeFilter>)?;
    let cte_window =
        parse_opt("cte_window", cte_window, Duration::positive_with_unit)?.map(Duration::seconds);
    if cte_window.is_some() && !te {
        return Err(PyValueError::new_err(
            "cte_window goes with te=True (the windowed cTE is one of the time-error metrics)",
        ));
    }
    // A built-in is a limit file like the user's (as `tauwise wander`).
    let mut limits = Vec::new();
    for name in &masks {
        limits.extend(
            parse_kw("masks", name, |t| {
                tauwise::wander::masks::builtin_file(t).map_err(|e| e.to_string())
            })?
            .limits,
        );
    }
    let limit_files = paths(&limit_files);
    let rec = &record.record;
    let title = record.path.as_str();
    let (body, gate) = py
        .detach(|| -> tauwise::Result<_> {
            let (set, elsewhere) = tauwise::limits::read_for(&limit_files, "wander")?;
            limits.extend(set);
            let mask_list: Vec<_> = (limits.iter())
                .filter_map(tauwise::limits::Limit::as_mask)
                .collect();
            let x = as_phase(rec);
            let opts = tauwise::wander::Options {
                grid,
                range,
                remove_offset,
                filter,
                te: te.then(|| TeOptions {
                    cte_window: cte_window.unwrap_or(DEFAULT_CTE_WINDOW),
                    ..TeOptions::default()
                }),
                decision: rule,
            };
            let res = tauwise::wander::analyse_limits(&x, &opts, &mask_list, &limits)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE` for one record.
                let chart = tauwise::plot::wander::wander_chart(&res, &mask_list, title);
                tauwise::plot::render(&chart, path, tauwise::plot::DEFAULT_SIZE)?;
            }
            let gate = tauwise::verdict::gate(
                (res.checks.iter().map(|c| &c.judgement))
                    .chain(res.te_checks.iter().map(|c| &c.judgement)),
            );
            Ok((
                tauwise::results::WanderBody::new(res).with_elsewhere(elsewhere),
                gate,
            ))
        })
        .py(py)?;
    Ok((document(py, record.input_for(rec), body)?, gate_word(gate)))
}

// ---------------------------------------------------------------------------
// holdover

/// `tauwise holdover`: time error through a span against a budget;
/// returns (document, gate).
#[pyfunction]
#[pyo3(signature = (record, span, budget, paths, seed, steps, te0, y0=None, y0_sigma=None,
    settle=None, start=None, aging=None, aging_model="linear", temp_coeff=None,
    temp_swing=None, model=None, decision_rule=None, conformance=None, plot=None))]
#[allow(clippy::too_many_arguments)]
fn holdover(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    span: &str,
    budget: &str,
    paths: &str,
    seed: &str,
    steps: &str,
    te0: &str,
    y0: Option<&str>,
    y0_sigma: Option<&str>,
    settle: Option<&str>,
    start: Option<&str>,
    aging: Option<&str>,
    aging_model: &str,
    temp_coeff: Option<&str>,
    temp_swing: Option<&str>,
    model: Option<&str>,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<(String, String)> {
    use tauwise::holdover::{FromRecord, Settings};
    let rule = decision(decision_rule, conformance)?;
    check_plot(py, &record_file(&record), plot.as_deref())?;
    use tauwise::parse::{Fraction, Model, Rate};
    let span = parse_kw("span", span, Duration::positive_with_unit)?.seconds();
    let budget = parse_kw("budget", budget, Duration::positive_with_unit)?.seconds();
    let n_paths = parse_kw("paths", paths, tauwise::parse::count)?;
    let seed: u64 = whole("seed", seed)?;
    let steps = parse_kw("steps", steps, tauwise::parse::count)?;
    let te0 = parse_kw("te0", te0, Duration::with_unit)?.seconds();
    let y0 = parse_opt("y0", y0, from_str::<Fraction>)?;
    let y0_sigma = parse_opt("y0_sigma", y0_sigma, tauwise::parse::non_negative_fraction)?;
    let settle = parse_opt("settle", settle, Duration::positive_with_unit)?;
    let start = parse_opt("start", start, Duration::positive_with_unit)?.map(Duration::seconds);
    let aging = parse_opt("aging", aging, from_str::<Rate>)?;
    let aging_model = parse_kw(
        "aging_model",
        aging_model,
        from_str::<tauwise::holdover::aging::AgingModel>,
    )?;
    let temp_coeff = parse_opt("temp_coeff", temp_coeff, tauwise::parse::temp_coeff)?;
    let temp_swing = parse_opt("temp_swing", temp_swing, tauwise::parse::temp_swing)?;
    let model = parse_opt("model", model, from_str::<Model>)?;
    if y0_sigma.is_some() && y0.is_none() {
        return Err(PyValueError::new_err(
            "y0_sigma goes with y0 (the uncertainty of a given starting frequency)",
        ));
    }
    let temp_worst = match (temp_coeff, temp_swing) {
        (Some(c), Some(s)) => (c * s).abs(),
        (None, None) => 0.0,
        _ => {
            return Err(PyValueError::new_err(
                "temp_coeff and temp_swing go together (the worst frequency excursion is their product)",
            ))
        }
    };
    if y0.is_some() && settle.is_some() {
        return Err(PyValueError::new_err(
            "settle: sets the window for the y0 estimated on the record; with y0 it has no use",
        ));
    }
    let (rec, rpath) = (&record.record, record.path.as_str());
    let (body, gate) = py
        .detach(|| -> tauwise::Result<_> {
            let tau0 = rec.tau0();
            let opts = FromRecord {
                te0,
                settle: settle.map(Duration::seconds),
                start,
                aging_model,
                aging_given: aging.map(Rate::per_second),
                temp_worst,
                noise: model.map(|m| m.power_law(0.5 / tau0)),
                y0_given: y0.map(|y0| (y0.value(), y0_sigma.map_or(0.0, Fraction::value))),
                seed,
                ..FromRecord::default()
            };
            let settings = Settings {
                paths: n_paths,
                seed,
                steps,
                decision: rule,
                ..Settings::new(span, budget)
            };
            // The one library function `tauwise holdover` calls per record.
            let r = tauwise::holdover::record_holdover(rec, &opts, &settings)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE` for one record.
                let chart = tauwise::plot::holdover::HoldoverPlot::from_prediction(
                    rpath,
                    &r.prediction,
                    span,
                    budget,
                    vec![tauwise::holdover::caution()],
                )
                .with_observed(r.observed.as_ref())
                .chart();
                tauwise::plot::render(&chart, path, tauwise::plot::DEFAULT_SIZE)?;
            }
            let (body, pred) = (r.body, r.prediction);
            Ok((body, tauwise::verdict::gate([&pred.judgement])))
        })
        .py(py)?;
    Ok((document(py, record.input_for(rec), body)?, gate_word(gate)))
}

// ---------------------------------------------------------------------------
// simulate

/// `tauwise simulate`: a seeded power-law noise record (Kasdin & Walter
/// 1992), as a record; with `out`, also the file the command writes.
#[pyfunction]
#[pyo3(signature = (model, tau0, points, seed, data, offset=None, drift=None, out=None,
    units=None, carrier=None))]
#[allow(clippy::too_many_arguments)]
fn simulate(
    py: Python<'_>,
    model: &str,
    tau0: &str,
    points: &str,
    seed: &str,
    data: &str,
    offset: Option<&str>,
    drift: Option<&str>,
    out: Option<PathBuf>,
    units: Option<&str>,
    carrier: Option<&str>,
) -> PyResult<PyRecord> {
    use tauwise::parse::{Fraction, Model, Rate};
    use tauwise::simulate::{simulate_frequency, simulate_phase, SimSpec};
    use tauwise::units::{FreqUnit, PhaseUnit, ValueUnit};
    let parsed = parse_kw("model", model, from_str::<Model>)?;
    let tau0 = parse_kw("tau0", tau0, Duration::positive)?.seconds();
    let points = parse_kw("points", points, tauwise::parse::points)?;
    let seed: u64 = whole("seed", seed)?;
    let offset = parse_opt("offset", offset, from_str::<Fraction>)?;
    let drift = parse_opt("drift", drift, from_str::<Rate>)?;
    let units = parse_opt("units", units, tauwise::units::parse_value_unit)?;
    let carrier = parse_opt("carrier", carrier, Frequency::positive)?.map(Frequency::hertz);
    let phase = match data {
        "phase" => true,
        "freq" | "frequency" => false,
        other => {
            return Err(PyValueError::new_err(format!(
                "data='{other}': expected \"phase\" or \"freq\""
            )))
        }
    };
    let power_law = parsed.power_law(0.5 / tau0);
    if let Some(fh) = parsed.f_h {
        let uses_fh = power_law.get(2) > 0.0 || power_law.get(1) > 0.0;
        if uses_fh && (fh - 0.5 / tau0).abs() > 1e-9 * (0.5 / tau0) {
            return Err(PyValueError::new_err(format!(
                "model: fh = {fh} Hz, but the synthesised record has bandwidth f_h = 1/(2τ0) = {} Hz: omit fh or set it to 1/(2τ0)",
                0.5 / tau0
            )));
        }
    }
    let unit = units.unwrap_or(if phase {
        ValueUnit::Phase(PhaseUnit::S)
    } else {
        ValueUnit::Freq(FreqUnit::Frac)
    });
    match (phase, unit) {
        (true, ValueUnit::Freq(_)) => return Err(PyValueError::new_err(
            "units: a frequency unit, but data=\"phase\" writes phase: use one of s ms us ns ps",
        )),
        (false, ValueUnit::Phase(_)) => return Err(PyValueError::new_err(
            "units: a phase unit, but data=\"freq\" writes frequency: use one of frac ppm ppb hz",
        )),
        (false, ValueUnit::Freq(FreqUnit::Hz)) if !carrier.is_some_and(|c| c > 0.0) => {
            return Err(PyValueError::new_err(
                "units=\"hz\" writes absolute frequency and needs carrier (e.g. \"10MHz\")",
            ))
        }
        _ => {}
    }
    if let Some(o) = &out {
        tauwise::io::output_paths::check_output_paths(&[], &[Some(o.as_path())]).py(py)?;
    }
    let mut spec = SimSpec::new(power_law, tau0, points, seed);
    if let Some(o) = offset {
        spec.freq_offset = o.value();
    }
    if let Some(d) = drift {
        spec.drift_per_s = d.per_second();
    }
    let record = py
        .detach(|| -> tauwise::Result<tauwise::Record> {
            Ok(if phase {
                tauwise::Record::Phase(simulate_phase(&spec)?)
            } else {
                tauwise::Record::Frequency(simulate_frequency(&spec)?)
            })
        })
        .py(py)?;
    let path = match &out {
        Some(o) => {
            let command = vec![format!(
                "python: tauwise.simulate(model={model:?}, tau0={tau0}, points={points}, seed={seed}, data={data:?})"
            )];
            let bytes = tauwise::results::simulated_file(&spec, &record, unit, carrier, &command)
                .map_err(|e| {
                PyValueError::new_err(format!("could not write the record: {e}"))
            })?;
            tauwise::io::write_atomic(o, &bytes).py(py)?;
            o.display().to_string()
        }
        None => "<simulated>".to_string(),
    };
    Ok(PyRecord::of_record(record, &path))
}

// ---------------------------------------------------------------------------
// convert

/// `tauwise convert`: between L(f) tables, models and σ(τ).
#[pyfunction]
#[pyo3(signature = (to, lf=None, model=None, sigma=None, quantity=None, carrier=None,
    dev="adev,mdev", taus="octave", max_tau=None, tau0=None, fh=None, from_offset="1",
    to_offset=None, per_decade="10"))]
#[allow(clippy::too_many_arguments)]
fn convert(
    py: Python<'_>,
    to: &str,
    lf: Option<PathBuf>,
    model: Option<&str>,
    sigma: Option<PathBuf>,
    quantity: Option<&str>,
    carrier: Option<&str>,
    dev: &str,
    taus: &str,
    max_tau: Option<&str>,
    tau0: Option<&str>,
    fh: Option<&str>,
    from_offset: &str,
    to_offset: Option<&str>,
    per_decade: &str,
) -> PyResult<String> {
    use tauwise::deviation::Origin;
    use tauwise::io::lf_table::{read_lf_table, TableOptions, TableQuantity};
    use tauwise::parse::Model;
    use tauwise::results::{ConvertSource as Source, FittedModel, LfBody, SigmaBody};
    #[derive(PartialEq)]
    enum Target {
        Sigma,
        Lf,
        Model,
    }
    let target = match to {
        "sigma" => Target::Sigma,
        "lf" => Target::Lf,
        "model" => Target::Model,
        other => {
            return Err(PyValueError::new_err(format!(
                "to='{other}': expected \"sigma\", \"lf\" or \"model\""
            )))
        }
    };
    let model = parse_opt("model", model, from_str::<Model>)?;
    let quantity = parse_opt("quantity", quantity, TableQuantity::parse)?;
    let carrier = parse_opt("carrier", carrier, Frequency::positive)?.map(Frequency::hertz);
    let estimators = parse_kw("dev", dev, from_str::<tauwise::parse::EstimatorList>)?.0;
    let grid = parse_kw("taus", taus, tauwise::tau::TauGrid::parse)?;
    let max_tau = parse_opt("max_tau", max_tau, Duration::positive)?.map(Duration::seconds);
    let tau0 = parse_opt("tau0", tau0, Duration::positive)?.map(Duration::seconds);
    let fh = parse_opt("fh", fh, Frequency::positive)?.map(Frequency::hertz);
    let from = parse_kw("from_offset", from_offset, Frequency::positive)?.hertz();
    let to_offset = parse_opt("to_offset", to_offset, Frequency::positive)?.map(Frequency::hertz);
    let per_decade = parse_kw("per_decade", per_decade, tauwise::parse::count)?;
    let given = [lf.is_some(), model.is_some(), sigma.is_some()];
    if given.iter().filter(|g| **g).count() != 1 {
        return Err(PyValueError::new_err(
            "give exactly one source: lf (a phase-noise table), model (h_α notation) or sigma (a stability JSON document)",
        ));
    }
    let needs_carrier =
        lf.is_some() && quantity.is_some_and(|q| q != TableQuantity::Sy) || target == Target::Lf;
    if needs_carrier && carrier.is_none() {
        return Err(PyValueError::new_err(
            "carrier: this conversion needs the carrier frequency: give carrier (e.g. carrier=\"10MHz\")",
        ));
    }
    let (input, text_body) = py
        .detach(|| -> tauwise::Result<(Input, ConvertBody)> {
            let src = if let Some(path) = &lf {
                let t = read_lf_table(
                    path,
                    &TableOptions {
                        quantity,
                        carrier,
                        ..Default::default()
                    },
                )?;
                if t.quantity != TableQuantity::Sy && carrier.is_none() {
                    return Err(tauwise::Error::option(
                        "carrier",
                        "this conversion needs the carrier frequency: give carrier (e.g. carrier=\"10MHz\")",
                    ));
                }
                Source::table(t, fh)
            } else {
                let parsed = match (&sigma, model) {
                    (Some(path), _) => tauwise::results::model_from_stability(path, fh)?,
                    (None, Some(m)) => m.power_law(f64::NAN),
                    (None, None) => unreachable!("one source is given (checked above)"),
                };
                Source::of_model(parsed, fh, carrier, max_tau, sigma.as_deref())?
            };
            let input = src.input.clone();
            let body = match target {
                Target::Sigma => {
                    let origin = match lf {
                        Some(_) => Origin::FromLf,
                        None => Origin::FromModel,
                    };
                    // The one library function `tauwise convert --to sigma` calls.
                    let range = (tau0, max_tau);
                    let b = SigmaBody::compute(&src, &estimators, &grid, range, carrier, origin)?;
                    ConvertBody::Sigma(b)
                }
                Target::Lf => {
                    // The one library function `tauwise convert --to lf` calls.
                    let (m, sig) = (model.as_ref(), sigma.as_deref());
                    let range = (from, to_offset);
                    ConvertBody::Lf(LfBody::compute(&src, m, sig, carrier, range, per_decade)?.0)
                }
                Target::Model => {
                    ConvertBody::Model(FittedModel::of_spectrum(&src.spectrum, carrier, src.f_h)?.0)
                }
            };
            Ok((input, body))
        })
        .py(py)?;
    match text_body {
        ConvertBody::Sigma(b) => document(py, input, b),
        ConvertBody::Lf(b) => document(py, input, b),
        ConvertBody::Model(b) => document(py, input, b),
    }
}

/// The three documents of `convert`.
enum ConvertBody {
    Sigma(tauwise::results::SigmaBody),
    Lf(tauwise::results::LfBody),
    Model(tauwise::results::FittedModel),
}

// ---------------------------------------------------------------------------
// jitter

/// `tauwise jitter TABLE` (or `--record FILE`): integrated phase jitter
/// over bands of an L(f) table or of a record's Welch spectrum; returns
/// (document, gate, the spectrum's warnings).
#[pyfunction]
#[pyo3(signature = (table, record, carrier, bands, quantity=None, value_column=None,
    filters=Vec::new(), filter_files=Vec::new(), filter_set=None, period=false, periods=None,
    spurs=None, ui_rate=None, spur_search=true, spur_threshold=None, extrapolate=false,
    limits=Vec::new(), limit_files=Vec::new(), window="hann", segment=None,
    decision_rule=None, conformance=None, plot=None))]
#[allow(clippy::too_many_arguments)]
fn jitter(
    py: Python<'_>,
    table: Option<PathBuf>,
    record: Option<PyRef<'_, PyRecord>>,
    carrier: &str,
    bands: Vec<String>,
    quantity: Option<&str>,
    value_column: Option<&str>,
    filters: Vec<String>,
    filter_files: Vec<String>,
    filter_set: Option<PathBuf>,
    period: bool,
    periods: Option<&str>,
    spurs: Option<PathBuf>,
    ui_rate: Option<&str>,
    spur_search: bool,
    spur_threshold: Option<&str>,
    extrapolate: bool,
    limits: Vec<String>,
    limit_files: Vec<String>,
    window: &str,
    segment: Option<&str>,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<(String, String, Vec<String>)> {
    use tauwise::io::filter_set::assemble_weightings;
    use tauwise::io::lf_table::{read_lf_table, read_spurs, TableOptions, TableQuantity};
    use tauwise::parse::Filter;
    use tauwise::results::{JitterBody, JitterRequest, JitterTrace};
    use tauwise::spectrum::jitter::{
        record_period_jitter, Band, JitterLimit, JitterSetup, PeriodRequest,
    };
    use tauwise::spectrum::spurs::{threshold_db, SpurRule};
    use tauwise::spectrum::welch::{WelchOptions, Window};
    let rule = decision(decision_rule, conformance)?;
    let carrier = parse_kw("carrier", carrier, Frequency::positive)?.hertz();
    let value_column: Option<usize> = value_column.map(|v| whole("value_column", v)).transpose()?;
    let periods: Option<u32> = periods.map(|v| whole("periods", v)).transpose()?;
    if bands.is_empty() && limit_files.is_empty() {
        return Err(PyValueError::new_err(
            "bands: give at least one band FROM:TO (e.g. \"12k:5M\"), or a limit file",
        ));
    }
    let band_names = bands.clone();
    let bands = bands
        .iter()
        .map(|b| parse_kw("bands", b, Band::parse))
        .collect::<PyResult<Vec<_>>>()?;
    let quantity = parse_opt("quantity", quantity, TableQuantity::parse)?;
    let filters = filters
        .iter()
        .map(|f| parse_kw("filters", f, from_str::<Filter>))
        .collect::<PyResult<Vec<_>>>()?;
    let limits = limits
        .iter()
        .map(|l| parse_kw("limits", l, JitterLimit::parse))
        .collect::<PyResult<Vec<_>>>()?;
    let ui_rate = parse_opt("ui_rate", ui_rate, Frequency::positive)?.map(Frequency::hertz);
    let spur_threshold = parse_opt("spur_threshold", spur_threshold, threshold_db)?;
    let window = parse_kw("window", window, Window::parse)?;
    let segment = parse_opt("segment", segment, tauwise::parse::count)?;
    if periods == Some(0) {
        return Err(PyValueError::new_err(
            "periods=0: expected a whole number of periods, at least 1",
        ));
    }
    match (&table, &record) {
        (Some(_), Some(_)) => {
            return Err(PyValueError::new_err(
                "give a phase-noise table or a record, not both",
            ))
        }
        (None, None) => {
            return Err(PyValueError::new_err(
                "give a phase-noise table, or record= (a record, file or array) for its Welch spectrum",
            ))
        }
        (None, Some(_)) if !limit_files.is_empty() => {
            return Err(PyValueError::new_err(
                "limit_files: L(f) limits are checked against a phase-noise table, not a record's spectrum",
            ))
        }
        (None, Some(_)) if quantity.is_some() || value_column.is_some() => {
            return Err(PyValueError::new_err(
                "quantity and value_column go with a phase-noise table; a record is read with the reading options",
            ))
        }
        _ => {}
    }
    let record = record.as_deref();
    let filter_files = paths(&filter_files);
    let limit_files = paths(&limit_files);
    {
        let mut ins: Vec<&Path> = table.iter().map(PathBuf::as_path).collect();
        ins.extend(record.map(record_file).unwrap_or_default());
        ins.extend(filter_files.iter().map(PathBuf::as_path));
        ins.extend(filter_set.as_deref());
        ins.extend(spurs.as_deref());
        ins.extend(limit_files.iter().map(PathBuf::as_path));
        check_plot(py, &ins, plot.as_deref())?;
    }
    let (input, body, gate, warnings) = py
        .detach(|| -> tauwise::Result<_> {
            let (limit_set, elsewhere) = tauwise::limits::read_for(&limit_files, "jitter")?;
            let (wfilters, filter_tables, filter_set_name) =
                assemble_weightings(&filters, &filter_files, filter_set.as_deref())?;
            let mut req = JitterRequest {
                bands,
                setup: JitterSetup {
                    filters: wfilters,
                    filter_tables,
                    extrapolate,
                    period: (period || periods.is_some()).then_some(PeriodRequest { periods }),
                    ..Default::default()
                },
                ui_rate,
                limits,
                spur_rule: spur_search.then(|| SpurRule {
                    threshold_db: spur_threshold.unwrap_or(SpurRule::default().threshold_db),
                    ..SpurRule::default()
                }),
                filter_set: filter_set_name,
                decision: rule,
            };
            if let Some(p) = &spurs {
                req.setup.spurs = read_spurs(p)?;
            }
            let (mut limit_checks, mut record_period, mut warnings) =
                (Vec::new(), None, Vec::new());
            let trace = match (&table, record) {
                (Some(table), _) => {
                    let t = read_lf_table(
                        table,
                        &TableOptions {
                            quantity,
                            offset_column: None,
                            value_column,
                            carrier: Some(carrier),
                        },
                    )?;
                    if !t.spurs.is_empty() && spurs.is_none() {
                        req.setup.spurs = t.spurs.clone();
                    }
                    limit_checks = tauwise::limits::check_lf_with(&t.spectrum, &limit_set, &rule)?;
                    JitterTrace::of_table(&t, table)
                }
                (None, Some(r)) => {
                    if req.setup.period.is_some() {
                        let x = as_phase(&r.record);
                        record_period = Some(record_period_jitter(&x.x, x.tau0, carrier, periods)?);
                    }
                    let welch = WelchOptions {
                        window,
                        segment,
                        overlap: 0.5,
                    };
                    let input = r.input_for(&r.record);
                    let (trace, w) =
                        JitterTrace::of_named_record(&r.record, input, &r.path, carrier, &welch)?;
                    warnings = w;
                    trace
                }
                (None, None) => unreachable!("one source is given (checked above)"),
            };
            // The one library function `tauwise jitter` calls per trace.
            let limits = tauwise::results::LimitsPart::new(limit_checks, elsewhere);
            let (body, judged) = JitterBody::compute(&trace, carrier, req, record_period, limits)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE`: L(f) with each band shaded.
                use tauwise::plot::phase_noise::{jitter_chart, TraceKind};
                let drawn: Vec<(&str, &tauwise::spectrum::jitter::BandJitter)> =
                    (band_names.iter().zip(&judged))
                        .filter_map(|(name, (r, _))| r.as_ref().ok().map(|r| (name.as_str(), r)))
                        .collect();
                let kind = match trace.welch {
                    None => TraceKind::Table,
                    Some(_) => TraceKind::RecordSpectrum,
                };
                let spurs = &body.found_spurs;
                let mut chart =
                    jitter_chart(&trace.source, carrier, &trace.drawn, kind, &drawn, spurs)?;
                tauwise::plot::limit_lines::add_limits(
                    &mut chart,
                    &limit_set,
                    tauwise::limits::ValueKind::DbcHz,
                );
                tauwise::plot::render(&chart, path, tauwise::plot::DEFAULT_SIZE)?;
            }
            let gate = tauwise::verdict::gate(
                (judged.iter().filter_map(|j| j.1.as_ref()))
                    .chain(tauwise::limits::judgements(&body.limits.limits)),
            );
            Ok((trace.input, body, gate, warnings))
        })
        .py(py)?;
    Ok((document(py, input, body)?, gate_word(gate), warnings))
}

// ---------------------------------------------------------------------------
// inspect

/// `tauwise inspect FILE`: how a file was read and what the record holds
/// (size, span, τ0, gaps, frequency offset, drift, outliers). Needs a record
/// read from a file (how it was read is half of the document).
#[pyfunction]
#[pyo3(signature = (record, outliers))]
fn inspect(py: Python<'_>, record: PyRef<'_, PyRecord>, outliers: &str) -> PyResult<String> {
    let limit = parse_kw("outliers", outliers, tauwise::parse::mad_limit)?;
    let Some(info) = &record.info else {
        return Err(PyValueError::new_err(format!(
            "inspect describes how a file was read, and {} was not read from a file: give the file's path (or a record from tauwise.read)",
            record.path
        )));
    };
    let rec = &record.record;
    let (input, body) = py
        .detach(|| -> tauwise::Result<_> {
            // `InspectBody` takes a whole `Series`: the record is copied
            // once here (inspect is not on the hot path).
            let series = Series {
                record: rec.clone(),
                info: info.clone(),
            };
            let summary = tauwise::prepare::summarize(&series.record, limit)?;
            let hints = tauwise::io::series::suggestions(&series);
            let body = tauwise::results::InspectBody::new(&series, &summary, &hints);
            Ok((Input::from(&series), body))
        })
        .py(py)?;
    document(py, input, body)
}

// ---------------------------------------------------------------------------
// prepare

/// `tauwise prepare FILE -o OUT`: a cleaned copy of a record (outliers made
/// gaps, drift removed, gaps filled, decimated), with the notes of what was
/// done; with `out`, also the file the command writes, byte for byte.
#[pyfunction]
#[pyo3(signature = (record, out=None, remove_drift=None, outliers=None, fill_gaps=false,
    decimate=None))]
fn prepare(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    out: Option<PathBuf>,
    remove_drift: Option<&str>,
    outliers: Option<&str>,
    fill_gaps: bool,
    decimate: Option<&str>,
) -> PyResult<PyRecord> {
    use tauwise::io::record_file::Start;
    use tauwise::prepare::pipeline::{prepare as run_steps, Steps};
    let drift = parse_opt(
        "remove_drift",
        remove_drift,
        from_str::<tauwise::prepare::DriftModel>,
    )?;
    let outliers = parse_opt("outliers", outliers, tauwise::parse::mad_limit)?;
    let decimate = parse_opt("decimate", decimate, tauwise::parse::count)?;
    if let Some(o) = &out {
        let ins: Vec<&Path> = record
            .info
            .as_ref()
            .map(|i| i.path.as_path())
            .into_iter()
            .collect();
        tauwise::io::output_paths::check_output_paths(&ins, &[Some(o.as_path())]).py(py)?;
    }
    let info = record.info.as_ref();
    let (rec, rpath) = (&record.record, record.path.as_str());
    let (prepared, notes) = py
        .detach(|| -> tauwise::Result<_> {
            let inserted = info.map_or(0, |i| i.inserted_gaps);
            let mut notes = tauwise::results::PrepareNotes::read(rpath, rec, inserted);
            let steps = Steps {
                outliers,
                drift,
                fill_gaps,
            };
            let done = run_steps(rec, &steps)?;
            notes.steps(&done, rec.kind());
            let mut prepared = done.record;
            if let Some(n) = decimate {
                let before = prepared.tau0();
                prepared = tauwise::prepare::decimate(&prepared, n)?;
                notes.decimated(n, before, &prepared);
            }
            if let Some(o) = &out {
                let start = match (
                    info.and_then(|i| i.start_unix),
                    info.and_then(|i| i.start_time),
                ) {
                    (Some((s, ns)), _) => Start::DateTime(s, ns),
                    (None, Some(t)) => Start::Seconds(t),
                    (None, None) => Start::Seconds(0.0),
                };
                let bytes = notes.record_file(&prepared, start).map_err(|e| {
                    tauwise::Error::invalid(format!("could not write the record: {e}"))
                })?;
                tauwise::io::write_atomic(o, &bytes)?;
            }
            Ok((prepared, notes))
        })
        .py(py)?;
    let path = match &out {
        Some(o) => o.display().to_string(),
        None => "<prepared>".to_string(),
    };
    let mut r = PyRecord::of_record(prepared, &path);
    r.notes = notes.0;
    Ok(r)
}

// ---------------------------------------------------------------------------
// separate

/// A pair `CLOCK,CLOCK=FILE` parsed as the command line's `--pair`:
/// (first clock, second clock, file).
#[pyfunction]
fn pair_spec(text: &str) -> PyResult<(String, String, String)> {
    let p = parse_kw("pairs", text, from_str::<tauwise::separate::PairSpec>)?;
    Ok((p.a, p.b, p.path.display().to_string()))
}

/// `tauwise separate --pair A,B=FILE …`: the stability of each clock from
/// records of pairs measured against each other (three-cornered hat, least
/// squares, or the covariance form).
#[pyfunction]
#[pyo3(signature = (pairs, dev, method, sessions, seed, taus, confidence, remove_drift=None,
    plot=None))]
#[allow(clippy::too_many_arguments)]
fn separate(
    py: Python<'_>,
    pairs: Vec<(String, String, PyRef<'_, PyRecord>)>,
    dev: &str,
    method: &str,
    sessions: &str,
    seed: &str,
    taus: &str,
    confidence: &str,
    remove_drift: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<String> {
    use tauwise::results::{PairInputs, SeparateBody};
    use tauwise::separate::{align, separate as run, Method, PairRecord, PairSpec, Request};
    let estimator = parse_kw("dev", dev, tauwise::separate::estimator_named)?;
    let method = parse_kw("method", method, from_str::<Method>)?;
    let simultaneous = parse_kw(
        "sessions",
        sessions,
        tauwise::separate::simultaneous_sessions,
    )?;
    let seed: u64 = whole("seed", seed)?;
    let grid = parse_kw("taus", taus, tauwise::tau::TauGrid::parse)?;
    let confidence = parse_kw("confidence", confidence, from_str::<Probability>)?.value();
    let drift = parse_opt(
        "remove_drift",
        remove_drift,
        from_str::<tauwise::prepare::DriftModel>,
    )?;
    if pairs.len() < 3 {
        return Err(PyValueError::new_err(format!(
            "pairs: {} pair(s) given: separating clocks needs at least three (A,B A,C B,C)",
            pairs.len()
        )));
    }
    // The clock names are checked by the command line's `--pair` parser.
    for (a, b, r) in &pairs {
        parse_kw(
            "pairs",
            &format!("{a},{b}={}", r.path),
            from_str::<PairSpec>,
        )?;
    }
    let pairs: Vec<(&String, &String, &PyRecord)> =
        pairs.iter().map(|(a, b, r)| (a, b, &**r)).collect();
    {
        let ins: Vec<&Path> = pairs.iter().flat_map(|p| record_file(p.2)).collect();
        check_plot(py, &ins, plot.as_deref())?;
    }
    let (input, body) = py
        .detach(|| -> tauwise::Result<_> {
            let (mut records, mut read) = (Vec::new(), Vec::new());
            for (a, b, r) in &pairs {
                let processed = drift_removed(&r.record, drift)?;
                match r.input_for(&processed) {
                    Input::Record(ri) => read.push(ri),
                    _ => unreachable!("a record's input is a record"),
                }
                records.push(PairRecord {
                    a: a.to_string(),
                    b: b.to_string(),
                    source: r.path.clone(),
                    record: as_phase(&processed).into_owned(),
                    start: r.start_time(),
                });
            }
            let records = align(records)?;
            let request = Request {
                estimator,
                grid,
                confidence,
                method,
                seed,
                draws: tauwise::separate::DEFAULT_DRAWS,
                simultaneous,
            };
            let sep = run(&records, &request)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE`.
                let title = format!("{} clocks from {} pairs", sep.clocks.len(), sep.pairs.len());
                let chart = tauwise::plot::separate::chart(&sep, &title);
                tauwise::plot::render(&chart, path, tauwise::plot::DEFAULT_SIZE)?;
            }
            let input = Input::Pairs(PairInputs {
                data: "pairs",
                records: read,
            });
            Ok((input, SeparateBody::new(&sep, confidence)))
        })
        .py(py)?;
    document(py, input, body)
}

// ---------------------------------------------------------------------------
// timeline

/// `tauwise timeline FILE --window W --step S`: σ(τ) in a window sliding
/// along the record (dynamic Allan variance) and the windows that depart
/// from the whole record.
#[pyfunction]
#[pyo3(signature = (record, window, step, dev, taus, confidence, event_confidence,
    remove_drift=None, plot=None))]
#[allow(clippy::too_many_arguments)]
fn timeline(
    py: Python<'_>,
    record: PyRef<'_, PyRecord>,
    window: &str,
    step: &str,
    dev: &str,
    taus: &str,
    confidence: &str,
    event_confidence: &str,
    remove_drift: Option<&str>,
    plot: Option<PathBuf>,
) -> PyResult<String> {
    use tauwise::timeline::{timeline as run, window_and_step, Request};
    check_plot(py, &record_file(&record), plot.as_deref())?;
    let window = parse_kw("window", window, Duration::positive_with_unit)?.seconds();
    let step = parse_kw("step", step, Duration::positive_with_unit)?.seconds();
    let estimator = parse_kw("dev", dev, tauwise::timeline::estimator_named)?;
    let grid = parse_kw("taus", taus, tauwise::tau::TauGrid::parse)?;
    let confidence = parse_kw("confidence", confidence, from_str::<Probability>)?.value();
    let event_confidence = parse_kw(
        "event_confidence",
        event_confidence,
        from_str::<Probability>,
    )?
    .value();
    let drift = parse_opt(
        "remove_drift",
        remove_drift,
        from_str::<tauwise::prepare::DriftModel>,
    )?;
    let me: &PyRecord = &record;
    let rec = &me.record;
    let (input, body) = py
        .detach(|| -> tauwise::Result<_> {
            let processed = drift_removed(rec, drift)?;
            let phase = as_phase(&processed);
            let (window, step) = window_and_step(&phase, ("window", window), ("step", step))?;
            let request = Request {
                estimator,
                grid,
                window,
                step,
                confidence,
                event_confidence,
            };
            let t = run(&phase, &request)?;
            if let Some(path) = &plot {
                // The command's `--plot FILE`.
                tauwise::plot::timeline::render(&t, &me.path, path)?;
            }
            let body = tauwise::results::TimelineBody::new(&t, confidence, event_confidence);
            Ok((me.input_for(&processed), body))
        })
        .py(py)?;
    document(py, input, body)
}

// ---------------------------------------------------------------------------
// report, fleet

/// Read DUT files as `tauwise report` does.
fn read_dut_files(paths: &[PathBuf]) -> tauwise::Result<Vec<tauwise::io::dut::Dut>> {
    let quick = tauwise::report::duts::QuickForm {
        name: None,
        lf: None,
        options: SeriesOptions::default(),
    };
    tauwise::report::duts::read_duts(paths, &quick, false)
}

/// The report's options: the confidence and the decision rule's parts
/// given (a DUT file's `decision_rule` and `conformance` apply where a
/// part is not given, as on the command line).
fn build_options(
    confidence: f64,
    decision: (Option<tauwise::decision::Rule>, Option<f64>),
) -> tauwise::report::build::BuildOptions {
    tauwise::report::build::BuildOptions {
        confidence,
        decision_rule: decision.0,
        conformance: decision.1,
        ..Default::default()
    }
}

/// `tauwise report DUT.toml… -o OUT`: the HTML report (one DUT file) or the
/// comparison (several), written atomically to `out` when given; returns
/// (the verdict matrix document of `report --format json`, gate).
#[pyfunction]
#[pyo3(signature = (duts, out, confidence, decision_rule=None, conformance=None))]
fn report(
    py: Python<'_>,
    duts: Vec<String>,
    out: Option<PathBuf>,
    confidence: &str,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
) -> PyResult<(String, String)> {
    let confidence = parse_kw("confidence", confidence, from_str::<Probability>)?.value();
    let rule = decision_parts(decision_rule, conformance)?;
    let inputs = paths(&duts);
    let (json, gate) = py
        .detach(|| -> tauwise::Result<_> {
            let duts = read_dut_files(&inputs)?;
            let ins: Vec<&Path> = duts
                .iter()
                .flat_map(tauwise::report::duts::dut_inputs)
                .collect();
            tauwise::io::output_paths::check_output_paths(&ins, &[out.as_deref()])?;
            let opts = build_options(confidence, rule);
            let fleet = tauwise::report::fleet::build(&duts, &opts, &|_, _, _, _| {})?;
            let gate = tauwise::verdict::gate(
                fleet
                    .reports
                    .iter()
                    .flat_map(|r| r.verdicts.iter().map(|v| &v.judgement)),
            );
            if let Some(o) = &out {
                let html = if duts.len() == 1 {
                    tauwise::report::render_html(&fleet.reports[0])?
                } else {
                    tauwise::report::fleet::render_html(&fleet)?
                };
                tauwise::io::write_atomic(o, html.as_bytes())?;
            }
            let (json, _) = FleetDocument::new(fleet.matrix.clone()).json()?;
            Ok((json, gate))
        })
        .py(py)?;
    Ok((json, gate_word(gate)))
}

/// One device's part of a verdict matrix: the matrix of its report alone
/// ([`FleetMatrix::build`]), small and picklable (MessagePack of the
/// library's serde type), so that a distributed engine can compute devices
/// on many machines and gather them into the matrix of the whole fleet
/// ([`FleetMatrix::combine`]).
#[pyclass(module = "tauwise._tauwise", name = "DevicePart", frozen)]
pub struct DevicePart {
    matrix: FleetMatrix,
}

#[pymethods]
impl DevicePart {
    /// The device's name (from its DUT file).
    #[getter]
    fn name(&self) -> String {
        self.matrix
            .devices
            .first()
            .map(|d| d.name.clone())
            .unwrap_or_default()
    }

    /// The DUT file.
    #[getter]
    fn dut(&self) -> String {
        self.matrix
            .devices
            .first()
            .map(|d| d.dut.clone())
            .unwrap_or_default()
    }

    /// The one-device matrix as the JSON document of `report --format json`.
    fn json(&self, py: Python<'_>) -> PyResult<String> {
        Ok(FleetDocument::new(self.matrix.clone()).json().py(py)?.0)
    }

    /// The state for pickle: MessagePack of the library's matrix type.
    fn to_bytes<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyBytes>> {
        let b = rmp_serde::to_vec_named(&self.matrix)
            .map_err(|e| PyValueError::new_err(format!("could not encode the device: {e}")))?;
        Ok(PyBytes::new(py, &b))
    }

    /// The part from [`DevicePart::to_bytes`].
    #[staticmethod]
    fn from_bytes(b: &[u8]) -> PyResult<Self> {
        let matrix: FleetMatrix = rmp_serde::from_slice(b).map_err(|e| {
            PyValueError::new_err(format!(
                "not a tauwise device part (from DevicePart.to_bytes of this version): {e}"
            ))
        })?;
        Ok(Self { matrix })
    }

    fn __reduce__<'py>(
        slf: &Bound<'py, Self>,
        py: Python<'py>,
    ) -> PyResult<(Bound<'py, PyAny>, (Bound<'py, PyBytes>,))> {
        let ctor = slf.get_type().getattr("from_bytes")?;
        Ok((ctor, (slf.get().to_bytes(py)?,)))
    }
}

/// One device of a fleet: its report built from its DUT file (the same
/// path as `tauwise report`), reduced to its part of the verdict matrix.
#[pyfunction]
#[pyo3(signature = (dut, confidence, decision_rule=None, conformance=None))]
fn device(
    py: Python<'_>,
    dut: PathBuf,
    confidence: &str,
    decision_rule: Option<&str>,
    conformance: Option<&str>,
) -> PyResult<DevicePart> {
    let confidence = parse_kw("confidence", confidence, from_str::<Probability>)?.value();
    let rule = decision_parts(decision_rule, conformance)?;
    let matrix = py
        .detach(|| -> tauwise::Result<_> {
            let duts = read_dut_files(std::slice::from_ref(&dut))?;
            let d = &duts[0];
            let r = tauwise::report::build::from_dut(d, &build_options(confidence, rule))?;
            Ok(FleetMatrix::build(&[(&r, d.file.display().to_string())]))
        })
        .py(py)?;
    Ok(DevicePart { matrix })
}

/// The verdict matrix of devices computed apart ([`FleetMatrix::combine`]),
/// as the JSON document of `report --format json`; returns (document, gate).
#[pyfunction]
fn fleet(py: Python<'_>, parts: Vec<PyRef<'_, DevicePart>>) -> PyResult<(String, String)> {
    let list: Vec<FleetMatrix> = parts.iter().map(|p| p.matrix.clone()).collect();
    let m = FleetMatrix::combine(&list).py(py)?;
    let gate = m
        .devices
        .iter()
        .map(|d| d.gate)
        .max_by_key(|g| match g {
            // The order `--fail-on-violation` reports them in.
            tauwise::verdict::Gate::Pass => 0,
            tauwise::verdict::Gate::Undecided => 1,
            tauwise::verdict::Gate::NotJudged => 2,
            tauwise::verdict::Gate::Exceeds => 3,
        })
        .unwrap_or(tauwise::verdict::Gate::Pass);
    let (json, _) = FleetDocument::new(m).json().py(py)?;
    Ok((json, gate_word(gate)))
}

/// The Rust side of the `tauwise` Python package.
#[pymodule]
fn _tauwise(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("__version__", tauwise::VERSION)?;
    m.add("DECISION_CAUTION", tauwise::DECISION_CAUTION)?;
    m.add("DEFAULT_CONFIDENCE", tauwise::stats::DEFAULT_CONFIDENCE)?;
    m.add(
        "DEFAULT_CONFORMANCE",
        tauwise::decision::DEFAULT_CONFORMANCE,
    )?;
    m.add("EVENT_CONFIDENCE", tauwise::timeline::EVENT_CONFIDENCE)?;
    m.add_class::<PyRecord>()?;
    m.add_class::<DevicePart>()?;
    m.add_function(wrap_pyfunction!(read, m)?)?;
    m.add_function(wrap_pyfunction!(stability, m)?)?;
    m.add_function(wrap_pyfunction!(noise, m)?)?;
    m.add_function(wrap_pyfunction!(spectrum, m)?)?;
    m.add_function(wrap_pyfunction!(wander, m)?)?;
    m.add_function(wrap_pyfunction!(holdover, m)?)?;
    m.add_function(wrap_pyfunction!(simulate, m)?)?;
    m.add_function(wrap_pyfunction!(convert, m)?)?;
    m.add_function(wrap_pyfunction!(jitter, m)?)?;
    m.add_function(wrap_pyfunction!(inspect, m)?)?;
    m.add_function(wrap_pyfunction!(prepare, m)?)?;
    m.add_function(wrap_pyfunction!(pair_spec, m)?)?;
    m.add_function(wrap_pyfunction!(separate, m)?)?;
    m.add_function(wrap_pyfunction!(timeline, m)?)?;
    m.add_function(wrap_pyfunction!(report, m)?)?;
    m.add_function(wrap_pyfunction!(device, m)?)?;
    m.add_function(wrap_pyfunction!(fleet, m)?)?;
    Ok(())
}
