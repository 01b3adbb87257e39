//! Loop weightings and period jitter against analytic results, an
//! independent quadrature in the test, and a seeded Monte Carlo record.

mod common;

use common::{json_of, tauwise, write};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;
use tauwise::record::{PhaseRecord, Record};
use tauwise::spectrum::jitter::{
    integrate_band, record_period_jitter, Band, JitterSetup, PeriodRequest, SecondOrderLoop,
    Weighting,
};
use tauwise::spectrum::welch::{welch_record, WelchOptions};
use tauwise::spectrum::{Quantity, Spectrum};

/// A table L(f) (dBc/Hz) with a slope change, written for the CLI.
const TABLE: &str =
    "offset (Hz),L (dBc/Hz)\n10,-80\n1000,-120\n100000,-140\n1000000,-150\n100000000,-155\n";

/// S_φ(f) of [`TABLE`], interpolated linearly in log f / dB as tauwise does
/// (written out here independently).
fn sphi(f: f64) -> f64 {
    let pts = [
        (10.0f64, -80.0f64),
        (1e3, -120.0),
        (1e5, -140.0),
        (1e6, -150.0),
        (1e8, -155.0),
    ];
    for w in pts.windows(2) {
        let ((f0, l0), (f1, l1)) = (w[0], w[1]);
        if f >= f0 && f <= f1 {
            let l = l0 + (l1 - l0) * (f / f0).log10() / (f1 / f0).log10();
            return 2.0 * 10f64.powf(l / 10.0);
        }
    }
    panic!("{f} outside the table");
}

/// Composite Simpson in ln f with `n` (even) intervals.
fn simpson_log(g: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let (la, lb) = (a.ln(), b.ln());
    let h = (lb - la) / n as f64;
    let mut s = 0.0;
    for i in 0..=n {
        let u = la + h * i as f64;
        let f = u.exp();
        let w = if i == 0 || i == n {
            1.0
        } else if i % 2 == 1 {
            4.0
        } else {
            2.0
        };
        s += w * g(f) * f;
    }
    s * h / 3.0
}

/// The loop difference |H₁e^{−sT} − H₂|² written out from its definition
/// (H(s) = (2ζω_n s + ω_n²)/(s² + 2ζω_n s + ω_n²)) with real arithmetic,
/// integrated against S_φ of the table by Simpson's rule, equals `jitter
/// --filter pll-diff:…` to 1e-6 (independent quadrature).
#[test]
fn loop_difference_matches_an_independent_quadrature() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "lf.csv", TABLE);
    let (f1, z1, f2, z2, t) = (2e6, 0.7, 8e6, 1.1, 3e-9);
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "100MHz",
            "--band",
            "10k:50M",
            "--filter",
            "pll-diff:2MHz:0.7:8MHz:1.1:3ns",
            "--format",
            "json",
        ],
    );
    let got = doc["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    // H(jω) = (wn² + j2ζwnω)/(wn² − ω² + j2ζwnω), as (re, im).
    let h = |fnat: f64, z: f64, f: f64| {
        let (wn, w) = (2.0 * PI * fnat, 2.0 * PI * f);
        let (nr, ni) = (wn * wn, 2.0 * z * wn * w);
        let (dr, di) = (wn * wn - w * w, 2.0 * z * wn * w);
        let d2 = dr * dr + di * di;
        ((nr * dr + ni * di) / d2, (ni * dr - nr * di) / d2)
    };
    let weight = |f: f64| {
        let (a_re, a_im) = h(f1, z1, f);
        let (c, s) = ((2.0 * PI * f * t).cos(), -(2.0 * PI * f * t).sin());
        let (d_re, d_im) = (a_re * c - a_im * s, a_re * s + a_im * c);
        let (b_re, b_im) = h(f2, z2, f);
        (d_re - b_re).powi(2) + (d_im - b_im).powi(2)
    };
    let want = simpson_log(|f| sphi(f) * weight(f), 1e4, 5e7, 400_000);
    assert!((got / want - 1.0).abs() < 1e-6, "{got} {want}");
}

/// The `cdr` weighting equals the independent quadrature of
/// |s²/(s² + 2ζω_n s + ω_n²)|²·S_φ written out in real arithmetic
/// (analytic form, Simpson's rule).
#[test]
fn clock_recovery_weighting_matches_quadrature() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "lf.csv", TABLE);
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "100MHz",
            "--band",
            "10k:50M",
            "--filter",
            "cdr:4MHz:0.8",
            "--format",
            "json",
        ],
    );
    let got = doc["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    let (wn, z) = (2.0 * PI * 4e6, 0.8);
    let weight = |f: f64| {
        let w = 2.0 * PI * f;
        // |−ω²|² / ((wn² − ω²)² + (2ζwnω)²)
        w.powi(4) / ((wn * wn - w * w).powi(2) + (2.0 * z * wn * w).powi(2))
    };
    let want = simpson_log(|f| sphi(f) * weight(f), 1e4, 5e7, 400_000);
    assert!((got / want - 1.0).abs() < 1e-6, "{got} {want}");
}

/// A loop given by bandwidth and peaking is the loop of the converted f_n
/// and ζ (analytic round trip through the CLI's description).
#[test]
fn bandwidth_form_says_the_values_used() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "lf.csv", TABLE);
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "100MHz",
            "--band",
            "10k:50M",
            "--filter",
            "pll:bw=4MHz:peak=0.5dB",
            "--format",
            "json",
        ],
    );
    let described = doc["bands"][0]["filter"].as_str().unwrap();
    assert!(described.contains("bw 4.000 MHz"), "{described}");
    assert!(described.contains("→ fn"), "{described}");
    let l = SecondOrderLoop::from_bandwidth(4e6, 0.5).unwrap();
    let by_fn = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "100MHz",
            "--band",
            "10k:50M",
            "--filter",
            &format!("pll:{}Hz:{}", l.natural_hz, l.damping),
            "--format",
            "json",
        ],
    );
    let (a, b) = (
        doc["bands"][0]["rms_rad"].as_f64().unwrap(),
        by_fn["bands"][0]["rms_rad"].as_f64().unwrap(),
    );
    assert!((a / b - 1.0).abs() < 1e-9, "{a} {b}");
}

/// A filter set file gives the same result as its filters on the command
/// line; two filter files multiply.
#[test]
fn filter_set_and_several_filter_files() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "lf.csv", TABLE);
    let half = write(dir.path(), "half.txt", "1,-3.0103\n1e9,-3.0103\n");
    let set = write(
        dir.path(),
        "link.toml",
        "name = \"example link\"\nfilters = [\"pll:bw=4MHz:peak=0.1dB\", \"cdr:bw=40kHz:peak=0.1dB\"]\nfilter_files = [\"half.txt\"]\n",
    );
    let t = table.to_str().unwrap();
    let base = [
        "--carrier",
        "100MHz",
        "--band",
        "10k:50M",
        "--format",
        "json",
    ];
    let by_set = json_of(
        "jitter",
        &[&[t, "--filters", set.to_str().unwrap()], &base[..]].concat(),
    );
    let by_hand = json_of(
        "jitter",
        &[
            &[
                t,
                "--filter",
                "pll:bw=4MHz:peak=0.1dB",
                "--filter",
                "cdr:bw=40kHz:peak=0.1dB",
                "--filter-file",
                half.to_str().unwrap(),
            ],
            &base[..],
        ]
        .concat(),
    );
    let a = by_set["bands"][0]["rms_rad"].as_f64().unwrap();
    let b = by_hand["bands"][0]["rms_rad"].as_f64().unwrap();
    assert!((a / b - 1.0).abs() < 1e-12, "{a} {b}");
    assert_eq!(by_set["filter_set"], "example link");
    let plain = json_of("jitter", &[&[t], &base[..]].concat());
    let quarter = json_of(
        "jitter",
        &[
            &[
                t,
                "--filter-file",
                half.to_str().unwrap(),
                "--filter-file",
                half.to_str().unwrap(),
            ],
            &base[..],
        ]
        .concat(),
    );
    let ratio = (quarter["bands"][0]["rms_rad"].as_f64().unwrap()
        / plain["bands"][0]["rms_rad"].as_f64().unwrap())
    .powi(2);
    assert!((ratio - 0.25).abs() < 1e-6, "{ratio}");
    // A filter that does not parse names the set file and its line.
    let bad = write(
        dir.path(),
        "bad.toml",
        "name = \"x\"\nfilters = [\n  \"pll:4MHz\",\n]\n",
    );
    let out = tauwise()
        .args(["jitter", t, "--filters", bad.to_str().unwrap()])
        .args(base)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success());
    assert!(
        err.contains("bad.toml:3") && err.contains("filters[1]"),
        "{err}"
    );
}

fn flat_sphi(s0: f64, nu0: f64) -> Spectrum {
    Spectrum::new(vec![1e-3, 1e12], vec![s0, s0], Quantity::Sphi, Some(nu0)).unwrap()
}

fn period_of(spectrum: &Spectrum, band: Band, periods: Option<u32>) -> (f64, f64, Option<f64>) {
    let setup = JitterSetup {
        period: Some(PeriodRequest { periods }),
        ..Default::default()
    };
    let j = integrate_band(spectrum, band, &setup, None).unwrap();
    let p = j.period.unwrap();
    (p.period_rms_s, p.c2c_rms_s, p.n_period_rms_s)
}

/// White phase noise (flat S_φ = S0) over (f1, ν0/2], analytic:
/// σ_x² = (2πν0)⁻²·S0·(ν0/2 − f1);
/// σ_P² = (2πν0)⁻²·S0·[2f − (ν0/π)·sin(2πf/ν0)] → 2σ_x² as f1 → 0;
/// σ_C² = (2πν0)⁻²·S0·16·[3f/8 − ν0/(4π)·sin(2πf/ν0) + ν0/(32π)·sin(4πf/ν0)];
/// σ_N² = (2πν0)⁻²·S0·[2f − ν0/(πN)·sin(2πNf/ν0)].
#[test]
fn period_jitter_of_white_phase_noise() {
    let (s0, nu0, n) = (1e-14, 100e6, 7u32);
    let (f1, f2) = (1.0, nu0 / 2.0);
    let s = flat_sphi(s0, nu0);
    let (p, c, np) = period_of(&s, Band { from: f1, to: f2 }, Some(n));
    let k = s0 / (2.0 * PI * nu0).powi(2);
    let prim_p = |f: f64| 2.0 * f - nu0 / PI * (2.0 * PI * f / nu0).sin();
    let prim_c = |f: f64| {
        16.0 * (3.0 * f / 8.0 - nu0 / (4.0 * PI) * (2.0 * PI * f / nu0).sin()
            + nu0 / (32.0 * PI) * (4.0 * PI * f / nu0).sin())
    };
    let prim_n = |f: f64| 2.0 * f - nu0 / (PI * n as f64) * (2.0 * PI * n as f64 * f / nu0).sin();
    let close = |got: f64, want: f64| (got / want - 1.0).abs() < 1e-8;
    assert!(close(p * p, k * (prim_p(f2) - prim_p(f1))), "{p}");
    assert!(close(c * c, k * (prim_c(f2) - prim_c(f1))), "{c}");
    assert!(close(np.unwrap().powi(2), k * (prim_n(f2) - prim_n(f1))));
    let sigma_x2 = k * (f2 - f1);
    assert!(((p * p) / (2.0 * sigma_x2) - 1.0).abs() < 1e-6);
    // Cycle-to-cycle of white PM: the second difference has variance 6σ_x².
    assert!(((c * c) / (6.0 * sigma_x2) - 1.0).abs() < 1e-6);
}

/// Si(x) = ∫_0^x sin t/t dt by its power series (converges fast for x ≤ π).
fn si(x: f64) -> f64 {
    let mut term = x;
    let mut sum = x;
    for k in 1..40 {
        term *= -x * x / ((2 * k) as f64 * (2 * k + 1) as f64);
        sum += term / (2 * k + 1) as f64;
    }
    sum
}

/// A pure −20 dB/decade segment S_φ = b/f² over [f1, ν0/2], closed form
/// (analytic): with u = πf/ν0, ∫ b/f²·4 sin²(πf/ν0) df
/// = 4b(π/ν0)·[−sin²u/u + Si(2u)] between u1 and π/2.
#[test]
fn period_jitter_of_a_minus_twenty_db_segment() {
    let (nu0, b) = (10e6, 1e-6);
    let (f1, f2) = (100.0, nu0 / 2.0);
    let s = Spectrum::new(
        vec![f1 / 10.0, f2 * 10.0],
        vec![b / (f1 / 10.0).powi(2), b / (f2 * 10.0).powi(2)],
        Quantity::Sphi,
        Some(nu0),
    )
    .unwrap();
    let (p, _, _) = period_of(&s, Band { from: f1, to: f2 }, None);
    let prim = |f: f64| {
        let u = PI * f / nu0;
        -(u.sin().powi(2)) / u + si(2.0 * u)
    };
    let want = 4.0 * b * PI / nu0 * (prim(f2) - prim(f1)) / (2.0 * PI * nu0).powi(2);
    assert!(((p * p) / want - 1.0).abs() < 1e-8, "{} {want}", p * p);
}

/// Record-based and spectrum-based period jitter agree on a seeded record
/// (seeded Monte Carlo): white PM plus white FM, sampled once per period,
/// its Welch spectrum integrated over (its lowest bin, ν0/2] against the
/// record's own edge differences. The two estimate the same quantity; the
/// tolerance (4 %) covers the Welch bias below the lowest bin and the
/// spread of 2^17 differences (~0.4 %).
#[test]
fn record_and_spectrum_period_jitter_agree() {
    let mut rng = ChaCha8Rng::seed_from_u64(17);
    let n = 1 << 17;
    let nu0 = 1e6;
    let tau0 = 1.0 / nu0;
    let wpm = Normal::new(0.0, 2e-12).unwrap();
    let wfm = Normal::new(0.0, 1e-12).unwrap();
    let mut walk = 0.0;
    let x: Vec<f64> = (0..n)
        .map(|_| {
            walk += wfm.sample(&mut rng);
            walk + wpm.sample(&mut rng)
        })
        .collect();
    let direct = record_period_jitter(&x, tau0, nu0, Some(16)).unwrap();
    let rec = Record::Phase(PhaseRecord::new(x, tau0).unwrap());
    let w = welch_record(&rec, &WelchOptions::default()).unwrap();
    let s = w.spectrum(Some(nu0)).unwrap();
    let lo = s.f[0];
    let hi = *s.f.last().unwrap();
    let (p, c, np) = period_of(&s, Band { from: lo, to: hi }, Some(16));
    for (name, a, b) in [
        ("period", p, direct.period_rms_s),
        ("cycle-to-cycle", c, direct.c2c_rms_s),
        ("16 periods", np.unwrap(), direct.n_period_rms_s.unwrap()),
    ] {
        assert!(
            (a / b - 1.0).abs() < 0.04,
            "{name}: spectrum {a} record {b}"
        );
    }
    // Analytic expectation of the record's period jitter:
    // var(x_{k+1} − x_k) = 2σ_wpm² + σ_wfm².
    let want = (2.0 * 4e-24f64 + 1e-24).sqrt();
    assert!((direct.period_rms_s / want - 1.0).abs() < 0.02);
    // One sample per period is required.
    assert!(record_period_jitter(&[0.0; 10], 1e-6, 2e6, None).is_err());
}

/// Weightings combine with period jitter: a low-pass far above ν0/2 leaves
/// it unchanged (analytic).
#[test]
fn weighting_applies_to_period_jitter() {
    let nu0 = 100e6;
    let s = flat_sphi(1e-14, nu0);
    let band = Band {
        from: 1e3,
        to: nu0 / 2.0,
    };
    let plain = period_of(&s, band, None).0;
    let setup = JitterSetup {
        filters: vec![Weighting::LowPass { order: 4, fc: 1e12 }],
        period: Some(PeriodRequest::default()),
        ..Default::default()
    };
    let j = integrate_band(&s, band, &setup, None).unwrap();
    assert!((j.period.unwrap().period_rms_s / plain - 1.0).abs() < 1e-8);
}

/// The DUT key `jitter.filter_set` reads the same set file: its filters and
/// filter files join the band's own; a filter that does not parse in the set
/// names the set file and line.
#[test]
fn dut_filter_set() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "lf.csv", TABLE);
    write(dir.path(), "half.txt", "1,-3.0103\n1e9,-3.0103\n");
    write(
        dir.path(),
        "link.toml",
        "name = \"example link\"\nfilters = [\"pll:4MHz:0.8\"]\nfilter_files = [\"half.txt\"]\n",
    );
    let dut = write(
        dir.path(),
        "unit.toml",
        "[device]\nname = \"unit\"\ncarrier = \"100MHz\"\n\n[[phase_noise]]\npath = \"lf.csv\"\n\n\
         [[jitter]]\nband = \"10k:50M\"\nfilters = [\"cdr:40kHz:0.7\"]\nfilter_set = \"link.toml\"\n",
    );
    let d = tauwise::io::dut::Dut::read(&dut).unwrap();
    let j = &d.jitter[0];
    assert_eq!(j.filters.len(), 2);
    assert!(matches!(j.filters[1], Weighting::Pll(_)));
    assert_eq!(j.filter_files.len(), 1);
    assert_eq!(j.filter_set.as_ref().unwrap().1, "example link");
    write(
        dir.path(),
        "link.toml",
        "name = \"example link\"\nfilters = [\n  \"pll:4MHz\",\n]\n",
    );
    let e = tauwise::io::dut::Dut::read(&dut).unwrap_err().to_string();
    assert!(e.contains("link.toml:3"), "{e}");
}
