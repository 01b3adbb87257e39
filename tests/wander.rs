//! Wander: MTIE, TDEV, TIE statistics and masks against outside values.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::path::Path;
use tauwise::deviation::{compute, reference, Estimate, Estimator};
use tauwise::limits::{parse_limit_file, write_limit_file};
use tauwise::verdict::{Coverage, Verdict};
use tauwise::wander::masks::{builtin, Mask, Metric, Shape, BUILTIN_NAMES, FROM_MEMORY_NOTE};
use tauwise::wander::{analyse, tie, Options};
use tauwise::PhaseRecord;

fn random_walk(n: usize, seed: u64, gaps: &[usize]) -> PhaseRecord {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut x = Vec::with_capacity(n);
    let mut acc = 0.0;
    for _ in 0..n {
        acc += rng.gen_range(-1.0..1.0) * 1e-9;
        x.push(acc + rng.gen_range(-1.0..1.0) * 3e-10);
    }
    for &g in gaps {
        x[g] = f64::NAN;
    }
    PhaseRecord::new(x, 0.25).unwrap()
}

/// Fast MTIE = direct window scan (ITU-T G.810 definition; deviation::reference) on random data,
/// many window lengths, with and without gaps.
#[test]
fn mtie_fast_equals_direct_scan() {
    let ms: Vec<usize> = (1..=64)
        .chain([65, 100, 127, 128, 129, 255, 256, 257, 500, 999, 1500, 1999])
        .collect();
    for (seed, gaps) in [
        (1u64, vec![]),
        (2, vec![3, 400, 401, 402, 1500]),
        (3, vec![0, 1999]),
    ] {
        let r = random_walk(2000, seed, &gaps);
        let fast = compute(Estimator::Mtie, &r, &ms);
        let direct: Vec<Estimate> = ms
            .iter()
            .filter_map(|&m| reference::mtie(&r.x, r.tau0, m))
            .collect();
        assert_eq!(fast.len(), direct.len());
        for (a, b) in fast.iter().zip(&direct) {
            assert_eq!((a.m, a.terms), (b.m, b.terms));
            assert_eq!(a.value, b.value, "m = {}", a.m);
        }
    }
}

/// Fast TDEV = the textbook sum of NIST SP 1065 (deviation::reference) on random data with
/// gaps, and with a large phase offset and frequency drift added.
#[test]
fn tdev_fast_equals_double_sum() {
    let ms: Vec<usize> = (1..=40).chain([50, 64, 100, 200, 333]).collect();
    for (seed, gaps) in [(4u64, vec![]), (5, vec![10, 11, 700, 999])] {
        let mut r = random_walk(1000, seed, &gaps);
        for (i, v) in r.x.iter_mut().enumerate() {
            let t = i as f64 * 0.25;
            *v += 3.0 + 1e-6 * t + 1e-9 * t * t;
        }
        let fast = compute(Estimator::Tdev, &r, &ms);
        let direct: Vec<Estimate> = ms
            .iter()
            .filter_map(|&m| reference::tdev(&r.x, r.tau0, m))
            .collect();
        assert_eq!(fast.len(), direct.len());
        for (a, b) in fast.iter().zip(&direct) {
            assert_eq!((a.m, a.terms), (b.m, b.terms));
            assert!(
                (a.value - b.value).abs() <= 1e-6 * b.value,
                "m = {}: {} vs {}",
                a.m,
                a.value,
                b.value
            );
        }
    }
}

/// NIST SP 1065 nine-point set (docs/checks.md §A, from memory): TDEV(τ0) = 52.67135.
#[test]
fn tdev_nine_point_set() {
    let y = [
        892.0, 809.0, 823.0, 798.0, 671.0, 644.0, 883.0, 903.0, 677.0,
    ];
    let mut x = vec![0.0];
    for v in y {
        x.push(x.last().unwrap() + v);
    }
    let r = PhaseRecord::new(x, 1.0).unwrap();
    let e = compute(Estimator::Tdev, &r, &[1]);
    assert!((e[0].value - 52.67135).abs() < 5e-5, "{}", e[0].value);
}

/// docs/checks.md §F (analytic): a phase ramp x = y0·t has MTIE(τ) = y0·τ; a
/// sinusoid A·sin(2πt/P) has MTIE(τ) = 2A for τ ≥ P/2.
#[test]
fn mtie_ramp_and_sinusoid() {
    let y0 = 2.5e-8;
    let tau0 = 0.5;
    let ramp = PhaseRecord::new((0..5000).map(|i| y0 * i as f64 * tau0).collect(), tau0).unwrap();
    for e in compute(Estimator::Mtie, &ramp, &[1, 7, 100, 4999]) {
        assert!(
            (e.value - y0 * e.tau).abs() < 1e-12 * y0 * e.tau,
            "τ = {}",
            e.tau
        );
    }
    let (a, p) = (40e-9, 100usize); // P = 100 samples; samples hit ±A exactly
    let sine = PhaseRecord::new(
        (0..2000)
            .map(|i| a * (2.0 * std::f64::consts::PI * i as f64 / p as f64).sin())
            .collect(),
        1.0,
    )
    .unwrap();
    for e in compute(Estimator::Mtie, &sine, &[50, 51, 80, 100, 1000]) {
        assert!((e.value - 2.0 * a).abs() < 1e-12 * a, "τ = {}", e.tau);
    }
    // Below P/2 the window cannot hold both extremes: MTIE < 2A.
    let short = compute(Estimator::Mtie, &sine, &[10]);
    assert!(short[0].value < 2.0 * a * 0.9);
}

fn mask(name: &str, metric: Metric) -> Mask {
    builtin(name)
        .unwrap()
        .into_iter()
        .find(|m| m.metric == metric)
        .unwrap()
}

/// Every built-in mask at and between its breakpoints equals the formulas of
/// docs/checks.md §F (ITU-T G.811, G.8272, G.8262 — values from memory).
#[test]
fn builtin_masks_equal_the_recalled_tables() {
    type F = fn(f64) -> Option<f64>;
    let cases: Vec<(&str, Metric, F, Vec<f64>)> = vec![
        // G.811 MTIE, from memory
        (
            "g811",
            Metric::Mtie,
            |t| {
                if t > 0.1 && t <= 1000.0 {
                    Some((0.275e-3 * t + 0.025) * 1e-6)
                } else if t > 1000.0 {
                    Some((1e-5 * t + 0.29) * 1e-6)
                } else {
                    None
                }
            },
            vec![0.1, 1.0, 1000.0, 1e5],
        ),
        // G.811 TDEV, from memory
        (
            "g811",
            Metric::Tdev,
            |t| {
                if t > 0.1 && t <= 100.0 {
                    Some(3e-9)
                } else if t > 100.0 && t <= 1000.0 {
                    Some(0.03 * t * 1e-9)
                } else if t > 1000.0 && t <= 10000.0 {
                    Some(30e-9)
                } else {
                    None
                }
            },
            vec![0.1, 100.0, 1000.0, 10000.0],
        ),
        // G.8272 PRTC-A MTIE, from memory
        (
            "g8272-prtc-a",
            Metric::Mtie,
            |t| {
                if t > 0.1 && t <= 273.0 {
                    Some((0.275e-3 * t + 0.025) * 1e-6)
                } else if t > 273.0 {
                    Some(0.10e-6)
                } else {
                    None
                }
            },
            vec![0.1, 273.0, 1e4],
        ),
        // G.8272 PRTC-A TDEV = G.811 TDEV, from memory
        (
            "g8272-prtc-a",
            Metric::Tdev,
            |t| {
                if t > 0.1 && t <= 100.0 {
                    Some(3e-9)
                } else if t > 100.0 && t <= 1000.0 {
                    Some(0.03 * t * 1e-9)
                } else if t > 1000.0 && t <= 10000.0 {
                    Some(30e-9)
                } else {
                    None
                }
            },
            vec![0.1, 100.0, 1000.0, 10000.0],
        ),
        // G.8262 option 1 MTIE, from memory
        (
            "g8262-opt1",
            Metric::Mtie,
            |t| {
                if t > 0.1 && t <= 1.0 {
                    Some(40e-9)
                } else if t > 1.0 && t <= 100.0 {
                    Some(40.0 * t.powf(0.1) * 1e-9)
                } else if t > 100.0 && t <= 1000.0 {
                    Some(25.25 * t.powf(0.2) * 1e-9)
                } else {
                    None
                }
            },
            vec![0.1, 1.0, 100.0, 1000.0],
        ),
        // G.8262 option 1 TDEV, from memory
        (
            "g8262-opt1",
            Metric::Tdev,
            |t| {
                if t > 0.1 && t <= 25.0 {
                    Some(3.2e-9)
                } else if t > 25.0 && t <= 100.0 {
                    Some(0.64 * t.sqrt() * 1e-9)
                } else if t > 100.0 && t <= 1000.0 {
                    Some(6.4e-9)
                } else {
                    None
                }
            },
            vec![0.1, 25.0, 100.0, 1000.0],
        ),
    ];
    for (name, metric, want, breaks) in cases {
        let m = mask(name, metric);
        assert!(m.source_note.contains(FROM_MEMORY_NOTE));
        let mut taus: Vec<f64> = Vec::new();
        for w in breaks.windows(2) {
            // at, just around, and between breakpoints
            taus.extend([
                w[0],
                w[0] * 1.0001,
                (w[0] * w[1]).sqrt(),
                w[1] * 0.9999,
                w[1],
                w[1] * 1.0001,
            ]);
        }
        taus.extend([0.05, 0.1, 1e6]);
        for t in taus {
            let (got, exp) = (m.limit(t), want(t));
            match (got, exp) {
                (Some(g), Some(e)) => assert!(
                    (g - e).abs() <= 1e-12 * e,
                    "{name} {metric:?} τ={t}: {g} vs {e}"
                ),
                (None, None) => {}
                _ => panic!("{name} {metric:?} τ={t}: {got:?} vs {exp:?}"),
            }
        }
    }
}

/// A frequency offset y0 gives MTIE = y0·τ (analytic); against G.8262
/// option 1 (40·τ^0.1 ns for 1 < τ ≤ 100 s, from memory) it first fails at
/// τ* = (40 ns / y0)^(1/0.9), found here by the whole analysis chain.
#[test]
fn ramp_fails_the_mask_at_the_analytic_tau() {
    let y0 = 2e-8;
    let tau0 = 0.125;
    let n = 20_001;
    let rec =
        PhaseRecord::new((0..n).map(|i| 1e-6 + y0 * i as f64 * tau0).collect(), tau0).unwrap();
    let masks = builtin("g8262-opt1").unwrap();
    let res = analyse(&rec, &Options::default(), &masks).unwrap();
    let c = res
        .checks
        .iter()
        .find(|c| c.metric == Metric::Mtie)
        .unwrap();
    assert_eq!(c.judgement.verdict, Verdict::Exceeds);
    // τ0 = 0.125 s > 0.1 s, the mask's start: partial coverage, said so.
    assert_eq!(c.judgement.coverage, Coverage::Partial);
    let tau_star = (40e-9 / y0).powf(1.0 / 0.9); // analytic
    let got = c.crossing_tau.unwrap();
    assert!(
        (got - tau_star).abs() < 1e-9 * tau_star,
        "{got} vs {tau_star}"
    );
    // Every measured τ above τ* violates, none below.
    for e in &res.mtie {
        if e.tau <= 0.1 || e.tau > 1000.0 {
            continue;
        }
        let listed = c.violations.iter().any(|v| v.tau == e.tau);
        assert_eq!(listed, e.tau > tau_star, "τ = {}", e.tau);
    }
    // Worst ratio: y0·τ / limit is largest at the longest τ checked.
    let worst = c.worst_tau.unwrap();
    assert_eq!(worst, c.checked_range.unwrap().to.unwrap());
    // The check reaches the mask's end, 1000 s (the record spans 2500 s).
    assert_eq!(worst, 1000.0);
    assert!((c.worst_margin_db.unwrap() + 20.0 * c.worst_ratio.unwrap().log10()).abs() < 1e-12);
    // With the offset removed, the ramp is gone and the mask passes.
    let opts = Options {
        remove_offset: true,
        ..Options::default()
    };
    let res2 = analyse(&rec, &opts, &masks).unwrap();
    assert!((res2.tie.offset_removed.unwrap() - y0).abs() < 1e-12 * y0);
    assert!(res2
        .checks
        .iter()
        .all(|c| c.judgement.verdict == Verdict::Meets));
    // A record far shorter than the mask's start checks nothing: not judged.
    let tiny = PhaseRecord::new((0..100).map(|i| i as f64 * 1e-12).collect(), 1e-4).unwrap();
    let r3 = analyse(&tiny, &Options::default(), &masks).unwrap();
    assert!(r3.checks.iter().all(|c| {
        c.judgement.verdict == Verdict::NotJudged && c.judgement.coverage == Coverage::None
    }));
}

const SAMPLE_FILE: &str = r#"
# lab limit
name = "lab-limit"
note = "operator's internal limit, draft 3"

[[limit]]
metric = "mtie"
shape = "loglog"
points = [
  ["0.1s", "40ns"],
  ["1s", "40ns"],     # flat to 1 s
  ["100s", "63.4ns"],
  ["1000s", "0.1us"],
]

[[limit]]
metric = "tdev"
shape = "step"
points = [["0.1s", "3ns"], ["100s", "3ns"], ["1000s", "30ns"]]
"#;

/// A user limit file gives wander masks that round-trip through write and
/// parse, and reads as documented (docs/limit-file.md).
#[test]
fn mask_file_round_trip() {
    let p = Path::new("lab.toml");
    let file = parse_limit_file(SAMPLE_FILE, p).unwrap();
    let masks = file.masks();
    assert_eq!(masks.len(), 2);
    assert_eq!(masks[0].name, "lab-limit");
    assert_eq!(masks[0].source_note, "operator's internal limit, draft 3");
    assert_eq!(masks[0].metric, Metric::Mtie);
    assert!(matches!(&masks[0].shape, Shape::LogLog(r) if r.len() == 4));
    assert!((masks[0].limit(0.5).unwrap() - 40e-9).abs() < 1e-20);
    assert!((masks[1].limit(50.0).unwrap() - 3e-9).abs() < 1e-20);
    assert!((masks[1].limit(100.5).unwrap() - 30e-9).abs() < 1e-20);
    let text = write_limit_file(&file).unwrap();
    let again = parse_limit_file(&text, p).unwrap().masks();
    assert_eq!(again, masks);
    // Every TOML block in docs/limit-file.md parses.
    let doc = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/docs/limit-file.md"))
        .unwrap();
    let blocks: Vec<&str> = doc
        .split("```toml")
        .skip(1)
        .map(|b| b.split("```").next().unwrap())
        .collect();
    assert!(blocks.len() >= 2);
    for b in blocks {
        parse_limit_file(b, p).unwrap_or_else(|e| panic!("{e}\n{b}"));
    }
}

/// Bad input: clear errors naming the file, the line and what was expected
/// (the wander cases; every metric's in tests/limits.rs).
#[test]
fn bad_masks() {
    let e = builtin("g8275").unwrap_err().to_string();
    for n in BUILTIN_NAMES {
        assert!(e.contains(n), "{e}");
    }
    let p = Path::new("my.toml");
    let head = "[[limit]]\nmetric = \"mtie\"\n";
    let dec = format!("{head}shape = \"step\"\npoints = [\n [\"1s\", \"40ns\"],\n [\"10s\", \"50ns\"],\n [\"5s\", \"60ns\"],\n]\n");
    let e = parse_limit_file(&dec, p).unwrap_err().to_string();
    assert!(e.starts_with("my.toml:7:"), "{e}");
    assert!(e.contains("increas"), "{e}");
    for (text, line, word) in [
        (
            "shape = \"curvy\"\npoints = [[\"1s\", \"4ns\"]]\n",
            3,
            "step",
        ),
        (
            "[[limit]]\nmetric = \"phase\"\npoints = [[\"1s\", \"4ns\"]]\n",
            2,
            "mtie",
        ),
        ("points = [[\"1s\", \"forty\"]]\n", 3, "limit"),
        ("points = [[\"1s\", \"40ns\", \"3\"]]\n", 3, "pair"),
        ("points = [[\"-1s\", \"40ns\"]]\n", 3, "positive"),
        // Issue 12: a bare number decides a verdict and is refused …
        ("points = [[\"1\", \"40ns\"]]\n", 3, "give a unit"),
        ("points = [[\"1s\", \"40e-9\"]]\n", 3, "give a unit"),
        // … and a subnormal limit would make value/limit overflow.
        ("points = [[\"1s\", \"1e-320s\"]]\n", 3, "positive"),
    ] {
        let full = if text.starts_with("[[limit]]") {
            text.to_string()
        } else {
            format!("{head}{text}")
        };
        let e = parse_limit_file(&full, p).unwrap_err().to_string();
        assert!(e.starts_with(&format!("my.toml:{line}:")), "{text:?}: {e}");
        assert!(e.contains(word), "{text:?}: {e}");
    }
    assert!(parse_limit_file("# nothing\n", p)
        .unwrap_err()
        .to_string()
        .contains("no [[limit]]"));
}

/// TIE statistics of a ramp plus a constant (analytic): TIE_i = y0·t_i.
#[test]
fn tie_statistics() {
    let (y0, tau0, n) = (1e-9, 2.0, 101);
    let r = PhaseRecord::new((0..n).map(|i| 5e-6 + y0 * i as f64 * tau0).collect(), tau0).unwrap();
    let s = tie::tie_stats(&r, false).unwrap();
    let last = y0 * (n - 1) as f64 * tau0;
    assert!((s.max_abs - last).abs() < 1e-15 && (s.pk_pk - last).abs() < 1e-15);
    // rms of y0·τ0·i, i = 0 … n−1: y0·τ0·sqrt((n−1)(2n−1)/6) (analytic)
    let rms = y0 * tau0 * (((n - 1) * (2 * n - 1)) as f64 / 6.0).sqrt();
    assert!((s.rms - rms).abs() < 1e-12 * rms);
    let s2 = tie::tie_stats(&r, true).unwrap();
    assert!((s2.offset_removed.unwrap() - y0).abs() < 1e-9 * y0);
    assert!(s2.max_abs < 1e-15);
}

/// The block-pruned MTIE (m ≥ 64) equals the direct window scan of the
/// ITU-T G.810 definition (deviation::reference) on records where pruning
/// bites (white phase plus a random walk, with and without gaps) and where it
/// cannot (a steady ramp, all windows alike), at many m across block-size
/// boundaries.
#[test]
fn pruned_mtie_equals_direct_scan_on_longer_records() {
    let n = 30_000;
    let ms = [63usize, 64, 65, 71, 127, 128, 200, 513, 1000, 2047, 2999];
    let mut ramp = PhaseRecord::new((0..n).map(|i| 1e-9 * i as f64).collect(), 1.0).unwrap();
    ramp.x[7777] = f64::NAN;
    let mut spiky = random_walk(n, 9, &[]);
    spiky.x[12_345] += 5e-7; // one outlier that sets every MTIE
    for r in [
        random_walk(n, 7, &[]),
        random_walk(n, 8, &[5, 6, 7, 15_000, 29_999]),
        spiky,
        ramp,
    ] {
        let fast = compute(Estimator::Mtie, &r, &ms);
        let direct: Vec<Estimate> = ms
            .iter()
            .filter_map(|&m| reference::mtie(&r.x, r.tau0, m))
            .collect();
        assert_eq!(fast.len(), direct.len());
        for (a, b) in fast.iter().zip(&direct) {
            assert_eq!((a.m, a.terms), (b.m, b.terms));
            assert_eq!(a.value, b.value, "m = {}", a.m);
        }
    }
}
