//! Cost of `tauwise::timeline` (issue 16 target: two days at 1 s, window
//! 6 h, step 15 min, octave τ — at most 2 s), and of the same windows
//! computed by running `stability::analyse` on every slice (what the
//! incremental sums save).
//!
//! `cargo bench --bench timeline`.

use criterion::{criterion_group, criterion_main, Criterion};
use tauwise::deviation::Estimator;
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::stability::{analyse, Request as StabilityRequest};
use tauwise::tau::TauGrid;
use tauwise::timeline::{timeline, Request, EVENT_CONFIDENCE};

fn two_days() -> tauwise::PhaseRecord {
    let mut model = PowerLaw::zero(0.5);
    model.set(0, 8e-24);
    model.set(-1, 4e-25);
    simulate_phase(&SimSpec::new(model, 1.0, 172_800, 7)).unwrap()
}

fn bench(c: &mut Criterion) {
    let x = two_days();
    let req = Request {
        estimator: Estimator::Oadev,
        grid: TauGrid::Octave,
        window: 6 * 3600,
        step: 15 * 60,
        confidence: 0.683,
        event_confidence: EVENT_CONFIDENCE,
    };
    let mut g = c.benchmark_group("timeline");
    g.sample_size(10);
    g.bench_function("two days at 1 s, 6 h window, 15 min step, octave τ", |b| {
        b.iter(|| timeline(&x, &req).unwrap())
    });
    g.bench_function("the same windows by stability on each slice", |b| {
        b.iter(|| {
            let mut s = 0;
            while s + req.window <= x.len() {
                let slice =
                    tauwise::PhaseRecord::new(x.x[s..s + req.window].to_vec(), x.tau0).unwrap();
                let r = StabilityRequest {
                    estimators: vec![Estimator::Oadev],
                    grid: TauGrid::Explicit(
                        (0..13).map(|k| (1u64 << k) as f64).collect::<Vec<_>>(),
                    ),
                    confidence: 0.683,
                    forced_alpha: None,
                    bias_correction: true,
                };
                analyse(&slice, &r).unwrap();
                s += req.step;
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
