//! Limit files (issue 17, point 4): the TOML format, its refusals, and the
//! one check of a curve against a limit for σ estimators (stability), L(f)
//! (jitter) and MTIE/TDEV (wander).

mod common;
use common::{assert_error, stderr, tauwise, write};
use std::path::{Path, PathBuf};
use tauwise::limits::{
    check::Support, check_lf, check_limit, check_sigma, parse_limit_file, write_limit_file, Limit,
    LimitMetric,
};
use tauwise::spectrum::{Quantity, Spectrum};
use tauwise::verdict::{Coverage, Verdict};

fn parse(text: &str) -> tauwise::limits::LimitFile {
    parse_limit_file(text, Path::new("my.toml")).unwrap()
}

fn refusal(text: &str) -> String {
    parse_limit_file(text, Path::new("my.toml"))
        .unwrap_err()
        .to_string()
}

fn one(text: &str) -> Limit {
    parse(text).limits.remove(0)
}

const DOC_EXAMPLE: &str = r#"
name = "lab-acceptance"
note = "operator's limit, draft 3"

[[limit]]
metric = "mtie"
shape = "loglog"
points = [["0.1s", "40ns"], ["1s", "40ns"], ["1000s", "100ns"]]

[[limit]]
metric = "adev"
points = [["1s", "1e-11"], ["10s", "3e-12"], ["100s", "2e-12"]]

[[limit]]
metric = "lf"
points = [["10Hz", "-100dBc/Hz"], ["1kHz", "-140dBc/Hz"], ["100kHz", "-150dBc/Hz"]]
"#;

/// The format reads as documented: name, note, metric, shape, points with
/// their units; it writes back to the same limits.
#[test]
fn reads_and_round_trips() {
    let f = parse(DOC_EXAMPLE);
    assert_eq!(f.name, "lab-acceptance");
    assert_eq!(f.note.as_deref(), Some("operator's limit, draft 3"));
    assert_eq!(f.limits.len(), 3);
    assert_eq!(f.limits[0].metric.name(), "mtie");
    assert_eq!(f.limits[0].points[0], (0.1, 40e-9));
    assert_eq!(f.limits[0].line, 6);
    assert_eq!(f.limits[1].metric.command(), "stability");
    assert_eq!(f.limits[1].points[1], (10.0, 3e-12));
    assert_eq!(f.limits[2].metric, LimitMetric::Lf);
    assert_eq!(f.limits[2].points[1], (1e3, -140.0));
    // ppb/ppt and bare fractions are the same σ limit.
    let a = one("[[limit]]\nmetric = \"oadev\"\npoints = [[\"1s\", \"0.01ppb\"]]\n");
    let b = one("[[limit]]\nmetric = \"oadev\"\npoints = [[\"1s\", 1e-11]]\n");
    assert!((a.points[0].1 - 1e-11).abs() < 1e-25 && b.points[0].1 == 1e-11);
    // Name defaults to the file's stem.
    assert_eq!(
        parse(&DOC_EXAMPLE.replace("name = \"lab-acceptance\"", "")).name,
        "my"
    );
    let text = write_limit_file(&f).unwrap();
    let again = parse_limit_file(&text, Path::new("my.toml")).unwrap();
    for (a, b) in again.limits.iter().zip(&f.limits) {
        assert_eq!((a.metric, a.step, &a.points), (b.metric, b.step, &b.points));
    }
    assert_eq!(again.name, f.name);
}

/// Every refusal names the file and the line and says what was expected.
#[test]
fn refusals_name_file_line_and_expectation() {
    let head = "name = \"x\"\n[[limit]]\n";
    for (body, line, words) in [
        // unknown key
        ("metric = \"adev\"\ncolour = \"red\"\npoints = [[\"1s\", \"1e-11\"]]\n", 4, vec!["colour"]),
        // unknown metric: the known ones listed, from the registry
        ("metric = \"allan\"\npoints = [[\"1s\", \"1e-11\"]]\n", 3, vec!["allan", "adev", "mdev", "htot", "mtie", "tdev", "lf"]),
        // Theo lattice refused with the way out
        ("metric = \"theoh\"\npoints = [[\"1s\", \"1e-11\"]]\n", 3, vec!["lattice", "oadev"]),
        // non-increasing τ
        ("metric = \"mtie\"\npoints = [[\"1s\", \"40ns\"], [\"10s\", \"50ns\"], [\"5s\", \"60ns\"]]\n", 4, vec!["does not increase", "10 s"]),
        // bare τ
        ("metric = \"adev\"\npoints = [[\"1\", \"1e-11\"]]\n", 4, vec!["give a unit"]),
        ("metric = \"adev\"\npoints = [[1, \"1e-11\"]]\n", 4, vec!["give a unit"]),
        // bare MTIE limit
        ("metric = \"mtie\"\npoints = [[\"1s\", \"40e-9\"]]\n", 4, vec!["give a unit"]),
        // bare offset
        ("metric = \"lf\"\npoints = [[\"10\", \"-100dBc/Hz\"]]\n", 4, vec!["no unit", "Hz"]),
        // L(f) without dBc/Hz
        ("metric = \"lf\"\npoints = [[\"10Hz\", \"-100\"]]\n", 4, vec!["dBc/Hz"]),
        // non-positive and non-finite limits
        ("metric = \"adev\"\npoints = [[\"1s\", \"-1e-11\"]]\n", 4, vec!["positive"]),
        ("metric = \"adev\"\npoints = [[\"1s\", \"0\"]]\n", 4, vec!["positive"]),
        ("metric = \"adev\"\npoints = [[\"1s\", \"inf\"]]\n", 4, vec!["fractional"]),
        ("metric = \"tdev\"\npoints = [[\"1s\", \"1e-320s\"]]\n", 4, vec!["positive"]),
        // a pair of three
        ("metric = \"adev\"\npoints = [[\"1s\", \"1e-11\", \"2\"]]\n", 4, vec!["3 values", "pair"]),
        // shape
        ("metric = \"adev\"\nshape = \"curvy\"\npoints = [[\"1s\", \"1e-11\"]]\n", 4, vec!["loglog", "step"]),
        // empty points
        ("metric = \"adev\"\npoints = []\n", 4, vec!["at least one"]),
    ] {
        let e = refusal(&format!("{head}{body}"));
        assert!(e.starts_with(&format!("my.toml:{line}:")), "{body:?}: {e}");
        for w in words {
            assert!(e.contains(w), "{body:?}: {e} lacks {w}");
        }
    }
    assert!(refusal("name = \"x\"\n").contains("no [[limit]]"));
}

/// A file in the old line syntax is refused with its TOML form, which
/// reads to the same limits (and checks to the same verdicts: tests/wander.rs).
#[test]
fn old_syntax_shows_its_toml_form() {
    let old = "# lab\nname lab-limit\nnote draft 3\n\n[mtie]\nshape loglog\n0.1s 40ns\n1s 40ns # flat\n1000s 0.1us\n\n[tdev]\nshape step\n0.1s 3ns\n100s 3ns\n";
    let e = refusal(old);
    assert!(
        e.starts_with("my.toml: this is the old mask-file syntax"),
        "{e}"
    );
    let toml = e.split("reads:\n\n").nth(1).expect("the TOML form");
    let f = parse(toml);
    assert_eq!(f.name, "lab-limit");
    assert_eq!(f.note.as_deref(), Some("draft 3"));
    let us = tauwise::units::parse_duration("0.1us").unwrap();
    assert_eq!(
        f.limits[0].points,
        vec![(0.1, 40e-9), (1.0, 40e-9), (1000.0, us)]
    );
    assert!(!f.limits[0].step && f.limits[1].step);
    assert_eq!(f.limits[1].points, vec![(0.1, 3e-9), (100.0, 3e-9)]);
}

/// A σ_y curve rising through a sloped limit between two checked τ is
/// caught at the analytic crossing: 2e-13·τ^0.5 = 1e-11·τ^−0.5 ⇒ τ = 50 s
/// (analytic; both power laws, so log–log interpolation is exact).
#[test]
fn sigma_crossing_between_points_is_exact() {
    let l = one(
        "[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"1e-11\"], [\"100s\", \"1e-12\"]]\n",
    );
    let curve: Vec<(f64, f64)> = (0..8)
        .map(|k| {
            let t = 2f64.powi(k);
            (t, 2e-13 * t.sqrt())
        })
        .collect();
    let c = check_limit(&l, &curve, &Support::unbounded(1.0));
    assert_eq!(c.judgement.verdict, Verdict::Exceeds);
    assert!(
        (c.crossing_at.unwrap() - 50.0).abs() < 1e-9,
        "{:?}",
        c.crossing_at
    );
    assert_eq!(
        c.excesses.iter().map(|e| e.at).collect::<Vec<_>>(),
        vec![64.0]
    );
    // 64 s: 2e-13·8 = 1.6e-12 against 1e-11·64^−0.5 = 1.25e-12.
    assert!((c.worst_ratio.unwrap() - 1.28).abs() < 1e-12);
    assert!((c.worst_margin_db.unwrap() + 20.0 * 1.28f64.log10()).abs() < 1e-12);
    // Checked to 64 s of a limit to 100 s: partial, and the reason says so.
    assert_eq!(c.judgement.coverage, Coverage::Partial);
    let why = c.judgement.reason.clone().unwrap();
    assert!(
        why.contains("above 64") && why.contains("were not checked"),
        "{why}"
    );
}

/// Pure linear frequency drift D gives σ_y(τ) = D·τ/√2 for ADEV and OADEV
/// (NIST SP 1065 §5.2.2 / analytic). Through the whole path (record →
/// estimator → check): a flat 1e-11 limit from 1 s to 100 s is crossed at
/// τ = √2·1e-11/D = 14.142 s; a limit beyond the record is partial; one the
/// record cannot reach at all is not judged.
#[test]
fn sigma_limit_on_a_record() {
    let d = 1e-12;
    let x: Vec<f64> = (0..1001).map(|i| 0.5 * d * (i as f64).powi(2)).collect();
    let rec = tauwise::PhaseRecord::new(x, 1.0).unwrap();
    let req = tauwise::stability::Request::new(vec![tauwise::deviation::Estimator::Oadev]);
    let f = parse(
        "[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"1e-11\"], [\"100s\", \"1e-11\"]]\n\
         [[limit]]\nmetric = \"oadev\"\npoints = [[\"1s\", \"1e-9\"], [\"1000s\", \"1e-9\"]]\n\
         [[limit]]\nmetric = \"mdev\"\npoints = [[\"1000s\", \"1e-9\"], [\"10000s\", \"1e-9\"]]\n\
         [[limit]]\nmetric = \"mtie\"\npoints = [[\"1s\", \"1us\"]]\n",
    );
    let c = check_sigma(&rec, &req, &f.limits).unwrap();
    assert_eq!(c.len(), 3, "mtie is wander's");
    let a = &c[0];
    assert_eq!(a.judgement.verdict, Verdict::Exceeds);
    assert_eq!(
        a.judgement.coverage,
        Coverage::Full,
        "{:?}",
        a.judgement.reason
    );
    let cross = 2f64.sqrt() * 1e-11 / d;
    assert!(
        (a.crossing_at.unwrap() - cross).abs() < 1e-6 * cross,
        "{:?}",
        a.crossing_at
    );
    // Checked τ: the octave grid plus 1, 2, 100, 101 s; 100 s is the worst.
    assert_eq!(a.worst_at, Some(100.0));
    assert!((a.worst_ratio.unwrap() - d * 100.0 / 2f64.sqrt() / 1e-11).abs() < 1e-6);
    let o = &c[1];
    assert_eq!(o.judgement.verdict, Verdict::Meets);
    assert_eq!(o.judgement.coverage, Coverage::Partial);
    assert!(
        o.judgement
            .reason
            .as_deref()
            .unwrap()
            .contains("the longest τ of oadev"),
        "{:?}",
        o.judgement.reason
    );
    assert_eq!(o.checked_range.unwrap().to, 500.0);
    let m = &c[2];
    assert_eq!(m.judgement.verdict, Verdict::NotJudged);
    assert_eq!(m.judgement.coverage, Coverage::None);
}

/// L(f) against a limit: dB linear in log f between the limit's points.
/// A table whose floor is −155…−160 dBc/Hz (common practice for a good
/// 10 MHz reference) meets a −150 dBc/Hz floor; raised to 3 dB above the
/// limit at 1 kHz it exceeds by exactly 3 dB there (analytic).
#[test]
fn lf_limit_against_a_table() {
    let f = parse(DOC_EXAMPLE);
    let f_hz = vec![10.0, 100.0, 1e3, 1e4, 1e5];
    let good = Spectrum::new(
        f_hz.clone(),
        vec![-110.0, -135.0, -150.0, -155.0, -160.0],
        Quantity::Lf,
        Some(10e6),
    )
    .unwrap();
    let c = check_lf(&good, &f.limits).unwrap();
    assert_eq!(c.len(), 1);
    assert_eq!(c[0].judgement.verdict, Verdict::Meets);
    assert_eq!(c[0].judgement.coverage, Coverage::Full);
    // Worst at 100 kHz: −160 vs −150, 10 dB below; at 10 Hz also 10 dB.
    assert!(
        (c[0].worst_margin_db.unwrap() - 10.0).abs() < 1e-9,
        "{:?}",
        c[0].worst_margin_db
    );
    let bad = Spectrum::new(
        f_hz,
        vec![-110.0, -135.0, -137.0, -155.0, -160.0],
        Quantity::Lf,
        Some(10e6),
    )
    .unwrap();
    let c = check_lf(&bad, &f.limits).unwrap();
    assert_eq!(c[0].judgement.verdict, Verdict::Exceeds);
    assert_eq!(c[0].worst_at, Some(1e3));
    assert!((c[0].worst_excess_db.unwrap() - 3.0).abs() < 1e-9);
    assert!(
        (c[0].excesses[0].value + 137.0).abs() < 1e-9
            && (c[0].excesses[0].limit + 140.0).abs() < 1e-9
    );
    // A limit point between table points is checked on the table's own
    // interpolation: at 3 kHz the table reads −150 − 5·log10(3) dB.
    let mid = parse("[[limit]]\nmetric = \"lf\"\npoints = [[\"3kHz\", \"-152dBc/Hz\"]]\n");
    let c = check_lf(&good, &mid.limits).unwrap();
    let expect = -150.0 - 5.0 * 3f64.log10();
    assert!((c[0].worst_excess_db.unwrap() - (expect + 152.0)).abs() < 1e-9);
    // A limit beyond the table: partial coverage, the reason names the table.
    let wide = parse("[[limit]]\nmetric = \"lf\"\npoints = [[\"1Hz\", \"-80dBc/Hz\"], [\"10MHz\", \"-150dBc/Hz\"]]\n");
    let c = check_lf(&good, &wide.limits).unwrap();
    assert_eq!(c[0].judgement.coverage, Coverage::Partial);
    let why = c[0].judgement.reason.clone().unwrap();
    assert!(
        why.contains("the table's lowest offset") && why.contains("the table's highest offset"),
        "{why}"
    );
}

// ------------------------------------------------------------ the commands

/// Linear drift D = 1e-12/s over 1001 s at τ0 = 1 s, in ns.
fn drift_file(dir: &Path) -> PathBuf {
    let text: String = (0..1001)
        .map(|i| format!("{}\n", 0.5e-12 * (i as f64).powi(2) * 1e9))
        .collect();
    write(dir, "drift.txt", &text)
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// `stability --limit-file`: the JSON `limits`, the gate's exit statuses
/// (3 exceeds, 4 not judged), the metrics left to other commands named.
#[test]
fn stability_limit_file_and_gate() {
    let dir = tempfile::tempdir().unwrap();
    let rec = drift_file(dir.path());
    let lim = write(
        dir.path(),
        "lab.toml",
        "name = \"lab\"\n[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"1e-11\"], [\"100s\", \"1e-11\"]]\n[[limit]]\nmetric = \"lf\"\npoints = [[\"1kHz\", \"-140dBc/Hz\"]]\n",
    );
    let o = dir.path().join("out.json");
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args(["--tau0", "1s", "--units", "ns", "--limit-file"])
        .arg(&lim)
        .args(["--fail-on-violation", "--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    let doc = json(&o);
    let l = &doc["limits"][0];
    assert_eq!(l["name"], "lab");
    assert_eq!(l["metric"], "adev");
    assert_eq!(l["verdict"], "exceeds");
    assert_eq!(l["coverage"], "full");
    assert_eq!(l["worst_at"], 100.0);
    assert!(l["worst_ratio"].as_f64().unwrap() > 7.0);
    assert_eq!(doc["limits_elsewhere"][0]["command"], "jitter");
    assert!(doc["limits_caution"]
        .as_str()
        .unwrap()
        .contains("Engineering estimate"));
    // A limit the record cannot reach: not judged, exit 4.
    let far = write(
        dir.path(),
        "far.toml",
        "[[limit]]\nmetric = \"adev\"\npoints = [[\"1d\", \"1e-11\"], [\"10d\", \"1e-11\"]]\n",
    );
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args(["--tau0", "1s", "--units", "ns", "--limit-file"])
        .arg(&far)
        .args(["--fail-on-violation"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("limit far ADEV") && text.contains("NOT JUDGED"),
        "{text}"
    );
    assert!(text.contains("nothing was checked"), "{text}");
    // Without --fail-on-violation the verdict is a result.
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args(["--tau0", "1s", "--units", "ns", "--limit-file"])
        .arg(&far)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    // A file with nothing for stability: refused, naming the commands.
    let only_lf = write(
        dir.path(),
        "lf.toml",
        "[[limit]]\nmetric = \"lf\"\npoints = [[\"1kHz\", \"-140dBc/Hz\"]]\n",
    );
    let o2 = dir.path().join("none.json");
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args(["--tau0", "1s", "--units", "ns", "--limit-file"])
        .arg(&only_lf)
        .args(["--format", "json", "-o"])
        .arg(&o2)
        .output()
        .unwrap();
    assert_error(&out, 1, &["lf.toml", "tauwise jitter"], &o2);
}

/// `jitter TABLE --limit-file`: checked on the table's points, the excess
/// in dB in JSON; exit 3 with --fail-on-violation (analytic, as above).
#[test]
fn jitter_limit_file() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(
        dir.path(),
        "lf.csv",
        "offset (Hz),L (dBc/Hz)\n10,-110\n100,-135\n1000,-137\n10000,-155\n100000,-160\n",
    );
    let lim = write(dir.path(), "lab.toml", DOC_EXAMPLE);
    let o = dir.path().join("out.json");
    let out = tauwise()
        .arg("jitter")
        .arg(&table)
        .args(["--carrier", "10MHz", "--no-spur-search", "--limit-file"])
        .arg(&lim)
        .args(["--fail-on-violation", "--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    let doc = json(&o);
    let l = &doc["limits"][0];
    assert_eq!(l["metric"], "lf");
    assert_eq!(l["axis"], "offset");
    assert_eq!(l["verdict"], "exceeds");
    assert!((l["worst_excess_db"].as_f64().unwrap() - 3.0).abs() < 1e-9);
    assert_eq!(l["worst_at"], 1000.0);
    let names: Vec<&str> = doc["limits_elsewhere"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["metric"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["mtie", "adev"]);
    // With a record instead of a table the L(f) limit is refused, never
    // silently left unjudged (exit 2, naming the option); nothing written.
    let rec = write(
        dir.path(),
        "rec.txt",
        &(0..64)
            .map(|i| format!("{}\n", (i as f64 * 0.37).sin() * 1e-9))
            .collect::<String>(),
    );
    let o2 = dir.path().join("out2.json");
    let out = tauwise()
        .args(["jitter", "--record"])
        .arg(&rec)
        .args([
            "--tau0",
            "1ms",
            "--carrier",
            "10MHz",
            "--band",
            "1:100",
            "--limit-file",
        ])
        .arg(&lim)
        .arg("-o")
        .arg(&o2)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(stderr(&out).contains("--limit-file"), "{}", stderr(&out));
    assert!(!o2.exists());
}

/// `wander --limit-file` and `--mask-file` are one option: the same
/// verdicts as the built-in path, the σ and L(f) limits named as left to
/// the other commands; an old-syntax file is refused with its TOML form.
#[test]
fn wander_reads_limit_files() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..2001)
        .map(|i| format!("{}\n", 2e-8 * i as f64 * 1e9))
        .collect();
    let f = write(dir.path(), "ramp.txt", &text);
    let lim = write(dir.path(), "lab.toml", DOC_EXAMPLE);
    let mut docs = Vec::new();
    for opt in ["--limit-file", "--mask-file"] {
        let o = dir.path().join(format!("w{opt}.json"));
        let out = tauwise()
            .arg("wander")
            .arg(&f)
            .args(["--tau0", "1s", "--units", "ns", opt])
            .arg(&lim)
            .args(["--format", "json", "-o"])
            .arg(&o)
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
        docs.push(json(&o));
    }
    assert_eq!(docs[0]["masks"], docs[1]["masks"]);
    let m = &docs[0]["masks"][0];
    assert_eq!(m["name"], "lab-acceptance");
    assert_eq!(m["source_note"], "operator's limit, draft 3");
    // MTIE of the ramp, 20 ns·τ, against 40 ns flat to 1 s then rising to
    // 100 ns at 1000 s: exceeds from τ = 2 s (analytic).
    assert_eq!(m["verdict"], "exceeds");
    assert_eq!(docs[0]["limits_elsewhere"].as_array().unwrap().len(), 2);
    let old = write(
        dir.path(),
        "old.mask",
        "[mtie]\nshape step\n1s 10us\n1000s 10us\n",
    );
    let o = dir.path().join("old.json");
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--mask-file"])
        .arg(&old)
        .args(["--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_error(
        &out,
        1,
        &[
            "old.mask",
            "old mask-file syntax",
            "[[limit]]",
            "metric = \"mtie\"",
            "shape = \"step\"",
        ],
        &o,
    );
}

/// The demo lab's limit file (demo-data/, invented) reads, and each of its
/// limits names the command that checks it.
#[test]
fn demo_limit_file_reads() {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/acceptance-limits.toml");
    let f = tauwise::limits::read_limit_file(&p).unwrap();
    assert_eq!(f.name, "lab-acceptance");
    let cmds: Vec<&str> = f.limits.iter().map(|l| l.metric.command()).collect();
    assert_eq!(cmds, ["stability", "jitter"]);
}
