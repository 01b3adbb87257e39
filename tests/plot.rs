//! Charts: every chart family renders to a valid SVG and to a PNG that
//! decodes, has the requested size and is not blank; PNG text needs no system
//! font. Curves are built from the IEEE Std 1139 power-law closed forms
//! (analytic), so the pictures show something meaningful.

use std::path::Path;
use tauwise::deviation::{Estimator, Origin};
use tauwise::model::PowerLaw;
use tauwise::plot::holdover::HoldoverPlot;
use tauwise::plot::phase_noise::{BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::plot::stability::{NoiseRegion, SigmaCurve, StabilityPlot};
use tauwise::plot::wander::{MaskLine, Metric, WanderPlot};
use tauwise::plot::{self, Chart, XY};

fn model() -> PowerLaw {
    let mut m = PowerLaw::zero(0.5);
    m.set(2, 1e-24);
    m.set(0, 4e-23);
    m.set(-1, 1e-26);
    m.set(-2, 1e-31);
    m
}

fn stability_chart(title: &str) -> Chart {
    let m = model();
    let taus: Vec<f64> = (0..17).map(|k| 2f64.powi(k)).collect();
    let pts = |f: &dyn Fn(f64) -> f64, spread: f64| -> Vec<XY> {
        taus.iter()
            .map(|&t| {
                let v = f(t);
                XY::with_interval(
                    t,
                    v,
                    Some(v / (1.0 + spread * t.sqrt() / 40.0)),
                    Some(v * (1.0 + spread * t.sqrt() / 30.0)),
                )
            })
            .collect()
    };
    StabilityPlot {
        title: title.into(),
        curves: vec![
            SigmaCurve {
                name: "oadev".into(),
                estimator: Estimator::Oadev,
                origin: Origin::Measured,
                points: pts(&|t| m.avar(t).sqrt(), 0.3),
            },
            SigmaCurve {
                name: "mdev".into(),
                estimator: Estimator::Mdev,
                origin: Origin::Measured,
                points: pts(&|t| m.mvar(t, 1.0).sqrt(), 0.4),
            },
            SigmaCurve {
                name: "oadev-from-lf".into(),
                estimator: Estimator::Oadev,
                origin: Origin::FromLf,
                points: taus
                    .iter()
                    .take(8)
                    .map(|&t| XY::new(t, m.avar(t).sqrt() * 1.05))
                    .collect(),
            },
        ],
        regions: vec![
            NoiseRegion {
                from: 0.7,
                to: 3.0,
                label: "WPM".into(),
            },
            NoiseRegion {
                from: 3.0,
                to: 600.0,
                label: "WFM".into(),
            },
            NoiseRegion {
                from: 600.0,
                to: 8000.0,
                label: "FFM".into(),
            },
            NoiseRegion {
                from: 8000.0,
                to: 9e4,
                label: "RWFM".into(),
            },
        ],
        confidence: Some(0.683),
        notes: vec![
            "Curves from the IEEE Std 1139 closed forms of a four-term power-law model.".into(),
        ],
    }
    .chart()
}

fn phase_noise_chart() -> Chart {
    let m = model();
    let nu0 = 10e6;
    let mut fh = m;
    fh.f_h = 2e7;
    let offsets: Vec<f64> = (0..=35).map(|k| 10f64.powf(k as f64 / 5.0)).collect();
    PhaseNoisePlot {
        title: "unit <a> & \"b\"".into(),
        carrier: Some(nu0),
        traces: vec![
            LfTrace {
                name: "table".into(),
                kind: TraceKind::Table,
                points: offsets
                    .iter()
                    .map(|&f| (f, fh.lf(f, nu0) + 0.5 * (f.ln()).sin()))
                    .collect(),
            },
            LfTrace {
                name: "model".into(),
                kind: TraceKind::Model,
                points: offsets.iter().map(|&f| (f, fh.lf(f, nu0))).collect(),
            },
        ],
        bands: vec![
            BandMark {
                from: 12e3,
                to: 5e6,
                label: "12 kHz–5 MHz: 0.21 ps".into(),
            },
            BandMark {
                from: 1e3,
                to: 1e5,
                label: "1–100 kHz".into(),
            },
        ],
        notes: vec![tauwise::DECISION_CAUTION.into()],
    }
    .chart()
}

fn wander_chart() -> Chart {
    let taus: Vec<f64> = (0..=40).map(|k| 10f64.powf(k as f64 / 10.0)).collect();
    let mask = |t: f64| {
        if t <= 1.0 {
            40e-9
        } else if t <= 100.0 {
            40e-9 * t.powf(0.1)
        } else {
            25.25e-9 * t.powf(0.2)
        }
    };
    let measured: Vec<(f64, f64)> = taus.iter().map(|&t| (t, 5e-9 * t.powf(0.45))).collect();
    let violations = measured
        .iter()
        .copied()
        .filter(|&(t, v)| v > mask(t))
        .collect();
    WanderPlot {
        title: "TIE capture".into(),
        metric: Metric::Mtie,
        measured,
        masks: vec![MaskLine {
            name: "example".into(),
            limit: taus.iter().map(|&t| (t, mask(t))).collect(),
            violations,
        }],
        notes: vec!["Mask values for illustration only.".into()],
    }
    .chart()
}

fn holdover_chart() -> Chart {
    let t: Vec<f64> = (0..=96).map(|k| k as f64 * 900.0).collect();
    // docs/checks.md §G (analytic): ½·D·t² with D = 1e-10/day; random part ~ sqrt(h0 t / 2).
    let d = 1e-10 / 86400.0;
    let det: Vec<f64> = t.iter().map(|&s| 0.5 * d * s * s).collect();
    // Random part widened for a readable picture: 0.4 µs·sqrt(t / 1 day).
    let rnd: Vec<f64> = t.iter().map(|&s| 0.4e-6 * (s / 86400.0).sqrt()).collect();
    let p50: Vec<f64> = det.iter().zip(&rnd).map(|(a, b)| a + 0.67 * b).collect();
    let p95: Vec<f64> = det.iter().zip(&rnd).map(|(a, b)| a + 1.96 * b).collect();
    let p99: Vec<f64> = det.iter().zip(&rnd).map(|(a, b)| a + 2.58 * b).collect();
    let budget = 1.5e-6;
    let holds = t
        .iter()
        .zip(&p95)
        .find(|(_, v)| **v > budget)
        .map(|(t, _)| *t);
    HoldoverPlot {
        title: "holdover".into(),
        t,
        deterministic: det,
        p50,
        p95,
        p99,
        budget: Some(budget),
        holds_for: holds,
        span: 86400.0,
        notes: vec![tauwise::DECISION_CAUTION.into()],
        observed: vec![],
    }
    .chart()
}

fn all_charts() -> Vec<(&'static str, Chart)> {
    vec![
        ("stability", stability_chart("ocxo <test>")),
        ("phase-noise", phase_noise_chart()),
        ("wander", wander_chart()),
        ("holdover", holdover_chart()),
    ]
}

fn check_svg(text: &str, size: (u32, u32)) {
    let doc = roxmltree::Document::parse(text).expect("SVG parses as XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(root.attribute("width"), Some(size.0.to_string().as_str()));
    assert_eq!(root.attribute("height"), Some(size.1.to_string().as_str()));
    let paths = root
        .descendants()
        .filter(|n| {
            matches!(
                n.tag_name().name(),
                "polyline" | "path" | "line" | "polygon"
            )
        })
        .count();
    assert!(paths > 20, "only {paths} drawn elements");
    assert!(root.descendants().any(|n| n.tag_name().name() == "text"));
}

/// Decode a PNG and return (width, height, distinct colours, share of
/// non-background pixels).
fn decode_png(bytes: &[u8]) -> (u32, u32, usize, f64) {
    let dec = png::Decoder::new(bytes);
    let mut reader = dec.read_info().expect("PNG header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("PNG frame");
    let ch = info.color_type.samples();
    let px = &buf[..info.buffer_size()];
    let mut colours = std::collections::HashSet::new();
    let mut ink = 0usize;
    for p in px.chunks(ch) {
        colours.insert((p[0], p[1], p[2]));
        if p[..3] != [255, 255, 255] {
            ink += 1;
        }
    }
    (
        info.width,
        info.height,
        colours.len(),
        ink as f64 / (px.len() / ch) as f64,
    )
}

#[test]
fn every_chart_renders_valid_svg() {
    for (name, chart) in all_charts() {
        let svg = plot::to_svg_string(&chart, (960, 600)).unwrap_or_else(|e| panic!("{name}: {e}"));
        check_svg(&svg, (960, 600));
        // For looking at the pictures by eye: TAUWISE_PLOT_DUMP=/some/dir.
        if let Ok(dir) = std::env::var("TAUWISE_PLOT_DUMP") {
            let d = Path::new(&dir);
            plot::render(&chart, &d.join(format!("{name}.svg")), (960, 600)).unwrap();
            plot::render(&chart, &d.join(format!("{name}.png")), (960, 600)).unwrap();
        }
    }
}

#[test]
fn svg_escapes_text_from_the_input() {
    let svg =
        plot::to_svg_string(&stability_chart("<script>alert(1)</script>"), (800, 500)).unwrap();
    assert!(!svg.contains("<script>"));
    assert!(svg.contains("&lt;script&gt;"));
    roxmltree::Document::parse(&svg).unwrap();
}

#[test]
fn every_chart_renders_a_png_of_the_requested_size() {
    for (name, chart) in all_charts() {
        for size in [(960, 600), (640, 420)] {
            let bytes = plot::to_png_bytes(&chart, size).unwrap_or_else(|e| panic!("{name}: {e}"));
            let (w, h, colours, ink) = decode_png(&bytes);
            assert_eq!((w, h), size, "{name}");
            assert!(colours > 20, "{name}: only {colours} colours");
            assert!(ink > 0.2, "{name}: {ink} of pixels drawn");
        }
    }
}

#[test]
fn render_picks_format_by_extension_and_writes_atomically() {
    let dir = tempfile::tempdir().unwrap();
    let chart = stability_chart("x");
    let svg = dir.path().join("a.svg");
    let png_path = dir.path().join("a.PNG");
    plot::render(&chart, &svg, (700, 450)).unwrap();
    plot::render(&chart, &png_path, (700, 450)).unwrap();
    check_svg(&std::fs::read_to_string(&svg).unwrap(), (700, 450));
    assert_eq!(decode_png(&std::fs::read(&png_path).unwrap()).0, 700);
    // Bad extension and bad size are errors, and nothing is written.
    let bad = dir.path().join("a.jpg");
    let e = plot::render(&chart, &bad, (700, 450))
        .unwrap_err()
        .to_string();
    assert!(e.contains("a.jpg") && e.contains(".svg"), "{e}");
    assert!(plot::render(&chart, &dir.path().join("b.svg"), (10, 10)).is_err());
    assert!(!dir.path().join("b.svg").exists());
    let left: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(left.len(), 2, "{left:?}");
    assert!(plot::render(
        &chart,
        Path::new("/nonexistent-dir-tauwise/x.svg"),
        (700, 450)
    )
    .is_err());
}

/// Text pixels come from the embedded font: the title band of the canvas has
/// ink when there is a title, and next to none when the title is a dot
/// (same layout).
#[test]
fn png_text_is_drawn_from_the_embedded_font() {
    fn title_ink(c: &Chart) -> usize {
        let bytes = plot::to_png_bytes(c, (800, 500)).unwrap();
        let mut reader = png::Decoder::new(&bytes[..]).read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size()];
        let info = reader.next_frame(&mut buf).unwrap();
        let row = info.width as usize * 3;
        // The first 24 rows hold only the title.
        buf[..24 * row].chunks(3).filter(|p| p[0] < 200).count()
    }
    let mut a = holdover_chart();
    a.title = "Holdover of the unit under test, 24 h span".into();
    a.subtitle.clear();
    let mut b = a.clone();
    b.title = ".".into();
    let (ia, ib) = (title_ink(&a), title_ink(&b));
    assert!(ia > 300, "title drew {ia} dark pixels");
    assert!(ia > 20 * ib, "{ia} vs {ib}");
}

/// A PNG renders in a process that has no usable fontconfig: the test binary
/// re-runs itself with FONTCONFIG_FILE/FONTCONFIG_PATH pointing at an empty
/// directory and HOME/XDG dirs emptied, and renders there.
#[test]
fn png_renders_with_no_system_fonts() {
    if let Ok(out) = std::env::var("TAUWISE_PLOT_CHILD_OUT") {
        let bytes = plot::to_png_bytes(&phase_noise_chart(), (640, 400)).unwrap();
        std::fs::write(out, bytes).unwrap();
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let empty = dir.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    let out = dir.path().join("child.png");
    let exe = std::env::current_exe().unwrap();
    let status = std::process::Command::new(exe)
        .args([
            "--exact",
            "png_renders_with_no_system_fonts",
            "--test-threads=1",
        ])
        .env("TAUWISE_PLOT_CHILD_OUT", &out)
        .env("FONTCONFIG_FILE", empty.join("fonts.conf"))
        .env("FONTCONFIG_PATH", &empty)
        .env("HOME", &empty)
        .env("XDG_DATA_HOME", &empty)
        .env("XDG_DATA_DIRS", &empty)
        .env("XDG_CONFIG_HOME", &empty)
        .status()
        .unwrap();
    assert!(status.success());
    let (w, h, colours, ink) = decode_png(&std::fs::read(&out).unwrap());
    assert_eq!((w, h), (640, 400));
    assert!(colours > 20 && ink > 0.2);
}
