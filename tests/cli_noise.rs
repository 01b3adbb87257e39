//! End-to-end: `tauwise noise` on simulated records — the JSON contract of
//! issue 3 and the fitted model against the simulated h_α.

mod common;
use common::tauwise;

#[test]
fn json_contract_and_fitted_model() {
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("wfm.txt");
    // White FM h0 = 2e-22 plus random walk FM h-2 = 1e-28 (τ0 = 1 s).
    let st = tauwise()
        .args(["simulate", "--model", "h0=2e-22,h-2=1e-28", "--tau0", "1s"])
        .args(["--points", "65536", "--seed", "11", "-o"])
        .arg(&rec)
        .status()
        .unwrap();
    assert!(st.success());
    let out = tauwise()
        .arg("noise")
        .arg(&rec)
        .args(["--tau0", "1s", "--format", "json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["tool"], "tauwise");
    assert_eq!(doc["input"]["points"], 65536);
    let pts = doc["points"].as_array().unwrap();
    assert!(!pts.is_empty());
    for key in ["tau", "m", "alpha", "noise", "method", "r1"] {
        assert!(pts[0].get(key).is_some(), "point lacks {key}");
    }
    // At τ = 1 s the record is white FM (α = 0) by construction.
    assert_eq!(pts[0]["alpha"], 0);
    assert_eq!(pts[0]["noise"], "WFM");
    assert_eq!(pts[0]["method"], "lag1");
    let model = &doc["model"];
    for a in ["2", "1", "0", "-1", "-2"] {
        assert!(model["h"].get(a).is_some(), "model.h lacks {a}");
    }
    assert_eq!(model["fh"], 0.5);
    // The simulated terms come back within a factor 1.5 (the fit itself is
    // checked more tightly on longer records in tests/model.rs).
    let h0 = model["h"]["0"].as_f64().unwrap();
    let hm2 = model["h"]["-2"].as_f64().unwrap();
    assert!((h0 / 2e-22 - 1.0).abs() < 0.5, "h0 {h0}");
    assert!(hm2 / 1e-28 > 1.0 / 1.5 && hm2 / 1e-28 < 1.5, "h-2 {hm2}");
    assert!(!model["dominant"].as_array().unwrap().is_empty());
    // The printed model string is accepted by --model (issue 3).
    let ms = model["model_string"].as_str().unwrap();
    let again = dir.path().join("again.txt");
    let st = tauwise()
        .args([
            "simulate", "--model", ms, "--tau0", "1s", "--points", "100", "-o",
        ])
        .arg(&again)
        .status()
        .unwrap();
    assert!(
        st.success(),
        "model string '{ms}' is accepted by simulate --model"
    );
}

#[test]
fn too_short_record_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("x.txt");
    std::fs::write(&f, "1\n2\n").unwrap();
    let out = tauwise()
        .arg("noise")
        .arg(&f)
        .args(["--tau0", "1"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("tauwise: error:"));
}

/// One identification for every command: on a record with white FM,
/// flicker FM and a linear frequency drift, `noise`, `stability` (every
/// estimator requested) and the report's stability section give the same
/// label at every τ — `drift` where the drift dominates (NIST SP 1065:
/// σ_y = |D|·τ/√2) — and with the drift removed, `noise`, `stability` and
/// the report's noise-model section (which removes it) agree again. The
/// JSON documents `drift` and the noise beneath it (`alpha`).
#[test]
fn noise_stability_and_report_give_the_same_label() {
    use tauwise::io::dut::Dut;
    use tauwise::report::build::{from_dut, BuildOptions};
    use tauwise::report::Part;
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("unit.txt");
    let st = tauwise()
        .args(["simulate", "--model", "h0=1e-22,h-1=1e-25", "--tau0", "1s"])
        .args([
            "--points", "40000", "--seed", "17", "--drift", "3e-9/day", "-o",
        ])
        .arg(&rec)
        .output()
        .unwrap();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    let json = |args: &[&str]| -> serde_json::Value {
        let o = tauwise().args(args).output().unwrap();
        assert!(
            o.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        serde_json::from_slice(&o.stdout).unwrap()
    };
    let path = rec.to_str().unwrap();
    let labels_of_noise = |extra: &[&str]| -> Vec<(f64, String)> {
        let mut a = vec![
            "noise", path, "--tau0", "1s", "--units", "s", "--format", "json",
        ];
        a.extend_from_slice(extra);
        let doc = json(&a);
        doc["points"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|p| !p["noise"].is_null())
            .map(|p| {
                (
                    p["tau"].as_f64().unwrap(),
                    p["noise"].as_str().unwrap().to_string(),
                )
            })
            .collect()
    };
    let labels_of_stability = |extra: &[&str]| -> Vec<(String, f64, String)> {
        let mut a = vec![
            "stability",
            path,
            "--tau0",
            "1s",
            "--units",
            "s",
            "--format",
            "json",
        ];
        a.extend_from_slice(&["--dev", "adev,oadev,mdev,tdev,hdev,ohdev,totdev,mtot"]);
        a.extend_from_slice(extra);
        let doc = json(&a);
        let mut out = Vec::new();
        for c in doc["curves"].as_array().unwrap() {
            for p in c["points"].as_array().unwrap() {
                if let Some(l) = p["noise"].as_str() {
                    out.push((
                        c["estimator"].as_str().unwrap().to_string(),
                        p["tau"].as_f64().unwrap(),
                        l.to_string(),
                    ));
                }
            }
        }
        out
    };
    for extra in [&[][..], &["--remove-drift", "linear"][..]] {
        let noise = labels_of_noise(extra);
        let stab = labels_of_stability(extra);
        assert!(noise.len() >= 10);
        let mut compared = 0;
        for (est, tau, label) in &stab {
            if let Some((_, l)) = noise.iter().find(|(t, _)| t == tau) {
                assert_eq!(l, label, "{est} at τ = {tau} ({extra:?})");
                compared += 1;
            }
        }
        assert!(compared >= 40, "{compared}");
        let drifts = noise.iter().filter(|(_, l)| l == "drift").count();
        if extra.is_empty() {
            assert!(drifts >= 2, "no drift label: {noise:?}");
        } else {
            assert_eq!(drifts, 0, "drift label after --remove-drift: {noise:?}");
        }
    }
    // The noise JSON carries the noise beneath the drift and the drift rate.
    let doc = json(&[
        "noise", path, "--tau0", "1s", "--units", "s", "--format", "json",
    ]);
    let p = doc["points"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["noise"] == "drift")
        .unwrap();
    assert!(p["alpha"].is_i64());
    assert!(p["drift"]["dominates"].as_bool().unwrap() || p["method"] == "carried");
    let per_day = doc["drift_per_day"].as_f64().unwrap();
    assert!((per_day / 3e-9 - 1.0).abs() < 0.05, "{per_day}");

    // The report, on the same record. By default it removes linear drift
    // for the stability picture, so both its stability and noise-model
    // sections label as the commands with --remove-drift linear; with
    // `drift = "none"` its stability section labels as the record as read.
    let report_of = |drift: &str| {
        std::fs::write(
            dir.path().join("unit.toml"),
            format!("[device]\nname = \"unit\"\n[[record]]\npath = \"unit.txt\"\ntau0 = \"1s\"\nunits = \"s\"\n{drift}"),
        )
        .unwrap();
        from_dut(
            &Dut::read(&dir.path().join("unit.toml")).unwrap(),
            &BuildOptions::default(),
        )
        .unwrap()
    };
    let same_labels = |rep: &tauwise::report::Report, want: &[(f64, String)]| {
        let Part::Done(st) = &rep.stability else {
            panic!("no stability section")
        };
        let mut compared = 0;
        for row in &st[0].rows {
            let Some(label) = &row.noise else { continue };
            if let Some((_, l)) = want.iter().find(|(t, _)| *t == row.tau) {
                assert_eq!(l, label, "report {} at τ = {}", row.estimator, row.tau);
                compared += 1;
            }
        }
        assert!(compared >= 20, "{compared}");
    };
    let as_read = labels_of_noise(&[]);
    let clean = labels_of_noise(&["--remove-drift", "linear"]);
    same_labels(&report_of("drift = \"none\"\n"), &as_read);
    let rep = report_of("");
    same_labels(&rep, &clean);
    let Part::Done(nm) = &rep.noise_model else {
        panic!("no noise model")
    };
    for row in &nm[0].identified {
        let (_, l) = clean.iter().find(|(t, _)| *t == row.tau).unwrap();
        assert_eq!(*l, row.label, "report noise model at τ = {}", row.tau);
    }
    assert!(!nm[0].identified.is_empty());
}
