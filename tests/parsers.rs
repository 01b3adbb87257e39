//! One syntax per concept (issue 14): every rate, duration, filter and
//! estimator-list text gives the same value — or the same refusal — in every
//! entry point that takes it: the command line (through the binary) and the
//! DUT file (through `Dut::parse`). A text refused on the command line ends
//! with exit status 2 (a bad command line), never 1.
//!
//! The expected values are the unit definitions themselves (analytic:
//! 1 ppb = 1e-9, 1 day = 86 400 s, 1 week = 7 days, 1 fs = 1e-15 s;
//! SI and the BIPM brochure for the prefixes).

use serde_json::Value;
use std::path::PathBuf;
use std::process::{Command, Output};
use tauwise::io::dut::Dut;
use tauwise::spectrum::jitter::Weighting;

fn tauwise() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tauwise"))
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

const DAY: f64 = 86400.0;

/// A place with a flat frequency record (two days at 60 s) and a small
/// L(f) table, for the command-line entry points and the DUT files.
struct Place {
    dir: tempfile::TempDir,
}

impl Place {
    fn new() -> Self {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join("flat.txt"), "0\n".repeat(2880)).unwrap();
        std::fs::write(
            dir.path().join("lf.txt"),
            "10 -100\n100 -120\n1000 -130\n1e6 -150\n1e7 -150\n",
        )
        .unwrap();
        Self { dir }
    }
    fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }
    /// A DUT file with one record, one table and `extra` sections.
    fn dut(&self, extra: &str) -> Result<Dut, String> {
        let text = format!(
            "[device]\nname = \"unit\"\ncarrier = \"10MHz\"\n\n[[record]]\npath = \"flat.txt\"\ndata = \"freq\"\ntau0 = \"60s\"\n\n[[phase_noise]]\npath = \"lf.txt\"\n\n{extra}\n"
        );
        let file = self.path("unit.toml");
        Dut::parse(&text, &file, self.dir.path()).map_err(|e| e.to_string())
    }
    fn holdover(&self, extra: &[&str]) -> Output {
        tauwise()
            .arg("holdover")
            .arg(self.path("flat.txt"))
            .args(["--data", "freq", "--tau0", "60s", "--span", "1h"])
            .args(["--model", "h0=1e-32", "--paths", "100", "--steps", "16"])
            .args(["--format", "json"])
            .args(extra)
            .output()
            .unwrap()
    }
}

fn json(o: &Output) -> Value {
    assert!(o.status.success(), "{}", stderr(o));
    serde_json::from_slice(&o.stdout).unwrap()
}

/// The first number under `key` anywhere in the document.
fn find_number(v: &Value, key: &str) -> Option<f64> {
    match v {
        Value::Object(m) => m
            .get(key)
            .and_then(Value::as_f64)
            .or_else(|| m.values().find_map(|x| find_number(x, key))),
        Value::Array(a) => a.iter().find_map(|x| find_number(x, key)),
        _ => None,
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
}

/// A refusal on the command line is a bad command line: exit status 2,
/// and the message names the text.
fn assert_refused(o: &Output, text: &str, entry: &str) {
    assert_eq!(
        o.status.code(),
        Some(2),
        "{entry} {text}: expected exit 2 (bad command line), stderr: {}",
        stderr(o)
    );
    assert!(
        stderr(o).contains(text.trim()),
        "{entry} {text}: the message should name the text: {}",
        stderr(o)
    );
}

/// Rates: fractional frequency per time (`simulate --drift`,
/// `holdover --aging`, DUT `holdover.aging`), per second.
const RATES: &[(&str, Option<f64>)] = &[
    ("1ppb/day", Some(1e-9 / DAY)),
    ("5e-11/week", Some(5e-11 / (7.0 * DAY))),
    ("5e-11/24h", Some(5e-11 / DAY)),
    ("1e-10/d", Some(1e-10 / DAY)),
    ("2e-12/h", Some(2e-12 / 3600.0)),
    ("2e-12/hour", Some(2e-12 / 3600.0)),
    ("1e-16/s", Some(1e-16)),
    ("3ppt/day", Some(3e-12 / DAY)),
    ("0.1ppm/week", Some(1e-7 / (7.0 * DAY))),
    ("-2e-11 / day", Some(-2e-11 / DAY)),
    // Refused everywhere: no time (per second? per day?), a time without
    // its unit, an unknown unit, no number, a zero time.
    ("5e-11", None),
    ("5e-11/86400", None),
    ("1e-10/fortnight", None),
    ("fast/day", None),
    ("1e-10/", None),
    ("1e-10/0s", None),
];

#[test]
fn rates_are_the_same_in_every_entry_point() {
    let place = Place::new();
    for &(text, want) in RATES {
        // simulate --drift: the record's preamble states the drift per second.
        let sim = tauwise()
            .args(["simulate", "--model", "h0=1e-22", "--points", "4"])
            .arg(format!("--drift={text}"))
            .output()
            .unwrap();
        // holdover --aging
        let hold = place.holdover(&["--budget", "1us", &format!("--aging={text}")]);
        // DUT holdover.aging
        let dut = place.dut(&format!(
            "[holdover]\nbudget = \"1us\"\nspans = [\"1h\"]\naging = \"{text}\"\n"
        ));
        match want {
            Some(v) => {
                assert!(
                    sim.status.success(),
                    "simulate --drift {text}: {}",
                    stderr(&sim)
                );
                let out = String::from_utf8_lossy(&sim.stdout);
                let line = out.lines().find(|l| l.contains("drift:")).unwrap();
                let got: f64 = line
                    .split("drift:")
                    .nth(1)
                    .unwrap()
                    .split_whitespace()
                    .next()
                    .unwrap()
                    .parse()
                    .unwrap();
                assert!(close(got, v), "simulate --drift {text}: {got} vs {v}");
                let h = find_number(&json(&hold), "aging_per_s").unwrap();
                assert!(close(h, v), "holdover --aging {text}: {h} vs {v}");
                let d = dut
                    .unwrap_or_else(|e| panic!("DUT aging {text}: {e}"))
                    .holdover
                    .unwrap()
                    .aging
                    .unwrap();
                assert!(close(d, v), "DUT aging {text}: {d} vs {v}");
            }
            None => {
                assert_refused(&sim, text, "simulate --drift");
                assert_refused(&hold, text, "holdover --aging");
                let e = dut.expect_err(&format!("DUT aging {text} should be refused"));
                assert!(e.contains("holdover.aging"), "{e}");
            }
        }
    }
}

/// Durations that decide a verdict (`holdover --budget`, DUT
/// `holdover.budget`): the unit is required, the value positive.
const BUDGETS: &[(&str, Option<f64>)] = &[
    ("150fs", Some(150e-15)),
    ("1.5ns", Some(1.5e-9)),
    ("2.5us", Some(2.5e-6)),
    ("2.5µs", Some(2.5e-6)),
    ("100ms", Some(0.1)),
    ("2min", Some(120.0)),
    ("24h", Some(DAY)),
    ("2d", Some(2.0 * DAY)),
    ("1day", Some(DAY)),
    ("1week", Some(7.0 * DAY)),
    ("1.5", None),
    ("3 fortnights", None),
    ("-1us", None),
    ("us", None),
];

#[test]
fn verdict_durations_are_the_same_in_every_entry_point() {
    let place = Place::new();
    for &(text, want) in BUDGETS {
        let hold = place.holdover(&[&format!("--budget={text}")]);
        let dut = place.dut(&format!(
            "[holdover]\nbudget = \"{text}\"\nspans = [\"1h\"]\n"
        ));
        match want {
            Some(v) => {
                let h = find_number(&json(&hold), "budget_s").unwrap();
                assert!(close(h, v), "holdover --budget {text}: {h} vs {v}");
                let d = dut
                    .unwrap_or_else(|e| panic!("DUT budget {text}: {e}"))
                    .holdover
                    .unwrap()
                    .budget;
                assert!(close(d, v), "DUT budget {text}: {d} vs {v}");
            }
            None => {
                assert_refused(&hold, text, "holdover --budget");
                let e = dut.expect_err(&format!("DUT budget {text} should be refused"));
                assert!(e.contains("holdover.budget"), "{e}");
            }
        }
    }
}

/// Sampling intervals (`--tau0`, DUT `record.tau0`): a bare number is
/// seconds; the value must be positive.
const TAU0S: &[(&str, Option<f64>)] = &[
    ("60s", Some(60.0)),
    ("60", Some(60.0)),
    ("1min", Some(60.0)),
    ("1 min", Some(60.0)),
    ("0.001h", Some(3.6)),
    ("500ms", Some(0.5)),
    ("0", None),
    ("-1s", None),
    ("1 fortnight", None),
];

#[test]
fn sampling_intervals_are_the_same_in_every_entry_point() {
    let place = Place::new();
    for &(text, want) in TAU0S {
        let cli = tauwise()
            .arg("inspect")
            .arg(place.path("flat.txt"))
            .args(["--data", "freq", "--format", "json"])
            .arg(format!("--tau0={text}"))
            .output()
            .unwrap();
        let text_dut = format!(
            "[device]\nname = \"u\"\n[[record]]\npath = \"flat.txt\"\ndata = \"freq\"\ntau0 = \"{text}\"\n"
        );
        let dut = Dut::parse(&text_dut, &place.path("u.toml"), place.dir.path());
        match want {
            Some(v) => {
                let t = find_number(&json(&cli), "tau0").unwrap();
                assert!(close(t, v), "--tau0 {text}: {t} vs {v}");
                let d = dut.unwrap().records[0].tau0.unwrap();
                assert!(close(d, v), "DUT tau0 {text}: {d} vs {v}");
            }
            None => {
                assert_refused(&cli, text, "--tau0");
                let e = dut.expect_err(text).to_string();
                assert!(e.contains("record[1].tau0"), "{e}");
            }
        }
    }
}

/// Weighting filters (`jitter --filter`, DUT `jitter.filters`): one order
/// range, 1 … 8, everywhere.
/// Highpass or not, order, corner (Hz).
type FilterValue = (bool, u32, f64);

const FILTERS: &[(&str, Option<FilterValue>)] = &[
    ("highpass:1:12k", Some((true, 1, 12e3))),
    ("hp:2:12kHz", Some((true, 2, 12e3))),
    ("lowpass:8:5MHz", Some((false, 8, 5e6))),
    ("LP:3:1.5M", Some((false, 3, 1.5e6))),
    ("highpass:9:12k", None),
    ("highpass:20:12k", None),
    ("highpass:0:12k", None),
    ("bandpass:1:12k", None),
    ("highpass:1:-5k", None),
    ("highpass:1", None),
    ("highpass:1.5:12k", None),
];

#[test]
fn filters_are_the_same_in_every_entry_point() {
    let place = Place::new();
    for &(text, want) in FILTERS {
        let cli = tauwise()
            .arg("jitter")
            .arg(place.path("lf.txt"))
            .args(["--carrier", "10MHz", "--band", "20k:5M", "--format", "json"])
            .arg(format!("--filter={text}"))
            .output()
            .unwrap();
        let dut = place.dut(&format!(
            "[[jitter]]\nband = \"20k:5M\"\nfilters = [\"{text}\"]\n"
        ));
        match want {
            Some((hp, order, fc)) => {
                let doc = json(&cli);
                let described = doc["bands"][0]["filter"].as_str().unwrap().to_string();
                let want_text = format!("{}:{order}:", if hp { "highpass" } else { "lowpass" });
                assert!(described.starts_with(&want_text), "{text}: {described}");
                let f = dut
                    .unwrap_or_else(|e| panic!("DUT filter {text}: {e}"))
                    .jitter[0]
                    .filters[0];
                let (got_hp, got_order, got_fc) = match f {
                    Weighting::HighPass { order, fc } => (true, order, fc),
                    Weighting::LowPass { order, fc } => (false, order, fc),
                    other => panic!("DUT filter {text}: {other:?}"),
                };
                assert_eq!((got_hp, got_order), (hp, order), "DUT filter {text}");
                assert!(close(got_fc, fc), "DUT filter {text}: {got_fc}");
            }
            None => {
                assert_refused(&cli, text, "jitter --filter");
                let e = dut.expect_err(&format!("DUT filter {text} should be refused"));
                assert!(e.contains("jitter[1].filters"), "{e}");
            }
        }
    }
}

/// Estimator lists (`stability --dev`, `convert --dev`): names from the
/// registry, separated by commas; an empty entry is refused everywhere and
/// a repeated name gives one curve.
const LISTS: &[(&str, Option<&[&str]>)] = &[
    ("oadev,mdev", Some(&["oadev", "mdev"])),
    ("oadev, mdev", Some(&["oadev", "mdev"])),
    ("OADEV,tdev", Some(&["oadev", "tdev"])),
    ("oadev,oadev,mdev", Some(&["oadev", "mdev"])),
    ("oadev,,mdev", None),
    ("oadev,", None),
    (",", None),
    ("nonsense", None),
    ("oadev,nonsense", None),
];

#[test]
fn estimator_lists_are_the_same_in_every_entry_point() {
    let place = Place::new();
    let curves = |o: &Output| -> Vec<String> {
        json(o)["curves"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c["estimator"].as_str().unwrap().to_string())
            .collect()
    };
    for &(text, want) in LISTS {
        let stab = tauwise()
            .arg("stability")
            .arg(place.path("flat.txt"))
            .args(["--data", "freq", "--tau0", "60s", "--format", "json"])
            .args(["--taus", "60s,600s"])
            .arg(format!("--dev={text}"))
            .output()
            .unwrap();
        let conv = tauwise()
            .args(["convert", "--model", "h0=1e-22,fh=0.5", "--to", "sigma"])
            .args(["--taus", "1,10", "--format", "json"])
            .arg(format!("--dev={text}"))
            .output()
            .unwrap();
        match want {
            Some(names) => {
                assert_eq!(curves(&stab), names, "stability --dev {text}");
                assert_eq!(curves(&conv), names, "convert --dev {text}");
            }
            None => {
                assert_refused(&stab, text.trim_matches(','), "stability --dev");
                assert_refused(&conv, text.trim_matches(','), "convert --dev");
            }
        }
    }
}

/// Exit status 2 for every bad command line, 1 for bad data (DEVELOPERS.md
/// "Layers"; `tauwise --help`).
#[test]
fn exit_codes_of_bad_command_lines_and_bad_files() {
    let place = Place::new();
    let flat = place.path("flat.txt");
    let flat = flat.to_str().unwrap();
    let lf = place.path("lf.txt");
    let lf = lf.to_str().unwrap();
    let bad_data = place.path("bad.txt");
    std::fs::write(&bad_data, "1\n2\nthree\n4\n").unwrap();
    let bad_data = bad_data.to_str().unwrap();
    let bad_dut = place.path("bad.toml");
    std::fs::write(&bad_dut, "[device]\nname = \"x\"\ncolour = \"red\"\n").unwrap();
    let bad_dut = bad_dut.to_str().unwrap();
    let missing = place.path("missing.txt");
    let missing = missing.to_str().unwrap();
    // An output whose directory is missing, or is a file: a bad command
    // line too (issue 14), named in the message.
    let no_dir = place.path("no/such/dir/out.csv");
    let no_dir = no_dir.to_str().unwrap();
    let under_file = place.path("flat.txt/chart.svg");
    let under_file = under_file.to_str().unwrap();
    let cases: &[(&[&str], i32)] = &[
        (&["stability", flat, "--tau0", "1s", "-o", no_dir], 2),
        (&["noise", flat, "--tau0", "1s", "--plot", under_file], 2),
        (
            &[
                "simulate", "--model", "h0=1e-22", "--points", "10", "-o", no_dir,
            ],
            2,
        ),
        (&["prepare", flat, "--tau0", "1s", "-o", under_file], 2),
        (&["stability", flat, "--dev", "nonsense"], 2),
        (&["stability", flat, "--remove-drift", "nonsense"], 2),
        (&["stability", flat, "--taus", "weekly"], 2),
        (&["stability", flat, "--confidence", "1.5"], 2),
        (&["stability", flat, "--tau0", "soon"], 2),
        (&["stability", flat, "--units", "parsecs"], 2),
        (&["stability", flat, "--noise-type", "pink"], 2),
        (&["noise", flat, "--taus", "log:0"], 2),
        (&["inspect", flat, "--carrier", "loud"], 2),
        (&["inspect", flat, "--wrap", "-1ns"], 2),
        (&["inspect", flat, "--time-column", "first"], 2),
        (&["inspect", flat, "--snap=0.9"], 2),
        (&["inspect", flat, "--outliers", "-3"], 2),
        (&["prepare", flat, "-o", "-", "--outliers", "zero"], 2),
        (&["spectrum", flat, "--tau0", "1s", "--overlap", "1"], 2),
        (&["spectrum", flat, "--tau0", "1s", "--window", "square"], 2),
        (&["wander", flat, "--tau0", "1s", "--mask", "g999"], 2),
        (
            &[
                "simulate", "--model", "h0=1e-22", "--points", "10", "--drift", "5e-11",
            ],
            2,
        ),
        (
            &["jitter", lf, "--carrier", "10MHz", "--band", "20M:12k"],
            2,
        ),
        (
            &[
                "jitter",
                lf,
                "--carrier",
                "10MHz",
                "--band",
                "12k:5M",
                "--limit",
                "1.5",
            ],
            2,
        ),
        (&["jitter", lf, "--band", "12k:5M"], 2),
        (&["wander", flat, "--tau-range", "1:3"], 2),
        (&["holdover", flat, "--span", "8", "--budget", "1us"], 2),
        (
            &[
                "holdover", flat, "--span", "8h", "--budget", "1us", "--te0", "5",
            ],
            2,
        ),
        (
            &[
                "holdover", flat, "--span", "8h", "--budget", "1us", "--y0", "fast",
            ],
            2,
        ),
        (&["simulate", "--model", "h7=1", "--points", "10"], 2),
        (
            &[
                "simulate", "--model", "h0=1e-22", "--points", "10", "--tau0", "0",
            ],
            2,
        ),
        (&["convert", "--model", "h0=1e-22", "--to", "sigma"], 2),
        (&["report", flat, "--confidence", "0"], 2),
        (&["report", flat, "--chart-size", "big"], 2),
        // Bad data: exit 1.
        (&["stability", bad_data], 1),
        (&["stability", missing], 1),
        (&["report", bad_dut], 1),
    ];
    for (args, code) in cases {
        let o = tauwise().args(*args).output().unwrap();
        assert_eq!(
            o.status.code(),
            Some(*code),
            "tauwise {}: stderr {}",
            args.join(" "),
            stderr(&o)
        );
        assert!(
            !stderr(&o).is_empty(),
            "tauwise {}: no message",
            args.join(" ")
        );
        for path in [no_dir, under_file] {
            if args.contains(&path) {
                assert!(
                    stderr(&o).contains(path),
                    "tauwise {}: the message does not name {path}: {}",
                    args.join(" "),
                    stderr(&o)
                );
            }
        }
    }
}

/// The reader's errors say their cause (issue 14): a missing file, text
/// that is not UTF-8, a DUT file against its schema, content that is not
/// readings — each with the file, and the line where there is one.
#[test]
fn reader_errors_carry_their_cause() {
    use tauwise::io::series::{read_series, SeriesOptions};
    use tauwise::io::ReadCause;
    let place = Place::new();
    let opts = SeriesOptions {
        tau0: Some(1.0),
        ..SeriesOptions::default()
    };
    let cause_of = |name: &str, bytes: &[u8]| {
        let p = place.path(name);
        std::fs::write(&p, bytes).unwrap();
        read_series(&p, &opts).unwrap_err()
    };
    let e = read_series(&place.path("absent.txt"), &opts).unwrap_err();
    assert_eq!(e.cause, ReadCause::Access, "{e}");
    assert_eq!(e.path, place.path("absent.txt"));
    let e = cause_of("utf16.txt", b"\xff\xfe1\x002\x00");
    assert_eq!(e.cause, ReadCause::Encoding, "{e}");
    let e = cause_of("words.txt", b"1\n2\nthree\n4\n");
    assert_eq!(e.cause, ReadCause::Content, "{e}");
    assert_eq!(e.line, Some(3), "{e}");
    let e = Dut::parse(
        "[device]\nname = \"x\"\ncolour = \"red\"\n",
        &place.path("bad.toml"),
        place.dir.path(),
    )
    .unwrap_err();
    assert_eq!(e.cause, ReadCause::Schema, "{e}");
    assert_eq!(e.line, Some(3), "{e}");
    let e = place
        .dut("[holdover]\nbudget = \"1.5\"\nspans = [\"1h\"]\n")
        .unwrap_err();
    assert!(e.contains("give a unit"), "{e}");
}

/// The reading keys of a DUT record are those of the command line's
/// record-input options, and they reach the reader: a semicolon file with
/// decimal commas, no time column and `!` comments reads the same through
/// the DUT file as through `--time-column none --decimal-comma --comment !`.
#[test]
fn dut_reading_keys_reach_the_reader() {
    use tauwise::io::series::read_series;
    let place = Place::new();
    std::fs::write(
        place.path("comma.txt"),
        "! bench log\n1,5\n2,5\n! pause\n3,5\n4,5\n",
    )
    .unwrap();
    let text = "[device]\nname = \"u\"\n[[record]]\npath = \"comma.txt\"\ntau0 = \"1s\"\n\
                time_column = \"none\"\ndecimal_comma = true\ncomment = \"!\"\n\
                snap = 0.1\n";
    let dut = Dut::parse(text, &place.path("u.toml"), place.dir.path()).unwrap();
    let r = &dut.records[0];
    assert!(r.no_time_column && r.decimal_comma);
    assert_eq!((r.snap, r.wrap), (Some(0.1), None));
    assert_eq!(r.comments, "!");
    let s = read_series(&r.path, &r.series_options(None)).unwrap();
    let got: Vec<f64> = s.record.to_phase().x.clone();
    assert_eq!(got, vec![1.5, 2.5, 3.5, 4.5]);
    let cli = tauwise()
        .arg("inspect")
        .arg(place.path("comma.txt"))
        .args(["--tau0", "1s", "--time-column", "none", "--decimal-comma"])
        .args(["--comment", "!", "--format", "json"])
        .output()
        .unwrap();
    assert_eq!(json(&cli)["input"]["points"], 4);
    let text = "[device]\nname = \"u\"\n[[record]]\npath = \"comma.txt\"\nwrap = \"100ns\"\n";
    let dut = Dut::parse(text, &place.path("u.toml"), place.dir.path()).unwrap();
    assert_eq!(dut.records[0].wrap, Some(100e-9));
    for (bad, key) in [
        ("time_column = \"first\"", "record[1].time_column"),
        ("snap = 0.7", "record[1].snap"),
        ("wrap = \"-1ns\"", "record[1].wrap"),
    ] {
        let text = format!(
            "[device]\nname = \"u\"\n[[record]]\npath = \"comma.txt\"\ntau0 = \"1s\"\n{bad}\n"
        );
        let e = Dut::parse(&text, &place.path("u.toml"), place.dir.path())
            .unwrap_err()
            .to_string();
        assert!(e.contains(key), "{bad}: {e}");
    }
}
