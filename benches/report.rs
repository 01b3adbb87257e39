//! Speed target of issue 6: the demo report for one DUT (two days at 1 s,
//! one L(f) table, one TIE capture) in ≤ 5 s end to end. Measured here on
//! `demo-data/ocxo-a.toml`: reading and hashing the inputs plus every
//! analysis (`from_dut`), and writing the HTML with its inline charts.
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

criterion_group!(benches, bench_report);
criterion_main!(benches);
