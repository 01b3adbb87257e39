//! `tauwise jitter TABLE`: integrated phase jitter over offset bands, from a
//! phase-noise table or (with `--record`) from the PSD of a time record
//! ([`tauwise::spectrum::jitter`]).

use super::common::{emit, json_doc, Format, InputArgs, OutputArgs, PlotArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::{Path, PathBuf};
use tauwise::io::lf_table::{
    read_filter_file, read_lf_table, read_spurs, LfTable, TableOptions, TableQuantity,
};
use tauwise::parse::{Filter, Frequency};
use tauwise::plot::phase_noise::{BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::results::{Input, JitterBand, JitterBody, TableInput, SPUR_CONVENTION};
use tauwise::spectrum::jitter::{
    integrate_band, Band, BandJitter, JitterLimit, JitterSetup, Weighting,
};
use tauwise::spectrum::welch::{welch_record, WelchOptions, Window};
use tauwise::spectrum::Spectrum;
use tauwise::verdict::{gate, Judgement};
use tauwise::{Error, Result, DECISION_CAUTION};

/// Integrated phase jitter over offset bands.
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Examples:\n  tauwise jitter ocxo-a-lf.csv --carrier 10MHz --band 12k:5M --band 10:1k\n  \
    tauwise jitter ocxo-a-lf.csv --carrier 156.25M --band 12k:20M --filter highpass:1:12k --ui-rate 10.3125G\n  \
    tauwise jitter --record tie.csv --tau0 1us --carrier 10MHz --band 100:400k\n  \
    tauwise jitter ocxo-a-lf.csv --carrier 10MHz --band 12k:5M --limit 1ps --fail-on-violation\n\n\
    Exit status: 0 success (a band over its limit is a result, not an error); 1 error; 2 bad command \
    line; 3 a band exceeds its limit and --fail-on-violation was given; 4 none exceeds but one \
    could not be judged (a band outside the table, a non-finite result) and --fail-on-violation \
    was given."
)]
#[command(mut_arg("plot", |a| a.help("Draw L(f) with each integration band shaded and labelled with its \
rms jitter to FILE (.svg or .png).")))]
pub struct Args {
    /// Phase-noise table: offset against L(f) in dBc/Hz (or see --quantity).
    #[arg(
        value_name = "TABLE",
        required_unless_present = "record",
        conflicts_with = "record"
    )]
    pub table: Option<PathBuf>,
    /// Use the PSD of this time record instead of a table.
    #[arg(long, value_name = "FILE")]
    pub record: Option<PathBuf>,
    #[command(flatten)]
    pub input: InputArgs,
    /// What the table's values are: lf (dBc/Hz), sphi (rad²/Hz), sphi-db (dB rad²/Hz), sy (1/Hz).
    /// Default: the quantity the value column's header names (dBc/Hz, rad²/Hz,
    /// dB rad²/Hz, 1/Hz), else lf.
    #[arg(long, value_name = "Q", value_parser = TableQuantity::parse)]
    pub quantity: Option<TableQuantity>,
    /// Integration band FROM:TO (e.g. 12k:20M); repeat for several bands.
    #[arg(long = "band", value_name = "FROM:TO", required = true, value_parser = band_arg)]
    pub bands: Vec<(String, Band)>,
    /// Butterworth weighting highpass:ORDER:FC or lowpass:ORDER:FC (order 1 … 8);
    /// repeat to combine.
    #[arg(long = "filter", value_name = "FILTER", value_parser = str::parse::<Filter>)]
    pub filters: Vec<Filter>,
    /// Weighting file: offset against |H(f)|² in dB.
    #[arg(long, value_name = "FILE")]
    pub filter_file: Option<PathBuf>,
    /// Spur list: offset against spur level in dBc (one sideband). Default:
    /// the spurs listed after the table in a `[spurs]` block, if any.
    #[arg(long, value_name = "FILE")]
    pub spurs: Option<PathBuf>,
    /// Line rate for jitter in unit intervals (e.g. 10.3125G).
    #[arg(long, value_name = "RATE", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub ui_rate: Option<Frequency>,
    /// Allow bands beyond the table by continuing its end slopes (reported).
    #[arg(long)]
    pub extrapolate: bool,
    /// Window for --record spectra.
    #[arg(long, value_name = "NAME", default_value = "hann", value_parser = Window::parse)]
    pub window: Window,
    /// Segment length for --record spectra (samples).
    #[arg(long, value_name = "N", value_parser = super::common::count)]
    pub segment: Option<usize>,
    /// rms jitter limit with its unit (1ps, 300fs, 10mrad, 0.5deg, 0.01UI):
    /// one for every band, or one per --band in the same order. A band that
    /// cannot be computed is then judged "not judged" instead of an error.
    #[arg(long = "limit", value_name = "LIMIT", allow_hyphen_values = true, value_parser = JitterLimit::parse)]
    pub limits: Vec<JitterLimit>,
    /// Exit with status 3 when a band exceeds its limit, 4 when none does
    /// but one cannot be judged (for scripts).
    #[arg(long)]
    pub fail_on_violation: bool,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `--band FROM:TO`: the band, with its text as the label of the chart.
fn band_arg(text: &str) -> std::result::Result<(String, Band), tauwise::units::UnitError> {
    Ok((text.to_string(), Band::parse(text)?))
}

/// Print a table's reading notes on standard error.
pub fn report_table(t: &LfTable) {
    for n in &t.notes {
        eprintln!("tauwise: note: {}: {n}", t.path);
    }
}

/// Read a table with the common column options (its notes go to standard
/// error).
pub fn load_table(
    path: &Path,
    quantity: Option<TableQuantity>,
    input: &InputArgs,
    carrier: Option<f64>,
) -> Result<LfTable> {
    let t = read_lf_table(
        path,
        &TableOptions {
            quantity,
            offset_column: None,
            value_column: input.value_column,
            carrier,
        },
    )?;
    report_table(&t);
    Ok(t)
}

/// Run `jitter`.
pub fn run(args: Args) -> Result<Outcome> {
    let inputs: Vec<&Path> = args
        .table
        .iter()
        .chain(args.record.iter())
        .chain(args.filter_file.iter())
        .chain(args.spurs.iter())
        .map(|p| p.as_path())
        .collect();
    super::common::check_output_paths(
        &inputs,
        &[args.output.output.as_deref(), args.plot.plot.as_deref()],
    )?;
    let carrier = args.input.carrier.map(Frequency::hertz).ok_or_else(|| {
        Error::option(
            "--carrier",
            "jitter needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)",
        )
    })?;
    let bands: Vec<Band> = args.bands.iter().map(|b| b.1).collect();
    let mut setup = JitterSetup {
        filters: args.filters.iter().map(|&f| Weighting::from(f)).collect(),
        extrapolate: args.extrapolate,
        ..Default::default()
    };
    if let Some(p) = &args.filter_file {
        setup.filter_table = Some(read_filter_file(p)?);
        setup.filter_table_name = Some(p.display().to_string());
    }
    if let Some(p) = &args.spurs {
        setup.spurs = read_spurs(p)?;
    }
    let limits = args.limits.clone();
    if !(limits.len() <= 1 || limits.len() == bands.len()) {
        return Err(Error::option(
            "--limit",
            format!(
                "{} --limit for {} --band: give one limit for every band, or one per band in the same order",
                limits.len(),
                bands.len()
            ),
        ));
    }
    let spur_file = args.spurs.is_some();
    let ui_rate = args.ui_rate.map(Frequency::hertz);
    // The trace to plot: the table itself, or the record's spectrum
    // averaged into 10 log-spaced bins per decade (readable, same level).
    let mut plot_trace: Option<(Spectrum, TraceKind)> = None;
    let mut record_spectrum: Option<(&'static str, f64, String)> = None;
    let (input, spectrum, source): (Input, Spectrum, String) = match (&args.table, &args.record) {
        (Some(path), _) => {
            let t = load_table(path, args.quantity, &args.input, Some(carrier))?;
            if args.plot.plot.is_some() {
                plot_trace = Some((t.spectrum.clone(), TraceKind::Table));
            }
            if !t.spurs.is_empty() {
                if spur_file {
                    eprintln!(
                        "tauwise: note: {}: the {} spur(s) listed after the table are not used: --spurs gives the spur list",
                        t.path,
                        t.spurs.len()
                    );
                } else {
                    setup.spurs = t.spurs.clone();
                }
            }
            (
                Input::Table(TableInput::of(&t)),
                t.spectrum.clone(),
                format!("table {}", path.display()),
            )
        }
        (None, Some(path)) => {
            let series = args.input.load(path)?;
            let w = welch_record(
                &series.record,
                &WelchOptions {
                    window: args.window,
                    segment: args.segment,
                    overlap: 0.5,
                },
            )?;
            for warning in &w.warnings {
                eprintln!("tauwise: warning: {warning}");
            }
            if args.plot.plot.is_some() {
                plot_trace = Some((w.log_binned(10, Some(carrier))?, TraceKind::RecordSpectrum));
            }
            record_spectrum = Some((w.window.name(), w.enbw_hz, w.gap_note()));
            (
                (&series).into(),
                w.spectrum(Some(carrier))?,
                format!("Welch spectrum of {}", path.display()),
            )
        }
        (None, None) => {
            return Err(Error::option(
                "TABLE",
                "give a phase-noise TABLE or --record FILE",
            ))
        }
    };
    // With limits, a band that cannot be computed is a verdict of its own
    // (not judged); without, it is an error as before.
    let outcomes: Vec<std::result::Result<BandJitter, String>> = if limits.is_empty() {
        bands
            .iter()
            .map(|&b| integrate_band(&spectrum, b, &setup, ui_rate).map(Ok))
            .collect::<Result<Vec<_>>>()?
    } else {
        bands
            .iter()
            .map(|&b| integrate_band(&spectrum, b, &setup, ui_rate).map_err(|e| e.to_string()))
            .collect()
    };
    let judgements: Vec<Option<Judgement>> = outcomes
        .iter()
        .enumerate()
        .map(|(i, o)| {
            limits
                .get(if limits.len() == 1 { 0 } else { i })
                .map(|l| l.judge(o.as_ref().map_err(|e| e.as_str())))
        })
        .collect();
    let results: Vec<BandJitter> = outcomes
        .iter()
        .filter_map(|o| o.as_ref().ok())
        .cloned()
        .collect();
    if let (Some(path), Some((trace, kind))) = (&args.plot.plot, &plot_trace) {
        let mut notes = Vec::new();
        if let Some(r) = results.first() {
            if r.filter != "none" {
                notes.push(format!("Band jitter weighted by {}.", r.filter));
            }
        }
        if results.iter().any(|r| !r.extrapolated.is_empty()) {
            notes.push("Some bands reach beyond the table: its end slopes were continued.".into());
        }
        notes.push(DECISION_CAUTION.to_string());
        let plot = PhaseNoisePlot {
            title: source.clone(),
            carrier: Some(carrier),
            traces: vec![LfTrace::from_spectrum(&source, *kind, trace)?],
            bands: args
                .bands
                .iter()
                .zip(&outcomes)
                .filter_map(|((name, _), r)| {
                    r.as_ref().ok().map(|r| BandMark::from_jitter(name, r))
                })
                .collect(),
            notes,
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let body = JitterBody {
        carrier,
        ui_rate,
        spur_convention: SPUR_CONVENTION,
        bands: outcomes
            .iter()
            .zip(&bands)
            .zip(&judgements)
            .enumerate()
            .map(|(i, ((o, b), j))| JitterBand::new(b, o, limit_of(&limits, i), j.as_ref()))
            .collect(),
        caution: DECISION_CAUTION,
        window: record_spectrum.as_ref().map(|r| r.0),
        enbw_hz: record_spectrum.as_ref().map(|r| r.1),
        gaps_handling: record_spectrum.map(|r| r.2),
    };
    let text = match args.output.format() {
        Format::Json => json_doc(input, body)?,
        Format::Csv => body.csv()?,
        Format::Table => body.table(&source).render(),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::of_gate(
        gate(judgements.iter().flatten()),
        args.fail_on_violation,
    ))
}

fn limit_of(limits: &[JitterLimit], i: usize) -> Option<&JitterLimit> {
    limits.get(if limits.len() == 1 { 0 } else { i })
}
