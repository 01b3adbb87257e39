//! The HTML report: parses as HTML (scraper), holds every section, fetches
//! nothing (no http:// or https://, no <script>), escapes every text from an
//! input, and — built from a DUT file — reports the inputs it read.
//! Values in the synthetic report come from the IEEE Std 1139 closed forms
//! (analytic) and docs/checks.md §E, §G; they only need to be plausible here.

mod common;
use scraper::{Html, Selector};
use std::fs;
use tauwise::io::dut::Dut;
use tauwise::model::PowerLaw;
use tauwise::plot::holdover::HoldoverPlot;
use tauwise::plot::phase_noise::{BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::plot::stability::{SigmaCurve, StabilityPlot};
use tauwise::plot::wander::{MaskLine, Metric, WanderPlot};
use tauwise::plot::XY;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::*;
use tauwise::verdict::{Coverage, Judgement, Verdict};

fn full_report(name: &str) -> Report {
    let mut m = PowerLaw::zero(0.5);
    m.set(0, 4e-23);
    m.set(-2, 1e-31);
    let taus: Vec<f64> = (0..12).map(|k| 2f64.powi(k)).collect();
    let oadev: Vec<XY> = taus
        .iter()
        .map(|&t| {
            let v = m.avar(t).sqrt();
            XY::with_interval(t, v, Some(0.9 * v), Some(1.1 * v))
        })
        .collect();
    let plot = StabilityPlot {
        title: name.into(),
        curves: vec![SigmaCurve {
            name: "oadev".into(),
            estimator: tauwise::deviation::Estimator::Oadev,
            origin: tauwise::deviation::Origin::Measured,
            points: oadev.clone(),
        }],
        regions: vec![],
        confidence: Some(0.683),
        notes: vec![],
    };
    let mut r = Report::empty(name, "");
    r.description = Some("desc with <b>markup</b>".into());
    r.dut_file = Some("duts/<x>.toml".into());
    r.verdicts = vec![
        VerdictLine {
            brief: None,
            kind: VerdictKind::Mask,
            item: "g8262-opt1".into(),
            criterion: "MTIE".into(),
            result: "worst 0.5".into(),
            judgement: Judgement::judged(false, Coverage::Full),
            ratio: None,
            hold_time: None,
        },
        VerdictLine {
            brief: None,
            kind: VerdictKind::Jitter,
            item: "12k:20M".into(),
            criterion: "≤ 1 ps".into(),
            result: "1.789 ps".into(),
            judgement: Judgement::judged(true, Coverage::Full),
            ratio: None,
            hold_time: None,
        },
        VerdictLine {
            brief: None,
            kind: VerdictKind::Holdover,
            item: "24 h".into(),
            criterion: "p95 ≤ 1.5 µs".into(),
            result: "4.32 µs".into(),
            judgement: Judgement::judged(true, Coverage::Full),
            ratio: None,
            hold_time: None,
        },
    ];
    r.stability = Part::Done(vec![StabilitySection {
        source: "rec <1>".into(),
        quality: Some(DataQuality {
            points: 4096,
            tau0: 1.0,
            span: 4095.0,
            gaps: 3,
            gap_runs: 1,
            longest_gap: 3.0,
            offset: Some(1e-11),
            drift_per_day: Some(2e-11),
            drift_sigma_per_day: Some(1e-12),
            outliers: None,
        }),
        preparation: vec!["Linear frequency drift removed <&>".into()],
        plot: Some(plot.clone()),
        rows: oadev
            .iter()
            .map(|p| StabilityRow {
                estimator: tauwise::deviation::Estimator::Oadev,
                tau: p.x,
                m: p.x as usize,
                dev: p.y,
                lo: p.lo,
                hi: p.hi,
                edf: Some(10.0),
                noise: Some("WFM".into()),
                terms: 100,
                approximation: None,
            })
            .collect(),
        confidence: 0.683,
        notes: vec![],
        limits: vec![],
        limit_checks: vec![],
    }]);
    r.noise_model = Part::Done(vec![NoiseModelSection {
        source: "rec <1>".into(),
        model_string: m.to_model_string(),
        terms: vec![ModelTerm {
            alpha: 0,
            label: "WFM".into(),
            h: 4e-23,
            dominant: Some((1.0, 1e4)),
        }],
        identified: vec![NoiseIdRow {
            tau: 1.0,
            alpha: 0,
            label: "WFM".into(),
            method: "lag1".into(),
        }],
        notes: vec![],
    }]);
    // docs/checks.md §E / issue 4 (analytic): flat −155 dBc/Hz over 12 kHz–20 MHz on 10 MHz is 1.124e−4 rad, 1.789 ps.
    r.phase_noise = Part::Done(PhaseNoiseSection {
        source: "table".into(),
        carrier: 10e6,
        plot: PhaseNoisePlot {
            title: name.into(),
            carrier: Some(10e6),
            traces: vec![LfTrace {
                name: "flat".into(),
                kind: TraceKind::Table,
                points: vec![(1e3, -155.0), (1e7, -155.0)],
            }],
            bands: vec![BandMark {
                from: 12e3,
                to: 20e6,
                label: "12k–20M".into(),
            }],
            notes: vec![],
        },
        bands: vec![JitterRow {
            name: "generic".into(),
            from: 12e3,
            to: 20e6,
            filters: String::new(),
            rms_rad: 1.124e-4,
            rms_s: 1.789e-12,
            rms_ui: None,
            limit: Some("1.000 ps rms".into()),
            judgement: Some(Judgement::judged(true, Coverage::Full)),
            period: None,
        }],
        notes: vec![],
        limits: vec![],
        limit_checks: vec![],
        limit_rows: vec![],
    });
    r.combined = Part::Done(vec![CombinedSection {
        source: "rec <1>".into(),
        table: "table".into(),
        plot,
        comparison: tauwise::stability::Comparison {
            estimator: "oadev".into(),
            f_h: 0.5,
            bandwidth_given: false,
            table_uncertainty_db: 2.0,
            common: Some([2.0, 2.0]),
            points: vec![tauwise::stability::Agreement {
                tau: 2.0,
                measured: 4.5e-12,
                lo: 4e-12,
                hi: 5e-12,
                converted: 4.4e-12,
                ratio: 4.5 / 4.4,
                tolerance: 0.2,
                below_table: 0.01,
                agree: true,
            }],
            without_interval: 0,
            apart: None,
        },
        notes: vec![],
    }]);
    r.wander = Part::Done(WanderSection {
        source: "tie".into(),
        tie: Some(TieStats {
            max_abs: 1e-8,
            pk_pk: 2e-8,
            rms: 5e-9,
        }),
        plots: vec![WanderPlot {
            title: name.into(),
            metric: Metric::Mtie,
            measured: vec![(1.0, 1e-8), (100.0, 5e-8)],
            masks: vec![MaskLine {
                name: "m".into(),
                limit: vec![(1.0, 4e-8), (100.0, 1e-7)],
                violations: vec![],
            }],
            notes: vec![],
        }],
        masks: vec![MaskRow {
            name: "g8262-opt1".into(),
            metric: "MTIE".into(),
            judgement: Judgement::judged(false, Coverage::Partial),
            worst_ratio: Some(0.5),
            worst_tau: Some(100.0),
            checked: Some((1.0, 100.0)),
            mask_range: (0.1, Some(1000.0)),
            violations: 0,
            source_note: "values recalled from memory".into(),
        }],
        notes: vec![],
        te: None,
    });
    // docs/checks.md §G (analytic): D = 1e-10/day over 24 h gives 4.32 µs.
    let t: Vec<f64> = (0..=24).map(|h| h as f64 * 3600.0).collect();
    let det: Vec<f64> = t.iter().map(|&s| 0.5 * 1e-10 / 86400.0 * s * s).collect();
    r.holdover = Part::Done(HoldoverSection {
        source: "rec".into(),
        budget: 1.5e-6,
        plot: HoldoverPlot {
            title: name.into(),
            p50: det.clone(),
            p95: det.iter().map(|v| v * 1.2).collect(),
            p99: det.iter().map(|v| v * 1.4).collect(),
            deterministic: det.clone(),
            t,
            budget: Some(1.5e-6),
            holds_for: Some(12.0 * 3600.0),
            span: 86400.0,
            notes: vec![],
            observed: vec![],
        },
        spans: vec![SpanRow {
            span: 86400.0,
            deterministic: 4.32e-6,
            p95: 5.2e-6,
            p99: 6e-6,
            judgement: Judgement::judged(true, Coverage::Full),
        }],
        holds_for: Some(12.0 * 3600.0),
        aging_per_day: Some((1e-10, Some(1e-12))),
        parameters: vec![("aging".into(), "1e-10/day".into())],
        notes: vec![],
    });
    r.inputs = vec![Provenance {
        role: "time record".into(),
        name: "<rec>".into(),
        path: "/data/<rec>.csv".into(),
        sha256: "ab".repeat(32),
        bytes: 10,
        points: Some(3),
        span: Some(2.0),
        tau0: Some(1.0),
        gaps: Some(0),
    }];
    r.methods = vec![Method {
        name: "oadev".into(),
        source: "NIST SP 1065".into(),
    }];
    r
}

fn check_document(html: &str) -> Html {
    let doc = Html::parse_document(html);
    for (id, title) in SECTION_IDS {
        let sel = Selector::parse(&format!("section#{id} > h2")).unwrap();
        let h2: Vec<_> = doc.select(&sel).collect();
        assert_eq!(h2.len(), 1, "section {id}");
        assert_eq!(h2[0].text().collect::<String>(), title);
    }
    assert!(
        !html.contains("http://") && !html.contains("https://"),
        "no URL of any kind"
    );
    assert!(!html.to_ascii_lowercase().contains("<script"), "no script");
    assert!(!html.contains("<link") && !html.contains("@import") && !html.contains("url("));
    let caution = Selector::parse("section#cautions p.caution").unwrap();
    assert!(doc
        .select(&caution)
        .any(|p| p.text().collect::<String>() == tauwise::DECISION_CAUTION));
    doc
}

#[test]
fn full_report_has_every_section_and_fetches_nothing() {
    let html = render_html(&full_report("ocxo-a")).unwrap();
    let doc = check_document(&html);
    let svg = Selector::parse("section figure svg").unwrap();
    assert!(
        doc.select(&svg).count() >= 5,
        "stability, L(f), combined, wander, holdover charts"
    );
    let badges = Selector::parse("section#verdicts .badge").unwrap();
    let words: Vec<String> = doc.select(&badges).map(|b| b.text().collect()).collect();
    assert_eq!(words, ["meets", "exceeds", "exceeds"]);
    assert!(html.contains("1.789 ps"));
}

#[test]
fn names_from_the_input_are_escaped() {
    let evil = "<script>alert(1)</script>";
    let html = render_html(&full_report(evil)).unwrap();
    let doc = check_document(&html);
    assert!(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    let h1 = Selector::parse("h1").unwrap();
    assert!(doc
        .select(&h1)
        .next()
        .unwrap()
        .text()
        .collect::<String>()
        .contains(evil));
    let b = Selector::parse("header b").unwrap();
    assert_eq!(doc.select(&b).count(), 0, "description markup stays text");
}

#[test]
fn an_empty_report_still_has_every_section() {
    let r = Report::empty("x", "nothing was asked.");
    let html = render_html(&r).unwrap();
    let doc = check_document(&html);
    let absent = Selector::parse("p.absent").unwrap();
    assert!(doc.select(&absent).count() >= 7);
}

#[test]
fn write_is_atomic_and_complete() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("r.html");
    write(&full_report("a"), &p).unwrap();
    let text = fs::read_to_string(&p).unwrap();
    assert!(text.trim_end().ends_with("</html>"));
    assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
}

/// Built from a DUT file: every input is listed with its SHA-256 (checked
/// against an independent streaming of the same bytes), points, τ0 and gaps;
/// the stability values (drift kept: `drift = "none"`) equal a direct OADEV
/// of the record.
#[test]
fn report_from_a_dut_file() {
    let dir = tempfile::tempdir().unwrap();
    // A white-FM-like phase walk, values in ns, with one gap.
    let mut x = 0.0f64;
    let mut s = String::from("# phase, ns\n");
    let mut state = 12345u64;
    for i in 0..4000 {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let u = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
        x += u;
        if i == 1000 {
            s.push_str("NaN\n");
        } else {
            s.push_str(&format!("{x}\n"));
        }
    }
    fs::write(dir.path().join("rec.csv"), &s).unwrap();
    fs::write(dir.path().join("lf.csv"), "1,-90\n10,-120\n").unwrap();
    let dut_text = "[device]\nname = \"<script>alert(1)</script>\"\ncarrier = \"10MHz\"\n\
        [[record]]\nname = \"rec\"\npath = \"rec.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\ndrift = \"none\"\n\
        [[phase_noise]]\npath = \"lf.csv\"\n\
        [[jitter]]\nband = \"1:10\"\nlimit = \"1ps\"\n\
        [wander]\nmasks = [\"g8262-opt1\"]\n\
        [holdover]\nbudget = \"1.5us\"\nspans = [\"8h\", \"24h\"]\npaths = 200\n";
    let dut_path = dir.path().join("dut.toml");
    fs::write(&dut_path, dut_text).unwrap();
    let dut = Dut::read(&dut_path).unwrap();
    let rep = from_dut(&dut, &BuildOptions::default()).unwrap();
    assert_eq!(rep.inputs.len(), 2);
    let rec = &rep.inputs[0];
    assert_eq!(rec.points, Some(4000));
    assert_eq!(rec.gaps, Some(1));
    assert_eq!(rec.tau0, Some(1.0));
    let bytes = fs::read(dir.path().join("rec.csv")).unwrap();
    assert_eq!(
        rec.sha256,
        tauwise::report::provenance::sha256_bytes(&bytes)
    );
    // One verdict per jitter limit, per mask (g8262-opt1 has an MTIE and a
    // TDEV mask) and per holdover span.
    assert_eq!(rep.verdicts.len(), 1 + 2 + 2);
    // Stability: OADEV at m = 1 equals the direct SP 1065 formula on the record.
    let Part::Done(st) = &rep.stability else {
        panic!("stability missing")
    };
    let st = &st[0];
    let xs: Vec<f64> = s
        .lines()
        .skip(1)
        .map(|l| l.parse::<f64>().unwrap() * 1e-9)
        .collect();
    let terms: Vec<f64> = (0..xs.len() - 2)
        .map(|i| xs[i + 2] - 2.0 * xs[i + 1] + xs[i])
        .filter(|d| d.is_finite())
        .collect();
    let direct = (terms.iter().map(|d| d * d).sum::<f64>() / (2.0 * terms.len() as f64)).sqrt();
    let row = st
        .rows
        .iter()
        .find(|r| r.estimator == tauwise::deviation::Estimator::Oadev && r.m == 1)
        .unwrap();
    assert!(
        (row.dev - direct).abs() < 1e-9 * direct,
        "{} vs {direct}",
        row.dev
    );
    assert_eq!(row.terms, terms.len());
    let html = render_html(&rep).unwrap();
    check_document(&html);
    assert!(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    assert!(!html.contains("<script>alert"));
}

fn tauwise(args: &[&std::ffi::OsStr]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_tauwise"))
        .args(args)
        .output()
        .unwrap()
}

fn write_record(path: &std::path::Path, n: usize) {
    let mut s = String::new();
    let mut x = 0.0f64;
    for i in 0..n {
        x += ((i * 7919) % 101) as f64 / 100.0 - 0.5;
        s.push_str(&format!("{x}\n"));
    }
    fs::write(path, s).unwrap();
}

/// End to end: the command writes the report and the chart files; a bad DUT
/// file is an error naming the key, exit status 1, and nothing is written.
#[test]
fn cli_report_end_to_end() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write_record(&d.join("rec.csv"), 3000);
    fs::write(
        d.join("unit.toml"),
        "[device]\nname = \"unit & co\"\n[[record]]\npath = \"rec.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\n[wander]\nmasks = [\"g8262-opt1\"]\n",
    )
    .unwrap();
    let charts = d.join("charts");
    fs::create_dir(&charts).unwrap();
    let out = d.join("r.html");
    let o = tauwise(&[
        "report".as_ref(),
        d.join("unit.toml").as_os_str(),
        "-o".as_ref(),
        out.as_os_str(),
        "--charts".as_ref(),
        charts.as_os_str(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let html = fs::read_to_string(&out).unwrap();
    check_document(&html);
    assert!(html.contains("unit &amp; co"));
    for f in [
        "stability.png",
        "stability-time.png",
        "wander-mtie.png",
        "wander-tdev.png",
    ] {
        let bytes = fs::read(charts.join(f)).unwrap_or_else(|_| panic!("{f} written"));
        let mut r = png::Decoder::new(&bytes[..]).read_info().unwrap();
        let mut buf = vec![0; r.output_buffer_size()];
        let info = r.next_frame(&mut buf).unwrap();
        assert_eq!((info.width, info.height), (960, 600));
    }

    // Quick form.
    let quick = d.join("q.html");
    let o = tauwise(&[
        "report".as_ref(),
        d.join("rec.csv").as_os_str(),
        "--tau0".as_ref(),
        "1s".as_ref(),
        "--units".as_ref(),
        "ns".as_ref(),
        "-o".as_ref(),
        quick.as_os_str(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    check_document(&fs::read_to_string(&quick).unwrap());

    // Bad DUT file: unknown key.
    fs::write(d.join("bad.toml"), "[device]\nname = \"x\"\nnmae = \"y\"\n").unwrap();
    let bad_out = d.join("bad.html");
    let o = tauwise(&[
        "report".as_ref(),
        d.join("bad.toml").as_os_str(),
        "-o".as_ref(),
        bad_out.as_os_str(),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("bad.toml:3") && err.contains("nmae"), "{err}");
    assert!(!bad_out.exists());
    // Quick form with --lf but no carrier.
    let o = tauwise(&[
        "report".as_ref(),
        d.join("rec.csv").as_os_str(),
        "--tau0".as_ref(),
        "1".as_ref(),
        "--lf".as_ref(),
        "x.csv".as_ref(),
    ]);
    // A bad command line: exit status 2 (issue 14).
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--carrier"));
}

/// A real browser renders the report: headless Chromium's DOM dump holds
/// every section and no script, and its screenshot is not blank. `.ci/run`
/// installs Debian's chromium when it is missing and sets
/// TAUWISE_REQUIRE_BROWSER=1, which turns a missing browser into a failure;
/// elsewhere the check runs whenever a Chromium is on PATH.
#[test]
fn a_real_browser_renders_every_section() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    write(&full_report("<script>alert(1)</script>"), &page).unwrap();
    let Some(browser) = common::browser(&dir.path().join("profile")) else {
        return;
    };
    let dom = browser.dom(&page);
    let doc = Html::parse_document(&dom);
    for (id, _) in SECTION_IDS {
        let sel = Selector::parse(&format!("section#{id}")).unwrap();
        assert_eq!(
            doc.select(&sel).count(),
            1,
            "browser DOM lacks section {id}"
        );
    }
    let script = Selector::parse("script").unwrap();
    assert_eq!(
        doc.select(&script).count(),
        0,
        "the escaped name did not become a script"
    );
    browser.assert_screenshot_not_blank(&page, &dir.path().join("shot.png"));
}

/// The report's verdicts equal those of the individual commands on the same
/// inputs (`tauwise wander`, `tauwise holdover`, `tauwise jitter`, JSON).
/// The record has a constant frequency offset of 2e-10, so its MTIE is the
/// ramp 2e-10·τ (analytic, docs/checks.md §F): above G.8262 option 1 near 800 s,
/// below G.811 there (mask values from memory).
#[test]
fn report_verdicts_equal_the_commands() {
    use tauwise::simulate::{simulate_phase, SimSpec};
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut m = PowerLaw::zero(0.5);
    m.set(0, 1e-24);
    let mut spec = SimSpec::new(m, 1.0, 8000, 5);
    spec.freq_offset = 2e-10;
    let x = simulate_phase(&spec).unwrap();
    let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
    fs::write(d.join("rec.csv"), text).unwrap();
    // A flat −155 dBc/Hz floor over 12 kHz–20 MHz on 10 MHz is 1.789 ps rms (issue 4, analytic).
    fs::write(d.join("lf.csv"), "1000,-155\n30000000,-155\n").unwrap();
    let dut_text = "[device]\nname = \"unit\"\ncarrier = \"10MHz\"\n\
        [[record]]\npath = \"rec.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\n\
        [[phase_noise]]\npath = \"lf.csv\"\n\
        [[jitter]]\nband = \"12k:20M\"\nlimit = \"1ps\"\n\
        [[jitter]]\nband = \"12k:20M\"\nlimit = \"2ps\"\n\
        [wander]\nmasks = [\"g8262-opt1\", \"g811\"]\n\
        [holdover]\nbudget = \"1us\"\nspans = [\"1h\", \"8h\"]\npaths = 200\nseed = 4\n";
    fs::write(d.join("unit.toml"), dut_text).unwrap();
    let rep = from_dut(
        &Dut::read(&d.join("unit.toml")).unwrap(),
        &BuildOptions::default(),
    )
    .unwrap();
    let run = |args: &[&str]| -> serde_json::Value {
        let o = std::process::Command::new(env!("CARGO_BIN_EXE_tauwise"))
            .current_dir(d)
            .args(args)
            .output()
            .unwrap();
        assert!(
            o.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        serde_json::from_slice(&o.stdout).unwrap()
    };
    let of_kind = |k: VerdictKind| {
        rep.verdicts
            .iter()
            .filter(|v| v.kind == k)
            .map(|v| v.judgement.verdict)
            .collect::<Vec<_>>()
    };

    let w = run(&[
        "wander",
        "rec.csv",
        "--tau0",
        "1s",
        "--units",
        "ns",
        "--mask",
        "g8262-opt1",
        "--mask",
        "g811",
        "--format",
        "json",
    ]);
    let word = |v: &serde_json::Value| -> Verdict { serde_json::from_value(v.clone()).unwrap() };
    let cmd: Vec<Verdict> = w["masks"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| word(&m["verdict"]))
        .collect();
    assert_eq!(of_kind(VerdictKind::Mask), cmd);
    assert!(
        cmd.contains(&Verdict::Exceeds) && cmd.contains(&Verdict::Meets),
        "{cmd:?}"
    );

    let mut cmd = Vec::new();
    for span in ["1h", "8h"] {
        let h = run(&[
            "holdover", "rec.csv", "--tau0", "1s", "--units", "ns", "--span", span, "--budget",
            "1us", "--paths", "200", "--seed", "4", "--format", "json",
        ]);
        cmd.push(word(&h["verdict"]));
    }
    assert_eq!(of_kind(VerdictKind::Holdover), cmd);

    let j = run(&[
        "jitter",
        "lf.csv",
        "--carrier",
        "10MHz",
        "--band",
        "12k:20M",
        "--format",
        "json",
    ]);
    let rms = j["bands"][0]["rms_s"].as_f64().unwrap();
    assert!((rms - 1.789e-12).abs() < 1e-15, "{rms}");
    assert_eq!(
        of_kind(VerdictKind::Jitter),
        vec![
            if rms <= 1e-12 {
                Verdict::Meets
            } else {
                Verdict::Exceeds
            },
            if rms <= 2e-12 {
                Verdict::Meets
            } else {
                Verdict::Exceeds
            }
        ]
    );
    // `tauwise jitter --limit` gives the report's verdicts too.
    let j = run(&[
        "jitter",
        "lf.csv",
        "--carrier",
        "10MHz",
        "--band",
        "12k:20M",
        "--band",
        "12k:20M",
        "--limit",
        "1ps",
        "--limit",
        "2ps",
        "--format",
        "json",
    ]);
    let cmd: Vec<Verdict> = j["bands"]
        .as_array()
        .unwrap()
        .iter()
        .map(|b| word(&b["verdict"]))
        .collect();
    assert_eq!(of_kind(VerdictKind::Jitter), cmd);
    let Part::Done(pn) = &rep.phase_noise else {
        panic!("phase noise missing")
    };
    assert_eq!(pn.bands[0].rms_s, rms);
}

/// A DUT's limit file (`[device] limit_files`): the report's verdict lines
/// of kind `limit` equal `stability --limit-file` and `jitter --limit-file`
/// on the same inputs (verdict, coverage, ratio). WFM with h0 = 1e-24 has
/// σ_y(τ) = √(h0/(2τ)) = 7.07e-13·τ^−1/2 (IEEE Std 1139 / NIST SP 1065,
/// analytic): above a limit falling from 1e-12 at 1 s to 5e-14 at 100 s
/// near 100 s (seeded Monte Carlo record); a flat −155 dBc/Hz table meets a
/// −150 dBc/Hz floor with 5 dB (analytic).
#[test]
fn report_limit_verdicts_equal_the_commands() {
    use tauwise::simulate::{simulate_phase, SimSpec};
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut m = PowerLaw::zero(0.5);
    m.set(0, 1e-24);
    let x = simulate_phase(&SimSpec::new(m, 1.0, 4000, 9)).unwrap();
    let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
    fs::write(d.join("rec.csv"), text).unwrap();
    fs::write(d.join("lf.csv"), "1000,-155\n30000000,-155\n").unwrap();
    fs::write(
        d.join("lim.toml"),
        "name = \"lab\"\n[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"1e-12\"], [\"100s\", \"5e-14\"]]\n\
         [[limit]]\nmetric = \"lf\"\npoints = [[\"1kHz\", \"-150dBc/Hz\"], [\"10MHz\", \"-150dBc/Hz\"]]\n",
    )
    .unwrap();
    fs::write(
        d.join("unit.toml"),
        "[device]\nname = \"unit\"\ncarrier = \"10MHz\"\nlimit_files = [\"lim.toml\"]\n\
         [[record]]\npath = \"rec.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\ndrift = \"none\"\n\
         [[phase_noise]]\npath = \"lf.csv\"\n",
    )
    .unwrap();
    let rep = from_dut(
        &Dut::read(&d.join("unit.toml")).unwrap(),
        &BuildOptions::default(),
    )
    .unwrap();
    let lines: Vec<&VerdictLine> = rep
        .verdicts
        .iter()
        .filter(|v| matches!(v.kind, VerdictKind::Limit | VerdictKind::LimitPower))
        .collect();
    assert_eq!(lines.len(), 2, "{:?}", rep.verdicts);
    let run = |args: &[&str]| -> serde_json::Value {
        let o = std::process::Command::new(env!("CARGO_BIN_EXE_tauwise"))
            .current_dir(d)
            .args(args)
            .output()
            .unwrap();
        assert!(
            o.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        serde_json::from_slice(&o.stdout).unwrap()
    };
    let s = run(&[
        "stability",
        "rec.csv",
        "--tau0",
        "1s",
        "--units",
        "ns",
        "--limit-file",
        "lim.toml",
        "--format",
        "json",
    ]);
    let j = run(&[
        "jitter",
        "lf.csv",
        "--carrier",
        "10MHz",
        "--limit-file",
        "lim.toml",
        "--format",
        "json",
    ]);
    for (line, cmd) in lines.iter().zip([&s["limits"][0], &j["limits"][0]]) {
        let v: Verdict = serde_json::from_value(cmd["verdict"].clone()).unwrap();
        let c: Coverage = serde_json::from_value(cmd["coverage"].clone()).unwrap();
        assert_eq!(line.judgement.verdict, v, "{}", line.item);
        assert_eq!(line.judgement.coverage, c, "{}", line.item);
        // The report analyses the record as prepared (its pipeline, here
        // with nothing to remove): equal to the last bits of rounding.
        let (a, b) = (line.ratio.unwrap(), cmd["worst_ratio"].as_f64().unwrap());
        assert!((a - b).abs() <= 1e-12 * b, "{}: {a} vs {b}", line.item);
    }
    assert_eq!(
        lines[0].judgement.verdict,
        Verdict::Exceeds,
        "{:?}",
        lines[0]
    );
    assert_eq!(lines[0].item, "lab ADEV 1.00 s–100 s");
    assert_eq!(lines[1].judgement.verdict, Verdict::Meets);
    assert!((lines[1].margin_db().unwrap() - 5.0).abs() < 1e-9);
    // The HTML's verdict table shows both, with what they checked.
    let html = tauwise::report::render_html(&rep).unwrap();
    assert!(
        html.contains("lab ADEV 1.00 s–100 s") && html.contains("lab L(f)"),
        "limit rows missing"
    );
    assert!(html.contains("checked"), "what was checked is missing");
}

/// Issue 17 point 5: a DUT band with `periods = 10` gives the period,
/// cycle-to-cycle and 10-period jitter of `jitter --periods 10` (the same
/// library function), and a spur injected into the table (a +30 dB point on
/// a flat −150 dBc/Hz floor) is found and named in the jitter section, as
/// `jitter` finds it (analytic trace).
#[test]
fn report_jitter_period_and_found_spurs() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut table = String::new();
    for k in 0..=40 {
        let f = 1e3 * 10f64.powf(k as f64 / 10.0);
        let l = if k == 20 { -120.0 } else { -150.0 };
        table.push_str(&format!("{f},{l}\n"));
    }
    fs::write(d.join("lf.csv"), &table).unwrap();
    fs::write(
        d.join("unit.toml"),
        "[device]\nname = \"unit\"\ncarrier = \"10MHz\"\n\
         [[phase_noise]]\npath = \"lf.csv\"\n\
         [[jitter]]\nband = \"12k:5M\"\nperiods = 10\n",
    )
    .unwrap();
    let rep = from_dut(
        &Dut::read(&d.join("unit.toml")).unwrap(),
        &BuildOptions::default(),
    )
    .unwrap();
    let Part::Done(s) = &rep.phase_noise else {
        panic!("no phase-noise section");
    };
    let p = s.bands[0].period.clone().expect("period jitter");
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_tauwise"))
        .current_dir(d)
        .args([
            "jitter",
            "lf.csv",
            "--carrier",
            "10MHz",
            "--band",
            "12k:5M",
            "--periods",
            "10",
            "--format",
            "json",
        ])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let b = &j["bands"][0];
    assert_eq!(b["period_rms_s"].as_f64(), Some(p.period_rms_s));
    assert_eq!(b["c2c_rms_s"].as_f64(), Some(p.c2c_rms_s));
    assert_eq!(b["n_period_rms_s"].as_f64(), p.n_period_rms_s);
    let spur = j["found_spurs"][0]["offset_hz"]
        .as_f64()
        .expect("jitter finds the spur");
    assert!((spur - 1e5).abs() < 1.0, "{spur}");
    assert!(
        s.notes
            .iter()
            .any(|n| n.starts_with("Spur found in the trace") && n.contains("100.0 kHz")),
        "{:?}",
        s.notes
    );
    assert!(
        s.notes.iter().any(|n| n.contains("over 10 periods")),
        "{:?}",
        s.notes
    );
}

/// Issue 18: a row whose value carries an approximation (TheoH's ThêoBR
/// part on a record of 61,530 points or more, [`Approximation`]) shows `≈`
/// beside its deviation, and the table one note saying what it means; the
/// rows without one, and a report with none, show neither.
#[test]
fn approximated_rows_are_marked_with_a_note() {
    use tauwise::deviation::{Approximation, Estimator};
    let note = Approximation::SubsetBiasRatio.note();
    let plain = render_html(&full_report("ocxo-a")).unwrap();
    assert!(!plain.contains('≈') && !plain.contains("approximated"));
    let mut r = full_report("ocxo-a");
    let Part::Done(sections) = &mut r.stability else {
        panic!("stability part")
    };
    let first = sections[0].rows[0].clone();
    for m in [20_000usize, 40_000] {
        sections[0].rows.push(StabilityRow {
            estimator: Estimator::Theoh,
            tau: 0.75 * m as f64,
            m,
            dev: 2.5e-13,
            approximation: Estimator::Theoh.approximation(100_000, m),
            ..first.clone()
        });
    }
    let html = render_html(&r).unwrap();
    let doc = check_document(&html);
    let rows = Selector::parse("section#stability table tr").unwrap();
    let marked: Vec<String> = doc
        .select(&rows)
        .map(|tr| tr.text().collect::<String>())
        .filter(|t| t.contains('≈'))
        .collect();
    assert_eq!(marked.len(), 2, "{marked:?}");
    assert!(marked
        .iter()
        .all(|t| t.contains("theoh") && t.contains("2.500e-13 ≈")));
    let notes = Selector::parse("section#stability p.note").unwrap();
    let shown: Vec<String> = doc
        .select(&notes)
        .map(|p| p.text().collect::<String>())
        .filter(|t| t.starts_with('≈'))
        .collect();
    assert_eq!(shown, [note]);
}
