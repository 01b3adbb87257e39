//! Speed target of issue 6: the demo report for one DUT (two days at 1 s,
//! one L(f) table, one TIE capture) in ≤ 5 s end to end. Measured here on
//! `demo-data/ocxo-a.toml`: reading and hashing the inputs plus every
//! analysis (`from_dut`), and writing the HTML with its inline charts.
//!
//! Speed target of issue 15: the comparison of the three demo DUTs
//! (`report::fleet::build`, the devices in parallel, and its HTML) in at
//! most 1.5× the slowest single-device report (`ocxo-b`).
//!
//! `cargo bench --bench report`

use criterion::{criterion_group, criterion_main, Criterion};
use std::path::Path;
use std::time::Duration;
use tauwise::io::dut::Dut;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::render_html;

fn bench_report(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/ocxo-a.toml");
    let dut = Dut::read(&path).expect("demo DUT file");
    let opts = BuildOptions::default();
    let mut g = c.benchmark_group("report");
    g.sample_size(10).measurement_time(Duration::from_secs(40));
    g.bench_function("ocxo-a end to end", |b| {
        b.iter(|| {
            let dut = Dut::read(&path).unwrap();
            let r = from_dut(&dut, &opts).unwrap();
            render_html(&r).unwrap().len()
        })
    });
    let report = from_dut(&dut, &opts).unwrap();
    g.bench_function("ocxo-a HTML and inline SVG only", |b| {
        b.iter(|| render_html(&report).unwrap().len())
    });
    g.finish();
}

fn bench_fleet(c: &mut Criterion) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let names = ["ocxo-a", "ocxo-b", "rb-1"];
    let opts = BuildOptions::default();
    let mut g = c.benchmark_group("fleet");
    g.sample_size(10).measurement_time(Duration::from_secs(60));
    for n in names {
        g.bench_function(format!("{n} single report"), |b| {
            b.iter(|| {
                let dut = Dut::read(&root.join(format!("{n}.toml"))).unwrap();
                render_html(&from_dut(&dut, &opts).unwrap()).unwrap().len()
            })
        });
    }
    g.bench_function("three demo DUTs compared", |b| {
        b.iter(|| {
            let duts: Vec<Dut> = names
                .iter()
                .map(|n| Dut::read(&root.join(format!("{n}.toml"))).unwrap())
                .collect();
            let f = tauwise::report::fleet::build(&duts, &opts, &|_, _, _, _| {}).unwrap();
            tauwise::report::fleet::render_html(&f).unwrap().len()
        })
    });
    g.finish();
}

criterion_group!(benches, bench_report, bench_fleet);
criterion_main!(benches);
