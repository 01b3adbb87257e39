//! Raw binary input (`--binary`, DUT `binary = "…"`): a seeded record
//! written as a flat IEEE 754 array reads back as the same record as its
//! text form, so every statistic is identical; each malformed file is
//! refused naming the file and what was expected; `inspect` says how a
//! binary file was read.
//!
//! The records are seeded Monte Carlo (Kasdin & Walter power-law
//! synthesis, `tauwise::simulate`); the byte layouts are IEEE Std 754-2019
//! binary64 / binary32 in the stated byte order.

mod common;
use common::{assert_error, stderr, tauwise as bin};
use serde_json::Value;
use std::path::{Path, PathBuf};
use tauwise::io::binary::{write_values, BinaryFormat};
use tauwise::io::series::{read_series, SeriesOptions};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};

/// A seeded phase record in ns (WFM + RWFM, τ0 = 1 s) with a few gaps.
fn seeded_ns(n: usize, seed: u64) -> Vec<f64> {
    let m = PowerLaw::parse("h0=1e-22,h-2=1e-28", 0.5).unwrap();
    let x = simulate_phase(&SimSpec::new(m, 1.0, n, seed)).unwrap();
    let mut v: Vec<f64> = x.x.iter().map(|s| s * 1e9).collect();
    for i in [17, 18, 19, 500, n - 3] {
        v[i] = f64::NAN;
    }
    v
}

/// The values as one reading per line, each in the shortest text that
/// reads back to the same f64 (`NaN` for a gap).
fn write_text(path: &Path, v: &[f64]) {
    let mut s = String::new();
    for x in v {
        if x.is_nan() {
            s.push_str("NaN\n");
        } else {
            s.push_str(&format!("{x:e}\n"));
        }
    }
    std::fs::write(path, s).unwrap();
}

fn write_binary(path: &Path, v: &[f64], f: BinaryFormat) {
    let mut bytes = Vec::new();
    write_values(&mut bytes, v, f).unwrap();
    std::fs::write(path, bytes).unwrap();
}

fn run(args: &[&str], file: &Path) -> std::process::Output {
    bin().args(args).arg(file).output().unwrap()
}

fn json(o: &std::process::Output) -> Value {
    assert!(o.status.success(), "{}", stderr(o));
    serde_json::from_slice(&o.stdout).expect("valid JSON")
}

/// The document without the input's path (the one thing that differs).
fn without_path(mut v: Value) -> Value {
    v["input"]
        .as_object_mut()
        .expect("an input object")
        .remove("path");
    v
}

#[test]
fn binary_and_text_give_the_same_stability() {
    let dir = tempfile::tempdir().unwrap();
    let x = seeded_ns(4000, 18);
    let stab = [
        "stability",
        "--tau0",
        "1s",
        "--units",
        "ns",
        "--dev",
        "oadev,mdev,ohdev,totdev",
        "--format",
        "json",
    ];
    // float64: the text holds every value exactly, so the records are equal.
    let text = dir.path().join("x64.txt");
    write_text(&text, &x);
    let raw = dir.path().join("x64.bin");
    write_binary(&raw, &x, BinaryFormat::F64le);
    let from_text = json(&run(&stab, &text));
    let o = bin()
        .args(stab)
        .args(["--binary", "f64le"])
        .arg(&raw)
        .output()
        .unwrap();
    let from_raw = json(&o);
    assert!(
        stderr(&o).contains("raw binary file: 4000 float64, little-endian values"),
        "{}",
        stderr(&o)
    );
    assert_eq!(without_path(from_raw), without_path(from_text.clone()));
    assert!(from_text["input"]["gaps"].as_u64() == Some(5));

    // float32, either byte order: the text holds the values rounded to f32.
    let x32: Vec<f64> = x.iter().map(|&v| v as f32 as f64).collect();
    let text32 = dir.path().join("x32.txt");
    write_text(&text32, &x32);
    let from_text32 = without_path(json(&run(&stab, &text32)));
    for f in [BinaryFormat::F32le, BinaryFormat::F32be] {
        let raw32 = dir.path().join(format!("x.{f}"));
        write_binary(&raw32, &x, f);
        let o = bin()
            .args(stab)
            .args(["--binary", f.name()])
            .arg(&raw32)
            .output()
            .unwrap();
        assert_eq!(without_path(json(&o)), from_text32, "{f}");
    }
}

#[test]
fn binary_records_equal_text_records_in_the_library() {
    // Frequency readings in ppb, big-endian float64: the same record as text.
    let dir = tempfile::tempdir().unwrap();
    let y: Vec<f64> = seeded_ns(1000, 7).iter().map(|v| v * 1e-3).collect();
    let text = dir.path().join("y.txt");
    write_text(&text, &y);
    let raw = dir.path().join("y.bin");
    write_binary(&raw, &y, BinaryFormat::F64be);
    let opts = SeriesOptions {
        tau0: Some(10.0),
        unit: Some(tauwise::units::parse_value_unit("ppb").unwrap()),
        ..Default::default()
    };
    let a = read_series(&text, &opts).unwrap();
    let b = read_series(
        &raw,
        &SeriesOptions {
            binary: Some(BinaryFormat::F64be),
            ..opts
        },
    )
    .unwrap();
    assert_eq!(a.record.len(), b.record.len());
    assert_eq!(a.record.tau0(), b.record.tau0());
    assert_eq!(a.record.gaps(), b.record.gaps());
    assert_eq!(format!("{:?}", a.record), format!("{:?}", b.record));
    assert_eq!(b.info.bytes, 8000);
}

#[test]
fn inspect_says_how_a_binary_file_was_read() {
    let dir = tempfile::tempdir().unwrap();
    let x = seeded_ns(2000, 3);
    let raw = dir.path().join("tie.f64");
    write_binary(&raw, &x, BinaryFormat::F64le);
    let args = [
        "inspect", "--binary", "f64le", "--tau0", "1s", "--units", "ns",
    ];
    let v = json(
        &bin()
            .args(args)
            .arg(&raw)
            .args(["--format", "json"])
            .output()
            .unwrap(),
    );
    let r = &v["reading"];
    assert_eq!(r["format"], "binary");
    assert_eq!(r["binary"], "f64le");
    assert_eq!(r["bytes"].as_u64(), Some(16000));
    assert_eq!(r["unit"], "ns");
    assert_eq!(v["input"]["points"].as_u64(), Some(2000));
    assert_eq!(v["input"]["gaps"].as_u64(), Some(5));
    assert_eq!(v["tau0_source"], "option");
    let o = bin().args(args).arg(&raw).output().unwrap();
    assert!(o.status.success(), "{}", stderr(&o));
    let table = String::from_utf8_lossy(&o.stdout);
    assert!(
        table.contains("16000 bytes (raw binary, float64, little-endian)"),
        "{table}"
    );
}

/// `inspect` on `file` with `args` fails with exit 1 naming the file and `words`.
fn refused(file: &Path, args: &[&str], words: &[&str]) {
    let o = bin().arg("inspect").args(args).arg(file).output().unwrap();
    let name = file.display().to_string();
    let mut all = vec![name.as_str()];
    all.extend_from_slice(words);
    assert_error(&o, 1, &all, Path::new("/nonexistent/never-written"));
}

#[test]
fn malformed_binary_files_are_refused_naming_file_and_expectation() {
    let dir = tempfile::tempdir().unwrap();
    let f64le = ["--binary", "f64le", "--tau0", "1s"];
    let put = |name: &str, bytes: &[u8]| -> PathBuf {
        let p = dir.path().join(name);
        std::fs::write(&p, bytes).unwrap();
        p
    };
    // 100 bytes: not a whole number of 8-byte elements (25 float32 would be).
    let odd = put("odd.bin", &[0u8; 100]);
    refused(&odd, &f64le, &["100 bytes", "8-byte"]);
    let v = json(
        &bin()
            .args([
                "inspect", "--binary", "f32le", "--tau0", "1s", "--format", "json",
            ])
            .arg(&odd)
            .output()
            .unwrap(),
    );
    assert_eq!(v["input"]["points"].as_u64(), Some(25));
    let empty = put("empty.bin", &[]);
    refused(&empty, &f64le, &["empty", "float64"]);
    // An infinity at element 3 (byte offset 24).
    let mut bytes = Vec::new();
    write_values(
        &mut bytes,
        &[0.0, 1.0, 2.0, f64::INFINITY, 4.0],
        BinaryFormat::F64le,
    )
    .unwrap();
    let inf = put("inf.bin", &bytes);
    refused(&inf, &f64le, &["element 3", "byte offset 24", "finite"]);
    // No τ0: a raw file has no time column.
    let ok = put("ok.bin", &bytes[..24]);
    refused(&ok, &["--binary", "f64le"], &["τ0", "--tau0"]);
    // Options that choose columns or describe text do not apply.
    refused(
        &ok,
        &["--binary", "f64le", "--tau0", "1s", "--value-column", "2"],
        &["value column", "expected none"],
    );
    refused(
        &ok,
        &["--binary", "f64le", "--tau0", "1s", "--time-column", "1"],
        &["time column"],
    );
    // A single reading is not a record.
    let one = put("one.bin", &bytes[..8]);
    refused(&one, &f64le, &["1 reading(s)", "at least 2"]);
    // An .npy file given --binary would read its header as numbers.
    let mut npy = Vec::new();
    tauwise::io::npy::write_f64(&mut npy, &[&[1.0, 2.0, 3.0]]).unwrap();
    let npy = put("x.npy", &npy);
    refused(&npy, &f64le, &[".npy", "without --binary"]);
    // An unknown element type is a bad command line (exit 2).
    let o = bin()
        .args(["inspect", "--binary", "f64", "--tau0", "1s"])
        .arg(&ok)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("'f64'") && stderr(&o).contains("f64le"),
        "{}",
        stderr(&o)
    );
}

#[test]
fn dut_binary_key_reads_the_same_record() {
    let dir = tempfile::tempdir().unwrap();
    let x = seeded_ns(1500, 11);
    write_binary(&dir.path().join("a.bin"), &x, BinaryFormat::F32le);
    let dut = |binary: &str| {
        format!(
            "[device]\nname = \"unit\"\n\n[[record]]\npath = \"a.bin\"\ntau0 = \"1s\"\nunits = \"ns\"\nbinary = \"{binary}\"\n"
        )
    };
    let file = dir.path().join("unit.toml");
    let d = tauwise::io::dut::Dut::parse(&dut("f32le"), &file, dir.path()).unwrap();
    let src = &d.records[0];
    assert_eq!(src.binary, Some(BinaryFormat::F32le));
    let from_dut = read_series(&src.path, &src.series_options(None)).unwrap();
    let direct = read_series(
        &dir.path().join("a.bin"),
        &SeriesOptions {
            tau0: Some(1.0),
            unit: Some(tauwise::units::parse_value_unit("ns").unwrap()),
            binary: Some(BinaryFormat::F32le),
            kind: Some(tauwise::DataKind::Phase),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(
        format!("{:?}", from_dut.record),
        format!("{:?}", direct.record)
    );
    // A bad type is refused at its line, naming the key.
    let e = tauwise::io::dut::Dut::parse(&dut("double"), &file, dir.path())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("unit.toml:8") && e.contains("binary") && e.contains("f64le"),
        "{e}"
    );
}
