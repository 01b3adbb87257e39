//! DUT files: a complete file reads into the expected values (units parsed
//! per the definitions in src/units.rs); every bad file is an error naming
//! the file, the line, the key and — for files — the resolved path.

use std::fs;
use std::path::{Path, PathBuf};
use tauwise::io::dut::{Dut, LfQuantity};
use tauwise::DataKind;

struct Fixture {
    dir: tempfile::TempDir,
}

impl Fixture {
    fn new() -> Self {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        fs::create_dir(d.join("data")).unwrap();
        fs::create_dir(d.join("duts")).unwrap();
        for f in [
            "data/phase.csv",
            "data/lf.csv",
            "data/tie.csv",
            "data/mask.txt",
            "duts/local.csv",
        ] {
            fs::write(d.join(f), "1\n2\n").unwrap();
        }
        Self { dir }
    }
    fn write(&self, text: &str) -> PathBuf {
        let p = self.dir.path().join("duts/unit.toml");
        fs::write(&p, text).unwrap();
        p
    }
    fn root(&self) -> &Path {
        self.dir.path()
    }
}

const GOOD: &str = r#"
[device]
name = "ocxo-a"
description = "10 MHz OCXO module"
carrier = "10MHz"

[[record]]
name = "two days"
path = "../data/phase.csv"
data = "phase"
tau0 = "1s"
units = "ns"
value_column = 2
time_column = 1

[[phase_noise]]
name = "analyser"
path = "../data/lf.csv"

[[tie]]
path = "../data/tie.csv"
tau0 = 1
units = "ns"

[[jitter]]
name = "generic"
band = "12k:20M"
filters = ["highpass:1:12k"]
limit = "300fs"
ui_rate = "10.3125G"
source = "analyser"

[wander]
masks = ["g8262-opt1"]
mask_files = ["../data/mask.txt"]

[holdover]
budget = "1.5us"
spans = ["8h", "24h"]
aging = "1e-10/day"
paths = 500
seed = 3
"#;

#[test]
fn a_complete_file_reads() {
    let fx = Fixture::new();
    let dut = Dut::read(&fx.write(GOOD)).unwrap();
    assert_eq!(dut.name, "ocxo-a");
    assert_eq!(dut.carrier, Some(10e6));
    let r = &dut.records[0];
    assert_eq!(r.name, "two days");
    assert_eq!(r.data, DataKind::Phase);
    assert_eq!(r.tau0, Some(1.0));
    assert_eq!((r.value_column, r.time_column), (Some(2), Some(1)));
    // `..` is allowed; the path is joined to the DUT file's directory and
    // resolved by the operating system.
    assert_eq!(
        fs::canonicalize(&r.path).unwrap(),
        fs::canonicalize(fx.root().join("data/phase.csv")).unwrap()
    );
    assert_eq!(dut.phase_noise[0].quantity, LfQuantity::Lf);
    assert_eq!(
        dut.phase_noise[0].carrier, 10e6,
        "inherits the device carrier"
    );
    assert_eq!(dut.tie[0].name, "tie.csv", "name defaults to the file name");
    let j = &dut.jitter[0];
    assert_eq!((j.from, j.to), (12e3, 20e6));
    match j.limit.unwrap() {
        tauwise::spectrum::jitter::JitterLimit::S(v) => assert!((v - 300e-15).abs() < 1e-27),
        other => panic!("{other:?}"),
    }
    assert_eq!(j.ui_rate, Some(10.3125e9));
    assert!(matches!(
        j.filters[0],
        tauwise::spectrum::jitter::Weighting::HighPass { .. }
    ));
    let w = dut.wander.as_ref().unwrap();
    assert_eq!(w.masks, ["g8262-opt1"]);
    let h = dut.holdover.as_ref().unwrap();
    assert_eq!(h.budget, 1.5e-6);
    assert_eq!(h.spans, [8.0 * 3600.0, 86400.0]);
    // 1e-10 per day over 24 h gives ½·D·t² = 4.32 µs (docs/checks.md §G, analytic).
    let d = h.aging.unwrap();
    assert!((0.5 * d * 86400f64.powi(2) - 4.32e-6).abs() < 1e-12);
}

#[test]
fn minimal_file_reads() {
    let fx = Fixture::new();
    let dut =
        Dut::read(&fx.write("[device]\nname = \"x\"\n[[record]]\npath = \"local.csv\"\n")).unwrap();
    assert_eq!(dut.records[0].path, fx.root().join("duts/local.csv"));
    assert!(dut.holdover.is_none() && dut.wander.is_none());
}

fn error_of(fx: &Fixture, text: &str) -> String {
    let p = fx.write(text);
    let e = Dut::read(&p).unwrap_err().to_string();
    assert!(e.contains("unit.toml"), "error names the DUT file: {e}");
    e
}

#[test]
fn unknown_key_is_named() {
    let fx = Fixture::new();
    let e = error_of(
        &fx,
        &GOOD.replace(
            "units = \"ns\"\nvalue_column",
            "colour = \"red\"\nunits = \"ns\"\nvalue_column",
        ),
    );
    assert!(e.contains("colour"), "{e}");
    assert!(e.contains("unit.toml:12:"), "names the line: {e}");
    let e = error_of(&fx, &format!("{GOOD}\n[extra]\nx = 1\n"));
    assert!(e.contains("extra"), "{e}");
}

#[test]
fn wrong_type_is_named() {
    let fx = Fixture::new();
    let e = error_of(
        &fx,
        &GOOD.replace("value_column = 2", "value_column = \"two\""),
    );
    assert!(e.contains("record[1].value_column"), "{e}");
    assert!(e.contains(":13:"), "{e}");
    let e = error_of(&fx, &GOOD.replace("tau0 = \"1s\"", "tau0 = [1]"));
    assert!(
        e.contains("record[1].tau0") && e.contains("an array"),
        "{e}"
    );
    let e = error_of(
        &fx,
        &GOOD.replace("spans = [\"8h\", \"24h\"]", "spans = \"8h\""),
    );
    assert!(e.contains("spans"), "{e}");
}

#[test]
fn missing_file_names_the_resolved_path() {
    let fx = Fixture::new();
    let e = error_of(
        &fx,
        &GOOD.replace("../data/lf.csv", "../../elsewhere/./lf.csv"),
    );
    let resolved = fx.root().join("duts").join("../../elsewhere/./lf.csv");
    assert!(e.contains(&resolved.display().to_string()), "{e}");
    assert!(e.contains("phase_noise[1].path"), "{e}");
    let e = error_of(&fx, &GOOD.replace("../data/mask.txt", "nomask.txt"));
    assert!(
        e.contains(&fx.root().join("duts/nomask.txt").display().to_string()),
        "{e}"
    );
    // A directory is not a file.
    let e = error_of(&fx, &GOOD.replace("../data/tie.csv", "../data"));
    assert!(e.contains("not a regular file"), "{e}");
}

#[test]
fn bad_values_are_named() {
    let fx = Fixture::new();
    let cases = [
        ("tau0 = \"1s\"", "tau0 = \"1 fortnight\"", "record[1].tau0"),
        ("tau0 = \"1s\"", "tau0 = \"-1s\"", "positive"),
        (
            "units = \"ns\"\nvalue_column",
            "units = \"ppm\"\nvalue_column",
            "not a unit of phase",
        ),
        ("data = \"phase\"", "data = \"voltage\"", "record[1].data"),
        ("band = \"12k:20M\"", "band = \"20M:12k\"", "jitter[1].band"),
        ("band = \"12k:20M\"", "band = \"12k\"", "FROM:TO"),
        ("\"highpass:1:12k\"", "\"notch:1:12k\"", "jitter[1].filters"),
        (
            "source = \"analyser\"",
            "source = \"other\"",
            "no [[phase_noise]] table is named 'other'",
        ),
        ("budget = \"1.5us\"", "budget = \"0s\"", "holdover.budget"),
        (
            "aging = \"1e-10/day\"",
            "aging = \"quick\"",
            "holdover.aging",
        ),
        ("paths = 500", "paths = 2", "holdover.paths"),
        // Issue 12: numbers that decide a verdict need their unit.
        ("budget = \"1.5us\"", "budget = 1.5e-6", "give a unit"),
        ("budget = \"1.5us\"", "budget = \"1.5\"", "give a unit"),
        (
            "spans = [\"8h\", \"24h\"]",
            "spans = [8, 24]",
            "holdover.spans[1]",
        ),
        (
            "spans = [\"8h\", \"24h\"]",
            "spans = [\"8h\", \"24\"]",
            "give a unit",
        ),
        ("limit = \"300fs\"", "limit = 3e-13", "give a unit"),
        ("limit = \"300fs\"", "limit = \"0.3\"", "give a unit"),
        ("aging = \"1e-10/day\"", "aging = \"1e-15\"", "give a unit"),
        ("carrier = \"10MHz\"", "carrier = \"ten\"", "device.carrier"),
        ("name = \"ocxo-a\"", "name = \" \"", "device.name"),
    ];
    for (from, to, want) in cases {
        assert!(GOOD.contains(from), "fixture lacks {from}");
        let e = error_of(&fx, &GOOD.replacen(from, to, 1));
        assert!(e.contains(want), "{to}: {e}");
    }
}

#[test]
fn structural_errors() {
    let fx = Fixture::new();
    let e = error_of(&fx, "[[record]]\npath = \"local.csv\"\n");
    assert!(e.contains("device"), "{e}");
    let e = error_of(
        &fx,
        "[device]\nname = \"x\"\n[[phase_noise]]\npath = \"local.csv\"\n",
    );
    assert!(e.contains("carrier"), "{e}");
    let e = error_of(
        &fx,
        "[device]\nname = \"x\"\n[holdover]\nbudget = \"1us\"\nspans = [\"1h\"]\n",
    );
    assert!(e.contains("needs a [[record]]"), "{e}");
    let e = error_of(&fx, "[device\nname = \"x\"\n");
    assert!(e.contains("unit.toml:1"), "{e}");
    let missing = fx.root().join("duts/none.toml");
    let e = Dut::read(&missing).unwrap_err().to_string();
    assert!(e.contains("none.toml"), "{e}");
    fs::write(fx.root().join("duts/bin.toml"), [0xff, 0xfe, 0x00]).unwrap();
    let e = Dut::read(&fx.root().join("duts/bin.toml"))
        .unwrap_err()
        .to_string();
    assert!(e.contains("UTF-8"), "{e}");
}

/// Issue 12: DUT paths are joined to the DUT file's directory and resolved
/// by the operating system, not folded as text. With `link -> real/sub`,
/// `link/../rec.txt` is `real/rec.txt` — what the OS (and `tauwise
/// stability`) opens — not the `rec.txt` beside the DUT file.
#[cfg(unix)]
#[test]
fn paths_are_resolved_by_the_operating_system() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::create_dir_all(d.join("real/sub")).unwrap();
    fs::write(d.join("real/rec.txt"), "1\n2\n3\n").unwrap();
    fs::write(d.join("rec.txt"), "9\n").unwrap();
    std::os::unix::fs::symlink(d.join("real/sub"), d.join("link")).unwrap();
    let dut = d.join("unit.toml");
    fs::write(
        &dut,
        "[device]\nname = \"x\"\n[[record]]\npath = \"link/../rec.txt\"\n",
    )
    .unwrap();
    let r = &Dut::read(&dut).unwrap().records[0];
    assert_eq!(fs::read_to_string(&r.path).unwrap(), "1\n2\n3\n");
    assert_eq!(
        fs::canonicalize(&r.path).unwrap(),
        fs::canonicalize(d.join("real/rec.txt")).unwrap()
    );
}

/// The `[wander]` section takes the τ grid and range (with units).
#[test]
fn wander_takes_the_tau_range() {
    let fx = Fixture::new();
    let text = GOOD.replace(
        "[wander]\n",
        "[wander]\ntaus = \"log:20\"\ntau_range = [\"1s\", \"3h\"]\n",
    );
    assert!(text.contains("log:20"), "fixture has no [wander]");
    let dut = Dut::read(&fx.write(&text)).unwrap();
    let w = dut.wander.unwrap();
    assert_eq!(w.taus, Some(tauwise::tau::TauGrid::PerDecade(20)));
    assert_eq!(w.tau_range, Some((1.0, 10800.0)));
    let e = error_of(
        &fx,
        &GOOD.replace("[wander]\n", "[wander]\ntau_range = [1, 10800]\n"),
    );
    assert!(
        e.contains("wander.tau_range[1]") && e.contains("give a unit"),
        "{e}"
    );
    let e = error_of(
        &fx,
        &GOOD.replace("[wander]\n", "[wander]\ntau_range = [\"3h\", \"1s\"]\n"),
    );
    assert!(e.contains("FROM ≤ TO"), "{e}");
}

/// The preparation keys of a `[[record]]` (issue: records prepared in the
/// report): drift none|linear|quadratic (linear by default), outliers as a
/// MAD limit, gap filling, the record's bandwidth; the table's uncertainty;
/// the holdover's y0. A `[[tie]]` capture refuses the preparation keys.
#[test]
fn preparation_keys_read_and_are_checked() {
    use tauwise::prepare::DriftModel;
    let fx = Fixture::new();
    let dut = Dut::read(&fx.write(GOOD)).unwrap();
    assert_eq!(dut.records[0].prepare.drift, Some(DriftModel::Linear));
    assert_eq!(dut.records[0].prepare.outliers, None);
    assert!(!dut.records[0].prepare.fill_gaps);
    assert_eq!(dut.records[0].bandwidth, None);
    assert!(
        dut.tie[0].prepare.is_empty(),
        "a TIE capture is used as read"
    );
    let text = GOOD
        .replacen(
            "time_column = 1",
            "time_column = 1\ndrift = \"quadratic\"\noutliers = 4.5\nfill_gaps = true\nbandwidth = \"10Hz\"",
            1,
        )
        .replacen(
            "path = \"../data/lf.csv\"",
            "path = \"../data/lf.csv\"\nuncertainty = \"1.5dB\"",
            1,
        )
        .replacen("seed = 3", "seed = 3\ny0 = \"0.5ppb\"\ny0_sigma = 1e-11", 1);
    let dut = Dut::read(&fx.write(&text)).unwrap();
    let r = &dut.records[0];
    assert_eq!(r.prepare.drift, Some(DriftModel::Quadratic));
    assert_eq!(r.prepare.outliers, Some(4.5));
    assert!(r.prepare.fill_gaps);
    assert_eq!(r.bandwidth, Some(10.0));
    assert_eq!(dut.phase_noise[0].uncertainty_db, Some(1.5));
    let h = dut.holdover.as_ref().unwrap();
    assert_eq!((h.y0, h.y0_sigma), (Some(0.5e-9), Some(1e-11)));
    let none = Dut::read(&fx.write(&GOOD.replacen(
        "time_column = 1",
        "time_column = 1\ndrift = \"none\"",
        1,
    )))
    .unwrap();
    assert_eq!(none.records[0].prepare.drift, None);

    let bad = [
        (
            "time_column = 1",
            "time_column = 1\ndrift = \"cubic\"",
            "record[1].drift",
        ),
        (
            "time_column = 1",
            "time_column = 1\noutliers = -3",
            "record[1].outliers",
        ),
        (
            "time_column = 1",
            "time_column = 1\noutliers = \"many\"",
            "scaled MADs",
        ),
        (
            "time_column = 1",
            "time_column = 1\nbandwidth = \"wide\"",
            "record[1].bandwidth",
        ),
        (
            "tau0 = 1\n",
            "tau0 = 1\ndrift = \"none\"\n",
            "applies to a [[record]] only",
        ),
        (
            "path = \"../data/lf.csv\"",
            "path = \"../data/lf.csv\"\nuncertainty = \"loud\"",
            "phase_noise[1].uncertainty",
        ),
        ("seed = 3", "seed = 3\ny0 = \"fast\"", "holdover.y0"),
        (
            "seed = 3",
            "seed = 3\ny0_sigma = 1e-12",
            "goes with holdover.y0",
        ),
    ];
    for (from, to, want) in bad {
        assert!(GOOD.contains(from), "fixture lacks {from}");
        let e = error_of(&fx, &GOOD.replacen(from, to, 1));
        assert!(e.contains(want), "{to}: {e}");
    }
}
