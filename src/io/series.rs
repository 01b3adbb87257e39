//! Reading a time series (phase or frequency readings, one per line,
//! optionally with a timestamp column) into a [`Record`].
//!
//! The reader streams: lines go through one reused buffer
//! ([`super::text::LineReader`]) and only the `f64` values are kept (plus one
//! `f64` spacing per line while τ0 is still unknown), so a 10^8-line file
//! loads without its text ever being held in memory. Memory: 8 bytes per
//! sample; when τ0 comes from the timestamps, 16 bytes more per line until
//! the spacings have been checked (the spacings and one copy for the median).
//!
//! # Columns (our defaults)
//! - The **value column** is `value_column` (1-based) or, by default, the last
//!   field of the first data line that holds a number.
//! - The **time column** is `time_column`, or by default column 1 when the
//!   file has at least two fields, `tau0` is not given and the value column is
//!   not column 1. When `tau0` is given and no time column is named, the
//!   readings are taken as contiguous and any other column is ignored.
//!
//! # Timestamps and τ0
//! Timestamps are seconds (any origin) or ISO-8601 date-times
//! (`2024-05-01T12:00:00.25Z`, `2024-05-01 12:00:00+02:00`; without an offset
//! they are taken as UTC). They must increase. τ0 is `tau0` or, when not
//! given, the median of the spacings Δt_i = t_i − t_{i−1} (the lower median
//! for an even count, so that it is a spacing actually seen; rounded to 10
//! significant digits). Each spacing must be k·τ0 for a whole k ≥ 1 within
//! 1 % of τ0, i.e. |Δt/τ0 − k| ≤ 0.01; a spacing of k·τ0 inserts k − 1 gaps
//! (NaN). Samples are placed by accumulating k, so a time base that runs
//! slightly fast or slow does not break the placement.
//!
//! # Units
//! Phase: `s ms us ns ps` (multiplied into seconds). Frequency: `frac`, `ppm`
//! (×10⁻⁶), `ppb` (×10⁻⁹), and `hz` for absolute readings ν, converted to
//! fractional frequency y = (ν − ν0)/ν0 with the carrier ν0 (IEEE Std 1139
//! definition of y).
//!
//! # Missing values
//! `NaN`, an empty field and `-` in the value column are gaps (NaN).

use super::text::{self, Delimiter, LineReader};
use super::ReadError;
use crate::record::{DataKind, FrequencyRecord, PhaseRecord, Record};
use crate::units::{FreqUnit, ValueUnit};
use std::io::BufRead;
use std::path::{Path, PathBuf};

/// Largest number of missing samples one timestamp jump may insert.
pub const MAX_JUMP: u64 = 10_000_000;

/// Relative tolerance of a timestamp spacing against a whole multiple of τ0.
pub const SPACING_TOLERANCE: f64 = 0.01;

/// How to interpret a time-series file. `Default` reads phase in seconds
/// from the last numeric column, with τ0 from timestamps in column 1.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SeriesOptions {
    /// Phase or frequency; `None` → phase, unless `unit` is a frequency unit.
    pub kind: Option<DataKind>,
    /// Unit of the readings; default `s` for phase, `frac` for frequency.
    pub unit: Option<ValueUnit>,
    /// Sampling interval in seconds; `None` → median timestamp spacing
    /// (needs a time column).
    pub tau0: Option<f64>,
    /// Nominal (carrier) frequency ν0 in Hz; needed for unit `hz`.
    pub carrier: Option<f64>,
    /// 1-based value column; default: last numeric column.
    pub value_column: Option<usize>,
    /// 1-based time column; default: column 1 when the file has ≥ 2 fields,
    /// `tau0` is absent and the value column is not column 1; else none.
    pub time_column: Option<usize>,
}

/// What was found while reading a series.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesInfo {
    /// The input path (`-` for standard input).
    pub path: PathBuf,
    /// Lines read, including comments and blank lines.
    pub lines: u64,
    /// Bytes read.
    pub bytes: u64,
    /// The header line's fields, when there was one.
    pub header: Option<Vec<String>>,
    /// True when τ0 was taken from the median timestamp spacing.
    pub tau0_from_timestamps: bool,
    /// Gaps inserted for timestamp jumps (not counting NaN readings).
    pub inserted_gaps: usize,
    /// First timestamp in seconds (ISO-8601 date-times as Unix seconds).
    pub start_time: Option<f64>,
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
#[derive(Debug, Clone, Copy)]
enum Conversion {
    Scale(f64),
    Carrier(f64),
}

impl Conversion {
    #[inline]
    fn apply(self, v: f64) -> f64 {
        match self {
            Conversion::Scale(s) => v * s,
            Conversion::Carrier(nu0) => (v - nu0) / nu0,
        }
    }
}

fn check_options(path: &Path, opts: &SeriesOptions) -> Result<(DataKind, Conversion), ReadError> {
    let bad = |msg: String| ReadError::file(path, msg);
    let kind = match (opts.kind, opts.unit) {
        (Some(k), _) => k,
        (None, Some(ValueUnit::Freq(_))) => DataKind::Freq,
        (None, _) => DataKind::Phase,
    };
    let conv = match (kind, opts.unit) {
        (DataKind::Phase, None) => Conversion::Scale(1.0),
        (DataKind::Phase, Some(ValueUnit::Phase(u))) => Conversion::Scale(u.to_seconds()),
        (DataKind::Phase, Some(ValueUnit::Freq(u))) => {
            return Err(bad(format!(
                "unit '{}' is a frequency unit but the data are phase; expected one of s ms us ns ps, or --data freq",
                u.symbol()
            )))
        }
        (DataKind::Freq, Some(ValueUnit::Phase(u))) => {
            return Err(bad(format!(
                "unit '{}' is a phase unit but the data are frequency; expected one of frac ppm ppb hz, or --data phase",
                u.symbol()
            )))
        }
        (DataKind::Freq, None | Some(ValueUnit::Freq(FreqUnit::Frac))) => Conversion::Scale(1.0),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Ppm))) => Conversion::Scale(1e-6),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Ppb))) => Conversion::Scale(1e-9),
        (DataKind::Freq, Some(ValueUnit::Freq(FreqUnit::Hz))) => match opts.carrier {
            Some(nu0) if nu0.is_finite() && nu0 > 0.0 => Conversion::Carrier(nu0),
            Some(nu0) => {
                return Err(bad(format!(
                    "carrier frequency {nu0} Hz: expected a positive frequency"
                )))
            }
            None => {
                return Err(bad(
                    "unit hz (absolute frequency readings) needs the carrier frequency: give --carrier (e.g. 10MHz)"
                        .to_string(),
                ))
            }
        },
    };
    if let Some(t) = opts.tau0 {
        if !(t.is_finite() && t > 0.0) {
            return Err(bad(format!(
                "τ0 = {t} s: expected a positive sampling interval"
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
    Ok((kind, conv))
}

/// How the time column is written.
#[derive(Debug, Clone, Copy, PartialEq)]
enum TimeForm {
    Seconds { t0: f64 },
    Iso { s0: i64, ns0: u32 },
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

impl TimeForm {
    /// Decide the form from the first timestamp.
    fn detect(field: &str) -> Option<TimeForm> {
        if let Some(t) = text::parse_finite(field) {
            return Some(TimeForm::Seconds { t0: t });
        }
        parse_iso(field).map(|(s0, ns0)| TimeForm::Iso { s0, ns0 })
    }

    fn start(self) -> f64 {
        match self {
            TimeForm::Seconds { t0 } => t0,
            TimeForm::Iso { s0, ns0 } => s0 as f64 + ns0 as f64 * 1e-9,
        }
    }

    /// Time since the first timestamp, in seconds.
    #[inline]
    fn relative(self, field: &str) -> Option<f64> {
        match self {
            TimeForm::Seconds { t0 } => text::parse_finite(field).map(|t| t - t0),
            TimeForm::Iso { s0, ns0 } => {
                parse_iso(field).map(|(s, ns)| (s - s0) as f64 + (ns as f64 - ns0 as f64) * 1e-9)
            }
        }
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

/// Number of τ0 steps in a spacing, or an error message.
#[inline]
fn steps(dt: f64, tau0: f64) -> Result<u64, String> {
    let q = dt / tau0;
    let k = q.round();
    if !(k >= 1.0 && (q - k).abs() <= SPACING_TOLERANCE) {
        return Err(format!(
            "timestamps are {} s apart, which is {:.4}·τ0 (τ0 = {} s); expected a whole multiple of τ0 within {} %",
            crate::units::format_sig(dt, 6),
            q,
            crate::units::format_sig(tau0, 6),
            SPACING_TOLERANCE * 100.0
        ));
    }
    if k as u64 - 1 > MAX_JUMP {
        return Err(format!(
            "timestamps jump by {} s ({} samples of τ0 = {} s); more than {} missing samples in one jump: check the time column and τ0",
            crate::units::format_sig(dt, 6),
            k,
            crate::units::format_sig(tau0, 6),
            MAX_JUMP
        ));
    }
    Ok(k as u64)
}

/// Pull the value and time fields of one line.
#[inline]
fn pick(
    delim: Delimiter,
    line: &str,
    value_col: usize,
    time_col: Option<usize>,
) -> (Option<&str>, Option<&str>, usize) {
    let need = value_col.max(time_col.unwrap_or(0));
    let mut value = None;
    let mut time = None;
    let mut n = 0;
    for (i, f) in delim.fields(line).enumerate() {
        n = i + 1;
        if n == value_col {
            value = Some(f);
        }
        if Some(n) == time_col {
            time = Some(f);
        }
        if n >= need {
            break;
        }
    }
    (value, time, n)
}

/// Read a time series from any buffered reader; `label` names it in errors.
pub fn read_series_from<R: BufRead>(
    reader: R,
    label: &Path,
    opts: &SeriesOptions,
) -> Result<Series, ReadError> {
    let (kind, conv) = check_options(label, opts)?;
    let mut lines = LineReader::new(reader, label);

    // 1. Header and the first data line: delimiter and columns.
    let mut header_raw: Option<String> = None;
    let first = loop {
        let Some(line) = lines.next_line()? else {
            let what = if lines.bytes() == 0 {
                "the file is empty; expected one reading per line (or columns with a value and a timestamp)".to_string()
            } else if let Some(h) = &header_raw {
                format!(
                    "only a header line ('{}') and no readings; expected numbers on the following lines",
                    text::shorten(h)
                )
            } else {
                "no readings, only comments or blank lines; expected one reading per line"
                    .to_string()
            };
            return Err(ReadError::file(label, what));
        };
        let d = Delimiter::sniff(line.text);
        if header_raw.is_none() && text::is_header(&d.split_trimmed(line.text)) {
            header_raw = Some(line.text.to_string());
            continue;
        }
        break (line.number, line.text.to_string());
    };
    let (first_line, first_text) = first;
    let delim = Delimiter::sniff(&first_text);
    // All fields of the first line, and the count without the empty fields
    // of a trailing delimiter (unless the header names those columns).
    let first_fields: Vec<&str> = delim.fields(&first_text).collect();
    let header: Option<Vec<String>> = header_raw.as_deref().map(|h| {
        delim
            .split_trimmed(h)
            .iter()
            .map(|s| s.to_string())
            .collect()
    });
    let ncols = delim
        .split_trimmed(&first_text)
        .len()
        .max(header.as_ref().map_or(0, |h| h.len()))
        .min(first_fields.len());
    let value_col = match opts.value_column {
        Some(c) => c,
        None => first_fields[..ncols]
            .iter()
            .rposition(|f| !matches!(text::classify(f), text::Field::Text))
            .map(|i| i + 1)
            .unwrap_or(ncols),
    };
    let time_col = match opts.time_column {
        Some(c) => Some(c),
        None if opts.tau0.is_none() && ncols >= 2 && value_col != 1 => Some(1),
        None => None,
    };
    for (name, c) in [("value", Some(value_col)), ("time", time_col)] {
        if let Some(c) = c {
            let n = first_fields.len();
            if c > n {
                return Err(ReadError::at(
                    label,
                    first_line,
                    format!(
                        "{name} column {c} was asked for, but the line has {n} field{} ({} separated); expected a column from 1 to {n}",
                        if n == 1 { "" } else { "s" },
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
        return Err(ReadError::file(
            label,
            "the sampling interval τ0 is unknown: the file has no time column; give --tau0 (e.g. 1s) or --time-column",
        ));
    }
    let form = match time_col {
        Some(tc) => {
            let f = first_fields.get(tc - 1).copied().unwrap_or("");
            match TimeForm::detect(f) {
                Some(form) => Some(form),
                None => {
                    return Err(text::field_error(
                        label,
                        first_line,
                        tc,
                        format!("time field {tc} is '{}': {TIME_EXPECTED}", text::shorten(f)),
                    ))
                }
            }
        }
        None => None,
    };

    // 2. Stream every data line.
    let mut values: Vec<f64> = Vec::new();
    let mut spacings: Vec<f64> = Vec::new(); // only while τ0 is unknown
    let mut map = LineMap::default();
    let mut prev_t = 0.0f64;
    let mut inserted: u64 = 0;
    let mut rows: usize = 0;
    let mut last_line = first_line;
    let stream_tau0 = opts.tau0;

    let mut handle = |number: u64, line: &str| -> Result<(), ReadError> {
        let (vf, tf, n) = pick(delim, line, value_col, time_col);
        let Some(vf) = vf else {
            return Err(ReadError::at(
                label,
                number,
                format!(
                    "the line has {n} field{}; expected at least {} (value column {value_col})",
                    if n == 1 { "" } else { "s" },
                    value_col.max(time_col.unwrap_or(0))
                ),
            ));
        };
        let v = match text::number_or_missing(label, number, vf, value_col)? {
            Some(v) => conv.apply(v),
            None => f64::NAN,
        };
        if let (Some(form), Some(tc)) = (form, time_col) {
            let Some(tf) = tf else {
                return Err(ReadError::at(
                    label,
                    number,
                    format!("the line has {n} fields; expected at least {tc} (time column {tc})"),
                ));
            };
            let t = form.relative(tf).ok_or_else(|| {
                text::field_error(
                    label,
                    number,
                    tc,
                    format!(
                        "time field {tc} is '{}': {TIME_EXPECTED}",
                        text::shorten(tf)
                    ),
                )
            })?;
            if rows > 0 {
                let dt = t - prev_t;
                if dt.is_nan() || dt <= 0.0 {
                    return Err(ReadError::at(
                        label,
                        number,
                        format!(
                            "timestamp '{}' is not later than the one before; expected increasing timestamps",
                            text::shorten(tf)
                        ),
                    ));
                }
                match stream_tau0 {
                    Some(tau0) => {
                        let k = steps(dt, tau0).map_err(|m| ReadError::at(label, number, m))?;
                        if inserted + (k - 1) > 100 * MAX_JUMP {
                            return Err(ReadError::at(
                                label,
                                number,
                                format!(
                                    "more than {} missing samples inserted for timestamp jumps; check the time column and τ0",
                                    100 * MAX_JUMP
                                ),
                            ));
                        }
                        for _ in 1..k {
                            values.push(f64::NAN);
                        }
                        inserted += k - 1;
                    }
                    None => {
                        spacings.push(dt);
                        map.push(rows, number);
                    }
                }
            } else if stream_tau0.is_none() {
                map.push(rows, number);
            }
            prev_t = t;
        }
        values.push(v);
        rows += 1;
        Ok(())
    };

    handle(first_line, &first_text)?;
    while let Some(line) = lines.next_line()? {
        last_line = line.number;
        handle(line.number, line.text)?;
    }

    if rows < 2 {
        return Err(ReadError::at(
            label,
            last_line,
            "only one reading; expected at least 2 to form a record",
        ));
    }

    // 3. τ0 from the median spacing, and placement on the grid.
    let mut tau0_from_timestamps = false;
    let tau0 = match opts.tau0 {
        Some(t) => t,
        None => {
            tau0_from_timestamps = true;
            // The lower median: always one of the spacings actually seen.
            let mut s = spacings.clone();
            let mid = (s.len() - 1) / 2;
            let median = *s.select_nth_unstable_by(mid, f64::total_cmp).1;
            drop(s);
            let tau0 = crate::units::round_sig(median, 10);
            // Check every spacing; count the gaps to insert.
            let mut total: u64 = 0;
            for (i, &dt) in spacings.iter().enumerate() {
                let k = steps(dt, tau0).map_err(|m| ReadError::at(label, map.line_of(i + 1), m))?;
                total += k - 1;
            }
            if total > 100 * MAX_JUMP {
                return Err(ReadError::file(
                    label,
                    format!(
                        "timestamp jumps would insert {total} missing samples (τ0 = {} s); check the time column and τ0",
                        crate::units::format_sig(tau0, 6)
                    ),
                ));
            }
            if total > 0 {
                let mut grid = Vec::with_capacity(values.len() + total as usize);
                grid.push(values[0]);
                for (i, &dt) in spacings.iter().enumerate() {
                    let k = steps(dt, tau0).unwrap_or(1);
                    for _ in 1..k {
                        grid.push(f64::NAN);
                    }
                    grid.push(values[i + 1]);
                }
                values = grid;
            }
            inserted = total;
            tau0
        }
    };
    drop(spacings);

    if values.iter().all(|v| v.is_nan()) {
        return Err(ReadError::file(
            label,
            format!("all {rows} readings are missing values (NaN, - or empty); expected numbers"),
        ));
    }
    values.shrink_to_fit();
    let record = match kind {
        DataKind::Phase => Record::Phase(
            PhaseRecord::new(values, tau0).map_err(|e| ReadError::file(label, e.to_string()))?,
        ),
        DataKind::Freq => Record::Frequency(
            FrequencyRecord::new(values, tau0)
                .map_err(|e| ReadError::file(label, e.to_string()))?,
        ),
    };
    Ok(Series {
        record,
        info: SeriesInfo {
            path: label.to_path_buf(),
            lines: lines.lines(),
            bytes: lines.bytes(),
            header,
            tau0_from_timestamps,
            inserted_gaps: inserted as usize,
            start_time: form.map(TimeForm::start),
        },
    })
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
}
