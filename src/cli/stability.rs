//! `tauwise stability FILE`: σ(τ) curves with confidence intervals and the
//! noise type at each τ, as a table, CSV or JSON (docs/json.md).

use super::common::{Block, ConfidenceArgs, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::{Path, PathBuf};
use tauwise::deviation::Estimator;
use tauwise::parse::{EstimatorList, Frequency};
use tauwise::plot::stability::{records_charts, time_chart_path};
use tauwise::results::RecordInput;
use tauwise::stability::{
    record_stability, Additions, Request, ViewOptions, DEFAULT_TABLE_UNCERTAINTY_DB,
};
use tauwise::Result;

/// σ(τ) curves with confidence intervals and noise type.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
#[command(mut_arg("plot", |a| a.help(plot_help())))]
pub struct Args {
    /// Input file (`-` reads standard input); several files give one block
    /// each and a chart overlaying the first estimator of --dev.
    #[arg(value_name = "FILE", required = true)]
    pub files: Vec<PathBuf>,
    #[command(flatten)]
    pub input: InputArgs,
    /// Estimators, comma-separated (the registry's names: see `dev_help`).
    #[arg(long = "dev", value_name = "LIST", default_value = "oadev", value_parser = str::parse::<EstimatorList>, help = dev_help())]
    pub dev: EstimatorList,
    #[command(flatten)]
    pub taus: TauArgs,
    #[command(flatten)]
    pub confidence: ConfidenceArgs,
    /// Force one noise type for every τ (WPM FPM WFM FFM RWFM, or α)
    /// instead of identifying it per τ.
    #[arg(long = "noise-type", value_name = "TYPE", allow_hyphen_values = true, value_parser = tauwise::model::parse_noise)]
    pub noise_type: Option<i32>,
    /// Phase-noise table (offset vs L(f) in dBc/Hz) to convert to σ(τ) beside
    /// the measured curves (`<estimator>-from-lf`), with a consistency check
    /// where both exist; needs --carrier.
    #[arg(long = "lf", value_name = "TABLE")]
    pub lf: Option<PathBuf>,
    /// With --lf: the record's measurement bandwidth (e.g. 0.5Hz, 100Hz),
    /// at which the table's σ(τ) is computed for the comparison. Default:
    /// the record's Nyquist frequency 1/(2τ0).
    #[arg(long, value_name = "FREQ", requires = "lf", value_parser = Frequency::positive)]
    pub bandwidth: Option<Frequency>,
    /// With --lf: the table's own uncertainty in dB of L(f), part of the
    /// comparison's tolerance (default 2dB).
    #[arg(long, value_name = "DB", requires = "lf", value_parser = tauwise::parse::uncertainty_db)]
    pub lf_uncertainty: Option<f64>,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub drift: super::common::DriftArgs,
    /// Report the total family (totdev, mtot, ttot, htot) as computed,
    /// without dividing out its bias for the identified noise type.
    #[arg(long)]
    pub uncorrected: bool,
    /// Add a curve `best`: at each τ the point of the estimator with the
    /// most degrees of freedom (chosen from the EDFs alone, the same for any
    /// noise type, so the choice does not follow the value) among the
    /// requested estimators of the same variance as the first σ_y one (e.g.
    /// oadev, totdev, theoh; or mdev, mtot; or ohdev, htot), with the
    /// estimator it came from.
    #[arg(long)]
    pub best: bool,
    /// Limit file (repeatable; TOML, see docs/limit-file.md): each σ limit
    /// is checked against its own estimator on this record (computed on
    /// the τ grid plus the τ beside each of the limit's points, whether or
    /// not --dev asks for it); mtie/tdev and lf limits are named as left to
    /// `wander` and `jitter`.
    #[arg(long = "limit-file", value_name = "FILE")]
    pub limit_files: Vec<PathBuf>,
    #[command(flatten)]
    pub gate: super::common::GateArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// The help of `--dev`: every estimator of the registry.
fn dev_help() -> String {
    format!(
        "Estimators, comma-separated ({})",
        Estimator::names(Estimator::ALL)
    )
}

/// The help of `--plot`, naming the registry's time deviations.
fn plot_help() -> String {
    let time: Vec<Estimator> = Estimator::ALL
        .iter()
        .copied()
        .filter(|e| e.is_time_deviation())
        .collect();
    format!(
        "Draw the σ–τ chart to FILE (.svg or .png). Time deviations ({}) requested beside σ_y \
         curves go to their own chart, FILE-time.svg (or .png) next to it",
        Estimator::names(&time)
    )
}

/// Run `stability`.
pub fn run(args: Args) -> Result<Outcome> {
    let mut inputs: Vec<&Path> = args.files.iter().map(PathBuf::as_path).collect();
    inputs.extend(args.lf.as_deref());
    inputs.extend(args.limit_files.iter().map(|p| p.as_path()));
    let time_plot = args.plot.plot.as_deref().map(time_chart_path);
    super::common::check_output_paths(
        &inputs,
        &[
            args.output.output.as_deref(),
            args.plot.plot.as_deref(),
            time_plot.as_deref(),
        ],
    )?;
    // Limit files first: a bad file fails before the record is read.
    let (limits, elsewhere) = tauwise::limits::read_for(&args.limit_files, "stability")?;
    let table = match &args.lf {
        Some(path) => Some(read_table(&args, path)?),
        None => None,
    };
    let view = ViewOptions {
        bandwidth: args.bandwidth.map(Frequency::hertz),
        table_uncertainty_db: (args.lf_uncertainty).unwrap_or(DEFAULT_TABLE_UNCERTAINTY_DB),
    };
    let request = Request {
        estimators: args.dev.0.clone(),
        grid: args.taus.taus.clone(),
        confidence: args.confidence.confidence.value(),
        forced_alpha: args.noise_type,
        bias_correction: !args.uncorrected,
    };
    let progress = super::common::Progress::start("stability");
    let (mut blocks, mut results) = (Vec::new(), Vec::new());
    for file in &args.files {
        progress.stage(format!("reading {}", file.display()));
        let mut series = args.input.load(file)?;
        series.record = args.drift.apply(series.record)?;
        progress.stage(format!("computing {}", args.dev));
        let additions = Additions {
            best: args.best,
            limits: &limits,
            elsewhere: elsewhere.clone(),
            phase_noise: table.as_ref().map(|t| (&t.spectrum, view)),
            decision: args.gate.rule(None),
        };
        let r = record_stability(&series.record.to_phase(), &request, &additions)?;
        blocks.push(Block {
            name: file.display().to_string(),
            input: (&series).into(),
            table: r.body.table(&RecordInput::of(&series)).render(),
            csv: r.body.csv()?,
            body: r.body.clone(),
        });
        results.push((series.info.path.display().to_string(), r));
    }
    if let Some(path) = &args.plot.plot {
        let (main, time) = records_charts(&results, request.confidence, &limits);
        tauwise::plot::render(&main, path, (960, 600))?;
        // Time deviations beside σ_y curves: their own chart, FILE-time.EXT.
        if let Some(time) = time {
            tauwise::plot::render(&time, &time_chart_path(path), (960, 600))?;
        }
    }
    let gate = tauwise::verdict::gate(
        blocks
            .iter()
            .flat_map(|b| tauwise::limits::judgements(&b.body.limits.limits)),
    );
    args.output.write_records(blocks)?;
    Ok(args.gate.outcome(gate))
}

/// Read the `--lf` table (it needs --carrier).
fn read_table(args: &Args, table: &Path) -> Result<tauwise::io::lf_table::LfTable> {
    let carrier = super::common::carrier(args.input.carrier, "--lf", "the phase-noise table")?;
    let opts = tauwise::io::lf_table::TableOptions {
        carrier: Some(carrier),
        ..Default::default()
    };
    tauwise::io::lf_table::read_lf_table(table, &opts)
}
