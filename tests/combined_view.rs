//! The combined short/long-τ view compares like with like: the table's σ(τ)
//! at the record's bandwidth, over the τ both cover, with a tolerance that
//! holds the table's own uncertainty. Records are seeded power-law records
//! (Kasdin & Walter 1992); tables are made from the same models by the
//! IEEE Std 1139 relations L(f) = S_φ/2, S_y = (f/ν0)²·S_φ.

use tauwise::deviation::Estimator;
use tauwise::deviation::{Curve, Estimate, Point};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::spectrum::sigma::{sigma_points, SigmaOptions};
use tauwise::spectrum::{Quantity, Spectrum};
use tauwise::stability::{analyse, from_phase_noise, Request, ViewOptions};

const CARRIER: f64 = 10e6;

fn table(model: &str, from: f64, to: f64, shift_db: f64) -> Spectrum {
    let m = PowerLaw::parse(model, to).unwrap();
    let mut s = Spectrum::from_model(&m, Quantity::Lf, Some(CARRIER), from, to, 10).unwrap();
    for v in s.values.iter_mut() {
        *v += shift_db;
    }
    s
}

fn measured(model: &str, n: usize, seed: u64) -> Vec<Curve> {
    let m = PowerLaw::parse(model, 0.5).unwrap();
    let x = simulate_phase(&SimSpec::new(m, 1.0, n, seed)).unwrap();
    analyse(&x, &Request::new(vec![Estimator::Oadev])).unwrap()
}

/// A record and a table of the same model (white and flicker FM, as an
/// OCXO) agree at every τ both cover; the same table 6 dB too high (σ
/// twice too high) disagrees at every one.
#[test]
fn same_model_agrees_and_a_table_6_db_off_does_not() {
    let model = "h0=2e-24,h-1=6.5e-26";
    let curves = measured(model, 50_000, 21);
    let ok = from_phase_noise(
        &curves,
        &table(model, 0.01, 1e6, 0.0),
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let c = &ok.comparisons[0];
    assert!(c.apart.is_none());
    assert!(c.points.len() >= 3, "{:?}", c.points);
    assert_eq!(c.agree(), Some(true), "{:?}", c.points);
    // From 2τ0 (the default bandwidth leaves τ0 out) to the table's reach.
    assert_eq!(c.common.unwrap()[0], 2.0);
    assert_eq!(c.f_h, 0.5);
    assert!(ok.curves.iter().any(|c| c.name() == "oadev-from-lf"));
    let off = from_phase_noise(
        &curves,
        &table(model, 0.01, 1e6, 6.0),
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let c = &off.comparisons[0];
    assert!(!c.points.is_empty());
    assert!(c.points.iter().all(|p| !p.agree), "{:?}", c.points);
    assert_eq!(c.agree(), Some(false));
    // 6 dB in L(f) is a factor 10^(6/20) ≈ 2 in σ (analytic).
    let base = &ok.comparisons[0].points;
    assert_eq!(base.len(), c.points.len());
    for (p, q) in c.points.iter().zip(base) {
        assert_eq!(p.tau, q.tau);
        assert!(
            (p.converted / q.converted / 10f64.powf(6.0 / 20.0) - 1.0).abs() < 1e-9,
            "{p:?} vs {q:?}"
        );
        assert!(p.ratio < 0.6, "{p:?}");
    }
}

fn synthetic_curve(taus: &[f64], value: impl Fn(f64) -> f64) -> Curve {
    Curve {
        estimator: Estimator::Oadev,
        origin: tauwise::deviation::Origin::Measured,
        points: taus
            .iter()
            .map(|&t| Point {
                lo: Some(0.9 * value(t)),
                hi: Some(1.1 * value(t)),
                ..Point::bare(Estimate {
                    tau: t,
                    m: t as usize,
                    value: value(t),
                    terms: 100,
                })
            })
            .collect(),
    }
}

/// The table is integrated up to the record's bandwidth, not up to its own
/// top offset: for white PM, σ_y²(τ) = 3·f_h·h2/(4π²τ²) (IEEE Std 1139,
/// 2πf_hτ ≫ 1), so the converted value follows f_h = 1/(2τ0) by default
/// and the stated bandwidth when one is given.
#[test]
fn the_record_bandwidth_is_used() {
    let h2 = 1e-22;
    let s = table("h2=1e-22", 0.001, 1e4, 0.0);
    let taus = [16.0, 32.0, 64.0];
    let wpm =
        |f_h: f64, t: f64| (3.0 * f_h * h2 / (4.0 * std::f64::consts::PI.powi(2) * t * t)).sqrt();
    let curve = synthetic_curve(&taus, |t| wpm(0.5, t));
    let v = from_phase_noise(
        std::slice::from_ref(&curve),
        &s,
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let c = &v.comparisons[0];
    assert_eq!(c.points.len(), 3);
    for p in &c.points {
        assert!((p.converted / wpm(0.5, p.tau) - 1.0).abs() < 0.02, "{p:?}");
        assert!(p.agree);
    }
    // Exactly the spectrum module's integral at f_h = 0.5 Hz.
    let direct = sigma_points(
        &s,
        Estimator::Adev,
        &taus,
        SigmaOptions {
            tau0: 1.0,
            f_h: 0.5,
        },
    )
    .unwrap();
    for (p, q) in c.points.iter().zip(&direct) {
        assert_eq!(p.converted, q.dev);
    }
    let given = from_phase_noise(
        &[curve],
        &s,
        1.0,
        &ViewOptions {
            bandwidth: Some(100.0),
            ..ViewOptions::default()
        },
    )
    .unwrap();
    let c = &given.comparisons[0];
    assert!(c.bandwidth_given);
    for p in &c.points {
        assert!(
            (p.converted / wpm(100.0, p.tau) - 1.0).abs() < 0.02,
            "{p:?}"
        );
        assert!(!p.agree, "a 200× wider band is not the record's: {p:?}");
    }
}

/// When the two views do not meet, the comparison says so and how far
/// apart they are: a table starting at 1 Hz lies above a 1 s record's
/// bandwidth of 0.5 Hz (a factor 2); a table from 0.2 Hz reaches only τ
/// below the record's shortest; one from 0.3 Hz covers no τ at all.
#[test]
fn no_common_range_says_how_far_apart() {
    let model = "h0=1e-22";
    let curves = measured(model, 4096, 3);
    let v = from_phase_noise(
        &curves,
        &table(model, 1.0, 1e6, 0.0),
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let c = &v.comparisons[0];
    let a = c.apart.as_ref().expect("apart");
    assert!((a.factor - 2.0).abs() < 1e-9, "{a:?}");
    assert!(
        a.reason.contains("above the record's bandwidth"),
        "{}",
        a.reason
    );
    assert!(c.points.is_empty() && c.agree().is_none());
    // From 0.2 Hz: the table covers σ² only at τ ≤ 0.5 s (below that share,
    // (0.2/0.5)³ = 6 % for white FM at τ ≪ 1/f_h, analytic), the record
    // starts at τ0 = 1 s: a factor 2 in τ.
    let v = from_phase_noise(
        &curves,
        &table(model, 0.2, 1e6, 0.0),
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let a = v.comparisons[0].apart.as_ref().expect("apart");
    assert!(a.reason.contains("reaches τ ≤ 0.5 s"), "{a:?}");
    assert!((a.factor - 2.0).abs() < 1e-9, "{a:?}");
    // From 0.3 Hz, too close to the bandwidth for any τ: (0.3/0.5)³ = 22 %.
    let v = from_phase_noise(
        &curves,
        &table(model, 0.3, 1e6, 0.0),
        1.0,
        &ViewOptions::default(),
    )
    .unwrap();
    let a = v.comparisons[0].apart.as_ref().expect("apart");
    assert!(a.reason.contains("too close"), "{a:?}");
    assert!((a.factor - 0.6).abs() < 1e-9, "{a:?}");
}
