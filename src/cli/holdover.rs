//! `tauwise holdover FILE`: time error predicted through a holdover span from
//! the record, against a budget.

use super::common::{count, Block, InputArgs, OutputArgs, PlotArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::{Path, PathBuf};
use tauwise::holdover::aging::AgingModel;
use tauwise::holdover::{caution, record_holdover, FromRecord, Settings};
use tauwise::parse::{
    non_negative_fraction, temp_coeff, temp_swing, Duration, Fraction, Model, Rate,
};
use tauwise::plot::holdover::HoldoverPlot;
use tauwise::plot::overlay::records_holdover_chart;
use tauwise::{Error, Result};

/// Time error through a holdover span, against a budget.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
#[command(mut_arg("plot", |a| a.help("Draw the time error through the span (deterministic, p50/p95/p99 \
of |TE|, the budget and the hold time) to FILE (.svg or .png).")))]
pub struct Args {
    /// Input file: phase or frequency record up to the loss of reference;
    /// several files give one block each and --plot overlays their p95/p50.
    #[arg(value_name = "FILE", required = true)]
    pub files: Vec<PathBuf>,
    #[command(flatten)]
    pub input: InputArgs,
    /// Holdover span, with its unit (e.g. 8h, 24h; a bare number is refused).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive_with_unit)]
    pub span: Duration,
    /// Time-error budget, with its unit (e.g. 1.5us; a bare number is refused).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive_with_unit)]
    pub budget: Duration,
    /// Monte Carlo paths (at least 100 for a verdict; paths × steps bounded
    /// by the memory they need).
    #[arg(long, default_value_t = 2000, value_name = "N", value_parser = count)]
    pub paths: usize,
    /// Seed of the Monte Carlo paths.
    #[arg(long, default_value_t = 1, value_name = "N")]
    pub seed: u64,
    /// Simulation steps over the span (16 to 4194304).
    #[arg(long, default_value_t = 4096, value_name = "N", value_parser = count)]
    pub steps: usize,
    /// Time error when the reference is lost, with its unit (e.g. 20ns).
    #[arg(
        long,
        default_value = "0s",
        value_name = "DUR",
        allow_hyphen_values = true,
        value_parser = Duration::with_unit
    )]
    pub te0: Duration,
    /// Fractional-frequency error at the start of holdover (e.g. 2e-12,
    /// 0.5ppb) instead of the one estimated at the record's end — for a
    /// disciplined unit, the loop's residual when the reference is lost.
    #[arg(long, value_name = "FRAC", allow_hyphen_values = true, value_parser = str::parse::<Fraction>)]
    pub y0: Option<Fraction>,
    /// Standard uncertainty of --y0 (default 0); drawn per Monte Carlo path.
    #[arg(long, value_name = "FRAC", requires = "y0", value_parser = non_negative_fraction)]
    pub y0_sigma: Option<Fraction>,
    /// Window at the end of the record for the initial frequency y0, with
    /// its unit (e.g. 2h). Default: a tenth of the record.
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive_with_unit)]
    pub settle: Option<Duration>,
    /// Holdover starts at this record time instead of the record's end;
    /// the record after it is then set beside the prediction (observed TE
    /// against the predicted p95, and when it first exceeds the budget).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive_with_unit)]
    pub start: Option<Duration>,
    /// Given linear aging with its unit (e.g. 5e-11/day) instead of a fit.
    #[arg(long, value_name = "RATE", allow_hyphen_values = true, value_parser = str::parse::<Rate>)]
    pub aging: Option<Rate>,
    /// The aging law to fit on the record: linear (y = c + D·t) or log
    /// (y = c + A·ln(1 + t/t_c)).
    #[arg(long, value_name = "LAW", default_value = "linear", value_parser = str::parse::<AgingModel>)]
    pub aging_model: AgingModel,
    /// Temperature coefficient of frequency, e.g. 1e-11/K (with --temp-swing).
    #[arg(long, value_name = "C", allow_hyphen_values = true, value_parser = temp_coeff, requires = "temp_swing")]
    pub temp_coeff: Option<f64>,
    /// Worst-case temperature swing during holdover, e.g. 5K.
    #[arg(long, value_name = "K", allow_hyphen_values = true, value_parser = temp_swing, requires = "temp_coeff")]
    pub temp_swing: Option<f64>,
    /// Noise model instead of the fit, e.g. h0=1e-22,h-1=3e-26,h-2=1e-31.
    #[arg(long, value_name = "MODEL", value_parser = str::parse::<Model>)]
    pub model: Option<Model>,
    #[command(flatten)]
    pub gate: super::common::GateArgs,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `holdover`.
pub fn run(args: Args) -> Result<Outcome> {
    let inputs: Vec<&Path> = args.files.iter().map(PathBuf::as_path).collect();
    args.output.check(&inputs, &args.plot)?;
    let (span, budget) = (args.span.seconds(), args.budget.seconds());
    // clap makes the two go together (`requires`).
    let temp_worst = match (args.temp_coeff, args.temp_swing) {
        (Some(c), Some(s)) => (c * s).abs(),
        _ => 0.0,
    };
    if args.y0.is_some() && args.settle.is_some() {
        return Err(Error::option(
            "--settle",
            "sets the window for the y0 estimated on the record; with --y0 it has no use",
        ));
    }
    let settings = Settings {
        paths: args.paths,
        seed: args.seed,
        steps: args.steps,
        decision: args.gate.rule(None),
        ..Settings::new(span, budget)
    };
    let progress = super::common::Progress::start("holdover");
    let (mut blocks, mut plots, mut judgements) = (Vec::new(), Vec::new(), Vec::new());
    for file in &args.files {
        progress.stage(format!("reading {}", file.display()));
        let series = args.input.load(file)?;
        progress.stage("computing");
        let opts = FromRecord {
            te0: args.te0.seconds(),
            settle: args.settle.map(Duration::seconds),
            start: args.start.map(Duration::seconds),
            aging_model: args.aging_model,
            aging_given: args.aging.map(Rate::per_second),
            temp_worst,
            noise: args.model.map(|m| m.power_law(0.5 / series.record.tau0())),
            y0_given: (args.y0).map(|y0| (y0.value(), args.y0_sigma.map_or(0.0, Fraction::value))),
            seed: args.seed,
            ..FromRecord::default()
        };
        let r = record_holdover(&series.record, &opts, &settings)?;
        let path = series.info.path.display().to_string();
        let plot =
            HoldoverPlot::from_prediction(&path, &r.prediction, span, budget, vec![caution()]);
        if let ([_], Some(file)) = (&args.files[..], &args.plot.plot) {
            let chart = plot.clone().with_observed(r.observed.as_ref()).chart();
            tauwise::plot::render(&chart, file, tauwise::plot::DEFAULT_SIZE)?;
        }
        plots.push((path.clone(), plot));
        judgements.push(r.prediction.judgement.clone());
        let body = r.body;
        blocks.push(Block {
            name: file.display().to_string(),
            input: (&series).into(),
            table: body.table(&path, opts.start.is_some()).render(),
            csv: body.csv()?,
            body,
        });
    }
    if let (Some(file), true) = (&args.plot.plot, args.files.len() > 1) {
        let chart = records_holdover_chart(&plots, budget, span);
        tauwise::plot::render(&chart, file, tauwise::plot::DEFAULT_SIZE)?;
    }
    args.output.write_records(blocks)?;
    Ok(args.gate.outcome(tauwise::verdict::gate(&judgements)))
}
