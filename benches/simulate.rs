//! Power-law synthesis speed: `simulate_phase` for 10^6 and 10^7 points,
//! all five noise types (two of them by FFT convolution) and WFM alone
//! (no FFT). Run with `cargo bench --bench simulate`.
//!
//! Since the flicker terms discard a warm-up of N samples (src/simulate.rs
//! § Steady state) their FFT is about 3N points instead of 2N: one FFM term
//! of 10^7 points took 6.2–6.5 s CPU and 1.62 GB peak RSS against 3.2–3.5 s
//! and 1.10 GB from rest (`/usr/bin/time`, back to back, shared 2-core
//! machine); the criterion figures of this bench were not re-recorded.

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, SamplingMode};
use std::time::Duration;
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("simulate_phase");
    g.sampling_mode(SamplingMode::Flat)
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(20));
    let all = PowerLaw::parse("h2=1e-20,h1=1e-21,h0=1e-22,h-1=1e-24,h-2=1e-30", 0.5).unwrap();
    let wfm = PowerLaw::parse("h0=1e-22", 0.5).unwrap();
    for &n in &[1_000_000usize, 10_000_000] {
        g.bench_with_input(BenchmarkId::new("five_terms", n), &n, |b, &n| {
            b.iter(|| simulate_phase(&SimSpec::new(all, 1.0, n, 7)).unwrap())
        });
        g.bench_with_input(BenchmarkId::new("wfm_only", n), &n, |b, &n| {
            b.iter(|| simulate_phase(&SimSpec::new(wfm, 1.0, n, 7)).unwrap())
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
