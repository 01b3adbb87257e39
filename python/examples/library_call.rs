//! The library's time for what `tauwise.stability(x, tau0=1.0, dev=DEV,
//! taus=TAUS)` asks, with no Python in between: the record built from the
//! values (the one copy the Python call makes; a phase record is then used
//! as it is), σ(τ) with intervals and
//! noise types, and the JSON document — the same calls as
//! `_tauwise.stability`. `python/bench/overhead.py` runs it beside the
//! Python call; the difference is what the Python layer costs.
//!
//! ```sh
//! cargo run --release -p tauwise-python --example library_call -- FILE.npy DEV TAUS REPEATS
//! ```
//!
//! Prints one line per repeat: `wall_s cpu_s` (CPU of the whole process,
//! all threads, from getrusage).

use std::time::Instant;
use tauwise::io::series::{read_series, SeriesOptions};
use tauwise::results::{AnyCurve, Document, Input, LimitsPart, RecordInput, StabilityBody};

fn cpu_seconds() -> f64 {
    // /proc/self/stat fields 14 and 15: user and system time in clock ticks.
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let after = stat.rsplit(')').next().unwrap_or("");
    let f: Vec<&str> = after.split_whitespace().collect();
    let ticks = |i: usize| f.get(i).and_then(|v| v.parse::<f64>().ok()).unwrap_or(0.0);
    (ticks(11) + ticks(12)) / 100.0
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if args.len() != 5 {
        return Err("usage: library_call FILE.npy DEV TAUS REPEATS".into());
    }
    let opts = SeriesOptions {
        tau0: Some(1.0),
        ..Default::default()
    };
    let series = read_series(std::path::Path::new(&args[1]), &opts)?;
    let values = series.record.to_phase().x;
    let estimators = args[2].parse::<tauwise::parse::EstimatorList>()?.0;
    let grid = tauwise::tau::TauGrid::parse(&args[3])?;
    let repeats: usize = args[4].parse()?;
    for _ in 0..repeats {
        let (w0, c0) = (Instant::now(), cpu_seconds());
        let phase = tauwise::PhaseRecord::new(values.to_vec(), 1.0)?;
        let request = tauwise::stability::Request {
            estimators: estimators.clone(),
            grid: grid.clone(),
            confidence: tauwise::stats::DEFAULT_CONFIDENCE,
            forced_alpha: None,
            bias_correction: true,
        };
        let curves = tauwise::stability::analyse(&phase, &request)?;
        let body = StabilityBody {
            confidence: request.confidence,
            curves: curves.into_iter().map(AnyCurve::Plain).collect(),
            consistency: None,
            limits: LimitsPart::new(Vec::new(), Vec::new()),
        };
        let input = Input::Record(RecordInput {
            path: "<array>".into(),
            data: "phase",
            tau0: 1.0,
            points: phase.len(),
            gaps: phase.gaps(),
            preamble_lines: Vec::new(),
        });
        let (text, _) = Document::new(input, body).json()?;
        std::hint::black_box(text);
        println!(
            "{:.6} {:.3}",
            w0.elapsed().as_secs_f64(),
            cpu_seconds() - c0
        );
    }
    Ok(())
}
