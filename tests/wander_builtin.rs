//! The built-in limits as limit files (issue 20 point 3): every break point
//! of every built-in against the values recalled from memory, a curve on
//! the edge of each break, the time-error limits judged on records of known
//! content, `--list-masks`, and the formula and single-value forms of the
//! limit file.

mod common;
use common::{assert_error, tauwise, write};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use tauwise::limits::{check_limit, parse_limit_file, write_limit_file, LimitMetric, TeMetric};
use tauwise::verdict::{Coverage, Verdict};
use tauwise::wander::check::Support;
use tauwise::wander::masks::{builtin_file, builtin_list, BUILTIN_NAMES, FROM_MEMORY_NOTE};
use tauwise::wander::{analyse_limits, Options};
use tauwise::PhaseRecord;

const NS: f64 = 1e-9;

/// The documented break points (docs/time-error.md): (built-in, metric, τ s,
/// limit s at τ — for a formula, the segment ending at τ; the first row of a
/// limit its value just above its start). Values recalled from memory, as
/// each Recommendation is named: ITU-T G.811, G.812, G.8262, G.8272,
/// G.8272.1, G.8273.2.
const BREAKS: &[(&str, &str, f64, f64)] = &[
    // ITU-T G.811 (from memory): MTIE 0.275e-3·τ + 0.025 µs to 1000 s, 1e-5·τ + 0.29 µs above.
    ("g811", "mtie", 0.1, 25.0275 * NS),
    ("g811", "mtie", 1000.0, 300.0 * NS),
    ("g811", "tdev", 0.1, 3.0 * NS),
    ("g811", "tdev", 100.0, 3.0 * NS),
    ("g811", "tdev", 1000.0, 30.0 * NS),
    ("g811", "tdev", 10000.0, 30.0 * NS),
    // ITU-T G.812 type I (from memory).
    ("g812-type1", "mtie", 0.1, 24.0 * NS),
    ("g812-type1", "mtie", 9.0, 24.0 * NS),
    ("g812-type1", "mtie", 400.0, 160.0 * NS),
    ("g812-type1", "mtie", 10000.0, 160.0 * NS),
    ("g812-type1", "tdev", 25.0, 3.0 * NS),
    ("g812-type1", "tdev", 100.0, 12.0 * NS),
    ("g812-type1", "tdev", 10000.0, 12.0 * NS),
    // ITU-T G.8262 option 1 (from memory).
    ("g8262-opt1", "mtie", 0.1, 40.0 * NS),
    ("g8262-opt1", "mtie", 1.0, 40.0 * NS),
    ("g8262-opt1", "mtie", 100.0, 63.40 * NS),
    ("g8262-opt1", "mtie", 1000.0, 100.45 * NS),
    ("g8262-opt1", "tdev", 25.0, 3.2 * NS),
    ("g8262-opt1", "tdev", 100.0, 6.4 * NS),
    ("g8262-opt1", "tdev", 1000.0, 6.4 * NS),
    // ITU-T G.8272 PRTC-A (from memory).
    ("g8272-prtc-a", "mtie", 273.0, 100.075 * NS),
    ("g8272-prtc-a", "mtie", 1e6, 100.0 * NS),
    ("g8272-prtc-a", "tdev", 100.0, 3.0 * NS),
    ("g8272-prtc-a", "tdev", 1000.0, 30.0 * NS),
    // ITU-T G.8272 PRTC-B (from memory).
    ("g8272-prtc-b", "mtie", 54.5, 39.9875 * NS),
    ("g8272-prtc-b", "mtie", 1e6, 40.0 * NS),
    ("g8272-prtc-b", "tdev", 100.0, 1.0 * NS),
    ("g8272-prtc-b", "tdev", 500.0, 5.0 * NS),
    ("g8272-prtc-b", "tdev", 100000.0, 5.0 * NS),
    // ITU-T G.8272.1 ePRTC (from memory).
    ("g8272.1-eprtc", "tdev", 30000.0, 1.0 * NS),
    ("g8272.1-eprtc", "tdev", 300000.0, 10.0 * NS),
    // ITU-T G.8273.2 classes (from memory).
    ("g8273.2-class-a", "dte-l", 1000.0, 40.0 * NS),
    ("g8273.2-class-a", "dte-l-tdev", 1000.0, 4.0 * NS),
    ("g8273.2-class-b", "dte-l", 1000.0, 40.0 * NS),
    ("g8273.2-class-b", "dte-l-tdev", 1000.0, 4.0 * NS),
    ("g8273.2-class-c", "dte-l", 1000.0, 10.0 * NS),
    ("g8273.2-class-c", "dte-l-tdev", 1000.0, 2.0 * NS),
];

/// The single values (from memory: ITU-T G.8272, G.8272.1, G.8273.2).
const SINGLES: &[(&str, &str, f64)] = &[
    ("g8272-prtc-a", "max-te", 100.0 * NS),
    ("g8272-prtc-b", "max-te", 40.0 * NS),
    ("g8272.1-eprtc", "max-te", 30.0 * NS),
    ("g8273.2-class-a", "max-te", 100.0 * NS),
    ("g8273.2-class-a", "cte", 50.0 * NS),
    ("g8273.2-class-a", "dte-h", 70.0 * NS),
    ("g8273.2-class-b", "max-te", 70.0 * NS),
    ("g8273.2-class-b", "cte", 20.0 * NS),
    ("g8273.2-class-b", "dte-h", 70.0 * NS),
    ("g8273.2-class-c", "max-te-l", 30.0 * NS),
    ("g8273.2-class-c", "cte", 10.0 * NS),
];

fn limit_of(name: &str, metric: &str) -> tauwise::limits::Limit {
    builtin_file(name)
        .unwrap()
        .limits
        .into_iter()
        .find(|l| l.metric.name() == metric)
        .unwrap_or_else(|| panic!("{name} has no {metric}"))
}

/// Recalled from memory (each Recommendation as named in `BREAKS`): every
/// built-in evaluated at its documented break points gives the documented
/// value, to 1e-3 relative (the tables' own rounding, e.g. 63.4 ns).
#[test]
fn every_builtin_break_point_has_its_documented_value() {
    for &(name, metric, tau, want) in BREAKS {
        let l = limit_of(name, metric);
        // A formula's start is exclusive: its value just above.
        let s = l.shape();
        let got = s.eval(tau).or_else(|| s.eval(tau * (1.0 + 1e-12))).unwrap();
        assert!(
            (got - want).abs() <= 1e-3 * want,
            "{name} {metric} at {tau} s: {got:e} s, documented {want:e} s"
        );
    }
    for &(name, metric, want) in SINGLES {
        let l = limit_of(name, metric);
        assert!(l.metric.is_single());
        let got = l.single_value().unwrap();
        assert!(
            (got - want).abs() <= 1e-12 * want,
            "{name} {metric}: {got:e}"
        );
    }
    // Every built-in names its Recommendation and says it is recalled.
    for n in BUILTIN_NAMES {
        let f = builtin_file(n).unwrap();
        let note = f.note.unwrap();
        assert!(
            note.starts_with("ITU-T G.8") || note.starts_with("ITU-T G.81"),
            "{note}"
        );
        assert!(note.contains(FROM_MEMORY_NOTE), "{note}");
    }
}

/// Analytic: a curve on the limit at each break point meets it, and the
/// same curve 1e-6 above it exceeds — for every built-in limit over τ.
#[test]
fn a_curve_on_the_edge_passes_at_the_break_and_fails_just_beyond() {
    for n in BUILTIN_NAMES {
        for l in builtin_file(n).unwrap().limits {
            if l.metric.is_single() {
                continue;
            }
            let shape = l.shape();
            let (lo, _) = shape.range();
            for &(tau, _) in &l.points {
                // A formula's start is exclusive: check just above it.
                let t = if tau == lo { tau * (1.0 + 1e-9) } else { tau };
                let v = shape.eval(t).unwrap();
                let sup = Support::unbounded(t);
                let on = check_limit(&l, &[(t, v)], &sup);
                assert_eq!(
                    on.verdict(),
                    Verdict::Meets,
                    "{n} {} at {t}",
                    l.metric.name()
                );
                let over = check_limit(&l, &[(t, v * (1.0 + 1e-6))], &sup);
                assert_eq!(
                    over.verdict(),
                    Verdict::Exceeds,
                    "{n} {} at {t}",
                    l.metric.name()
                );
            }
        }
    }
}

fn rec(x: Vec<f64>, tau0: f64) -> PhaseRecord {
    PhaseRecord::new(x, tau0).unwrap()
}

fn te_check(res: &tauwise::wander::WanderResult, m: TeMetric) -> &tauwise::limits::LimitCheck {
    res.te_checks
        .iter()
        .find(|c| c.metric == LimitMetric::Te(m))
        .unwrap()
}

fn run(x: Vec<f64>, tau0: f64, names: &[&str]) -> tauwise::wander::WanderResult {
    let mut limits = Vec::new();
    for n in names {
        limits.extend(builtin_file(n).unwrap().limits);
    }
    let masks: Vec<_> = limits.iter().filter_map(|l| l.as_mask()).collect();
    analyse_limits(&rec(x, tau0), &Options::default(), &masks, &limits).unwrap()
}

/// Analytic: a record of constant time error c has max |TE| = c; at the
/// PRTC-B limit (40 ns, from memory ITU-T G.8272) it passes, 1 % beyond it
/// fails.
#[test]
fn max_te_on_the_edge() {
    let at = run(vec![40.0 * NS; 600], 1.0, &["g8272-prtc-b"]);
    let c = te_check(&at, TeMetric::MaxTe);
    assert_eq!(c.verdict(), Verdict::Meets);
    assert_eq!(c.judgement.coverage, Coverage::Full);
    assert!((c.worst_ratio.unwrap() - 1.0).abs() < 1e-12);
    let beyond = run(vec![-40.4 * NS; 600], 1.0, &["g8272-prtc-b"]);
    assert_eq!(
        te_check(&beyond, TeMetric::MaxTe).verdict(),
        Verdict::Exceeds
    );
}

fn noise(n: usize, seed: u64, sd: f64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n)
        .map(|_| sd * 3f64.sqrt() * rng.gen_range(-1.0..1.0))
        .collect()
}

/// Analytic with seeded noise: a record of a known constant offset of
/// 30 ns plus zero-mean noise of 2 ns rms has every 1000 s cTE within
/// 30 ns ± 0.5 ns (the mean of 1000 samples: σ ≈ 0.06 ns); judged against
/// class A (|cTE| ≤ 50 ns) it meets, against class B (20 ns) it exceeds
/// (from memory: ITU-T G.8273.2). A constant offset has no dynamic time
/// error: dTE_L MTIE and dTE_H are within rounding of zero and meet.
#[test]
fn cte_of_a_known_offset_is_judged_right() {
    let x: Vec<f64> = noise(4000, 11, 2.0 * NS)
        .into_iter()
        .map(|v| v - 30.0 * NS)
        .collect();
    let a = run(x.clone(), 1.0, &["g8273.2-class-a"]);
    let te = a.te.as_ref().unwrap();
    let w = te.cte_windowed_max_abs.unwrap();
    assert!((w - 30.0 * NS).abs() < 0.5 * NS, "{w:e}");
    let c = te_check(&a, TeMetric::Cte);
    assert_eq!(c.verdict(), Verdict::Meets);
    assert!((c.worst_ratio.unwrap() - w / (50.0 * NS)).abs() < 1e-12);
    let b = run(x, 1.0, &["g8273.2-class-b"]);
    assert_eq!(te_check(&b, TeMetric::Cte).verdict(), Verdict::Exceeds);
    // A constant: no dynamic part.
    let k = run(vec![-30.0 * NS; 4000], 1.0, &["g8273.2-class-a"]);
    for m in [TeMetric::DteL, TeMetric::DteLTdev, TeMetric::DteH] {
        let c = te_check(&k, m);
        assert_eq!(c.verdict(), Verdict::Meets, "{m:?}");
        assert!(c.worst_ratio.unwrap() < 1e-6, "{m:?}");
    }
    assert_eq!(te_check(&k, TeMetric::Cte).verdict(), Verdict::Meets);
}

/// Analytic: a ramp y·t through the first-order low-pass is, after its
/// settling, the same ramp delayed, whose MTIE is y·τ; with y·1000 s 2 %
/// below the class A dTE_L limit (40 ns to 1000 s, from memory ITU-T
/// G.8273.2) it meets, 2 % above it exceeds at the limit's end.
#[test]
fn dte_l_of_a_ramp_on_the_edge() {
    let ramp = |k: f64| -> Vec<f64> {
        let y = k * 40.0 * NS / 1000.0;
        (0..3000).map(|i| y * i as f64).collect()
    };
    let under = run(ramp(0.98), 1.0, &["g8273.2-class-a"]);
    let c = te_check(&under, TeMetric::DteL);
    assert_eq!(c.verdict(), Verdict::Meets, "{c:?}");
    assert_eq!(c.judgement.coverage, Coverage::Full);
    assert!(
        (c.worst_ratio.unwrap() - 0.98).abs() < 0.01,
        "{:?}",
        c.worst_ratio
    );
    assert_eq!(c.worst_at, Some(1000.0));
    let over = run(ramp(1.02), 1.0, &["g8273.2-class-a"]);
    let c = te_check(&over, TeMetric::DteL);
    assert_eq!(c.verdict(), Verdict::Exceeds);
    assert!(c.excesses.iter().any(|e| e.at == 1000.0));
}

/// A record too coarse for the 0.1 Hz split (τ0 = 10 s): max |TE| and cTE
/// are still judged on the record as read; the filtered metrics are
/// not-judged, saying why (never a pass).
#[test]
fn te_limits_on_a_coarse_record_are_judged_or_not_judged_never_passed() {
    let res = run(vec![20.0 * NS; 400], 10.0, &["g8273.2-class-a"]);
    assert_eq!(te_check(&res, TeMetric::MaxTe).verdict(), Verdict::Meets);
    assert_eq!(te_check(&res, TeMetric::Cte).verdict(), Verdict::Meets);
    for m in [TeMetric::DteL, TeMetric::DteLTdev, TeMetric::DteH] {
        let c = te_check(&res, m);
        assert_eq!(c.verdict(), Verdict::NotJudged, "{m:?}");
        assert!(c.judgement.reason.as_ref().unwrap().contains("Nyquist"));
    }
}

/// `--list-masks` lists every built-in with its metrics and source note;
/// `--mask` with a time-error class judges it in the table and JSON, and
/// the gate fails on it.
#[test]
fn list_masks_and_te_verdicts_on_the_command_line() {
    let out = tauwise().args(["wander", "--list-masks"]).output().unwrap();
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    for b in builtin_list().unwrap() {
        assert!(text.contains(&b.name), "{text}");
        assert!(text.contains(&b.metrics.join(", ")), "{text}");
    }
    assert!(text.contains("recalled from memory"));
    let dir = tempfile::tempdir().unwrap();
    let body: String = (0..600).map(|_| "45\n").collect();
    let f = write(dir.path(), "te.txt", &body);
    let o = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--units", "ns", "--mask", "g8272-prtc-b"])
        .args(["--format", "json", "--fail-on-violation"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(3));
    let doc: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let te = &doc["te_limits"][0];
    assert_eq!(te["metric"], "max-te");
    assert_eq!(te["verdict"], "exceeds");
    assert!((te["worst_ratio"].as_f64().unwrap() - 45.0 / 40.0).abs() < 1e-12);
    let o = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--units", "ns", "--mask", "g8272-prtc-b"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("limit g8272-prtc-b max|TE| over the record") && text.contains("EXCEEDS"),
        "{text}"
    );
}

/// The formula and single-value forms of the limit file: read, written
/// back and read again to the same limits; a gap between segments, a
/// `max` without its unit and points on a single-value metric are refused
/// naming the file and line.
#[test]
fn formula_and_single_value_limit_files() {
    let p = std::path::Path::new("lab.toml");
    let text = "name = \"lab\"\n\n[[limit]]\nmetric = \"mtie\"\nshape = \"formula\"\nsegments = [\n  { from = \"0.1s\", to = \"10s\", coef = \"1ns\", power = 0.5, add = \"5ns\" },\n  { from = \"10s\", add = \"8.162ns\" },\n]\n\n[[limit]]\nmetric = \"cte\"\nmax = \"25ns\"\n";
    let f = parse_limit_file(text, p).unwrap();
    let back = parse_limit_file(&write_limit_file(&f).unwrap(), p).unwrap();
    assert_eq!(f.limits.len(), 2);
    for (a, b) in f.limits.iter().zip(&back.limits) {
        assert_eq!(a.metric, b.metric);
        assert_eq!(a.points, b.points);
        assert_eq!(a.segments, b.segments);
    }
    // Analytic: 1 ns·√4 + 5 ns = 7 ns at τ = 4 s; no upper end.
    let s = f.limits[0].shape();
    assert!((s.eval(4.0).unwrap() - 7.0 * NS).abs() < 1e-20);
    assert_eq!(s.eval(1e9), Some(8.162 * NS));
    let bad = |t: &str, words: &[&str]| {
        let e = parse_limit_file(t, p).unwrap_err().to_string();
        for w in words {
            assert!(e.contains(w), "{e}");
        }
    };
    bad(
        "[[limit]]\nmetric = \"mtie\"\nshape = \"formula\"\nsegments = [\n  { from = \"0.1s\", to = \"1s\", add = \"5ns\" },\n  { from = \"2s\", to = \"3s\", add = \"5ns\" },\n]\n",
        &["lab.toml:6", "contiguous"],
    );
    bad(
        "[[limit]]\nmetric = \"max-te\"\nmax = \"100\"\n",
        &["lab.toml:3", "unit"],
    );
    bad(
        "[[limit]]\nmetric = \"cte\"\npoints = [[\"1s\", \"1ns\"]]\n",
        &["lab.toml:2", "max"],
    );
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("o.json");
    let o = tauwise()
        .args(["wander", "--mask", "g8999"])
        .arg(dir.path().join("x.txt"))
        .arg("-o")
        .arg(&out)
        .output()
        .unwrap();
    assert_error(&o, 2, &["g8999", "g8273.2-class-a", "g812-type1"], &out);
}
