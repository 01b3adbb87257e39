//! Wall and CPU time of the report speed targets:
//!
//! - issue 6: the demo report for one DUT (two days at 1 s, one L(f)
//!   table, one TIE capture) in ≤ 5 s end to end;
//! - issue 15: the comparison of the three demo DUTs (`tauwise report
//!   A.toml B.toml C.toml`, the devices in parallel) in at most 1.5× the
//!   slowest single-device report.
//!
//! `cargo build --release && cargo bench --bench report` (or `… -- 5` for
//! five runs of each, default 3; the median is printed, and the least run).
//! `TAUWISE_BIN=PATH` times another build of the binary for part 1, and
//! `TAUWISE_BIN_BEFORE=PATH` a second build (e.g. one made before a change)
//! in the same interleaved runs, so that both see the same load.
//!
//! 1. The command line, one process per report (cold, as a user runs it):
//!    `target/release/tauwise report demo-data/NAME.toml` for each demo DUT
//!    and the three together, interleaved run by run so that a change of
//!    load hits them alike; wall time and the child's CPU time (user +
//!    system, all threads), the median of each, and the fleet's wall over
//!    the slowest single report's.
//!    On a loaded machine the wall times measure the waiting for a core
//!    as much as the work; the CPU ratio is the fair figure there, and a
//!    quiet machine the one for the wall ratio. The comparison reads every
//!    device's inputs and fits its holdover model first, then runs the
//!    holdover Monte Carlo of all the devices beside their other sections
//!    (`report::fleet::build`), so its wall time is about its CPU time over
//!    the cores; a single report makes its sections and then its Monte
//!    Carlo, one after the other.
//! 2. Each single report in this process, split by the report's own steps
//!    (the progress callback of `report::build`): wall, CPU and the cores
//!    kept busy (CPU / wall) per step, which shows how much of a report runs
//!    on one core — the part the comparison can overlap.
//!
//! CPU time comes from /proc/self/stat (1/100 s ticks): on a shared machine
//! the wall time depends on the load, the CPU time much less. The load
//! average is printed before and after.

use std::path::Path;
use std::time::Instant;
use tauwise::io::dut::Dut;
use tauwise::report::build::{from_dut_with_progress, BuildOptions};

#[path = "common/mod.rs"]
mod common;
use common::{children_cpu_seconds, cpu_seconds, load_average};

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// One single-device report with its steps timed: (wall, CPU, steps as
/// (what, wall, CPU)).
fn single(path: &Path, opts: &BuildOptions) -> (f64, f64, Vec<(String, f64, f64)>) {
    let mut steps: Vec<(String, f64, f64)> = Vec::new();
    let t0 = Instant::now();
    let c0 = cpu_seconds().unwrap_or(f64::NAN);
    let mut mark = (String::from("start"), 0.0, c0);
    let mut close = |what: &str, steps: &mut Vec<(String, f64, f64)>| {
        let (w, c) = (
            t0.elapsed().as_secs_f64(),
            cpu_seconds().unwrap_or(f64::NAN),
        );
        steps.push((mark.0.clone(), w - mark.1, c - mark.2));
        mark = (what.to_string(), w, c);
    };
    let dut = Dut::read(path).expect("demo DUT file");
    let report = from_dut_with_progress(&dut, opts, &mut |_, _, what| close(what, &mut steps))
        .expect("report");
    close("HTML and inline SVG", &mut steps);
    let html = tauwise::report::render_html(&report).expect("html");
    std::hint::black_box(html.len());
    close("end", &mut steps);
    let wall = t0.elapsed().as_secs_f64();
    let cpu = cpu_seconds().unwrap_or(f64::NAN) - c0;
    (wall, cpu, steps.split_off(1))
}

/// Run the release binary once: (wall, CPU of the child).
fn command(bin: &Path, args: &[String]) -> (f64, f64) {
    let c0 = children_cpu_seconds().unwrap_or(f64::NAN);
    let t0 = Instant::now();
    let out = std::process::Command::new(bin)
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run tauwise");
    let wall = t0.elapsed().as_secs_f64();
    assert!(
        out.status.success(),
        "tauwise {}: {}",
        args.join(" "),
        String::from_utf8_lossy(&out.stderr)
    );
    (wall, children_cpu_seconds().unwrap_or(f64::NAN) - c0)
}

fn main() {
    let runs: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(3)
        .max(1);
    let manifest = Path::new(env!("CARGO_MANIFEST_DIR"));
    let root = manifest.join("demo-data");
    let names = ["ocxo-a", "ocxo-b", "rb-1"];
    let opts = BuildOptions::default();
    println!(
        "threads = {}, runs = {runs}, load average before: {}",
        rayon::current_num_threads(),
        load_average()
    );
    let out = std::env::temp_dir();
    let bin = std::env::var_os("TAUWISE_BIN")
        .map(std::path::PathBuf::from)
        .unwrap_or_else(|| manifest.join("target/release/tauwise"));
    // TAUWISE_BIN_BEFORE: a build from before a change, timed in the same
    // interleaved runs, so that both see the same load.
    let before = std::env::var_os("TAUWISE_BIN_BEFORE").map(std::path::PathBuf::from);
    let builds: Vec<(&str, std::path::PathBuf)> = std::iter::once(("now", bin.clone()))
        .chain(before.map(|b| ("before", b)))
        .collect();
    if builds.iter().all(|(_, b)| b.exists()) {
        let mut jobs: Vec<(String, Vec<String>)> = names
            .iter()
            .map(|n| {
                (
                    n.to_string(),
                    vec![
                        "report".into(),
                        format!("demo-data/{n}.toml"),
                        "-o".into(),
                        out.join(format!("tauwise-bench-{n}.html"))
                            .display()
                            .to_string(),
                    ],
                )
            })
            .collect();
        let mut fleet_args = vec!["report".to_string()];
        fleet_args.extend(names.iter().map(|n| format!("demo-data/{n}.toml")));
        fleet_args.extend([
            "-o".into(),
            out.join("tauwise-bench-fleet.html").display().to_string(),
        ]);
        jobs.push(("fleet".into(), fleet_args));
        let mut times: Vec<Vec<(Vec<f64>, Vec<f64>)>> =
            vec![vec![(Vec::new(), Vec::new()); jobs.len()]; builds.len()];
        for _ in 0..runs {
            for (j, (_, args)) in jobs.iter().enumerate() {
                for (b, (_, path)) in builds.iter().enumerate() {
                    let (w, c) = command(path, args);
                    times[b][j].0.push(w);
                    times[b][j].1.push(c);
                }
            }
        }
        for ((label, path), times) in builds.iter().zip(times.iter_mut()) {
            println!(
                "command line, {label} ({}), median of {runs}:",
                path.display()
            );
            let mut medians = Vec::new();
            let mut leasts = Vec::new();
            for ((name, _), (w, c)) in jobs.iter().zip(times.iter_mut()) {
                // The least of the runs as well: on a shared machine the
                // run that waited least for a core.
                let least = |v: &[f64]| v.iter().copied().fold(f64::INFINITY, f64::min);
                let (wl, cl) = (least(w), least(c));
                let (w, c) = (median(w), median(c));
                println!("  {name:<7} wall {w:.3} s (least {wl:.3})  cpu {c:.2} s (least {cl:.2})");
                medians.push((w, c));
                leasts.push(wl);
            }
            let (fw, fc) = medians[names.len()];
            let (sw, sc) = medians[..names.len()]
                .iter()
                .fold((0.0f64, 0.0f64), |(a, b), &(w, c)| (a.max(w), b.max(c)));
            let sum_cpu: f64 = medians[..names.len()].iter().map(|m| m.1).sum();
            let slowest_least = leasts[..names.len()].iter().copied().fold(0.0f64, f64::max);
            println!(
                "  fleet / slowest single: wall {:.2}× (least runs {:.2}×), cpu {:.2}× (sum of the singles' cpu {sum_cpu:.2} s)",
                fw / sw,
                leasts[names.len()] / slowest_least,
                fc / sc
            );
        }
    } else {
        println!(
            "({} not built: `cargo build --release` first for the command-line figures)",
            builds
                .iter()
                .map(|(_, b)| b.display().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    println!("each single report in this process, by step (first run, caches cold for the first report only):");
    for n in names {
        let (w, c, steps) = single(&root.join(format!("{n}.toml")), &opts);
        println!("  {n:<7} wall {w:.3} s cpu {c:.2} s");
        for (what, sw, sc) in steps {
            println!(
                "          {what:<40} wall {sw:.3} s cpu {sc:.2} s (cores busy {:.2})",
                sc / sw.max(1e-9)
            );
        }
    }
    println!("load average after: {}", load_average());
}
