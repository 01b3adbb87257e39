//! Wall and CPU time of the issue-5 speed targets, one run each:
//! `wander` analysis of a 10^7-point TIE record at 10 τ per decade (≤ 2 s),
//! split into MTIE and TDEV, and a 24 h holdover with 2000 paths (≤ 3 s).
//!
//! `cargo bench --bench wander_cpu -- 10000000`
//!
//! CPU time (user + system of the whole process, all threads, from
//! /proc/self/stat) is printed beside the wall time: on a shared machine the
//! wall time depends on the load, the CPU time much less. With
//! `RAYON_NUM_THREADS=1` the wall time is the single-core cost.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::Instant;
use tauwise::deviation::{compute, Estimator};
use tauwise::holdover::aging::Aging;
use tauwise::holdover::{predict, HoldoverModel, Settings};
use tauwise::model::PowerLaw;
use tauwise::wander::{analyse, masks::builtin, masks::Metric, plan, Options};
use tauwise::PhaseRecord;

#[path = "common/mod.rs"]
mod common;
use common::cpu_seconds;

fn timed<T>(label: &str, f: impl FnOnce() -> T) -> T {
    let c0 = cpu_seconds();
    let t0 = Instant::now();
    let r = f();
    let wall = t0.elapsed().as_secs_f64();
    let cpu = match (c0, cpu_seconds()) {
        (Some(a), Some(b)) => format!("{:.2} s", b - a),
        _ => "n/a".into(),
    };
    println!("{label:<44} wall {wall:.3} s  cpu {cpu}");
    r
}

fn main() {
    let n: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(10_000_000);
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let mut acc = 0.0;
    let x: Vec<f64> = (0..n)
        .map(|_| {
            acc += rng.gen_range(-1.0..1.0) * 1e-11;
            acc + rng.gen_range(-1.0..1.0) * 2e-10
        })
        .collect();
    let rec = PhaseRecord::new(x, 1e-3).expect("record");
    let mut masks = builtin("g8262-opt1").expect("mask");
    masks.extend(builtin("g811").expect("mask"));
    let opts = Options {
        remove_offset: true,
        ..Options::default()
    };
    let (mtie_ms, _) = plan(Metric::Mtie, rec.len(), rec.tau0, &opts, &masks).expect("grid");
    let (tdev_ms, _) = plan(Metric::Tdev, rec.len(), rec.tau0, &opts, &masks).expect("grid");
    println!(
        "N = {n}, MTIE {} τ (10 per decade to the record's span), TDEV {} τ (to a third of it), threads = {}",
        mtie_ms.len(),
        tdev_ms.len(),
        rayon::current_num_threads()
    );
    timed("mtie", || compute(Estimator::Mtie, &rec, &mtie_ms));
    timed("tdev", || compute(Estimator::Tdev, &rec, &tdev_ms));
    timed("wander analyse (tie, offset, mtie, tdev, masks)", || {
        analyse(&rec, &opts, &masks).expect("analyse")
    });

    let mut noise = PowerLaw::zero(0.5);
    for (a, h) in [(2, 1e-22), (1, 1e-24), (0, 1e-22), (-1, 1e-26), (-2, 1e-31)] {
        noise.set(a, h);
    }
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
    timed("holdover 24 h, 2000 paths, 4096 steps, 5 terms", || {
        predict(&model, &settings).expect("predict")
    });
}
