//! End-to-end: `--plot FILE.svg|FILE.png` on the analysis commands. Each
//! chart is checked as a document: the SVG parses as XML (roxmltree) and
//! carries the expected labels; the PNG decodes (png crate) at 960×600 and
//! is not blank. Inputs are made by `tauwise simulate` in a temporary
//! directory and kept small so the file runs in seconds.

mod common;
use common::tauwise;
use std::path::{Path, PathBuf};

fn run(args: &[&str]) {
    let o = tauwise().args(args).output().unwrap();
    assert!(
        o.status.success(),
        "tauwise {args:?} failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// A simulated phase record: white FM plus random-walk FM, τ0 = 1 s.
fn record(dir: &Path, points: usize) -> PathBuf {
    let p = dir.join("rec.txt");
    run(&[
        "simulate",
        "--model",
        "h0=1e-22,h-2=1e-30",
        "--points",
        &points.to_string(),
        "--seed",
        "3",
        "-o",
        p.to_str().unwrap(),
    ]);
    p
}

/// All text of an SVG document (parsed with roxmltree; a parse error fails).
fn svg_text(path: &Path) -> String {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    doc.descendants()
        .filter(|n| n.is_text())
        .filter_map(|n| n.text())
        .collect::<Vec<_>>()
        .join("\n")
}

/// Decode a PNG; check 960×600 and that it is not one flat colour.
fn check_png(path: &Path) {
    let dec = png::Decoder::new(std::fs::File::open(path).unwrap());
    let mut reader = dec.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (960, 600), "{path:?}");
    let px = &buf[..info.buffer_size()];
    let non_white = px.chunks(3).filter(|c| c.iter().any(|&v| v < 200)).count();
    // Axes, grid, text and curves cover well over 1 % of the canvas.
    assert!(
        non_white > 960 * 600 / 100,
        "{path:?}: nearly blank ({non_white} dark pixels)"
    );
}

/// Run `args` + `--plot x.svg` and `--plot x.png`; return the SVG's text.
fn both(dir: &Path, name: &str, args: &[&str]) -> String {
    let svg = dir.join(format!("{name}.svg"));
    let png = dir.join(format!("{name}.png"));
    for p in [&svg, &png] {
        let mut a: Vec<&str> = args.to_vec();
        a.extend(["--plot", p.to_str().unwrap()]);
        run(&a);
    }
    check_png(&png);
    svg_text(&svg)
}

#[test]
fn wander_plot_shows_mtie_tdev_and_masks() {
    let d = tempfile::tempdir().unwrap();
    let rec = record(d.path(), 2000);
    let t = both(
        d.path(),
        "wander",
        &[
            "wander",
            rec.to_str().unwrap(),
            "--tau0",
            "1s",
            "--mask",
            "g8262-opt1",
        ],
    );
    for want in [
        "MTIE measured",
        "TDEV measured",
        "MTIE mask g8262-opt1",
        "TDEV mask g8262-opt1",
    ] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
}

#[test]
fn wander_plot_marks_violations() {
    // A pure frequency offset y0 = 2e-8: MTIE(τ) = y0·τ (analytic), above the
    // 40 ns G.8262 option 1 MTIE limit (from memory) from τ = 2 s on.
    let d = tempfile::tempdir().unwrap();
    let text: String = (0..2001)
        .map(|i| format!("{}\n", 2e-8 * i as f64))
        .collect();
    let rec = d.path().join("ramp.txt");
    std::fs::write(&rec, text).unwrap();
    let t = both(
        d.path(),
        "violations",
        &[
            "wander",
            rec.to_str().unwrap(),
            "--tau0",
            "1s",
            "--mask",
            "g8262-opt1",
        ],
    );
    assert!(t.contains("exceeds g8262-opt1"), "{t}");
    assert!(t.contains("violating point(s) marked"), "{t}");
}

#[test]
fn plot_with_a_bad_extension_is_a_clear_error() {
    let d = tempfile::tempdir().unwrap();
    let rec = record(d.path(), 500);
    let bad = d.path().join("x.jpg");
    let o = tauwise()
        .args(["wander", rec.to_str().unwrap(), "--tau0", "1s", "--plot"])
        .arg(&bad)
        .output()
        .unwrap();
    assert!(!o.status.success());
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(e.contains("x.jpg") && e.contains(".svg or .png"), "{e}");
    assert!(!bad.exists());
}

#[test]
fn holdover_plot_shows_percentiles_and_budget() {
    let d = tempfile::tempdir().unwrap();
    let rec = record(d.path(), 2000);
    let t = both(
        d.path(),
        "holdover",
        &[
            "holdover",
            rec.to_str().unwrap(),
            "--tau0",
            "1s",
            "--span",
            "2h",
            "--budget",
            "1us",
            "--paths",
            "100",
            "--steps",
            "256",
        ],
    );
    for want in ["p95", "p99", "budget"] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
}

/// An L(f) table from a power-law model (`convert --model … --to lf`).
fn lf_table(dir: &Path) -> PathBuf {
    let p = dir.join("lf.csv");
    run(&[
        "convert",
        "--model",
        "h0=1e-22,h-1=1e-24,h-2=1e-30,fh=1e6",
        "--carrier",
        "10MHz",
        "--to",
        "lf",
        "--format",
        "csv",
        "-o",
        p.to_str().unwrap(),
    ]);
    p
}

#[test]
fn jitter_plot_shades_the_bands() {
    let d = tempfile::tempdir().unwrap();
    let lf = lf_table(d.path());
    let t = both(
        d.path(),
        "jitter",
        &[
            "jitter",
            lf.to_str().unwrap(),
            "--carrier",
            "10MHz",
            "--band",
            "10:1k",
            "--band",
            "12k:100k",
        ],
    );
    for want in ["band 10 Hz", "band 12 kHz", "10:1k:", "12k:100k:", "table"] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
}

#[test]
fn spectrum_plot_shows_the_record_lf() {
    let d = tempfile::tempdir().unwrap();
    let rec = record(d.path(), 2000);
    let t = both(
        d.path(),
        "spectrum",
        &[
            "spectrum",
            rec.to_str().unwrap(),
            "--tau0",
            "1s",
            "--carrier",
            "10MHz",
        ],
    );
    assert!(t.contains("spectrum of"), "{t}");
    assert!(t.contains("Welch"), "{t}");
    // Without a carrier there is no L(f): a clear error and no file.
    let svg = d.path().join("nocarrier.svg");
    let o = tauwise()
        .args([
            "spectrum",
            rec.to_str().unwrap(),
            "--tau0",
            "1s",
            "--quantity",
            "sy",
            "--plot",
        ])
        .arg(&svg)
        .output()
        .unwrap();
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("--carrier"));
    assert!(!svg.exists());
}

#[test]
fn noise_plot_shows_measured_and_model_curves() {
    let d = tempfile::tempdir().unwrap();
    let rec = record(d.path(), 2000);
    let t = both(
        d.path(),
        "noise",
        &["noise", rec.to_str().unwrap(), "--tau0", "1s"],
    );
    for want in [
        "oadev",
        "mdev",
        "oadev-from-model",
        "mdev-from-model",
        "Dashed",
    ] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
}

#[test]
fn convert_plots_sigma_lf_and_model() {
    let d = tempfile::tempdir().unwrap();
    let lf = lf_table(d.path());
    let lf = lf.to_str().unwrap();
    let t = both(
        d.path(),
        "conv-sigma",
        &[
            "convert",
            "--lf",
            lf,
            "--carrier",
            "10MHz",
            "--to",
            "sigma",
            "--dev",
            "adev,mdev",
        ],
    );
    for want in ["adev-from-lf", "mdev-from-lf", "IEEE Std 1139"] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
    let t = both(
        d.path(),
        "conv-model",
        &["convert", "--lf", lf, "--carrier", "10MHz", "--to", "model"],
    );
    for want in ["fitted power-law model", "h0=1.0000e-22"] {
        assert!(t.contains(want), "missing {want:?} in\n{t}");
    }
    let t = both(
        d.path(),
        "conv-lf",
        &[
            "convert",
            "--model",
            "h0=1e-22,fh=1e3",
            "--carrier",
            "10MHz",
            "--to",
            "lf",
        ],
    );
    assert!(t.contains("model h0=1.0000e-22"), "{t}");
}

/// `stability --plot` with time deviations beside σ_y curves: the σ_y chart
/// in FILE, TDEV on its own chart in FILE-time (same format); with σ_y
/// curves alone no second file.
#[test]
fn stability_plot_puts_time_deviations_on_their_own_chart() {
    let dir = tempfile::tempdir().unwrap();
    let rec = record(dir.path(), 4096);
    let r = rec.to_str().unwrap();
    let text = both(
        dir.path(),
        "sigma",
        &["stability", r, "--tau0", "1s", "--dev", "oadev,tdev"],
    );
    assert!(text.contains("oadev"), "{text}");
    assert!(text.contains("own chart"), "{text}");
    let time = svg_text(&dir.path().join("sigma-time.svg"));
    assert!(
        time.contains("tdev") && time.contains("time deviation"),
        "{time}"
    );
    assert!(!time.contains("oadev"), "{time}");
    check_png(&dir.path().join("sigma-time.png"));
    let only = dir.path().join("only.svg");
    run(&[
        "stability",
        r,
        "--tau0",
        "1s",
        "--plot",
        only.to_str().unwrap(),
    ]);
    assert!(only.exists());
    assert!(!dir.path().join("only-time.svg").exists());
}
