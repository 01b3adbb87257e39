//! The time-series reader: every kind of bad input with its message, units,
//! timestamps, inserted gaps, delimiters, standard input, and a proptest that
//! random bytes and mutated files never make it panic.
//!
//! Expected values are analytic (unit definitions: 1 ns = 10⁻⁹ s,
//! 1 ppm = 10⁻⁶, 1 ppb = 10⁻⁹; IEEE Std 1139 definition of fractional
//! frequency y = (ν − ν0)/ν0).

mod common;
use common::tauwise as bin;
use proptest::prelude::*;
use std::path::{Path, PathBuf};
use tauwise::io::parallel::RowReading;
use tauwise::io::series::{read_series, read_series_from, read_series_from_with, SeriesOptions};
use tauwise::io::ReadError;
use tauwise::units::{parse_value_unit, FreqUnit, PhaseUnit, ValueUnit};
use tauwise::{DataKind, Record};

fn read(text: &[u8], opts: &SeriesOptions) -> Result<tauwise::io::series::Series, ReadError> {
    read_series_from(text, Path::new("in.txt"), opts)
}

fn tau(t: f64) -> SeriesOptions {
    SeriesOptions {
        tau0: Some(t),
        ..Default::default()
    }
}

fn values(r: &Record) -> Vec<f64> {
    match r {
        Record::Phase(p) => p.x.clone(),
        Record::Frequency(f) => f.y.clone(),
    }
}

fn same(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len()
        && a.iter().zip(b).all(|(x, y)| {
            (x.is_nan() && y.is_nan()) || (x - y).abs() <= 1e-15 * y.abs().max(1e-300)
        })
}

fn err_text(e: &ReadError) -> String {
    e.to_string()
}

// ---------------------------------------------------------------- bad input

#[test]
fn missing_file() {
    let e = read_series(Path::new("/nonexistent/none.txt"), &tau(1.0)).unwrap_err();
    let m = err_text(&e);
    assert!(m.starts_with("/nonexistent/none.txt: "), "{m}");
    assert!(m.contains("no such file"), "{m}");
}

#[test]
fn directory() {
    let d = tempfile::tempdir().unwrap();
    let e = read_series(d.path(), &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("is a directory"), "{e}");
}

#[test]
fn empty_file() {
    let e = read(b"", &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("the file is empty"), "{e}");
    assert_eq!(e.path, PathBuf::from("in.txt"));
}

#[test]
fn only_comments() {
    let e = read(b"# nothing\n\n# here\n", &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("only comments"), "{e}");
}

#[test]
fn header_only() {
    let e = read(b"time,phase\n", &tau(1.0)).unwrap_err();
    let m = err_text(&e);
    assert!(m.contains("no readings"), "{m}");
    assert!(m.contains("'time,phase'"), "{m}");
}

#[test]
fn single_value() {
    let e = read(b"# one\n1.5e-9\n", &tau(1.0)).unwrap_err();
    let m = err_text(&e);
    assert!(m.contains("only one reading"), "{m}");
    assert_eq!(e.line, Some(2));
}

#[test]
fn non_numeric_field_names_line_1234() {
    let mut text = String::from("# phase\n");
    for i in 2..1234 {
        text.push_str(&format!("{}e-9\n", i));
    }
    text.push_str("1.2e-9x\n");
    text.push_str("3e-9\n");
    let e = read(text.as_bytes(), &tau(1.0)).unwrap_err();
    assert_eq!(e.line, Some(1234));
    assert_eq!(e.column, Some(1));
    let m = err_text(&e);
    assert!(m.starts_with("in.txt:1234: "), "{m}");
    assert!(
        m.contains("'1.2e-9x'") && m.contains("expected a number"),
        "{m}"
    );
}

#[test]
fn text_lines_before_the_data_are_a_preamble() {
    // Issue 13: lines of text before the first reading are a preamble; the
    // last one is the header.
    let s = read(b"a,b\nc,d\n1,2\n2,3\n", &SeriesOptions::default()).unwrap();
    assert_eq!(s.info.preamble, vec!["a,b".to_string(), "c,d".to_string()]);
    assert_eq!(s.info.header, Some(vec!["c".into(), "d".into()]));
    assert_eq!(values(&s.record), vec![2.0, 3.0]);
    // Text between readings is an error naming its line.
    let e = read(b"1,2\n2,3\nc,d\n3,4\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!(e.line, Some(3), "{e}");
}

#[test]
fn wrong_column_number() {
    let opts = SeriesOptions {
        value_column: Some(5),
        tau0: Some(1.0),
        ..Default::default()
    };
    let e = read(b"1,2\n3,4\n", &opts).unwrap_err();
    let m = err_text(&e);
    assert!(
        m.contains("value column 5") && m.contains("2 fields"),
        "{m}"
    );
    assert_eq!(e.line, Some(1));
    let opts = SeriesOptions {
        time_column: Some(3),
        ..Default::default()
    };
    let e = read(b"1,2\n3,4\n", &opts).unwrap_err();
    assert!(err_text(&e).contains("time column 3"), "{e}");
    let opts = SeriesOptions {
        value_column: Some(0),
        tau0: Some(1.0),
        ..Default::default()
    };
    assert!(err_text(&read(b"1\n2\n", &opts).unwrap_err()).contains("numbered from 1"));
    // A later line with too few fields.
    let opts = SeriesOptions {
        value_column: Some(2),
        tau0: Some(1.0),
        ..Default::default()
    };
    let e = read(b"1,2\n3,4\n5\n", &opts).unwrap_err();
    assert_eq!(e.line, Some(3), "{e}");
}

#[test]
fn irregular_timestamps_name_the_line() {
    // 1.5 τ0 between lines 4 and 5.
    let e = read(
        b"t x\n0 1\n1 2\n2 3\n3.5 4\n4.5 5\n",
        &SeriesOptions::default(),
    )
    .unwrap_err();
    assert_eq!(e.line, Some(5), "{e}");
    assert!(err_text(&e).contains("whole multiple of τ0"), "{e}");
    // Issue 13: with τ0 given, column 1 still places the readings (and the
    // stamps must agree with τ0); --time-column none reads them contiguous.
    let e = read(b"0 1\n1 2\n2.5 3\n", &tau(1.0)).unwrap_err();
    assert_eq!(e.line, Some(3), "{e}");
    let opts = SeriesOptions {
        tau0: Some(1.0),
        no_time_column: true,
        ..Default::default()
    };
    let s = read(b"0 1\n1 2\n2.5 3\n", &opts).unwrap();
    assert_eq!(values(&s.record), vec![1.0, 2.0, 3.0]);
    // With τ0 given and the time column named (streaming placement).
    let opts = SeriesOptions {
        tau0: Some(1.0),
        time_column: Some(1),
        ..Default::default()
    };
    let e = read(b"0 1\n1 2\n2.5 3\n", &opts).unwrap_err();
    assert_eq!(e.line, Some(3), "{e}");
    // Decreasing and repeated timestamps.
    let e = read(b"0 1\n1 2\n1 3\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!(e.line, Some(3));
    assert!(err_text(&e).contains("not later"), "{e}");
}

#[test]
fn jitter_within_one_percent_is_accepted() {
    let s = read(
        b"0 1\n1.004 2\n2.000 3\n3.003 4\n",
        &SeriesOptions::default(),
    )
    .unwrap();
    assert_eq!(s.record.len(), 4);
    assert_eq!(s.info.inserted_gaps, 0);
    let e = read(b"0 1\n1 2\n2 3\n3.02 4\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!(e.line, Some(4));
}

#[test]
fn tau0_not_positive() {
    for t in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        let e = read(b"1\n2\n", &tau(t)).unwrap_err();
        assert!(err_text(&e).contains("positive sampling interval"), "{e}");
    }
}

#[test]
fn tau0_unknown_without_time_column() {
    let e = read(b"1\n2\n3\n", &SeriesOptions::default()).unwrap_err();
    assert!(err_text(&e).contains("--tau0"), "{e}");
}

#[test]
fn unknown_unit() {
    let e = parse_value_unit("furlongs").unwrap_err();
    assert!(e.to_string().contains("'furlongs'"), "{e}");
}

#[test]
fn unit_kind_mismatch() {
    let opts = SeriesOptions {
        kind: Some(DataKind::Phase),
        unit: Some(ValueUnit::Freq(FreqUnit::Ppm)),
        tau0: Some(1.0),
        ..Default::default()
    };
    assert!(err_text(&read(b"1\n2\n", &opts).unwrap_err()).contains("frequency unit"));
    let opts = SeriesOptions {
        kind: Some(DataKind::Freq),
        unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
        tau0: Some(1.0),
        ..Default::default()
    };
    assert!(err_text(&read(b"1\n2\n", &opts).unwrap_err()).contains("phase unit"));
}

#[test]
fn non_utf8_bytes() {
    let e = read(b"1\n2\n3\xff\n4\n", &tau(1.0)).unwrap_err();
    assert_eq!(e.line, Some(3));
    assert!(err_text(&e).contains("not UTF-8"), "{e}");
}

#[test]
fn hz_without_carrier() {
    let opts = SeriesOptions {
        unit: Some(ValueUnit::Freq(FreqUnit::Hz)),
        tau0: Some(1.0),
        ..Default::default()
    };
    let e = read(b"10000000.1\n10000000.2\n", &opts).unwrap_err();
    assert!(err_text(&e).contains("--carrier"), "{e}");
}

#[test]
fn all_missing() {
    let e = read(b"NaN\n-\nnan\n", &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("all 3 readings are missing"), "{e}");
}

#[test]
fn bad_timestamp_field() {
    let e = read(b"t,x\n0,1\nnoon,2\n3,4\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!((e.line, e.column), (Some(3), Some(1)));
    assert!(err_text(&e).contains("ISO-8601"), "{e}");
}

#[test]
fn binary_file_with_no_line_ends() {
    let junk = vec![b'7'; (1 << 20) + 10];
    let e = read(&junk, &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("longer than"), "{e}");
}

// ---------------------------------------------------------------- units

#[test]
fn phase_units() {
    for (u, scale) in [
        (PhaseUnit::S, 1.0),
        (PhaseUnit::Ms, 1e-3),
        (PhaseUnit::Us, 1e-6),
        (PhaseUnit::Ns, 1e-9),
        (PhaseUnit::Ps, 1e-12),
    ] {
        let opts = SeriesOptions {
            unit: Some(ValueUnit::Phase(u)),
            tau0: Some(1.0),
            ..Default::default()
        };
        let s = read(b"1.5\n-2\n", &opts).unwrap();
        assert_eq!(s.record.kind(), DataKind::Phase);
        assert!(
            same(&values(&s.record), &[1.5 * scale, -2.0 * scale]),
            "{u:?}"
        );
    }
}

#[test]
fn frequency_units() {
    for (u, scale) in [
        (FreqUnit::Frac, 1.0),
        (FreqUnit::Ppm, 1e-6),
        (FreqUnit::Ppb, 1e-9),
    ] {
        let opts = SeriesOptions {
            unit: Some(ValueUnit::Freq(u)),
            tau0: Some(1.0),
            ..Default::default()
        };
        let s = read(b"0.25\n-3\n", &opts).unwrap();
        assert_eq!(
            s.record.kind(),
            DataKind::Freq,
            "a frequency unit implies frequency data"
        );
        assert!(
            same(&values(&s.record), &[0.25 * scale, -3.0 * scale]),
            "{u:?}"
        );
    }
}

#[test]
fn absolute_hz_readings() {
    // y = (ν − ν0)/ν0, IEEE Std 1139.
    let opts = SeriesOptions {
        unit: Some(ValueUnit::Freq(FreqUnit::Hz)),
        carrier: Some(10e6),
        tau0: Some(1.0),
        ..Default::default()
    };
    let s = read(b"10000000.01\n9999999.98\n10000000\n", &opts).unwrap();
    let y = values(&s.record);
    let want = [1e-9, -2e-9, 0.0];
    for (a, b) in y.iter().zip(want) {
        assert!((a - b).abs() < 1e-16, "{a} vs {b}");
    }
}

#[test]
fn frequency_kind_default_unit_is_frac() {
    let opts = SeriesOptions {
        kind: Some(DataKind::Freq),
        tau0: Some(2.0),
        ..Default::default()
    };
    let s = read(b"1e-9\n2e-9\n", &opts).unwrap();
    assert_eq!(values(&s.record), vec![1e-9, 2e-9]);
    assert_eq!(s.record.tau0(), 2.0);
}

// ---------------------------------------------------------------- gaps and timestamps

#[test]
fn missing_value_spellings_are_gaps() {
    let s = read(
        b"t,x\n0,1\n1,NaN\n2,\n3,-\n4,nan\n5,6\n",
        &SeriesOptions::default(),
    )
    .unwrap();
    let v = values(&s.record);
    assert_eq!(v.len(), 6);
    assert_eq!(s.record.gaps(), 4);
    assert_eq!((v[0], v[5]), (1.0, 6.0));
    assert_eq!(s.info.inserted_gaps, 0);
}

#[test]
fn jump_inserts_gaps() {
    // Jumps of 3τ0 and 2τ0 insert 2 and 1 gaps (τ0 = 10 s, the median spacing).
    let s = read(
        b"100 1\n110 2\n140 3\n150 4\n170 5\n180 6\n190 7\n",
        &SeriesOptions::default(),
    )
    .unwrap();
    assert_eq!(s.record.tau0(), 10.0);
    assert!(s.info.tau0_from_timestamps);
    assert_eq!(s.info.inserted_gaps, 3);
    let v = values(&s.record);
    let n = f64::NAN;
    assert!(
        same(&v, &[1.0, 2.0, n, n, 3.0, 4.0, n, 5.0, 6.0, 7.0]),
        "{v:?}"
    );
    assert_eq!(s.info.start_time, Some(100.0));
    // The same with τ0 given and the time column named.
    let opts = SeriesOptions {
        tau0: Some(10.0),
        time_column: Some(1),
        ..Default::default()
    };
    let s2 = read(b"100 1\n110 2\n140 3\n150 4\n170 5\n180 6\n190 7\n", &opts).unwrap();
    assert!(same(&values(&s2.record), &v));
    assert!(!s2.info.tau0_from_timestamps);
    assert_eq!(s2.info.inserted_gaps, 3);
}

#[test]
fn iso_timestamps() {
    let text = b"when,phase_ns\n\
        2024-05-01T00:00:00Z,1\n\
        2024-05-01T00:00:01Z,2\n\
        2024-05-01T00:00:02Z,3\n\
        2024-05-01T00:00:05Z,4\n\
        2024-05-01T00:00:06Z,5\n";
    let opts = SeriesOptions {
        unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
        ..Default::default()
    };
    let s = read(text, &opts).unwrap();
    assert_eq!(s.record.tau0(), 1.0);
    assert_eq!(s.info.inserted_gaps, 2);
    assert_eq!(s.record.len(), 7);
    // 2024-05-01T00:00:00Z is 1714521600 s after the Unix epoch (analytic:
    // 19844 days × 86400 s).
    assert_eq!(s.info.start_time, Some(1_714_521_600.0));
    assert_eq!(s.info.header, Some(vec!["when".into(), "phase_ns".into()]));
}

#[test]
fn iso_with_space_and_fraction_and_offset() {
    // Space-separated columns where the date-time itself has a space.
    let text = b"2024-05-01 00:00:00.000 1\n2024-05-01 00:00:00.250 2\n2024-05-01 00:00:00.500 3\n";
    let s = read(text, &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.tau0(), 0.25);
    assert_eq!(values(&s.record), vec![1.0, 2.0, 3.0]);
    let text = b"2024-05-01T02:00:00+02:00;1\n2024-05-01T02:00:10+02:00;2\n";
    let s = read(text, &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.tau0(), 10.0);
    assert_eq!(s.info.start_time, Some(1_714_521_600.0));
}

#[test]
fn slow_time_base_does_not_break_placement() {
    // Spacing 1.004 s throughout: each step is 1 τ0 within 1 %, although
    // after 100 lines the total is 100.4 τ0.
    let mut text = String::new();
    for i in 0..200 {
        text.push_str(&format!("{} {}\n", i as f64 * 1.004, i));
    }
    let s = read(text.as_bytes(), &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.len(), 200);
    assert_eq!(s.info.inserted_gaps, 0);
    assert!((s.record.tau0() - 1.004).abs() < 1e-12);
}

#[test]
fn columns() {
    let text = b"# t, a, b\n0,10,20\n1,11,21\n2,12,22\n";
    // Default: time = 1, value = last numeric column.
    let s = read(text, &SeriesOptions::default()).unwrap();
    assert_eq!(values(&s.record), vec![20.0, 21.0, 22.0]);
    let opts = SeriesOptions {
        value_column: Some(2),
        ..Default::default()
    };
    assert_eq!(
        values(&read(text, &opts).unwrap().record),
        vec![10.0, 11.0, 12.0]
    );
    // τ0 given and no time column: readings taken as contiguous.
    let opts = SeriesOptions {
        value_column: Some(1),
        tau0: Some(1.0),
        ..Default::default()
    };
    assert_eq!(
        values(&read(text, &opts).unwrap().record),
        vec![0.0, 1.0, 2.0]
    );
    // Time in column 3, value in column 1.
    let opts = SeriesOptions {
        value_column: Some(1),
        time_column: Some(3),
        ..Default::default()
    };
    let s = read(text, &opts).unwrap();
    assert_eq!(s.record.tau0(), 1.0);
    // A first reading that is missing does not move the value column.
    let s = read(b"t,x\n0,NaN\n1,2\n2,3\n", &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.len(), 3);
    assert_eq!(s.record.gaps(), 1);
    let s = read(b"t,x\n0,\n1,2\n2,3\n", &SeriesOptions::default()).unwrap();
    assert_eq!((s.record.len(), s.record.gaps()), (3, 1));
    // A trailing delimiter on every line adds no column.
    let s = read(b"0,1,\n1,2,\n", &SeriesOptions::default()).unwrap();
    assert_eq!(values(&s.record), vec![1.0, 2.0]);
    // A trailing text column does not hide the last numeric column.
    let s = read(b"0,5,ok\n1,6,ok\n", &SeriesOptions::default()).unwrap();
    assert_eq!(values(&s.record), vec![5.0, 6.0]);
}

#[test]
fn delimiters_give_the_same_record() {
    let rows = [(0.0, 1.5e-9), (1.0, 2.5e-9), (2.0, -1e-9), (4.0, 3e-9)];
    let mut results = Vec::new();
    for sep in [",", ";", "\t", "   ", " \t "] {
        let mut text = String::from("time{sep}phase\n").replace("{sep}", sep);
        for (t, x) in rows {
            text.push_str(&format!("{t}{sep}{x}\r\n"));
        }
        let s = read(text.as_bytes(), &SeriesOptions::default()).unwrap();
        assert_eq!(s.info.header.as_ref().map(|h| h.len()), Some(2), "{sep:?}");
        results.push(values(&s.record));
    }
    let n = f64::NAN;
    for r in &results {
        assert!(same(r, &[1.5e-9, 2.5e-9, -1e-9, n, 3e-9]), "{r:?}");
    }
}

#[test]
fn decimal_comma_with_semicolons_or_tabs() {
    for text in [
        &b"Zeit;Phase\n0;1,5e-9\n1;2,25e-9\n"[..],
        &b"0\t1,5e-9\n1\t2,25e-9\n"[..],
    ] {
        let s = read(text, &SeriesOptions::default()).unwrap();
        assert_eq!(values(&s.record), vec![1.5e-9, 2.25e-9]);
    }
}

#[test]
fn comments_blank_lines_quotes_and_counts() {
    let text = b"# from the lab\n\n\"t\",\"x\"\n\"0\",\"1\"\n# pause\n\"1\",\"2\"\n";
    let s = read(text, &SeriesOptions::default()).unwrap();
    assert_eq!(values(&s.record), vec![1.0, 2.0]);
    assert_eq!(s.info.lines, 6);
    assert_eq!(s.info.bytes, text.len() as u64);
    assert_eq!(s.info.header, Some(vec!["t".into(), "x".into()]));
}

#[test]
fn reads_a_file_and_large_input_streams() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("big.txt");
    let mut text = String::with_capacity(2_000_000);
    for i in 0..100_000 {
        text.push_str(&format!("{}\n", (i % 97) as f64 * 1e-12));
    }
    std::fs::write(&p, &text).unwrap();
    let s = read_series(&p, &tau(1.0)).unwrap();
    assert_eq!(s.record.len(), 100_000);
    assert_eq!(values(&s.record)[96], 96.0 * 1e-12);
    assert_eq!(s.info.path, p);
}

// ---------------------------------------------------------------- command line

/// Run `tauwise inspect` on `file` with `args` and `-o out.json`; it must
/// fail with exit code 1 (bad data), print the expected text, and write no
/// output.
fn cli_fails(file: &Path, args: &[&str], expect: &str) {
    cli_fails_with(file, args, expect, 1)
}

/// As [`cli_fails`] for a bad command line: exit code 2 (issue 14).
fn cli_refused(file: &Path, args: &[&str], expect: &str) {
    cli_fails_with(file, args, expect, 2)
}

fn cli_fails_with(file: &Path, args: &[&str], expect: &str, code: i32) {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out.json");
    let o = bin()
        .arg("inspect")
        .arg(file)
        .args(args)
        .args(["--format", "json", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(code), "{file:?} {args:?}: {err}");
    assert!(err.starts_with("tauwise: error: "), "{err}");
    assert!(err.contains(expect), "expected '{expect}' in: {err}");
    assert!(!out.exists(), "no output may be written");
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        0,
        "no temporary file left"
    );
}

#[test]
fn cli_bad_inputs_exit_non_zero_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let w = |name: &str, bytes: &[u8]| {
        let p = dir.path().join(name);
        std::fs::write(&p, bytes).unwrap();
        p
    };
    cli_fails(
        &dir.path().join("absent.txt"),
        &["--tau0", "1s"],
        "no such file",
    );
    cli_fails(dir.path(), &["--tau0", "1s"], "is a directory");
    cli_fails(&w("empty.txt", b""), &["--tau0", "1s"], "the file is empty");
    cli_fails(&w("header.txt", b"time,phase\n"), &[], "no readings");
    cli_fails(
        &w("one.txt", b"1e-9\n"),
        &["--tau0", "1s"],
        "only one reading",
    );
    let mut t = String::new();
    for i in 1..1234 {
        t.push_str(&format!("{i}\n"));
    }
    t.push_str("oops\n1235\n");
    cli_fails(
        &w("text.txt", t.as_bytes()),
        &["--tau0", "1s"],
        "text.txt:1234: field 1 is 'oops'",
    );
    cli_fails(
        &w("cols.txt", b"1 2\n3 4\n"),
        &["--tau0", "1", "--value-column", "3"],
        "value column 3",
    );
    cli_fails(&w("irr.txt", b"0 1\n1 2\n2 3\n3.5 4\n"), &[], "irr.txt:4:");
    cli_refused(&w("ok.txt", b"1\n2\n"), &["--tau0", "0s"], "positive");
    cli_refused(&w("ok2.txt", b"1\n2\n"), &["--tau0", "-1s"], "positive");
    cli_refused(
        &w("ok3.txt", b"1\n2\n"),
        &["--tau0", "1s", "--units", "furlongs"],
        "'furlongs'",
    );
    cli_fails(
        &w("bin.txt", b"1\n\xfe\xff\n"),
        &["--tau0", "1s"],
        "bin.txt:2:",
    );
    cli_fails(
        &w("hz.txt", b"10000000\n10000001\n"),
        &["--tau0", "1s", "--units", "hz"],
        "--carrier",
    );
}

#[test]
fn cli_prepare_failure_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("in.txt");
    std::fs::write(&p, b"1\n2\nbad\n3\n").unwrap();
    let out = dir.path().join("clean.txt");
    let o = bin()
        .arg("prepare")
        .arg(&p)
        .args(["--tau0", "1s", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    assert!(!out.exists());
}

#[test]
fn cli_reads_standard_input() {
    use std::io::Write;
    let mut child = bin()
        .args(["inspect", "-", "--tau0", "1s", "--format", "json"])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(b"# piped\n1e-9\n2e-9\nNaN\n4e-9\n")
        .unwrap();
    let o = child.wait_with_output().unwrap();
    assert!(o.status.success());
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["input"]["path"], "-");
    assert_eq!(v["input"]["points"], 4);
    assert_eq!(v["input"]["gaps"], 1);
}

// ---------------------------------------------------------------- never panics

const VALID: &str =
    "# lab capture\ntime,phase\n0,1.0e-9\n1,1.5e-9\n2,NaN\n3,2.5e-9\n5,3e-9\n6,-\n7,4e-9\n";

fn all_option_sets() -> Vec<SeriesOptions> {
    vec![
        SeriesOptions::default(),
        tau(1.0),
        SeriesOptions {
            kind: Some(DataKind::Freq),
            unit: Some(ValueUnit::Freq(FreqUnit::Hz)),
            carrier: Some(10e6),
            ..Default::default()
        },
        SeriesOptions {
            value_column: Some(1),
            time_column: Some(2),
            ..Default::default()
        },
        SeriesOptions {
            tau0: Some(0.5),
            time_column: Some(1),
            ..Default::default()
        },
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, .. ProptestConfig::default() })]

    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        for opts in all_option_sets() {
            let _ = read(&bytes, &opts);
        }
    }

    #[test]
    fn random_text_never_panics(text in "[0-9eE+\\-.,;: \t\nNaTZ#:x]{0,300}") {
        for opts in all_option_sets() {
            let _ = read(text.as_bytes(), &opts);
        }
    }

    /// The block reader (pieces parsed in parallel) and the line reader
    /// agree on random text — the same record bit for bit and facts, or the
    /// same error on the same line — with blocks and pieces of a few bytes
    /// so that every input is cut in many places (the line reader is the
    /// reference).
    #[test]
    fn block_reader_equals_line_reader_on_random_text(
        text in "[0-9eE+\\-.,;: \t\r\nNaTZ#:x\"]{0,300}",
        block in 1usize..40,
        piece in 1usize..20,
    ) {
        for opts in all_option_sets() {
            let want = both_outcome(text.as_bytes(), &opts, RowReading::Serial);
            let got = both_outcome(text.as_bytes(), &opts, RowReading::Blocks { block, piece });
            prop_assert_eq!(got, want);
        }
    }

    /// Round trip against a directly built grid: random values (some
    /// missing), a random separator, timestamps with random jumps of k·τ0.
    #[test]
    fn written_records_read_back_exactly(
        rows in proptest::collection::vec((-1e3f64..1e3, 1u64..4, 0u8..6), 2..80),
        sep in 0usize..4,
        tau0 in prop_oneof![Just(1.0f64), Just(0.25), Just(10.0)],
        given_tau0 in any::<bool>(),
    ) {
        let sep = [",", ";", "\t", "  "][sep];
        let mut text = String::from("# round trip\ntime{s}value\n").replace("{s}", sep);
        let mut want: Vec<f64> = Vec::new();
        let mut k_total = 0u64;
        for (i, &(v, k, miss)) in rows.iter().enumerate() {
            if i > 0 {
                // The first spacing is one τ0, so that the median is τ0.
                let k = if i == 1 { 1 } else { k };
                for _ in 1..k {
                    want.push(f64::NAN);
                }
                k_total += k;
            }
            let field = if miss == 0 { "NaN".to_string() } else { format!("{v:e}") };
            want.push(if miss == 0 { f64::NAN } else { v });
            text.push_str(&format!("{}{sep}{field}\n", k_total as f64 * tau0));
        }
        // The median spacing is τ0 only when at least half the steps are 1;
        // a given τ0 must agree with the stamps in the same sense.
        let steps: Vec<u64> = rows.iter().enumerate().skip(1)
            .map(|(i, r)| if i == 1 { 1 } else { r.1 }).collect();
        let ones = steps.iter().filter(|&&k| k == 1).count();
        prop_assume!(want.iter().any(|v| !v.is_nan()));
        let opts = SeriesOptions {
            tau0: given_tau0.then_some(tau0),
            time_column: Some(1),
            ..Default::default()
        };
        let agree = 2 * ones >= steps.len();
        if given_tau0 && !agree {
            let e = read(text.as_bytes(), &opts).unwrap_err();
            prop_assert!(e.to_string().contains("disagree"), "{}", e);
        } else {
            prop_assume!(given_tau0 || 2 * ones > steps.len());
            let s = read(text.as_bytes(), &opts).unwrap();
            prop_assert_eq!(s.record.tau0(), tau0);
            prop_assert!(same(&values(&s.record), &want));
            prop_assert_eq!(s.info.inserted_gaps, want.len() - rows.len());
        }
    }

    #[test]
    fn random_unicode_never_panics(text in "(\\PC|[0-9,;\t \n:-]){0,200}") {
        for opts in all_option_sets() {
            let _ = read(text.as_bytes(), &opts);
        }
    }

    #[test]
    fn mutated_valid_file_never_panics(
        edits in proptest::collection::vec((any::<usize>(), any::<u8>(), 0u8..3), 1..8)
    ) {
        let mut b = VALID.as_bytes().to_vec();
        for (pos, byte, op) in edits {
            let i = if b.is_empty() { 0 } else { pos % (b.len() + 1) };
            match op {
                0 if i < b.len() => b[i] = byte,
                1 => b.insert(i, byte),
                _ if i < b.len() => { b.remove(i); }
                _ => b.push(byte),
            }
        }
        for opts in all_option_sets() {
            if let Ok(s) = read(&b, &opts) {
                // Whatever was accepted is a well-formed record.
                prop_assert!(s.record.len() >= 2);
                prop_assert!(s.record.tau0() > 0.0 && s.record.tau0().is_finite());
            }
        }
    }
}

// ---------------------------------------------------------------- issue 13

/// A malformed first reading is refused at its line, never taken for a
/// header (issue 13, point 6: these five were dropped as a header before).
#[test]
fn malformed_first_reading_is_refused_at_its_line() {
    for bad in ["inf", "1e400", "0x1A", "1.2.3", "1.5x"] {
        let text = format!("{bad}\n1\n2\n3\n");
        let e = read(text.as_bytes(), &tau(1.0)).unwrap_err();
        assert_eq!(e.line, Some(1), "{bad}: {e}");
        assert!(err_text(&e).contains(&format!("'{bad}'")), "{e}");
    }
    // Two columns: the same.
    let e = read(b"0,1.5x\n1,2\n2,3\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!((e.line, e.column), (Some(1), Some(2)), "{e}");
}

/// Comment styles (issue 13, point 1): `;`, `%`, `//` and `--comment`.
#[test]
fn comment_styles() {
    let s = read(
        b"; a\n% b\n// c\n! d\n1\n2\n",
        &SeriesOptions {
            tau0: Some(1.0),
            comments: "!".into(),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(values(&s.record), vec![1.0, 2.0]);
    assert_eq!(s.info.preamble.len(), 4);
}

/// Units in headers (issue 13, point 2): `Frequency(Hz)` is not phase in
/// seconds, `TIE (ns)` not seconds; a bracketed unit we do not read is
/// refused without --units.
#[test]
fn units_from_headers() {
    let e = read(
        b"t,Frequency(Hz)\n0,10000000.1\n1,10000000.2\n",
        &SeriesOptions::default(),
    )
    .unwrap_err();
    assert!(err_text(&e).contains("--carrier"), "{e}");
    let s = read(
        b"t,Frequency(Hz)\n0,10000000.1\n1,10000000.2\n",
        &SeriesOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(s.record.kind(), DataKind::Freq);
    assert!((values(&s.record)[0] - 1e-8).abs() < 1e-15);
    let s = read(b"t,TIE (ns)\n0,1.7\n1,1.8\n", &SeriesOptions::default()).unwrap();
    assert!(same(&values(&s.record), &[1.7e-9, 1.8e-9]));
    let e = read(b"t,Phase (deg)\n0,1\n1,2\n", &SeriesOptions::default()).unwrap_err();
    assert_eq!(e.line, Some(1), "{e}");
    assert!(err_text(&e).contains("'deg'"), "{e}");
    let e = read(b"t,frequency\n0,1e-9\n1,2e-9\n", &SeriesOptions::default()).unwrap_err();
    assert!(err_text(&e).contains("--data freq"), "{e}");
    // Implausible values for the unit in force are warned about.
    let s = read(b"t,x\n0,12.5\n1,13.5\n", &SeriesOptions::default()).unwrap();
    assert!(
        s.info.warnings[0].contains("more than a second"),
        "{:?}",
        s.info.warnings
    );
}

/// Every reader of a small whole file is bounded (issue 12, point 8):
/// `/dev/zero` is refused with the bound instead of filling memory.
#[cfg(unix)]
#[test]
fn small_file_readers_are_bounded() {
    let zero = Path::new("/dev/zero");
    let e = tauwise::limits::read_limit_file(zero).unwrap_err();
    assert!(e.to_string().contains("larger than 1 MiB"), "{e}");
    let e = tauwise::io::dut::Dut::read(zero).unwrap_err();
    assert!(e.to_string().contains("larger than 1 MiB"), "{e}");
    let o = bin()
        .args([
            "convert",
            "--sigma",
            "/dev/zero",
            "--to",
            "lf",
            "--carrier",
            "10MHz",
        ])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("larger than 64 MiB"), "{err}");
    // The series reader: a line without an end is bounded too.
    let e = read_series(zero, &tau(1.0)).unwrap_err();
    assert!(err_text(&e).contains("longer than"), "{e}");
}

/// One reading's outcome in a form that compares exactly (values bit for
/// bit, every fact; or the whole error).
fn both_outcome(text: &[u8], opts: &SeriesOptions, r: RowReading) -> String {
    match read_series_from_with(text, Path::new("in.txt"), opts, r) {
        Ok(s) => {
            let bits: Vec<u64> = values(&s.record).iter().map(|v| v.to_bits()).collect();
            format!("ok {:?} {:?} {:?}", s.record.kind(), bits, s.info)
        }
        Err(e) => format!("error {e} | {:?} {:?} {:?}", e.line, e.column, e.cause),
    }
}

/// Inputs at the edges of the line rules read the same through the block
/// reader as through the line reader: Windows line ends, blank and comment
/// lines among the readings, a closing block of text, text followed by
/// readings, a non-UTF-8 byte, a line over the length bound late in the
/// file, no final line end, white space only at the end, a timestamp jump
/// and stamps that go backwards (by construction: the line reader is the
/// reference; the values are checked against the text elsewhere in this
/// file).
#[test]
fn block_reader_equals_line_reader_at_the_edges() {
    let long = format!("1\n2\n3\n{}\n4\n", "5".repeat((1 << 20) + 3));
    let inputs: Vec<(Vec<u8>, SeriesOptions)> = vec![
        (b"1\r\n2\r\n\r\n# c\r\n3\r\n".to_vec(), tau(1.0)),
        (b"1\n\n  \n;x\n2\n%y\n//z\n3".to_vec(), tau(1.0)),
        (b"1\n2\n3\nend of data\nmore text\n".to_vec(), tau(1.0)),
        (b"1\n2\nend of data\n3\n".to_vec(), tau(1.0)),
        (b"1\n2\n3\xff\n4\n".to_vec(), tau(1.0)),
        (long.into_bytes(), tau(1.0)),
        (b"1\n2\n3\n   ".to_vec(), tau(1.0)),
        (
            b"t,x\n0,1\n1,2\n5,3\n6,4\n7,5\n".to_vec(),
            SeriesOptions::default(),
        ),
        (
            b"t,x\n0,1\n1,2\n2,3\n1,4\n".to_vec(),
            SeriesOptions::default(),
        ),
        (b"t,x\n0,1\n1,2\n2,3\n3,4\n".to_vec(), tau(1.0)),
        (
            b"t;x\n0;1,5\n1;2,5\n2;\"3,5\"\n".to_vec(),
            SeriesOptions::default(),
        ),
        (b"x\n1\n2\n\"3\n".to_vec(), tau(1.0)),
    ];
    for (text, opts) in &inputs {
        let want = both_outcome(text, opts, RowReading::Serial);
        for (block, piece) in [(1, 1), (3, 2), (16, 5), (1 << 22, 1 << 16)] {
            let got = both_outcome(text, opts, RowReading::Blocks { block, piece });
            assert_eq!(
                got,
                want,
                "{:?} block {block} piece {piece}",
                String::from_utf8_lossy(&text[..text.len().min(80)])
            );
        }
    }
}

/// The block reader reads the common line in one pass over its bytes (the
/// number where it starts, then the delimiter or the line end) and sends
/// every other line through the line rules. On seeded random files that
/// mix clean readings with the shapes the line rules treat apart — white
/// space at either end, quotes, a comma or a second word after the
/// number, Windows line ends, `inf`, `nan`, `1e400`, a missing value, a
/// non-UTF-8 byte or a no-break space before or after the columns read,
/// comments and blank lines, stamps that jump (gaps) — it gives what the line reader gives: the
/// same values bit for bit and facts, or the same error at the same line
/// (by construction: the line reader is the reference).
#[test]
fn block_reader_equals_line_reader_on_random_lines() {
    use rand::{Rng, SeedableRng};
    const CLEAN: &[&str] = &[
        "1",
        "-1.5e-9",
        "+.5",
        "1.",
        ".5e3",
        "12345678901234567890",
        "1.23456789012e-09",
        "-0",
        "9007199254740993",
        "4.9e-324",
        "5e+2",
        "1E5",
        "0.1000000000000000055511151231257827",
    ];
    const ODD: &[&[u8]] = &[
        b"NaN",
        b"-",
        b"",
        b"\"2.5\"",
        b" 3.5",
        b"4.5 ",
        b"1e400",
        b"-inf",
        b"inf",
        b"nan",
        b"1,5",
        b"1.5e",
        b"0x10",
        b"abc",
        b"\xc3\xa9",
        b"\xc2\xa01",
        b"1\xc2\xa0",
        b"1\xff",
        b"\"1.5",
        b"1.5\"x\"",
        b"1 2",
        b"1\t2",
        b"1\r2",
        b"# 1",
    ];
    // (header, separator, options, stamps: 0 none, 1 numeric, 2 ISO,
    // 3 MJD; columns per line, value column, time column)
    struct Shape {
        header: &'static str,
        sep: &'static str,
        opts: SeriesOptions,
        stamps: u8,
        columns: usize,
        value: usize,
        time: usize,
    }
    let with = |f: fn(&mut SeriesOptions)| {
        let mut o = SeriesOptions::default();
        f(&mut o);
        o
    };
    // A shape: header, separator, options, stamps, columns, value and time
    // columns.
    let shape = |header, sep, opts, stamps, columns, value, time| Shape {
        header,
        sep,
        opts,
        stamps,
        columns,
        value,
        time,
    };
    let plain = SeriesOptions::default;
    let shapes = vec![
        shape("", " ", tau(1.0), 0, 1, 1, 0),
        shape("t,x", ",", plain(), 1, 2, 2, 1),
        shape("t;x", ";", tau(1.0), 1, 2, 2, 1),
        shape("t,x", ",", tau(1.0), 1, 2, 2, 1),
        shape("t\tx", "\t", plain(), 1, 2, 2, 1),
        shape("t,a,x", ",", with(|o| o.value_column = Some(3)), 1, 3, 3, 1),
        shape(
            "x,t",
            ",",
            with(|o| {
                o.value_column = Some(1);
                o.time_column = Some(2)
            }),
            1,
            2,
            1,
            2,
        ),
        shape(
            "t,x,note",
            ",",
            with(|o| o.value_column = Some(2)),
            1,
            3,
            2,
            1,
        ),
        shape("time,x", ",", plain(), 2, 2, 2, 1),
        shape("t (MJD),x", ",", plain(), 3, 2, 2, 1),
        shape(
            "t,f (Hz)",
            ",",
            with(|o| o.carrier = Some(10e6)),
            1,
            2,
            2,
            1,
        ),
        shape("t,x", ",", with(|o| o.snap = Some(0.1)), 1, 2, 2, 1),
        shape("t,x", ",", with(|o| o.wrap = Some(1e6)), 1, 2, 2, 1),
    ];
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(0x7a75_2026);
    let mut files = 0;
    let mut read_whole = 0;
    for shape in &shapes {
        for _ in 0..120 {
            let mut text: Vec<u8> = Vec::new();
            if !shape.header.is_empty() {
                text.extend_from_slice(shape.header.as_bytes());
                text.push(b'\n');
            }
            // Clean files, odd lines now and then, or odd fields often but
            // only in columns not read (which must still be UTF-8).
            let (odd_rate, only_others) = match rng.gen_range(0..3) {
                0 => (0.0, false),
                1 => (0.04, false),
                _ => (0.3, true),
            };
            let rows = 60;
            // Numeric stamps: one apart, now and then a jump (gaps).
            let mut stamp = 0u64;
            for i in 0..rows {
                stamp += if rng.gen_bool(0.03) { 3 } else { 1 };
                let odd = i >= 3 && rng.gen_bool(odd_rate);
                match rng.gen_range(0..40) {
                    0 if i >= 3 => text.extend_from_slice(b"# note\n"),
                    1 if i >= 3 => text.extend_from_slice(b"\n"),
                    _ => {}
                }
                let mut fields: Vec<Vec<u8>> = Vec::new();
                for col in 1..=shape.columns {
                    let f: Vec<u8> = if col == shape.value {
                        if odd && !only_others && rng.gen_bool(0.6) {
                            ODD[rng.gen_range(0..ODD.len())].to_vec()
                        } else {
                            CLEAN[rng.gen_range(0..CLEAN.len())].as_bytes().to_vec()
                        }
                    } else if col == shape.time {
                        let stamp = match shape.stamps {
                            2 => format!("2024-05-01T12:{:02}:{:02}Z", i / 60, i % 60),
                            3 => format!("{}", 60000.0 + i as f64 / 86400.0),
                            _ if rng.gen_bool(0.2) => format!("{stamp}.000"),
                            _ => format!("{stamp}"),
                        };
                        if odd && !only_others && rng.gen_bool(0.3) {
                            ODD[rng.gen_range(0..ODD.len())].to_vec()
                        } else {
                            stamp.into_bytes()
                        }
                    } else if odd && rng.gen_bool(0.5) {
                        ODD[rng.gen_range(0..ODD.len())].to_vec()
                    } else {
                        b"n".to_vec()
                    };
                    fields.push(f);
                }
                text.extend_from_slice(&fields.join(shape.sep.as_bytes()));
                if odd && !only_others && rng.gen_bool(0.2) {
                    text.extend_from_slice(b"  ");
                }
                if i + 1 < rows || rng.gen_bool(0.5) {
                    text.extend_from_slice(if rng.gen_bool(0.3) { b"\r\n" } else { b"\n" });
                }
            }
            let want = both_outcome(&text, &shape.opts, RowReading::Serial);
            files += 1;
            if want.starts_with("ok") {
                read_whole += 1;
            }
            for (block, piece) in [(7, 3), (64, 16), (1 << 16, 200), (1 << 22, 1 << 16)] {
                let got = both_outcome(&text, &shape.opts, RowReading::Blocks { block, piece });
                assert_eq!(
                    got,
                    want,
                    "{:?} block {block} piece {piece}",
                    String::from_utf8_lossy(&text)
                );
            }
        }
    }
    // Both outcomes were tried: whole files read and files refused.
    assert!(
        read_whole > files / 3 && read_whole < files,
        "{read_whole} of {files} read"
    );
}
