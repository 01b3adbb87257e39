//! The DUT file: one TOML file that says everything tauwise needs to know
//! about a device under test — its name and carrier, its time records, L(f)
//! tables and TIE captures, the jitter bands, wander masks and holdover
//! spans to judge it by. The schema is ours and is documented in
//! `docs/dut-file.md`.
//!
//! Reading is strict: unknown keys, wrong types, bad units, references to
//! names that do not exist and missing files are errors that name the DUT
//! file, the line, the key (`record[2].tau0`) and, for files, the resolved
//! path. Paths are relative to the DUT file's directory (`..` is allowed).

use crate::io::{ReadCause, ReadError};
use crate::parse::{Duration, Filter, Fraction, Frequency, Rate};
use crate::prepare::pipeline::Steps;
use crate::prepare::DriftModel;
use crate::record::DataKind;
use crate::units::{self, ValueUnit};
use serde::Deserialize;
use std::path::{Path, PathBuf};
use toml::Spanned;

// ---------------------------------------------------------------- raw schema

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDut {
    device: RawDevice,
    #[serde(default)]
    record: Vec<RawSeries>,
    #[serde(default)]
    phase_noise: Vec<RawTable>,
    #[serde(default)]
    tie: Vec<RawSeries>,
    #[serde(default)]
    jitter: Vec<RawJitter>,
    wander: Option<RawWander>,
    holdover: Option<RawHoldover>,
    separate: Option<RawSeparate>,
    timeline: Option<RawTimeline>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeparate {
    dev: Option<Spanned<String>>,
    method: Option<Spanned<String>>,
    sessions: Option<Spanned<String>>,
    #[serde(default)]
    pair: Vec<RawPair>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPair {
    a: Spanned<String>,
    b: Spanned<String>,
    record: Spanned<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTimeline {
    record: Option<Spanned<String>>,
    window: Spanned<toml::Value>,
    step: Spanned<toml::Value>,
    dev: Option<Spanned<String>>,
    taus: Option<Spanned<String>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDevice {
    name: Spanned<String>,
    description: Option<String>,
    carrier: Option<Spanned<toml::Value>>,
    #[serde(default)]
    limit_files: Vec<Spanned<String>>,
    decision_rule: Option<Spanned<String>>,
    conformance: Option<Spanned<toml::Value>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSeries {
    name: Option<Spanned<String>>,
    path: Spanned<String>,
    data: Option<Spanned<String>>,
    tau0: Option<Spanned<toml::Value>>,
    units: Option<Spanned<String>>,
    value_column: Option<Spanned<i64>>,
    time_column: Option<Spanned<toml::Value>>,
    snap: Option<Spanned<toml::Value>>,
    wrap: Option<Spanned<toml::Value>>,
    comment: Option<Spanned<String>>,
    decimal_comma: Option<bool>,
    binary: Option<Spanned<String>>,
    drift: Option<Spanned<String>>,
    outliers: Option<Spanned<toml::Value>>,
    fill_gaps: Option<Spanned<bool>>,
    bandwidth: Option<Spanned<toml::Value>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTable {
    name: Option<Spanned<String>>,
    path: Spanned<String>,
    quantity: Option<Spanned<String>>,
    carrier: Option<Spanned<toml::Value>>,
    uncertainty: Option<Spanned<toml::Value>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawJitter {
    name: Option<Spanned<String>>,
    band: Spanned<String>,
    #[serde(default)]
    filters: Vec<Spanned<String>>,
    filter_file: Option<Spanned<String>>,
    filter_set: Option<Spanned<String>>,
    limit: Option<Spanned<toml::Value>>,
    ui_rate: Option<Spanned<toml::Value>>,
    source: Option<Spanned<String>>,
    period: Option<bool>,
    periods: Option<Spanned<i64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWander {
    #[serde(default)]
    masks: Vec<Spanned<String>>,
    #[serde(default)]
    mask_files: Vec<Spanned<String>>,
    source: Option<Spanned<String>>,
    remove_offset: Option<bool>,
    taus: Option<Spanned<String>>,
    tau_range: Option<Spanned<Vec<Spanned<toml::Value>>>>,
    te_filter: Option<Spanned<toml::Value>>,
    te: Option<bool>,
    cte_window: Option<Spanned<toml::Value>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawHoldover {
    budget: Spanned<toml::Value>,
    spans: Spanned<Vec<Spanned<toml::Value>>>,
    record: Option<Spanned<String>>,
    aging: Option<Spanned<toml::Value>>,
    te0: Option<Spanned<toml::Value>>,
    settle: Option<Spanned<toml::Value>>,
    paths: Option<Spanned<i64>>,
    seed: Option<u64>,
    y0: Option<Spanned<toml::Value>>,
    y0_sigma: Option<Spanned<toml::Value>>,
}

// ---------------------------------------------------------- resolved schema

/// A device under test, as read from its DUT file.
#[derive(Debug, Clone, PartialEq)]
pub struct Dut {
    /// The DUT file itself.
    pub file: PathBuf,
    /// Device name (free text; escape before putting it in HTML).
    pub name: String,
    /// Optional description.
    pub description: Option<String>,
    /// Carrier ν0 in Hz, when given.
    pub carrier: Option<f64>,
    /// Time records (phase or frequency against a reference).
    pub records: Vec<TimeSource>,
    /// Phase-noise tables.
    pub phase_noise: Vec<LfSource>,
    /// TIE captures (phase data).
    pub tie: Vec<TimeSource>,
    /// Jitter bands to integrate.
    pub jitter: Vec<JitterSpec>,
    /// Wander masks to check.
    pub wander: Option<WanderSpec>,
    /// Holdover question.
    pub holdover: Option<HoldoverSpec>,
    /// Clocks to separate from pair records (`[separate]`).
    pub separate: Option<SeparateSpec>,
    /// σ(τ) through a record (`[timeline]`).
    pub timeline: Option<TimelineSpec>,
    /// Limit files (`[device] limit_files`, docs/limit-file.md), resolved:
    /// their σ limits are checked on the first record, their L(f) limits
    /// on the first phase-noise table, their MTIE/TDEV limits with the
    /// `[wander]` masks.
    pub limit_files: Vec<PathBuf>,
    /// The decision rule of the device's verdicts (`[device]
    /// decision_rule`, `conformance`; docs/decision-rules.md); `None` when
    /// the file names neither (the command line's, or `simple`).
    pub decision: Option<crate::decision::DecisionRule>,
}

/// `[separate]`: the N-cornered hat on pair records named among the
/// `[[record]]` entries (each `[[separate.pair]]` gives `a`, `b` and the
/// `record` holding x_a − x_b).
#[derive(Debug, Clone, PartialEq)]
pub struct SeparateSpec {
    /// The estimator (`dev`, default oadev).
    pub estimator: crate::deviation::Estimator,
    /// The method (`method`: independent or covariance).
    pub method: crate::separate::Method,
    /// `sessions = "simultaneous"` (default) or `"separate"`.
    pub simultaneous: bool,
    /// (clock a, clock b, record name).
    pub pairs: Vec<(String, String, String)>,
}

/// `[timeline]`: σ(τ) in a sliding window over one record.
#[derive(Debug, Clone, PartialEq)]
pub struct TimelineSpec {
    /// The record's name (None: the first record).
    pub record: Option<String>,
    /// Window length (s).
    pub window: f64,
    /// Step (s).
    pub step: f64,
    /// The estimator (`dev`, default oadev).
    pub estimator: crate::deviation::Estimator,
    /// τ grid (None: octave).
    pub taus: Option<crate::tau::TauGrid>,
}

/// A time series file and how to read it.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeSource {
    /// Name used in the report and in references (default: the file name).
    pub name: String,
    /// Resolved path.
    pub path: PathBuf,
    /// Phase or frequency.
    pub data: DataKind,
    /// Sampling interval τ0 in seconds (None: from the timestamps).
    pub tau0: Option<f64>,
    /// Units of the values (None: seconds for phase, fractional for frequency).
    pub units: Option<ValueUnit>,
    /// 1-based value column.
    pub value_column: Option<usize>,
    /// 1-based time column.
    pub time_column: Option<usize>,
    /// No time column at all (`time_column = "none"`).
    pub no_time_column: bool,
    /// Round stamps to the τ0 grid when within this fraction of τ0.
    pub snap: Option<f64>,
    /// Unwrap phase readings that wrap at this period (s).
    pub wrap: Option<f64>,
    /// Extra comment characters.
    pub comments: String,
    /// A comma in a field is always the decimal mark.
    pub decimal_comma: bool,
    /// A raw binary file of this element type (`binary = "f64le"`), not
    /// text or `.npy`.
    pub binary: Option<crate::io::binary::BinaryFormat>,
    /// How the record is prepared before analysis (outliers, drift, gap
    /// filling; [`crate::prepare::pipeline`]). A `[[record]]` removes a
    /// linear drift unless its `drift` key says otherwise
    /// ([`RECORD_STEPS`]); a `[[tie]]` capture is analysed as read.
    pub prepare: Steps,
    /// The record's measurement bandwidth, Hz, when stated (`None`: the
    /// Nyquist frequency 1/(2τ0)).
    pub bandwidth: Option<f64>,
}

impl TimeSource {
    /// The reader options of this entry (those of the command line's
    /// reading options), with the device's carrier for `hz` units.
    pub fn series_options(&self, carrier: Option<f64>) -> crate::io::series::SeriesOptions {
        crate::io::series::SeriesOptions {
            kind: Some(self.data),
            unit: self.units,
            tau0: self.tau0,
            carrier,
            value_column: self.value_column,
            time_column: self.time_column,
            no_time_column: self.no_time_column,
            snap: self.snap,
            wrap: self.wrap,
            comments: self.comments.clone(),
            decimal_comma: self.decimal_comma,
            binary: self.binary,
        }
    }
}

/// The preparation of a `[[record]]` when its DUT entry says nothing: a
/// linear drift removed for the stability picture (aging would otherwise
/// read as random-walk FM), every sample kept, gaps left as gaps.
pub const RECORD_STEPS: Steps = Steps {
    outliers: None,
    drift: Some(DriftModel::Linear),
    fill_gaps: false,
};

/// What an L(f) table holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LfQuantity {
    /// L(f) in dBc/Hz.
    Lf,
    /// S_φ(f) in rad²/Hz.
    Sphi,
    /// S_φ(f) in dB rad²/Hz.
    SphiDb,
    /// S_y(f) in 1/Hz.
    Sy,
}

impl LfQuantity {
    /// The name used in DUT files and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            LfQuantity::Lf => "lf",
            LfQuantity::Sphi => "sphi",
            LfQuantity::SphiDb => "sphi-db",
            LfQuantity::Sy => "sy",
        }
    }
}

/// A phase-noise table file.
#[derive(Debug, Clone, PartialEq)]
pub struct LfSource {
    /// Name (default: the file name).
    pub name: String,
    /// Resolved path.
    pub path: PathBuf,
    /// What the table holds.
    pub quantity: LfQuantity,
    /// Carrier ν0 in Hz (the table's own, else the device's).
    pub carrier: f64,
    /// The table's own uncertainty in dB of L(f), when stated (`None`: the
    /// default of [`crate::stability::DEFAULT_TABLE_UNCERTAINTY_DB`]).
    pub uncertainty_db: Option<f64>,
}

/// A weighting of the jitter integral (Butterworth or loop), as the command
/// line's `--filter` reads it.
pub type WeightingFilter = crate::parse::Filter;

/// One jitter band.
#[derive(Debug, Clone, PartialEq)]
pub struct JitterSpec {
    /// Name (default: the band text).
    pub name: String,
    /// Lower offset (Hz).
    pub from: f64,
    /// Upper offset (Hz).
    pub to: f64,
    /// Weighting filters, applied together.
    pub filters: Vec<WeightingFilter>,
    /// Filter tables (|H(f)|² in dB against f), resolved paths: the
    /// `filter_file`, then those of the `filter_set`.
    pub filter_files: Vec<PathBuf>,
    /// The filter set file the weightings were partly taken from, and its name.
    pub filter_set: Option<(PathBuf, String)>,
    /// rms jitter limit, with its unit (time, phase or UI).
    pub limit: Option<crate::spectrum::jitter::JitterLimit>,
    /// Unit-interval rate (Hz) for jitter in UI.
    pub ui_rate: Option<f64>,
    /// Name of the phase-noise table to use (None: the first).
    pub source: Option<String>,
    /// Period and cycle-to-cycle jitter asked for (`period = true`, or
    /// `periods = N` for the jitter over N periods too), as `jitter
    /// --period` / `--periods N`.
    pub period: Option<crate::spectrum::jitter::PeriodRequest>,
}

/// The wander check.
#[derive(Debug, Clone, PartialEq)]
pub struct WanderSpec {
    /// Built-in mask names (checked by the wander layer).
    pub masks: Vec<String>,
    /// User mask files, resolved.
    pub mask_files: Vec<PathBuf>,
    /// Name of the TIE capture or record to use (None: the first TIE
    /// capture, else the first record).
    pub source: Option<String>,
    /// Remove a constant frequency offset before the analysis.
    pub remove_offset: bool,
    /// τ grid (`taus = "log:20"`); None: the wander default over the whole
    /// record.
    pub taus: Option<crate::tau::TauGrid>,
    /// Only τ in this range (s): `tau_range = ["1s", "3h"]`.
    pub tau_range: Option<(f64, f64)>,
    /// Measurement filter on the time-error record (`te_filter =
    /// "lowpass:0.1Hz"`, as `wander --te-filter`).
    pub te_filter: Option<crate::wander::te::filter::MeasurementFilter>,
    /// Time-error metrics (`te = true`, as `wander --te`), with the cTE
    /// window (`cte_window = "1000s"`, as `--cte-window`).
    pub te: Option<crate::wander::te::TeOptions>,
}

/// The holdover question.
#[derive(Debug, Clone, PartialEq)]
pub struct HoldoverSpec {
    /// Time-error budget (s).
    pub budget: f64,
    /// Holdover spans to judge (s), in the order given.
    pub spans: Vec<f64>,
    /// Record to predict from (None: the first record).
    pub record: Option<String>,
    /// Aging D in fractional frequency per second (None: fitted).
    pub aging: Option<f64>,
    /// Initial time error (s).
    pub te0: Option<f64>,
    /// Window at the end of the record for the initial frequency (s).
    pub settle: Option<f64>,
    /// Monte Carlo paths.
    pub paths: Option<usize>,
    /// Seed.
    pub seed: Option<u64>,
    /// Fractional-frequency error at the start of holdover, when given
    /// (instead of the record's end).
    pub y0: Option<f64>,
    /// Standard uncertainty of the given y0.
    pub y0_sigma: Option<f64>,
}

// ------------------------------------------------------------------ reading

struct Ctx<'a> {
    file: &'a Path,
    src: &'a str,
    dir: PathBuf,
}

impl Ctx<'_> {
    fn line_of(&self, offset: usize) -> u64 {
        let o = offset.min(self.src.len());
        self.src[..o].bytes().filter(|&b| b == b'\n').count() as u64 + 1
    }
    fn err<T>(
        &self,
        span: std::ops::Range<usize>,
        key: &str,
        what: impl std::fmt::Display,
    ) -> Result<T, ReadError> {
        Err(ReadError::at(
            self.file,
            self.line_of(span.start),
            format!("{key}: {what}"),
        )
        .because(ReadCause::Schema))
    }
    /// Join a path to the DUT file's directory and check, through the
    /// operating system, that it names a regular file. The path is not
    /// folded as text: `link/../rec.txt` is what the OS makes of it (with
    /// `link` a symbolic link, the parent of its target), exactly as every
    /// command that opens the same path reads it.
    fn file_path(&self, p: &Spanned<String>, key: &str) -> Result<PathBuf, ReadError> {
        let raw = Path::new(p.get_ref());
        if p.get_ref().trim().is_empty() {
            return self.err(p.span(), key, "expected a file path, got an empty string");
        }
        let joined = self.dir.join(raw);
        match std::fs::metadata(&joined) {
            Ok(m) if m.is_file() => Ok(joined),
            Ok(_) => self.err(
                p.span(),
                key,
                format!("{} is not a regular file", joined.display()),
            ),
            Err(e) => self.err(
                p.span(),
                key,
                format!(
                    "cannot open {} (given as '{}'): {e}",
                    joined.display(),
                    p.get_ref()
                ),
            ),
        }
    }

    /// A value written as text (or a TOML number, read as its text), parsed
    /// by the same parser as the command-line option: `what` says what a
    /// value of the wrong TOML type should have been.
    fn value<T>(
        &self,
        v: &Spanned<toml::Value>,
        key: &str,
        what: &str,
        parse: impl Fn(&str) -> Result<T, units::UnitError>,
    ) -> Result<T, ReadError> {
        let Some(text) = value_text(v.get_ref()) else {
            return self.err(
                v.span(),
                key,
                format!("expected {what}, got {}", type_name(v.get_ref())),
            );
        };
        parse(&text).or_else(|e| self.err(v.span(), key, e))
    }
    fn opt_value<T>(
        &self,
        v: &Option<Spanned<toml::Value>>,
        key: &str,
        what: &str,
        parse: impl Fn(&str) -> Result<T, units::UnitError>,
    ) -> Result<Option<T>, ReadError> {
        v.as_ref()
            .map(|v| self.value(v, key, what, parse))
            .transpose()
    }
    /// A positive duration; plain numbers are seconds (`tau0`, `wrap`).
    fn duration(&self, v: &Spanned<toml::Value>, key: &str) -> Result<f64, ReadError> {
        self.value(
            v,
            key,
            "a duration such as \"1s\" or a number of seconds",
            Duration::positive,
        )
        .map(Duration::seconds)
    }
    /// A duration that decides a verdict (budget, span, te0, τ range): a
    /// string with its unit; a bare number (TOML or text) is refused with
    /// "give a unit".
    fn duration_with_unit(
        &self,
        v: &Spanned<toml::Value>,
        key: &str,
        positive: bool,
    ) -> Result<f64, ReadError> {
        let what = "a duration with its unit such as \"1.5us\" or \"24h\"";
        let parse = if positive {
            Duration::positive_with_unit
        } else {
            Duration::with_unit
        };
        self.value(v, key, what, parse).map(Duration::seconds)
    }
    fn frequency(&self, v: &Spanned<toml::Value>, key: &str) -> Result<f64, ReadError> {
        self.value(
            v,
            key,
            "a frequency such as \"10MHz\" or a number of hertz",
            Frequency::positive,
        )
        .map(Frequency::hertz)
    }
    fn column(&self, v: &Option<Spanned<i64>>, key: &str) -> Result<Option<usize>, ReadError> {
        match v {
            None => Ok(None),
            Some(c) if *c.get_ref() >= 1 => Ok(Some(*c.get_ref() as usize)),
            Some(c) => self.err(
                c.span(),
                key,
                format!("expected a column number from 1, got {}", c.get_ref()),
            ),
        }
    }
    /// A reference to a named entry: `Some(name)` when `known` has it.
    fn reference(
        &self,
        v: &Option<Spanned<String>>,
        key: &str,
        known: &[&str],
        what: &str,
    ) -> Result<Option<String>, ReadError> {
        let Some(s) = v else { return Ok(None) };
        let n = s.get_ref().trim();
        if !known.contains(&n) {
            return self.err(
                s.span(),
                key,
                format!(
                    "no {what} is named '{n}' (known: {})",
                    if known.is_empty() {
                        "none".to_string()
                    } else {
                        known.join(", ")
                    }
                ),
            );
        }
        Ok(Some(n.to_string()))
    }
}

fn value_text(v: &toml::Value) -> Option<String> {
    match v {
        toml::Value::String(s) => Some(s.clone()),
        toml::Value::Integer(i) => Some(i.to_string()),
        toml::Value::Float(f) => Some(f.to_string()),
        _ => None,
    }
}

fn type_name(v: &toml::Value) -> &'static str {
    match v {
        toml::Value::String(_) => "a string",
        toml::Value::Integer(_) => "an integer",
        toml::Value::Float(_) => "a float",
        toml::Value::Boolean(_) => "a boolean",
        toml::Value::Datetime(_) => "a date-time",
        toml::Value::Array(_) => "an array",
        toml::Value::Table(_) => "a table",
    }
}

fn file_stem(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Largest DUT file read (a DUT file is a page of TOML).
pub const DUT_FILE_LIMIT: u64 = 1 << 20;

impl Dut {
    /// Read and check a DUT file (at most [`DUT_FILE_LIMIT`] bytes; a UTF-8
    /// byte-order mark is skipped).
    pub fn read(path: &Path) -> Result<Dut, ReadError> {
        let text = crate::io::text::read_small_text(path, DUT_FILE_LIMIT, "DUT file")?;
        let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
        Self::parse(&text, path, &dir)
    }

    /// Parse DUT text; `file` names it in errors and `dir` resolves its paths.
    /// Each section has its own reader below, in the order of the file.
    pub fn parse(text: &str, file: &Path, dir: &Path) -> Result<Dut, ReadError> {
        let cx = Ctx {
            file,
            src: text,
            dir: if dir.as_os_str().is_empty() {
                PathBuf::from(".")
            } else {
                dir.to_path_buf()
            },
        };
        let raw = toml_document(&cx)?;
        let (name, carrier) = device(&cx, &raw.device)?;
        let decision = decision(&cx, &raw.device)?;
        let records = series(&cx, &raw.record, "record", false, carrier)?;
        let tie = series(&cx, &raw.tie, "tie", true, carrier)?;
        let phase_noise = phase_noise(&cx, &raw.phase_noise, carrier)?;
        let jitter = raw
            .jitter
            .iter()
            .enumerate()
            .map(|(i, j)| jitter_band(&cx, i, j, &phase_noise, &records))
            .collect::<Result<Vec<_>, _>>()?;
        let wander = raw
            .wander
            .as_ref()
            .map(|w| wander(&cx, w, &tie, &records))
            .transpose()?;
        let holdover = raw
            .holdover
            .as_ref()
            .map(|h| holdover(&cx, h, &records))
            .transpose()?;
        let separate = raw
            .separate
            .as_ref()
            .map(|p| separate_section(&cx, p, &records))
            .transpose()?;
        let timeline = raw
            .timeline
            .as_ref()
            .map(|t| timeline_section(&cx, t, &records))
            .transpose()?;
        Ok(Dut {
            file: file.to_path_buf(),
            name,
            description: raw.device.description.map(|d| d.trim().to_string()),
            carrier,
            records,
            phase_noise,
            tie,
            jitter,
            wander,
            holdover,
            separate,
            timeline,
            limit_files: raw
                .device
                .limit_files
                .iter()
                .enumerate()
                .map(|(i, p)| cx.file_path(p, &format!("device.limit_files[{}]", i + 1)))
                .collect::<Result<Vec<_>, _>>()?,
            decision,
        })
    }
}

/// An estimator named in the DUT file that `allowed` holds.
fn dut_estimator(
    cx: &Ctx,
    v: &Option<Spanned<String>>,
    key: &str,
    allowed: &[crate::deviation::Estimator],
) -> Result<crate::deviation::Estimator, ReadError> {
    let Some(v) = v else {
        return Ok(crate::deviation::Estimator::Oadev);
    };
    match crate::deviation::Estimator::from_name(v.get_ref()) {
        Ok(e) if allowed.contains(&e) => Ok(e),
        _ => cx.err(
            v.span(),
            key,
            format!(
                "expected one of {}, got '{}'",
                crate::deviation::Estimator::names(allowed),
                v.get_ref()
            ),
        ),
    }
}

/// `[separate]` and its `[[separate.pair]]` entries.
fn separate_section(
    cx: &Ctx,
    p: &RawSeparate,
    records: &[TimeSource],
) -> Result<SeparateSpec, ReadError> {
    let estimator = dut_estimator(cx, &p.dev, "separate.dev", crate::separate::SUPPORTED)?;
    let method = match &p.method {
        None => crate::separate::Method::Independent,
        Some(m) => match m.get_ref().parse() {
            Ok(m) => m,
            Err(why) => return cx.err(m.span(), "separate.method", why),
        },
    };
    let simultaneous = match &p.sessions {
        None => true,
        Some(m) => match crate::separate::simultaneous_sessions(m.get_ref()) {
            Ok(s) => s,
            Err(why) => return cx.err(m.span(), "separate.sessions", why),
        },
    };
    let known: Vec<&str> = records.iter().map(|r| r.name.as_str()).collect();
    let mut pairs = Vec::new();
    for (i, q) in p.pair.iter().enumerate() {
        let k = |f: &str| format!("separate.pair[{}].{f}", i + 1);
        let (a, b) = (q.a.get_ref().trim(), q.b.get_ref().trim());
        if a.is_empty() || b.is_empty() || a == b {
            return cx.err(
                q.a.span(),
                &k("a"),
                "expected two different, non-empty clock names",
            );
        }
        let rec = cx
            .reference(&Some(q.record.clone()), &k("record"), &known, "record")?
            .unwrap_or_default();
        pairs.push((a.to_string(), b.to_string(), rec));
    }
    if pairs.len() < 3 {
        return cx.err(
            0..0,
            "separate.pair",
            format!(
                "{} pair(s): separating clocks needs at least three [[separate.pair]] entries",
                pairs.len()
            ),
        );
    }
    Ok(SeparateSpec {
        estimator,
        method,
        simultaneous,
        pairs,
    })
}

/// `[timeline]`.
fn timeline_section(
    cx: &Ctx,
    t: &RawTimeline,
    records: &[TimeSource],
) -> Result<TimelineSpec, ReadError> {
    let known: Vec<&str> = records.iter().map(|r| r.name.as_str()).collect();
    let record = cx.reference(&t.record, "timeline.record", &known, "record")?;
    if record.is_none() && records.is_empty() {
        return cx.err(t.window.span(), "timeline", "needs a [[record]] to follow");
    }
    let window = cx.duration_with_unit(&t.window, "timeline.window", true)?;
    let step = cx.duration_with_unit(&t.step, "timeline.step", true)?;
    let estimator = dut_estimator(cx, &t.dev, "timeline.dev", crate::timeline::SUPPORTED)?;
    let taus = match &t.taus {
        None => None,
        Some(g) => Some(
            crate::tau::TauGrid::parse(g.get_ref())
                .or_else(|e| cx.err(g.span(), "timeline.taus", e))?,
        ),
    };
    Ok(TimelineSpec {
        record,
        window,
        step,
        estimator,
        taus,
    })
}

/// The TOML document in the raw schema; a syntax error, an unknown key or a
/// wrong type names its line and key.
fn toml_document(cx: &Ctx) -> Result<RawDut, ReadError> {
    toml::from_str(cx.src).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        let key = key_at(cx.src, span.start);
        let msg = e.message().to_string();
        let what = match key {
            Some(k) if !msg.contains(&k) => format!("{k}: {msg}"),
            _ => msg,
        };
        match e.span() {
            Some(s) => ReadError::at(cx.file, cx.line_of(s.start), what),
            None => ReadError::file(cx.file, what),
        }
        .because(ReadCause::Schema)
    })
}

/// `[device] decision_rule` (`simple`, `guarded`) and `conformance` (a
/// probability in (0.5, 1)); `None` when neither is given.
fn decision(cx: &Ctx, d: &RawDevice) -> Result<Option<crate::decision::DecisionRule>, ReadError> {
    if d.decision_rule.is_none() && d.conformance.is_none() {
        return Ok(None);
    }
    let mut out = crate::decision::DecisionRule::default();
    if let Some(r) = &d.decision_rule {
        match r.get_ref().parse::<crate::decision::Rule>() {
            Ok(v) => out.rule = v,
            Err(_) => {
                return cx.err(
                    r.span(),
                    "device.decision_rule",
                    format!("'{}': expected simple or guarded", r.get_ref()),
                )
            }
        }
    }
    if let Some(c) = &d.conformance {
        let v = match c.get_ref() {
            toml::Value::Float(f) => Some(*f),
            toml::Value::String(t) => crate::decision::parse_conformance(t).ok(),
            _ => None,
        };
        match v {
            Some(v) if crate::decision::check_conformance(v).is_ok() => out.conformance = v,
            _ => {
                return cx.err(
                    c.span(),
                    "device.conformance",
                    format!(
                        "{}: expected a probability strictly between 0.5 and 1, e.g. 0.95",
                        c.get_ref()
                    ),
                )
            }
        }
    }
    Ok(Some(out))
}

/// `[device]`: the name and the carrier.
fn device(cx: &Ctx, d: &RawDevice) -> Result<(String, Option<f64>), ReadError> {
    let name = d.name.get_ref().trim().to_string();
    if name.is_empty() {
        return cx.err(
            d.name.span(),
            "device.name",
            "expected a non-empty device name",
        );
    }
    let carrier = match &d.carrier {
        Some(c) => Some(cx.frequency(c, "device.carrier")?),
        None => None,
    };
    Ok((name, carrier))
}

/// `[[record]]` and `[[tie]]`: a time series, how to read it (the keys of
/// the command line's reading options) and, for a record, how to prepare it.
fn series(
    cx: &Ctx,
    list: &[RawSeries],
    what: &str,
    tie: bool,
    carrier: Option<f64>,
) -> Result<Vec<TimeSource>, ReadError> {
    let mut out = Vec::new();
    for (i, r) in list.iter().enumerate() {
        let k = |f: &str| format!("{what}[{}].{f}", i + 1);
        let path = cx.file_path(&r.path, &k("path"))?;
        let data = series_data(cx, r, tie, &k("data"))?;
        let tau0 = match &r.tau0 {
            Some(t) => Some(cx.duration(t, &k("tau0"))?),
            None => None,
        };
        let units_ = series_units(cx, r, data, carrier, &k("units"))?;
        let name = match &r.name {
            Some(n) if !n.get_ref().trim().is_empty() => n.get_ref().trim().to_string(),
            Some(n) => return cx.err(n.span(), &k("name"), "expected a non-empty name"),
            None => file_stem(&path),
        };
        let (time_column, no_time_column) = match &r.time_column {
            None => (None, false),
            Some(c) => match c.get_ref() {
                toml::Value::Integer(n) if *n >= 1 => (Some(*n as usize), false),
                toml::Value::String(s) if s.trim().eq_ignore_ascii_case("none") => (None, true),
                other => {
                    return cx.err(
                        c.span(),
                        &k("time_column"),
                        format!(
                            "expected a column number from 1 or \"none\", got {}",
                            value_text(other)
                                .map(|t| format!("'{t}'"))
                                .unwrap_or_else(|| type_name(other).into())
                        ),
                    )
                }
            },
        };
        let snap = match &r.snap {
            None => None,
            Some(s) => Some(match s.get_ref() {
                toml::Value::Boolean(true) => DEFAULT_SNAP,
                toml::Value::Float(f) if *f > 0.0 && *f < 0.5 => *f,
                other => {
                    return cx.err(
                        s.span(),
                        &k("snap"),
                        format!(
                            "expected true or a fraction of τ0 above 0 and below 0.5 (e.g. 0.25), got {}",
                            value_text(other)
                                .map(|t| format!("'{t}'"))
                                .unwrap_or_else(|| type_name(other).into())
                        ),
                    )
                }
            }),
        };
        let wrap = match &r.wrap {
            Some(w) => Some(cx.duration(w, &k("wrap"))?),
            None => None,
        };
        let comments = match &r.comment {
            Some(c) => {
                crate::io::text::CommentStyle::with_extra(c.get_ref())
                    .or_else(|m| cx.err(c.span(), &k("comment"), m))?;
                c.get_ref().clone()
            }
            None => String::new(),
        };
        let binary = match &r.binary {
            Some(b) => Some(
                b.get_ref()
                    .parse::<crate::io::binary::BinaryFormat>()
                    .or_else(|e| cx.err(b.span(), &k("binary"), e))?,
            ),
            None => None,
        };
        let prepare = series_steps(cx, r, tie, &k)?;
        let bandwidth = match &r.bandwidth {
            Some(b) if tie => return cx.err(b.span(), &k("bandwidth"), ONLY_RECORDS),
            Some(b) => Some(cx.frequency(b, &k("bandwidth"))?),
            None => None,
        };
        out.push(TimeSource {
            name,
            path,
            data,
            tau0,
            units: units_,
            value_column: cx.column(&r.value_column, &k("value_column"))?,
            time_column,
            no_time_column,
            snap,
            wrap,
            comments,
            decimal_comma: r.decimal_comma.unwrap_or(false),
            binary,
            prepare,
            bandwidth,
        });
    }
    Ok(out)
}

/// `--snap` alone, and `snap = true`: stamps within a quarter of τ0 of the
/// grid are rounded to it.
pub const DEFAULT_SNAP: f64 = 0.25;

const ONLY_RECORDS: &str = "applies to a [[record]] only (a TIE capture is analysed as read)";

fn series_data(cx: &Ctx, r: &RawSeries, tie: bool, key: &str) -> Result<DataKind, ReadError> {
    let Some(d) = &r.data else {
        return Ok(DataKind::Phase);
    };
    match d.get_ref().parse::<DataKind>() {
        Ok(DataKind::Freq) if tie => cx.err(
            d.span(),
            key,
            "a TIE capture holds phase (time error); expected 'phase'",
        ),
        Ok(kind) => Ok(kind),
        Err(why) => cx.err(d.span(), key, why),
    }
}

fn series_units(
    cx: &Ctx,
    r: &RawSeries,
    data: DataKind,
    carrier: Option<f64>,
    key: &str,
) -> Result<Option<ValueUnit>, ReadError> {
    let Some(u) = &r.units else { return Ok(None) };
    let vu = units::parse_value_unit(u.get_ref()).or_else(|e| cx.err(u.span(), key, e))?;
    let fits = matches!(
        (vu, data),
        (ValueUnit::Phase(_), DataKind::Phase) | (ValueUnit::Freq(_), DataKind::Freq)
    );
    if !fits {
        return cx.err(
            u.span(),
            key,
            format!("'{}' is not a unit of {} data", u.get_ref(), data.name()),
        );
    }
    if matches!(vu, ValueUnit::Freq(units::FreqUnit::Hz)) && carrier.is_none() {
        return cx.err(
            u.span(),
            key,
            "units 'hz' need device.carrier to convert to fractional frequency",
        );
    }
    Ok(Some(vu))
}

/// The preparation keys of a `[[record]]` (drift, outliers, fill_gaps).
fn series_steps(
    cx: &Ctx,
    r: &RawSeries,
    tie: bool,
    k: &dyn Fn(&str) -> String,
) -> Result<Steps, ReadError> {
    let mut prepare = if tie { Steps::default() } else { RECORD_STEPS };
    if let Some(d) = &r.drift {
        if tie {
            return cx.err(d.span(), &k("drift"), ONLY_RECORDS);
        }
        prepare.drift = match d.get_ref().trim() {
            "none" => None,
            "linear" => Some(DriftModel::Linear),
            "quadratic" => Some(DriftModel::Quadratic),
            other => {
                return cx.err(
                    d.span(),
                    &k("drift"),
                    format!("expected none, linear or quadratic, got '{other}'"),
                )
            }
        };
    }
    if let Some(o) = &r.outliers {
        if tie {
            return cx.err(o.span(), &k("outliers"), ONLY_RECORDS);
        }
        let v = match o.get_ref() {
            toml::Value::Integer(i) => Some(*i as f64),
            toml::Value::Float(f) => Some(*f),
            _ => None,
        };
        match v {
            Some(v) if v.is_finite() && v > 0.0 => prepare.outliers = Some(v),
            _ => {
                return cx.err(
                    o.span(),
                    &k("outliers"),
                    format!(
                        "expected a positive number of scaled MADs such as 5, got {}",
                        value_text(o.get_ref())
                            .map(|t| format!("'{t}'"))
                            .unwrap_or_else(|| type_name(o.get_ref()).into())
                    ),
                )
            }
        }
    }
    if let Some(f) = &r.fill_gaps {
        if tie {
            return cx.err(f.span(), &k("fill_gaps"), ONLY_RECORDS);
        }
        prepare.fill_gaps = *f.get_ref();
    }
    Ok(prepare)
}

/// `[[phase_noise]]`: the tables, each with its carrier (its own, else the
/// device's) and its uncertainty.
fn phase_noise(
    cx: &Ctx,
    list: &[RawTable],
    carrier: Option<f64>,
) -> Result<Vec<LfSource>, ReadError> {
    let mut out = Vec::new();
    for (i, t) in list.iter().enumerate() {
        let k = |f: &str| format!("phase_noise[{}].{f}", i + 1);
        let path = cx.file_path(&t.path, &k("path"))?;
        let quantity = match &t.quantity {
            None => LfQuantity::Lf,
            Some(q) => match q.get_ref().as_str() {
                "lf" => LfQuantity::Lf,
                "sphi" => LfQuantity::Sphi,
                "sphi-db" => LfQuantity::SphiDb,
                "sy" => LfQuantity::Sy,
                other => {
                    return cx.err(
                        q.span(),
                        &k("quantity"),
                        format!("expected one of lf, sphi, sphi-db, sy, got '{other}'"),
                    )
                }
            },
        };
        let c = match (&t.carrier, carrier) {
            (Some(c), _) => cx.frequency(c, &k("carrier"))?,
            (None, Some(c)) => c,
            (None, None) => return cx.err(
                t.path.span(),
                &k("carrier"),
                "a phase-noise table needs a carrier: set device.carrier or this table's carrier",
            ),
        };
        let uncertainty_db = cx.opt_value(
            &t.uncertainty,
            &k("uncertainty"),
            "the table's uncertainty in dB, e.g. \"2dB\"",
            crate::parse::uncertainty_db,
        )?;
        out.push(LfSource {
            uncertainty_db,
            name: t
                .name
                .as_ref()
                .map(|n| n.get_ref().trim().to_string())
                .unwrap_or_else(|| file_stem(&path)),
            path,
            quantity,
            carrier: c,
        });
    }
    Ok(out)
}

/// One `[[jitter]]` band.
fn jitter_band(
    cx: &Ctx,
    i: usize,
    j: &RawJitter,
    phase_noise: &[LfSource],
    records: &[TimeSource],
) -> Result<JitterSpec, ReadError> {
    let k = |f: &str| format!("jitter[{}].{f}", i + 1);
    let band = j.band.get_ref();
    let b = crate::spectrum::jitter::Band::parse(band)
        .or_else(|e| cx.err(j.band.span(), &k("band"), e))?;
    if phase_noise.is_empty() && records.is_empty() {
        return cx.err(
            j.band.span(),
            &k("band"),
            "a jitter band needs a [[phase_noise]] table or a [[record]]",
        );
    }
    let mut filters = Vec::new();
    for f in &j.filters {
        filters.push(
            f.get_ref()
                .parse::<Filter>()
                .or_else(|e| cx.err(f.span(), &k("filters"), e))?,
        );
    }
    let mut filter_files = Vec::new();
    if let Some(p) = &j.filter_file {
        filter_files.push(cx.file_path(p, &k("filter_file"))?);
    }
    let filter_set = match &j.filter_set {
        Some(p) => {
            let path = cx.file_path(p, &k("filter_set"))?;
            let set = crate::io::filter_set::read_filter_set(&path)?;
            filters.extend(set.filters.iter().copied());
            filter_files.extend(set.filter_files.iter().cloned());
            Some((path, set.name))
        }
        None => None,
    };
    let limit = match &j.limit {
        Some(l) => match l.get_ref() {
            toml::Value::String(t) => Some(
                crate::spectrum::jitter::JitterLimit::parse(t)
                    .or_else(|e| cx.err(l.span(), &k("limit"), e))?,
            ),
            other => {
                return cx.err(
                    l.span(),
                    &k("limit"),
                    format!(
                        "'{}' has no unit: give a unit, e.g. \"1ps\" / \"10mrad\" / \"0.01UI\" (a bare number is refused where it decides a verdict)",
                        value_text(other).unwrap_or_else(|| type_name(other).into())
                    ),
                )
            }
        },
        None => None,
    };
    let ui_rate = match &j.ui_rate {
        Some(r) => Some(cx.frequency(r, &k("ui_rate"))?),
        None => None,
    };
    let known: Vec<&str> = phase_noise.iter().map(|t| t.name.as_str()).collect();
    let source = cx.reference(&j.source, &k("source"), &known, "[[phase_noise]] table")?;
    let periods = match &j.periods {
        Some(n) if *n.get_ref() >= 1 && *n.get_ref() <= u32::MAX as i64 => {
            Some(*n.get_ref() as u32)
        }
        Some(n) => {
            return cx.err(
                n.span(),
                &k("periods"),
                format!(
                    "expected a whole number of periods ≥ 1, got {}",
                    n.get_ref()
                ),
            )
        }
        None => None,
    };
    let period = (j.period == Some(true) || periods.is_some())
        .then_some(crate::spectrum::jitter::PeriodRequest { periods });
    Ok(JitterSpec {
        name: j
            .name
            .as_ref()
            .map(|n| n.get_ref().trim().to_string())
            .unwrap_or_else(|| band.clone()),
        from: b.from,
        to: b.to,
        filters,
        filter_files,
        filter_set,
        limit,
        ui_rate,
        source,
        period,
    })
}

/// `[wander]`.
fn wander(
    cx: &Ctx,
    w: &RawWander,
    tie: &[TimeSource],
    records: &[TimeSource],
) -> Result<WanderSpec, ReadError> {
    if w.masks.is_empty() && w.mask_files.is_empty() && w.te != Some(true) {
        return Err(ReadError::file(
            cx.file,
            "wander: expected at least one of masks, mask_files or te = true",
        )
        .because(ReadCause::Schema));
    }
    if tie.is_empty() && records.is_empty() {
        return Err(
            ReadError::file(cx.file, "wander: needs a [[tie]] capture or a [[record]]")
                .because(ReadCause::Schema),
        );
    }
    let mut files = Vec::new();
    for (i, p) in w.mask_files.iter().enumerate() {
        files.push(cx.file_path(p, &format!("wander.mask_files[{}]", i + 1))?);
    }
    let known: Vec<&str> = tie.iter().chain(records).map(|r| r.name.as_str()).collect();
    let source = cx.reference(&w.source, "wander.source", &known, "[[tie]] or [[record]]")?;
    for m in &w.masks {
        if m.get_ref().trim().is_empty() {
            return cx.err(
                m.span(),
                "wander.masks",
                "expected a mask name, got an empty string",
            );
        }
    }
    let taus = match &w.taus {
        Some(g) => Some(
            crate::tau::TauGrid::parse(g.get_ref())
                .or_else(|e| cx.err(g.span(), "wander.taus", e))?,
        ),
        None => None,
    };
    let tau_range = match &w.tau_range {
        None => None,
        Some(r) => {
            let v = r.get_ref();
            if v.len() != 2 {
                return cx.err(
                    r.span(),
                    "wander.tau_range",
                    format!(
                        "expected two durations with units, e.g. [\"1s\", \"3h\"], got {} value(s)",
                        v.len()
                    ),
                );
            }
            let a = cx.duration_with_unit(&v[0], "wander.tau_range[1]", true)?;
            let b = cx.duration_with_unit(&v[1], "wander.tau_range[2]", true)?;
            if b < a {
                return cx.err(
                    r.span(),
                    "wander.tau_range",
                    "expected FROM ≤ TO, e.g. [\"1s\", \"3h\"]",
                );
            }
            Some((a, b))
        }
    };
    let te_filter = cx.opt_value(
        &w.te_filter,
        "wander.te_filter",
        "a measurement filter such as \"lowpass:0.1Hz\"",
        str::parse::<crate::parse::TeFilter>,
    )?;
    if let (Some(c), false) = (&w.cte_window, w.te == Some(true)) {
        return cx.err(c.span(), "wander.cte_window", "needs te = true");
    }
    let te = match w.te {
        Some(true) => Some(crate::wander::te::TeOptions {
            cte_window: match &w.cte_window {
                Some(c) => cx.duration_with_unit(c, "wander.cte_window", true)?,
                None => crate::wander::te::DEFAULT_CTE_WINDOW,
            },
            ..crate::wander::te::TeOptions::default()
        }),
        _ => None,
    };
    Ok(WanderSpec {
        te_filter,
        te,
        taus,
        tau_range,
        masks: w
            .masks
            .iter()
            .map(|m| m.get_ref().trim().to_string())
            .collect(),
        mask_files: files,
        source,
        remove_offset: w.remove_offset.unwrap_or(false),
    })
}

/// `[holdover]`.
fn holdover(cx: &Ctx, h: &RawHoldover, records: &[TimeSource]) -> Result<HoldoverSpec, ReadError> {
    if records.is_empty() {
        return cx.err(
            h.budget.span(),
            "holdover",
            "needs a [[record]] to predict from",
        );
    }
    let budget = cx.duration_with_unit(&h.budget, "holdover.budget", true)?;
    if h.spans.get_ref().is_empty() {
        return cx.err(
            h.spans.span(),
            "holdover.spans",
            "expected at least one span, e.g. [\"8h\", \"24h\"]",
        );
    }
    let mut spans = Vec::new();
    for (i, s) in h.spans.get_ref().iter().enumerate() {
        spans.push(cx.duration_with_unit(s, &format!("holdover.spans[{}]", i + 1), true)?);
    }
    let known: Vec<&str> = records.iter().map(|r| r.name.as_str()).collect();
    let record = cx.reference(&h.record, "holdover.record", &known, "[[record]]")?;
    let aging = cx
        .opt_value(
            &h.aging,
            "holdover.aging",
            "an aging rate such as \"5e-11/day\"",
            str::parse::<Rate>,
        )?
        .map(Rate::per_second);
    let te0 = match &h.te0 {
        Some(t) => Some(cx.duration_with_unit(t, "holdover.te0", false)?),
        None => None,
    };
    let settle = match &h.settle {
        Some(t) => Some(cx.duration_with_unit(t, "holdover.settle", true)?),
        None => None,
    };
    let paths = match &h.paths {
        None => None,
        Some(p) if *p.get_ref() >= 10 => Some(*p.get_ref() as usize),
        Some(p) => {
            return cx.err(
                p.span(),
                "holdover.paths",
                format!("expected at least 10 paths, got {}", p.get_ref()),
            )
        }
    };
    let fraction = "a fractional frequency such as 1e-12 or \"0.5ppb\"";
    let y0 = cx
        .opt_value(&h.y0, "holdover.y0", fraction, str::parse::<Fraction>)?
        .map(Fraction::value);
    let y0_sigma = cx
        .opt_value(
            &h.y0_sigma,
            "holdover.y0_sigma",
            fraction,
            str::parse::<Fraction>,
        )?
        .map(Fraction::value);
    if let (Some(s), Some(v)) = (&h.y0_sigma, y0_sigma) {
        if y0.is_none() {
            return cx.err(
                s.span(),
                "holdover.y0_sigma",
                "goes with holdover.y0 (the frequency error at the start of holdover)",
            );
        }
        if v < 0.0 {
            return cx.err(s.span(), "holdover.y0_sigma", "expected a value ≥ 0");
        }
    }
    Ok(HoldoverSpec {
        y0,
        y0_sigma,
        budget,
        spans,
        record,
        aging,
        te0,
        settle,
        paths,
        seed: h.seed,
    })
}

/// The dotted key at a byte offset of TOML text (`record[2].tau0`), found
/// from the nearest table header above and the key on the offset's line.
fn key_at(src: &str, offset: usize) -> Option<String> {
    let offset = offset.min(src.len());
    let line_start = src[..offset].rfind('\n').map_or(0, |i| i + 1);
    let line_end = src[offset..].find('\n').map_or(src.len(), |i| offset + i);
    let line = src[line_start..line_end].trim();
    let key = line
        .split_once('=')
        .map(|(k, _)| k.trim().trim_matches('"').to_string())
        .filter(|k| !k.is_empty() && !k.starts_with('['));
    // Nearest header above, and its index for arrays of tables.
    let mut header: Option<(String, usize)> = None;
    let mut counts: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    for l in src[..line_start].lines() {
        let t = l.trim();
        if let Some(h) = t
            .strip_prefix("[[")
            .and_then(|r| r.split_once("]]"))
            .map(|(h, _)| h.trim().to_string())
        {
            let c = counts.entry(h.clone()).or_insert(0);
            *c += 1;
            header = Some((format!("{h}[{c}]"), 0));
        } else if let Some(h) = t
            .strip_prefix('[')
            .and_then(|r| r.split_once(']'))
            .map(|(h, _)| h.trim().to_string())
        {
            header = Some((h, 0));
        }
    }
    match (header, key) {
        (Some((h, _)), Some(k)) => Some(format!("{h}.{k}")),
        (None, Some(k)) => Some(k),
        (Some((h, _)), None) => Some(h),
        (None, None) => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_at_names_array_entries() {
        let src = "[device]\nname = \"x\"\n[[record]]\npath = \"a\"\n[[record]]\npath = \"b\"\ntau0 = []\n";
        let off = src.find("tau0").unwrap() + 7;
        assert_eq!(key_at(src, off).as_deref(), Some("record[2].tau0"));
        assert_eq!(key_at(src, 12).as_deref(), Some("device.name"));
    }
}
