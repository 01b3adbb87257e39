//! The library's time for what `tauwise.stability(x, tau0=1.0, dev=DEV,
//! taus=TAUS)` asks, with no Python in between: the record built from the
//! values (the one copy the Python call makes; a phase record is then used
//! as it is), σ(τ) with intervals and noise types
//! ([`tauwise::stability::record_stability`]), and the JSON document — the
//! same calls as `_tauwise.stability`. `python/bench/overhead.py` runs it beside the
//! Python call; the difference is what the Python layer costs.
//!
//! ```sh
//! cargo run --release -p tauwise-python --example library_call -- FILE.npy DEV TAUS REPEATS
//! ```
//!
//! Prints one line per repeat: `wall_s cpu_s peak_kib` — CPU of the whole
//! process, all threads (`CLOCK_PROCESS_CPUTIME_ID`), and the peak resident memory
//! during the repeat above the memory at rest before it, KiB (the peak is
//! reset before each repeat by writing 5 to /proc/self/clear_refs; Linux).

use std::time::Instant;
use tauwise::io::series::{read_series, SeriesOptions};
use tauwise::results::{Document, Input, RecordInput};

/// CPU time of the whole process, all threads, s (the clock Python's
/// `time.process_time` reads, ns resolution).
fn cpu_seconds() -> f64 {
    let mut t = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: clock_gettime writes one timespec into `t`, which lives here.
    let rc = unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut t) };
    if rc != 0 {
        return f64::NAN;
    }
    t.tv_sec as f64 + t.tv_nsec as f64 * 1e-9
}

/// A field of /proc/self/status in KiB (`VmRSS`, `VmHWM`).
fn status_kib(key: &str) -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find_map(|l| l.strip_prefix(key)?.strip_prefix(':'))
        .and_then(|v| v.split_whitespace().next()?.parse().ok())
        .unwrap_or(f64::NAN)
}

/// Reset the peak resident memory to the present one; the memory at rest.
fn reset_peak() -> f64 {
    // Unsupported kernels leave the peak as it is; the figure then shows it.
    let _ = std::fs::write("/proc/self/clear_refs", "5");
    status_kib("VmRSS")
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
        let rest = reset_peak();
        let (w0, c0) = (Instant::now(), cpu_seconds());
        {
            // Everything made here is dropped inside the timed span, as the
            // Python call frees its record before it returns.
            let phase = tauwise::PhaseRecord::new(values.to_vec(), 1.0)?;
            let request = tauwise::stability::Request {
                estimators: estimators.clone(),
                grid: grid.clone(),
                confidence: tauwise::stats::DEFAULT_CONFIDENCE,
                forced_alpha: None,
                bias_correction: true,
            };
            // The one library function `tauwise stability` and the Python
            // call make (no limits, no table, the default decision rule).
            let additions = tauwise::stability::Additions {
                best: false,
                limits: &[],
                elsewhere: Vec::new(),
                phase_noise: None,
                decision: Default::default(),
            };
            let body = tauwise::stability::record_stability(&phase, &request, &additions)?.body;
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
        }
        let (wall, cpu) = (w0.elapsed().as_secs_f64(), cpu_seconds() - c0);
        println!("{wall:.6} {cpu:.6} {:.0}", status_kib("VmHWM") - rest);
    }
    Ok(())
}
