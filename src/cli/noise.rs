//! `tauwise noise FILE`: the dominant noise at each τ
//! ([`tauwise::stats::dominant_noise`], the identification every command
//! and the report use: a power law, or `drift`) and the power-law model
//! fitted to the record.

use super::common::{InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::plot::stability::record_model_chart;
use tauwise::results::NoiseBody;
use tauwise::Result;

/// The dominant noise per τ (WPM … RWFM, or drift) and the fitted power-law model.
#[derive(Debug, ClapArgs)]
#[command(mut_arg("plot", |a| a.help("Draw OADEV and MDEV with the fitted model's curves dashed and the \
noise type of each τ region to FILE (.svg or .png).")))]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub taus: TauArgs,
    #[command(flatten)]
    pub drift: super::common::DriftArgs,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `noise`.
pub fn run(args: Args) -> Result<Outcome> {
    args.output.check(&[&args.file], &args.plot)?;
    let grid = &args.taus.taus;
    let progress = super::common::Progress::start("noise");
    progress.stage(format!("reading {}", args.file.display()));
    let mut series = args.input.load(&args.file)?;
    series.record = args.drift.apply(series.record)?;
    let x = series.record.to_phase();
    progress.stage("identifying the noise and fitting the power-law model");
    let (body, model) = NoiseBody::of_record(&x, grid)?;
    let path = series.info.path.display().to_string();
    args.plot
        .draw(|| Ok(record_model_chart(&path, &model, x.tau0)))?;
    args.output.write(
        (&series).into(),
        &body,
        |b| b.csv(),
        |b| b.table(&path).render(),
    )?;
    Ok(Outcome::Done)
}
