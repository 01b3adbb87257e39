//! Frequency-domain checks against published and analytic results: the
//! IEEE Std 1139 power-law table in both directions, Welch PSD calibration
//! (white phase, Parseval), simulated power-law spectra, and the round trip
//! time record → spectrum → σ(τ).

use std::f64::consts::PI;
use tauwise::deviation::{compute, Estimator};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::spectrum::sigma::{sigma_from_spectrum, sigma_points, SigmaOptions};
use tauwise::spectrum::welch::{welch, WelchOptions, Window};
use tauwise::spectrum::{Quantity, Spectrum};
use tauwise::PhaseRecord;

const NU0: f64 = 10e6;

fn single(alpha: i32, h: f64, fh: f64) -> PowerLaw {
    let mut m = PowerLaw::zero(fh);
    m.set(alpha, h);
    m
}

/// IEEE Std 1139-2008 table (docs/checks.md §C): an L(f) table built from each
/// single-term model converts back to AVAR, MVAR and TVAR within 3 % of the
/// closed forms at τ with 2πf_hτ > 10. The MVAR forms are large-n limits;
/// n = τ/τ0 ≥ 32 here (τ0 = 1/(2f_h)).
#[test]
fn ieee1139_table_to_sigma() {
    let fh = 1e3;
    let tau0 = 0.5 / fh;
    let taus = [0.016, 0.1, 1.0, 10.0];
    for alpha in [2, 1, 0, -1, -2] {
        let m = single(alpha, 1e-22, fh);
        let table = Spectrum::from_model(&m, Quantity::Lf, Some(NU0), 1e-5, fh, 10).unwrap();
        let opt = SigmaOptions { tau0, f_h: fh };
        let av = sigma_points(&table, Estimator::Adev, &taus, opt).unwrap();
        let mv = sigma_points(&table, Estimator::Mdev, &taus, opt).unwrap();
        let tv = sigma_points(&table, Estimator::Tdev, &taus, opt).unwrap();
        for ((a, mo), t) in av.iter().zip(&mv).zip(&tv) {
            assert!(2.0 * PI * fh * a.tau > 10.0 && mo.m >= 32);
            let ra = a.dev.powi(2) / m.avar(a.tau);
            let rm = mo.dev.powi(2) / m.mvar(mo.tau, tau0);
            let rt = t.dev.powi(2) / m.tvar(t.tau, tau0);
            assert!(
                (ra - 1.0).abs() < 0.03,
                "α={alpha} τ={}: AVAR ratio {ra}",
                a.tau
            );
            assert!(
                (rm - 1.0).abs() < 0.03,
                "α={alpha} τ={}: MVAR ratio {rm}",
                a.tau
            );
            assert!(
                (rt - 1.0).abs() < 0.03,
                "α={alpha} τ={}: TVAR ratio {rt}",
                a.tau
            );
            assert!(!a.truncated);
        }
    }
}

/// IEEE Std 1139-2008: a model converted to L(f) is L = 10·log10(S_φ/2),
/// S_φ = (ν0/f)² S_y, exactly.
#[test]
fn ieee1139_model_to_lf() {
    let m = PowerLaw::parse("h2=3e-27,h1=1e-26,h0=2e-24,h-1=1e-25,h-2=1e-28", 1e6).unwrap();
    let s = Spectrum::from_model(&m, Quantity::Lf, Some(NU0), 0.1, 1e6, 5).unwrap();
    for (f, l) in s.f.iter().zip(&s.values) {
        let sy: f64 = (-2..=2).map(|a| m.get(a) * f.powi(a)).sum();
        let want = 10.0 * ((NU0 / f).powi(2) * sy / 2.0).log10();
        assert!((l - want).abs() < 1e-10, "{f}: {l} vs {want}");
    }
}

fn lcg_gauss(n: usize, seed: u64) -> Vec<f64> {
    // Box–Muller on a 64-bit LCG (Knuth's MMIX constants): test data only.
    let mut s = seed;
    let mut u = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((s >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    };
    (0..n)
        .map(|_| (-2.0 * u().ln()).sqrt() * (2.0 * PI * u()).cos())
        .collect()
}

/// Analytic: white phase of variance σ² sampled at τ0 has the flat one-sided
/// PSD S_x = 2σ²τ0; the Welch estimate averaged over the band is within 5 %.
/// Also with gaps (segments from the gap-free stretches only).
#[test]
fn welch_white_phase_level() {
    let sigma = 2e-9;
    let tau0 = 0.1;
    let mut x: Vec<f64> = lcg_gauss(1 << 16, 11).iter().map(|v| v * sigma).collect();
    let want = 2.0 * sigma * sigma * tau0;
    for with_gaps in [false, true] {
        if with_gaps {
            for i in (5000..60000).step_by(9000) {
                x[i] = f64::NAN;
            }
        }
        let rec = PhaseRecord::new(x.clone(), tau0).unwrap();
        let w = welch(&rec, &WelchOptions::default()).unwrap();
        let mean = w.sx.iter().sum::<f64>() / w.sx.len() as f64;
        assert!(
            (mean / want - 1.0).abs() < 0.05,
            "gaps={with_gaps}: {mean:e} vs {want:e}"
        );
        let b = w.log_binned(10, None).unwrap();
        let mean_b = b.values.iter().sum::<f64>() / b.len() as f64;
        assert!((mean_b / want - 1.0).abs() < 0.15, "log bins: {mean_b:e}");
        if with_gaps {
            assert!(w.stretches > 1 && w.gap_note().contains("free of gaps"));
        }
    }
}

/// Parseval (analytic): a sinusoid A·sin(2πf0t) has mean-square A²/2; the
/// integral of its one-sided PSD over all bins matches within 2 %, for each
/// window (whose ENBW the density scaling accounts for).
#[test]
fn welch_sinusoid_parseval() {
    let a = 3e-9;
    let tau0 = 1e-3;
    let f0 = 37.3; // not on a bin
    let x: Vec<f64> = (0..1 << 15)
        .map(|i| a * (2.0 * PI * f0 * i as f64 * tau0 + 0.4).sin())
        .collect();
    let rec = PhaseRecord::new(x, tau0).unwrap();
    for window in [Window::Hann, Window::BlackmanHarris, Window::Rectangular] {
        let w = welch(
            &rec,
            &WelchOptions {
                window,
                segment: Some(4096),
                overlap: 0.5,
            },
        )
        .unwrap();
        let power: f64 = w.sx.iter().sum::<f64>() * w.resolution_hz;
        let tol = if window == Window::Rectangular {
            0.05
        } else {
            0.02
        };
        assert!(
            (power / (a * a / 2.0) - 1.0).abs() < tol,
            "{window:?}: {power:e} vs {:e}",
            a * a / 2.0
        );
    }
}

/// Decade-averaged dB error of a Welch estimate against S_x of the model:
/// Kasdin & Walter (1992) discrete-time form S_x·(πfτ0/sin πfτ0)^(2−α) (the
/// fractional-difference filter's |2 sin πfτ0|^(−2d) in place of (2πfτ0)^(−2d)).
fn decade_errors(alpha: i32, h: f64, seed: u64, segment: usize) -> Vec<(i32, f64, f64)> {
    let tau0 = 1.0;
    let m = single(alpha, h, 0.5);
    let rec = simulate_phase(&SimSpec::new(m, tau0, 1 << 17, seed)).unwrap();
    let w = welch(
        &rec,
        &WelchOptions {
            segment: Some(segment),
            ..Default::default()
        },
    )
    .unwrap();
    let s = w.log_binned(10, None).unwrap();
    let mut out = Vec::new();
    for dec in -4..0 {
        let lo = 10f64.powi(dec);
        let pts: Vec<(f64, f64)> =
            s.f.iter()
                .zip(&s.values)
                .filter(|(f, _)| **f >= lo && **f < 10.0 * lo)
                .map(|(f, v)| (*f, *v))
                .collect();
        if pts.len() < 5 {
            continue; // not a full decade of the output grid
        }
        let n = pts.len() as f64;
        let cont: f64 = pts
            .iter()
            .map(|(f, v)| 10.0 * (v / m.sx(*f)).log10())
            .sum::<f64>()
            / n;
        let disc: f64 = pts
            .iter()
            .map(|(f, v)| {
                let plain = (PI * f * tau0 / (PI * f * tau0).sin()).powf(2.0 - alpha as f64);
                // The simulator shapes FFM and RWFM at high frequency so that
                // they follow τ0-averaged continuous noise (src/simulate.rs):
                // FFM by its published power gain, RWFM by the MA(1) input
                // a²(1 + θ² + 2θ cos 2πfτ0), θ = 2 − √3, a² = (2/3)/(1 + θ²).
                let shape = match alpha {
                    -1 => tauwise::simulate::shape_power_gain(
                        tauwise::simulate::Shape::FlickerFrequency,
                        f * tau0,
                    ),
                    -2 => {
                        let theta = 2.0 - 3f64.sqrt();
                        let a2 = 2.0 / 3.0 / (1.0 + theta * theta);
                        a2 * (1.0 + theta * theta + 2.0 * theta * (2.0 * PI * f * tau0).cos())
                    }
                    _ => 1.0,
                };
                let k = plain * shape;
                10.0 * (v / (m.sx(*f) * k)).log10()
            })
            .sum::<f64>()
            / n;
        out.push((dec, cont, disc));
    }
    out
}

/// Simulated FFM and RWFM (Kasdin & Walter 1992 synthesis) give spectra
/// within 1.5 dB of the model averaged per decade: against the IEEE 1139
/// continuous S_x(f) below f_N/5 (where sampling changes it by < 0.3 dB),
/// and against the discrete-time form in every decade.
#[test]
fn simulated_power_law_spectra() {
    for (alpha, h) in [(-1, 1e-22), (-2, 1e-25), (0, 1e-22)] {
        for seed in [3u64, 8] {
            let errs = decade_errors(alpha, h, seed, 4096);
            assert!(errs.len() >= 3, "{errs:?}");
            for (dec, cont, disc) in errs {
                assert!(
                    disc.abs() < 1.5,
                    "α={alpha} seed={seed} decade 1e{dec}: {disc:+.2} dB"
                );
                if dec <= -2 {
                    assert!(
                        cont.abs() < 1.5,
                        "α={alpha} seed={seed} decade 1e{dec}: {cont:+.2} dB"
                    );
                }
            }
        }
    }
}

/// Round trip: a simulated record's OADEV (NIST SP 1065 estimator, computed
/// in the time domain) agrees with the AVAR converted from its own Welch
/// spectrum (IEEE Std 1139 transfer function), over the τ both cover.
/// The converted AVAR must lie inside the measured OADEV's 68.3 % interval;
/// the ratio is also held within 12 % (the statistical spread of both at
/// these τ is a few per cent), and MDEV the same way.
#[test]
fn record_spectrum_sigma_round_trip() {
    let tau0 = 1.0;
    let m = PowerLaw::parse("h2=2e-21,h0=4e-23,h-1=1e-25", 0.5 / tau0).unwrap();
    let rec = simulate_phase(&SimSpec::new(m, tau0, 1 << 17, 21)).unwrap();
    let w = welch(
        &rec,
        &WelchOptions {
            segment: Some(8192),
            ..Default::default()
        },
    )
    .unwrap();
    let spec = w.spectrum(None).unwrap();
    let fh = *spec.f.last().unwrap();
    let ms = [1usize, 2, 4, 8, 16, 32, 64];
    let taus: Vec<f64> = ms.iter().map(|&k| k as f64 * tau0).collect();
    let conv = sigma_from_spectrum(&spec, Estimator::Adev, &taus, tau0, fh).unwrap();
    let meas = compute(Estimator::Oadev, &rec, &ms);
    for (c, e) in conv.iter().zip(&meas) {
        let r = e.value / c.1;
        assert!(
            (r - 1.0).abs() < 0.12,
            "τ={}: OADEV {:e} vs from spectrum {:e}",
            c.0,
            e.value,
            c.1
        );
    }
    // And within the measured OADEV's confidence interval (Greenhall–Riley
    // EDF, χ²; the default 68.3 %) at every τ: the round-trip check of issue 4.
    let pts = tauwise::stats::annotate(
        Estimator::Oadev,
        &rec,
        &meas,
        &tauwise::stats::StatsOptions {
            confidence: 0.683,
            forced_alpha: None,
            ..Default::default()
        },
    )
    .unwrap();
    for (c, p) in conv.iter().zip(&pts) {
        let (lo, hi) = (p.lo.unwrap(), p.hi.unwrap());
        assert!(
            c.1 >= lo && c.1 <= hi,
            "τ={}: converted {:e} outside the 68.3 % interval [{lo:e}, {hi:e}]",
            c.0,
            c.1
        );
    }
    // MDEV the same way.
    let convm = sigma_from_spectrum(&spec, Estimator::Mdev, &taus, tau0, fh).unwrap();
    let measm = compute(Estimator::Mdev, &rec, &ms);
    for (c, e) in convm.iter().zip(&measm) {
        let r = e.value / c.1;
        assert!(
            (r - 1.0).abs() < 0.12,
            "τ={}: MDEV {:e} vs from spectrum {:e}",
            c.0,
            e.value,
            c.1
        );
    }
}

/// Round trip (issue 4): simulate from a model (Kasdin & Walter synthesis)
/// → Welch spectrum → fit of S_y = Σ h_α f^α (the model layer's fit) gives
/// each coefficient within a factor 1.5 of the model.
#[test]
fn simulate_spectrum_fit_round_trip() {
    use tauwise::model::fit::fit_sy;
    let tau0 = 1.0;
    let truth = PowerLaw::parse("h2=1e-21,h0=1e-23,h-1=1e-25", 0.5 / tau0).unwrap();
    let rec = simulate_phase(&SimSpec::new(truth, tau0, 1 << 18, 4)).unwrap();
    let w = welch(
        &rec,
        &WelchOptions {
            segment: Some(1 << 14),
            ..Default::default()
        },
    )
    .unwrap();
    let sy = w.log_binned(10, None).unwrap().to(Quantity::Sy).unwrap();
    // Below f_N/5, where the sampled spectrum follows the continuous model.
    let keep: Vec<usize> = (0..sy.len()).filter(|&i| sy.f[i] < 0.1 / tau0).collect();
    let f: Vec<f64> = keep.iter().map(|&i| sy.f[i]).collect();
    let v: Vec<f64> = keep.iter().map(|&i| sy.values[i]).collect();
    let fit = fit_sy(&f, &v, None, 0.5 / tau0).unwrap();
    for a in [2, 0, -1] {
        let r = fit.model.get(a) / truth.get(a);
        assert!(
            (1.0 / 1.5..1.5).contains(&r),
            "h{a}: fitted {:e}, model {:e}",
            fit.model.get(a),
            truth.get(a)
        );
    }
}

/// Red noise at the lowest bin shown (issue: +6.2 dB for RWFM, +3.0 dB for
/// FFM at bin 2 with Hann): over 40 seeded records of 2^15 points the mean
/// Welch estimate at the lowest bin shown is within 1 dB of the simulated
/// S_x = h_α f^α/(2πf)² (IEEE Std 1139) for RWFM and FFM, with Hann and
/// Blackman–Harris.
#[test]
fn lowest_bin_shown_is_unbiased_for_red_noise() {
    use rayon::prelude::*;
    for window in [Window::Hann, Window::BlackmanHarris] {
        for alpha in [-2, -1] {
            let ratios: Vec<f64> = (0..40u64)
                .into_par_iter()
                .map(|s| {
                    let rec = simulate_phase(&SimSpec::new(
                        single(alpha, 1.0, 0.5),
                        1.0,
                        1 << 15,
                        300 + s,
                    ))
                    .unwrap();
                    let w = welch(
                        &rec,
                        &WelchOptions {
                            window,
                            ..Default::default()
                        },
                    )
                    .unwrap();
                    let f = w.f[0];
                    assert!((f / w.resolution_hz - window.lowest_bin() as f64).abs() < 1e-9);
                    w.sx[0] / (f.powi(alpha) / (2.0 * PI * f).powi(2))
                })
                .collect();
            let db = 10.0 * (ratios.iter().sum::<f64>() / ratios.len() as f64).log10();
            assert!(
                db.abs() < 1.0,
                "{window:?} α={alpha}: {db:+.2} dB at the lowest bin"
            );
        }
    }
}

/// The rectangular window leaks red noise through its sidelobes (+35 dB and
/// more at high bins for RWFM): the estimate then carries a warning, and a
/// white-phase record does not.
#[test]
fn rectangular_window_warns_on_red_noise() {
    let rect = WelchOptions {
        window: Window::Rectangular,
        ..Default::default()
    };
    let red = simulate_phase(&SimSpec::new(single(-2, 1e-30, 0.5), 1.0, 1 << 14, 5)).unwrap();
    let w = welch(&red, &rect).unwrap();
    assert_eq!(w.warnings.len(), 1, "{:?}", w.warnings);
    assert!(w.warnings[0].contains("rectangular window on red noise"));
    let white = simulate_phase(&SimSpec::new(single(2, 1e-20, 0.5), 1.0, 1 << 14, 5)).unwrap();
    assert!(welch(&white, &rect).unwrap().warnings.is_empty());
    assert!(welch(&red, &WelchOptions::default())
        .unwrap()
        .warnings
        .is_empty());
}

/// Frequency data (issue: S_y of white-FM frequency data 3.2 dB high at
/// 0.45 Hz with the continuous (2πf)² relation): the sampled relation
/// S_y = (2 sin(πfτ0)/τ0)²·S_x of the integrated phase makes white FM flat:
/// the mean over 20 seeded records of each log bin is within 0.5 dB of h0
/// (IEEE Std 1139: S_y = h0) from the second decade up to the top bin.
#[test]
fn frequency_data_white_fm_is_flat() {
    use rayon::prelude::*;
    use tauwise::spectrum::welch::welch_record;
    use tauwise::Record;
    let h0 = 1e-22;
    let runs: Vec<Vec<(f64, f64)>> = (0..20u64)
        .into_par_iter()
        .map(|s| {
            let y = tauwise::simulate::simulate_frequency(&SimSpec::new(
                single(0, h0, 0.5),
                1.0,
                1 << 14,
                9 + s,
            ))
            .unwrap();
            let w = welch_record(&Record::Frequency(y), &WelchOptions::default()).unwrap();
            let s = w.log_binned(10, None).unwrap();
            assert_eq!(s.quantity, Quantity::Sy);
            s.f.iter().copied().zip(s.values.iter().copied()).collect()
        })
        .collect();
    let bins = runs[0].len();
    assert!(runs[0][bins - 1].0 > 0.44);
    let f_low = runs[0][0].0;
    for k in 0..bins {
        let mean = runs.iter().map(|r| r[k].1).sum::<f64>() / runs.len() as f64;
        let db = 10.0 * (mean / h0).log10();
        // In the lowest decade a log bin holds one or two DFT bins: the mean
        // of 20 records still scatters by about 0.4 dB there.
        let tol = if runs[0][k].0 < 10.0 * f_low {
            1.2
        } else {
            0.5
        };
        assert!(db.abs() < tol, "f = {}: {db:+.2} dB", runs[0][k].0);
    }
    // The phase record keeps S_x (continuous relations from there).
    let x = tauwise::simulate::simulate_phase(&SimSpec::new(single(0, h0, 0.5), 1.0, 1 << 12, 9))
        .unwrap();
    let w = welch(&x, &WelchOptions::default()).unwrap();
    assert_eq!(w.spectrum(None).unwrap().quantity, Quantity::Sx);
}
