//! Reading a time series (phase or frequency readings, one per line,
//! optionally with a timestamp column) into a [`Record`].
//!
//! The reader streams: the layout (preamble, header, delimiter, decimal
//! mark) is found line by line ([`super::text::LineReader`]); the data rows
//! after it are read in blocks of 16 MiB cut at line ends into pieces of
//! 1 MiB parsed in parallel ([`super::parallel`]), with the same line and
//! row rules, and taken in file order. Standard input goes the same way;
//! [`RowReading::Serial`] reads the rows line by line instead (the
//! reference, checked equal on the reader corpus). Only the `f64` values
//! are kept (plus one `f64` time per line while τ0 is still unknown), so a
//! 10^8-line file loads without its text ever being held in memory. Memory:
//! 8 bytes per sample plus one block and its parsed pieces (about 30 MB);
//! when τ0 comes from the timestamps, 16 bytes more per line until the
//! readings have been placed. `.npy` files ([`super::npy`]) are recognised by
//! their magic bytes and read as binary.
//!
//! # Layout (see [`super::layout`])
//! Lines before the first row of numbers are the *preamble*; the header is
//! its last line of text when it has as many fields as the data; comments
//! start with `#`, `;`, `%` or `//` (and the `--comment` characters). A block
//! of text after the readings ends them (with a note), unless readings
//! follow it — then the first text line is an error.
//!
//! # Columns (our defaults)
//! - The **value column** is `value_column` (1-based) or, by default, the last
//!   field of the first data row that holds a number (or a malformed one).
//! - The **time column** is `time_column`, or by default column 1 when the
//!   first data row has at least two fields and the value column is not
//!   column 1 — also when τ0 is given (then the stamps place the readings and
//!   must agree with τ0). `no_time_column` (`--time-column none`) reads the
//!   readings as contiguous.
//!
//! # Timestamps and τ0
//! Timestamps are seconds (any origin; or the unit in the time column's
//! header: `ms`, `us`, `min`, `h`, `d`, `MJD`) or ISO-8601 date-times
//! (`2024-05-01T12:00:00.25Z`, `2024-05-01 12:00:00+02:00`; without an
//! offset they are taken as UTC). They must increase. τ0 is `tau0` or, when
//! not given, the median of the spacings Δt_i = t_i − t_{i−1} (the lower
//! median, a spacing actually seen; rounded to 10 significant digits).
//! Each spacing must be k·τ0 for a whole k ≥ 1 within 1 % of τ0,
//! |Δt/τ0 − k| ≤ 0.01; a spacing of k·τ0 inserts k − 1 gaps (NaN). Samples
//! are placed by accumulating k, so a time base that runs slightly fast or
//! slow does not break the placement. At least half the spacings must be one
//! τ0 (else the stamps and τ0 disagree).
//!
//! With `snap` (`--snap`, for stamps taken by a PC clock that wander by tens
//! of milliseconds), each stamp is instead rounded to the nearest point of
//! the grid t_first + n·τ0, provided it lies within `snap`·τ0 of it; the
//! largest distance from the grid (about the mean distance) is reported.
//! When τ0 is not given it is the stamps' span over the number of steps
//! between them (spacings counted in median spacings), to 3 significant
//! digits.
//!
//! # Units
//! Phase: `s ms us ns ps` (multiplied into seconds). Frequency: `frac`, `ppm`
//! (×10⁻⁶), `ppb` (×10⁻⁹), and `hz` for absolute readings ν, converted to
//! fractional frequency y = (ν − ν0)/ν0 with the carrier ν0 (IEEE Std 1139
//! definition of y). Without `unit`, a unit in the value column's header is
//! used ([`super::header_units`]); a unit option that disagrees with the
//! header is an error, and so is a header unit tauwise does not read. The
//! readings are then checked for plausibility (phase beyond a second,
//! fractional frequency beyond 10⁻³, readings that look like absolute
//! hertz) and warnings say so.
//!
//! # Wrapping readings
//! With `wrap` (a period in seconds, phase only), readings that wrap at the
//! period are unwrapped ([`super::wrap`]).
//!
//! # Missing values
//! `NaN`, an empty field and `-` in the value column are gaps (NaN).

use super::binary::BinaryFormat;
use super::fields::{self, Decimal, Delimiter, NumberError, Splitter};
use super::header_units::{self, Found, HeaderUnit};
use super::layout::{self, LayoutOptions};
use super::parallel::{self, RowReading};
use super::spacings::{one_step_band, Spacings};
use super::text::{self, CommentStyle, LineReader};
use super::{binary, npy, wrap, ReadError};
use crate::prepare::outliers::order_statistic;
use crate::record::{DataKind, FrequencyRecord, PhaseRecord, Record};
use crate::units::{format_sig, FreqUnit, ValueUnit};
use serde::Serialize;
use std::io::BufRead;
use std::path::{Path, PathBuf};

/// Largest number of missing samples one timestamp jump may insert.
pub const MAX_JUMP: u64 = 10_000_000;

/// Largest number of samples a record may have (8 GB of values): a bound
/// so that an endless input fails with a message instead of filling memory.
pub const MAX_POINTS: usize = 1_000_000_000;

/// Relative tolerance of a timestamp spacing against a whole multiple of τ0.
pub const SPACING_TOLERANCE: f64 = 0.01;

/// Default `--snap` fraction of τ0.
pub const DEFAULT_SNAP: f64 = 0.25;

/// Largest phase reading (s) or fractional frequency that is plausible.
const PLAUSIBLE_PHASE: f64 = 1.0;
const PLAUSIBLE_FREQUENCY: f64 = 1e-3;

/// How to interpret a time-series file. `Default` reads phase in seconds
/// from the last numeric column, with τ0 from timestamps in column 1.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SeriesOptions {
    /// Phase or frequency; `None` → from the unit (option or header), else phase.
    pub kind: Option<DataKind>,
    /// Unit of the readings; default: the header's, else `s` / `frac`.
    pub unit: Option<ValueUnit>,
    /// Sampling interval in seconds; `None` → median timestamp spacing
    /// (needs a time column).
    pub tau0: Option<f64>,
    /// Nominal (carrier) frequency ν0 in Hz; needed for unit `hz`.
    pub carrier: Option<f64>,
    /// 1-based value column; default: last numeric column.
    pub value_column: Option<usize>,
    /// 1-based time column; default: column 1 when the file has ≥ 2 fields
    /// and the value column is not column 1.
    pub time_column: Option<usize>,
    /// No time column at all (`--time-column none`): readings contiguous.
    pub no_time_column: bool,
    /// Round stamps to the τ0 grid when within this fraction of τ0.
    pub snap: Option<f64>,
    /// Unwrap phase readings that wrap at this period (seconds).
    pub wrap: Option<f64>,
    /// Extra comment characters (besides `#`, `;`, `%`, `//`).
    pub comments: String,
    /// A comma in a field is always the decimal mark.
    pub decimal_comma: bool,
    /// Read the file as a raw binary array of this element type
    /// ([`super::binary`]; `--binary f64le`): no header, no time column,
    /// τ0 required.
    pub binary: Option<BinaryFormat>,
}

/// Where the unit in force came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum UnitSource {
    /// The unit option (`--units`, a DUT file's `units`).
    Option,
    /// The value column's header.
    Header,
    /// Neither: seconds for phase, fractional for frequency.
    Default,
}

/// How the input was stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum InputFormat {
    /// Text columns.
    Text,
    /// numpy `.npy` binary.
    Npy,
    /// A raw binary array (`--binary`; the element type in
    /// [`SeriesInfo::binary`]).
    Binary,
}

/// How the time column is written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum TimeKind {
    /// Seconds (or the header's unit), any origin.
    Seconds,
    /// ISO-8601 date-times.
    DateTime,
    /// Modified Julian Date.
    Mjd,
}

/// The end of the readings before a block of text.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct DataEnd {
    /// The line of the last reading.
    pub last_data_line: u64,
    /// The first line of the text after it.
    pub text_line: u64,
    /// That line (shortened).
    pub text: String,
    /// Lines of text ignored (not counting comments and blank lines).
    pub lines_ignored: u64,
}

/// What `--snap` did.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SnapInfo {
    /// The allowed distance from the grid, as a fraction of τ0.
    pub fraction: f64,
    /// The largest distance of a stamp from the grid (s), measured about
    /// the mean distance.
    pub largest_jitter: f64,
    /// The line (or row) of that stamp.
    pub line: u64,
}

/// What `--wrap` did.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct UnwrapInfo {
    /// The period (s).
    pub period: f64,
    /// Whole periods added or removed.
    pub wraps: usize,
}

/// What was found while reading a series.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeriesInfo {
    /// The input path (`-` for standard input).
    pub path: PathBuf,
    /// Text, `.npy` or raw binary.
    pub format: InputFormat,
    /// The element type of a raw binary file (`null` otherwise).
    pub binary: Option<BinaryFormat>,
    /// Lines read, including comments and blank lines (0 for binary input).
    pub lines: u64,
    /// Bytes read.
    pub bytes: u64,
    /// True when the file started with a UTF-8 byte-order mark (skipped).
    pub bom: bool,
    /// The lines before the first reading (comments included; at most
    /// [`layout::MAX_PREAMBLE_KEPT`]).
    pub preamble: Vec<String>,
    /// How many lines the preamble has.
    pub preamble_lines: u64,
    /// The header line's fields, when there was one.
    pub header: Option<Vec<String>>,
    /// The header's line number.
    pub header_line: Option<u64>,
    /// The line of the first reading.
    pub first_data_line: Option<u64>,
    /// The field delimiter.
    pub delimiter: Option<Delimiter>,
    /// Why commas were read as decimal marks, when they were.
    pub decimal_comma: Option<String>,
    /// The value column read (1-based).
    pub value_column: usize,
    /// The time column read (1-based), if any.
    pub time_column: Option<usize>,
    /// How the time column is written.
    pub time_kind: Option<TimeKind>,
    /// The unit of the readings, as written (`ns`, `ppb`, `Hz`, …).
    pub unit: String,
    /// Where that unit came from.
    pub unit_source: UnitSource,
    /// True when τ0 was taken from the timestamps.
    pub tau0_from_timestamps: bool,
    /// Gaps inserted for timestamp jumps (not counting NaN readings).
    pub inserted_gaps: usize,
    /// First timestamp in seconds (ISO-8601 date-times and MJD as Unix seconds).
    pub start_time: Option<f64>,
    /// First timestamp as Unix seconds and nanoseconds (date-times only),
    /// for writers that carry the stamps on exactly.
    #[serde(skip)]
    pub start_unix: Option<(i64, u32)>,
    /// Where the readings end before a block of text, if they do.
    pub data_end: Option<DataEnd>,
    /// What `--snap` did.
    pub snap: Option<SnapInfo>,
    /// What `--wrap` did.
    pub unwrap: Option<UnwrapInfo>,
    /// Plain statements about how the file was read.
    pub notes: Vec<String>,
    /// Things that look wrong (implausible values for the unit in force).
    pub warnings: Vec<String>,
}

/// A record read from a file, with what was found on the way.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// The data, in SI units (phase in seconds, fractional frequency).
    pub record: Record,
    /// Facts about the file.
    pub info: SeriesInfo,
}

/// Read a time series from `path` (`-` = standard input).
pub fn read_series(path: &Path, opts: &SeriesOptions) -> Result<Series, ReadError> {
    check_options(path, opts)?;
    let reader = text::open_input(path)?;
    read_series_from(reader, path, opts)
}

/// How a reading becomes an SI value.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Conversion {
    Scale(f64),
    /// Absolute frequency: reading × `scale` is hertz; y = (ν − ν0)/ν0.
    Carrier {
        nu0: f64,
        scale: f64,
    },
}

impl Conversion {
    /// The reading in the record's unit; a missing reading (NaN) stays
    /// missing.
    #[inline]
    fn apply(self, v: f64) -> f64 {
        if v.is_nan() {
            return v;
        }
        match self {
            Conversion::Scale(s) => v * s,
            Conversion::Carrier { nu0, scale } => (v * scale - nu0) / nu0,
        }
    }
}

fn check_options(path: &Path, opts: &SeriesOptions) -> Result<(), ReadError> {
    let bad = |msg: String| ReadError::file(path, msg);
    if let Some(t) = opts.tau0 {
        if !(t.is_finite() && t > 0.0) {
            return Err(bad(format!(
                "τ0 = {t} s: expected a positive sampling interval"
            )));
        }
    }
    if let Some(nu0) = opts.carrier {
        if !(nu0.is_finite() && nu0 > 0.0) {
            return Err(bad(format!(
                "carrier frequency {nu0} Hz: expected a positive frequency"
            )));
        }
    }
    for (name, c) in [
        ("value column", opts.value_column),
        ("time column", opts.time_column),
    ] {
        if c == Some(0) {
            return Err(bad(format!("{name} 0: columns are numbered from 1")));
        }
    }
    if opts.value_column.is_some() && opts.value_column == opts.time_column {
        return Err(bad(format!(
            "value column and time column are both {}; expected two different columns",
            opts.value_column.unwrap_or(0)
        )));
    }
    if opts.no_time_column && opts.time_column.is_some() {
        return Err(bad(
            "a time column was named and 'no time column' was asked for; expected one of them"
                .into(),
        ));
    }
    if let Some(f) = opts.snap {
        if !(f > 0.0 && f < 0.5) {
            return Err(bad(format!(
                "snap fraction {f}: expected a fraction of τ0 above 0 and below 0.5 (e.g. 0.25)"
            )));
        }
    }
    if let Some(p) = opts.wrap {
        if !(p.is_finite() && p > 0.0) {
            return Err(bad(format!(
                "wrap period {p} s: expected a positive period (e.g. 100ns)"
            )));
        }
        if opts.kind == Some(DataKind::Freq) || matches!(opts.unit, Some(ValueUnit::Freq(_))) {
            return Err(bad(
                "--wrap unwraps phase (time-interval) readings; these are frequency readings"
                    .into(),
            ));
        }
    }
    CommentStyle::with_extra(&opts.comments).map_err(bad)?;
    Ok(())
}

/// The unit of the readings, resolved from the option, the header and the
/// defaults.
#[derive(Debug, Clone)]
struct Resolved {
    kind: DataKind,
    conv: Conversion,
    symbol: String,
    source: UnitSource,
    note: Option<String>,
}

fn value_unit_of_header(u: HeaderUnit) -> Option<(DataKind, ValueUnit, f64)> {
    Some(match u {
        HeaderUnit::Phase(p) => (DataKind::Phase, ValueUnit::Phase(p), 1.0),
        HeaderUnit::Fractional(f) => (DataKind::Freq, ValueUnit::Freq(f), 1.0),
        HeaderUnit::Absolute(k) if k >= 1.0 => (DataKind::Freq, ValueUnit::Freq(FreqUnit::Hz), k),
        _ => return None,
    })
}

fn kind_of(u: ValueUnit) -> DataKind {
    match u {
        ValueUnit::Phase(_) => DataKind::Phase,
        ValueUnit::Freq(_) => DataKind::Freq,
    }
}

fn unit_symbol(u: ValueUnit) -> String {
    match u {
        ValueUnit::Phase(p) => p.symbol().to_string(),
        ValueUnit::Freq(FreqUnit::Hz) => "Hz".to_string(),
        ValueUnit::Freq(f) => f.symbol().to_string(),
    }
}

/// Resolve the unit: the option, else the header (`header` is the value
/// column's header field and its line), else the default for the kind.
fn resolve_unit(
    label: &Path,
    opts: &SeriesOptions,
    header: Option<(&str, u64)>,
    column: usize,
) -> Result<Resolved, ReadError> {
    let found = header.map(|(f, _)| header_units::unit_in(f));
    let line = header.map(|(_, l)| l);
    let quote = header.map(|(f, l)| format!("'{}' (line {l})", fields::shorten(f)));
    let at = |msg: String| match line {
        Some(l) => ReadError {
            cause: super::ReadCause::Content,
            path: label.to_path_buf(),
            line: Some(l),
            column: Some(column),
            expected: msg,
        },
        None => ReadError::file(label, msg),
    };
    let mut note = None;
    let mut source = UnitSource::Option;
    let (unit, scale) = match (opts.unit, &found) {
        (Some(u), Some(Found::Unit(hu))) => {
            let agrees = match value_unit_of_header(*hu) {
                Some((_, hv, k)) => hv == u && k == 1.0,
                None => false,
            };
            if !agrees {
                return Err(at(format!(
                    "--units {} disagrees with the header of column {column}, {}, which says {}; remove --units or correct it",
                    unit_symbol(u),
                    quote.unwrap_or_default(),
                    hu.symbol()
                )));
            }
            (Some(u), 1.0)
        }
        (Some(u), Some(Found::Unknown(w))) => {
            note = Some(format!(
                "the header of column {column} names the unit '{w}', which tauwise does not read; --units {} used as given",
                unit_symbol(u)
            ));
            (Some(u), 1.0)
        }
        (Some(u), _) => (Some(u), 1.0),
        (None, Some(Found::Unit(hu))) => match value_unit_of_header(*hu) {
            Some((_, v, k)) => {
                source = UnitSource::Header;
                let shown = if k == 1.0 {
                    unit_symbol(v)
                } else {
                    hu.symbol()
                };
                note = Some(format!(
                    "unit {shown} taken from the header of column {column}, {}",
                    quote.clone().unwrap_or_default()
                ));
                (Some(v), k)
            }
            None => {
                let why = match hu {
                    HeaderUnit::Lf | HeaderUnit::Sphi | HeaderUnit::SphiDb | HeaderUnit::Sy => {
                        "that is a phase-noise table: read it with `jitter` or `convert --lf`"
                    }
                    _ => "that is not a unit of phase or frequency readings",
                };
                return Err(at(format!(
                    "the header of column {column}, {}, says {}: {why}; expected readings in s ms us ns ps, frac ppm ppb or Hz (or give --units)",
                    quote.unwrap_or_default(),
                    hu.symbol()
                )));
            }
        },
        (None, Some(Found::Unknown(w))) => {
            return Err(at(format!(
                "the header of column {column}, {}, gives the unit '{w}', which tauwise does not read; give --units (s ms us ns ps for phase, frac ppm ppb hz for frequency)",
                quote.unwrap_or_default()
            )));
        }
        (None, _) => {
            if let (Some((f, _)), None) = (header, opts.kind) {
                if header_units::says_frequency(f) {
                    return Err(at(format!(
                        "the header of column {column}, {}, names frequency readings but gives no unit; say what they are with --data freq and --units (frac ppm ppb, or hz with --carrier)",
                        quote.unwrap_or_default()
                    )));
                }
            }
            source = UnitSource::Default;
            (None, 1.0)
        }
    };
    let kind = match (opts.kind, unit) {
        (Some(k), _) => k,
        (None, Some(u)) => kind_of(u),
        (None, None) => DataKind::Phase,
    };
    let from = match source {
        UnitSource::Header => format!(" (from the header {})", quote.clone().unwrap_or_default()),
        _ => String::new(),
    };
    let conv = match (kind, unit) {
        (DataKind::Phase, None) => Conversion::Scale(1.0),
        (DataKind::Phase, Some(ValueUnit::Phase(u))) => Conversion::Scale(u.to_seconds()),
        (DataKind::Phase, Some(ValueUnit::Freq(u))) => {
            return Err(at(format!(
                "unit '{}'{from} is a frequency unit but the data are phase; expected one of s ms us ns ps, or --data freq",
                u.symbol()
            )))
        }
        (DataKind::Freq, Some(ValueUnit::Phase(u))) => {
            return Err(at(format!(
                "unit '{}'{from} is a phase unit but the data are frequency; expected one of frac ppm ppb hz, or --data phase",
                u.symbol()
            )))
        }
        (DataKind::Freq, None | Some(ValueUnit::Freq(FreqUnit::Frac))) => Conversion::Scale(1.0),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Ppm))) => Conversion::Scale(1e-6),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Ppb))) => Conversion::Scale(1e-9),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Hz))) => match opts.carrier {
            Some(nu0) => Conversion::Carrier { nu0, scale },
            None => {
                return Err(ReadError::file(
                    label,
                    format!(
                        "unit hz{from} (absolute frequency readings) needs the carrier frequency: give --carrier (e.g. 10MHz)"
                    ),
                ))
            }
        },
    };
    let symbol = match (kind, unit) {
        (_, Some(ValueUnit::Freq(FreqUnit::Hz))) if scale != 1.0 => {
            HeaderUnit::Absolute(scale).symbol()
        }
        (_, Some(u)) => unit_symbol(u),
        (DataKind::Phase, None) => "s".into(),
        (DataKind::Freq, None) => "frac".into(),
    };
    Ok(Resolved {
        kind,
        conv,
        symbol,
        source,
        note,
    })
}

/// How the time column is written, and its origin.
#[derive(Debug, Clone, Copy, PartialEq)]
enum TimeForm {
    Seconds { t0: f64, scale: f64 },
    Iso { s0: i64, ns0: u32 },
    Mjd { d0: f64 },
}

/// Parse an ISO-8601 date-time into Unix seconds and nanoseconds.
fn parse_iso(s: &str) -> Option<(i64, u32)> {
    use chrono::{DateTime, NaiveDateTime};
    if let Ok(dt) = DateTime::parse_from_rfc3339(s) {
        return Some((dt.timestamp(), dt.timestamp_subsec_nanos()));
    }
    for fmt in ["%Y-%m-%d %H:%M:%S%.f%:z", "%Y-%m-%dT%H:%M:%S%.f%:z"] {
        if let Ok(dt) = DateTime::parse_from_str(s, fmt) {
            return Some((dt.timestamp(), dt.timestamp_subsec_nanos()));
        }
    }
    let naive = s.strip_suffix('Z').unwrap_or(s);
    for fmt in [
        "%Y-%m-%dT%H:%M:%S%.f",
        "%Y-%m-%d %H:%M:%S%.f",
        "%Y-%m-%dT%H:%M",
        "%Y-%m-%d %H:%M",
    ] {
        if let Ok(dt) = NaiveDateTime::parse_from_str(naive, fmt) {
            let u = dt.and_utc();
            return Some((u.timestamp(), u.timestamp_subsec_nanos()));
        }
    }
    None
}

const TIME_EXPECTED: &str =
    "expected a timestamp in seconds or an ISO-8601 date-time (e.g. 2024-05-01T12:00:00Z)";

/// Unix time of MJD 0 is −3506716800 s; MJD 40587 is 1970-01-01.
const MJD_UNIX_EPOCH: f64 = 40587.0;

impl TimeForm {
    /// Decide the form from the first timestamp and the column's unit.
    fn detect(field: &str, unit: TimeUnit, decimal: Decimal) -> Option<TimeForm> {
        if let Ok(Some(t)) = fields::number(field, decimal) {
            return Some(match unit {
                TimeUnit::Mjd => TimeForm::Mjd { d0: t },
                TimeUnit::Scale(scale) => TimeForm::Seconds { t0: t, scale },
            });
        }
        parse_iso(field).map(|(s0, ns0)| TimeForm::Iso { s0, ns0 })
    }

    fn kind(self) -> TimeKind {
        match self {
            TimeForm::Seconds { .. } => TimeKind::Seconds,
            TimeForm::Iso { .. } => TimeKind::DateTime,
            TimeForm::Mjd { .. } => TimeKind::Mjd,
        }
    }

    fn start(self) -> f64 {
        match self {
            TimeForm::Seconds { t0, scale } => t0 * scale,
            TimeForm::Iso { s0, ns0 } => s0 as f64 + ns0 as f64 * 1e-9,
            TimeForm::Mjd { d0 } => (d0 - MJD_UNIX_EPOCH) * 86400.0,
        }
    }

    /// Time since the first timestamp, in seconds.
    #[inline(always)]
    fn relative(self, field: &str, decimal: Decimal) -> Option<f64> {
        match self {
            TimeForm::Seconds { .. } | TimeForm::Mjd { .. } => {
                match fields::number(field, decimal) {
                    Ok(Some(t)) => self.of_number(t),
                    _ => None,
                }
            }
            TimeForm::Iso { s0, ns0 } => {
                parse_iso(field).map(|(s, ns)| (s - s0) as f64 + (ns as f64 - ns0 as f64) * 1e-9)
            }
        }
    }

    /// Time since the first timestamp, in seconds, of a stamp written as a
    /// number (`None` for the date-time form).
    #[inline(always)]
    fn of_number(self, t: f64) -> Option<f64> {
        match self {
            TimeForm::Seconds { t0, scale } => Some((t - t0) * scale),
            TimeForm::Mjd { d0 } => Some((t - d0) * 86400.0),
            TimeForm::Iso { .. } => None,
        }
    }
}

/// The unit of a time column.
#[derive(Debug, Clone, Copy, PartialEq)]
enum TimeUnit {
    Scale(f64),
    Mjd,
}

fn time_unit(
    label: &Path,
    header: Option<(&str, u64)>,
    column: usize,
) -> Result<TimeUnit, ReadError> {
    let Some((f, line)) = header else {
        return Ok(TimeUnit::Scale(1.0));
    };
    let err = |what: String| ReadError {
        cause: super::ReadCause::Content,
        path: label.to_path_buf(),
        line: Some(line),
        column: Some(column),
        expected: what,
    };
    match header_units::unit_in(f) {
        Found::None => Ok(TimeUnit::Scale(1.0)),
        Found::Unit(HeaderUnit::Phase(u)) => Ok(TimeUnit::Scale(u.to_seconds())),
        Found::Unit(HeaderUnit::Time(k)) => Ok(TimeUnit::Scale(k)),
        Found::Unit(HeaderUnit::Mjd) => Ok(TimeUnit::Mjd),
        Found::Unit(u) => Err(err(format!(
            "the header of the time column {column}, '{}' (line {line}), says {}; expected a unit of time (s ms us ns min h d MJD) or none",
            fields::shorten(f),
            u.symbol()
        ))),
        Found::Unknown(w) => Err(err(format!(
            "the header of the time column {column}, '{}' (line {line}), gives the unit '{w}', which tauwise does not read; expected s ms us ns min h d or MJD",
            fields::shorten(f)
        ))),
    }
}

/// Maps a data-row index to its line number cheaply: rows are consecutive
/// lines except where comments or blank lines intervene, and only those
/// breaks are stored.
#[derive(Debug, Default)]
struct LineMap {
    breaks: Vec<(usize, u64)>,
    last: u64,
}

impl LineMap {
    fn push(&mut self, row: usize, line: u64) {
        if self.breaks.is_empty() || line != self.last + 1 {
            self.breaks.push((row, line));
        }
        self.last = line;
    }

    fn line_of(&self, row: usize) -> u64 {
        let i = self.breaks.partition_point(|b| b.0 <= row);
        match i.checked_sub(1).and_then(|i| self.breaks.get(i)) {
            Some(&(r, l)) => l + (row - r) as u64,
            None => 0,
        }
    }
}

/// Places readings on the τ0 grid from their timestamps.
#[derive(Debug)]
struct Grid {
    tau0: f64,
    snap: Option<f64>,
    prev_t: f64,
    slot: u64,
    started: bool,
    /// Spacings of one τ0, and all spacings (agreement with τ0).
    ones: u64,
    spacings: u64,
    /// Count of spacings of k τ0 for k = 1..=8 (index 8: more).
    k_hist: [u64; 9],
    /// Snap: sum, min and max of the distance from the grid, and where the
    /// extremes are (row indices).
    r_sum: f64,
    r_min: (f64, usize),
    r_max: (f64, usize),
    r_pending: Option<(f64, usize)>,
    rows: usize,
}

impl Grid {
    fn new(tau0: f64, snap: Option<f64>) -> Self {
        Self {
            tau0,
            snap,
            prev_t: 0.0,
            slot: 0,
            started: false,
            ones: 0,
            spacings: 0,
            k_hist: [0; 9],
            r_sum: 0.0,
            r_min: (f64::INFINITY, 0),
            r_max: (f64::NEG_INFINITY, 0),
            r_pending: None,
            rows: 0,
        }
    }

    /// The slot of a reading stamped `t` (seconds since the first stamp).
    #[inline]
    fn place(&mut self, t: f64) -> Result<u64, String> {
        let row = self.rows;
        if !self.started {
            self.started = true;
            self.prev_t = t;
            if self.snap.is_some() {
                self.note_residual(0.0, row);
            }
            self.rows += 1;
            return Ok(0);
        }
        let dt = t - self.prev_t;
        if dt.is_nan() || dt <= 0.0 {
            return Err(
                "the timestamp is not later than the one before; expected increasing timestamps"
                    .to_string(),
            );
        }
        let tau0 = self.tau0;
        let next = match self.snap {
            None => self.slot + steps(dt, tau0)?,
            Some(frac) => {
                let q = t / tau0;
                let n = q.round();
                let r = (q - n) * tau0;
                if r.abs() > frac * tau0 {
                    return Err(format!(
                        "the timestamp is {} s off the τ0 grid ({:.3}·τ0; τ0 = {} s), more than the {} · τ0 that --snap allows; check τ0 or give a larger --snap",
                        format_sig(r, 4),
                        r / tau0,
                        format_sig(tau0, 6),
                        frac
                    ));
                }
                if n < 0.0 || (n as u64) <= self.slot {
                    return Err(format!(
                        "the timestamp falls on the same τ0 slot as the reading before (τ0 = {} s); expected one reading per τ0",
                        format_sig(tau0, 6)
                    ));
                }
                let k = n as u64 - self.slot;
                if k - 1 > MAX_JUMP {
                    return Err(jump_message(dt, k, tau0));
                }
                self.r_pending = Some((r, row));
                n as u64
            }
        };
        if let Some((r, row)) = self.r_pending.take() {
            self.note_residual(r, row);
        }
        let k = next - self.slot;
        self.spacings += 1;
        if k == 1 {
            self.ones += 1;
        } else {
            self.k_hist[(k as usize).min(9) - 1] += 1;
        }
        self.slot = next;
        self.prev_t = t;
        self.rows += 1;
        Ok(next)
    }

    /// `n` readings, the last stamped `last`, each stamp one τ0 after the
    /// one before (the first one τ0 after the grid's last stamp, when the
    /// grid has started): what [`Grid::place`] does for each of them,
    /// without --snap, at once.
    fn place_one_steps(&mut self, last: f64, n: usize) {
        debug_assert!(self.snap.is_none() && n > 0);
        let steps = if self.started {
            self.slot += n as u64;
            n
        } else {
            self.started = true;
            self.slot = n as u64 - 1;
            n - 1
        };
        self.spacings += steps as u64;
        self.ones += steps as u64;
        self.prev_t = last;
        self.rows += n;
    }

    fn note_residual(&mut self, r: f64, row: usize) {
        self.r_sum += r;
        if r < self.r_min.0 {
            self.r_min = (r, row);
        }
        if r > self.r_max.0 {
            self.r_max = (r, row);
        }
    }

    /// The largest distance from the grid about the mean, and its row.
    fn jitter(&self) -> (f64, usize) {
        let mean = self.r_sum / self.rows.max(1) as f64;
        let up = self.r_max.0 - mean;
        let down = mean - self.r_min.0;
        if up >= down {
            (up, self.r_max.1)
        } else {
            (down, self.r_min.1)
        }
    }

    /// Error when fewer than half the spacings are one τ0.
    fn check_agreement(&self) -> Result<(), String> {
        if self.spacings == 0 || 2 * self.ones >= self.spacings {
            return Ok(());
        }
        // More than half the spacings are not one τ0: the most common of
        // those is the typical spacing.
        let (i, _) = self
            .k_hist
            .iter()
            .enumerate()
            .max_by_key(|(_, n)| **n)
            .unwrap_or((0, &0));
        let typical = if i == 8 {
            "more than 8".to_string()
        } else {
            format!("{}", i + 1)
        };
        Err(format!(
            "the timestamps disagree with τ0 = {} s: only {} of {} spacings are one τ0, most are {typical}·τ0; give the τ0 the stamps show, or --time-column none if column 1 is not a time",
            format_sig(self.tau0, 6),
            self.ones,
            self.spacings
        ))
    }
}

fn jump_message(dt: f64, k: u64, tau0: f64) -> String {
    format!(
        "timestamps jump by {} s ({} samples of τ0 = {} s); more than {} missing samples in one jump: check the time column and τ0",
        format_sig(dt, 6),
        k,
        format_sig(tau0, 6),
        MAX_JUMP
    )
}

/// τ0 for `--snap` when not given: the stamps' span over the number of
/// steps counted between them (each spacing rounded to a whole number of
/// median spacings), to 3 significant digits — the median of jittered
/// spacings alone can be off by more than the rounding.
fn snap_tau0(times: &[f64], median: f64) -> f64 {
    let mut steps = 0.0f64;
    for w in times.windows(2) {
        steps += ((w[1] - w[0]) / median).round().max(1.0);
    }
    let span = times[times.len() - 1] - times[0];
    crate::units::round_sig(span / steps.max(1.0), 3)
}

/// Number of τ0 steps in a spacing, or an error message.
#[inline]
pub(super) fn steps(dt: f64, tau0: f64) -> Result<u64, String> {
    let q = dt / tau0;
    // The common spacing, one τ0, without the rounding below (a call on
    // processors without a rounding instruction): the same outcome, as
    // |q − 1| ≤ the tolerance (< 0.5) rounds q to 1.
    if (q - 1.0).abs() <= SPACING_TOLERANCE {
        return Ok(1);
    }
    let k = q.round();
    if !(k >= 1.0 && (q - k).abs() <= SPACING_TOLERANCE) {
        return Err(format!(
            "timestamps are {} s apart, which is {:.4}·τ0 (τ0 = {} s); expected a whole multiple of τ0 within {} % (stamps from a PC clock that wander: --snap rounds them to the τ0 grid)",
            format_sig(dt, 6),
            q,
            format_sig(tau0, 6),
            SPACING_TOLERANCE * 100.0
        ));
    }
    if k as u64 - 1 > MAX_JUMP {
        return Err(jump_message(dt, k as u64, tau0));
    }
    Ok(k as u64)
}

/// A data row as parsed.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Row {
    /// Only delimiters.
    Blank,
    /// A line of text (its first field is a word).
    Text,
    /// A reading (NaN for a missing one) and its time (s since the first
    /// stamp), when there is a time column.
    Data(f64, Option<f64>),
}

/// Parses the data rows of one file: the fields in the value and time
/// columns, as numbers (the time relative to the first stamp). Independent
/// of where the row lies in the file, so that chunks of a file can be parsed
/// apart given their first line number.
struct RowParser {
    splitter: Splitter,
    /// The delimiter and field limit of `splitter` (for [`RowParser::fresh`]).
    delim: Delimiter,
    limit: usize,
    decimal: Decimal,
    value_col: usize,
    time_col: Option<usize>,
    form: Option<TimeForm>,
    /// True when neither column is column 1 (then a first field that is a
    /// word must be looked at separately).
    check_first: bool,
    /// The stamps are numbers (seconds or MJD), read by
    /// [`RowParser::fast_row`] where they start.
    numeric_stamps: bool,
    /// The first data row's stamp is a whole number in digits alone: the
    /// stamps are read with [`fields::whole_number_prefix`] (the same
    /// values, faster for counts of seconds).
    whole_stamps: bool,
    /// One column of readings separated by white space: the first word of
    /// the line is the reading (the common case, read without splitting).
    single: bool,
    /// The delimiter byte (comma, semicolon, tab), for [`RowParser::quick`].
    sep: Option<u8>,
}

impl RowParser {
    /// The same parser with its own splitting buffers (one per piece of a
    /// file parsed in parallel).
    fn fresh(&self) -> RowParser {
        RowParser {
            splitter: Splitter::new(self.delim).with_limit(self.limit),
            ..*self
        }
    }

    #[inline]
    fn parse(&mut self, label: &Path, number: u64, line: &str) -> Result<Row, ReadError> {
        if self.single {
            let end = memchr::memchr2(b' ', b'\t', line.as_bytes()).unwrap_or(line.len());
            let f = fields::unquote(&line[..end]);
            if let Ok(v) = fields::number(f, self.decimal) {
                return Ok(Row::Data(v.unwrap_or(f64::NAN), None));
            }
        } else if let Some(row) = self.quick(line) {
            return Ok(row);
        }
        self.parse_split(label, number, line)
    }

    /// The common case without splitting the whole line: a delimited line
    /// without quotes whose value (and time) fields read cleanly. `None`
    /// sends the line through [`RowParser::parse_split`], which classifies
    /// it and words any error.
    #[inline]
    fn quick(&self, line: &str) -> Option<Row> {
        let sep = self.sep?;
        let b = line.as_bytes();
        if self.check_first {
            return None;
        }
        let need = self.value_col.max(self.time_col.unwrap_or(0));
        let mut start = 0;
        let mut vf = None;
        let mut tf = None;
        for idx in 1..=need {
            // The next delimiter, or a quote (then the slow path splits the
            // line by RFC 4180).
            let end = match memchr::memchr2(sep, b'"', &b[start..]) {
                Some(i) if b[start + i] == b'"' => return None,
                Some(i) => start + i,
                None => b.len(),
            };
            if idx == self.value_col {
                vf = Some(&line[start..end]);
            }
            if Some(idx) == self.time_col {
                tf = Some(&line[start..end]);
            }
            if end == b.len() {
                break;
            }
            start = end + 1;
        }
        let v = match fields::number(vf?.trim_ascii(), self.decimal) {
            Ok(v) => v.unwrap_or(f64::NAN),
            Err(_) => return None,
        };
        let t = match self.form {
            Some(form) => Some(form.relative(tf?.trim_ascii(), self.decimal)?),
            None => None,
        };
        Some(Row::Data(v, t))
    }

    /// The most common data line read in one pass over its bytes, without
    /// finding its end first: the readings (and numeric stamps) are read
    /// where they start ([`fields::number_prefix`]), each must be followed
    /// by the delimiter or the line end, and what follows the last column
    /// needed is only checked to be UTF-8 up to the line end. Gives what
    /// [`RowParser::parse`] gives for the line, and the bytes it takes
    /// with its line end; `None` sends the line through the line rules
    /// ([`parse_piece`]) and [`RowParser::parse`], which classify it and
    /// word any error. So it is never the only judge of a line: a line it
    /// reads is one that the line rules read the same way (a first byte
    /// that starts a number is neither blank nor a comment, the bytes read
    /// are ASCII, the line is within [`text::MAX_LINE_BYTES`]).
    #[inline]
    fn fast_row(&self, b: &[u8]) -> Option<(f64, Option<f64>, usize)> {
        let line_end = |at: usize| -> Option<usize> {
            // The line's bytes without its `\n` (a `\r` before it counts,
            // as for the line rules), and the bytes taken.
            let (raw, used) = match b.get(at) {
                None => (at, at),
                Some(b'\n') => (at, at + 1),
                Some(b'\r') if b.get(at + 1) == Some(&b'\n') => (at + 1, at + 2),
                _ => return None,
            };
            (raw <= text::MAX_LINE_BYTES).then_some(used)
        };
        if self.single {
            let (v, n) = fields::number_prefix(b)?;
            return Some((v, None, line_end(n)?));
        }
        let sep = self.sep?;
        if self.check_first {
            return None;
        }
        let need = self.value_col.max(self.time_col.unwrap_or(0));
        let (mut v, mut t) = (None, None);
        let mut start = 0;
        for idx in 1..=need {
            let is_time = Some(idx) == self.time_col && self.form.is_some();
            let end = if idx == self.value_col || (is_time && self.numeric_stamps) {
                let (x, n) = if is_time && self.whole_stamps {
                    fields::whole_number_prefix(&b[start..])?
                } else {
                    fields::number_prefix(&b[start..])?
                };
                if idx == self.value_col {
                    v = Some(x);
                } else {
                    t = Some(self.form?.of_number(x)?);
                }
                start + n
            } else {
                // A column not read, or a date-time stamp: up to the next
                // delimiter (a quote sends the line to the line rules).
                let end =
                    memchr::memchr3(sep, b'"', b'\n', &b[start..]).map_or(b.len(), |i| start + i);
                if b.get(end) == Some(&b'"') {
                    return None;
                }
                // ASCII only (so UTF-8, and no Unicode white space to trim).
                if !b[start..end].is_ascii() {
                    return None;
                }
                let field = std::str::from_utf8(&b[start..end]).ok()?;
                if is_time {
                    t = Some(self.form?.relative(field.trim_ascii(), self.decimal)?);
                }
                end
            };
            if idx < need {
                if b.get(end) != Some(&sep) {
                    return None;
                }
                start = end + 1;
            } else if b.get(end) == Some(&sep) {
                // Columns after the last one needed: the rest of the line,
                // which must be UTF-8 as every line.
                let stop = memchr::memchr(b'\n', &b[end..]).map_or(b.len(), |i| end + i);
                std::str::from_utf8(&b[end..stop]).ok()?;
                return Some((v?, t, line_end(stop)?));
            } else {
                return Some((v?, t, line_end(end)?));
            }
        }
        None
    }

    fn parse_split(&mut self, label: &Path, number: u64, line: &str) -> Result<Row, ReadError> {
        let n = match self.splitter.split(line) {
            Ok(n) => n,
            Err(_) => {
                let first = line.split([',', ';', '\t', ' ']).next().unwrap_or("");
                if fields::is_text(fields::unquote(first), self.decimal) {
                    return Ok(Row::Text);
                }
                return Err(ReadError::at(
                    label,
                    number,
                    "a quote (\") opens a field that does not close on this line; expected a closing quote",
                ));
            }
        };
        let s = &self.splitter;
        if self.check_first && fields::is_text(s.field(line, 0), self.decimal) {
            return Ok(Row::Text);
        }
        let text_first = |s: &Splitter| fields::is_text(s.field(line, 0), self.decimal);
        let vc = self.value_col;
        if vc > n {
            if text_first(s) {
                return Ok(Row::Text);
            }
            if (0..n).all(|i| s.field(line, i).is_empty()) {
                return Ok(Row::Blank);
            }
            let need = vc.max(self.time_col.unwrap_or(0));
            return Err(ReadError::at(
                label,
                number,
                format!(
                    "the line has {n} field{}; expected at least {need} (value column {vc})",
                    if n == 1 { "" } else { "s" },
                ),
            ));
        }
        let vf = s.field(line, vc - 1);
        let value = match fields::number(vf, self.decimal) {
            Ok(Some(v)) => v,
            Ok(None) => f64::NAN,
            Err(e) => {
                if text_first(s) {
                    return Ok(Row::Text);
                }
                let msg = match e {
                    NumberError::AmbiguousComma => text::ambiguous_comma(vf, vc),
                    NumberError::Malformed => text::not_a_number(vf, vc),
                };
                return Err(text::field_error(label, number, vc, msg));
            }
        };
        let time = match (self.form, self.time_col) {
            (Some(form), Some(tc)) => {
                if tc > n {
                    if text_first(s) {
                        return Ok(Row::Text);
                    }
                    return Err(ReadError::at(
                        label,
                        number,
                        format!(
                            "the line has {n} fields; expected at least {tc} (time column {tc})"
                        ),
                    ));
                }
                let tf = s.field(line, tc - 1);
                match form.relative(tf, self.decimal) {
                    Some(t) => Some(t),
                    None => {
                        if text_first(s) {
                            return Ok(Row::Text);
                        }
                        let what = if tf.is_empty() {
                            format!("time field {tc} is empty: {TIME_EXPECTED}")
                        } else {
                            format!(
                                "time field {tc} is '{}': {TIME_EXPECTED}",
                                fields::shorten(tf)
                            )
                        };
                        return Err(text::field_error(label, number, tc, what));
                    }
                }
            }
            _ => None,
        };
        Ok(Row::Data(value, time))
    }
}

/// The rows of one piece of a text file, parsed apart from the rest (lines
/// counted from the piece's first line, 1).
struct Piece {
    /// The readings, converted to the record's unit ([`Conversion`]).
    values: Vec<f64>,
    /// Their stamps, when there is a time column.
    times: Vec<f64>,
    /// The smallest and largest reading (NaN skipped).
    lo: f64,
    hi: f64,
    /// The spacings of the stamps after the piece's first, when asked
    /// ([`PieceRule::spacings`]); empty when one of them is not positive
    /// (then the rows are taken one by one, which words the error).
    spacings: Spacings,
    /// (row, line) wherever a row's line is not the line after the row
    /// before (the first row included).
    breaks: Vec<(usize, u64)>,
    /// Lines of text among the rows: (rows before it, line, its text — kept
    /// for the piece's first only).
    texts: Vec<(usize, u64, Option<String>)>,
    /// Every stamp after the piece's first is surely one τ0 after the one
    /// before ([`one_step_band`]), when asked ([`PieceRule::one_step`]).
    one_step: bool,
    /// The error that ended the piece, after its rows.
    error: Option<ReadError>,
    /// The line of the last row (0 before the first).
    last: u64,
}

/// What [`parse_piece`] does beyond parsing.
#[derive(Debug, Clone, Copy)]
struct PieceRule {
    /// The readings' conversion.
    conv: Conversion,
    /// Work out the spacings of the stamps (τ0 from the stamps, no --snap).
    spacings: bool,
    /// τ0 given, with stamps, no --snap: tell whether every stamp of the
    /// piece is surely one τ0 after the one before ([`Piece::one_step`]).
    one_step: Option<f64>,
}

impl Piece {
    /// What only depends on the piece, done where it was parsed (in
    /// parallel): the conversion, the extremes and the spacings.
    fn finish(&mut self, rule: PieceRule) {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for v in self.values.iter_mut() {
            *v = rule.conv.apply(*v);
            // NaN compares false: gaps are skipped.
            if *v < lo {
                lo = *v;
            }
            if *v > hi {
                hi = *v;
            }
        }
        (self.lo, self.hi) = (lo, hi);
        if rule.spacings {
            self.spacings = Spacings::of_times(&self.times).unwrap_or_default();
        }
        if let Some(tau0) = rule.one_step {
            let (lo, hi) = one_step_band(tau0);
            self.one_step = self.times.windows(2).all(|w| {
                let dt = w[1] - w[0];
                dt >= lo && dt <= hi
            });
        }
    }

    /// A reading (and its stamp) on line `number` of the piece.
    #[inline(always)]
    fn push(&mut self, number: u64, v: f64, t: Option<f64>) {
        if self.values.is_empty() || number != self.last + 1 {
            self.breaks.push((self.values.len(), number));
        }
        self.last = number;
        self.values.push(v);
        if let Some(t) = t {
            self.times.push(t);
        }
    }
}

/// Parse the lines of a piece with the line rules of
/// [`text::LineReader`] (the same functions) and `parser`'s row rules —
/// a line in the common shape read in one pass ([`RowParser::fast_row`]),
/// any other line found, trimmed, checked and parsed as the line reader
/// does — then finish the piece as `rule` says ([`Piece::finish`]): what
/// was found and the number of lines.
fn parse_piece(
    bytes: &[u8],
    parser: &RowParser,
    comments: &CommentStyle,
    rule: PieceRule,
    label: &Path,
) -> (Piece, u64) {
    let mut parser = parser.fresh();
    let mut p = Piece {
        values: Vec::with_capacity(bytes.len() / 16 + 1),
        times: match parser.time_col {
            Some(_) => Vec::with_capacity(bytes.len() / 16 + 1),
            None => Vec::new(),
        },
        lo: f64::INFINITY,
        hi: f64::NEG_INFINITY,
        spacings: Spacings::default(),
        one_step: false,
        breaks: Vec::new(),
        texts: Vec::new(),
        error: None,
        last: 0,
    };
    let mut number = 0u64;
    let mut pos = 0;
    while pos < bytes.len() {
        number += 1;
        let rest = &bytes[pos..];
        if let Some((v, t, used)) = parser.fast_row(rest) {
            pos += used;
            p.push(number, v, t);
            continue;
        }
        let raw = match memchr::memchr(b'\n', rest) {
            Some(i) => {
                pos += i + 1;
                &rest[..i]
            }
            None => {
                pos = bytes.len();
                rest
            }
        };
        if raw.len() > text::MAX_LINE_BYTES {
            p.error = Some(text::too_long(label, number));
            break;
        }
        let (start, end) = text::trim_span(raw, 0);
        if start >= end || comments.is_comment(&raw[start..end]) {
            continue;
        }
        let line = match text::line_text(raw, start, end, label, number) {
            Ok(l) => l,
            Err(e) => {
                p.error = Some(e);
                break;
            }
        };
        match parser.parse(label, number, line) {
            Ok(Row::Data(v, t)) => p.push(number, v, t),
            Ok(Row::Text) => {
                let text = p.texts.is_empty().then(|| line.to_string());
                p.texts.push((p.values.len(), number, text));
            }
            Ok(Row::Blank) => {}
            Err(e) => {
                p.error = Some(e);
                break;
            }
        }
    }
    p.finish(rule);
    (p, number)
}

/// Read a time series from any buffered reader; `label` names it in errors.
/// A `.npy` file (recognised by its magic bytes) is read as binary.
///
/// The stages, one function each: where the data start and how the lines
/// are laid out (`layout::find_start`), which columns hold the readings
/// and the stamps (`choose_columns`), their units and the form of the
/// stamps (`read_units`), every data row (`Collected::take`), τ0 and
/// the gaps from the stamps (`Collected::place`), the snapping note
/// (`snap_info`), unwrapping (`unwrap_values`), then the record.
pub fn read_series_from<R: BufRead>(
    reader: R,
    label: &Path,
    opts: &SeriesOptions,
) -> Result<Series, ReadError> {
    read_series_from_with(reader, label, opts, RowReading::default())
}

/// [`read_series`] with the data rows read as `reading` says: in blocks
/// parsed in parallel (the default, [`super::parallel`]) or line by line
/// ([`RowReading::Serial`], the reference). Both give the same record, the
/// same facts and the same errors.
pub fn read_series_with(
    path: &Path,
    opts: &SeriesOptions,
    reading: RowReading,
) -> Result<Series, ReadError> {
    check_options(path, opts)?;
    let reader = text::open_input(path)?;
    read_series_from_with(reader, path, opts, reading)
}

/// [`read_series_from`] with the data rows read as `reading` says.
pub fn read_series_from_with<R: BufRead>(
    mut reader: R,
    label: &Path,
    opts: &SeriesOptions,
    reading: RowReading,
) -> Result<Series, ReadError> {
    check_options(label, opts)?;
    let head = text::peek(&mut reader, npy::MAGIC.len())
        .map_err(|e| ReadError::file(label, format!("could not read: {e}")))?;
    if let Some(format) = opts.binary {
        if npy::is_npy(&head) {
            return Err(ReadError::file(
                label,
                "the file starts with the .npy magic bytes: it is a numpy .npy file, read without --binary (its header says the element type and shape)",
            ));
        }
        return read_raw(reader, label, opts, format);
    }
    if npy::is_npy(&head) {
        return read_npy(reader, label, opts);
    }
    let comments =
        CommentStyle::with_extra(&opts.comments).map_err(|m| ReadError::file(label, m))?;
    let mut lines = LineReader::new(reader, label).with_comments(comments.clone());
    let start = layout::find_start(
        &mut lines,
        label,
        &LayoutOptions {
            decimal_comma: opts.decimal_comma,
            several_columns: opts.value_column.is_some_and(|c| c > 1) || opts.time_column.is_some(),
            comments,
        },
        "one reading per line (or columns with a value and a timestamp)",
    )?;
    let lay = start.layout;
    let mut queued = start.rows;
    let (first_line, first_text) = queued
        .front()
        .cloned()
        .ok_or_else(|| ReadError::file(label, "no readings"))?;
    let cols = choose_columns(label, opts, &lay, first_line, &first_text)?;
    let (resolved, form) = read_units(label, opts, &lay, &cols, first_line, &first_text)?;
    let (value_col, time_col, delim) = (cols.value, cols.time, lay.delimiter);

    // Every data row.
    let need = value_col.max(time_col.unwrap_or(0));
    let limit = if delim == Delimiter::Whitespace {
        0
    } else {
        need
    };
    let mut parser = RowParser {
        splitter: Splitter::new(delim).with_limit(limit),
        delim,
        limit,
        decimal: lay.decimal,
        value_col,
        time_col,
        form,
        check_first: value_col != 1 && time_col != Some(1),
        numeric_stamps: form.is_some_and(|f| f.of_number(0.0).is_some()),
        whole_stamps: time_col.is_some_and(|tc| {
            let mut s = Splitter::new(delim).with_limit(limit);
            s.split(&first_text).is_ok() && fields::is_whole(s.field(&first_text, tc - 1).trim())
        }),
        single: delim == Delimiter::Whitespace && value_col == 1 && time_col.is_none(),
        sep: match delim {
            Delimiter::Comma => Some(b','),
            Delimiter::Semicolon => Some(b';'),
            Delimiter::Tab => Some(b'\t'),
            Delimiter::Whitespace => None,
        },
    };
    let mut c = Collected::new(label, opts, time_col, resolved.conv, first_line);
    while let Some((n, t)) = queued.pop_front() {
        c.take(&mut parser, n, &t)?;
    }
    let bom = lines.had_bom();
    let (n_lines, n_bytes) = match reading {
        RowReading::Serial => {
            while let Some(line) = lines.next_line()? {
                c.take(&mut parser, line.number, line.text)?;
            }
            (lines.lines(), lines.bytes())
        }
        RowReading::Blocks { block, piece } => {
            let Some((rest, before, bytes_before)) = lines.into_rest() else {
                return Err(ReadError::file(label, "no readings"));
            };
            let comments =
                CommentStyle::with_extra(&opts.comments).map_err(|m| ReadError::file(label, m))?;
            let rule = c.piece_rule();
            let (n, b) = parallel::read_blocks(
                rest,
                label,
                before,
                block,
                piece,
                |bytes| parse_piece(bytes, &parser, &comments, rule, label),
                |p, before| c.take_piece(p, before),
            )?;
            (n, bytes_before + b)
        }
    };

    let mut notes: Vec<String> = Vec::new();
    notes.extend(resolved.note.iter().cloned());
    notes.extend(lay.decimal_note.iter().cloned());
    let data_end = c.trailer.take().map(|(tl, text, _, count)| DataEnd {
        last_data_line: c.last_line,
        text_line: tl,
        text: fields::shorten(&text),
        lines_ignored: count,
    });
    if let Some(d) = &data_end {
        notes.push(format!(
            "the readings end at line {}: {} line(s) of text after them ignored, from line {} ('{}')",
            d.last_data_line, d.lines_ignored, d.text_line, d.text
        ));
    }
    if c.rows < 2 {
        return Err(ReadError::at(
            label,
            c.last_line,
            "only one reading; expected at least 2 to form a record",
        ));
    }
    let (tau0, tau0_from_timestamps, inserted) = c.place()?;
    let snap = snap_info(opts, &c, tau0, &mut notes);
    let (rows, lo, hi) = (c.rows, c.lo, c.hi);
    let (mut values, slot_lines) = (c.values, c.slot_lines);
    if values.iter().all(|v| v.is_nan()) {
        return Err(ReadError::file(
            label,
            format!("all {rows} readings are missing values (NaN, - or empty); expected numbers"),
        ));
    }
    let unwrap = match opts.wrap {
        Some(period) => Some(unwrap_values(
            label,
            period,
            &mut values,
            &slot_lines,
            &mut notes,
        )?),
        None => None,
    };
    let range = if unwrap.is_some() {
        value_range(&values)
    } else {
        (lo, hi)
    };
    let warnings = plausibility(
        resolved.kind,
        resolved.conv,
        range,
        &resolved.symbol,
        resolved.source,
    );

    values.shrink_to_fit();
    let record = build_record(label, resolved.kind, values, tau0)?;
    Ok(Series {
        record,
        info: SeriesInfo {
            path: label.to_path_buf(),
            format: InputFormat::Text,
            binary: None,
            lines: n_lines,
            bytes: n_bytes,
            bom,
            preamble: lay.preamble,
            preamble_lines: lay.preamble_lines,
            header: lay.header.as_ref().map(|h| h.fields.clone()),
            header_line: lay.header.as_ref().map(|h| h.line),
            first_data_line: Some(lay.first_line),
            delimiter: Some(delim),
            decimal_comma: lay.decimal_note.clone(),
            value_column: value_col,
            time_column: time_col,
            time_kind: form.map(TimeForm::kind),
            unit: resolved.symbol,
            unit_source: resolved.source,
            tau0_from_timestamps,
            inserted_gaps: inserted as usize,
            start_time: form.map(TimeForm::start),
            start_unix: match form {
                Some(TimeForm::Iso { s0, ns0 }) => Some((s0, ns0)),
                _ => None,
            },
            data_end,
            snap,
            unwrap,
            notes,
            warnings,
        },
    })
}

/// The columns of a text series (1-based): the readings and the stamps.
#[derive(Debug, Clone, Copy)]
struct Columns {
    /// Fields of the first data line.
    all: usize,
    /// The readings.
    value: usize,
    /// The stamps, if any.
    time: Option<usize>,
}

/// Which columns hold the readings and the stamps: as asked, else the
/// last numeric column of the first data line and column 1 for the stamps
/// when there are two or more columns; refused when a column is beyond the
/// line, both are the same, or τ0 cannot be known.
fn choose_columns(
    label: &Path,
    opts: &SeriesOptions,
    lay: &layout::Layout,
    first_line: u64,
    first_text: &str,
) -> Result<Columns, ReadError> {
    let delim = lay.delimiter;
    let mut probe = Splitter::new(delim);
    let nall = probe.split(first_text).map_err(|_| {
        ReadError::at(
            label,
            first_line,
            "a quote (\") opens a field that does not close on this line; expected a closing quote",
        )
    })?;
    let ncols = lay
        .columns
        .max(lay.header.as_ref().map_or(0, |h| h.fields.len()))
        .min(nall);
    let value_col = match opts.value_column {
        Some(c) => c,
        None => (0..ncols)
            .rev()
            .find(|&i| {
                matches!(
                    fields::token(probe.field(first_text, i), lay.decimal),
                    fields::Token::Number(_) | fields::Token::Missing | fields::Token::Bad
                )
            })
            .map(|i| i + 1)
            .unwrap_or(ncols),
    };
    let time_col = match opts.time_column {
        Some(c) => Some(c),
        None if !opts.no_time_column && ncols >= 2 && value_col != 1 => Some(1),
        None => None,
    };
    for (name, c) in [("value", Some(value_col)), ("time", time_col)] {
        if let Some(c) = c {
            if c > nall {
                return Err(ReadError::at(
                    label,
                    first_line,
                    format!(
                        "{name} column {c} was asked for, but the line has {nall} field{} ({} separated); expected a column from 1 to {nall}",
                        if nall == 1 { "" } else { "s" },
                        delim.name()
                    ),
                ));
            }
        }
    }
    if time_col == Some(value_col) {
        return Err(ReadError::file(
            label,
            format!(
                "value column and time column are both {value_col}; expected two different columns"
            ),
        ));
    }
    if time_col.is_none() && opts.tau0.is_none() {
        let why = if opts.no_time_column {
            "--time-column none was given"
        } else {
            "the file has no time column"
        };
        return Err(ReadError::file(
            label,
            format!("the sampling interval τ0 is unknown: {why}; give --tau0 (e.g. 1s) or --time-column"),
        ));
    }
    Ok(Columns {
        all: nall,
        value: value_col,
        time: time_col,
    })
}

/// The unit of the readings (option, header or default) and the form of
/// the stamps (seconds in the header's unit, ISO-8601, MJD), read from the
/// header and the first data line.
fn read_units(
    label: &Path,
    opts: &SeriesOptions,
    lay: &layout::Layout,
    cols: &Columns,
    first_line: u64,
    first_text: &str,
) -> Result<(Resolved, Option<TimeForm>), ReadError> {
    let header_field = |c: usize| {
        lay.header
            .as_ref()
            .and_then(|h| h.fields.get(c - 1).map(|f| (f.as_str(), h.line)))
    };
    let resolved = resolve_unit(label, opts, header_field(cols.value), cols.value)?;
    if opts.wrap.is_some() && resolved.kind == DataKind::Freq {
        return Err(ReadError::file(
            label,
            "--wrap unwraps phase (time-interval) readings; these are frequency readings",
        ));
    }
    let Some(tc) = cols.time else {
        return Ok((resolved, None));
    };
    let tunit = time_unit(label, header_field(tc), tc)?;
    let mut probe = Splitter::new(lay.delimiter);
    // The line split in `choose_columns` already.
    let _ = probe.split(first_text);
    let f = if tc <= cols.all {
        probe.field(first_text, tc - 1)
    } else {
        ""
    };
    match TimeForm::detect(f, tunit, lay.decimal) {
        Some(form) => Ok((resolved, Some(form))),
        None => Err(text::field_error(
            label,
            first_line,
            tc,
            format!(
                "time field {tc} is '{}': {TIME_EXPECTED}",
                fields::shorten(f)
            ),
        )),
    }
}

/// The data rows as they stream in: the values (converted to SI), and the
/// stamps as needed to place them — on the τ0 grid at once when τ0 is
/// given, else kept (spacings, or the times with --snap) until
/// `Collected::place` knows τ0.
struct Collected<'a> {
    label: &'a Path,
    opts: &'a SeriesOptions,
    time_col: Option<usize>,
    conv: Conversion,
    /// Keep (slot, line) pairs, for the messages of --wrap and --snap.
    keep_lines: bool,
    grid: Option<Grid>,
    values: Vec<f64>,
    /// While τ0 is unknown, with --snap: the times.
    times: Vec<f64>,
    /// While τ0 is unknown, without --snap: the spacings Δt_i.
    spacings: Spacings,
    prev_t: f64,
    map: LineMap,
    /// (slot, line), only for --wrap and --snap.
    slot_lines: Vec<(u64, u64)>,
    rows: usize,
    last_line: u64,
    /// A line of text after the readings: line, text, first field, count.
    trailer: Option<(u64, String, String, u64)>,
    /// The smallest and largest value (for the plausibility check).
    lo: f64,
    hi: f64,
}

impl<'a> Collected<'a> {
    fn new(
        label: &'a Path,
        opts: &'a SeriesOptions,
        time_col: Option<usize>,
        conv: Conversion,
        first_line: u64,
    ) -> Self {
        Self {
            label,
            opts,
            time_col,
            conv,
            keep_lines: opts.wrap.is_some() || opts.snap.is_some(),
            grid: match (opts.tau0, time_col) {
                (Some(t), Some(_)) => Some(Grid::new(t, opts.snap)),
                _ => None,
            },
            values: Vec::new(),
            times: Vec::new(),
            spacings: Spacings::default(),
            prev_t: 0.0,
            map: LineMap::default(),
            slot_lines: Vec::new(),
            rows: 0,
            last_line: first_line,
            trailer: None,
            lo: f64::INFINITY,
            hi: f64::NEG_INFINITY,
        }
    }

    /// Take line `number`: a reading, a blank, or text after the readings
    /// (refused when readings follow it).
    fn take(&mut self, parser: &mut RowParser, number: u64, line: &str) -> Result<(), ReadError> {
        match parser.parse(self.label, number, line)? {
            Row::Blank => Ok(()),
            Row::Text => {
                self.take_text(number, Some(line));
                Ok(())
            }
            Row::Data(v, t) => {
                let v = self.conv.apply(v);
                self.take_data(number, v, t)
            }
        }
    }

    /// What the pieces of the rest of the file work out where they are
    /// parsed ([`Piece::finish`]).
    fn piece_rule(&self) -> PieceRule {
        PieceRule {
            conv: self.conv,
            spacings: self.spacings_only(),
            one_step: match &self.grid {
                Some(g) if self.opts.snap.is_none() && !self.keep_lines => Some(g.tau0),
                _ => None,
            },
        }
    }

    /// True when the stamps are kept as their spacings only: τ0 from the
    /// stamps, no --snap, no --wrap.
    fn spacings_only(&self) -> bool {
        self.time_col.is_some()
            && self.grid.is_none()
            && self.opts.snap.is_none()
            && !self.keep_lines
    }

    /// A line of text after the readings (its text is needed only for the
    /// first one).
    fn take_text(&mut self, number: u64, line: Option<&str>) {
        match self.trailer.as_mut() {
            None => {
                let line = line.unwrap_or("");
                let first = line
                    .split([',', ';', '\t', ' '])
                    .next()
                    .map(fields::unquote)
                    .unwrap_or("")
                    .to_string();
                self.trailer = Some((number, line.to_string(), first, 1));
            }
            Some(t) => t.3 += 1,
        }
    }

    /// The rows of a piece parsed apart ([`parse_piece`]), `before` lines
    /// of the file before it: the same steps as [`Collected::take`] row by
    /// row; a piece of readings only (no text among them) appended at once,
    /// with its stamps' spacings when τ0 comes from the stamps and each
    /// spacing is positive.
    fn take_piece(&mut self, p: Piece, before: u64) -> Result<(), ReadError> {
        let plain = p.texts.is_empty()
            && !self.keep_lines
            && self.trailer.is_none()
            && self.values.len() + p.values.len() <= MAX_POINTS;
        let untimed = self.time_col.is_none();
        // With stamps: every spacing positive, the first row's included.
        let spaced = self.spacings_only()
            && p.times.len() == p.values.len()
            && p.spacings.len() + 1 == p.values.len()
            && (self.rows == 0 || p.times[0] - self.prev_t > 0.0);
        // τ0 given (the piece is asked only then, without --snap or --wrap:
        // `piece_rule`): every stamp one τ0 after the one before, the first
        // row's included (then each reading takes the next slot).
        let stepped = p.one_step
            && !p.values.is_empty()
            && p.times.len() == p.values.len()
            && self
                .grid
                .as_ref()
                .is_some_and(|g| !g.started || steps(p.times[0] - g.prev_t, g.tau0) == Ok(1));
        if plain && !p.values.is_empty() && (untimed || spaced || stepped) {
            if stepped {
                let g = self.grid.as_mut().expect("a grid when stepped");
                g.place_one_steps(p.times[p.times.len() - 1], p.values.len());
            }
            if spaced {
                if self.rows > 0 {
                    self.spacings.push(p.times[0] - self.prev_t);
                }
                self.spacings.append(p.spacings);
                self.prev_t = p.times[p.times.len() - 1];
                for &(row, line) in &p.breaks {
                    self.map.push(self.rows + row, before + line);
                }
                self.map.last = before + p.last;
            }
            self.last_line = before + p.last;
            self.values.extend_from_slice(&p.values);
            // NaN compares false: an empty piece's extremes change nothing.
            if p.lo < self.lo {
                self.lo = p.lo;
            }
            if p.hi > self.hi {
                self.hi = p.hi;
            }
            self.rows += p.values.len();
        } else {
            let mut texts = p.texts.into_iter().peekable();
            let mut breaks = p.breaks.iter().peekable();
            let mut line = 0;
            for (row, &v) in p.values.iter().enumerate() {
                while let Some((_, l, text)) = texts.next_if(|t| t.0 == row) {
                    self.take_text(before + l, text.as_deref());
                }
                line = match breaks.next_if(|b| b.0 == row) {
                    Some(&(_, l)) => l,
                    None => line + 1,
                };
                self.take_data(before + line, v, p.times.get(row).copied())?;
            }
            for (_, l, text) in texts {
                self.take_text(before + l, text.as_deref());
            }
        }
        match p.error {
            Some(mut e) => {
                e.line = e.line.map(|l| l + before);
                Err(e)
            }
            None => Ok(()),
        }
    }

    /// A reading (NaN for a missing one) in the record's unit and its
    /// time, on line `number`.
    fn take_data(&mut self, number: u64, v: f64, t: Option<f64>) -> Result<(), ReadError> {
        let label = self.label;
        if let Some((tl, _, first, _)) = &self.trailer {
            let what = if self.time_col == Some(1) {
                format!(
                    "time field 1 is '{}': {TIME_EXPECTED}",
                    fields::shorten(first)
                )
            } else {
                text::not_a_number(first, 1)
            };
            return Err(text::field_error(
                label,
                *tl,
                1,
                format!(
                    "{what}; readings go on at line {number}, so this line is not a closing block of text"
                ),
            ));
        }
        // NaN compares false: gaps are skipped.
        if v < self.lo {
            self.lo = v;
        }
        if v > self.hi {
            self.hi = v;
        }
        match (t, self.grid.as_mut()) {
            (Some(t), Some(g)) => {
                let slot = g.place(t).map_err(|m| ReadError::at(label, number, m))?;
                if slot as usize > MAX_POINTS {
                    return Err(too_many(label, number));
                }
                self.values.resize(slot as usize, f64::NAN);
                if self.keep_lines {
                    self.slot_lines.push((slot, number));
                }
            }
            (Some(t), None) => {
                if self.opts.snap.is_some() {
                    self.times.push(t);
                } else {
                    if self.rows > 0 {
                        let dt = t - self.prev_t;
                        if !(dt > 0.0) {
                            return Err(ReadError::at(
                                label,
                                number,
                                "the timestamp is not later than the one before; expected increasing timestamps",
                            ));
                        }
                        self.spacings.push(dt);
                    }
                    self.prev_t = t;
                }
                self.map.push(self.rows, number);
            }
            _ => {
                if self.keep_lines {
                    self.slot_lines.push((self.values.len() as u64, number));
                }
            }
        }
        if self.values.len() >= MAX_POINTS {
            return Err(too_many(label, number));
        }
        self.values.push(v);
        self.rows += 1;
        self.last_line = number;
        Ok(())
    }

    /// τ0 (given, or the median spacing of the stamps) and the placement
    /// of every reading on its grid, gaps inserted for jumps: τ0, whether
    /// it came from the stamps, and the gaps inserted.
    fn place(&mut self) -> Result<(f64, bool, u64), ReadError> {
        let label = self.label;
        let rows = self.rows;
        let keep_lines = self.keep_lines;
        let out = match (self.opts.tau0, self.grid.as_ref()) {
            (Some(t), Some(g)) => {
                g.check_agreement().map_err(|m| ReadError::file(label, m))?;
                (t, false, g.slot + 1 - rows as u64)
            }
            (Some(t), None) => (t, false, 0),
            (None, _) if self.opts.snap.is_none() => {
                let spacings = std::mem::take(&mut self.spacings);
                // τ0 from the median spacing; every spacing checked (the
                // first that fails is named) and the gaps counted.
                let (tau0, total) = spacings.tau0_and_gaps();
                let total =
                    total.map_err(|(i, m)| ReadError::at(label, self.map.line_of(i + 1), m))?;
                if total as usize + rows > MAX_POINTS {
                    return Err(too_many(label, self.last_line));
                }
                if total > 0 || keep_lines {
                    let values = &self.values;
                    let mut grid_values = Vec::with_capacity(rows + total as usize);
                    grid_values.push(values[0]);
                    if keep_lines {
                        self.slot_lines.push((0, self.map.line_of(0)));
                    }
                    for (i, dt) in spacings.iter().enumerate() {
                        let k = steps(dt, tau0).unwrap_or(1);
                        grid_values.resize(grid_values.len() + k as usize - 1, f64::NAN);
                        if keep_lines {
                            self.slot_lines
                                .push((grid_values.len() as u64, self.map.line_of(i + 1)));
                        }
                        grid_values.push(values[i + 1]);
                    }
                    self.values = grid_values;
                }
                (tau0, true, total)
            }
            (None, _) => {
                // --snap: the median spacing to 3 significant digits, then
                // every stamp rounded to the grid through the first.
                let times = &self.times;
                let mid = (times.len() - 2) / 2;
                let median = order_statistic(|| times.windows(2).map(|w| w[1] - w[0]), mid);
                if !(median > 0.0) {
                    // Find the first stamp that does not increase.
                    let i = times.windows(2).position(|w| !(w[1] > w[0])).unwrap_or(0) + 1;
                    return Err(ReadError::at(
                        label,
                        self.map.line_of(i),
                        "the timestamp is not later than the one before; expected increasing timestamps",
                    ));
                }
                let tau0 = snap_tau0(times, median);
                let mut g = Grid::new(tau0, self.opts.snap);
                let mut grid_values: Vec<f64> = Vec::with_capacity(self.values.len());
                for (i, &t) in times.iter().enumerate() {
                    let slot = g
                        .place(t)
                        .map_err(|m| ReadError::at(label, self.map.line_of(i), m))?;
                    if slot as usize >= MAX_POINTS {
                        return Err(too_many(label, self.map.line_of(i)));
                    }
                    self.slot_lines.push((slot, self.map.line_of(i)));
                    grid_values.resize(slot as usize, f64::NAN);
                    grid_values.push(self.values[i]);
                }
                let inserted = g.slot + 1 - rows as u64;
                self.values = grid_values;
                self.grid = Some(g);
                (tau0, true, inserted)
            }
        };
        self.times = Vec::new();
        Ok(out)
    }
}

/// With --snap: how far the stamps were from the grid (and a note), or a
/// note that it had no effect without stamps.
fn snap_info(
    opts: &SeriesOptions,
    c: &Collected,
    tau0: f64,
    notes: &mut Vec<String>,
) -> Option<SnapInfo> {
    match (opts.snap, c.grid.as_ref()) {
        (Some(fraction), Some(g)) => {
            let (j, row) = g.jitter();
            let line = c.slot_lines.get(row).map_or(0, |p| p.1);
            notes.push(format!(
                "timestamps rounded to the τ0 grid (--snap {fraction}): the largest distance from it is {} s ({:.3}·τ0) at line {line}",
                format_sig(j, 3),
                j / tau0
            ));
            Some(SnapInfo {
                fraction,
                largest_jitter: j,
                line,
            })
        }
        (Some(_), None) => {
            notes.push("--snap has no effect: the file has no time column".to_string());
            None
        }
        _ => None,
    }
}

/// Unwrap phase readings that wrap at `period` ([`wrap::unwrap`]); a step
/// too near half a period is refused naming its line.
fn unwrap_values(
    label: &Path,
    period: f64,
    values: &mut [f64],
    slot_lines: &[(u64, u64)],
    notes: &mut Vec<String>,
) -> Result<UnwrapInfo, ReadError> {
    let wraps = wrap::unwrap(values, period).map_err(|e| {
        let line = slot_lines
            .binary_search_by_key(&(e.index as u64), |p| p.0)
            .map_or(0, |i| slot_lines[i].1);
        ReadError::at(
            label,
            line,
            format!(
                "this reading moves {} s ({:.2} of the {} s period) from the one predicted{}, too near half a period to tell which way it wrapped; check --wrap",
                format_sig(e.step, 4),
                e.step / period,
                format_sig(period, 4),
                if e.gap > 1 {
                    format!(" after a gap of {} samples", e.gap - 1)
                } else {
                    String::new()
                }
            ),
        )
    })?;
    notes.push(format!(
        "readings unwrapped at a period of {} s: {wraps} whole period(s) added or removed",
        format_sig(period, 6)
    ));
    Ok(UnwrapInfo { period, wraps })
}

fn too_many(label: &Path, line: u64) -> ReadError {
    ReadError::at(
        label,
        line,
        format!(
            "more than {MAX_POINTS} samples ({} GB in memory); expected a record of at most {MAX_POINTS} samples — decimate or split it",
            MAX_POINTS as f64 * 8.0 / 1e9
        ),
    )
}

fn build_record(
    label: &Path,
    kind: DataKind,
    values: Vec<f64>,
    tau0: f64,
) -> Result<Record, ReadError> {
    Ok(match kind {
        DataKind::Phase => Record::Phase(
            PhaseRecord::new(values, tau0).map_err(|e| ReadError::file(label, e.to_string()))?,
        ),
        DataKind::Freq => Record::Frequency(
            FrequencyRecord::new(values, tau0)
                .map_err(|e| ReadError::file(label, e.to_string()))?,
        ),
    })
}

/// The smallest and largest value, gaps (NaN) skipped.
fn value_range(values: &[f64]) -> (f64, f64) {
    // Plain comparisons: NaN compares false and is skipped.
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for &v in values {
        if v < lo {
            lo = v;
        }
        if v > hi {
            hi = v;
        }
    }
    (lo, hi)
}

/// Warnings for values implausible for the unit in force: phase beyond a
/// second, fractional frequency beyond 10⁻³, readings that look like
/// absolute hertz. (Thresholds ours: a second of time error, or 10⁻³ of
/// frequency, is far beyond any oscillator a timing engineer qualifies.)
fn plausibility(
    kind: DataKind,
    conv: Conversion,
    (lo, hi): (f64, f64),
    unit: &str,
    source: UnitSource,
) -> Vec<String> {
    if !(lo.is_finite() && hi.is_finite()) {
        return Vec::new();
    }
    let biggest = lo.abs().max(hi.abs());
    // Readings as written (before the unit's scale).
    let (raw_lo, raw_hi) = match conv {
        Conversion::Scale(s) if s > 0.0 => (lo / s, hi / s),
        _ => (lo, hi),
    };
    let looks_absolute = raw_lo > 1e3
        && (raw_hi - raw_lo) < 1e-3 * raw_lo
        && !matches!(conv, Conversion::Carrier { .. });
    let absolute_hint = if looks_absolute {
        format!(
            "; they look like absolute frequency readings (all near {} ): give --data freq --units hz --carrier FREQ",
            format_sig(raw_lo, 8)
        )
    } else {
        String::new()
    };
    let unit_hint = if source == UnitSource::Default && !looks_absolute {
        "; if they are in another unit, give --units (or name the unit in the header, e.g. 'phase (ns)')"
    } else {
        ""
    };
    let mut out = Vec::new();
    match (kind, conv) {
        (DataKind::Phase, _) if biggest > PLAUSIBLE_PHASE => out.push(format!(
            "phase readings reach {} s, implausible for phase in {unit} (more than a second){absolute_hint}{unit_hint}",
            format_sig(biggest, 4)
        )),
        (DataKind::Freq, Conversion::Carrier { nu0, .. }) if biggest > PLAUSIBLE_FREQUENCY => {
            out.push(format!(
                "the readings differ from the carrier {} Hz by up to {} (fractional), implausible for an oscillator: is --carrier right?",
                format_sig(nu0, 10),
                format_sig(biggest, 4)
            ))
        }
        (DataKind::Freq, _) if biggest > PLAUSIBLE_FREQUENCY => out.push(format!(
            "fractional frequency reaches {}, implausible for readings in {unit} (above 1e-3){absolute_hint}{unit_hint}",
            format_sig(biggest, 4)
        )),
        _ => {}
    }
    out
}

/// Read an `.npy` file as a series (see [`super::npy`]).
fn read_npy<R: BufRead>(
    mut reader: R,
    label: &Path,
    opts: &SeriesOptions,
) -> Result<Series, ReadError> {
    let h = npy::read_header(&mut reader, label)?;
    let cols = h.columns();
    let value_col = opts.value_column.unwrap_or(cols);
    let time_col = match opts.time_column {
        Some(c) => Some(c),
        None if !opts.no_time_column && cols >= 2 && value_col != 1 => Some(1),
        None => None,
    };
    for (name, c) in [("value", Some(value_col)), ("time", time_col)] {
        if let Some(c) = c {
            if c > cols {
                return Err(ReadError::file(
                    label,
                    format!(
                        "{name} column {c} was asked for, but the .npy array has {cols} column{}; expected a column from 1 to {cols}",
                        if cols == 1 { "" } else { "s" }
                    ),
                ));
            }
        }
    }
    if time_col.is_none() && opts.tau0.is_none() {
        return Err(ReadError::file(
            label,
            "the sampling interval τ0 is unknown: the .npy array has no time column; give --tau0 (e.g. 1s) or --time-column",
        ));
    }
    let resolved = resolve_unit(label, opts, None, value_col)?;
    if opts.wrap.is_some() && resolved.kind == DataKind::Freq {
        return Err(ReadError::file(
            label,
            "--wrap unwraps phase (time-interval) readings; these are frequency readings",
        ));
    }
    let c = npy::read_columns(
        &mut reader,
        label,
        &h,
        value_col - 1,
        time_col.map(|t| t - 1),
        MAX_POINTS,
    )?;
    let rows = c.values.len();
    if rows < 2 {
        return Err(ReadError::file(
            label,
            format!("the .npy array has {rows} reading(s); expected at least 2 to form a record"),
        ));
    }
    let conv = resolved.conv;
    let mut notes = vec![format!(
        "numpy .npy file: {} {} array of {}",
        h.dtype.descr(),
        if cols == 1 {
            "1-D".to_string()
        } else {
            format!("{} × {cols}", h.rows())
        },
        if h.fortran_order {
            "(column after column)"
        } else {
            "(row after row)"
        }
    )];
    let mut values: Vec<f64> = c.values;
    if !matches!(conv, Conversion::Scale(s) if s == 1.0) {
        for v in values.iter_mut() {
            if !v.is_nan() {
                *v = conv.apply(*v);
            }
        }
    }
    let mut tau0_from_timestamps = false;
    let mut inserted = 0u64;
    let mut start_time = None;
    let mut snap = None;
    let tau0 = match c.times {
        None => opts.tau0.unwrap_or(1.0),
        Some(times) => {
            let t0 = times[0];
            if !t0.is_finite() {
                return Err(ReadError::file(
                    label,
                    "row 1: the time is NaN; expected a timestamp in seconds",
                ));
            }
            start_time = Some(t0);
            let tau0 = match opts.tau0 {
                Some(t) => t,
                None => {
                    tau0_from_timestamps = true;
                    let mut s: Vec<f64> = times.windows(2).map(|w| w[1] - w[0]).collect();
                    let mid = (s.len() - 1) / 2;
                    let median = *s.select_nth_unstable_by(mid, f64::total_cmp).1;
                    if !(median > 0.0) {
                        return Err(ReadError::file(
                            label,
                            "the times do not increase; expected increasing timestamps in seconds",
                        ));
                    }
                    if opts.snap.is_some() {
                        snap_tau0(&times, median)
                    } else {
                        crate::units::round_sig(median, 10)
                    }
                }
            };
            let mut g = Grid::new(tau0, opts.snap);
            let mut grid_values = Vec::with_capacity(rows);
            for (i, &t) in times.iter().enumerate() {
                let row_err = |m: String| ReadError::file(label, format!("row {}: {m}", i + 1));
                if !t.is_finite() {
                    return Err(row_err(
                        "the time is NaN; expected a timestamp in seconds".into(),
                    ));
                }
                let slot = g.place(t - t0).map_err(row_err)?;
                if slot as usize >= MAX_POINTS {
                    return Err(row_err("too many samples".into()));
                }
                grid_values.resize(slot as usize, f64::NAN);
                grid_values.push(values[i]);
            }
            if opts.tau0.is_some() {
                g.check_agreement().map_err(|m| ReadError::file(label, m))?;
            }
            if let Some(fraction) = opts.snap {
                let (j, row) = g.jitter();
                notes.push(format!(
                    "timestamps rounded to the τ0 grid (--snap {fraction}): the largest distance from it is {} s ({:.3}·τ0) at row {}",
                    format_sig(j, 3),
                    j / tau0,
                    row + 1
                ));
                snap = Some(SnapInfo {
                    fraction,
                    largest_jitter: j,
                    line: row as u64 + 1,
                });
            }
            inserted = g.slot + 1 - rows as u64;
            values = grid_values;
            tau0
        }
    };
    finish_binary(
        label,
        opts,
        resolved,
        Decoded {
            format: InputFormat::Npy,
            binary: None,
            values,
            rows,
            tau0,
            bytes: h.data_offset as u64 + (h.rows() * cols * h.dtype.size) as u64,
            value_column: value_col,
            time_column: time_col,
            tau0_from_timestamps,
            inserted_gaps: inserted as usize,
            start_time,
            snap,
            notes,
        },
    )
}

/// Read a raw binary file (`--binary`) as a series: element i is the
/// reading at i·τ0 (see [`super::binary`]). τ0 must be given; options that
/// choose columns or describe text are refused, since the file has neither.
fn read_raw<R: BufRead>(
    mut reader: R,
    label: &Path,
    opts: &SeriesOptions,
    format: BinaryFormat,
) -> Result<Series, ReadError> {
    let refuse = |what: &str| {
        Err(ReadError::file(
            label,
            format!(
                "{what} was given, but a raw binary file (--binary {format}) is one flat array of readings with no columns or text; expected none"
            ),
        ))
    };
    if opts.value_column.is_some_and(|c| c != 1) {
        return refuse("a value column");
    }
    if opts.time_column.is_some() {
        return refuse("a time column");
    }
    if opts.snap.is_some() {
        return refuse("--snap (rounding timestamps)");
    }
    if !opts.comments.is_empty() {
        return refuse("--comment");
    }
    if opts.decimal_comma {
        return refuse("--decimal-comma");
    }
    let Some(tau0) = opts.tau0 else {
        return Err(ReadError::file(
            label,
            format!(
                "the sampling interval τ0 is unknown: a raw binary file (--binary {format}) has no time column; expected --tau0 (e.g. 1s; tau0 in a DUT file)"
            ),
        ));
    };
    let resolved = resolve_unit(label, opts, None, 1)?;
    if opts.wrap.is_some() && resolved.kind == DataKind::Freq {
        return Err(ReadError::file(
            label,
            "--wrap unwraps phase (time-interval) readings; these are frequency readings",
        ));
    }
    let mut values = binary::read_values(&mut reader, label, format, MAX_POINTS)?;
    let rows = values.len();
    if rows < 2 {
        return Err(ReadError::file(
            label,
            format!(
                "the raw binary file has {rows} reading(s); expected at least 2 to form a record"
            ),
        ));
    }
    let conv = resolved.conv;
    if !matches!(conv, Conversion::Scale(s) if s == 1.0) {
        for v in values.iter_mut() {
            if !v.is_nan() {
                *v = conv.apply(*v);
            }
        }
    }
    let bytes = (rows * format.size()) as u64;
    let notes = vec![format!(
        "raw binary file: {rows} {} values ({} bytes each), sampled every τ0 = {} s as given",
        format.describe(),
        format.size(),
        format_sig(tau0, 10)
    )];
    finish_binary(
        label,
        opts,
        resolved,
        Decoded {
            format: InputFormat::Binary,
            binary: Some(format),
            values,
            rows,
            tau0,
            bytes,
            value_column: 1,
            time_column: None,
            tau0_from_timestamps: false,
            inserted_gaps: 0,
            start_time: None,
            snap: None,
            notes,
        },
    )
}

/// What a binary reader decoded, before the shared last steps.
struct Decoded {
    format: InputFormat,
    binary: Option<BinaryFormat>,
    /// The readings on the τ0 grid (SI units, NaN for gaps).
    values: Vec<f64>,
    /// Readings in the file.
    rows: usize,
    tau0: f64,
    bytes: u64,
    value_column: usize,
    time_column: Option<usize>,
    tau0_from_timestamps: bool,
    inserted_gaps: usize,
    start_time: Option<f64>,
    snap: Option<SnapInfo>,
    notes: Vec<String>,
}

/// The last steps of every binary reader (`.npy`, raw): refuse all-NaN
/// readings, unwrap (`--wrap`), the unit note, plausibility warnings, the
/// record.
fn finish_binary(
    label: &Path,
    opts: &SeriesOptions,
    resolved: Resolved,
    d: Decoded,
) -> Result<Series, ReadError> {
    let Decoded {
        format,
        binary,
        mut values,
        rows,
        tau0,
        bytes,
        value_column,
        time_column,
        tau0_from_timestamps,
        inserted_gaps,
        start_time,
        snap,
        mut notes,
    } = d;
    let conv = resolved.conv;
    if values.iter().all(|v| v.is_nan()) {
        return Err(ReadError::file(
            label,
            format!("all {rows} readings are NaN; expected numbers"),
        ));
    }
    let unwrap = match opts.wrap {
        Some(period) => {
            let wraps = wrap::unwrap(&mut values, period).map_err(|e| {
                ReadError::file(
                    label,
                    format!(
                        "sample {}: the reading moves {} s from the one predicted, too near half the {} s period to tell which way it wrapped; check --wrap",
                        e.index + 1,
                        format_sig(e.step, 4),
                        format_sig(period, 4)
                    ),
                )
            })?;
            notes.push(format!(
                "readings unwrapped at a period of {} s: {wraps} whole period(s) added or removed",
                format_sig(period, 6)
            ));
            Some(UnwrapInfo { period, wraps })
        }
        None => None,
    };
    if let Some(n) = &resolved.note {
        notes.push(n.clone());
    }
    let warnings = plausibility(
        resolved.kind,
        conv,
        value_range(&values),
        &resolved.symbol,
        resolved.source,
    );
    let record = build_record(label, resolved.kind, values, tau0)?;
    Ok(Series {
        record,
        info: SeriesInfo {
            path: label.to_path_buf(),
            format,
            binary,
            lines: 0,
            bytes,
            bom: false,
            preamble: Vec::new(),
            preamble_lines: 0,
            header: None,
            header_line: None,
            first_data_line: None,
            delimiter: None,
            decimal_comma: None,
            value_column,
            time_column,
            time_kind: time_column.map(|_| TimeKind::Seconds),
            unit: resolved.symbol,
            unit_source: resolved.source,
            tau0_from_timestamps,
            inserted_gaps,
            start_time,
            start_unix: None,
            data_end: None,
            snap,
            unwrap,
            notes,
            warnings,
        },
    })
}

/// An option that would read the file better, with the reason.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Suggestion {
    /// The option as typed (`--wrap 100ns`).
    pub option: String,
    /// Why.
    pub reason: String,
}

/// Options that would read this series better: `--wrap` when phase
/// readings jump by nearly their whole range, again and again
/// ([`wrap::find_wraps`]).
pub fn suggestions(series: &Series) -> Vec<Suggestion> {
    let mut out = Vec::new();
    if let (Record::Phase(p), None) = (&series.record, series.info.unwrap) {
        if let Some(h) = wrap::find_wraps(&p.x) {
            let period = crate::units::round_sig(h.period, 2);
            let typed = crate::units::format_si(period, "s", 3).replace(' ', "");
            out.push(Suggestion {
                option: format!("--wrap {typed}"),
                reason: format!(
                    "the readings jump {} time(s) by about {} while staying within {}: they look like time-interval readings that wrap at one carrier period",
                    h.jumps,
                    crate::units::format_si(h.period, "s", 4),
                    crate::units::format_si(h.range, "s", 4)
                ),
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str, opts: &SeriesOptions) -> Result<Series, ReadError> {
        read_series_from(text.as_bytes(), Path::new("t.txt"), opts)
    }

    fn tau(t: f64) -> SeriesOptions {
        SeriesOptions {
            tau0: Some(t),
            ..Default::default()
        }
    }

    #[test]
    fn one_column() {
        let s = read("1\n2\n3\n", &tau(1.0)).unwrap();
        assert_eq!(
            s.record,
            Record::Phase(PhaseRecord::new(vec![1.0, 2.0, 3.0], 1.0).unwrap())
        );
        assert_eq!(s.info.lines, 3);
        assert!(!s.info.tau0_from_timestamps);
    }

    #[test]
    fn timestamps_give_tau0_and_gaps() {
        let s = read("t,x\n10,1\n12,2\n14,3\n20,4\n", &SeriesOptions::default()).unwrap();
        assert_eq!(s.record.tau0(), 2.0);
        assert_eq!(s.info.inserted_gaps, 2);
        assert_eq!(s.record.len(), 6);
        assert_eq!(s.info.start_time, Some(10.0));
        assert!(s.info.tau0_from_timestamps);
        assert_eq!(s.info.header, Some(vec!["t".into(), "x".into()]));
    }

    #[test]
    fn irregular_line_named() {
        let e = read("0 1\n1 2\n\n# c\n2 3\n3.5 4\n", &SeriesOptions::default()).unwrap_err();
        assert_eq!(e.line, Some(6), "{e}");
    }

    #[test]
    fn line_map() {
        let mut m = LineMap::default();
        for (r, l) in [(0, 3), (1, 4), (2, 7), (3, 8), (4, 9)] {
            m.push(r, l);
        }
        assert_eq!(m.line_of(0), 3);
        assert_eq!(m.line_of(1), 4);
        assert_eq!(m.line_of(2), 7);
        assert_eq!(m.line_of(4), 9);
    }

    #[test]
    fn iso() {
        assert_eq!(parse_iso("1970-01-01T00:00:01Z"), Some((1, 0)));
        assert_eq!(parse_iso("1970-01-01 00:00:01.5"), Some((1, 500_000_000)));
        assert_eq!(parse_iso("1970-01-01T01:00:00+01:00"), Some((0, 0)));
        assert_eq!(parse_iso("1970-01-01 01:00:00+01:00"), Some((0, 0)));
        assert_eq!(parse_iso("yesterday"), None);
    }

    #[test]
    fn grid_snap_and_agreement() {
        let mut g = Grid::new(1.0, Some(0.25));
        assert_eq!(g.place(0.0).unwrap(), 0);
        assert_eq!(g.place(1.03).unwrap(), 1);
        assert_eq!(g.place(1.98).unwrap(), 2);
        assert_eq!(g.place(4.01).unwrap(), 4);
        assert!(g.place(4.3).is_err());
        let (j, row) = g.jitter();
        // Distances 0, 0.03, −0.02, 0.01: mean 0.005, largest about it 0.025.
        assert!((j - 0.025).abs() < 1e-12, "{j}");
        assert_eq!(row, 1);
        let mut g = Grid::new(0.1, None);
        for i in 0..10 {
            g.place(i as f64).unwrap();
        }
        assert!(g
            .check_agreement()
            .unwrap_err()
            .contains("most are more than 8"));
    }

    #[test]
    fn plausibility_warnings() {
        let w = plausibility(
            DataKind::Phase,
            Conversion::Scale(1.0),
            (1e7, 1e7 + 0.1),
            "s",
            UnitSource::Default,
        );
        assert!(w[0].contains("absolute frequency"), "{w:?}");
        let w = plausibility(
            DataKind::Phase,
            Conversion::Scale(1.0),
            (12.0, 13.0),
            "s",
            UnitSource::Default,
        );
        assert!(w[0].contains("--units"), "{w:?}");
        let w = plausibility(
            DataKind::Freq,
            Conversion::Scale(1.0),
            (1e-9, 1e-9),
            "frac",
            UnitSource::Default,
        );
        assert!(w.is_empty());
        let w = plausibility(
            DataKind::Freq,
            Conversion::Carrier {
                nu0: 10e6,
                scale: 1.0,
            },
            (0.5, 0.5),
            "Hz",
            UnitSource::Option,
        );
        assert!(w[0].contains("--carrier"), "{w:?}");
    }
}
