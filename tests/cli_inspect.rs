//! End to end: `tauwise inspect --format json` and `tauwise prepare` on
//! constructed files whose offset, drift, gaps and outliers are known
//! analytically.
//!
//! Phase x(t) = y0·t + D·t²/2 has fractional frequency y(t) = y0 + D·t; the
//! first difference over [iτ0, (i+1)τ0] is exactly y0 + D·(i + ½)τ0
//! (analytic), so the mean frequency is y0 + D·(N − 1)τ0/2 and the least-
//! squares drift is D.

mod common;
use common::tauwise as bin;
use std::path::Path;

fn run_json(args: &[&str], file: &Path) -> serde_json::Value {
    let o = bin()
        .args(args)
        .arg(file)
        .args(["--format", "json"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    serde_json::from_slice(&o.stdout).expect("inspect prints valid JSON")
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

const Y0: f64 = 5e-9;
/// 1e-11 per day, in 1/s.
const D: f64 = 1e-11 / 86400.0;

fn phase(t: f64) -> f64 {
    Y0 * t + D * t * t / 2.0
}

#[test]
fn inspect_reports_analytic_offset_and_drift() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("ocxo-a.csv");
    let n = 2001;
    let tau0 = 10.0;
    let mut text = String::from("# invented test record\nseconds,phase_ns\n");
    for i in 0..n {
        let t = i as f64 * tau0;
        text.push_str(&format!("{},{:.17e}\n", 1000.0 + t, phase(t) * 1e9));
    }
    std::fs::write(&p, &text).unwrap();
    let v = run_json(&["inspect", "--units", "ns"], &p);

    assert_eq!(v["tool"], "tauwise");
    assert_eq!(v["version"], env!("CARGO_PKG_VERSION"));
    let input = &v["input"];
    assert_eq!(input["path"], p.display().to_string());
    assert_eq!(input["data"], "phase");
    assert_eq!(input["tau0"], 10.0);
    assert_eq!(input["points"], n);
    assert_eq!(input["gaps"], 0);
    assert_eq!(v["tau0_source"], "timestamps");
    assert_eq!(v["start_time"], 1000.0);
    assert_eq!(v["span"], (n - 1) as f64 * tau0);
    assert_eq!(v["lines"], n + 2);
    assert_eq!(v["bytes"], text.len());

    let mean = Y0 + D * (n - 1) as f64 * tau0 / 2.0;
    let off = v["frequency_offset"].as_f64().unwrap();
    assert!(close(off, mean, 1e-9), "{off} vs {mean}");
    let per_day = v["drift"]["per_day"].as_f64().unwrap();
    assert!(close(per_day, 1e-11, 1e-6), "{per_day}");
    assert_eq!(v["drift"]["model"], "linear");
    // y is linear in i, so every value lies within (N/2)/(N/4 · 1.4826) =
    // 1.35 scaled MADs of the median: no outlier at 5 MAD (analytic).
    assert_eq!(v["outliers"]["count"], 0);
    assert_eq!(v["outliers"]["limit"], 5.0);
}

#[test]
fn inspect_counts_gaps_and_outliers() {
    // Frequency y0 + (i mod 5 − 2)·e: five equally frequent levels, so the
    // median is y0 and the median absolute deviation is e (scaled MAD
    // 1.4826·e, analytic). One
    // missing reading, one timestamp jump of 3τ0 (2 inserted gaps) and one
    // phase glitch, which makes two frequency outliers.
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("rb-1.txt");
    let e = 1e-12;
    let mut x = 0.0;
    let mut text = String::new();
    let mut t = 0;
    for i in 0..500 {
        let mut xi = x;
        if i == 200 {
            xi += 1e-8; // glitch: 10^4·e away in frequency
        }
        let field = if i == 100 {
            "NaN".to_string()
        } else {
            format!("{xi:e}")
        };
        text.push_str(&format!("{t}\t{field}\n"));
        let y = Y0 + ((i % 5) as f64 - 2.0) * e;
        x += y;
        t += if i == 300 { 3 } else { 1 };
        if i == 300 {
            x += 2.0 * Y0;
        }
    }
    std::fs::write(&p, &text).unwrap();
    let v = run_json(&["inspect"], &p);
    assert_eq!(v["input"]["points"], 502);
    assert_eq!(v["input"]["gaps"], 3);
    assert_eq!(v["inserted_gaps"], 2);
    assert_eq!(v["outliers"]["count"], 2);
    assert_eq!(
        v["outliers"]["first_indices"],
        serde_json::json!([199, 200])
    );
    let mad = v["outliers"]["mad"].as_f64().unwrap();
    assert!(close(mad, e * 1.482_602_218_505_602, 1e-3), "{mad}");
    assert!(close(v["outliers"]["median"].as_f64().unwrap(), Y0, 1e-3));

    // The table form names the same facts.
    let o = bin().arg("inspect").arg(&p).output().unwrap();
    let table = String::from_utf8(o.stdout).unwrap();
    assert!(table.contains("502"), "{table}");
    assert!(table.contains("2 inserted for timestamp jumps"), "{table}");
    // CSV has a header row and one quantity per row.
    let o = bin()
        .arg("inspect")
        .arg(&p)
        .args(["--format", "csv"])
        .output()
        .unwrap();
    let csv = String::from_utf8(o.stdout).unwrap();
    assert!(csv.starts_with("quantity,value,unit\n"));
    assert!(csv.contains("\npoints,502,\n"), "{csv}");
}

#[test]
fn prepare_removes_drift_and_glitch_and_inspect_agrees() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("ocxo-b.txt");
    let tau0 = 1.0;
    let mut text = String::new();
    let e = 1e-12;
    // A drift large against the noise pattern (1e-9 per day).
    let d = 1e-9 / 86400.0;
    let mut x = 0.0;
    for i in 0..3000 {
        let t = i as f64 * tau0;
        let mut xi = x + d * t * t / 2.0;
        if i == 1500 {
            xi += 1e-7;
        }
        text.push_str(&format!("{xi:.17e}\n"));
        x += (Y0 + ((i % 5) as f64 - 2.0) * e) * tau0;
    }
    std::fs::write(&src, &text).unwrap();
    let out = dir.path().join("clean.txt");
    let o = bin()
        .arg("prepare")
        .arg(&src)
        .args([
            "--tau0",
            "1s",
            "--outliers",
            "5",
            "--remove-drift",
            "linear",
            "--fill-gaps",
            "-o",
        ])
        .arg(&out)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let written = std::fs::read_to_string(&out).unwrap();
    assert!(written.starts_with("# tauwise "));
    assert!(written.contains("# tau0: 1 s"), "{written}");
    assert!(
        written.contains("outliers: 2 frequency values"),
        "{written}"
    );
    assert!(written.contains("drift removed: linear"), "{written}");
    assert!(written.contains("gaps filled"), "{written}");
    // No temporary file left beside the output.
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);

    let v = run_json(&["inspect", "--tau0", "1s"], &out);
    assert_eq!(v["input"]["points"], 3000);
    assert_eq!(
        v["input"]["gaps"], 0,
        "the glitch was blanked and then filled"
    );
    assert_eq!(v["outliers"]["count"], 0);
    let per_day = v["drift"]["per_day"].as_f64().unwrap();
    // What is left is the least-squares slope of the bounded noise pattern,
    // of order 12·e/(N²·τ0) per second ≈ 1e-13 per day, against 1e-9 removed.
    assert!(per_day.abs() < 1e-3 * 1e-9, "drift left: {per_day}");
    // The frequency at the record's centre is kept.
    let off = v["frequency_offset"].as_f64().unwrap();
    assert!(close(off, Y0 + d * 2999.0 / 2.0, 1e-4), "{off}");

    // Decimation by 10 keeps every tenth phase sample.
    let dec = dir.path().join("dec.txt");
    let o = bin()
        .arg("prepare")
        .arg(&out)
        .args(["--tau0", "1s", "--decimate", "10", "-o"])
        .arg(&dec)
        .output()
        .unwrap();
    assert!(o.status.success());
    let v = run_json(&["inspect", "--tau0", "10s"], &dec);
    assert_eq!(v["input"]["points"], 300);
    let d = std::fs::read_to_string(&dec).unwrap();
    assert!(d.contains("# tau0: 10 s"), "{d}");
}
