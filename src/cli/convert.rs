//! `tauwise convert`: between phase-noise tables, power-law models and σ(τ)
//! ([`tauwise::spectrum::sigma`], IEEE Std 1139).

use super::common::{emit, json_doc, Format, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::path::PathBuf;
use tauwise::deviation::{Estimator, Origin};
use tauwise::io::lf_table::{read_lf_table, TableOptions, TableQuantity};
use tauwise::model::PowerLaw;
use tauwise::parse::{Duration, EstimatorList, Frequency, Model};
use tauwise::plot::phase_noise::{LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::results::{
    ConvertSource as Source, ConvertedCurve, FittedModel, SigmaBody, SpectrumRows, SIGMA_METHOD,
};
use tauwise::spectrum::sigma::{grid_taus, sigma_curve, spectral, SigmaOptions};
use tauwise::spectrum::{Quantity, Spectrum};
use tauwise::units::format_si;
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
fn source(args: &Args, carrier: Option<f64>, tau_hint: Option<f64>) -> Result<Source> {
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
        if t.quantity != TableQuantity::Sy && carrier.is_none() {
            return Err(Error::option(
                "--carrier",
                "this conversion needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)",
            ));
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
    let f_h =
        match (fh_opt, parsed.f_h.is_nan()) {
            (Some(f), _) => f,
            (None, false) => parsed.f_h,
            (None, true) => return Err(Error::option(
                "--model",
                "the model needs its high-frequency cut-off: add fh=… to the model or give --fh",
            )),
        };
    let max_tau = args
        .max_tau
        .map(Duration::seconds)
        .or(tau_hint)
        .unwrap_or(1e5);
    Source::model(
        PowerLaw { f_h, ..parsed },
        carrier,
        max_tau,
        args.sigma.as_deref(),
    )
}

/// Run `convert`.
pub fn run(args: Args) -> Result<Outcome> {
    let inputs: Vec<&std::path::Path> = args
        .lf
        .iter()
        .chain(args.sigma.iter())
        .map(|p| p.as_path())
        .collect();
    super::common::check_output_paths(
        &inputs,
        &[args.output.output.as_deref(), args.plot.plot.as_deref()],
    )?;
    let carrier = args.carrier.map(Frequency::hertz);
    let needs_carrier = args.lf.is_some() && args.quantity.is_some_and(|q| q != TableQuantity::Sy)
        || args.to == Target::Lf;
    if needs_carrier && carrier.is_none() {
        return Err(Error::option(
            "--carrier",
            "this conversion needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)",
        ));
    }
    if let (Some(path), Target::Model, None) = (&args.plot.plot, args.to, carrier) {
        return Err(Error::option(
            format!("--plot {}", path.display()),
            "the chart of --to model shows L(f), which needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)",
        ));
    }
    let src = source(&args, carrier, args.max_tau.map(Duration::seconds))?;
    let text = match args.to {
        Target::Sigma => to_sigma(&args, src, carrier)?,
        Target::Lf => to_lf(&args, src, carrier)?,
        Target::Model => to_model(&args, src, carrier)?,
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

fn to_sigma(args: &Args, src: Source, carrier: Option<f64>) -> Result<String> {
    let estimators = args.dev.0.clone();
    for e in &estimators {
        spectral(*e)?;
    }
    let tau0 = args.tau0.map(Duration::seconds).unwrap_or(0.5 / src.f_h);
    let max_tau = args.max_tau.map(Duration::seconds).unwrap_or(src.max_tau);
    let taus = grid_taus(&args.taus.taus, tau0, max_tau)?;
    let opt = SigmaOptions { tau0, f_h: src.f_h };
    let origin = if args.lf.is_some() {
        Origin::FromLf
    } else {
        Origin::FromModel
    };
    let curves = estimators
        .iter()
        .map(|&e| Ok((e, sigma_curve(&src.spectrum, e, &taus, opt)?)))
        .collect::<Result<Vec<_>>>()?;
    if let Some(path) = &args.plot.plot {
        use tauwise::plot::stability::{SigmaCurve, StabilityPlot};
        let mut notes = vec![format!(
            "Converted: σ²(τ) = ∫ S_y(f)|H(f)|² df up to f_h = {} (IEEE Std 1139 transfer functions), τ0 = {} for MDEV/TDEV.",
            format_si(src.f_h, "Hz", 4),
            format_si(tau0, "s", 4)
        )];
        if args.sigma.is_some() {
            notes.push("Model-based: h_α fitted to the σ(τ) curves, then converted.".into());
        }
        if curves.iter().any(|(_, p)| p.iter().any(|q| q.truncated)) {
            notes.push(
                "Some points are lower bounds: the table's low end is too steep to extend below it."
                    .into(),
            );
        }
        let plot = StabilityPlot {
            title: src.label.clone(),
            curves: curves
                .iter()
                .map(|(e, pts)| {
                    let c = ConvertedCurve::new(*e, origin, pts);
                    SigmaCurve {
                        name: c.name,
                        estimator: *e,
                        origin,
                        points: pts
                            .iter()
                            .map(|p| tauwise::plot::XY::new(p.tau, p.dev))
                            .collect(),
                    }
                })
                .collect(),
            regions: Vec::new(),
            confidence: None,
            notes,
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let body = SigmaBody {
        carrier,
        f_h: src.f_h,
        tau0,
        method: SIGMA_METHOD,
        curves: curves
            .iter()
            .map(|(e, pts)| ConvertedCurve::new(*e, origin, pts))
            .collect(),
    };
    Ok(match args.output.format() {
        Format::Json => json_doc(src.input, body)?,
        Format::Csv => body.csv()?,
        Format::Table => body.table(&src.label).render(),
    })
}

fn to_lf(args: &Args, src: Source, carrier: Option<f64>) -> Result<String> {
    let from = args.from.hertz();
    let to = args.to_offset.map(Frequency::hertz).unwrap_or(src.f_h);
    let model = match (&args.model, &args.sigma) {
        (Some(m), _) => Some(PowerLaw {
            f_h: src.f_h,
            ..m.power_law(src.f_h)
        }),
        (None, Some(path)) => Some(PowerLaw {
            f_h: src.f_h,
            ..tauwise::results::model_from_stability(path, Some(src.f_h))?
        }),
        _ => None,
    };
    let from_model = model.is_some();
    let spec = match model {
        Some(model) => {
            Spectrum::from_model(&model, Quantity::Lf, carrier, from, to, args.per_decade)?
        }
        None => src.spectrum.to(Quantity::Lf)?,
    };
    if let Some(path) = &args.plot.plot {
        let (kind, mut notes) = if from_model {
            (TraceKind::Model, vec![format!("L(f) of {}.", src.label)])
        } else {
            (TraceKind::Table, Vec::new())
        };
        if args.sigma.is_some() {
            notes.push("Model-based: h_α fitted to the σ(τ) curves, then converted.".into());
        }
        let plot = PhaseNoisePlot {
            title: src.label.clone(),
            carrier,
            traces: vec![LfTrace::from_spectrum(&src.label, kind, &spec)?],
            bands: Vec::new(),
            notes,
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let rows = SpectrumRows::new(&spec)?;
    /// `convert --to lf`: `{"carrier","points"}`.
    #[derive(serde::Serialize)]
    struct LfBody {
        carrier: Option<f64>,
        points: SpectrumRows,
    }
    Ok(match args.output.format() {
        Format::Json => json_doc(
            src.input,
            LfBody {
                carrier,
                points: rows,
            },
        )?,
        Format::Csv => rows.csv()?,
        Format::Table => {
            let mut out = format!("L(f) from {}\n\n", src.label);
            out.push_str(&rows.text());
            out
        }
    })
}

/// `--to model`: fit S_y = Σ h_α f^α to the table's points (log-space fit of
/// the model layer), f_h the table's highest offset unless --fh.
fn to_model(args: &Args, src: Source, carrier: Option<f64>) -> Result<String> {
    use tauwise::model::fit::fit_sy;
    let sy = src.spectrum.to(Quantity::Sy)?;
    let keep: Vec<usize> = (0..sy.len()).filter(|&i| sy.f[i] <= src.f_h).collect();
    let f: Vec<f64> = keep.iter().map(|&i| sy.f[i]).collect();
    let v: Vec<f64> = keep.iter().map(|&i| sy.values[i]).collect();
    let fit = fit_sy(&f, &v, None, src.f_h)?;
    let m = fit.model;
    let rms_db = if fit.residual_db.is_empty() {
        0.0
    } else {
        tauwise::results::rms(&fit.residual_db)
    };
    if let Some(path) = &args.plot.plot {
        let (lo, hi) = (f.first().copied(), f.last().copied());
        let mut traces = vec![LfTrace::from_spectrum(
            &src.label,
            TraceKind::Table,
            &src.spectrum,
        )?];
        if let (Some(lo), Some(hi)) = (lo, hi) {
            let ms = Spectrum::from_model(&m, Quantity::Lf, carrier, lo, hi, 20)?;
            traces.push(LfTrace::from_spectrum(
                "fitted power-law model",
                TraceKind::Model,
                &ms,
            )?);
        }
        let plot = PhaseNoisePlot {
            title: src.label.clone(),
            carrier,
            traces,
            bands: Vec::new(),
            notes: vec![format!(
                "Model fitted to S_y in log space: {} (residual {rms_db:.2} dB rms).",
                m.to_model_string()
            )],
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let body = FittedModel {
        carrier,
        f_h: src.f_h,
        model: m.to_model_string(),
        h: m,
        residual_rms_db: rms_db,
        dominant: fit.dominant.clone(),
    };
    Ok(match args.output.format() {
        Format::Json => json_doc(src.input, body)?,
        Format::Csv => body.csv()?,
        Format::Table => body.table(&src.label).render(),
    })
}
