//! Every CSV tauwise writes parses with a standard CSV reader (the `csv`
//! crate, RFC 4180) to as many fields per row as its header — also when
//! names hold commas and quotes — and the same kind of estimate has the
//! same JSON keys in every command (issue 14). Every JSON document carries
//! `"schema"`.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::Command;

fn tauwise() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tauwise"))
}

/// Run tauwise with `args`; the run must succeed. Returns standard output.
fn run(args: &[&str]) -> String {
    let out = tauwise().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "tauwise {}: {}",
        args.join(" "),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

/// A directory whose name holds a comma and a double quote, so that every
/// path written into an output needs quoting.
fn awkward_dir() -> (tempfile::TempDir, PathBuf) {
    let t = tempfile::tempdir().unwrap();
    let d = t.path().join("bench, \"rack 2\"");
    std::fs::create_dir(&d).unwrap();
    (t, d)
}

/// A phase record of white FM plus white PM (seeded linear congruential
/// generator, uniform steps), 4000 points at 1 s, in ns.
fn record(dir: &Path) -> PathBuf {
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    let mut u = || {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    };
    let mut x = 0.0;
    let mut text = String::from("# time, phase \"ns\"\n");
    for i in 0..4000 {
        x += u();
        text.push_str(&format!("{i},{}\n", x + 0.3 * u()));
    }
    let p = dir.join("dut, \"a\".csv");
    std::fs::write(&p, text).unwrap();
    p
}

/// A copy of the demo phase-noise table under an awkward name.
fn table(dir: &Path) -> PathBuf {
    let p = dir.join("lf, \"a\".csv");
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/ocxo-a-lf.csv"),
        &p,
    )
    .unwrap();
    p
}

/// Parse CSV text with the `csv` crate (strict: every record must have
/// the header's length) and return the header and the rows.
fn parse_csv(what: &str, text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::ReaderBuilder::new()
        .flexible(false)
        .from_reader(text.as_bytes());
    let header: Vec<String> = r
        .headers()
        .unwrap_or_else(|e| panic!("{what}: header: {e}"))
        .iter()
        .map(String::from)
        .collect();
    let mut rows = Vec::new();
    for (i, rec) in r.records().enumerate() {
        let rec = rec.unwrap_or_else(|e| panic!("{what}: row {}: {e}\n{text}", i + 1));
        assert_eq!(rec.len(), header.len(), "{what}: row {}", i + 1);
        rows.push(rec.iter().map(String::from).collect());
    }
    assert!(!rows.is_empty(), "{what}: no rows");
    (header, rows)
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// Every command that takes `--format`, with the options of a real run.
fn commands(rec: &Path, lf: &Path, filter: &Path) -> Vec<(&'static str, Vec<String>)> {
    let own = |v: &[&str]| v.iter().map(|a| a.to_string()).collect::<Vec<_>>();
    let r = s(rec);
    let t = s(lf);
    vec![
        ("inspect", own(&["inspect", r, "--units", "ns"])),
        (
            "stability",
            own(&[
                "stability",
                r,
                "--units",
                "ns",
                "--dev",
                "oadev,mdev,tdev,mtie",
                "--best",
            ]),
        ),
        (
            "stability --lf",
            own(&[
                "stability",
                r,
                "--units",
                "ns",
                "--dev",
                "oadev",
                "--lf",
                t,
                "--carrier",
                "10MHz",
            ]),
        ),
        ("noise", own(&["noise", r, "--units", "ns"])),
        (
            "spectrum",
            own(&["spectrum", r, "--units", "ns", "--carrier", "10MHz"]),
        ),
        (
            "convert --to sigma",
            own(&[
                "convert",
                "--lf",
                t,
                "--carrier",
                "10MHz",
                "--to",
                "sigma",
                "--dev",
                "adev,mdev,tdev",
            ]),
        ),
        (
            "convert --to lf",
            own(&["convert", "--lf", t, "--carrier", "10MHz", "--to", "lf"]),
        ),
        (
            "convert --to model",
            own(&["convert", "--lf", t, "--carrier", "10MHz", "--to", "model"]),
        ),
        (
            "jitter",
            own(&[
                "jitter",
                t,
                "--carrier",
                "10MHz",
                "--band",
                "12k:5M",
                "--band",
                "10:1k",
                "--filter-file",
                s(filter),
                "--limit",
                "1ps",
            ]),
        ),
        (
            "jitter --record",
            own(&[
                "jitter",
                "--record",
                r,
                "--units",
                "ns",
                "--carrier",
                "10MHz",
                "--band",
                "0.02:0.4",
            ]),
        ),
        (
            "wander",
            own(&["wander", r, "--units", "ns", "--mask", "g8262-opt1"]),
        ),
        (
            "holdover",
            own(&[
                "holdover", r, "--units", "ns", "--span", "2h", "--budget", "1us", "--paths",
                "200", "--steps", "64",
            ]),
        ),
    ]
}

/// A flat filter file (0 dB) under a name with a comma and quotes.
fn filter_file(dir: &Path) -> PathBuf {
    let p = dir.join("flat,filter \"x\".txt");
    std::fs::write(&p, "1 0\n1e9 0\n").unwrap();
    p
}

/// Every CSV parses to as many fields per row as its header (issue 14: a
/// filter file named `flat,filter.txt` used to add a field to the jitter
/// row).
#[test]
fn every_csv_has_as_many_fields_per_row_as_its_header() {
    let (_t, dir) = awkward_dir();
    let (rec, lf, filter) = (record(&dir), table(&dir), filter_file(&dir));
    for (name, args) in commands(&rec, &lf, &filter) {
        let mut a: Vec<&str> = args.iter().map(String::as_str).collect();
        a.extend(["--format", "csv"]);
        let text = run(&a);
        let (header, rows) = parse_csv(name, &text);
        if name == "jitter" {
            let f = header.iter().position(|h| h == "filter").unwrap();
            assert!(
                rows[0][f].contains("flat,filter \"x\".txt"),
                "the weighting names its file: {:?}",
                rows[0]
            );
        }
        if name == "inspect" {
            assert!(rows.iter().any(|r| r[0] == "path" && r[1] == s(&rec)));
        }
    }
}

/// The keys of the first point of `curve` in a JSON document.
fn keys(p: &serde_json::Value) -> BTreeSet<String> {
    p.as_object().unwrap().keys().cloned().collect()
}

fn json(args: &[String]) -> serde_json::Value {
    let mut a: Vec<&str> = args.iter().map(String::as_str).collect();
    a.extend(["--format", "json"]);
    serde_json::from_str(&run(&a)).unwrap()
}

/// Every document has `tool`, `version`, `schema` and `input`.
#[test]
fn every_json_document_has_its_header_and_schema() {
    let (_t, dir) = awkward_dir();
    let (rec, lf, filter) = (record(&dir), table(&dir), filter_file(&dir));
    for (name, args) in commands(&rec, &lf, &filter) {
        let doc = json(&args);
        assert_eq!(doc["tool"], "tauwise", "{name}");
        assert_eq!(doc["schema"], tauwise::results::SCHEMA, "{name}");
        assert!(doc["version"].is_string(), "{name}");
        assert!(doc["input"].is_object(), "{name}");
    }
}

/// One kind of estimate, one shape: the TDEV and MTIE points of `wander`
/// have the keys of those of `stability`, and a value converted from a
/// phase-noise table (`convert`, `stability --lf`) has those keys too.
#[test]
fn the_same_estimate_has_the_same_json_keys_in_every_command() {
    let (_t, dir) = awkward_dir();
    let (rec, lf, filter) = (record(&dir), table(&dir), filter_file(&dir));
    let cmds = commands(&rec, &lf, &filter);
    let get = |n: &str| json(&cmds.iter().find(|c| c.0 == n).unwrap().1);
    let stab = get("stability");
    let curve = |doc: &serde_json::Value, est: &str| {
        doc["curves"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["name"] == est)
            .unwrap_or_else(|| panic!("no {est} curve"))["points"][0]
            .clone()
    };
    let point = keys(&curve(&stab, "oadev"));
    assert_eq!(
        point,
        [
            "tau",
            "m",
            "dev",
            "terms",
            "edf",
            "lo",
            "hi",
            "alpha",
            "noise",
            "bias",
            "interval_method",
            "approximation"
        ]
        .iter()
        .map(|k| k.to_string())
        .collect()
    );
    let wander = get("wander");
    for est in ["tdev", "mtie"] {
        assert_eq!(keys(&curve(&stab, est)), point, "stability {est}");
        assert_eq!(keys(&wander[est][0]), point, "wander {est}");
    }
    let lf_view = get("stability --lf");
    assert_eq!(keys(&curve(&lf_view, "oadev-from-lf")), point);
    let conv = get("convert --to sigma");
    let mut k = keys(&curve(&conv, "adev-from-lf"));
    assert!(k.remove("below_table") && k.remove("truncated"));
    assert_eq!(k, point, "convert");
    let mut b = keys(&curve(&stab, "best"));
    assert!(b.remove("from"));
    assert_eq!(b, point, "best");
}

/// `-o FILE` without `--format` writes what the file's extension says
/// (.csv → CSV, .json → JSON); `--format` still decides when given. Before,
/// `-o result.csv` wrote the text table into a file named CSV.
#[test]
fn output_extension_names_the_format() {
    let (_t, d) = awkward_dir();
    let rec = record(&d);
    let r = rec.to_str().unwrap();
    let csv_out = d.join("result.CSV");
    run(&[
        "stability",
        r,
        "--tau0",
        "1s",
        "-o",
        csv_out.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&csv_out).unwrap();
    let mut rd = csv::Reader::from_reader(text.as_bytes());
    let header = rd.headers().unwrap().clone();
    assert!(header.iter().any(|h| h == "dev"), "{text}");
    assert!(rd.records().count() > 3, "{text}");
    let json_out = d.join("result.json");
    run(&[
        "stability",
        r,
        "--tau0",
        "1s",
        "-o",
        json_out.to_str().unwrap(),
    ]);
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json_out).unwrap()).unwrap();
    assert!(v.get("schema").is_some());
    let table_out = d.join("table.csv");
    run(&[
        "stability",
        r,
        "--tau0",
        "1s",
        "--format",
        "table",
        "-o",
        table_out.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&table_out).unwrap();
    assert!(serde_json::from_str::<serde_json::Value>(&text).is_err());
    assert!(!text.starts_with("estimator,"), "{text}");
}
