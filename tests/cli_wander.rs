//! End-to-end: the `wander` binary, its JSON contract (issue 5), exit
//! statuses and bad-input errors.

mod common;
use common::{assert_error, stderr, tauwise, write};
use std::path::{Path, PathBuf};
use std::process::Output;

const Y0: f64 = 2e-8;
const N: usize = 2001;

/// A phase ramp x_i = y0·i·τ0, τ0 = 1 s, written in ns.
fn ramp_file(dir: &Path) -> PathBuf {
    let text: String = (0..N)
        .map(|i| format!("{}\n", Y0 * i as f64 * 1e9))
        .collect();
    write(dir, "ramp.txt", &text)
}

/// G.8262 option 1 MTIE (docs/checks.md §F, from memory): 40 ns on (0.1, 1];
/// 40·τ^0.1 ns on (1, 100]; 25.25·τ^0.2 ns on (100, 1000].
fn g8262_mtie(tau: f64) -> Option<f64> {
    if tau > 0.1 && tau <= 1.0 {
        Some(40e-9)
    } else if tau > 1.0 && tau <= 100.0 {
        Some(40e-9 * tau.powf(0.1))
    } else if tau > 100.0 && tau <= 1000.0 {
        Some(25.25e-9 * tau.powf(0.2))
    } else {
        None
    }
}

/// The default grid recomputed from its definition (τ0 = 1 s): m =
/// round(10^(k/10)) up to `max_m`, the record's longest τ `max_m` itself,
/// and m = ⌊b⌋, ⌊b⌋ + 1 at every mask breakpoint b ≤ max_m + 1.
fn grid(max_m: usize, breakpoints: &[f64]) -> Vec<f64> {
    let mut out: Vec<f64> = Vec::new();
    for k in 0.. {
        let m = 10f64.powf(k as f64 / 10.0).round();
        if m > max_m as f64 {
            break;
        }
        out.push(m);
    }
    out.push(max_m as f64);
    for &b in breakpoints {
        if b < max_m as f64 + 2.0 {
            for c in [b.floor(), b.floor() + 1.0] {
                if c >= 1.0 && c <= max_m as f64 {
                    out.push(c);
                }
            }
        }
    }
    out.sort_by(f64::total_cmp);
    out.dedup();
    out
}

fn run_ramp(extra: &[&str]) -> (Output, Option<serde_json::Value>) {
    let dir = tempfile::tempdir().unwrap();
    let f = ramp_file(dir.path());
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--units", "ns", "--mask", "g8262-opt1"])
        .args(extra)
        .output()
        .unwrap();
    let doc = serde_json::from_slice(&out.stdout).ok();
    (out, doc)
}

/// The JSON shape of issue 5 on a frequency-offset ramp, whose MTIE is
/// y0·τ (docs/checks.md §F, analytic): the verdict, worst ratio and violations
/// equal those computed here from the recalled G.8262 formulas.
#[test]
fn json_contract_on_a_ramp() {
    let (out, doc) = run_ramp(&["--format", "json"]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc = doc.expect("JSON on stdout");
    assert_eq!(doc["tool"], "tauwise");
    assert_eq!(doc["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(doc["input"]["data"], "phase");
    assert_eq!(doc["input"]["tau0"], 1.0);
    assert_eq!(doc["input"]["points"], N);
    assert_eq!(doc["input"]["gaps"], 0);

    // TIE of a ramp from zero (analytic): max = pk-pk = y0·(N−1)τ0,
    // rms = y0·sqrt(Σ i²/N).
    let span = (N - 1) as f64;
    let rel = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs();
    let tie = &doc["tie"];
    for key in ["max_abs", "pk_pk", "rms"] {
        assert!(tie[key].is_f64(), "tie lacks {key}");
    }
    assert!(rel(tie["max_abs"].as_f64().unwrap(), Y0 * span));
    assert!(rel(tie["pk_pk"].as_f64().unwrap(), Y0 * span));
    let sum_sq = span * (span + 1.0) * (2.0 * span + 1.0) / 6.0;
    assert!(rel(
        tie["rms"].as_f64().unwrap(),
        Y0 * (sum_sq / N as f64).sqrt()
    ));

    // MTIE over the whole record (ITU-T G.810: up to the observation
    // period, here (N − 1)·τ0), equal to y0·τ at every τ (analytic).
    let taus = grid(N - 1, &[0.1, 1.0, 100.0, 1000.0]);
    let mtie = doc["mtie"].as_array().unwrap();
    assert_eq!(mtie.len(), taus.len());
    for (p, &t) in mtie.iter().zip(&taus) {
        assert_eq!(p["tau"].as_f64().unwrap(), t);
        assert!(rel(p["dev"].as_f64().unwrap(), Y0 * t), "τ = {t}");
    }
    assert_eq!(mtie.last().unwrap()["tau"].as_f64().unwrap(), span);
    // TDEV to a third of the record; of a ramp it is zero (second
    // differences vanish, analytic): rounding only.
    let tdev = doc["tdev"].as_array().unwrap();
    let tdev_taus = grid((N - 1) / 3, &[0.1, 25.0, 100.0, 1000.0]);
    assert_eq!(tdev.len(), tdev_taus.len());
    for p in tdev {
        assert!(p["tau"].is_f64());
        assert!(p["dev"].as_f64().unwrap() < 1e-15);
    }

    let masks = doc["masks"].as_array().unwrap();
    assert_eq!(masks.len(), 2);
    for m in masks {
        for key in [
            "name",
            "source_note",
            "metric",
            "verdict",
            "worst_ratio",
            "worst_tau",
            "violations",
        ] {
            assert!(m.get(key).is_some(), "mask lacks '{key}'");
        }
        assert_eq!(m["name"], "g8262-opt1");
        assert!(m["source_note"].as_str().unwrap().contains(
            "values recalled from memory; check against the current edition of the Recommendation"
        ));
    }
    let mt = masks.iter().find(|m| m["metric"] == "mtie").unwrap();
    assert_eq!(mt["verdict"], "exceeds");
    // τ0 = 1 s cannot check the mask's τ from 0.1 s to 1 s: partial, said so.
    assert_eq!(mt["coverage"], "partial");
    assert!(mt["reason"].as_str().unwrap().contains("τ0"), "{mt}");
    assert_eq!(mt["mask_range"]["from"], 0.1);
    assert_eq!(mt["mask_range"]["to"], 1000.0);
    assert_eq!(mt["checked_range"]["from"], 1.0);
    assert_eq!(mt["checked_range"]["to"], 1000.0);
    // Worst ratio and violations from the formulas (docs/checks.md §F, from memory).
    let ratios: Vec<(f64, f64)> = taus
        .iter()
        .filter_map(|&t| g8262_mtie(t).map(|l| (t, Y0 * t / l)))
        .collect();
    let (wt, wr) = ratios
        .iter()
        .cloned()
        .fold((0.0, 0.0), |a, b| if b.1 > a.1 { b } else { a });
    assert!(rel(mt["worst_ratio"].as_f64().unwrap(), wr));
    assert_eq!(mt["worst_tau"].as_f64().unwrap(), wt);
    let want: Vec<f64> = ratios.iter().filter(|r| r.1 > 1.0).map(|r| r.0).collect();
    let got: Vec<f64> = mt["violations"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v["tau"].as_f64().unwrap())
        .collect();
    assert_eq!(got, want);
    // The first violation is just above τ* = 2^(1/0.9) s, where y0·τ meets
    // 40·τ^0.1 ns (analytic).
    assert!(want[0] > 2f64.powf(1.0 / 0.9) && want[0] < 3.5);

    // The TDEV of a ramp passes.
    let td = masks.iter().find(|m| m["metric"] == "tdev").unwrap();
    assert_eq!(td["verdict"], "meets");
    assert!(td["violations"].as_array().unwrap().is_empty());

    let caution = doc["caution"].as_str().unwrap();
    assert!(
        caution.contains("formally measured under the conditions"),
        "{caution}"
    );
    assert!(caution.contains("Engineering estimate"), "{caution}");
}

/// A failed mask is a result (exit 0); `--fail-on-violation` makes it 3,
/// and the output is still written.
#[test]
fn exit_status_of_a_failed_mask() {
    let (out, _) = run_ramp(&[]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("EXCEEDS"), "{text}");
    assert!(text.contains("values recalled from memory"), "{text}");
    assert!(
        text.contains("formally measured under the conditions"),
        "{text}"
    );
    assert!(text.contains("Engineering estimate"), "{text}");

    let (out, doc) = run_ramp(&["--fail-on-violation", "--format", "json"]);
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    assert!(doc.is_some());
}

/// A record within the masks passes, and `--fail-on-violation` leaves the
/// status at 0. Alternating 0, 1 ns: MTIE = 1 ns at every τ (analytic),
/// TDEV(τ0) = sqrt(4/6) ns (NIST SP 1065: TDEV² = ⟨(Δ²x)²⟩/6 at m = 1, with
/// second differences of ±2 ns)
/// — below G.811's 25 ns and 3 ns (docs/checks.md §F, from memory).
#[test]
fn passing_record_exits_zero() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..400).map(|i| format!("{}\n", i % 2)).collect();
    let f = write(dir.path(), "alt.txt", &text);
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--units", "ns", "--mask", "g811"])
        .args(["--fail-on-violation", "--format", "json"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for m in doc["masks"].as_array().unwrap() {
        assert_eq!(m["verdict"], "meets", "{m}");
    }
    let mtie = doc["mtie"].as_array().unwrap();
    assert!(mtie
        .iter()
        .all(|p| (p["dev"].as_f64().unwrap() - 1e-9).abs() < 1e-18));
    let td0 = doc["tdev"][0]["dev"].as_f64().unwrap();
    assert!((td0 - (4.0f64 / 6.0).sqrt() * 1e-9).abs() < 1e-15, "{td0}");
}

/// An unknown mask name is an error that lists the known ones; nothing is
/// written.
#[test]
fn unknown_mask_lists_the_known_ones() {
    let dir = tempfile::tempdir().unwrap();
    let f = ramp_file(dir.path());
    let o = dir.path().join("out.json");
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--mask", "g999", "--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_error(&out, 2, &["g999", "g811", "g8272-prtc-a", "g8262-opt1"], &o);
}

/// A limit file whose τ decreases is an error naming the file and line;
/// nothing is written.
#[test]
fn mask_file_with_decreasing_tau() {
    let dir = tempfile::tempdir().unwrap();
    let f = ramp_file(dir.path());
    let mask = write(
        dir.path(),
        "lab.toml",
        "name = \"lab\"\n[[limit]]\nmetric = \"mtie\"\nshape = \"loglog\"\npoints = [\n  [\"1s\", \"40ns\"],\n  [\"100s\", \"60ns\"],\n  [\"10s\", \"50ns\"],\n]\n",
    );
    let o = dir.path().join("out.json");
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--mask-file"])
        .arg(&mask)
        .args(["--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_error(&out, 1, &["lab.toml", ":8", "increasing"], &o);
}

/// A user mask file checks like a built-in: its note in the output.
#[test]
fn mask_file_is_applied() {
    let dir = tempfile::tempdir().unwrap();
    let f = ramp_file(dir.path());
    // Step mask: 10 µs up to 1000 s. The ramp's MTIE y0·τ = 20 ns·τ passes
    // it up to τ = 500 s and is twice the limit at the mask's end, 1000 s,
    // which the record (2000 s) reaches (analytic).
    let mask = write(
        dir.path(),
        "lab.toml",
        "name = \"lab\"\nnote = \"internal draft\"\n[[limit]]\nmetric = \"mtie\"\nshape = \"step\"\npoints = [[\"1s\", \"10us\"], [\"1000s\", \"10us\"]]\n",
    );
    let o = dir.path().join("out.json");
    let out = tauwise()
        .arg("wander")
        .arg(&f)
        .args(["--tau0", "1s", "--units", "ns", "--mask-file"])
        .arg(&mask)
        .args(["--format", "json", "-o"])
        .arg(&o)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&o).unwrap()).unwrap();
    let m = &doc["masks"][0];
    assert_eq!(m["name"], "lab");
    assert_eq!(m["source_note"], "internal draft");
    assert_eq!(m["verdict"], "exceeds");
    assert_eq!(m["coverage"], "full");
    let wr = m["worst_ratio"].as_f64().unwrap();
    assert!((wr - Y0 * 1000.0 / 10e-6).abs() < 1e-12, "{wr}");
    assert_eq!(m["worst_tau"], 1000.0);
}
