//! Writing a record as a text file that tauwise reads back as it was: the
//! form `prepare` and `simulate` write, so that their outputs go straight
//! into every other command.
//!
//! ```text
//! # tauwise 0.1.0 prepare            ← comment lines: what was done
//! # tau0: 1 s
//! time (s),phase (ns)                ← header: the units of both columns
//! 0,1.25
//! 1,1.5
//! 2,NaN                              ← a gap
//! ```
//!
//! The time column carries τ0 (the stamps are t_first + i·τ0, so the reader
//! takes τ0 from them and keeps every gap) and the start of the record: ISO-8601
//! UTC date-times (`2024-03-11T09:00:00Z`) when the record started at a known
//! date-time, else seconds. The value column's header names its unit
//! ([`super::header_units`]), so `--units` is not needed to read it back.
//! Rows are written by the `csv` crate; numbers in the shortest form that
//! reads back to the same `f64`.

use crate::record::Record;
use crate::units::{FreqUnit, ValueUnit};
use std::fmt::Write as _;
use std::io::Write;

/// Where the record starts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Start {
    /// Seconds (any origin).
    Seconds(f64),
    /// A UTC date-time: Unix seconds and nanoseconds.
    DateTime(i64, u32),
}

/// What to write.
#[derive(Debug, Clone)]
pub struct RecordFile<'a> {
    /// The record (SI units).
    pub record: &'a Record,
    /// The unit to write the values in (must suit the record's kind; `Hz`
    /// needs `carrier`).
    pub unit: ValueUnit,
    /// Carrier ν0 for absolute frequency (`Hz`).
    pub carrier: Option<f64>,
    /// The time of the first sample.
    pub start: Start,
    /// Comment lines written first (without the `# `).
    pub comments: &'a [String],
}

/// A number in the shortest form that reads back to the same `f64` (`NaN`
/// for a gap).
pub fn number_text(out: &mut String, v: f64) {
    if v.is_nan() {
        out.push_str("NaN");
    } else if v == 0.0 || (1e-4..1e15).contains(&v.abs()) {
        let _ = write!(out, "{v}");
    } else {
        let _ = write!(out, "{v:e}");
    }
}

fn unit_header(unit: ValueUnit) -> String {
    match unit {
        ValueUnit::Phase(p) => format!("phase ({})", p.symbol()),
        ValueUnit::Freq(FreqUnit::Frac) => "frequency (frac)".to_string(),
        ValueUnit::Freq(FreqUnit::Ppm) => "frequency (ppm)".to_string(),
        ValueUnit::Freq(FreqUnit::Ppb) => "frequency (ppb)".to_string(),
        ValueUnit::Freq(FreqUnit::Hz) => "frequency (Hz)".to_string(),
    }
}

/// Write `file` to `w`. Errors: a unit that does not suit the record, `Hz`
/// without a carrier, or the writer's own.
pub fn write_record_file(w: &mut dyn Write, file: &RecordFile<'_>) -> std::io::Result<()> {
    let invalid = |m: &str| std::io::Error::new(std::io::ErrorKind::InvalidInput, m.to_string());
    let (values, tau0) = match file.record {
        Record::Phase(p) => (&p.x, p.tau0),
        Record::Frequency(f) => (&f.y, f.tau0),
    };
    let to_unit: Box<dyn Fn(f64) -> f64> = match (file.record, file.unit) {
        (Record::Phase(_), ValueUnit::Phase(u)) => {
            let k = u.to_seconds();
            Box::new(move |v| v / k)
        }
        (Record::Frequency(_), ValueUnit::Freq(FreqUnit::Frac)) => Box::new(|v| v),
        (Record::Frequency(_), ValueUnit::Freq(FreqUnit::Ppm)) => Box::new(|v| v * 1e6),
        (Record::Frequency(_), ValueUnit::Freq(FreqUnit::Ppb)) => Box::new(|v| v * 1e9),
        (Record::Frequency(_), ValueUnit::Freq(FreqUnit::Hz)) => {
            let nu0 = file
                .carrier
                .filter(|c| c.is_finite() && *c > 0.0)
                .ok_or_else(|| invalid("absolute frequency (Hz) needs the carrier frequency"))?;
            Box::new(move |v| nu0 * (1.0 + v))
        }
        _ => {
            return Err(invalid(
                "the unit does not suit the record (phase or frequency)",
            ))
        }
    };
    for c in file.comments {
        writeln!(w, "# {c}")?;
    }
    let mut csv = csv::WriterBuilder::new()
        .has_headers(false)
        .buffer_capacity(1 << 16)
        .from_writer(w);
    let time_header = match file.start {
        Start::Seconds(_) => "time (s)",
        Start::DateTime(..) => "time",
    };
    csv.write_record([time_header.to_string(), unit_header(file.unit)])
        .map_err(csv_error)?;
    let mut t = String::with_capacity(40);
    let mut v = String::with_capacity(32);
    for (i, &x) in values.iter().enumerate() {
        t.clear();
        v.clear();
        match file.start {
            Start::Seconds(t0) => number_text(&mut t, t0 + i as f64 * tau0),
            Start::DateTime(s0, ns0) => {
                let ns = s0 as i128 * 1_000_000_000
                    + ns0 as i128
                    + (i as f64 * tau0 * 1e9).round() as i128;
                let secs = ns.div_euclid(1_000_000_000) as i64;
                let sub = ns.rem_euclid(1_000_000_000) as u32;
                match chrono::DateTime::from_timestamp(secs, sub) {
                    Some(d) => {
                        let _ = write!(t, "{}", d.format("%Y-%m-%dT%H:%M:%S%.fZ"));
                    }
                    None => return Err(invalid("a time stamp is out of the calendar's range")),
                }
            }
        }
        number_text(&mut v, if x.is_nan() { x } else { to_unit(x) });
        csv.write_field(&t).map_err(csv_error)?;
        csv.write_field(&v).map_err(csv_error)?;
        csv.write_record(None::<&[u8]>).map_err(csv_error)?;
    }
    csv.flush()
}

fn csv_error(e: csv::Error) -> std::io::Error {
    match e.into_kind() {
        csv::ErrorKind::Io(e) => e,
        other => std::io::Error::other(format!("{other:?}")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::series::{read_series_from, SeriesOptions};
    use crate::record::{FrequencyRecord, PhaseRecord};
    use crate::units::PhaseUnit;
    use std::path::Path;

    #[test]
    fn phase_in_ns_reads_back() {
        let r = Record::Phase(PhaseRecord::new(vec![1e-9, f64::NAN, -2.5e-9, 3e-12], 0.1).unwrap());
        let mut out = Vec::new();
        write_record_file(
            &mut out,
            &RecordFile {
                record: &r,
                unit: ValueUnit::Phase(PhaseUnit::Ns),
                carrier: None,
                start: Start::Seconds(1000.0),
                comments: &["made in a test".to_string()],
            },
        )
        .unwrap();
        let text = String::from_utf8(out.clone()).unwrap();
        assert!(
            text.starts_with("# made in a test\ntime (s),phase (ns)\n1000,1\n"),
            "{text}"
        );
        let s = read_series_from(&out[..], Path::new("p.csv"), &SeriesOptions::default()).unwrap();
        assert_eq!(s.record.tau0(), 0.1);
        assert_eq!(s.record.len(), 4);
        match (&s.record, &r) {
            (Record::Phase(a), Record::Phase(b)) => {
                for (x, y) in a.x.iter().zip(&b.x) {
                    assert!(
                        (x.is_nan() && y.is_nan()) || (x - y).abs() <= 1e-24,
                        "{x} {y}"
                    );
                }
            }
            _ => panic!("not phase"),
        }
    }

    #[test]
    fn frequency_with_dates_reads_back() {
        let r = Record::Frequency(FrequencyRecord::new(vec![1e-9, 2e-9, f64::NAN], 0.25).unwrap());
        let mut out = Vec::new();
        write_record_file(
            &mut out,
            &RecordFile {
                record: &r,
                unit: ValueUnit::Freq(FreqUnit::Frac),
                carrier: None,
                start: Start::DateTime(1_714_521_600, 500_000_000),
                comments: &[],
            },
        )
        .unwrap();
        let text = String::from_utf8(out.clone()).unwrap();
        assert!(text.contains("2024-05-01T00:00:00.750Z,2e-9"), "{text}");
        let s = read_series_from(&out[..], Path::new("f.csv"), &SeriesOptions::default()).unwrap();
        assert_eq!(s.record.kind(), crate::DataKind::Freq);
        assert_eq!(s.record.tau0(), 0.25);
        assert_eq!(s.info.start_time, Some(1_714_521_600.5));
    }
}
