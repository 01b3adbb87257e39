//! The analysis commands given several records (`stability`, `wander`,
//! `holdover` with more than one FILE): one block per record in table, CSV
//! and JSON, each equal to the command's answer for that record alone, and
//! one overlaid chart in the records' comparison colours. The check is the
//! single-record command on the same inputs (whose own values are checked
//! against NIST SP 1065, ITU-T G.810 and seeded Monte Carlo elsewhere).

mod common;
use common::{stderr, tauwise};
use serde_json::Value;

const A: &str = "demo-data/ocxo-a-phase.txt";
const B: &str = "demo-data/rb-1-phase.txt";
const TIE_A: &str = "demo-data/ocxo-a-tie.txt";
const TIE_B: &str = "demo-data/ocxo-b-tie.txt";

fn run(args: &[&str]) -> std::process::Output {
    tauwise().args(args).output().unwrap()
}

fn json(args: &[&str]) -> Value {
    let out = run(&[args, &["--format", "json"]].concat());
    assert!(out.status.success(), "{}", stderr(&out));
    serde_json::from_slice(&out.stdout).unwrap()
}

/// A single-record document without its header: what a block holds.
fn block_of(mut doc: Value) -> Value {
    let m = doc.as_object_mut().unwrap();
    for k in ["tool", "version", "schema"] {
        m.remove(k);
    }
    doc
}

/// Each block of the several-record document equals the single-record
/// document of its file (input and members).
fn blocks_equal_single_runs(command: &str, files: &[&str], options: &[&str]) {
    let several = json(&[&[command][..], files, options].concat());
    assert_eq!(several["tool"], "tauwise");
    let blocks = several["records"].as_array().expect("records");
    assert_eq!(blocks.len(), files.len());
    for (file, block) in files.iter().zip(blocks) {
        let single = json(&[&[command, file][..], options].concat());
        assert_eq!(block, &block_of(single), "{command} {file}");
    }
}

#[test]
fn stability_blocks_equal_the_single_record_documents() {
    let opts = ["--tau0", "1s", "--units", "ns", "--dev", "oadev,mdev"];
    blocks_equal_single_runs("stability", &[A, B], &opts);
}

#[test]
fn wander_blocks_equal_the_single_record_documents() {
    let opts = ["--tau0", "100ms", "--units", "ns", "--mask", "g8272-prtc-a"];
    blocks_equal_single_runs("wander", &[TIE_A, TIE_B], &opts);
}

#[test]
fn holdover_blocks_equal_the_single_record_documents() {
    let opts = [
        "--tau0", "1s", "--units", "ns", "--span", "8h", "--budget", "1.5us", "--paths", "200",
    ];
    blocks_equal_single_runs("holdover", &[A, B], &opts);
}

#[test]
fn csv_of_several_records_has_a_file_column_and_the_single_rows() {
    let opts = ["--tau0", "1s", "--units", "ns", "--format", "csv"];
    let several = run(&[&["stability", A, B][..], &opts].concat());
    assert!(several.status.success(), "{}", stderr(&several));
    let mut rdr = csv::Reader::from_reader(&several.stdout[..]);
    let header: Vec<String> = rdr.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(header[0], "file");
    let rows: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
    let mut expected = Vec::new();
    for f in [A, B] {
        let one = run(&[&["stability", f][..], &opts].concat());
        let mut r = csv::Reader::from_reader(&one.stdout[..]);
        assert_eq!(
            r.headers().unwrap().iter().collect::<Vec<_>>(),
            header[1..].iter().map(String::as_str).collect::<Vec<_>>()
        );
        for row in r.records() {
            let mut cells = vec![f.to_string()];
            cells.extend(row.unwrap().iter().map(String::from));
            expected.push(cells);
        }
    }
    let got: Vec<Vec<String>> = rows
        .iter()
        .map(|r| r.iter().map(String::from).collect())
        .collect();
    assert_eq!(got, expected);
}

#[test]
fn table_of_several_records_names_each_file_once_per_block() {
    let out = run(&["stability", A, B, "--tau0", "1s", "--units", "ns"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let text = String::from_utf8(out.stdout).unwrap();
    let a = text.find(&format!("── {A} ──")).expect("block A");
    let b = text.find(&format!("── {B} ──")).expect("block B");
    assert!(a < b);
}

#[test]
fn the_gate_is_the_worst_over_the_records() {
    // ocxo-a's capture meets the PRTC-A MTIE mask over the τ it checks,
    // ocxo-b's exceeds it (see the single runs): together the gate fails.
    let opts = [
        "--tau0",
        "100ms",
        "--units",
        "ns",
        "--mask",
        "g8272-prtc-a",
        "--fail-on-violation",
    ];
    let single_a = run(&[&["wander", TIE_A][..], &opts].concat());
    let single_b = run(&[&["wander", TIE_B][..], &opts].concat());
    let both = run(&[&["wander", TIE_A, TIE_B][..], &opts].concat());
    assert_eq!(single_a.status.code(), Some(0), "{}", stderr(&single_a));
    assert_eq!(single_b.status.code(), Some(3), "{}", stderr(&single_b));
    assert_eq!(both.status.code(), Some(3), "{}", stderr(&both));
}

/// The SVG holds each record's name and its comparison colour.
fn assert_overlaid(svg: &std::path::Path, files: &[&str]) {
    let text = std::fs::read_to_string(svg).unwrap().to_ascii_lowercase();
    for (i, f) in files.iter().enumerate() {
        assert!(
            text.contains(&f.to_ascii_lowercase()),
            "{f} not in the legend"
        );
        let c = tauwise::plot::style::device_colour(i).rgb();
        let hex = format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2);
        assert!(text.contains(&hex), "colour {hex} of record {i} not drawn");
    }
}

#[test]
fn plots_overlay_the_records_in_their_colours() {
    let dir = tempfile::tempdir().unwrap();
    let s = dir.path().join("s.svg");
    let out = run(&[
        "stability",
        A,
        B,
        "--tau0",
        "1s",
        "--units",
        "ns",
        "--plot",
        s.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert_overlaid(&s, &[A, B]);
    let h = dir.path().join("h.svg");
    let out = run(&[
        "holdover",
        A,
        B,
        "--tau0",
        "1s",
        "--units",
        "ns",
        "--span",
        "8h",
        "--budget",
        "1.5us",
        "--paths",
        "200",
        "--plot",
        h.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert_overlaid(&h, &[A, B]);
    let w = dir.path().join("w.svg");
    let out = run(&[
        "wander",
        TIE_A,
        TIE_B,
        "--tau0",
        "100ms",
        "--units",
        "ns",
        "--plot",
        w.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert_overlaid(&w, &[TIE_A, TIE_B]);
    assert_overlaid(&dir.path().join("w-tdev.svg"), &[TIE_A, TIE_B]);
}
