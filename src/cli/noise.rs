//! `tauwise noise FILE`: the dominant noise at each τ
//! ([`tauwise::stats::dominant_noise`], the identification every command
//! and the report use: a power law, or `drift`) and the power-law model
//! fitted to the record.

use super::common::{emit, json_doc, Format, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::deviation::Estimator;
use tauwise::model::noise_label;
use tauwise::results::{noise_cells, rms, ModelSummary, NoiseBody};
use tauwise::stability::{fit_record_model, RecordModel};
use tauwise::stats::noise_id::{NoiseIdentifier, NoiseRow};
use tauwise::units::{format_si, format_sig};
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
        Format::Table => table(&series.info.path, &body.points, drift_per_day, &model),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

fn table(
    path: &std::path::Path,
    rows: &[NoiseRow],
    drift_per_day: Option<f64>,
    model: &RecordModel,
) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {}", path.display());
    let _ = writeln!(s);
    let _ = writeln!(s, "dominant noise per τ");
    let _ = writeln!(
        s,
        "{:>10} {:>9} {:>6} {:>6} {:>8} {:>8}",
        "tau", "m", "alpha", "noise", "method", "r1"
    );
    for r in rows {
        let [a, l, me, r1] = noise_cells(r);
        let dash = |t: String| if t.is_empty() { "—".to_string() } else { t };
        let me = if r.capped == Some(true) {
            format!("{me}^")
        } else {
            me
        };
        let _ = writeln!(
            s,
            "{:>10} {:>9} {:>6} {:>6} {:>8} {:>8}",
            format_si(r.tau, "s", 4),
            r.m,
            dash(a),
            dash(l),
            dash(me),
            dash(r1)
        );
    }
    if rows
        .iter()
        .any(|r| r.noise == Some(tauwise::stats::NoiseLabel::Drift))
    {
        let _ = writeln!(
            s,
            "drift: σ_y there follows |D|·τ/√2 of the record's linear frequency drift D = {} per day \
             (NIST SP 1065), the noise beneath (alpha) is what the Hadamard family sees; the Allan \
             family has no interval there (--remove-drift linear shows the noise beneath)",
            drift_per_day.map_or("?".to_string(), |d| format_sig(d, 4))
        );
    }
    if rows.iter().any(|r| r.capped == Some(true)) {
        let _ = writeln!(
            s,
            "^ capped at the type of the record's octave τ below (the dominant power law only gets redder with τ)"
        );
    }
    let fit = &model.fit;
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "power-law model fitted to OADEV and MDEV (EDF-weighted, log space; ± one standard error), f_h = {}",
        format_si(fit.model.f_h, "Hz", 4)
    );
    for a in (-2i32..=2).rev() {
        let k = (a + 2) as usize;
        let v = if fit.fitted[k] {
            match fit.std_err[k] {
                Some(se) => format!("{} ± {}", format_sig(fit.model.h[k], 4), format_sig(se, 2)),
                None => format_sig(fit.model.h[k], 4),
            }
        } else {
            "not in the fit".to_string()
        };
        let _ = writeln!(
            s,
            "  h{:<3} {:>22}   ({})",
            a,
            v,
            noise_label(a).unwrap_or("")
        );
    }
    for l in &fit.left_out {
        let why = match l.reason {
            tauwise::model::LeftOutReason::AtZero => {
                "the non-negative fit put it at zero".to_string()
            }
            tauwise::model::LeftOutReason::NotSignificant => format!(
                "{} ± {} is below {}σ, so it was removed and the model refitted",
                format_sig(l.h, 3),
                l.std_err.map_or("?".into(), |e| format_sig(e, 2)),
                tauwise::model::fit::SIGNIFICANCE
            ),
        };
        let _ = writeln!(
            s,
            "  left out h{} ({}): {why}",
            l.alpha,
            noise_label(l.alpha).unwrap_or("")
        );
    }
    let _ = writeln!(s, "dominant terms:");
    for d in &fit.dominant {
        let _ = writeln!(
            s,
            "  {:<5} from {} to {}",
            noise_label(d.alpha).unwrap_or("?"),
            format_si(d.tau_from, "s", 4),
            format_si(d.tau_to, "s", 4)
        );
    }
    let _ = writeln!(s, "residual rms: {:.2} dB", rms(&fit.residual_db));
    let _ = writeln!(s, "model (for --model): {}", fit.model.to_model_string());
    s
}
