//! `tauwise spectrum FILE`: the PSD of a time record by Welch's method, as
//! L(f), S_φ, S_y and S_x ([`tauwise::spectrum::welch`]).

use super::common::{InputArgs, OutputArgs, PlotArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::plot::phase_noise::record_spectrum_chart;
use tauwise::results::{SpectrumBody, SpectrumRows};
use tauwise::spectrum::welch::{welch_record, WelchOptions, Window};
use tauwise::spectrum::Quantity;
use tauwise::{Error, Result};

/// PSD of a phase or frequency record (Welch's method).
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Example:\n  tauwise spectrum ocxo-a.csv --tau0 1s --units ns --carrier 10MHz --format csv"
)]
#[command(mut_arg("plot", |a| a.help("Draw L(f) of the record to FILE (.svg or .png); needs --carrier.")))]
pub struct Args {
    /// Input record (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// The quantity that must be available: lf and sphi need --carrier;
    /// sy and sx do not (the other columns are then left empty).
    #[arg(long, value_name = "Q", default_value = "lf", value_parser = Quantity::parse)]
    pub quantity: Quantity,
    /// Data window: hann, rectangular or blackman-harris.
    #[arg(long, value_name = "NAME", default_value = "hann", value_parser = Window::parse)]
    pub window: Window,
    /// Segment length in samples (default: the largest power of two not
    /// above a quarter of the longest gap-free stretch).
    #[arg(long, value_name = "N", value_parser = super::common::count)]
    pub segment: Option<usize>,
    /// Overlap of consecutive segments (fraction of a segment).
    #[arg(long, value_name = "FRAC", default_value_t = 0.5, value_parser = super::common::overlap_fraction)]
    pub overlap: f64,
    /// Output bins per decade (log-spaced averages of the DFT bins).
    #[arg(long, value_name = "N", default_value_t = 10, value_parser = super::common::count)]
    pub per_decade: usize,
    /// Write every DFT bin instead of log-spaced averages.
    #[arg(long)]
    pub all_bins: bool,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `spectrum`.
pub fn run(args: Args) -> Result<Outcome> {
    args.output.check(&[&args.file], &args.plot)?;
    let quantity = args.quantity;
    let carrier = args.input.carrier.map(tauwise::parse::Frequency::hertz);
    if carrier.is_none() && matches!(quantity, Quantity::Lf | Quantity::Sphi) {
        return Err(Error::option(
            format!("--quantity {}", quantity.name()),
            "needs the carrier frequency: give --carrier (e.g. --carrier 10MHz), or ask for --quantity sy or sx",
        ));
    }
    if let Some(path) = &args.plot.plot {
        let why = "the chart shows L(f), which";
        super::common::carrier(
            args.input.carrier,
            format!("--plot {}", path.display()),
            why,
        )?;
    }
    let progress = super::common::Progress::start("spectrum");
    progress.stage(format!("reading {}", args.file.display()));
    let series = args.input.load(&args.file)?;
    progress.stage("computing");
    let w = welch_record(
        &series.record,
        &WelchOptions {
            window: args.window,
            segment: args.segment,
            overlap: args.overlap,
        },
    )?;
    for warning in &w.warnings {
        eprintln!("tauwise: warning: {warning}");
    }
    let spec = if args.all_bins {
        w.spectrum(carrier)?
    } else {
        w.log_binned(args.per_decade, carrier)?
    };
    let rows = SpectrumRows::new(&spec)?;
    let per_decade = (!args.all_bins).then_some(args.per_decade);
    let name = series.info.path.display().to_string();
    args.plot
        .draw(|| record_spectrum_chart(&name, carrier, &spec, &w, per_decade))?;
    let bins = match per_decade {
        None => "all".to_string(),
        Some(n) => format!("log, {n} per decade"),
    };
    let body = SpectrumBody::new(&w, carrier, bins, rows);
    let freq = w.source == tauwise::record::DataKind::Freq;
    args.output.write(
        (&series).into(),
        &body,
        |b| b.points.csv(),
        |b| b.table(&name, freq).render(),
    )?;
    Ok(Outcome::Done)
}
