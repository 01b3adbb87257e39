//! Reading speed of the time-series reader (`tauwise::io::series`).
//!
//! Writes text files of 10^6 and 10^7 lines to a temporary directory — one
//! phase value per line, and a `seconds,phase` two-column form read with τ0
//! from the timestamps (`time_and_phase`) and with τ0 given
//! (`time_and_phase_tau0`, the stamps placed on its grid) — and reads them with `read_series`. Criterion
//! reports the throughput in bytes per second (target: ≥ 600 MB/s of wall
//! time on 2 free cores, i.e. ≥ 300 MB per CPU-second in the `_cpu` groups).
//!
//! The 10^8-line figures are a manual bench (a 1.9 GB file is written to
//! the temporary directory and deleted after):
//! `TAUWISE_BENCH_LINES=100000000 cargo bench --bench read -- 'read_series(_lines)?_cpu/phase_only'`.
//!
//! Two groups: `read_series` measures wall-clock time; `read_series_cpu`
//! measures the CPU time of the whole process, every thread of the rayon
//! pool included (Linux `/proc/self/task/*/schedstat`), which is what to
//! quote on a machine shared with other work, where wall time mostly
//! measures waiting for a core. Each reads the rows in blocks parsed in
//! parallel (the default, `tauwise::io::parallel`); `read_series_lines` and
//! `read_series_lines_cpu` read them line by line (the reference path, and
//! the reader as it was before the block path).
//!
//! A third group, `read_npy`, reads the same records as `.npy` (float64,
//! one-dimensional) — binary input at memory speed. A fourth, `read_raw`,
//! reads them as a raw float64 little-endian array (`--binary f64le`,
//! `tauwise::io::binary`).
//!
//! Run: `cargo bench --bench read` (set `TAUWISE_BENCH_LINES=1000000` to
//! skip the 10^7-line files).

use criterion::measurement::{Measurement, ValueFormatter, WallTime};
use criterion::{criterion_group, criterion_main, BenchmarkGroup, Criterion, Throughput};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Duration;
use tauwise::io::parallel::RowReading;
use tauwise::io::series::{read_series, read_series_with, SeriesOptions};

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

/// CPU time of the calling thread, in nanoseconds.
struct ThreadCpu;

/// CPU time of every thread of the process (ns; threads that ended are
/// not counted, and the rayon pool's threads live as long as the process).
fn thread_cpu_ns() -> u64 {
    let Ok(tasks) = std::fs::read_dir("/proc/self/task") else {
        return 0;
    };
    tasks
        .filter_map(|t| std::fs::read_to_string(t.ok()?.path().join("schedstat")).ok())
        .filter_map(|s| {
            s.split_whitespace()
                .next()
                .and_then(|v| v.parse::<u64>().ok())
        })
        .sum()
}

static WALL: WallTime = WallTime;

impl Measurement for ThreadCpu {
    type Intermediate = u64;
    type Value = u64;
    fn start(&self) -> u64 {
        thread_cpu_ns()
    }
    fn end(&self, i: u64) -> u64 {
        thread_cpu_ns().saturating_sub(i)
    }
    fn add(&self, a: &u64, b: &u64) -> u64 {
        a + b
    }
    fn zero(&self) -> u64 {
        0
    }
    fn to_f64(&self, v: &u64) -> f64 {
        *v as f64
    }
    fn formatter(&self) -> &dyn ValueFormatter {
        // Values are nanoseconds, as for wall time.
        WALL.formatter()
    }
}

fn run_group<M: Measurement>(
    group: &mut BenchmarkGroup<'_, M>,
    sizes: &[usize],
    dir: &Path,
    reading: RowReading,
) {
    group.sample_size(10);
    group.warm_up_time(Duration::from_millis(500));
    group.measurement_time(Duration::from_secs(5));
    for &n in sizes {
        // (name, a time column, τ0 given)
        for (name, with_time, tau0) in [
            ("phase_only", false, Some(1.0)),
            ("time_and_phase", true, None),
            ("time_and_phase_tau0", true, Some(1.0)),
        ] {
            let path: PathBuf = dir.join(format!("{name}-{n}.txt"));
            let bytes = write_file(&path, n, with_time);
            let opts = SeriesOptions {
                tau0,
                ..Default::default()
            };
            group.throughput(Throughput::Bytes(bytes));
            group.bench_function(format!("{name}/{n}"), |b| {
                b.iter(|| {
                    let s = read_series_with(&path, &opts, reading).unwrap();
                    assert_eq!(s.record.len(), n);
                    s
                })
            });
            std::fs::remove_file(&path).unwrap();
        }
    }
}

fn sizes() -> Vec<usize> {
    match std::env::var("TAUWISE_BENCH_LINES") {
        Ok(v) => vec![v.parse().expect("TAUWISE_BENCH_LINES: a number of lines")],
        Err(_) => vec![1_000_000, 10_000_000],
    }
}

/// The block reader as the tool runs it (`RowReading::default()`), and the
/// line reader.
fn readings() -> [(&'static str, RowReading); 2] {
    [("", RowReading::default()), ("_lines", RowReading::Serial)]
}

fn bench_wall(c: &mut Criterion) {
    let dir = tempfile::tempdir().unwrap();
    for (suffix, reading) in readings() {
        let mut group = c.benchmark_group(format!("read_series{suffix}"));
        run_group(&mut group, &sizes(), dir.path(), reading);
        group.finish();
    }
}

fn bench_cpu(c: &mut Criterion<ThreadCpu>) {
    let dir = tempfile::tempdir().unwrap();
    for (suffix, reading) in readings() {
        let mut group = c.benchmark_group(format!("read_series{suffix}_cpu"));
        run_group(&mut group, &sizes(), dir.path(), reading);
        group.finish();
    }
}

fn bench_npy(c: &mut Criterion) {
    let dir = tempfile::tempdir().unwrap();
    let mut group = c.benchmark_group("read_npy");
    group.sample_size(10);
    group.warm_up_time(Duration::from_millis(500));
    group.measurement_time(Duration::from_secs(5));
    for n in sizes() {
        let path = dir.path().join(format!("x-{n}.npy"));
        let x: Vec<f64> = (0..n).map(|i| (i as f64 * 1e-3).sin() * 1e-9).collect();
        let mut f = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
        tauwise::io::npy::write_f64(&mut f, &[&x]).unwrap();
        f.flush().unwrap();
        drop(f);
        drop(x);
        let opts = SeriesOptions {
            tau0: Some(1.0),
            ..Default::default()
        };
        group.throughput(Throughput::Bytes(std::fs::metadata(&path).unwrap().len()));
        group.bench_function(format!("float64/{n}"), |b| {
            b.iter(|| {
                let s = read_series(&path, &opts).unwrap();
                assert_eq!(s.record.len(), n);
                s
            })
        });
        std::fs::remove_file(&path).unwrap();
    }
    group.finish();
}

fn bench_raw(c: &mut Criterion) {
    let dir = tempfile::tempdir().unwrap();
    let mut group = c.benchmark_group("read_raw");
    group.sample_size(10);
    group.warm_up_time(Duration::from_millis(500));
    group.measurement_time(Duration::from_secs(3));
    for n in sizes() {
        let path = dir.path().join(format!("x-{n}.f64"));
        let x: Vec<f64> = (0..n).map(|i| (i as f64 * 1e-3).sin() * 1e-9).collect();
        let mut f = std::io::BufWriter::new(std::fs::File::create(&path).unwrap());
        tauwise::io::binary::write_values(&mut f, &x, tauwise::io::binary::BinaryFormat::F64le)
            .unwrap();
        f.flush().unwrap();
        drop(f);
        drop(x);
        let opts = SeriesOptions {
            tau0: Some(1.0),
            binary: Some(tauwise::io::binary::BinaryFormat::F64le),
            ..Default::default()
        };
        group.throughput(Throughput::Bytes(std::fs::metadata(&path).unwrap().len()));
        group.bench_function(format!("f64le/{n}"), |b| {
            b.iter(|| {
                let s = read_series(&path, &opts).unwrap();
                assert_eq!(s.record.len(), n);
                s
            })
        });
        std::fs::remove_file(&path).unwrap();
    }
    group.finish();
}

criterion_group!(wall, bench_wall, bench_npy, bench_raw);
criterion_group! {
    name = cpu;
    config = Criterion::default().with_measurement(ThreadCpu);
    targets = bench_cpu
}
criterion_main!(wall, cpu);
