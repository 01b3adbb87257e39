//! Holdover prediction against analytic results.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use tauwise::holdover::aging::{Aging, AgingModel};
use tauwise::holdover::paths::NoisePaths;
use tauwise::holdover::{
    fit_noise, model_from_record, predict, FromRecord, HoldoverModel, Settings,
};
use tauwise::model::PowerLaw;
use tauwise::verdict::Verdict;
use tauwise::{FrequencyRecord, Record};

const DAY: f64 = 86400.0;

fn quiet(te0: f64, y0: f64, d: f64) -> HoldoverModel {
    HoldoverModel {
        te0,
        y0,
        y0_sigma: 0.0,
        aging: Aging::Linear {
            c: 0.0,
            d,
            d_sigma: 0.0,
        },
        start: 0.0,
        temp_worst: 0.0,
        noise: PowerLaw::zero(0.5),
        uncertainty: Default::default(),
    }
}

/// docs/checks.md §G (analytic): with no noise TE(t) = te0 + y0·t + ½·D·t², and
/// D = 1e−10/day over 24 h alone gives 4.32 µs.
#[test]
fn no_noise_is_the_closed_form() {
    let d = 1e-10 / DAY;
    let m = quiet(0.0, 0.0, d);
    let mut s = Settings::new(DAY, 5e-6);
    s.paths = 100;
    let p = predict(&m, &s).unwrap();
    let end = p.te.last().unwrap();
    assert_eq!(end.t, DAY);
    assert!(
        (end.deterministic - 4.32e-6).abs() < 1e-15,
        "{}",
        end.deterministic
    );
    assert!((end.p95 - 4.32e-6).abs() < 1e-15);
    assert_eq!(p.judgement.verdict, Verdict::Meets);
    assert_eq!(p.holds_for, None);

    let (te0, y0) = (-2e-7, 3e-12);
    let m = quiet(te0, y0, d);
    let p = predict(&m, &s).unwrap();
    for pt in &p.te {
        let t = pt.t;
        let want = te0 + y0 * t + 0.5 * d * t * t;
        assert!((pt.deterministic - want).abs() < 1e-18, "t = {t}");
        for q in [pt.p50, pt.p95, pt.p99] {
            assert!((q - want.abs()).abs() < 1e-18, "t = {t}");
        }
    }
    // A 3 µs budget: the crossing is the root of te0 + y0·t + ½Dt² = 3 µs
    // (|TE| grows through it), found by the quadratic formula (analytic).
    s.budget = 3e-6;
    let p = predict(&m, &s).unwrap();
    let (a, b, c) = (0.5 * d, y0, te0 - 3e-6);
    let root = (-b + (b * b - 4.0 * a * c).sqrt()) / (2.0 * a);
    let got = p.holds_for.unwrap();
    assert_eq!(p.judgement.verdict, Verdict::Exceeds);
    // linear interpolation between steps of span/4096: error ≤ step²·D/|TE'|
    assert!((got - root).abs() < 1.0, "{got} vs {root}");

    // Worst-case temperature adds |c·ΔT|·t with the sign of TE.
    let mut m2 = quiet(0.0, 1e-11, 0.0);
    m2.temp_worst = 5e-11;
    let p = predict(
        &m2,
        &Settings {
            paths: 100,
            ..Settings::new(1000.0, 1.0)
        },
    )
    .unwrap();
    let end = p.te.last().unwrap();
    assert!((end.deterministic - 6e-11 * 1000.0).abs() < 1e-18);
    assert!((end.p95 - 6e-11 * 1000.0).abs() < 1e-18);
}

/// Pure WFM (analytic): TE(t) is a random walk with σ²(t) = h0·t/2; the
/// Monte Carlo rms is within 5 % of sqrt(h0·t/2) and, |TE| being
/// half-normal, p95 within 5 % of 1.96× that.
#[test]
fn white_fm_random_walk() {
    let h0 = 2e-22;
    let mut m = quiet(0.0, 0.0, 0.0);
    m.noise.set(0, h0);
    let s = Settings {
        paths: 8000,
        seed: 11,
        steps: 512,
        ..Settings::new(DAY, 1.0)
    };
    let p = predict(&m, &s).unwrap();
    let mut checked = 0;
    for pt in p.te.iter().filter(|pt| pt.t >= 1000.0) {
        let sigma = (h0 * pt.t / 2.0).sqrt();
        assert!(
            (pt.rms / sigma - 1.0).abs() < 0.05,
            "t = {}: rms {} vs {sigma}",
            pt.t,
            pt.rms
        );
        assert!(
            (pt.p95 / (1.96 * sigma) - 1.0).abs() < 0.05,
            "t = {}: p95",
            pt.t
        );
        checked += 1;
    }
    assert!(checked >= 10);
    // Same seed, same answer.
    assert_eq!(predict(&m, &s).unwrap(), p);
}

/// RWFM alone (analytic): x(t) is the integral of a random walk in y, so
/// the variance of TE(t) grows as t³; the Monte Carlo must follow that
/// growth between a tenth of the span and the span.
#[test]
fn rwfm_variance_grows_as_t_cubed() {
    let mut m = quiet(0.0, 0.0, 0.0);
    m.noise.set(-2, 1e-30);
    let s = Settings {
        paths: 4000,
        seed: 5,
        steps: 256,
        ..Settings::new(DAY, 1.0)
    };
    let p = predict(&m, &s).unwrap();
    let a = p.te.iter().find(|pt| pt.t >= 0.1 * DAY).unwrap();
    let b = p.te.last().unwrap();
    let ratio = (b.rms / a.rms).powi(2) / (b.t / a.t).powi(3);
    assert!((ratio - 1.0).abs() < 0.15, "{ratio}");
}

/// Aging recovered from a simulated frequency record with known drift,
/// within 5 % (the record also carries WFM noise).
#[test]
fn aging_recovered_from_a_record() {
    let d = 5e-11 / DAY;
    let tau0 = 10.0;
    let n = 2 * 8640; // two days
    let mut rng = ChaCha8Rng::seed_from_u64(3);
    let sd = (1e-22f64 / (2.0 * tau0)).sqrt(); // WFM, h0 = 1e-22: σ_y(τ0)
    let y: Vec<f64> = (0..n)
        .map(|i| 2e-9 + d * (i as f64 + 0.5) * tau0 + sd * rng.sample::<f64, _>(StandardNormal))
        .collect();
    let rec = Record::Frequency(FrequencyRecord::new(y, tau0).unwrap());
    let m = model_from_record(&rec, &FromRecord::default()).unwrap();
    let got = m.aging.rate(0.0);
    assert!((got / d - 1.0).abs() < 0.05, "{got} vs {d}");
    // y0 is the frequency at the end of the record: 2e-9 + d·span.
    let want_y0 = 2e-9 + d * n as f64 * tau0;
    assert!(
        (m.y0 - want_y0).abs() < 3.0 * m.y0_sigma + 1e-13,
        "{} vs {want_y0}",
        m.y0
    );
    // The fitted noise is WFM-dominated near h0 = 1e-22.
    assert!((m.noise.get(0) / 1e-22 - 1.0).abs() < 0.3, "{:?}", m.noise);
    // A log model on the same record also gives a rate near D at the end.
    let ml = model_from_record(
        &rec,
        &FromRecord {
            aging_model: AgingModel::Log,
            ..FromRecord::default()
        },
    )
    .unwrap();
    assert_eq!(ml.aging.model(), AgingModel::Log);
}

/// Bad input: span ≤ 0, budget ≤ 0, too few paths — clear errors.
#[test]
fn bad_settings() {
    let m = quiet(0.0, 0.0, 0.0);
    for (span, budget, word) in [
        (0.0, 1e-6, "span"),
        (-5.0, 1e-6, "span"),
        (10.0, 0.0, "budget"),
        (10.0, -1.0, "budget"),
    ] {
        let e = predict(&m, &Settings::new(span, budget))
            .unwrap_err()
            .to_string();
        assert!(e.contains(word), "{e}");
    }
    // One path gives no percentile: an error. Three give percentiles but
    // too few for a p95 verdict: the prediction is made, not judged (issue 12).
    let e = predict(
        &m,
        &Settings {
            paths: 1,
            ..Settings::new(10.0, 1.0)
        },
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("paths"), "{e}");
    let p = predict(
        &m,
        &Settings {
            paths: 3,
            ..Settings::new(10.0, 1.0)
        },
    )
    .unwrap();
    assert_eq!(p.judgement.verdict, Verdict::NotJudged);
    assert!(p.judgement.reason.unwrap().contains("too few"));
    let rec = Record::Frequency(FrequencyRecord::new(vec![0.0; 10], 1.0).unwrap());
    assert!(model_from_record(&rec, &FromRecord::default()).is_err());
}

/// Monte Carlo variance of x_k − x_0 over `paths` paths of one term.
fn path_variance(alpha: i32, h: f64, f_h: f64, step: f64, n: usize, ks: &[usize]) -> Vec<f64> {
    let mut model = PowerLaw::zero(f_h);
    model.set(alpha, h);
    let g = NoisePaths::new(&model, step, n).unwrap();
    let paths = 20_000;
    let mut acc = vec![0.0; ks.len()];
    let mut x = vec![0.0; n + 1];
    for p in 0..paths {
        let mut rng = ChaCha8Rng::seed_from_u64(17);
        rng.set_stream(p);
        g.fill(&mut rng, &mut x);
        assert_eq!(x[0], 0.0);
        for (a, &k) in acc.iter_mut().zip(ks) {
            *a += x[k] * x[k];
        }
    }
    acc.iter().map(|a| a / paths as f64).collect()
}

/// The holdover noise paths follow the analytic variance growth of each
/// noise type (module notes of `holdover::paths`). Monte Carlo of 20 000
/// paths: the relative sampling error of a variance is sqrt(2/20000) = 1 %,
/// the tolerance 5 %.
#[test]
fn noise_paths_follow_the_analytic_variance_growth() {
    use std::f64::consts::PI;
    let (step, n) = (30.0, 256);
    let ks = [16usize, 64, 256];
    let f_h = 0.5; // record τ0 = 1 s, paths at 30 s
                   // WPM (IEEE Std 1139: phase variance h2·f_h/(2π)², analytic): constant 2σ².
    let h2 = 1e-22;
    for (v, _) in path_variance(2, h2, f_h, step, n, &ks).iter().zip(ks) {
        let want = 2.0 * h2 * f_h / (4.0 * PI * PI);
        assert!((v / want - 1.0).abs() < 0.05, "WPM {v} vs {want}");
    }
    // WFM (analytic): h0·t/2.
    let h0 = 1e-22;
    for (v, k) in path_variance(0, h0, f_h, step, n, &ks).iter().zip(ks) {
        let want = h0 * k as f64 * step / 2.0;
        assert!((v / want - 1.0).abs() < 0.05, "WFM k={k}: {v} vs {want}");
    }
    // RWFM (analytic, y a random walk from rest integrated once more):
    // (2π)²·h·t³/6, the discrete process within O(1/k) of it (2 % at k = 256).
    let hm2 = 1e-30;
    let v = path_variance(-2, hm2, f_h, step, n, &ks);
    let t = 256.0 * step;
    let asym = 4.0 * PI * PI * hm2 * t.powi(3) / 6.0;
    assert!((v[2] / asym - 1.0).abs() < 0.05, "RWFM: {} vs {asym}", v[2]);
    let growth = v[2] / v[1]; // (256/64)³ = 64, O(1/k) corrections ≈ 7 %
    assert!((growth / 64.0 - 1.0).abs() < 0.12, "RWFM growth {growth}");
    // FFM (derived in holdover::paths): 2·h·t², within O(1/k) (1 % at k = 256).
    let hm1 = 1e-26;
    let v = path_variance(-1, hm1, f_h, step, n, &ks);
    let asym = 2.0 * hm1 * t * t;
    assert!((v[2] / asym - 1.0).abs() < 0.05, "FFM: {} vs {asym}", v[2]);
    let growth = v[2] / v[1]; // (256/64)² = 16
    assert!((growth / 16.0 - 1.0).abs() < 0.12, "FFM growth {growth}");
    // FPM: the sum for the plain filter (1 − B)^(−1/2), q = h/(4π), plus
    // twice the white phase above 1/(2Δ), h·ln(2Δf_h)/(2π)² (derived); the
    // synthesiser's FPM shaping stays within the tolerance of it.
    let h1 = 1e-24;
    let c = tauwise::simulate::kw_coefficients(0.5, n + 1);
    for (v, k) in path_variance(1, h1, f_h, step, n, &ks).iter().zip(ks) {
        let q = h1 / (4.0 * PI);
        let white = h1 * (2.0 * step * f_h).ln() / (4.0 * PI * PI);
        let exact =
            q * ((c[k] - 1.0).powi(2) + c[..k].iter().map(|c| c * c).sum::<f64>()) + 2.0 * white;
        assert!((v / exact - 1.0).abs() < 0.05, "FPM k={k}: {v} vs {exact}");
    }
}

/// The noise fit of the holdover model (OHDEV at every τ and MDEV at short
/// τ, with their EDF, into model::fit) recovers a known model: a record
/// synthesised from h0 = 1e-22, h−2 = 1e−30 (IEEE Std 1139 terms). h0
/// within 30 %; h−2 not below the truth by more than 30 % and at most twice
/// it (the fit gives any shortfall at the longest τ to RWFM, the cautious
/// side for the aging's uncertainty); the model's ADEV within 20 % of the
/// truth from 1 s to 1000 s and within 40 % at 10^4 s (a tenth of the
/// record, where the OHDEV points have an EDF of a few units).
#[test]
fn noise_fit_recovers_the_simulated_model() {
    let truth = PowerLaw::parse("h0=1e-22,h-2=1e-30", 0.5).unwrap();
    let rec =
        tauwise::simulate::simulate_phase(&tauwise::simulate::SimSpec::new(truth, 1.0, 100_000, 9))
            .unwrap();
    let fit = fit_noise(&rec).unwrap();
    let m = fit.model;
    assert!((m.get(0) / 1e-22 - 1.0).abs() < 0.3, "{m:?}");
    assert!((0.7..=2.0).contains(&(m.get(-2) / 1e-30)), "{m:?}");
    for (tau, tol) in [
        (1.0, 0.2),
        (10.0, 0.2),
        (100.0, 0.2),
        (1e3, 0.2),
        (1e4, 0.4),
    ] {
        let r = (m.avar(tau) / truth.avar(tau)).sqrt();
        assert!((r - 1.0).abs() < tol, "τ = {tau}: {r}");
    }
}

/// Seeded Monte Carlo: the holdover prediction against the true futures of
/// records of a known model (white FM h0 = 1e−22 and random-walk FM
/// h−2 = 3e−27 1/Hz, τ0 = 1 s, 4096 points, a holdover of 256 s after each
/// record), run through the whole pipeline a user runs (aging fit, noise
/// fit, bootstrap uncertainties, Monte Carlo).
///
/// - No aging: the fitted aging in standard uncertainties, D̂/σ_D, behaves
///   like a standard normal variable — well under 10 % beyond 2 (nominal
///   4.6 %), standard deviation near 1. (The textbook regression σ_D gave a
///   median |D̂|/σ_D near 10.)
/// - With aging (1e−14/s), and with no aging on a unit whose frequency
///   offset at the record's start (1e−10) carries on into the holdover: the
///   true |TE| at the span end lies above the predicted p95 in 3–8 % and
///   above the p50 in 40–60 % of the records.
/// - With no aging and no offset: above the p50 in 40–60 % too, and above
///   the p95 in 1–8 %: with the mean TE near zero the percentiles of |TE|
///   lean to the safe side, as they must for any honest rule
///   (`no_rule_reaches_the_no_aging_window_when_the_start_is_loosely_known`;
///   `examples/holdover_calibration.rs` for the sweep, docs/verdicts.md).
#[test]
fn holdover_prediction_is_calibrated() {
    use tauwise::holdover::calibration::{run, Trial};
    let trial = Trial {
        model: PowerLaw::parse("h0=1e-22,h-2=3e-27", 0.5).unwrap(),
        aging: 0.0,
        offset: 0.0,
        tau0: 1.0,
        points: 4096,
        span_samples: 256,
        records: 200,
        paths: 300,
        steps: 64,
        seed: 1000,
        true_noise: false,
        replicates: 200,
    };
    let none = run(&trial).unwrap();
    assert!(none.z_beyond_2 < 0.10, "|z| > 2 in {}", none.z_beyond_2);
    assert!((0.75..1.3).contains(&none.z_sd), "sd(z) = {}", none.z_sd);
    let aged = run(&Trial {
        aging: 1e-14,
        ..trial
    })
    .unwrap();
    // Aging of about 1.5 standard uncertainties of its fit (σ_D ≈ 4e−15/s
    // on these records): present, mostly not significant at 2σ. A rule
    // that dropped an aging not significant at 2σ would be nominal at D = 0
    // and overconfident here (in the Gaussian model of
    // `folding_about_zero_is_why_no_aging_leans_safe`, 22 % above p95 at
    // 1.5σ; analytic).
    let marginal = run(&Trial {
        aging: 6e-15,
        ..trial
    })
    .unwrap();
    // The safe side holds there (its lower bounds need |TE| far from zero
    // against its spread; here it is not: seed 1000).
    assert!(
        marginal.above_p95 <= 0.08 && marginal.above_p50 <= 0.60,
        "marginal aging: above p95 in {}, above p50 in {}",
        marginal.above_p95,
        marginal.above_p50
    );
    // No aging on a free-running unit: its frequency offset (1e−10 here)
    // carries on into the holdover, so the mean TE at the span end is far
    // from zero against its uncertainty and the folding does not matter.
    let free = run(&Trial {
        offset: 1e-10,
        ..trial
    })
    .unwrap();
    // 200 records: the binomial standard error of a 5 % rate is 1.5 %.
    // With aging, and with no aging but an offset, the |TE| percentiles are
    // held to the window (3–8 % above p95, 40–60 % above p50); the
    // records give 4.0 % both. With no aging and no offset the true mean of
    // TE here is the random walk's frequency at the record's end, small
    // against its uncertainty on part of the records, and the fitted aging
    // carries the walk's trend on: the p95 is on the safe side, 2.5 %
    // (1.75 % on 400 records), so its window is 1–8 % (docs/verdicts.md).
    for (what, c, low) in [
        ("no aging, no offset", &none, 0.01),
        ("no aging, free-running offset", &free, 0.03),
        ("aging", &aged, 0.03),
    ] {
        assert!(
            (low..=0.08).contains(&c.above_p95),
            "{what}: above p95 in {}",
            c.above_p95
        );
        assert!(
            (0.40..=0.60).contains(&c.above_p50),
            "{what}: above p50 in {}",
            c.above_p50
        );
    }
}

/// Seeded Monte Carlo: where the record pins its random-walk FM down only
/// loosely (white FM h0 = 1e−22 with weak random-walk FM h−2 = 3e−29,
/// crossover near 500 s on a 4096 s record), the aging's σ_D must hold the
/// uncertainty of the fitted h−2 as well. From the point estimate alone,
/// |D̂|/σ_D exceeded 2 in 25 % of pure-noise records (sd 2.55): "significant"
/// aging found in one record in four. The predicted distribution of the
/// signed TE is checked by where the true TE falls in it (probability
/// integral transform): above its median in about half the records,
/// outside its central 90 % in about one in ten. (The percentiles of |TE|
/// lean to the safe side here, as they must when the frequency at the start
/// is small against its uncertainty: folded about a mean near zero.)
#[test]
fn aging_uncertainty_holds_a_loosely_known_random_walk() {
    use tauwise::holdover::calibration::{run, Trial};
    let c = run(&Trial {
        model: PowerLaw::parse("h0=1e-22,h-2=3e-29", 0.5).unwrap(),
        aging: 0.0,
        offset: 0.0,
        tau0: 1.0,
        points: 4096,
        span_samples: 1024,
        records: 200,
        paths: 300,
        steps: 64,
        seed: 1000,
        true_noise: false,
        replicates: 200,
    })
    .unwrap();
    assert!(c.z_beyond_2 < 0.10, "|z| > 2 in {}", c.z_beyond_2);
    assert!((0.75..1.3).contains(&c.z_sd), "sd(z) = {}", c.z_sd);
    assert!(
        (0.40..=0.60).contains(&c.above_signed_median),
        "above the signed median in {}",
        c.above_signed_median
    );
    assert!(
        (0.05..=0.16).contains(&c.outside_signed_90),
        "outside the central 90 % in {}",
        c.outside_signed_90
    );
}

/// Analytic (Gaussian model, seeded Monte Carlo of its draws): why the |TE|
/// percentiles of a holdover with no aging lean to the safe side, and why
/// the prediction does not drop an aging that is not significant.
///
/// The true time error is TE = μ + ε, ε ~ N(0, 1); the record gives an
/// estimate μ̂ ~ N(μ, a²) of its mean (here a = 1: the mean's uncertainty
/// equal to the noise spread). The calibrated prediction of TE is
/// N(μ̂, 1 + a²): the true TE lies above its median in half the draws for
/// every μ. Its |TE| percentiles (the folded normal's) are exceeded
/// nominally when |μ| is large (μ = 3a: 50 % and 5 %) but far less at
/// μ = 0 (25 % and 0.3 %) — folding a spread about a mean near zero makes
/// them wide, whatever the method. A rule that set μ̂ to zero when it is
/// not significant at 2a would be nominal at μ = 0 but exceed its p95 in
/// about 22 % of the draws at μ = 1.5a: overconfident exactly where an
/// aging is present but hidden in the noise. tauwise keeps the calibrated
/// prediction (docs/verdicts.md).
#[test]
fn folding_about_zero_is_why_no_aging_leans_safe() {
    use statrs::distribution::{ContinuousCDF, Normal};
    let phi = Normal::new(0.0, 1.0).unwrap();
    // Quantile q of |N(m, s²)| by bisection on its CDF.
    let folded = |m: f64, s: f64, q: f64| {
        let (mut lo, mut hi) = (0.0, m.abs() + 10.0 * s);
        for _ in 0..60 {
            let x = 0.5 * (lo + hi);
            let c = phi.cdf((x - m) / s) - phi.cdf((-x - m) / s);
            if c < q {
                lo = x
            } else {
                hi = x
            }
        }
        lo
    };
    let a = 1.0f64;
    let n = 20_000;
    // (above p50, above p95) over n draws at true mean μ.
    let rates = |mu: f64, drop_insignificant: bool| {
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        let (mut e50, mut e95) = (0usize, 0usize);
        for _ in 0..n {
            let z1: f64 = rng.sample(StandardNormal);
            let z2: f64 = rng.sample(StandardNormal);
            let (muh, te) = (mu + a * z1, mu + z2);
            let (m, s) = if drop_insignificant && muh.abs() < 2.0 * a {
                (0.0, 1.0)
            } else {
                (muh, (1.0 + a * a).sqrt())
            };
            e50 += usize::from(te.abs() > folded(m, s, 0.5));
            e95 += usize::from(te.abs() > folded(m, s, 0.95));
        }
        (e50 as f64 / n as f64, e95 as f64 / n as f64)
    };
    let (p50, p95) = rates(3.0 * a, false);
    assert!(
        (0.48..=0.52).contains(&p50) && (0.04..=0.06).contains(&p95),
        "μ = 3a: {p50} {p95}"
    );
    let (p50, p95) = rates(0.0, false);
    assert!(
        (0.23..=0.27).contains(&p50) && p95 < 0.01,
        "μ = 0: {p50} {p95}"
    );
    let (p50, p95) = rates(0.0, true);
    assert!(
        (0.46..=0.50).contains(&p50) && (0.04..=0.06).contains(&p95),
        "dropped, μ = 0: {p50} {p95}"
    );
    let (_, p95) = rates(1.5 * a, true);
    assert!(p95 > 0.15, "dropped, μ = 1.5a: {p95}");
}

/// Analytic (Gaussian model of `folding_about_zero_is_why_no_aging_leans_safe`,
/// weak Lagrangian duality): how close to 5 % any rule can put the
/// exceedance of its p95 of |TE| when the record shows no aging, if it is to
/// stay honest at every aging.
///
/// The true time error is TE = μ + ε, ε ~ N(0, 1); the record gives
/// μ̂ ~ N(μ, r²) — r is the spread the uncertainty of the fitted start
/// frequency and aging gives TE at the span end, over the noise's own
/// spread there. A rule is any bound U(μ̂) (even a randomised one) that
/// never claims less than the p95 of |ε| alone, 1.96: no tighter than for a
/// clock whose aging and start frequency were known exactly. Its exceedance
/// at μ is C(μ) = P(|μ + ε| > U(μ̂)). The issue asks C(0) in 3–8 %; the
/// rule must also keep C(μ) ≤ 8 % at every true μ, or it is overconfident
/// where an aging is present but hidden in the noise.
///
/// For any λ ≥ 0 and any μ₁, every such rule has
///   C(0) ≤ C(0) − λ·(½C(μ₁) + ½C(−μ₁) − 8 %)
///        ≤ 8 %·λ + ∫ sup_{u ≥ 1.96} [p₀(m)·Q(0, u) − λ·p̄₁(m)·Q(μ₁, u)] dm,
/// with p₀, p̄₁ the densities of μ̂ at μ = 0 and (averaged) at ±μ₁, and
/// Q(μ, u) = P(|μ + ε| > u). The multipliers (μ₁, λ) below came from a
/// linear program over rules on a grid (the one binding aging is about
/// 1.25r to 1.5r); the test checks the certificate, which holds for any
/// choice. Where r ≥ 1, no rule reaches 3 % at no aging: at r = 1 at most
/// 3.0 %, at r = 1.5 at most 1.8 %, at r = 2 at most 1.2 %. Where r is
/// small the window is within reach (the same bound at r = 0.25 is above
/// 3 %). docs/verdicts.md gives the r of the calibration cases.
#[test]
fn no_rule_reaches_the_no_aging_window_when_the_start_is_loosely_known() {
    use statrs::distribution::{Continuous, ContinuousCDF, Normal};
    let phi = Normal::new(0.0, 1.0).unwrap();
    let q = |mu: f64, u: f64| phi.sf(u - mu) + phi.sf(u + mu);
    let floor = 1.959_963_984_540_054; // P(|ε| > floor) = 5 %
    let cap = 0.08;
    // The certificate's bound on C(0) for rules at ratio r. The bracket
    // g(u) = a·Q(0, u) − b·Q(μ₁, u) has g'(u) = 2φ(u)·(b·e^{−μ₁²/2}·cosh(μ₁u) − a):
    // it falls, then rises towards g(∞) = 0, so its sup over u ≥ 1.96 is
    // max(g(1.96), 0) exactly — the best rule at each μ̂ is either the
    // tightest bound or no bound. Only the integral over m is numeric
    // (trapezoid on 20 001 points; μ̂ beyond ±m_hi adds at most the mass
    // of N(0, r²) there).
    let bound = |r: f64, mu1: f64, lambda: f64| {
        let n = 20_001usize;
        let m_hi = mu1 + 9.0 * r;
        let dm = 2.0 * m_hi / (n - 1) as f64;
        let (q0, q1) = (q(0.0, floor), q(mu1, floor));
        let integrand = |m: f64| {
            let a = phi.pdf(m / r) / r;
            let b = lambda * 0.5 * (phi.pdf((m - mu1) / r) + phi.pdf((m + mu1) / r)) / r;
            (a * q0 - b * q1).max(0.0)
        };
        let inner: f64 = (1..n - 1).map(|i| integrand(-m_hi + i as f64 * dm)).sum();
        let integral = dm * (inner + 0.5 * (integrand(-m_hi) + integrand(m_hi)));
        cap * lambda + integral + 2.0 * phi.sf(m_hi / r)
    };
    for (r, mu1, lambda, most) in [
        (1.0, 1.5, 0.25045, 0.0305),
        (1.5, 1.875, 0.20015, 0.0180),
        (2.0, 2.5, 0.14465, 0.0122),
    ] {
        let c0 = bound(r, mu1, lambda);
        assert!(c0 <= most, "r = {r}: C(0) can reach {c0}");
    }
    // Not vacuous: where the start is well known the window is reachable,
    // and no certificate can say otherwise.
    let c0 = bound(0.25, 0.3, 0.2);
    assert!(c0 > 0.03, "r = 0.25: bound {c0}");
}
