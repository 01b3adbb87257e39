//! End-to-end: `tauwise noise` on simulated records — the JSON contract of
//! issue 3 and the fitted model against the simulated h_α.

use std::process::Command;

fn tauwise() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tauwise"))
}

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
