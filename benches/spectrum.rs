//! Speed targets of issue 4: `spectrum` of a 10⁷-point record ≤ 2 s, and
//! σ(τ) from a 500-row L(f) table over 40 τ ≤ 0.2 s.

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;
use std::time::Duration;
use tauwise::deviation::Estimator;
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::spectrum::sigma::{sigma_points, SigmaOptions};
use tauwise::spectrum::welch::{welch, WelchOptions};
use tauwise::spectrum::{Quantity, Spectrum};

fn welch_1e7(c: &mut Criterion) {
    let m = PowerLaw::parse("h2=1e-22,h0=1e-23,h-1=1e-25", 0.5e3).unwrap();
    let rec = simulate_phase(&SimSpec::new(m, 1e-3, 10_000_000, 1)).unwrap();
    let mut g = c.benchmark_group("spectrum");
    g.sample_size(10).measurement_time(Duration::from_secs(20));
    g.bench_function("welch_1e7_points_log_bins", |b| {
        b.iter(|| {
            let w = welch(black_box(&rec), &WelchOptions::default()).unwrap();
            black_box(w.log_binned(10, Some(10e6)).unwrap())
        })
    });
    g.finish();
}

fn sigma_table(c: &mut Criterion) {
    // 500 rows from 1 Hz to 10 MHz of an OCXO-like model with a servo bump.
    let m = PowerLaw::parse("h2=6e-30,h1=1e-28,h0=1e-25,h-1=3e-25,h-2=1e-31", 10e6).unwrap();
    let f: Vec<f64> = (0..500)
        .map(|k| 10f64.powf(7.0 * k as f64 / 499.0))
        .collect();
    let l: Vec<f64> = f
        .iter()
        .map(|&x| m.lf(x, 10e6) + 4.0 * (-(x.log10() - 3.0).powi(2) * 8.0).exp())
        .collect();
    let s = Spectrum::new(f, l, Quantity::Lf, Some(10e6)).unwrap();
    let fh = 10e6;
    let tau0 = 0.5 / fh;
    // 40 τ, log-spaced from 1 µs to 1 s, whole multiples of τ0.
    let taus: Vec<f64> = (0..40)
        .map(|k| (1e-6 * 10f64.powf(6.0 * k as f64 / 39.0) / tau0).round() * tau0)
        .collect();
    let opt = SigmaOptions { tau0, f_h: fh };
    let mut g = c.benchmark_group("convert");
    g.sample_size(20);
    for kind in [
        Estimator::Adev,
        Estimator::Mdev,
        Estimator::Hdev,
        Estimator::Tdev,
    ] {
        g.bench_function(format!("table500_40tau_{}", kind.name()), |b| {
            b.iter(|| black_box(sigma_points(black_box(&s), kind, &taus, opt).unwrap()))
        });
    }
    // The combined-view case: a counter at τ0 = 1 s against the same table.
    let opt1 = SigmaOptions { tau0: 1.0, f_h: fh };
    let taus1: Vec<f64> = (0..40)
        .map(|k| (10f64.powf(5.0 * k as f64 / 39.0)).round())
        .collect();
    g.bench_function("table500_40tau_mdev_tau0_1s", |b| {
        b.iter(|| black_box(sigma_points(black_box(&s), Estimator::Mdev, &taus1, opt1).unwrap()))
    });
    g.finish();
}

criterion_group!(benches, sigma_table, welch_1e7);
criterion_main!(benches);
