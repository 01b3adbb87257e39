//! Speed of the time-domain estimators over the octave τ grid, N = 10^6 and
//! 10^7 phase points (issue 2 targets at 10^7 on the 2-core machine: oadev,
//! mdev, ohdev, totdev ≤ 0.15 s each; mtie ≤ 1 s).
//!
//! Long-τ estimators (issue 18 targets on the 2-core machine, full octave
//! grid): mtot, ttot, htot ≤ 1 s and theo1 ≤ 2 s at N = 10^6, ≤ 10 s at
//! N = 10^7. The criterion group `long_tau` runs mtot, ttot, htot and theo1
//! at N = 10^5 and 10^6 (all O(N) or O(N·log²m) per τ) and theoh at
//! N = 10^4 (its ThêoBR ratio is still O(N²)). The `deviation_peak` bench
//! binary gives single-pass wall and CPU figures at any N, for the manual
//! runs at 10^7 and 10^8 (peak memory under `/usr/bin/time -v`):
//! `TAUWISE_BENCH_DEV=mtot,ttot,htot,theo1 cargo bench --bench deviation_peak -- 10000000`.
//!
//! `cargo bench --bench deviation -- long_tau --sample-size 10 --measurement-time 5`

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use tauwise::deviation::{compute, Estimator};
use tauwise::tau::TauGrid;
use tauwise::PhaseRecord;

/// White phase plus a random walk (white FM), 1 ns scale.
fn record(n: usize) -> PhaseRecord {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let mut walk = 0.0;
    let x = (0..n)
        .map(|_| {
            walk += rng.gen_range(-1.0..1.0) * 1e-9;
            walk + rng.gen_range(-1.0..1.0) * 1e-9
        })
        .collect();
    PhaseRecord::new(x, 1.0).unwrap()
}

fn octave(c: &mut Criterion) {
    for (label, n) in [("1e6", 1_000_000usize), ("1e7", 10_000_000)] {
        let rec = record(n);
        let mut g = c.benchmark_group(format!("octave/{label}"));
        for est in [
            Estimator::Oadev,
            Estimator::Mdev,
            Estimator::Ohdev,
            Estimator::Totdev,
            Estimator::Mtie,
        ] {
            let ms = TauGrid::Octave.ms(rec.tau0, est.max_m(n)).unwrap();
            g.bench_with_input(BenchmarkId::from_parameter(est.name()), &ms, |b, ms| {
                b.iter(|| compute(est, &rec, ms))
            });
        }
        g.finish();
    }
}

/// The long-τ estimators benchmarked at 10^5 and 10^6.
const LONG_TAU: &[Estimator] = &[
    Estimator::Mtot,
    Estimator::Ttot,
    Estimator::Htot,
    Estimator::Theo1,
];

fn long_tau(c: &mut Criterion) {
    for (label, n, ests) in [
        ("1e5", 100_000usize, LONG_TAU),
        ("1e6", 1_000_000, LONG_TAU),
        ("1e4", 10_000, &[Estimator::Theoh][..]),
    ] {
        let rec = record(n);
        let mut g = c.benchmark_group(format!("long_tau/{label}"));
        g.sample_size(10);
        for &est in ests {
            let ms = TauGrid::Octave.ms(rec.tau0, est.max_m(n)).unwrap();
            g.bench_with_input(BenchmarkId::from_parameter(est.name()), &ms, |b, ms| {
                b.iter(|| compute(est, &rec, ms))
            });
        }
        g.finish();
    }
}

criterion_group!(benches, octave, long_tau);
criterion_main!(benches);
