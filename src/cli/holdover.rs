//! `tauwise holdover FILE`: time error predicted through a holdover span from
//! the record, against a budget.

use super::common::{
    count, emit, json_doc, positive_duration_with_unit, Format, InputArgs, OutputArgs,
};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::holdover::aging::{parse_aging_rate, Aging, AgingModel};
use tauwise::holdover::observed::{observe, Observed};
use tauwise::holdover::{
    caution, model_from_record, predict, FromRecord, HoldoverModel, Prediction, Settings,
};
use tauwise::io::series::Series;
use tauwise::model::PowerLaw;
use tauwise::results::HoldoverBody;
use tauwise::units::{format_si, parse_duration_with_unit};
use tauwise::{Error, Result};

/// The aging law to fit (`--aging-model`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum AgingArg {
    /// y = c + D·t.
    Linear,
    /// y = c + A·ln(1 + t/t_c).
    Log,
}

/// Time error through a holdover span, against a budget.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
pub struct Args {
    /// Input file: phase or frequency record up to the loss of reference.
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Holdover span, with its unit (e.g. 8h, 24h; a bare number is refused).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true)]
    pub span: String,
    /// Time-error budget, with its unit (e.g. 1.5us; a bare number is refused).
    #[arg(long, value_name = "DUR", allow_hyphen_values = true)]
    pub budget: String,
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
        allow_hyphen_values = true
    )]
    pub te0: String,
    /// Fractional-frequency error at the start of holdover (e.g. 2e-12,
    /// 0.5ppb) instead of the one estimated at the record's end — for a
    /// disciplined unit, the loop's residual when the reference is lost.
    #[arg(long, value_name = "FRAC", allow_hyphen_values = true)]
    pub y0: Option<String>,
    /// Standard uncertainty of --y0 (default 0); drawn per Monte Carlo path.
    #[arg(long, value_name = "FRAC", requires = "y0")]
    pub y0_sigma: Option<String>,
    /// Window at the end of the record for the initial frequency y0, with
    /// its unit (e.g. 2h). Default: a tenth of the record.
    #[arg(long, value_name = "DUR")]
    pub settle: Option<String>,
    /// Holdover starts at this record time instead of the record's end;
    /// the record after it is then set beside the prediction (observed TE
    /// against the predicted p95, and when it first exceeds the budget).
    #[arg(long, value_name = "DUR")]
    pub start: Option<String>,
    /// Given linear aging with its unit (e.g. 5e-11/day) instead of a fit.
    #[arg(long, value_name = "RATE", allow_hyphen_values = true)]
    pub aging: Option<String>,
    /// The aging law to fit on the record.
    #[arg(long, value_enum, default_value_t = AgingArg::Linear)]
    pub aging_model: AgingArg,
    /// Temperature coefficient of frequency, e.g. 1e-11/K (with --temp-swing).
    #[arg(long, value_name = "C", allow_hyphen_values = true)]
    pub temp_coeff: Option<String>,
    /// Worst-case temperature swing during holdover, e.g. 5K.
    #[arg(long, value_name = "K")]
    pub temp_swing: Option<String>,
    /// Noise model instead of the fit, e.g. h0=1e-22,h-1=3e-26,h-2=1e-31.
    #[arg(long, value_name = "MODEL")]
    pub model: Option<String>,
    /// Exit with status 3 when the verdict exceeds the budget, 4 when it
    /// cannot be judged (for scripts).
    #[arg(long)]
    pub fail_on_violation: bool,
    /// Draw the time error through the span (deterministic, p50/p95/p99 of
    /// |TE|, the budget and the hold time) to FILE (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// A temperature coefficient `1e-11/K` or a swing `5K`: the kelvin is
/// required (a bare number is refused, like every number that decides).
fn kelvin(text: &str, what: &str) -> Result<f64> {
    let t = text.trim();
    let stripped = if what == "temp-coeff" {
        t.strip_suffix("/K")
    } else {
        t.strip_suffix('K')
    };
    let example = if what == "temp-coeff" {
        "a number per kelvin (e.g. 1e-11/K)"
    } else {
        "a number of kelvin (e.g. 5K)"
    };
    let Some(num) = stripped else {
        return Err(Error::invalid(format!(
            "--{what} {text}: give a unit, e.g. {}",
            if what == "temp-coeff" {
                "1e-11/K"
            } else {
                "5K"
            }
        )));
    };
    num.trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| Error::invalid(format!("--{what} {text}: expected {example}")))
}

/// Run `holdover`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(
        &[&args.file],
        &[args.output.output.as_deref(), args.plot.as_deref()],
    )?;
    let span = positive_duration_with_unit(&args.span, "span", "24h")?;
    let budget = positive_duration_with_unit(&args.budget, "budget", "1.5us")?;
    let te0 = parse_duration_with_unit(&args.te0)
        .map_err(|e| Error::invalid(format!("--te0 {}: {e}", args.te0)))?;
    let temp_worst = match (&args.temp_coeff, &args.temp_swing) {
        (Some(c), Some(s)) => (kelvin(c, "temp-coeff")? * kelvin(s, "temp-swing")?).abs(),
        (None, None) => 0.0,
        _ => return Err(Error::invalid(
            "--temp-coeff and --temp-swing go together (e.g. --temp-coeff 1e-11/K --temp-swing 5K)",
        )),
    };
    let progress = super::common::Progress::start("holdover");
    progress.stage(format!("reading {}", args.file.display()));
    let series = args.input.load(&args.file)?;
    progress.stage("computing");
    let tau0 = series.record.tau0();
    let noise = match &args.model {
        Some(m) => Some(PowerLaw::parse(m, 0.5 / tau0)?),
        None => None,
    };
    let opts = FromRecord {
        te0,
        settle: args
            .settle
            .as_deref()
            .map(|s| positive_duration_with_unit(s, "settle", "1h"))
            .transpose()?,
        start: args
            .start
            .as_deref()
            .map(|s| positive_duration_with_unit(s, "start", "36h"))
            .transpose()?,
        aging_model: match args.aging_model {
            AgingArg::Linear => AgingModel::Linear,
            AgingArg::Log => AgingModel::Log,
        },
        aging_given: args
            .aging
            .as_deref()
            .map(|a| {
                if !a.contains('/') {
                    return Err(Error::invalid(format!(
                        "--aging {a}: give a unit, e.g. 5e-11/day (a bare number is refused)"
                    )));
                }
                parse_aging_rate(a)
            })
            .transpose()?,
        temp_worst,
        noise,
        y0_given: match &args.y0 {
            Some(v) => {
                let y0 = tauwise::units::parse_fraction(v)
                    .map_err(|e| Error::invalid(format!("--y0: {e}")))?;
                let s = match &args.y0_sigma {
                    Some(t) => tauwise::units::parse_fraction(t)
                        .map_err(|e| Error::invalid(format!("--y0-sigma: {e}")))?,
                    None => 0.0,
                };
                if s < 0.0 {
                    return Err(Error::invalid(format!(
                        "--y0-sigma {s}: expected a standard uncertainty ≥ 0"
                    )));
                }
                Some((y0, s))
            }
            None => None,
        },
        seed: args.seed,
        ..FromRecord::default()
    };
    if opts.y0_given.is_some() && args.settle.is_some() {
        return Err(Error::invalid(
            "--settle sets the window for the y0 estimated on the record; with --y0 it has no use",
        ));
    }
    let model = model_from_record(&series.record, &opts)?;
    let settings = Settings {
        paths: args.paths,
        seed: args.seed,
        steps: args.steps,
        ..Settings::new(span, budget)
    };
    let pred = predict(&model, &settings)?;
    let observed = opts
        .start
        .and_then(|_| observe(&series.record, &model, &pred, span, budget));
    if let Some(path) = &args.plot {
        let mut plot = tauwise::plot::holdover::HoldoverPlot::from_prediction(
            &series.info.path.display().to_string(),
            &pred,
            settings.span,
            settings.budget,
            vec![caution()],
        );
        if let Some(o) = &observed {
            plot = plot.with_observed(o);
        }
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let text = match args.output.format {
        Format::Json => json_doc(
            (&series).into(),
            HoldoverBody::new(
                &settings,
                &model,
                &pred,
                args.aging.is_some(),
                observed.as_ref(),
            ),
        )?,
        Format::Csv => {
            HoldoverBody::new(&settings, &model, &pred, false, observed.as_ref()).csv()?
        }
        Format::Table => to_table(
            &series,
            &settings,
            &model,
            &pred,
            observed.as_ref(),
            opts.start.is_some(),
        ),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::of_gate(
        tauwise::verdict::gate([&pred.judgement]),
        args.fail_on_violation,
    ))
}

fn hours(t: f64) -> String {
    if t >= 3.6e9 {
        format!("{:.3e} h", t / 3600.0)
    } else if t >= 3600.0 {
        format!("{:.1} h", t / 3600.0)
    } else {
        format_si(t, "s", 3)
    }
}

fn to_table(
    series: &Series,
    s: &Settings,
    model: &HoldoverModel,
    p: &Prediction,
    observed: Option<&Observed>,
    start_given: bool,
) -> String {
    let si = |v: f64| format_si(v, "s", 4);
    let mut o = String::new();
    let _ = writeln!(
        o,
        "{}: holdover of {} against a budget of {}",
        series.info.path.display(),
        hours(s.span),
        si(s.budget)
    );
    let _ = writeln!(o, "\nmodel");
    let u = &model.uncertainty;
    let _ = writeln!(o, "  te0         {}", si(model.te0));
    let _ = writeln!(
        o,
        "  y0          {:.4e} ± {:.2e} ({})",
        model.y0,
        model.y0_sigma,
        match u.y0_window {
            Some(w) => format!(
                "mean over the last {} of the record, carried by the aging law",
                hours(w)
            ),
            None => "given".to_string(),
        }
    );
    let _ = writeln!(
        o,
        "  aging       {} law, {:.4e}/day at the start{}",
        if u.aging_given {
            "given linear"
        } else {
            model.aging.model().name()
        },
        model.aging.rate(model.start) * 86400.0,
        match model.aging {
            Aging::Linear { d_sigma, .. } if !u.aging_given => {
                format!(" ± {:.2e}/day (1σ)", d_sigma * 86400.0)
            }
            Aging::Linear { .. } => String::new(),
            Aging::Log { a_sigma, tc, .. } => format!(" (A ± {a_sigma:.2e}, t_c = {})", hours(tc)),
        }
    );
    if let Some(words) = model.aging_significance_words() {
        let _ = writeln!(o, "              {words}");
    }
    if u.replicates > 0 {
        let _ = writeln!(
            o,
            "  uncertainty parametric bootstrap: the fit repeated on {} records drawn from the noise model below{}",
            u.replicates,
            if u.y0_window.is_some() && !u.aging_given {
                format!("; y0 and aging errors correlated {:+.2}, drawn jointly per path", u.y0_aging_corr)
            } else {
                "; drawn per path".to_string()
            }
        );
    }
    if model.temp_worst > 0.0 {
        let _ = writeln!(
            o,
            "  temperature worst case {:.3e} (fractional)",
            model.temp_worst
        );
    }
    let _ = writeln!(o, "  noise       {}", model.noise.to_model_string());
    let _ = writeln!(
        o,
        "  Monte Carlo {} paths, seed {}, step {}",
        p.paths,
        s.seed,
        si(p.step)
    );
    let _ = writeln!(
        o,
        "\n{:>10}  {:>12}  {:>12}  {:>12}  {:>12}",
        "t", "determ.", "p50 |TE|", "p95 |TE|", "p99 |TE|"
    );
    for t in &p.te {
        let _ = writeln!(
            o,
            "{:>10}  {:>12}  {:>12}  {:>12}  {:>12}",
            hours(t.t),
            si(t.deterministic),
            si(t.p50),
            si(t.p95),
            si(t.p99)
        );
    }
    let _ = writeln!(o);
    let judged = p.judgement.verdict != tauwise::verdict::Verdict::NotJudged;
    match p.holds_for {
        _ if !judged => {}
        Some(t) => {
            let _ = writeln!(
                o,
                "p95 of |TE| exceeds the budget after about {}: holds 95 % of the time for about {}.",
                hours(t),
                hours(t)
            );
        }
        None => {
            let _ = writeln!(
                o,
                "p95 of |TE| stays within the budget through the whole span."
            );
        }
    }
    let _ = writeln!(o, "verdict for {}: {}", hours(s.span), p.judgement.cell());
    if let Some(why) = &p.judgement.reason {
        let _ = writeln!(o, "  not judged: {why}");
    }
    match observed {
        Some(ob) => observed_table(&mut o, ob, model, s),
        None if start_given => {
            let _ = writeln!(
                o,
                "\nthe record after the start: nothing to compare (the record ends at the start, or its phase there is a gap)"
            );
        }
        None => {}
    }
    let _ = writeln!(o, "\n{}", caution());
    o
}

/// The record after the start beside the prediction.
fn observed_table(o: &mut String, ob: &Observed, model: &HoldoverModel, s: &Settings) {
    let si = |v: f64| format_si(v, "s", 4);
    let _ = writeln!(
        o,
        "\nthe record after the start (holdover from {} of the record; the record covers {} of the span)",
        hours(model.start),
        hours(ob.covered)
    );
    let _ = writeln!(
        o,
        "{:>10}  {:>12}  {:>12}  {:>7}",
        "t", "observed TE", "p95 |TE|", "inside"
    );
    for q in &ob.points {
        let _ = writeln!(
            o,
            "{:>10}  {:>12}  {:>12}  {:>7}",
            hours(q.t),
            si(q.te),
            si(q.p95),
            if q.inside { "yes" } else { "no" }
        );
    }
    let _ = writeln!(
        o,
        "observed |TE| inside the predicted p95 at {} of {} times{}",
        ob.inside(),
        ob.points.len(),
        ob.worst
            .map(|(r, t)| format!("; largest |TE|/p95 {r:.2} at {}", hours(t)))
            .unwrap_or_default()
    );
    let _ = writeln!(
        o,
        "{}",
        match ob.exceeds_budget_at {
            Some(t) => format!(
                "observed |TE| first exceeds the budget of {} at {} after the start",
                si(s.budget),
                hours(t)
            ),
            None => format!(
                "observed |TE| stays within the budget of {} for the {} the record covers",
                si(s.budget),
                hours(ob.covered)
            ),
        }
    );
    let _ = writeln!(
        o,
        "One record is one path: it should lie inside p95 at about 95 % of the times, and cannot confirm the model alone."
    );
}
