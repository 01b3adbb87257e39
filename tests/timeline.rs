//! The timeline (dynamic Allan variance): each window against `stability`
//! on its slice, events on a seeded step, and the false-alarm rate on a
//! stationary record.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use tauwise::deviation::Estimator;
use tauwise::simulate::power_law_phase;
use tauwise::stability::{analyse, Request as StabilityRequest};
use tauwise::tau::TauGrid;
use tauwise::timeline::{timeline, Direction, Request, EVENT_CONFIDENCE};
use tauwise::PhaseRecord;

fn white_fm(levels: &[(f64, usize)], seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut out: Vec<f64> = Vec::new();
    for &(h0, n) in levels {
        let part = power_law_phase(0, h0, 1.0, n, &mut rng);
        let base = out.last().copied().unwrap_or(0.0);
        out.extend(part.iter().map(|v| v + base));
    }
    out
}

fn request(est: Estimator, window: usize, step: usize) -> Request {
    Request {
        estimator: est,
        grid: TauGrid::Octave,
        window,
        step,
        confidence: 0.683,
        event_confidence: EVENT_CONFIDENCE,
    }
}

#[test]
fn each_window_equals_stability_on_its_slice() {
    // The incremental sums against the direct estimators of NIST SP 1065
    // (`stability` on the slice), with and without gaps.
    let mut x = white_fm(&[(1e-22, 6000)], 3);
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let flicker = power_law_phase(-1, 1e-24, 1.0, 6000, &mut rng);
    for (a, b) in x.iter_mut().zip(&flicker) {
        *a += b;
    }
    let mut gappy = x.clone();
    for i in [700, 701, 2500, 4444] {
        gappy[i] = f64::NAN;
    }
    for data in [&x, &gappy] {
        let rec = PhaseRecord::new(data.clone(), 1.0).unwrap();
        for est in [
            Estimator::Oadev,
            Estimator::Mdev,
            Estimator::Tdev,
            Estimator::Ohdev,
        ] {
            let tl = timeline(&rec, &request(est, 1500, 500)).unwrap();
            assert_eq!(tl.windows.len(), 10);
            for w in &tl.windows {
                let s = w.start as usize;
                let slice = PhaseRecord::new(data[s..s + 1500].to_vec(), 1.0).unwrap();
                let taus: Vec<f64> = w.points.iter().map(|p| p.estimate.tau).collect();
                let want = analyse(
                    &slice,
                    &StabilityRequest {
                        estimators: vec![est],
                        grid: TauGrid::Explicit(taus.clone()),
                        confidence: 0.683,
                        forced_alpha: None,
                        bias_correction: true,
                    },
                )
                .unwrap()
                .remove(0);
                assert_eq!(w.points.len(), want.points.len());
                for (a, b) in w.points.iter().zip(&want.points) {
                    let rel = (a.estimate.value / b.estimate.value - 1.0).abs();
                    assert!(
                        rel < 1e-10,
                        "{est} window {s} τ {}: {rel:e}",
                        a.estimate.tau
                    );
                    assert_eq!(a.estimate.terms, b.estimate.terms);
                    assert_eq!(a.edf, b.edf);
                    assert_eq!(a.alpha, b.alpha);
                    assert_eq!(a.drift, b.drift);
                    assert_eq!(a.interval_method, b.interval_method);
                    for (p, q) in [(a.lo, b.lo), (a.hi, b.hi)] {
                        assert!((p.unwrap() / q.unwrap() - 1.0).abs() < 1e-10);
                    }
                }
                assert!(taus.iter().all(|t| *t <= 1500.0 / 4.0));
            }
        }
    }
}

#[test]
fn a_tenfold_white_fm_step_is_found_within_one_step() {
    // Seeded Monte Carlo: the white FM level h0 steps up 10× at t = 20000 s in
    // the middle of the record, so the whole record's variance is 5.5× the
    // first half's; the first window found above the whole record is centred
    // on the step within one step (analytic: the window's variance passes the
    // whole's when half of it lies after the step).
    let step_at = 20_000.0;
    let x = white_fm(&[(1e-22, 20_000), (1e-21, 20_000)], 9);
    let rec = PhaseRecord::new(x, 1.0).unwrap();
    let step = 1000;
    let tl = timeline(&rec, &request(Estimator::Oadev, 8000, step)).unwrap();
    let first_above = tl
        .windows
        .iter()
        .find(|w| {
            tl.events
                .iter()
                .any(|e| e.direction == Direction::Above && e.tau == 1.0 && e.start == w.start)
        })
        .expect("an event above the whole record");
    let centre = first_above.centre();
    assert!(
        (centre - step_at).abs() <= step as f64,
        "first window above centred at {centre} s, the step is at {step_at} s"
    );
    // And the quiet first half is below the whole record.
    assert!(tl
        .events
        .iter()
        .any(|e| e.direction == Direction::Below && e.start == 0.0));
}

#[test]
fn a_stationary_record_stays_within_the_expected_false_alarm_rate() {
    // Seeded Monte Carlo on stationary white + flicker FM: the fraction of
    // (window, τ) cells flagged stays within the stated rate (module notes:
    // 2Φ(−z(s_w + s_a)/√(s_w² − s_a²)); about 2e-4 per cell at 99 %).
    let (mut flagged, mut cells, mut expected) = (0usize, 0usize, 0.0f64);
    for seed in 0..12 {
        let mut x = white_fm(&[(1e-22, 32_000)], 100 + seed);
        let mut rng = ChaCha8Rng::seed_from_u64(200 + seed);
        let fl = power_law_phase(-1, 2e-25, 1.0, 32_000, &mut rng);
        for (a, b) in x.iter_mut().zip(&fl) {
            *a += b;
        }
        let rec = PhaseRecord::new(x, 1.0).unwrap();
        let tl = timeline(&rec, &request(Estimator::Oadev, 4000, 1000)).unwrap();
        let ntau = tl.whole.points.len();
        cells += tl.windows.len() * ntau;
        flagged += tl.events.iter().map(|e| e.windows).sum::<usize>();
        expected += tl
            .false_alarm
            .iter()
            .map(|f| f.rate * tl.windows.len() as f64)
            .sum::<f64>();
    }
    assert!(cells > 3000);
    // Overlapping windows make the counts clumpy: allow three times the
    // expected count and a few cells.
    assert!(
        (flagged as f64) <= 3.0 * expected + 4.0,
        "{flagged} of {cells} cells flagged, {expected:.2} expected"
    );
}

#[test]
fn false_alarm_rate_is_the_stated_formula() {
    // Analytic: a window an eighth of the record at 99 %: 2Φ(−2.5758·1.4481) = 1.9e-4.
    let r = tauwise::timeline::false_alarm_rate(1000.0, 8000.0, 0.99).unwrap();
    assert!((r - 1.91e-4).abs() < 0.05e-4, "{r:e}");
    assert!(tauwise::timeline::false_alarm_rate(10.0, 5.0, 0.99).is_none());
}

#[test]
fn bad_windows_are_refused() {
    let rec = PhaseRecord::new(vec![0.0; 100], 1.0).unwrap();
    assert!(timeline(&rec, &request(Estimator::Oadev, 200, 10)).is_err());
    assert!(timeline(&rec, &request(Estimator::Oadev, 50, 0)).is_err());
    assert!(timeline(&rec, &request(Estimator::Totdev, 50, 10)).is_err());
}

mod common;

#[test]
fn cli_timeline_json_has_windows_events_and_times_from_the_first_sample() {
    let dir = tempfile::tempdir().unwrap();
    let x = white_fm(&[(1e-22, 3000), (1e-21, 3000)], 17);
    let text: String = x.iter().map(|v| format!("{:.6}\n", v * 1e9)).collect();
    let f = common::write(dir.path(), "rec.txt", &text);
    let out = common::tauwise()
        .arg("timeline")
        .arg(&f)
        .args([
            "--units", "ns", "--tau0", "1s", "--window", "20min", "--step", "5min",
        ])
        .args(["--format", "json"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", common::stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let w = v["windows"].as_array().unwrap();
    assert_eq!(w.len(), (6000 - 1200) / 300 + 1);
    assert_eq!(w[0]["start"], 0.0);
    assert_eq!(w[1]["start"], 300.0);
    assert_eq!(w[0]["end"], 1199.0);
    for key in ["tau", "dev", "lo", "hi", "edf", "noise"] {
        assert!(w[0]["points"][0].get(key).is_some(), "{key}");
    }
    assert!(w[0]["points"]
        .as_array()
        .unwrap()
        .iter()
        .all(|p| p["tau"].as_f64().unwrap() <= 300.0));
    let ev = v["events"].as_array().unwrap();
    assert!(ev.iter().any(|e| e["direction"] == "above"));
    for key in ["start", "end", "tau", "ratio"] {
        assert!(ev[0].get(key).is_some(), "{key}");
    }
}

#[test]
fn cli_timeline_refuses_bad_windows() {
    let dir = tempfile::tempdir().unwrap();
    let f = common::write(dir.path(), "rec.txt", &"1.0\n2.0\n3.5\n".repeat(100));
    let out_file = dir.path().join("out.csv");
    let run = |extra: &[&str]| {
        common::tauwise()
            .arg("timeline")
            .arg(&f)
            .args(["--units", "ns", "--tau0", "1s", "-o"])
            .arg(&out_file)
            .args(extra)
            .output()
            .unwrap()
    };
    // Longer than the record.
    let out = run(&["--window", "1h", "--step", "1min"]);
    common::assert_error(&out, 2, &["--window", "longer than the record"], &out_file);
    // Not a whole number of τ0.
    let out = run(&["--window", "100s", "--step", "1.5s"]);
    common::assert_error(&out, 2, &["--step", "whole number of τ0"], &out_file);
    // A bare number is refused: give a unit.
    let out = run(&["--window", "100", "--step", "10s"]);
    common::assert_error(&out, 2, &["--window"], &out_file);
}

#[test]
fn a_dut_file_with_pairs_and_a_timeline_gets_both_report_sections() {
    let dir = tempfile::tempdir().unwrap();
    let demo = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let rec = |name: &str, file: &str| {
        format!(
            "[[record]]\nname = \"{name}\"\npath = \"{}\"\nunits = \"ns\"\ntau0 = \"1s\"\ndrift = \"none\"\n\n",
            demo.join(file).display()
        )
    };
    let mut dut = String::from("[device]\nname = \"lab trio\"\n\n");
    dut += &rec("ab", "pair-ocxo-a-ocxo-b.txt");
    dut += &rec("ar", "pair-ocxo-a-rb-1.txt");
    dut += &rec("br", "pair-ocxo-b-rb-1.txt");
    dut += "[separate]\nsessions = \"separate\"\n\n";
    for (a, b, r) in [
        ("ocxo-a", "ocxo-b", "ab"),
        ("ocxo-a", "rb-1", "ar"),
        ("ocxo-b", "rb-1", "br"),
    ] {
        dut += &format!("[[separate.pair]]\na = \"{a}\"\nb = \"{b}\"\nrecord = \"{r}\"\n\n");
    }
    dut += "[timeline]\nrecord = \"ab\"\nwindow = \"3h\"\nstep = \"30min\"\n";
    let f = common::write(dir.path(), "trio.toml", &dut);
    let html = dir.path().join("trio.html");
    let out = common::tauwise()
        .arg("report")
        .arg(&f)
        .arg("-o")
        .arg(&html)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", common::stderr(&out));
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.contains("id=\"separate\""), "no separate section");
    assert!(page.contains("three-cornered hat"));
    assert!(page.contains("id=\"timeline\""), "no timeline section");
    assert!(!page.contains("Not computed"), "a section failed");
    // A bare number for the window is refused, naming the key and line.
    let bad = dut.replace("window = \"3h\"", "window = 3");
    let f = common::write(dir.path(), "bad.toml", &bad);
    let out = common::tauwise()
        .arg("report")
        .arg(&f)
        .arg("-o")
        .arg(dir.path().join("b.html"))
        .output()
        .unwrap();
    assert_ne!(out.status.code(), Some(0));
    assert!(
        common::stderr(&out).contains("timeline.window"),
        "{}",
        common::stderr(&out)
    );
}

#[test]
fn too_many_windows_are_refused_with_the_memory_they_would_need() {
    let rec = PhaseRecord::new(vec![0.0; 2_000_000], 1.0).unwrap();
    let e = timeline(&rec, &request(Estimator::Oadev, 1000, 1)).unwrap_err();
    assert!(e.to_string().contains("MB"), "{e}");
}

#[test]
fn added_sections_are_in_the_contents_and_anchored_per_device() {
    // The demo's lab-trio.toml asks for [separate] and [timeline]: both
    // sections appear in the report's contents (before the inputs), and on a
    // comparison page each device's copy has its own prefixed anchor, so no
    // id repeats.
    let dir = tempfile::tempdir().unwrap();
    let demo = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let html = dir.path().join("trio.html");
    let out = common::tauwise()
        .arg("report")
        .arg(demo.join("lab-trio.toml"))
        .arg("-o")
        .arg(&html)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", common::stderr(&out));
    let page = std::fs::read_to_string(&html).unwrap();
    let at = |s: &str| page.find(s).unwrap_or_else(|| panic!("{s} missing"));
    assert!(at("href=\"#holdover\"") < at("href=\"#separate\""));
    assert!(at("href=\"#separate\"") < at("href=\"#timeline\""));
    assert!(at("href=\"#timeline\"") < at("href=\"#inputs\""));
    assert!(page.contains("<section id=\"separate\">"));
    assert!(page.contains("<section id=\"timeline\">"));
    assert!(!page.contains("Not computed"), "a section failed");

    let fleet = dir.path().join("fleet.html");
    let out = common::tauwise()
        .arg("report")
        .arg(demo.join("lab-trio.toml"))
        .arg(demo.join("rb-1.toml"))
        .arg("-o")
        .arg(&fleet)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", common::stderr(&out));
    let page = std::fs::read_to_string(&fleet).unwrap();
    let ids: Vec<&str> = page
        .split("id=\"")
        .skip(1)
        .filter_map(|s| s.split('"').next())
        .collect();
    let mut seen = std::collections::HashSet::new();
    for id in &ids {
        assert!(seen.insert(*id), "id {id} repeats");
    }
    let trio = ids
        .iter()
        .find(|id| id.ends_with("timeline"))
        .expect("a timeline section");
    assert!(trio.len() > "timeline".len(), "unprefixed: {trio}");
    assert!(page.contains(&format!("href=\"#{trio}\"")));
}
