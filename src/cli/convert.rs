//! `tauwise convert`: between phase-noise tables, power-law models and σ(τ)
//! ([`tauwise::spectrum::sigma`], IEEE Std 1139).

use super::common::{OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::path::PathBuf;
use tauwise::deviation::{Estimator, Origin};
use tauwise::io::lf_table::{read_lf_table, TableOptions, TableQuantity};
use tauwise::parse::{Duration, EstimatorList, Frequency, Model};
use tauwise::plot::convert as charts;
use tauwise::results::{ConvertSource as Source, FittedModel, LfBody, SigmaBody};
use tauwise::{Error, Result};

/// What to convert to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Target {
    /// σ(τ) curves (the `stability` curves shape).
    Sigma,
    /// An L(f) table (columns f, lf_dbc_hz, sphi, sy, sx).
    Lf,
    /// A power-law model h_α fitted to the table (IEEE Std 1139 terms).
    Model,
}

/// Convert between phase-noise tables, power-law models and σ(τ).
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Examples:\n  tauwise convert --lf ocxo-a-lf.csv --carrier 10MHz --to sigma --dev adev,mdev\n  \
    tauwise convert --model h2=6e-30,h0=1e-25,h-1=3e-25,fh=10M --carrier 10MHz --to lf --from 1 --to-offset 10M"
)]
#[command(mut_arg("plot", |a| a.help("Draw the result to FILE (.svg or .png): the σ–τ curves (--to sigma), \
or L(f) (--to lf; --to model: the table with the fitted model dashed).")))]
pub struct Args {
    /// Phase-noise table to convert (offset against L(f), or see --quantity).
    #[arg(
        long = "lf",
        value_name = "TABLE",
        conflicts_with_all = ["model", "sigma"],
        required_unless_present_any = ["model", "sigma"]
    )]
    pub lf: Option<PathBuf>,
    /// A `tauwise stability --format json` result: fit h_α to its curves
    /// (adev/oadev, mdev, hdev/ohdev; EDF weights), then convert the model.
    #[arg(long, value_name = "FILE.json", conflicts_with = "model")]
    pub sigma: Option<PathBuf>,
    /// Power-law model in h_α notation (h2 h1 h0 h-1 h-2, fh).
    #[arg(long, value_name = "MODEL", value_parser = str::parse::<Model>)]
    pub model: Option<Model>,
    /// What the table's values are: lf, sphi, sphi-db or sy. Default: the
    /// quantity the value column's header names (dBc/Hz, rad²/Hz, …), else lf.
    #[arg(long, value_name = "Q", value_parser = TableQuantity::parse)]
    pub quantity: Option<TableQuantity>,
    /// Carrier frequency ν0 (e.g. 10MHz).
    #[arg(long, value_name = "FREQ", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub carrier: Option<Frequency>,
    /// The target.
    #[arg(long, value_enum, value_name = "WHAT")]
    pub to: Target,
    /// Estimators for --to sigma (see `dev_help`).
    #[arg(long, value_name = "LIST", default_value = "adev,mdev", value_parser = str::parse::<EstimatorList>, help = dev_help())]
    pub dev: EstimatorList,
    #[command(flatten)]
    pub taus: TauArgs,
    /// Longest τ of a grid (default: 1/lowest offset of a table; 1e5 s for a model).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive)]
    pub max_tau: Option<Duration>,
    /// Sampling interval τ0 of MDEV/TDEV and of the τ grid (default 1/(2·f_h)).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive)]
    pub tau0: Option<Duration>,
    /// Upper integration limit f_h (default: the table's highest offset, or the model's fh).
    #[arg(long, value_name = "FREQ", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub fh: Option<Frequency>,
    /// Lowest offset of a table made with --to lf.
    #[arg(long, value_name = "FREQ", default_value = "1", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub from: Frequency,
    /// Highest offset of a table made with --to lf (default f_h).
    #[arg(long, value_name = "FREQ", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub to_offset: Option<Frequency>,
    /// Points per decade of a table made with --to lf.
    #[arg(long, value_name = "N", default_value_t = 10, value_parser = super::common::count)]
    pub per_decade: usize,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// The help of `--dev`: the registry's estimators with a transfer function.
fn dev_help() -> String {
    format!(
        "Estimators for --to sigma, comma-separated ({})",
        Estimator::names(&Estimator::convertible())
    )
}

/// The source of a conversion: a table or a model, as a spectrum.
fn source(args: &Args, carrier: Option<f64>) -> Result<Source> {
    let fh_opt = args.fh.map(Frequency::hertz);
    if let Some(path) = &args.lf {
        let t = read_lf_table(
            path,
            &TableOptions {
                quantity: args.quantity,
                carrier,
                ..Default::default()
            },
        )?;
        super::jitter::report_table(&t);
        if t.quantity != TableQuantity::Sy {
            super::common::carrier(args.carrier, "--carrier", "this conversion")?;
        }
        return Ok(Source::table(t, fh_opt));
    }
    let parsed = match (&args.sigma, args.model) {
        (Some(path), _) => tauwise::results::model_from_stability(path, fh_opt)?,
        (None, Some(m)) => m.power_law(f64::NAN),
        (None, None) => return Err(Error::option(
            "--lf",
            "give a phase-noise table (--lf), a model (--model) or a stability result (--sigma)",
        )),
    };
    let max_tau = args.max_tau.map(Duration::seconds);
    Source::of_model(parsed, fh_opt, carrier, max_tau, args.sigma.as_deref())
}

/// Run `convert`.
pub fn run(args: Args) -> Result<Outcome> {
    let inputs: Vec<&std::path::Path> = args
        .lf
        .iter()
        .chain(args.sigma.iter())
        .map(|p| p.as_path())
        .collect();
    args.output.check(&inputs, &args.plot)?;
    let carrier = args.carrier.map(Frequency::hertz);
    let needs_carrier = args.lf.is_some() && args.quantity.is_some_and(|q| q != TableQuantity::Sy)
        || args.to == Target::Lf;
    if needs_carrier {
        super::common::carrier(args.carrier, "--carrier", "this conversion")?;
    }
    if let (Some(path), Target::Model) = (&args.plot.plot, args.to) {
        let why = "the chart of --to model shows L(f), which";
        super::common::carrier(args.carrier, format!("--plot {}", path.display()), why)?;
    }
    let src = source(&args, carrier)?;
    match args.to {
        Target::Sigma => to_sigma(&args, src, carrier)?,
        Target::Lf => to_lf(&args, src, carrier)?,
        Target::Model => to_model(&args, src, carrier)?,
    }
    Ok(Outcome::Done)
}

fn to_sigma(args: &Args, src: Source, carrier: Option<f64>) -> Result<()> {
    let origin = match args.lf {
        Some(_) => Origin::FromLf,
        None => Origin::FromModel,
    };
    let range = (
        args.tau0.map(Duration::seconds),
        args.max_tau.map(Duration::seconds),
    );
    let body = SigmaBody::compute(&src, &args.dev.0, &args.taus.taus, range, carrier, origin)?;
    args.plot
        .draw(|| Ok(charts::sigma_chart(&body, &src.label, args.sigma.is_some())))?;
    (args.output).write(
        src.input,
        &body,
        |b| b.csv(),
        |b| b.table(&src.label).render(),
    )
}

fn to_lf(args: &Args, src: Source, carrier: Option<f64>) -> Result<()> {
    let range = (args.from.hertz(), args.to_offset.map(Frequency::hertz));
    let (model, sigma) = (args.model.as_ref(), args.sigma.as_deref());
    let (body, spec) = LfBody::compute(&src, model, sigma, carrier, range, args.per_decade)?;
    let (from_model, from_sigma) = (model.is_some() || sigma.is_some(), sigma.is_some());
    args.plot
        .draw(|| charts::lf_chart(&src.label, carrier, &spec, from_model, from_sigma))?;
    (args.output).write(src.input, &body, |b| b.points.csv(), |b| b.text(&src.label))
}

/// `--to model`: fit S_y = Σ h_α f^α to the table's points up to f_h
/// ([`FittedModel::of_spectrum`]), f_h the table's highest offset unless --fh.
fn to_model(args: &Args, src: Source, carrier: Option<f64>) -> Result<()> {
    let (body, range) = FittedModel::of_spectrum(&src.spectrum, carrier, src.f_h)?;
    args.plot
        .draw(|| charts::model_chart(&src.label, &src.spectrum, &body, range))?;
    (args.output).write(
        src.input,
        &body,
        |b| b.csv(),
        |b| b.table(&src.label).render(),
    )
}
