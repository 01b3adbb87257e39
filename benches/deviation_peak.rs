//! One pass of each time-domain estimator over the octave τ grid on a single
//! record, printing per estimator its wall time, the process CPU time and
//! its working memory:
//!
//! `TAUWISE_BENCH_DEV=mtot cargo bench --bench deviation_peak -- 10000000`
//!
//! CPU time (user + system, from /proc/self/stat) is printed beside the wall
//! time because the figures are meaningful on a shared machine only with it:
//! with `RAYON_NUM_THREADS=1` it is the single-core cost.
//!
//! Working memory: the peak resident set while the estimator runs less the
//! resident set just before it, with the record already built (Linux: the
//! peak `VmHWM` of /proc/self/status is reset by writing 5 to
//! /proc/self/clear_refs before each estimator). It is what the estimator
//! needs beyond the record, printed in MB and as a multiple of the record's
//! 8 bytes a point (issue 18: at most 2.5×). Memory the allocator keeps
//! after one estimator can be reused by the next without showing, so the
//! fair figure is one estimator a run (`TAUWISE_BENCH_DEV=<one name>`).
//! The whole run's peak is still the one of `/usr/bin/time -f "%M KB"`.
//!
//! With `TAUWISE_BENCH_PER_TAU=1` each τ of the grid is also computed
//! alone first, printing its wall and CPU time (where the time goes as N
//! grows; the τ run in parallel in the timed pass).
//!
//! `TAUWISE_BENCH_MS=m1,m2,…` keeps only those factors of the grid.
//!
//! 10^8 points (manual: the record alone is 800 MB):
//! `TAUWISE_BENCH_DEV=mtot cargo bench --bench deviation_peak -- 100000000`.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::time::Instant;
use tauwise::deviation::{compute, Estimator};
use tauwise::tau::TauGrid;
use tauwise::PhaseRecord;

#[path = "common/mod.rs"]
mod common;
use common::cpu_seconds;

/// A `kB` field of /proc/self/status (`VmRSS`, `VmHWM`) in bytes.
fn status_bytes(key: &str) -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with(key))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024.0)
}

/// Reset the peak resident set (`VmHWM`) to the current one; false where
/// the kernel does not allow it.
fn reset_peak() -> bool {
    std::fs::write("/proc/self/clear_refs", "5").is_ok()
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
    let record_bytes = 8.0 * n as f64;
    println!(
        "N = {n}, threads = {}, record {:.0} MB, load average {}",
        rayon::current_num_threads(),
        record_bytes / 1e6,
        common::load_average()
    );
    for est in ests {
        let mut ms = TauGrid::Octave.ms(1.0, est.max_m(n)).expect("grid");
        if let Ok(only) = std::env::var("TAUWISE_BENCH_MS") {
            // A part of the grid only, e.g. `TAUWISE_BENCH_MS=4194304`.
            let keep: Vec<usize> = only
                .split(',')
                .filter_map(|v| v.trim().parse().ok())
                .collect();
            ms.retain(|m| keep.contains(m));
        }
        if std::env::var_os("TAUWISE_BENCH_PER_TAU").is_some() {
            for &m in &ms {
                let c0 = cpu_seconds();
                let t0 = Instant::now();
                let r = compute(est, &rec, &[m]);
                let wall = t0.elapsed().as_secs_f64();
                let cpu = match (c0, cpu_seconds()) {
                    (Some(a), Some(b)) => format!("{:.2} s", b - a),
                    _ => "n/a".into(),
                };
                let mp = r.first().map_or(0, |e| e.m);
                println!("  m {m:>10} (used {mp:>10})  wall {wall:.3} s  cpu {cpu}");
            }
        }
        let resettable = reset_peak();
        let before = status_bytes("VmRSS");
        let c0 = cpu_seconds();
        let t0 = Instant::now();
        let r = compute(est, &rec, &ms);
        let wall = t0.elapsed().as_secs_f64();
        let cpu = match (c0, cpu_seconds()) {
            (Some(a), Some(b)) => format!("{:.2} s", b - a),
            _ => "n/a".into(),
        };
        let work = match (resettable, before, status_bytes("VmHWM")) {
            (true, Some(b), Some(p)) => {
                let w = (p - b).max(0.0);
                format!("{:.0} MB ({:.2}× the record)", w / 1e6, w / record_bytes)
            }
            _ => "n/a".into(),
        };
        println!(
            "{:<7} {:>3} τ  wall {:.3} s  cpu {}  working memory {}  (σ at m=1: {:.4e})",
            est.name(),
            r.len(),
            wall,
            cpu,
            work,
            r.first().map_or(f64::NAN, |e| e.value)
        );
    }
}
