//! `tauwise stability FILE`: σ(τ) curves with confidence intervals and the
//! noise type at each τ, as a table, CSV or JSON (DESIGN.md §5).

use super::common::{emit, header_json, json_text, num, plain, Format, InputArgs, OutputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::deviation::{Curve, Estimator};
use tauwise::stability::{analyse, Request};
use tauwise::tau::TauGrid;
use tauwise::units::{format_si, format_sig};
use tauwise::Result;

/// σ(τ) curves with confidence intervals and noise type.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Estimators, comma-separated (adev, oadev, mdev, tdev, hdev, ohdev,
    /// totdev, mtie, tierms).
    #[arg(long = "dev", value_name = "LIST", default_value = "oadev")]
    pub dev: String,
    /// τ grid: octave, decade, all, log:N (N per decade) or a list of
    /// durations (1,10,100s,1h).
    #[arg(long, value_name = "GRID", default_value = "octave")]
    pub taus: String,
    /// Two-sided confidence level of the intervals.
    #[arg(
        long,
        value_name = "P",
        default_value_t = 0.683,
        allow_hyphen_values = true
    )]
    pub confidence: f64,
    /// Force one noise type for every τ (WPM FPM WFM FFM RWFM, or α)
    /// instead of identifying it per τ.
    #[arg(long = "noise-type", value_name = "TYPE", allow_hyphen_values = true)]
    pub noise_type: Option<String>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `stability`.
pub fn run(args: Args) -> Result<Outcome> {
    let estimators = Estimator::parse_list(&args.dev)?;
    let grid = TauGrid::parse(&args.taus)?;
    let forced_alpha = match &args.noise_type {
        Some(t) => Some(tauwise::model::parse_noise(t)?),
        None => None,
    };
    let series = args.input.load(&args.file)?;
    let request = Request {
        estimators,
        grid,
        confidence: args.confidence,
        forced_alpha,
    };
    let phase = series.record.to_phase();
    let curves = analyse(&phase, &request)?;
    let text = match args.output.format {
        Format::Json => {
            let mut m = header_json(&series);
            m.insert("confidence".into(), num(request.confidence));
            m.insert("curves".into(), curves_json(&curves));
            json_text(&serde_json::Value::Object(m))
        }
        Format::Csv => curves_csv(&curves),
        Format::Table => curves_table(&series.info.path, &curves, request.confidence),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

fn opt(v: Option<f64>) -> serde_json::Value {
    v.map(num).unwrap_or(serde_json::Value::Null)
}

/// The `"curves"` array of DESIGN.md §5.
pub fn curves_json(curves: &[Curve]) -> serde_json::Value {
    let list: Vec<serde_json::Value> = curves
        .iter()
        .map(|c| {
            let pts: Vec<serde_json::Value> = c
                .points
                .iter()
                .map(|p| {
                    serde_json::json!({
                        "tau": num(p.estimate.tau),
                        "m": p.estimate.m,
                        "dev": num(p.estimate.value),
                        "terms": p.estimate.terms,
                        "edf": opt(p.edf),
                        "lo": opt(p.lo),
                        "hi": opt(p.hi),
                        "alpha": p.alpha,
                        "noise": p.noise(),
                    })
                })
                .collect();
            serde_json::json!({"estimator": c.estimator, "points": pts})
        })
        .collect();
    serde_json::Value::Array(list)
}

/// One CSV row per point: `estimator,tau,m,dev,terms,edf,lo,hi,alpha,noise`.
pub fn curves_csv(curves: &[Curve]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    let cell = |v: Option<f64>| v.map(plain).unwrap_or_default();
    let _ = w.write_record([
        "estimator",
        "tau",
        "m",
        "dev",
        "terms",
        "edf",
        "lo",
        "hi",
        "alpha",
        "noise",
    ]);
    for c in curves {
        for p in &c.points {
            let _ = w.write_record([
                c.estimator.clone(),
                plain(p.estimate.tau),
                p.estimate.m.to_string(),
                plain(p.estimate.value),
                p.estimate.terms.to_string(),
                cell(p.edf),
                cell(p.lo),
                cell(p.hi),
                p.alpha.map(|a| a.to_string()).unwrap_or_default(),
                p.noise().unwrap_or("").to_string(),
            ]);
        }
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// A readable table: one block per estimator, τ with SI prefix, the value
/// to 4 significant digits and its interval.
pub fn curves_table(path: &std::path::Path, curves: &[Curve], confidence: f64) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {}", path.display());
    for c in curves {
        let est = Estimator::from_name(&c.estimator).ok();
        let title = est.map(|e| e.title()).unwrap_or("");
        let time = est.map(|e| e.is_time_deviation()).unwrap_or(false);
        let _ = writeln!(s);
        let _ = writeln!(s, "{} — {title}", c.estimator);
        let _ = writeln!(
            s,
            "{:>10} {:>9} {:>11} {:>25} {:>9} {:>9} {:>5}",
            "tau",
            "m",
            "dev",
            format!("{:.1} % interval", confidence * 100.0),
            "edf",
            "terms",
            "noise"
        );
        let fmt = |v: f64| {
            if time {
                format_si(v, "s", 4)
            } else {
                format_sig(v, 4)
            }
        };
        for p in &c.points {
            let interval = match (p.lo, p.hi) {
                (Some(lo), Some(hi)) => format!("[{} … {}]", fmt(lo), fmt(hi)),
                _ => "—".to_string(),
            };
            let _ = writeln!(
                s,
                "{:>10} {:>9} {:>11} {:>25} {:>9} {:>9} {:>5}",
                format_si(p.estimate.tau, "s", 4),
                p.estimate.m,
                fmt(p.estimate.value),
                interval,
                p.edf
                    .map(|e| format_sig(e, 4))
                    .unwrap_or_else(|| "—".into()),
                p.estimate.terms,
                p.noise().unwrap_or("—"),
            );
        }
    }
    s
}
