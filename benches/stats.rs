//! Cost of the statistics (noise identification, EDF, χ² interval) on top
//! of the estimators, over the octave τ grid at N = 10^7 phase points
//! (issue 3 target: `stability` with statistics ≤ 1.3× without).
//!
//! `cargo bench --bench stats` — prints, per record and estimator, the best
//! of several runs of `compute` and of `annotate` on its output, and the
//! ratio (compute + annotate)/compute. `TAUWISE_BENCH_N` sets N.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::{Duration, Instant};
use tauwise::deviation::{compute, Estimator};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::stats::{annotate, StatsOptions};
use tauwise::tau::TauGrid;
use tauwise::PhaseRecord;

/// White phase plus a random walk (white FM), 1 ns scale.
fn mixed(n: usize) -> PhaseRecord {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let mut walk = 0.0;
    let x = (0..n)
        .map(|_| {
            walk += rng.gen_range(-1.0..1.0) * 1e-9;
            walk + rng.gen_range(-1.0..1.0) * 30e-9
        })
        .collect();
    PhaseRecord::new(x, 1.0).unwrap()
}

/// One power law from the simulator.
fn single(alpha: i32, n: usize) -> PhaseRecord {
    let mut model = PowerLaw::zero(0.5);
    model.set(alpha, 1e-22);
    simulate_phase(&SimSpec::new(model, 1.0, n, 3)).unwrap()
}

fn best_of(runs: usize, mut f: impl FnMut()) -> Duration {
    (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed()
        })
        .min()
        .unwrap()
}

fn main() {
    let n: usize = std::env::var("TAUWISE_BENCH_N")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(10_000_000);
    let runs = 3;
    let opts = StatsOptions::default();
    let records = [
        ("WPM + WFM", mixed(n)),
        ("WPM (R(n) at every τ ≥ 4)", single(2, n)),
        ("FFM", single(-1, n)),
    ];
    println!("N = {n}, octave grid, best of {runs} runs");
    println!(
        "{:<28} {:<7} {:>10} {:>12} {:>7}",
        "record", "dev", "compute", "annotate", "ratio"
    );
    for (label, rec) in &records {
        for est in [
            Estimator::Oadev,
            Estimator::Mdev,
            Estimator::Ohdev,
            Estimator::Totdev,
        ] {
            let ms = TauGrid::Octave.ms(rec.tau0, est.max_m(n)).unwrap();
            let base = best_of(runs, || {
                std::hint::black_box(compute(est, rec, &ms));
            });
            let e = compute(est, rec, &ms);
            let stats = best_of(runs, || {
                std::hint::black_box(annotate(est, rec, &e, &opts).unwrap());
            });
            let with = base + stats;
            println!(
                "{label:<28} {:<7} {:>8.1} ms {:>9.1} ms {:>7.3}",
                est.name(),
                base.as_secs_f64() * 1e3,
                stats.as_secs_f64() * 1e3,
                with.as_secs_f64() / base.as_secs_f64()
            );
        }
    }
}
