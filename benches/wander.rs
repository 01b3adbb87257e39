//! Speed targets of issue 5: `wander` on a 10^7-point TIE record with 10 τ
//! per decade in ≤ 2 s; `holdover` over 24 h with 2000 paths in ≤ 3 s; and
//! the cost of the fit behind a holdover (with its bootstrap).
//!
//! `cargo bench --bench wander`

use criterion::{criterion_group, criterion_main, Criterion};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::Duration;
use tauwise::holdover::aging::Aging;
use tauwise::holdover::{predict, HoldoverModel, Settings};
use tauwise::model::PowerLaw;
use tauwise::wander::{analyse, masks::builtin, Options};
use tauwise::PhaseRecord;

fn tie_record(n: usize) -> PhaseRecord {
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let mut acc = 0.0;
    let x = (0..n)
        .map(|_| {
            acc += rng.gen_range(-1.0..1.0) * 1e-11;
            acc + rng.gen_range(-1.0..1.0) * 2e-10
        })
        .collect();
    PhaseRecord::new(x, 1e-3).unwrap()
}

fn bench_wander(c: &mut Criterion) {
    let rec = tie_record(10_000_000);
    let mut masks = builtin("g8262-opt1").unwrap();
    masks.extend(builtin("g811").unwrap());
    let mut g = c.benchmark_group("wander");
    g.sample_size(10).measurement_time(Duration::from_secs(5));
    let opts = Options {
        remove_offset: true,
        ..Options::default()
    };
    g.bench_function(
        "tie+mtie+tdev+masks, 1e7 points, 10/decade over the record",
        |b| b.iter(|| analyse(&rec, &opts, &masks).unwrap()),
    );
    g.finish();
}

fn bench_holdover(c: &mut Criterion) {
    let mut noise = PowerLaw::zero(0.5);
    noise.set(2, 1e-22);
    noise.set(1, 1e-24);
    noise.set(0, 1e-22);
    noise.set(-1, 1e-26);
    noise.set(-2, 1e-31);
    let model = HoldoverModel {
        te0: 0.0,
        y0: 1e-12,
        y0_sigma: 1e-12,
        aging: Aging::Linear {
            c: 0.0,
            d: 1e-10 / 86400.0,
            d_sigma: 1e-11 / 86400.0,
        },
        start: 2.0 * 86400.0,
        temp_worst: 1e-11,
        noise,
        uncertainty: Default::default(),
    };
    let settings = Settings::new(86400.0, 1.5e-6);
    let mut g = c.benchmark_group("holdover");
    g.sample_size(10).measurement_time(Duration::from_secs(5));
    g.bench_function("24 h, 2000 paths, all five noise types", |b| {
        b.iter(|| predict(&model, &settings).unwrap())
    });
    // The fit behind a prediction: aging, noise model and the parametric
    // bootstrap of their uncertainty (400 records), on two days at 1 s.
    let mut spec = tauwise::simulate::SimSpec::new(
        PowerLaw::parse("h2=7.9e-25,h0=8e-24,h-1=4e-25,h-2=1e-30", 0.5).unwrap(),
        1.0,
        172_800,
        202,
    );
    spec.drift_per_s = 8e-11 / 86400.0;
    let rec = tauwise::Record::Phase(tauwise::simulate::simulate_phase(&spec).unwrap());
    g.bench_function("model from a 2-day record, bootstrap of 400", |b| {
        b.iter(|| {
            tauwise::holdover::model_from_record(&rec, &tauwise::holdover::FromRecord::default())
                .unwrap()
        })
    });
    g.finish();
}

criterion_group!(benches, bench_wander, bench_holdover);
criterion_main!(benches);
