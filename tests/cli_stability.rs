//! End-to-end: the `stability` binary on small files, its JSON and CSV
//! contract (docs/design.md §5), and its errors.

mod common;
use common::{stdout_of, tauwise, write};

/// NIST SP 1065 nine-point set (docs/checks.md §A): fractional-frequency data.
const NINE: [f64; 9] = [892., 809., 823., 798., 671., 644., 883., 903., 677.];

#[test]
fn json_contract_and_nist_values() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = NINE.iter().map(|v| format!("{v}\n")).collect();
    let f = write(dir.path(), "nine.txt", &text);
    let out = tauwise()
        .args(["stability"])
        .arg(&f)
        .args([
            "--data",
            "freq",
            "--tau0",
            "1s",
            "--dev",
            "adev,oadev,totdev",
        ])
        // The published TOTDEV is the value as computed (no bias removed).
        .args(["--taus", "1,2", "--format", "json", "--uncorrected"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // stderr is not a terminal here: no progress indicator; only the
    // reader's plausibility warning (the NIST set's values, 892 …, are no
    // oscillator's fractional frequency).
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.lines().all(|l| l.starts_with("tauwise: warning: ")),
        "{err}"
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["tool"], "tauwise");
    assert_eq!(doc["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(doc["input"]["data"], "freq");
    assert_eq!(doc["input"]["tau0"], 1.0);
    assert_eq!(doc["input"]["points"], 9);
    assert_eq!(doc["input"]["gaps"], 0);
    assert_eq!(doc["confidence"], 0.683);
    let curves = doc["curves"].as_array().unwrap();
    assert_eq!(curves.len(), 3);
    // NIST SP 1065 nine-point values (docs/checks.md §A, from memory): ADEV m=1
    // 91.22945, m=2 115.8082; OADEV m=2 85.95287; TOTDEV m=2 93.90379.
    let dev = |c: usize, k: usize| curves[c]["points"][k]["dev"].as_f64().unwrap();
    let close = |a: f64, b: f64| (a - b).abs() / b < 5e-7;
    assert_eq!(curves[0]["estimator"], "adev");
    assert!(close(dev(0, 0), 91.22945), "{}", dev(0, 0));
    assert!(close(dev(0, 1), 115.8082), "{}", dev(0, 1));
    assert!(close(dev(1, 1), 85.95287), "{}", dev(1, 1));
    assert!(close(dev(2, 1), 93.90379), "{}", dev(2, 1));
    for key in [
        "tau", "m", "dev", "terms", "edf", "lo", "hi", "alpha", "noise", "bias",
    ] {
        assert!(
            curves[0]["points"][0].get(key).is_some(),
            "point lacks '{key}'"
        );
    }
}

#[test]
fn csv_has_one_row_per_point() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..64)
        .map(|i| format!("{}\n", (i * i % 17) as f64))
        .collect();
    let f = write(dir.path(), "x.txt", &text);
    let out_file = dir.path().join("out.csv");
    let st = tauwise()
        .arg("stability")
        .arg(&f)
        .args([
            "--tau0",
            "1",
            "--dev",
            "oadev,mdev",
            "--format",
            "csv",
            "-o",
        ])
        .arg(&out_file)
        .status()
        .unwrap();
    assert!(st.success());
    let csv = std::fs::read_to_string(&out_file).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next().unwrap(),
        "estimator,origin,tau,m,dev,terms,edf,lo,hi,alpha,noise,bias"
    );
    // 64 phase points: oadev m = 1..16 (5 octaves up to 31), mdev up to 21.
    let rows: Vec<&str> = lines.collect();
    assert_eq!(
        rows.iter()
            .filter(|r| r.starts_with("oadev,measured,"))
            .count(),
        5
    );
    assert_eq!(
        rows.iter()
            .filter(|r| r.starts_with("mdev,measured,"))
            .count(),
        5
    );
}

#[test]
fn unknown_estimator_is_an_error_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "x.txt", "1\n2\n3\n4\n5\n");
    let out_file = dir.path().join("out.json");
    let out = tauwise()
        .arg("stability")
        .arg(&f)
        .args(["--tau0", "1", "--dev", "oadev,wobble", "-o"])
        .arg(&out_file)
        .output()
        .unwrap();
    // A bad command line: exit status 2 (issue 14).
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("unknown estimator 'wobble'"), "{err}");
    assert!(
        err.contains("oadev"),
        "the message lists the known names: {err}"
    );
    assert!(!out_file.exists());
}

#[test]
fn too_short_record_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let f = write(dir.path(), "x.txt", "1\n2\n");
    let out = tauwise()
        .arg("stability")
        .arg(&f)
        .args(["--tau0", "1", "--dev", "hdev"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("too short"), "{err}");
}

#[test]
fn bad_confidence_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..50).map(|i| format!("{i}\n")).collect();
    let f = write(dir.path(), "x.txt", &text);
    for c in ["0", "1", "1.5", "-0.2"] {
        let out = tauwise()
            .arg("stability")
            .arg(&f)
            .args(["--tau0", "1", "--confidence", c])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2), "confidence {c}");
        assert!(String::from_utf8_lossy(&out.stderr).contains("strictly between 0 and 1"));
    }
}

/// `--best`: a curve `best` whose every point is one of its estimator's own
/// points with an interval, with `"from"` naming the estimator; TDEV is
/// never chosen. CSV gets a last column `from`; the table marks
/// bias-corrected values with `*`. (The record is tauwise's own seeded
/// simulation; the choice rule itself is checked in tests/long_tau.rs.)
#[test]
fn best_curve_takes_one_estimator_per_tau() {
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("rec.csv");
    let sim = tauwise()
        .args([
            "simulate",
            "--model",
            "h0=1e-22,h-2=1e-30",
            "--points",
            "3000",
            "--seed",
            "5",
            "-o",
        ])
        .arg(&rec)
        .output()
        .unwrap();
    assert!(
        sim.status.success(),
        "{}",
        String::from_utf8_lossy(&sim.stderr)
    );
    let run = |fmt: &str| {
        String::from_utf8(stdout_of(
            tauwise()
                .arg("stability")
                .arg(&rec)
                .args(["--tau0", "1s", "--dev", "oadev,totdev,tdev,theoh", "--best"])
                .args(["--format", fmt]),
        ))
        .unwrap()
    };
    let doc: serde_json::Value = serde_json::from_str(&run("json")).unwrap();
    let curves = doc["curves"].as_array().unwrap();
    assert_eq!(curves.len(), 5);
    let best = &curves[4];
    assert_eq!(best["name"], "best");
    assert_eq!(best["origin"], "best");
    assert_eq!(
        best["estimator"], "oadev",
        "the variance the curve estimates"
    );
    let pts = best["points"].as_array().unwrap();
    assert!(pts.len() >= 8);
    let width = |p: &serde_json::Value| p["hi"].as_f64().unwrap() / p["lo"].as_f64().unwrap();
    for p in pts {
        let from = p["from"].as_str().unwrap();
        assert_ne!(from, "tdev");
        let tau = p["tau"].as_f64().unwrap();
        // The chosen point is one of `from`'s own points.
        let src = curves.iter().find(|c| c["name"] == from).unwrap();
        assert!(src["points"]
            .as_array()
            .unwrap()
            .iter()
            .any(|q| q["tau"] == p["tau"] && q["dev"] == p["dev"]));
        // It has an honest interval (an EDF and both bounds).
        assert!(
            width(p) > 1.0 && p["edf"].as_f64().unwrap() > 0.0,
            "{from} at τ = {tau}"
        );
    }
    let csv = run("csv");
    assert!(csv.lines().next().unwrap().ends_with(",from"));
    // The CSV's best rows name the estimator each point came from, as the
    // JSON does (which estimator wins at a τ follows the EDF rules alone).
    let from_csv: Vec<&str> = (csv.lines())
        .filter(|l| l.starts_with("oadev,best,"))
        .map(|l| l.rsplit(',').next().unwrap())
        .collect();
    let from_json: Vec<&str> = pts.iter().map(|p| p["from"].as_str().unwrap()).collect();
    assert_eq!(from_csv, from_json);
    let table = run("table");
    assert!(table.contains("best — "));
    assert!(table.contains("* bias-corrected"));
}

/// The combined view: a white-FM record and an L(f) table made from the same
/// model (IEEE Std 1139: S_φ = (ν0/f)² h0 for white FM) agree where they
/// meet, and the chart is written.
#[test]
fn combined_view_with_a_phase_noise_table_and_a_plot() {
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("wfm.txt");
    let table = dir.path().join("lf.csv");
    let plot = dir.path().join("sigma.svg");
    let st = tauwise()
        .args([
            "simulate", "--model", "h0=2e-22", "--tau0", "1s", "--points", "20000",
        ])
        .args(["--seed", "5", "-o"])
        .arg(&rec)
        .status()
        .unwrap();
    assert!(st.success());
    let st = tauwise()
        .args([
            "convert",
            "--model",
            "h0=2e-22,fh=1k",
            "--carrier",
            "10MHz",
            "--to",
            "lf",
        ])
        .args([
            "--from",
            "0.01",
            "--to-offset",
            "1k",
            "--format",
            "csv",
            "-o",
        ])
        .arg(&table)
        .status()
        .unwrap();
    assert!(st.success());
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args([
            "--tau0",
            "1s",
            "--dev",
            "oadev",
            "--carrier",
            "10MHz",
            "--lf",
        ])
        .arg(&table)
        .args(["--format", "json", "--plot"])
        .arg(&plot)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let names: Vec<&str> = doc["curves"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["oadev", "oadev-from-lf-full-band", "oadev-from-lf"]);
    let origins: Vec<&str> = doc["curves"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["origin"].as_str().unwrap())
        .collect();
    assert_eq!(origins, ["measured", "from-lf-full-band", "from-lf"]);
    let c = &doc["consistency"][0];
    assert_eq!(
        c["f_h"].as_f64(),
        Some(0.5),
        "the record's bandwidth 1/(2τ0)"
    );
    assert_eq!(c["bandwidth_given"], false);
    assert!(c["apart"].is_null());
    let rows = c["points"].as_array().unwrap();
    assert!(
        rows.len() >= 3,
        "shared τ from 2τ0 to the table's reach: {rows:?}"
    );
    // White FM is bandwidth-independent at 2πf_hτ ≫ 1: σ_y² = h0/(2τ) on
    // both sides (IEEE Std 1139), so the ratio stays near 1.
    let r = rows.last().unwrap()["ratio"].as_f64().unwrap();
    assert!((r - 1.0).abs() < 0.1, "ratio {r}");
    assert!(rows.iter().all(|p| p["agree"] == true), "{rows:?}");
    let svg = std::fs::read_to_string(&plot).unwrap();
    roxmltree::Document::parse(&svg).expect("valid SVG");
    // --lf without --carrier is a clear error.
    let out = tauwise()
        .arg("stability")
        .arg(&rec)
        .args(["--tau0", "1s", "--lf"])
        .arg(&table)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--lf: the phase-noise table needs the carrier frequency: give --carrier"),
        "{err}"
    );
}

/// `--dev tierms` (the old name of TIE rms) is refused with a message that
/// gives the new name, and nothing is written; `--dev tie-rms` works.
#[test]
fn old_estimator_name_is_refused_with_the_new_one() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..100).map(|i| format!("{}\n", (i % 7) as f64)).collect();
    let f = write(dir.path(), "x.txt", &text);
    let out = tauwise()
        .arg("stability")
        .arg(&f)
        .args(["--tau0", "1", "--units", "ns", "--dev", "oadev,tierms"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("'tie-rms'"), "{err}");
    assert!(out.stdout.is_empty());
    let out = tauwise()
        .arg("stability")
        .arg(&f)
        .args([
            "--tau0", "1", "--units", "ns", "--dev", "tie-rms", "--format", "json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["curves"][0]["estimator"], "tie-rms");
}

/// Issue 18: TheoH's ThêoBR part on a record of 61,530 points or more (where
/// the record's ThêoBR ratio is the mean over a subset of its pairs) carries
/// that approximation — JSON `"approximation": {"name": "subset-bias-ratio",
/// "bound": 0.005}`, a `≈` after its row in the text table and one note
/// saying what it means —, and nothing else does: TheoH's OADEV part (τ
/// below 10 % of the record, NIST SP 1065 §5.2.17), the OADEV curve, and
/// every point of a record one sample shorter (every pair used) carry
/// `null` and no mark. The `best` curve keeps the mark of the points it
/// takes from TheoH. Seeded white FM plus white PM (the marks depend on N
/// and τ alone).
#[test]
fn theoh_marks_its_approximated_points() {
    use rand::{Rng, SeedableRng};
    let dir = tempfile::tempdir().unwrap();
    for n in [61_530usize, 61_529] {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(18);
        let mut walk = 0.0;
        let text: String = (0..n)
            .map(|_| {
                walk += rng.gen_range(-1.0..1.0) * 1e-9;
                format!("{:e}\n", walk + rng.gen_range(-1.0..1.0) * 1e-10)
            })
            .collect();
        let f = write(dir.path(), &format!("x{n}.txt"), &text);
        let run = |format: &str| {
            stdout_of(
                tauwise()
                    .arg("stability")
                    .arg(&f)
                    .args(["--tau0", "1s", "--dev", "oadev,theoh", "--best"])
                    .args(["--format", format]),
            )
        };
        let doc: serde_json::Value = serde_json::from_slice(&run("json")).unwrap();
        let split = 0.1 * (n - 1) as f64;
        let sampled = n >= 61_530;
        let mut marked = 0;
        let mut ratio_part = 0;
        for c in doc["curves"].as_array().unwrap() {
            for p in c["points"].as_array().unwrap() {
                let tau = p["tau"].as_f64().unwrap();
                let from_theoh = c["name"] == "theoh" || p["from"] == "theoh";
                let want = from_theoh && tau >= split && sampled;
                ratio_part += usize::from(c["name"] == "theoh" && tau >= split);
                let a = &p["approximation"];
                if want {
                    marked += 1;
                    assert_eq!(a["name"], "subset-bias-ratio", "n={n} τ={tau}");
                    assert_eq!(a["bound"], 0.005);
                } else {
                    assert!(a.is_null(), "n={n} {} τ={tau}: {a}", c["name"]);
                }
            }
        }
        // The TheoH curve reaches its ThêoBR part (a few octaves).
        assert!(ratio_part >= 2, "n={n}: {ratio_part} ThêoBR points");
        assert_eq!(marked > 0, sampled);
        let table = String::from_utf8(run("table")).unwrap();
        let rows = table.lines().filter(|l| l.ends_with("  ≈")).count();
        assert_eq!(rows, marked, "n={n}:\n{table}");
        let notes = table
            .lines()
            .filter(|l| {
                l.starts_with("≈ approximated: theoh beyond 10 % of a record of 61,530 points")
            })
            .count();
        // One note under each table that shows the mark (the theoh curve and
        // `best` when it takes a marked point).
        assert_eq!(notes > 0, sampled, "{table}");
        assert!(table.contains("within 0.5 % of the mean of all pairs") == sampled);
    }
}
