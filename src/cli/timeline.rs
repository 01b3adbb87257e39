//! `tauwise timeline FILE --window 6h --step 15min`: σ(τ) in a window
//! sliding along the record (dynamic Allan variance), the windows that
//! depart from the whole record, as a table, CSV or JSON (docs/json.md),
//! with an optional heat-map picture.

use super::common::{ConfidenceArgs, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::deviation::Estimator;
use tauwise::parse::{Duration, Probability};
use tauwise::results::TimelineBody;
use tauwise::timeline::{timeline, window_and_step, Request, EVENT_CONFIDENCE};
use tauwise::Result;

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
    #[arg(long = "dev", value_name = "EST", default_value = "oadev", value_parser = tauwise::timeline::estimator_named)]
    pub dev: Estimator,
    #[command(flatten)]
    pub taus: TauArgs,
    #[command(flatten)]
    pub confidence: ConfidenceArgs,
    /// Two-sided confidence of the intervals of the event test (a window
    /// departs when its interval and the whole record's do not overlap).
    #[arg(long, value_name = "P", default_value_t = Probability::new(EVENT_CONFIDENCE).expect("in (0, 1)"), value_parser = str::parse::<Probability>)]
    pub event_confidence: Probability,
    #[command(flatten)]
    pub drift: super::common::DriftArgs,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `timeline`.
pub fn run(args: Args) -> Result<Outcome> {
    args.output.check(&[args.file.as_path()], &args.plot)?;
    let mut series = args.input.load(&args.file)?;
    series.record = args.drift.apply(series.record)?;
    let phase = series.record.to_phase();
    let (window, step) = window_and_step(
        &phase,
        ("--window", args.window.seconds()),
        ("--step", args.step.seconds()),
    )?;
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
    args.output.write(
        (&series).into(),
        &body,
        |b| b.csv(),
        |_| tauwise::results::timeline_text(&series.info.path, &t, &request),
    )?;
    Ok(Outcome::Done)
}
