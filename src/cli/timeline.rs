//! `tauwise timeline FILE --window 6h --step 15min`: σ(τ) in a window
//! sliding along the record (dynamic Allan variance), the windows that
//! depart from the whole record, as a table, CSV or JSON (docs/json.md),
//! with an optional heat-map picture.

use super::common::{
    emit, json_doc, ConfidenceArgs, Format, InputArgs, OutputArgs, PlotArgs, TauArgs,
};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::deviation::Estimator;
use tauwise::parse::{Duration, Probability};
use tauwise::results::TimelineBody;
use tauwise::timeline::{timeline, Direction, Request, Timeline, EVENT_CONFIDENCE};
use tauwise::units::{format_si, format_sig};
use tauwise::{Error, Result};

/// σ(τ) in a sliding window, and where it departs from the whole record.
#[derive(Debug, ClapArgs)]
#[command(mut_arg("plot", |a| a.help("Draw the heat map to FILE (.svg or .png): window centre × τ, colour = window ÷ whole record, the whole-record curve beside it")))]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Window length, a whole number of τ0 (e.g. 6h).
    #[arg(long, value_name = "DUR", value_parser = Duration::positive_with_unit)]
    pub window: Duration,
    /// Step between window starts, a whole number of τ0 (e.g. 15min).
    #[arg(long, value_name = "DUR", value_parser = Duration::positive_with_unit)]
    pub step: Duration,
    /// The estimator (oadev, mdev, tdev, ohdev).
    #[arg(long = "dev", value_name = "EST", default_value = "oadev", value_parser = estimator)]
    pub dev: Estimator,
    #[command(flatten)]
    pub taus: TauArgs,
    #[command(flatten)]
    pub confidence: ConfidenceArgs,
    /// Two-sided confidence of the intervals of the event test (a window
    /// departs when its interval and the whole record's do not overlap).
    #[arg(long, value_name = "P", default_value_t = Probability::new(EVENT_CONFIDENCE).expect("in (0, 1)"), value_parser = str::parse::<Probability>)]
    pub event_confidence: Probability,
    /// Remove a least-squares frequency drift before the analysis.
    #[arg(long, value_enum, value_name = "MODEL")]
    pub remove_drift: Option<super::prepare::DriftArg>,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `--dev`: one estimator the timeline supports.
fn estimator(s: &str) -> std::result::Result<Estimator, tauwise::units::UnitError> {
    let bad = |reason: String| tauwise::units::UnitError::Invalid {
        text: s.to_string(),
        reason,
    };
    let e = Estimator::from_name(s).map_err(|e| bad(e.to_string()))?;
    if !tauwise::timeline::SUPPORTED.contains(&e) {
        return Err(bad(format!(
            "'{s}' has no timeline: expected one of {}",
            Estimator::names(tauwise::timeline::SUPPORTED)
        )));
    }
    Ok(e)
}

/// A duration as a whole number of τ0 (within 1e-6), or an error naming
/// the option.
fn samples(d: Duration, tau0: f64, option: &str) -> Result<usize> {
    let k = d.seconds() / tau0;
    let r = k.round();
    if !(r >= 1.0 && (k - r).abs() <= 1e-6 * r.max(1.0) && r < 1e12) {
        return Err(Error::option(
            option,
            format!("{} s is not a whole number of τ0 = {} s", d.seconds(), tau0),
        ));
    }
    Ok(r as usize)
}

/// Run `timeline`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(
        &[args.file.as_path()],
        &[args.output.output.as_deref(), args.plot.plot.as_deref()],
    )?;
    let mut series = args.input.load(&args.file)?;
    series.record = super::prepare::without_drift(series.record, args.remove_drift)?;
    let phase = series.record.to_phase();
    let window = samples(args.window, phase.tau0, "--window")?;
    let step = samples(args.step, phase.tau0, "--step")?;
    if window > phase.len() {
        return Err(Error::option(
            "--window",
            format!(
                "{} is longer than the record ({} samples at τ0 = {} s)",
                format_si(args.window.seconds(), "s", 4),
                phase.len(),
                phase.tau0
            ),
        ));
    }
    let request = Request {
        estimator: args.dev,
        grid: args.taus.taus.clone(),
        window,
        step,
        confidence: args.confidence.confidence.value(),
        event_confidence: args.event_confidence.value(),
    };
    let progress = super::common::Progress::start("timeline");
    progress.stage("computing the windows");
    let t = timeline(&phase, &request)?;
    drop(progress);
    if let Some(path) = &args.plot.plot {
        tauwise::plot::timeline::render(&t, &series.info.path.display().to_string(), path)?;
    }
    let body = TimelineBody::new(&t, request.confidence, request.event_confidence);
    let text = match args.output.format() {
        Format::Json => json_doc((&series).into(), body)?,
        Format::Csv => body.csv()?,
        Format::Table => table(&series.info.path, &t, &request),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

/// A time in seconds from the first sample, in h, min or s.
fn when(t: f64) -> String {
    if t >= 7200.0 {
        format!("{} h", format_sig(t / 3600.0, 4))
    } else if t >= 120.0 {
        format!("{} min", format_sig(t / 60.0, 4))
    } else {
        format_si(t, "s", 4)
    }
}

/// The readable table: the whole record, the events, then each window's
/// ratios to the whole record.
pub fn table(path: &std::path::Path, t: &Timeline, req: &Request) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# {}: {} in {} windows of {} moved by {} (times from the first sample)",
        path.display(),
        t.whole.estimator.name(),
        t.windows.len(),
        when(t.window_s),
        when(t.step_s)
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "whole record");
    let _ = writeln!(
        s,
        "{:>10} {:>11} {:>25} {:>9} {:>5} {:>14}",
        "tau",
        "dev",
        format!("{:.1} % interval", req.confidence * 100.0),
        "edf",
        "noise",
        "false alarms"
    );
    for p in &t.whole.points {
        let fa = t
            .false_alarm
            .iter()
            .find(|f| f.tau == p.estimate.tau)
            .map(|f| format!("{:.1e}", f.rate))
            .unwrap_or_else(|| "—".into());
        let _ = writeln!(
            s,
            "{:>10} {:>11} {:>25} {:>9} {:>5} {:>14}",
            format_si(p.estimate.tau, "s", 4),
            format_sig(p.estimate.value, 4),
            match (p.lo, p.hi) {
                (Some(lo), Some(hi)) => format!("[{} … {}]", format_sig(lo, 4), format_sig(hi, 4)),
                _ => "—".into(),
            },
            p.edf
                .map(|e| format_sig(e, 4))
                .unwrap_or_else(|| "—".into()),
            p.noise().unwrap_or("—"),
            fa
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "events — windows whose interval and the whole record's ({:.0} % each) do not overlap",
        req.event_confidence * 100.0
    );
    if t.events.is_empty() {
        let _ = writeln!(s, "  none");
    } else {
        let _ = writeln!(
            s,
            "{:>12} {:>12} {:>10} {:>8} {:>6} {:>8}",
            "from", "to", "tau", "ratio", "", "windows"
        );
        for e in &t.events {
            let _ = writeln!(
                s,
                "{:>12} {:>12} {:>10} {:>8.3} {:>6} {:>8}",
                when(e.start),
                when(e.end),
                format_si(e.tau, "s", 4),
                e.ratio,
                match e.direction {
                    Direction::Above => "above",
                    Direction::Below => "below",
                },
                e.windows
            );
        }
    }
    let _ = writeln!(
        s,
        "false alarms: the expected fraction of windows flagged at each τ on a stationary record (log-normal approximation, docs/separate-and-timeline.md)"
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "window ÷ whole record at each τ");
    let _ = write!(s, "{:>12}", "centre");
    for p in &t.whole.points {
        let _ = write!(
            s,
            " {:>7}",
            format_si(p.estimate.tau, "s", 3).replace(' ', "")
        );
    }
    let _ = writeln!(s);
    for w in &t.windows {
        let _ = write!(s, "{:>12}", when(w.centre()));
        for wp in &t.whole.points {
            let cell = w
                .points
                .iter()
                .find(|p| p.estimate.m == wp.estimate.m)
                .map(|p| format!("{:.3}", p.estimate.value / wp.estimate.value))
                .unwrap_or_else(|| "—".into());
            let _ = write!(s, " {cell:>7}");
        }
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "{}", tauwise::DECISION_CAUTION);
    s
}
