//! Reading speed of the time-series reader (`tauwise::io::series`).
//!
//! Writes text files of 10^6 and 10^7 lines to a temporary directory — one
//! phase value per line, and a `seconds,phase` two-column form whose τ0
//! comes from the timestamps — and reads them with `read_series`. Criterion
//! reports the throughput in bytes per second (target: ≥ 100 MB/s).
//!
//! Run: `cargo bench --bench read` (set `TAUWISE_BENCH_LINES=1000000` to
//! skip the 10^7-line files).

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Duration;
use tauwise::io::series::{read_series, SeriesOptions};

/// A random-walk phase record in seconds, written with 12 significant digits.
fn write_file(path: &Path, lines: usize, with_time: bool) -> u64 {
    let f = std::fs::File::create(path).unwrap();
    let mut w = std::io::BufWriter::with_capacity(1 << 20, f);
    writeln!(w, "# bench record").unwrap();
    if with_time {
        writeln!(w, "seconds,phase").unwrap();
    }
    let mut s: u64 = 0x1234_5678;
    let mut x = 0.0f64;
    for i in 0..lines {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        x += ((s >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 1e-9;
        if with_time {
            writeln!(w, "{i},{x:.11e}").unwrap();
        } else {
            writeln!(w, "{x:.11e}").unwrap();
        }
    }
    w.flush().unwrap();
    std::fs::metadata(path).unwrap().len()
}

fn bench(c: &mut Criterion) {
    let dir = tempfile::tempdir().unwrap();
    let sizes: Vec<usize> = match std::env::var("TAUWISE_BENCH_LINES") {
        Ok(v) => vec![v.parse().expect("TAUWISE_BENCH_LINES: a number of lines")],
        Err(_) => vec![1_000_000, 10_000_000],
    };
    let mut group = c.benchmark_group("read_series");
    group.sample_size(10);
    group.warm_up_time(Duration::from_millis(500));
    group.measurement_time(Duration::from_secs(5));
    for &n in &sizes {
        for with_time in [false, true] {
            let name = if with_time {
                "time_and_phase"
            } else {
                "phase_only"
            };
            let path: PathBuf = dir.path().join(format!("{name}-{n}.txt"));
            let bytes = write_file(&path, n, with_time);
            let opts = SeriesOptions {
                tau0: if with_time { None } else { Some(1.0) },
                ..Default::default()
            };
            group.throughput(Throughput::Bytes(bytes));
            group.bench_function(format!("{name}/{n}"), |b| {
                b.iter(|| {
                    let s = read_series(&path, &opts).unwrap();
                    assert_eq!(s.record.len(), n);
                    s
                })
            });
            std::fs::remove_file(&path).unwrap();
        }
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
