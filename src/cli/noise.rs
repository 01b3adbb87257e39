//! `tauwise noise FILE`: the dominant noise at each τ
//! ([`tauwise::stats::dominant_noise`], the identification every command
//! and the report use: a power law, or `drift`) and the power-law model
//! fitted to the record.

use super::common::{emit, json_doc, Format, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::deviation::Estimator;
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
    /// Remove a least-squares frequency drift before the analysis (aging
    /// would otherwise read as random-walk FM at long τ).
    #[arg(long, value_enum, value_name = "MODEL")]
    pub remove_drift: Option<super::prepare::DriftArg>,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `noise`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(
        &[&args.file],
        &[args.output.output.as_deref(), args.plot.plot.as_deref()],
    )?;
    let grid = &args.taus.taus;
    let progress = super::common::Progress::start("noise");
    progress.stage(format!("reading {}", args.file.display()));
    let mut series = args.input.load(&args.file)?;
    series.record = super::prepare::without_drift(series.record, args.remove_drift)?;
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
    if let Some(path) = &args.plot.plot {
        use tauwise::plot::stability::{
            model_curves, regions_from_curve, SigmaCurve, StabilityPlot,
        };
        let mut curves: Vec<SigmaCurve> = model.curves.iter().map(SigmaCurve::from_curve).collect();
        curves.extend(model_curves(&model, x.tau0));
        let plot = StabilityPlot {
            title: series.info.path.display().to_string(),
            curves,
            regions: model
                .curves
                .first()
                .map(regions_from_curve)
                .unwrap_or_default(),
            confidence: Some(tauwise::stats::DEFAULT_CONFIDENCE),
            notes: vec![format!(
                "Dashed: the power-law model fitted to OADEV and MDEV (EDF-weighted): {}",
                model.fit.model.to_model_string()
            )],
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let body = NoiseBody {
        points: rows,
        drift_per_day,
        model: ModelSummary::of(&model.fit),
    };
    let text = match args.output.format() {
        Format::Json => json_doc((&series).into(), &body)?,
        Format::Csv => body.csv()?,
        Format::Table => body.table(&series.info.path.display().to_string()).render(),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}
