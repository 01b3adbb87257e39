//! One pass of each time-domain estimator over the octave τ grid on a single
//! record, printing wall time and process CPU time per estimator. Run under
//! `/usr/bin/time -v` to read the peak memory:
//!
//! `cargo bench --bench deviation_peak -- 10000000`
//!
//! CPU time (user + system, from /proc/self/stat) is printed beside the wall
//! time because the figures are meaningful on a shared machine only with it:
//! with `RAYON_NUM_THREADS=1` it is the single-core cost.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::Instant;
use tauwise::deviation::{compute, Estimator};
use tauwise::tau::TauGrid;
use tauwise::PhaseRecord;

/// Process CPU time in seconds (utime + stime of /proc/self/stat, in clock
/// ticks of 1/100 s); None where /proc is not available.
fn cpu_seconds() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    let after = stat.rsplit_once(')')?.1;
    let fields: Vec<&str> = after.split_whitespace().collect();
    let utime: f64 = fields.get(11)?.parse().ok()?;
    let stime: f64 = fields.get(12)?.parse().ok()?;
    Some((utime + stime) / 100.0)
}

fn main() {
    let n: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(10_000_000);
    let list = std::env::var("TAUWISE_BENCH_DEV")
        .unwrap_or_else(|_| "oadev,mdev,ohdev,totdev,mtie".into());
    let ests = Estimator::parse_list(&list).expect("estimator list");
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let mut walk = 0.0;
    let x: Vec<f64> = (0..n)
        .map(|_| {
            walk += rng.gen_range(-1.0..1.0) * 1e-9;
            walk + rng.gen_range(-1.0..1.0) * 1e-9
        })
        .collect();
    let rec = PhaseRecord::new(x, 1.0).expect("record");
    println!("N = {n}, threads = {}", rayon::current_num_threads());
    for est in ests {
        let ms = TauGrid::Octave.ms(1.0, est.max_m(n)).expect("grid");
        let c0 = cpu_seconds();
        let t0 = Instant::now();
        let r = compute(est, &rec, &ms);
        let wall = t0.elapsed().as_secs_f64();
        let cpu = match (c0, cpu_seconds()) {
            (Some(a), Some(b)) => format!("{:.2} s", b - a),
            _ => "n/a".into(),
        };
        println!(
            "{:<7} {:>3} τ  wall {:.3} s  cpu {}  (σ at m=1: {:.4e})",
            est.name(),
            r.len(),
            wall,
            cpu,
            r.first().map_or(f64::NAN, |e| e.value)
        );
    }
}
