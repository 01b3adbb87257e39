//! `tauwise stability FILE`: σ(τ) curves with confidence intervals and the
//! noise type at each τ, as a table, CSV or JSON (docs/json.md).

use super::common::{ConfidenceArgs, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::deviation::{Curve, Estimator};
use tauwise::parse::{EstimatorList, Frequency};
use tauwise::plot::stability::{stability_charts, time_chart_path};
use tauwise::results::{AnyCurve, BestCurve, RecordInput, StabilityBody};
use tauwise::stability::{analyse, best, Request};
use tauwise::Result;

/// σ(τ) curves with confidence intervals and noise type.
#[derive(Debug, ClapArgs)]
#[command(mut_arg("plot", |a| a.help(plot_help())))]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
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
    let mut inputs = vec![args.file.as_path()];
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
    let (limit_set, elsewhere) = tauwise::limits::read_for(&args.limit_files, "stability")?;
    let estimators = args.dev.0.clone();
    let grid = args.taus.taus.clone();
    let forced_alpha = args.noise_type;
    let progress = super::common::Progress::start("stability");
    progress.stage(format!("reading {}", args.file.display()));
    let mut series = args.input.load(&args.file)?;
    series.record = args.drift.apply(series.record)?;
    let request = Request {
        estimators,
        grid,
        confidence: args.confidence.confidence.value(),
        forced_alpha,
        bias_correction: !args.uncorrected,
    };
    let phase = series.record.to_phase();
    progress.stage(format!("computing {}", args.dev));
    let measured = analyse(&phase, &request)?;
    let best_points = args.best.then(|| best(&measured, phase.len(), phase.tau0));
    let limit_checks = tauwise::limits::check_sigma(&phase, &request, &limit_set)?;
    let view = match &args.lf {
        Some(table) => Some(phase_noise_view(&args, table, &measured, phase.tau0)?),
        None => None,
    };
    let mut curves = measured.clone();
    if let Some(v) = &view {
        curves.extend(v.curves.iter().cloned());
    }
    if let Some(path) = &args.plot.plot {
        let best_curve = best_points.as_deref().map(tauwise::stability::best_curve);
        let (mut main, mut time) = stability_charts(
            &series.info.path.display().to_string(),
            &curves,
            &measured,
            request.confidence,
            best_curve.as_ref(),
        );
        // Each limit on the chart of its values: σ_y on the main chart
        // (when it shows σ_y), time deviations on theirs.
        let main_is_time = curves.iter().all(|c| c.estimator.is_time_deviation());
        use tauwise::limits::ValueKind;
        use tauwise::plot::limit_lines::add_limits;
        if main_is_time {
            add_limits(&mut main, &limit_set, ValueKind::Duration);
        } else {
            add_limits(&mut main, &limit_set, ValueKind::Fraction);
        }
        if let Some(t) = time.as_mut() {
            add_limits(t, &limit_set, ValueKind::Duration);
        }
        tauwise::plot::render(&main, path, (960, 600))?;
        // Time deviations beside σ_y curves: their own chart, FILE-time.EXT.
        if let Some(time) = time {
            tauwise::plot::render(&time, &time_chart_path(path), (960, 600))?;
        }
    }
    let mut list: Vec<AnyCurve> = curves.iter().cloned().map(AnyCurve::Plain).collect();
    if let Some(b) = &best_points {
        list.push(AnyCurve::Best(BestCurve::new(b)));
    }
    let body = StabilityBody {
        confidence: request.confidence,
        curves: list,
        consistency: view.as_ref().map(|v| v.comparisons.clone()),
        limits: tauwise::results::LimitsPart::new(limit_checks, elsewhere),
    };
    let gate = tauwise::verdict::gate(tauwise::limits::judgements(&body.limits.limits));
    args.output.write(
        (&series).into(),
        &body,
        |b| b.csv(),
        |b| b.table(&RecordInput::of(&series)).render(),
    )?;
    Ok(args.gate.outcome(gate))
}

/// Read the `--lf` table and convert it beside the measured curves.
fn phase_noise_view(
    args: &Args,
    table: &std::path::Path,
    measured: &[Curve],
    tau0: f64,
) -> Result<tauwise::stability::PhaseNoiseView> {
    let carrier = match args.input.carrier {
        Some(c) => c.hertz(),
        None => {
            return Err(tauwise::Error::option(
                "--lf",
                "needs --carrier (the carrier frequency of the phase-noise table, e.g. 10MHz)",
            ))
        }
    };
    let opts = tauwise::io::lf_table::TableOptions {
        carrier: Some(carrier),
        ..Default::default()
    };
    let view = tauwise::stability::ViewOptions {
        bandwidth: args.bandwidth.map(Frequency::hertz),
        table_uncertainty_db: args
            .lf_uncertainty
            .unwrap_or(tauwise::stability::DEFAULT_TABLE_UNCERTAINTY_DB),
    };
    let t = tauwise::io::lf_table::read_lf_table(table, &opts)?;
    tauwise::stability::from_phase_noise(measured, &t.spectrum, tau0, &view)
}
