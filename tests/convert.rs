//! End to end: `tauwise convert`, `tauwise spectrum` and `tauwise jitter`
//! on files whose answers are known from IEEE Std 1139 closed forms and the
//! analytic jitter cases of docs/checks.md §E; JSON shapes of issue 4; bad input.

mod common;
use common::tauwise as bin;
use std::path::Path;

fn ok_json(args: &[&str]) -> serde_json::Value {
    let o = bin()
        .args(args)
        .args(["--format", "json"])
        .output()
        .unwrap();
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    serde_json::from_slice(&o.stdout).expect("valid JSON")
}

/// Bad data: exit status 1.
fn fails(args: &[&str]) -> String {
    fails_with(args, 1)
}

/// A bad command line (a value or a combination of options): exit status 2
/// (issue 14).
fn refused(args: &[&str]) -> String {
    fails_with(args, 2)
}

fn fails_with(args: &[&str], code: i32) -> String {
    let o = bin().args(args).output().unwrap();
    assert_eq!(
        o.status.code(),
        Some(code),
        "{args:?} should fail: {}",
        String::from_utf8_lossy(&o.stdout)
    );
    assert!(o.stdout.is_empty());
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

/// IEEE Std 1139 (docs/checks.md §C): a WFM + FFM model → L(f) table (CSV) →
/// σ(τ) matches h0/(2τ) + 2 ln2·h−1 within 3 %; curves carry the
/// `stability` shape.
#[test]
fn model_to_table_to_sigma() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("lf.csv");
    let o = bin()
        .args([
            "convert",
            "--model",
            "h0=1e-24,h-1=1e-26,fh=1k",
            "--carrier",
            "10MHz",
            "--to",
            "lf",
        ])
        .args([
            "--from",
            "1m",
            "--per-decade",
            "10",
            "--format",
            "csv",
            "-o",
        ])
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(text.starts_with("f,lf_dbc_hz,sphi,sy,sx\n"));
    // Keep f and L only, as an analyser would export it.
    let two: String = text
        .lines()
        .map(|l| l.split(',').take(2).collect::<Vec<_>>().join(",") + "\n")
        .collect();
    let table = write(dir.path(), "two.csv", &two);
    let j = ok_json(&[
        "convert",
        "--lf",
        &table,
        "--carrier",
        "10MHz",
        "--to",
        "sigma",
        "--dev",
        "adev,mdev",
        "--taus",
        "1,10,100",
    ]);
    assert_eq!(j["tool"], "tauwise");
    assert_eq!(j["input"]["path"], table.as_str());
    let curves = j["curves"].as_array().unwrap();
    assert_eq!(curves[0]["estimator"], "adev");
    assert_eq!(curves[1]["estimator"], "mdev");
    for p in curves[0]["points"].as_array().unwrap() {
        let tau = p["tau"].as_f64().unwrap();
        let want = 1e-24 / (2.0 * tau) + 2.0 * 2f64.ln() * 1e-26;
        let got = p["dev"].as_f64().unwrap().powi(2);
        assert!(
            (got / want - 1.0).abs() < 0.03,
            "τ={tau}: {got:e} vs {want:e}"
        );
        for k in ["terms", "edf", "lo", "hi", "alpha", "noise"] {
            assert!(p[k].is_null(), "{k}");
        }
    }
    for p in curves[1]["points"].as_array().unwrap() {
        let tau = p["tau"].as_f64().unwrap();
        let want = 1e-24 / (4.0 * tau) + 0.936 * 1e-26;
        let got = p["dev"].as_f64().unwrap().powi(2);
        assert!(
            (got / want - 1.0).abs() < 0.03,
            "MVAR τ={tau}: {got:e} vs {want:e}"
        );
    }
}

/// The model path of `--to sigma` integrates the model itself.
#[test]
fn model_to_sigma() {
    let j = ok_json(&[
        "convert",
        "--model",
        "h-2=1e-30,fh=10",
        "--to",
        "sigma",
        "--dev",
        "adev",
        "--taus",
        "10,1000",
        "--tau0",
        "0.05",
    ]);
    for p in j["curves"][0]["points"].as_array().unwrap() {
        let tau = p["tau"].as_f64().unwrap();
        let want = (2.0 * std::f64::consts::PI).powi(2) * tau * 1e-30 / 6.0;
        let got = p["dev"].as_f64().unwrap().powi(2);
        assert!(
            (got / want - 1.0).abs() < 0.01,
            "τ={tau}: {got:e} vs {want:e}"
        );
    }
}

/// docs/checks.md §E (analytic): flat −155 dBc/Hz, 12 kHz–20 MHz, 10 MHz carrier:
/// 1.124e−4 rad, 1.789 ps; issue 4 JSON shape; rms_ui null without a rate.
#[test]
fn jitter_json_shape_and_value() {
    let dir = tempfile::tempdir().unwrap();
    let t = write(
        dir.path(),
        "flat.txt",
        "# offset Hz, dBc/Hz\n1 -155\n1e8 -155\n",
    );
    let j = ok_json(&[
        "jitter",
        &t,
        "--carrier",
        "10MHz",
        "--band",
        "12k:20M",
        "--band",
        "1k:10k",
    ]);
    assert_eq!(j["carrier"].as_f64(), Some(10e6));
    let b = &j["bands"][0];
    for k in [
        "from", "to", "filter", "rms_rad", "rms_deg", "rms_s", "rms_ui",
    ] {
        assert!(b.get(k).is_some(), "{k}");
    }
    assert!((b["rms_rad"].as_f64().unwrap() / 1.124e-4 - 1.0).abs() < 5e-4);
    assert!((b["rms_s"].as_f64().unwrap() / 1.789e-12 - 1.0).abs() < 5e-4);
    assert!(b["rms_ui"].is_null());
    assert_eq!(b["filter"], "none");
    assert!(j["caution"]
        .as_str()
        .unwrap()
        .contains("Engineering estimate"));
    let j = ok_json(&[
        "jitter",
        &t,
        "--carrier",
        "10MHz",
        "--band",
        "12k:20M",
        "--ui-rate",
        "10.3125G",
        "--filter",
        "highpass:1:12k",
    ]);
    let b = &j["bands"][0];
    assert!(
        (b["rms_ui"].as_f64().unwrap() - b["rms_s"].as_f64().unwrap() * 10.3125e9).abs() < 1e-12
    );
    assert!(b["filter"].as_str().unwrap().starts_with("highpass:1:"));
}

/// Spur files and filter files through the command line: a −70 dBc spur
/// adds 2e−7 rad² (pure PM, SSB level); a flat −3.0103 dB filter file halves σ_φ².
#[test]
fn jitter_spurs_and_filter_file() {
    let dir = tempfile::tempdir().unwrap();
    let t = write(dir.path(), "flat.csv", "offset,L\n1,-160\n1e8,-160\n");
    let spurs = write(dir.path(), "spurs.csv", "1e6,-70\n5e7,-60\n");
    let filt = write(dir.path(), "h.csv", "1,-3.0103\n1e9,-3.0103\n");
    let base = ok_json(&["jitter", &t, "--carrier", "100M", "--band", "12k:20M"]);
    let v0 = base["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    let s = ok_json(&[
        "jitter",
        &t,
        "--carrier",
        "100M",
        "--band",
        "12k:20M",
        "--spurs",
        &spurs,
    ]);
    let v1 = s["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    assert!(((v1 - v0) / 2e-7 - 1.0).abs() < 1e-9);
    assert_eq!(s["bands"][0]["spurs"], 1);
    let f = ok_json(&[
        "jitter",
        &t,
        "--carrier",
        "100M",
        "--band",
        "12k:20M",
        "--filter-file",
        &filt,
    ]);
    let v2 = f["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    assert!((v2 / v0 - 0.5).abs() < 1e-4);
}

/// Bad input (issue 4): non-increasing offsets, positive dBc/Hz, a band
/// outside the table without --extrapolate (and the report with it), a
/// missing --carrier; errors name the file and line.
#[test]
fn bad_input() {
    let dir = tempfile::tempdir().unwrap();
    let dup = write(dir.path(), "dup.csv", "1,-90\n10,-120\n10,-130\n");
    let e = fails(&["jitter", &dup, "--carrier", "10M", "--band", "2:5"]);
    assert!(e.contains("dup.csv:3:") && e.contains("increasing"), "{e}");
    // L(f) above 0 dBc/Hz is read with a note (issue 13: a model at low
    // offsets can have S_φ/2 > 1 rad²/Hz); a malformed value is refused.
    let pos = write(dir.path(), "pos.csv", "1,-90\n10,2\n");
    let o = bin()
        .args(["convert", "--lf", &pos, "--carrier", "10M", "--to", "sigma"])
        .output()
        .unwrap();
    assert!(o.status.success());
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(e.contains("pos.csv") && e.contains("above 0 dBc/Hz"), "{e}");
    let bad = write(dir.path(), "bad.csv", "1,-90\n10,2x\n");
    let e = fails(&["convert", "--lf", &bad, "--carrier", "10M", "--to", "sigma"]);
    assert!(e.contains("bad.csv:2:") && e.contains("'2x'"), "{e}");
    let ok = write(dir.path(), "ok.csv", "10,-120\n1e6,-150\n");
    let e = fails(&["jitter", &ok, "--carrier", "10M", "--band", "12k:20M"]);
    assert!(
        e.contains("outside the table") && e.contains("--extrapolate"),
        "{e}"
    );
    let j = ok_json(&[
        "jitter",
        &ok,
        "--carrier",
        "10M",
        "--band",
        "12k:20M",
        "--extrapolate",
    ]);
    let ex = &j["bands"][0]["extrapolated"][0];
    assert_eq!(ex[0].as_f64(), Some(1e6));
    assert_eq!(ex[1].as_f64(), Some(20e6));
    let e = refused(&["jitter", &ok, "--band", "12k:20k"]);
    assert!(e.contains("--carrier"), "{e}");
    let e = refused(&["convert", "--lf", &ok, "--to", "sigma"]);
    assert!(e.contains("--carrier"), "{e}");
    let e = refused(&[
        "jitter",
        &ok,
        "--carrier",
        "10M",
        "--band",
        "12k:20k",
        "--filter",
        "bandpass:1:3k",
    ]);
    assert!(e.contains("highpass:ORDER:FC"), "{e}");
    let e = refused(&["convert", "--model", "h0=1e-22", "--to", "sigma"]);
    assert!(e.contains("fh"), "{e}");
    let one = write(dir.path(), "one.csv", "10,-120\n");
    let e = fails(&["jitter", &one, "--carrier", "10M", "--band", "12k:20k"]);
    assert!(e.contains("at least 2"), "{e}");
}

/// `spectrum` of a white-phase record: JSON shape of issue 4, flat S_x at
/// 2σ²τ0 (analytic) within 10 % over the log bins, S_y = (2πf)² S_x, and
/// `jitter --record` over the whole band close to the record's variance.
#[test]
fn spectrum_and_record_jitter() {
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("wpm.txt");
    let o = bin()
        .args([
            "simulate", "--model", "h2=1e-20", "--tau0", "1ms", "--points", "65536", "--seed", "5",
            "-o",
        ])
        .arg(&rec)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let r = rec.display().to_string();
    let j = ok_json(&["spectrum", &r, "--tau0", "1ms", "--carrier", "10MHz"]);
    for k in [
        "tool", "version", "input", "carrier", "window", "enbw_hz", "points",
    ] {
        assert!(j.get(k).is_some(), "{k}");
    }
    assert_eq!(j["window"], "hann");
    // WPM: S_y = h2 f², so S_x = h2/(2π)² (IEEE Std 1139, analytic).
    let want = 1e-20 / (2.0 * std::f64::consts::PI).powi(2);
    let pts = j["points"].as_array().unwrap();
    let mean: f64 = pts.iter().map(|p| p["sx"].as_f64().unwrap()).sum::<f64>() / pts.len() as f64;
    assert!((mean / want - 1.0).abs() < 0.1, "{mean:e} vs {want:e}");
    for p in pts {
        let f = p["f"].as_f64().unwrap();
        let sx = p["sx"].as_f64().unwrap();
        let sy = p["sy"].as_f64().unwrap();
        assert!((sy / (sx * (2.0 * std::f64::consts::PI * f).powi(2)) - 1.0).abs() < 1e-9);
        let l = p["lf_dbc_hz"].as_f64().unwrap();
        let sphi = p["sphi"].as_f64().unwrap();
        assert!((l - 10.0 * (sphi / 2.0).log10()).abs() < 1e-9);
    }
    let j = ok_json(&[
        "jitter",
        "--record",
        &r,
        "--tau0",
        "1ms",
        "--carrier",
        "10MHz",
        "--band",
        "1:490",
    ]);
    let rms_s = j["bands"][0]["rms_s"].as_f64().unwrap();
    let want_s = (want * 489.0).sqrt();
    assert!(
        (rms_s / want_s - 1.0).abs() < 0.05,
        "{rms_s:e} vs {want_s:e}"
    );
    let e = refused(&["spectrum", &r, "--tau0", "1ms"]);
    assert!(e.contains("--carrier"), "{e}");
    let j = ok_json(&["spectrum", &r, "--tau0", "1ms", "--quantity", "sx"]);
    assert!(j["points"][0]["lf_dbc_hz"].is_null());
}

/// `--to model` recovers the h_α of a table built from a model (IEEE Std
/// 1139 terms, exact in log-log), and `--sigma` fits a stability JSON and
/// says the direction is model-based.
#[test]
fn model_fit_paths() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("lf.csv");
    let o = bin()
        .args([
            "convert",
            "--model",
            "h2=6e-30,h0=1e-25,h-1=3e-25,fh=10M",
            "--carrier",
            "10MHz",
        ])
        .args(["--to", "lf", "--from", "1", "--format", "csv", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let p = out.display().to_string();
    let j = ok_json(&[
        "convert",
        "--lf",
        &p,
        "--quantity",
        "lf",
        "--carrier",
        "10MHz",
        "--to",
        "model",
    ]);
    for (k, want) in [("h2", 6e-30), ("h0", 1e-25), ("h-1", 3e-25)] {
        let got = j["h"][k].as_f64().unwrap();
        assert!((got / want - 1.0).abs() < 0.02, "{k}: {got:e}");
    }
    // A stability-shaped document: WFM OADEV σ² = h0/(2τ) (IEEE Std 1139).
    let pts: Vec<serde_json::Value> = [1.0, 2.0, 4.0, 8.0, 16.0, 32.0]
        .iter()
        .map(|t: &f64| serde_json::json!({"tau": t, "m": *t as usize, "dev": (1e-22 / (2.0 * t)).sqrt(), "edf": 100.0}))
        .collect();
    let doc = serde_json::json!({"tool": "tauwise", "input": {"tau0": 1.0}, "curves": [{"estimator": "oadev", "points": pts}]});
    let sj = dir.path().join("st.json");
    std::fs::write(&sj, doc.to_string()).unwrap();
    let s = sj.display().to_string();
    let j = ok_json(&[
        "convert",
        "--sigma",
        &s,
        "--carrier",
        "10MHz",
        "--to",
        "lf",
        "--from",
        "1m",
        "--to-offset",
        "0.1",
    ]);
    assert!(j["input"]["note"].as_str().unwrap().contains("model-based"));
    // WFM: L(f) = 10·log10(h0·ν0²/(2f²)).
    let p0 = &j["points"][0];
    let f = p0["f"].as_f64().unwrap();
    let want = 10.0 * (1e-22 * 1e14 / (2.0 * f * f)).log10();
    assert!(
        (p0["lf_dbc_hz"].as_f64().unwrap() - want).abs() < 0.5,
        "{p0}"
    );
}
