//! End-to-end: the `holdover` binary, its JSON contract (issue 5), exit
//! statuses and bad-input errors.

mod common;
use common::{assert_error, stderr, tauwise};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use std::path::{Path, PathBuf};
use std::process::Output;

const DAY: f64 = 86400.0;

/// Two days of fractional frequency at τ0 = 60 s, all zero: the
/// deterministic part is then only the given aging.
fn flat_file(dir: &Path) -> PathBuf {
    let p = dir.join("flat.txt");
    std::fs::write(&p, "0\n".repeat(2880)).unwrap();
    p
}

fn run_flat(span: &str, extra: &[&str]) -> Output {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    tauwise()
        .arg("holdover")
        .arg(&f)
        .args(["--data", "freq", "--tau0", "60s"])
        .args(["--span", span, "--budget", "1.5us", "--aging", "1e-10/day"])
        .args(["--model", "h0=1e-32", "--paths", "200"])
        .args(extra)
        .output()
        .unwrap()
}

/// Initial frequency of the flat record under the given aging: the mean
/// over the default settle window W (a tenth of the record) carried to its
/// end, y0 = D·W/2 (analytic).
fn flat_y0(d: f64) -> f64 {
    d * (2880.0 * 60.0 / 10.0) / 2.0
}

/// First t with y0·t + ½·D·t² = budget (analytic, quadratic formula).
fn crossing(y0: f64, d: f64, budget: f64) -> f64 {
    (-y0 + (y0 * y0 + 2.0 * d * budget).sqrt()) / d
}

/// The JSON shape of issue 5, with a given aging and negligible noise:
/// TE(t) = y0·t + ½·D·t², whose aging part is 4.32 µs at 24 h for
/// D = 1e−10/day (docs/checks.md §G), and the 1.5 µs budget is first exceeded at
/// the root of that quadratic (analytic).
#[test]
fn json_contract_with_given_aging() {
    let out = run_flat("24h", &["--format", "json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["tool"], "tauwise");
    assert_eq!(doc["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(doc["input"]["data"], "freq");
    assert_eq!(doc["input"]["tau0"], 60.0);
    assert_eq!(doc["input"]["points"], 2880);
    assert_eq!(doc["span_s"], DAY);
    assert!((doc["budget_s"].as_f64().unwrap() - 1.5e-6).abs() < 1e-20);
    let d = 1e-10 / DAY;
    let model = &doc["model"];
    for key in ["h", "y0", "y0_sigma", "aging_per_s", "aging_model"] {
        assert!(model.get(key).is_some(), "model lacks '{key}'");
    }
    assert!(model["h"].is_object());
    assert!((model["h"]["h0"].as_f64().unwrap() / 1e-32 - 1.0).abs() < 1e-12);
    let y0 = flat_y0(d);
    assert!((model["y0"].as_f64().unwrap() - y0).abs() < 1e-9 * y0);
    assert!((model["aging_per_s"].as_f64().unwrap() - d).abs() < 1e-12 * d);
    assert_eq!(model["aging_model"], "given");

    let te = doc["te"].as_array().unwrap();
    assert!(te.len() >= 20);
    for p in te {
        for key in ["t", "deterministic", "p50", "p95", "p99"] {
            assert!(p[key].is_f64(), "te point lacks '{key}'");
        }
        let t = p["t"].as_f64().unwrap();
        let want = y0 * t + 0.5 * d * t * t;
        assert!((p["deterministic"].as_f64().unwrap() - want).abs() <= 1e-12 * want);
        // The noise (h0 = 1e-32: sqrt(h0·t/2) ≈ 2e-14 s at 24 h) is negligible.
        let p95 = p["p95"].as_f64().unwrap();
        assert!((p95 - want).abs() < 1e-12, "t = {t}: {p95} vs {want}");
    }
    let last = te.last().unwrap();
    assert_eq!(last["t"], DAY);
    let aging_part = last["deterministic"].as_f64().unwrap() - y0 * DAY;
    assert!((aging_part - 4.32e-6).abs() < 1e-15, "{aging_part}");

    let holds = doc["holds_for_s"].as_f64().unwrap();
    let want = crossing(y0, d, 1.5e-6);
    assert!((holds / want - 1.0).abs() < 1e-3, "{holds} vs {want}");
    assert_eq!(doc["verdict"], "exceeds");
    let caution = doc["caution"].as_str().unwrap();
    for w in [
        "Engineering estimate",
        "temperature, supply, vibration and ageing history",
        "equipment maker's data",
        "acceptance procedure",
    ] {
        assert!(caution.contains(w), "'{w}' missing from {caution}");
    }
}

/// A failed verdict is a result (exit 0); `--fail-on-violation` makes it 3.
/// The table says how long the unit holds, and carries the caution.
#[test]
fn exit_status_and_table() {
    let out = run_flat("24h", &[]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = String::from_utf8_lossy(&out.stdout);
    let d = 1e-10 / DAY;
    let hours = crossing(flat_y0(d), d, 1.5e-6) / 3600.0; // 11.9 h (analytic)
    let want = format!("holds 95 % of the time for about {hours:.1} h");
    assert!(text.contains(&want), "{want} not in {text}");
    assert!(text.contains("EXCEEDS"), "{text}");
    assert!(text.contains("Engineering estimate"), "{text}");
    let out = run_flat("24h", &["--fail-on-violation"]);
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    // Within budget (8 h: y0·t + ½·D·t² = 0.77 µs): pass, and exit 0 with the flag.
    let out = run_flat("8h", &["--fail-on-violation", "--format", "json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["verdict"], "meets");
    assert!(doc["holds_for_s"].is_null());
}

/// With no model given, the noise is fitted on the record: a WFM record of
/// h0 = 1e−22 (IEEE Std 1139 WFM: σ_y(τ0)² = h0/(2τ0)) gives h0 within 30 %,
/// and a linear drift D is recovered within 5 %.
#[test]
fn fitted_model_from_a_noisy_record() {
    let dir = tempfile::tempdir().unwrap();
    let (tau0, n, h0, d) = (10.0, 17280usize, 1e-22f64, 5e-11 / DAY);
    let sd = (h0 / (2.0 * tau0)).sqrt();
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let text: String = (0..n)
        .map(|i| {
            let y = d * (i as f64 + 0.5) * tau0 + sd * rng.sample::<f64, _>(StandardNormal);
            format!("{y:e}\n")
        })
        .collect();
    let f = dir.path().join("wfm.txt");
    std::fs::write(&f, text).unwrap();
    let out = tauwise()
        .arg("holdover")
        .arg(&f)
        .args(["--data", "freq", "--tau0", "10s", "--span", "8h"])
        .args(["--budget", "1.5us", "--paths", "400", "--format", "json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let m = &doc["model"];
    assert_eq!(m["aging_model"], "linear");
    let got_h0 = m["h"]["h0"].as_f64().unwrap();
    assert!((got_h0 / h0 - 1.0).abs() < 0.3, "{got_h0}");
    let got_d = m["aging_per_s"].as_f64().unwrap();
    assert!((got_d / d - 1.0).abs() < 0.05, "{got_d} vs {d}");
}

/// A span or budget ≤ 0 is a clear error; nothing is written.
#[test]
fn bad_span_and_budget() {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    let o = dir.path().join("out.json");
    for (span, budget, word) in [
        ("0", "1.5us", "span"),
        ("-5h", "1.5us", "span"),
        ("24h", "0", "budget"),
        ("24h", "-1us", "budget"),
    ] {
        let out = tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
            .args(["--span", span, "--budget", budget, "--format", "json", "-o"])
            .arg(&o)
            .output()
            .unwrap();
        assert_error(&out, 2, &[word, "positive"], &o);
    }
}

/// `--start` inside the record: the record after the start is set beside the
/// prediction. Frequency with an exact linear drift y = D·t (midpoint
/// samples, τ0 = 60 s, two days), holdover from 24 h: the observed time error
/// is ∫_T^{T+t} D·s ds = D·T·t + ½·D·t² (analytic), which is also what the
/// fitted model predicts; the observed |TE| first exceeds the budget at the
/// root of that quadratic, to within one sample.
#[test]
fn record_after_the_start_beside_the_prediction() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("drift.txt");
    let d = 2e-10 / DAY;
    let text: String = (0..2880)
        .map(|i| format!("{:e}\n", d * (i as f64 + 0.5) * 60.0))
        .collect();
    std::fs::write(&f, text).unwrap();
    let run = |extra: &[&str]| {
        tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--span", "12h"])
            .args(["--budget", "1.5us", "--model", "h0=1e-32", "--paths", "200"])
            .args(extra)
            .output()
            .unwrap()
    };
    let out = run(&["--start", "24h", "--format", "json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let after = &doc["after_start"];
    assert_eq!(after["covered_s"], 12.0 * 3600.0);
    let pts = after["points"].as_array().unwrap();
    assert!(pts.len() >= 20, "{after}");
    let t_start = DAY;
    for p in pts {
        let t = p["t"].as_f64().unwrap();
        let want = d * t_start * t + 0.5 * d * t * t;
        let te = p["te"].as_f64().unwrap();
        // Between samples the phase is interpolated linearly: off a
        // parabola by at most D·τ0²/8 (analytic).
        let interp = d * 60.0 * 60.0 / 8.0;
        assert!(
            (te - want).abs() <= interp + 1e-9 * want,
            "t = {t}: {te} vs {want}"
        );
        let p95 = p["p95"].as_f64().unwrap();
        assert!(
            (p95 - want).abs() <= 1e-3 * want,
            "t = {t}: p95 {p95} vs {want}"
        );
    }
    let cross = crossing(d * t_start, d, 1.5e-6);
    let at = after["exceeds_budget_at_s"].as_f64().unwrap();
    assert!(at >= cross && at <= cross + 60.0, "{at} vs {cross}");
    assert!(after["worst_ratio"].as_f64().unwrap() < 1.001);

    // The table and the CSV carry it; without --start there is nothing after.
    let out = run(&["--start", "24h"]);
    let table = String::from_utf8_lossy(&out.stdout);
    assert!(table.contains("the record after the start"), "{table}");
    assert!(
        table.contains("observed |TE| first exceeds the budget"),
        "{table}"
    );
    let out = run(&["--start", "24h", "--format", "csv"]);
    let csv = String::from_utf8_lossy(&out.stdout);
    assert!(
        csv.starts_with("t,deterministic,p50,p95,p99,rms,observed\n"),
        "{csv}"
    );
    let filled = csv.lines().skip(1).filter(|l| !l.ends_with(',')).count();
    assert_eq!(filled, pts.len());
    let out = run(&["--format", "json"]);
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(doc["after_start"].is_null());
    // A start at the very end: the table says there is nothing to compare.
    let out = run(&["--start", "48h"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let table = String::from_utf8_lossy(&out.stdout);
    assert!(table.contains("nothing to compare"), "{table}");
}

/// Issue 12: a number that decides a verdict needs its unit. `--budget 1.5`
/// once read as 1.5 s turned a FAIL into a PASS; `--span 24` was 24 s.
#[test]
fn bare_numbers_are_refused_where_they_decide() {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    let o = dir.path().join("out.json");
    for (args, word) in [
        (["--span", "24h", "--budget", "1.5"], "--budget 1.5"),
        (["--span", "24", "--budget", "1.5us"], "--span 24"),
    ] {
        let out = tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
            .args(args)
            .args(["--format", "json", "-o"])
            .arg(&o)
            .output()
            .unwrap();
        assert_error(&out, 2, &[word, "give a unit, e.g. 1.5us / 24h"], &o);
    }
    for (flag, value, example) in [
        ("--te0", "20", "give a unit"),
        ("--aging", "1e-15", "5e-11/day"),
        ("--settle", "600", "give a unit"),
    ] {
        let out = tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--span", "8h"])
            .args(["--budget", "1.5us", flag, value, "-o"])
            .arg(&o)
            .output()
            .unwrap();
        assert_error(&out, 2, &[flag, example], &o);
    }
}

/// Issue 12: nothing non-finite passes. A span of 1e200 s overflows the
/// prediction: the verdict is `not-judged` with the reason, the JSON says
/// which members are not finite (never a `null` for them), and
/// `--fail-on-violation` exits 4. Too few paths for a p95 verdict is
/// `not-judged` the same way.
#[test]
fn non_finite_prediction_is_not_judged() {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    let run = |extra: &[&str]| {
        tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
            .args(["--model", "h0=1e-22", "--budget", "1.5us"])
            .args(extra)
            .output()
            .unwrap()
    };
    let out = run(&[
        "--span",
        "1e200s",
        "--paths",
        "200",
        "--fail-on-violation",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["verdict"], "not-judged");
    assert!(
        doc["reason"].as_str().unwrap().contains("not"),
        "{}",
        doc["reason"]
    );
    let listed = doc["not_finite"].as_array().unwrap();
    assert!(!listed.is_empty());
    for t in doc["te"].as_array().unwrap() {
        for k in ["p50", "p95", "p99", "deterministic"] {
            assert!(!t[k].is_null(), "te.{k} is null: {t}");
        }
    }
    assert!(stderr(&out).contains("not finite"), "{}", stderr(&out));
    // Without the flag the verdict is a result: exit 0, table says so.
    let out = run(&["--span", "1e200s", "--paths", "200"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert!(String::from_utf8_lossy(&out.stdout).contains("NOT JUDGED"));
    // 50 paths: a p95 verdict is not judged.
    let out = run(&[
        "--span",
        "8h",
        "--paths",
        "50",
        "--fail-on-violation",
        "--format",
        "json",
    ]);
    assert_eq!(out.status.code(), Some(4), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["verdict"], "not-judged");
    assert!(doc["reason"].as_str().unwrap().contains("too few"));
    // A temperature term that is no clock's is refused.
    let out = run(&[
        "--span",
        "8h",
        "--temp-coeff",
        "1e305/K",
        "--temp-swing",
        "5K",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    assert!(stderr(&out).contains("fractional frequency"));
}

/// Issue 12: every count option is bounded, with an error that gives the
/// memory it would need — never a panic or an abort.
#[test]
fn counts_are_bounded_with_the_memory_they_need() {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    for (flag, value) in [
        ("--paths", "9223372036854775807"),
        ("--paths", "1000000"),
        ("--steps", "1e8"),
        ("--steps", "18446744073709551615"),
    ] {
        let out = tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
            .args(["--span", "8h", "--budget", "1.5us", flag, value])
            .output()
            .unwrap();
        assert_eq!(
            out.status.code(),
            Some(1),
            "{flag} {value}: {}",
            stderr(&out)
        );
        let e = stderr(&out);
        assert!(
            e.contains("memory") && e.contains('B'),
            "{flag} {value}: {e}"
        );
    }
}

/// Issue 12: `-o` naming the input is refused before anything is computed
/// (the measurement is kept), and so is an output in a missing directory.
#[test]
fn output_is_checked_before_computing() {
    let dir = tempfile::tempdir().unwrap();
    let f = flat_file(dir.path());
    let before = std::fs::read(&f).unwrap();
    let link = dir.path().join("same.txt");
    std::fs::hard_link(&f, &link).unwrap();
    for o in [f.clone(), link] {
        let out = tauwise()
            .arg("holdover")
            .arg(&f)
            .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
            .args(["--span", "8h", "--budget", "1.5us", "-o"])
            .arg(&o)
            .output()
            .unwrap();
        // A bad command line: exit status 2 (issue 14).
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert!(
            stderr(&out).contains("is the input file"),
            "{}",
            stderr(&out)
        );
    }
    assert_eq!(std::fs::read(&f).unwrap(), before);
    let missing = dir.path().join("missing/dir/out.json");
    let out = tauwise()
        .arg("holdover")
        .arg(&f)
        .args(["--data", "freq", "--tau0", "60s", "--aging", "1e-10/day"])
        .args(["--span", "8h", "--budget", "1.5us", "--plot"])
        .arg(&missing)
        .output()
        .unwrap();
    // A missing output directory is a bad command line (issue 14).
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("checked before computing"),
        "{}",
        stderr(&out)
    );
}

/// `--y0` sets the frequency error at the start of holdover instead of the
/// record's end: with a given aging and negligible noise the deterministic
/// TE is y0·t + ½·D·t² (analytic); `--y0-sigma` spreads the paths by
/// σ·t, so p95 of |TE| at the span end lies near |y0·t + ½Dt²| + 1.645σt
/// when that term dominates (one-sided normal quantile, analytic; Monte
/// Carlo of 2000 paths). `--y0-sigma` alone is a command-line error.
#[test]
fn y0_given_on_the_command_line() {
    let d = 1e-10 / DAY;
    let out = run_flat("24h", &["--y0", "-2e-11", "--format", "json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["model"]["y0"].as_f64(), Some(-2e-11));
    assert_eq!(doc["model"]["y0_sigma"].as_f64(), Some(0.0));
    assert_eq!(doc["model"]["y0_source"], "given");
    let end = doc["te"].as_array().unwrap().last().unwrap().clone();
    let want = -2e-11 * DAY + 0.5 * d * DAY * DAY;
    assert!(
        (end["deterministic"].as_f64().unwrap() - want).abs() < 1e-12,
        "{end}"
    );
    let dir = tempfile::tempdir().unwrap();
    let out = tauwise()
        .arg("holdover")
        .arg(flat_file(dir.path()))
        .args([
            "--data", "freq", "--tau0", "60s", "--span", "24h", "--budget", "1.5us",
        ])
        .args([
            "--aging",
            "1e-10/day",
            "--model",
            "h0=1e-32",
            "--paths",
            "2000",
        ])
        .args(["--y0", "0", "--y0-sigma", "1e-11", "--format", "json"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let end = doc["te"].as_array().unwrap().last().unwrap().clone();
    let base = 0.5 * d * DAY * DAY; // 4.32 µs
    let spread = 1e-11 * DAY; // 0.864 µs
    let p95 = end["p95"].as_f64().unwrap();
    let want = base + 1.645 * spread;
    assert!((p95 / want - 1.0).abs() < 0.05, "p95 {p95} vs {want}");
    let out = run_flat("24h", &["--y0-sigma", "1e-11"]);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let out = run_flat("24h", &["--y0", "fast"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--y0"), "{}", stderr(&out));
}

/// On a record of pure noise (seeded white FM, no aging at all) the fitted
/// aging is reported with its bootstrap uncertainty and called not
/// significant: within 2σ of zero, as 95 % of such records should be.
#[test]
fn aging_not_significant_is_said() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("wfm.txt");
    let mut rng = ChaCha8Rng::seed_from_u64(8);
    let sd = (1e-22f64 / 2.0).sqrt(); // WFM h0 = 1e-22 at τ0 = 1 s: σ_y(τ0)
    let text: String = (0..20_000)
        .map(|_| format!("{:e}\n", sd * rng.sample::<f64, _>(StandardNormal)))
        .collect();
    std::fs::write(&p, text).unwrap();
    let out = tauwise()
        .arg("holdover")
        .arg(&p)
        .args([
            "--data", "freq", "--tau0", "1s", "--span", "1h", "--budget", "1us",
        ])
        .args(["--paths", "200", "--format", "json"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let z = doc["model"]["aging_z"].as_f64().unwrap();
    assert!(z < 2.0, "{z}");
    assert_eq!(doc["model"]["aging_significant"], false);
    assert_eq!(doc["model"]["uncertainty"]["replicates"], 400);
    let out = tauwise()
        .arg("holdover")
        .arg(&p)
        .args([
            "--data", "freq", "--tau0", "1s", "--span", "1h", "--budget", "1us",
        ])
        .args(["--paths", "200"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("parametric bootstrap"), "{text}");
    assert!(text.contains("not significant at 2σ"), "{text}");
}
