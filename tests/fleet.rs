//! The comparison of several devices (`tauwise report A.toml B.toml …`):
//! the verdict matrix equals the single-device reports and the individual
//! commands on the same inputs; the HTML parses, holds every section (the
//! comparison's and each device's), fetches nothing and escapes a device
//! named `<script>alert(1)</script>`; a real browser renders it; the JSON
//! matrix has a row per device and a cell per check.
//!
//! The records are seeded white-FM noise (Kasdin & Walter synthesis); one
//! has a constant frequency offset of 2e-10, whose MTIE is the ramp 2e-10·τ
//! (analytic, docs/checks.md §F) — above the G.8262 option 1 MTIE mask near
//! 800 s (mask values from memory), so the matrix holds both verdicts.

mod common;

use common::{stderr, tauwise};
use scraper::{Html, Selector};
use std::fs;
use std::path::{Path, PathBuf};
use tauwise::io::dut::Dut;
use tauwise::model::PowerLaw;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::fleet::FLEET_SECTION_IDS;
use tauwise::report::SECTION_IDS;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::verdict::Verdict;

const EVIL: &str = "<script>alert(1)</script>";

/// Three DUT files in `d`: `good` (small WFM), `offset` (WFM with a
/// 2e-10 frequency offset) and one named `<script>alert(1)</script>` with
/// no jitter limit (its jitter cell is "—").
fn three_duts(d: &Path) -> Vec<PathBuf> {
    // A flat −155 dBc/Hz floor over 12 kHz–20 MHz on 10 MHz is 1.789 ps rms
    // (issue 4, analytic): exceeds 1 ps, meets 2 ps.
    fs::write(d.join("lf.csv"), "1000,-155\n30000000,-155\n").unwrap();
    let mut out = Vec::new();
    for (k, (name, h0, offset, seed, jitter)) in [
        (
            "good",
            1e-25,
            0.0,
            5u64,
            "[[jitter]]\nband = \"12k:20M\"\nlimit = \"2ps\"\n",
        ),
        (
            "offset",
            1e-24,
            2e-10,
            6,
            "[[jitter]]\nband = \"12k:20M\"\nlimit = \"1ps\"\n",
        ),
        ("evil", 4e-25, 0.0, 7, ""),
    ]
    .into_iter()
    .enumerate()
    {
        let mut m = PowerLaw::zero(0.5);
        m.set(0, h0);
        let mut spec = SimSpec::new(m, 1.0, 8000, seed);
        spec.freq_offset = offset;
        let x = simulate_phase(&spec).unwrap();
        let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
        fs::write(d.join(format!("{name}.csv")), text).unwrap();
        let device = if k == 2 {
            EVIL.to_string()
        } else {
            name.to_string()
        };
        let dut = format!(
            "[device]\nname = \"{device}\"\ncarrier = \"10MHz\"\n\
             [[record]]\npath = \"{name}.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\n\
             [[phase_noise]]\npath = \"lf.csv\"\n{jitter}\
             [wander]\nmasks = [\"g8262-opt1\"]\n\
             [holdover]\nbudget = \"1us\"\nspans = [\"1h\", \"8h\"]\npaths = 200\nseed = 4\n"
        );
        let p = d.join(format!("{name}.toml"));
        fs::write(&p, dut).unwrap();
        out.push(p);
    }
    out
}

fn run_ok(d: &Path, args: &[&std::ffi::OsStr]) -> Vec<u8> {
    let o = tauwise().current_dir(d).args(args).output().unwrap();
    assert!(o.status.success(), "{args:?}: {}", stderr(&o));
    o.stdout
}

fn os(s: &str) -> &std::ffi::OsStr {
    s.as_ref()
}

/// The JSON matrix: a row per device, a cell per check in every row; each
/// cell's verdict is the device's single report's verdict for that check
/// and the individual commands' (`wander`, `holdover`, `jitter`, JSON).
#[test]
fn matrix_equals_the_single_reports_and_the_commands() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let duts = three_duts(d);
    let mut args: Vec<&std::ffi::OsStr> = vec![os("report")];
    args.extend(duts.iter().map(|p| p.as_os_str()));
    args.extend([os("--format"), os("json")]);
    let doc: serde_json::Value = serde_json::from_slice(&run_ok(d, &args)).unwrap();
    assert_eq!(doc["tool"], "tauwise");
    assert_eq!(doc["input"]["data"], "dut-files");
    let columns = doc["columns"].as_array().unwrap();
    // 2 holdover spans, 2 masks (g8262-opt1 MTIE and TDEV), 2 jitter limits.
    assert_eq!(columns.len(), 6, "{columns:?}");
    let devices = doc["devices"].as_array().unwrap();
    assert_eq!(devices.len(), 3);
    let ranking: Vec<&str> = doc["ranking"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    assert_eq!(ranking.len(), 3);
    for (row, path) in devices.iter().zip(&duts) {
        let cells = row["checks"].as_array().unwrap();
        assert_eq!(cells.len(), columns.len(), "a cell per check");
        let single = from_dut(&Dut::read(path).unwrap(), &BuildOptions::default()).unwrap();
        assert_eq!(row["name"], single.device.as_str());
        for (cell, col) in cells.iter().zip(columns) {
            assert_eq!(cell["item"], col["item"]);
            let line = single
                .verdicts
                .iter()
                .find(|l| l.item == col["item"] && l.criterion == col["criterion"]);
            match line {
                Some(l) => {
                    let v: Verdict = serde_json::from_value(cell["verdict"].clone()).unwrap();
                    assert_eq!(v, l.judgement.verdict, "{}: {}", single.device, l.item);
                    // The margin says the same as the verdict.
                    if let Some(m) = cell["margin_db"].as_f64() {
                        assert_eq!(
                            m < 0.0,
                            v == Verdict::Exceeds,
                            "{}: {}",
                            single.device,
                            l.item
                        );
                    }
                }
                None => {
                    assert!(cell["verdict"].is_null(), "absent check: null verdict");
                    // Each device has one jitter limit of its own (or none).
                    assert_eq!(col["kind"], "jitter", "{}", single.device);
                }
            }
        }
    }
    let cell_of = |dev: usize, item: &str| -> Verdict {
        let i = columns.iter().position(|c| c["item"] == item).unwrap();
        serde_json::from_value(devices[dev]["checks"][i]["verdict"].clone()).unwrap()
    };
    // Against the commands, device `offset` (the second).
    let w: serde_json::Value = serde_json::from_slice(&run_ok(
        d,
        &[
            "wander",
            "offset.csv",
            "--tau0",
            "1s",
            "--units",
            "ns",
            "--mask",
            "g8262-opt1",
            "--format",
            "json",
        ]
        .map(os),
    ))
    .unwrap();
    for m in w["masks"].as_array().unwrap() {
        let item = format!(
            "{} ({})",
            m["name"].as_str().unwrap(),
            m["metric"].as_str().unwrap().to_uppercase()
        );
        let v: Verdict = serde_json::from_value(m["verdict"].clone()).unwrap();
        assert_eq!(cell_of(1, &item), v, "{item}");
    }
    // The offset ramp exceeds the MTIE mask (analytic, module notes).
    assert_eq!(cell_of(1, "g8262-opt1 (MTIE)"), Verdict::Exceeds);
    for (span, item) in [("1h", "1.00 h span"), ("8h", "8.00 h span")] {
        let h: serde_json::Value = serde_json::from_slice(&run_ok(
            d,
            &[
                "holdover",
                "offset.csv",
                "--tau0",
                "1s",
                "--units",
                "ns",
                "--span",
                span,
                "--budget",
                "1us",
                "--paths",
                "200",
                "--seed",
                "4",
                "--format",
                "json",
            ]
            .map(os),
        ))
        .unwrap();
        let v: Verdict = serde_json::from_value(h["verdict"].clone()).unwrap();
        assert_eq!(cell_of(1, item), v, "{item}");
    }
    let j: serde_json::Value = serde_json::from_slice(&run_ok(
        d,
        &[
            "jitter",
            "lf.csv",
            "--carrier",
            "10MHz",
            "--band",
            "12k:20M",
            "--limit",
            "1ps",
            "--format",
            "json",
        ]
        .map(os),
    ))
    .unwrap();
    let v: Verdict = serde_json::from_value(j["bands"][0]["verdict"].clone()).unwrap();
    let jit = columns
        .iter()
        .position(|c| {
            c["kind"] == "jitter" && c["criterion"].as_str().unwrap().contains("1.000 ps")
        })
        .unwrap();
    let cell: Verdict =
        serde_json::from_value(devices[1]["checks"][jit]["verdict"].clone()).unwrap();
    assert_eq!(cell, v);
    assert_eq!(v, Verdict::Exceeds, "1.789 ps > 1 ps (analytic)");
}

fn check_fleet_html(html: &str, devices: usize) -> Html {
    let doc = Html::parse_document(html);
    for (id, title) in FLEET_SECTION_IDS {
        let sel = Selector::parse(&format!("section#{id} > h2")).unwrap();
        let h2: Vec<_> = doc.select(&sel).collect();
        assert_eq!(h2.len(), 1, "section {id}");
        assert_eq!(h2[0].text().collect::<String>(), title);
    }
    for i in 1..=devices {
        for (id, title) in SECTION_IDS {
            let sel =
                Selector::parse(&format!("article#d{i}-device section#d{i}-{id} > h2")).unwrap();
            let h2: Vec<_> = doc.select(&sel).collect();
            assert_eq!(h2.len(), 1, "device {i} section {id}");
            assert_eq!(h2[0].text().collect::<String>(), title);
        }
    }
    // Every in-page link has its target.
    let a = Selector::parse("a[href]").unwrap();
    for link in doc.select(&a) {
        let href = link.value().attr("href").unwrap();
        let id = href.strip_prefix('#').expect("only in-page links");
        let sel = Selector::parse(&format!("[id=\"{id}\"]")).unwrap();
        assert_eq!(doc.select(&sel).count(), 1, "link target {href}");
    }
    assert!(
        !html.contains("http://") && !html.contains("https://"),
        "no URL of any kind"
    );
    assert!(!html.to_ascii_lowercase().contains("<script"), "no script");
    assert!(!html.contains("<link") && !html.contains("@import") && !html.contains("url("));
    assert!(!html.contains("<img") && !html.contains("<iframe"));
    // The answer comes first, then the matrix with its caution.
    let first = Selector::parse("main > section").unwrap();
    assert_eq!(
        doc.select(&first).next().unwrap().value().attr("id"),
        Some("answer")
    );
    let caution = Selector::parse("section#matrix p.caution").unwrap();
    assert!(doc
        .select(&caution)
        .any(|p| p.text().collect::<String>() == tauwise::DECISION_CAUTION));
    doc
}

/// The HTML comparison: every section, no outside resource, the evil name
/// escaped, one matrix row per device, "—" where a device has no such
/// check, five overlaid charts; then a real browser renders it.
#[test]
fn fleet_html_holds_every_section_and_a_browser_renders_it() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let duts = three_duts(d);
    let out = d.join("fleet.html");
    let charts = d.join("charts");
    fs::create_dir(&charts).unwrap();
    let mut args: Vec<&std::ffi::OsStr> = vec![os("report")];
    args.extend(duts.iter().map(|p| p.as_os_str()));
    args.extend([
        os("-o"),
        out.as_os_str(),
        os("--charts"),
        charts.as_os_str(),
    ]);
    run_ok(d, &args);
    let html = fs::read_to_string(&out).unwrap();
    let doc = check_fleet_html(&html, 3);
    assert!(html.contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
    let rows = Selector::parse("table.matrix tbody tr").unwrap();
    assert_eq!(doc.select(&rows).count(), 3);
    let absent = Selector::parse("table.matrix td.absent-cell").unwrap();
    let dashes: Vec<String> = doc.select(&absent).map(|c| c.text().collect()).collect();
    // The first two each lack the other's jitter limit, the third both.
    assert_eq!(dashes, ["—"; 4]);
    let figs = Selector::parse("section#side-by-side figure svg").unwrap();
    assert_eq!(doc.select(&figs).count(), 5);
    let summary = Selector::parse("section#summary table tbody tr").unwrap();
    assert_eq!(doc.select(&summary).count(), 3);
    for f in [
        "fleet-stability.png",
        "fleet-phase-noise.png",
        "fleet-mtie.png",
        "fleet-tdev.png",
        "fleet-holdover.png",
    ] {
        assert!(charts.join(f).is_file(), "{f}");
    }

    let Some(browser) = common::browser(&d.join("profile")) else {
        return;
    };
    let dom = browser.dom(&out);
    let bdoc = Html::parse_document(&dom);
    for (id, _) in FLEET_SECTION_IDS {
        let sel = Selector::parse(&format!("section#{id}")).unwrap();
        assert_eq!(bdoc.select(&sel).count(), 1, "browser DOM lacks {id}");
    }
    for i in 1..=3 {
        let sel = Selector::parse(&format!("article#d{i}-device section")).unwrap();
        assert_eq!(bdoc.select(&sel).count(), SECTION_IDS.len(), "device {i}");
    }
    let script = Selector::parse("script").unwrap();
    assert_eq!(bdoc.select(&script).count(), 0, "the evil name stayed text");
    browser.assert_screenshot_not_blank(&out, &d.join("shot.png"));
}

/// Bad command lines and bad sets of DUT files: several inputs must all
/// be DUT files (exit 2), the quick-form options do not go with them
/// (exit 2), two DUT files naming one device are refused (exit 1); nothing
/// is written.
#[test]
fn several_inputs_are_dut_files_of_distinct_devices() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    fs::write(d.join("r.csv"), "1\n2\n3\n").unwrap();
    let one = "[device]\nname = \"same\"\n[[record]]\npath = \"r.csv\"\ntau0 = \"1s\"\n";
    fs::write(d.join("a.toml"), one).unwrap();
    fs::write(d.join("b.toml"), one).unwrap();
    let out = d.join("f.html");
    let run = |args: &[&str]| tauwise().current_dir(d).args(args).output().unwrap();
    let o = run(&["report", "a.toml", "r.csv", "-o", "f.html"]);
    common::assert_error(&o, 2, &["r.csv", ".toml"], &out);
    let o = run(&["report", "a.toml", "b.toml", "--tau0", "1s", "-o", "f.html"]);
    common::assert_error(&o, 2, &["--tau0"], &out);
    let o = run(&["report", "a.toml", "b.toml", "-o", "f.html"]);
    common::assert_error(&o, 1, &["a.toml", "b.toml", "same"], &out);
    let o = run(&["report", "a.toml", "b.toml", "-o", "a.toml"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
}

/// A limit file in one device's DUT file gives the matrix a `limit` column
/// per limit: that device's cell equals `stability --limit-file` (verdict,
/// ratio), the other device's is "—" (null). WFM h0 = 1e-24: σ_y(1 s) =
/// 7.07e-13 (IEEE Std 1139, analytic; seeded Monte Carlo record) meets a
/// 2e-12 limit at 1 s.
#[test]
fn limit_columns_in_the_matrix() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut m = PowerLaw::zero(0.5);
    m.set(0, 1e-24);
    let x = simulate_phase(&SimSpec::new(m, 1.0, 4000, 11)).unwrap();
    let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
    fs::write(d.join("rec.csv"), text).unwrap();
    fs::write(
        d.join("lim.toml"),
        "name = \"sheet\"\n[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"2e-12\"]]\n",
    )
    .unwrap();
    for (name, extra) in [("a", "limit_files = [\"lim.toml\"]\n"), ("b", "")] {
        fs::write(
            d.join(format!("{name}.toml")),
            format!(
                "[device]\nname = \"{name}\"\n{extra}[[record]]\npath = \"rec.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\ndrift = \"none\"\n"
            ),
        )
        .unwrap();
    }
    let out = run_ok(
        d,
        &[
            os("report"),
            os("a.toml"),
            os("b.toml"),
            os("--format"),
            os("json"),
        ],
    );
    let doc: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let cols = doc["columns"].as_array().unwrap();
    let k = cols
        .iter()
        .position(|c| c["kind"] == "limit")
        .expect("a limit column");
    assert_eq!(cols[k]["item"], "sheet ADEV at 1.00 s");
    let cell_a = &doc["devices"][0]["checks"][k];
    let cell_b = &doc["devices"][1]["checks"][k];
    assert!(cell_b["verdict"].is_null(), "{cell_b}");
    let s = run_ok(
        d,
        &[
            os("stability"),
            os("rec.csv"),
            os("--tau0"),
            os("1s"),
            os("--units"),
            os("ns"),
            os("--limit-file"),
            os("lim.toml"),
            os("--format"),
            os("json"),
        ],
    );
    let s: serde_json::Value = serde_json::from_slice(&s).unwrap();
    let l = &s["limits"][0];
    assert_eq!(cell_a["verdict"], l["verdict"]);
    assert_eq!(l["verdict"], "meets");
    assert_eq!(cell_a["coverage"], "full");
    assert_eq!(cell_a["ratio"], l["worst_ratio"]);
    let v: Verdict = serde_json::from_value(cell_a["verdict"].clone()).unwrap();
    assert_eq!(v, Verdict::Meets);
}

/// Issue 12: the column of a single-value limit (max|TE| over the record
/// of the built-in G.8272 PRTC class A limits: 100 ns, values from memory)
/// is headed by the check and its limit only; the whole criterion — the
/// limit file, its line and the file's note — is the header's tooltip and
/// is listed under the matrix, escaped. Seeded white-FM records (WFM h0 =
/// 1e-24, Kasdin & Walter synthesis).
#[test]
fn a_single_value_limit_has_a_short_column_header() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut args: Vec<std::ffi::OsString> = vec!["report".into()];
    for (name, seed) in [("p", 21u64), ("q", 22)] {
        let mut m = PowerLaw::zero(0.5);
        m.set(0, 1e-24);
        let x = simulate_phase(&SimSpec::new(m, 1.0, 3000, seed)).unwrap();
        let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
        fs::write(d.join(format!("{name}.csv")), text).unwrap();
        fs::write(
            d.join(format!("{name}.toml")),
            format!(
                "[device]\nname = \"{name}\"\n[[record]]\npath = \"{name}.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\n\
                 [wander]\nmasks = [\"g8272-prtc-a\"]\n"
            ),
        )
        .unwrap();
        args.push(format!("{name}.toml").into());
    }
    args.extend(["-o".into(), "fleet.html".into()]);
    let refs: Vec<&std::ffi::OsStr> = args.iter().map(|a| a.as_os_str()).collect();
    run_ok(d, &refs);
    let html = fs::read_to_string(d.join("fleet.html")).unwrap();
    let doc = Html::parse_document(&html);
    let th = Selector::parse("section#matrix table.matrix thead th").unwrap();
    let head = doc
        .select(&th)
        .find(|h| h.text().collect::<String>().contains("max|TE|"))
        .expect("a max|TE| column");
    let words: String = head.text().collect();
    assert!(words.contains("max|TE| ≤ 100.0 ns"), "{words}");
    assert!(
        !words.contains("memory") && !words.contains("line"),
        "{words}"
    );
    assert!(words.chars().count() < 80, "short: {words}");
    let title = head.value().attr("title").expect("the whole criterion");
    assert!(
        title.contains("recalled from memory") && title.contains("(line "),
        "{title}"
    );
    let li = Selector::parse("section#matrix li").unwrap();
    assert!(doc
        .select(&li)
        .any(|l| l.text().collect::<String>().ends_with(title)));
    // The other columns keep their criterion in the header.
    assert!(doc.select(&th).any(|h| h
        .text()
        .collect::<String>()
        .contains("below the mask at every τ")));
}
