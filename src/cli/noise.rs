//! `tauwise noise FILE`: the dominant noise at each τ
//! ([`tauwise::stats::dominant_noise`], the identification every command
//! and the report use: a power law, or `drift`) and the power-law model
//! fitted to the record.

use super::common::{InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::deviation::Estimator;
use tauwise::plot::stability::record_model_chart;
use tauwise::results::{ModelSummary, NoiseBody};
use tauwise::stability::fit_record_model;
use tauwise::stats::noise_id::{NoiseIdentifier, NoiseRow};
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
    let ms = grid.ms(x.tau0, Estimator::Oadev.max_m(x.len()))?;
    let ids = NoiseIdentifier::new(&x);
    let rows: Vec<NoiseRow> = ms
        .iter()
        .map(|&m| NoiseRow::new(m, x.tau0, ids.at(m)))
        .collect();
    let drift_per_day = ids.drift_rate().map(|d| d * 86_400.0);
    progress.stage("fitting the power-law model");
    let model = fit_record_model(&x, grid)?;
    let path = series.info.path.display().to_string();
    args.plot
        .draw(|| Ok(record_model_chart(&path, &model, x.tau0)))?;
    let body = NoiseBody {
        points: rows,
        drift_per_day,
        model: ModelSummary::of(&model.fit),
    };
    args.output.write(
        (&series).into(),
        &body,
        |b| b.csv(),
        |b| b.table(&path).render(),
    )?;
    Ok(Outcome::Done)
}
