//! `tauwise jitter TABLE`: integrated phase jitter over offset bands, from a
//! phase-noise table or (with `--record`) from the PSD of a time record
//! ([`tauwise::spectrum::jitter`]).

use super::common::{InputArgs, OutputArgs, PlotArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::{Path, PathBuf};
use tauwise::io::filter_set::assemble_weightings;
use tauwise::io::lf_table::{read_lf_table, read_spurs, LfTable, TableOptions, TableQuantity};
use tauwise::limits::ValueKind;
use tauwise::parse::{Filter, Frequency};
use tauwise::plot::limit_lines::add_limits;
use tauwise::plot::phase_noise::{jitter_chart, TraceKind};
use tauwise::results::{JitterBody, JitterRequest, JitterTrace, LimitsPart};
use tauwise::spectrum::jitter::{
    record_period_jitter, Band, BandJitter, JitterLimit, JitterSetup, PeriodRequest,
};
use tauwise::spectrum::spurs::SpurRule;
use tauwise::spectrum::welch::{WelchOptions, Window};
use tauwise::verdict::gate;
use tauwise::{Error, Result};

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
    #[arg(long = "band", value_name = "FROM:TO", required_unless_present = "limit_files", value_parser = band_arg)]
    pub bands: Vec<(String, Band)>,
    /// Weighting: highpass:ORDER:FC or lowpass:ORDER:FC (Butterworth, order
    /// 1 … 8); pll:FN:ZETA (what a type-2 PLL passes), cdr:FN:ZETA (what a
    /// clock-recovery loop leaves), a loop also as bw=F3DB:peak=PDB;
    /// pll-diff:FN1:ZETA1:FN2:ZETA2:DELAY (two loops, the first delayed).
    /// Repeat to combine (they multiply).
    #[arg(long = "filter", value_name = "FILTER", value_parser = str::parse::<Filter>)]
    pub filters: Vec<Filter>,
    /// Weighting file: offset against |H(f)|² in dB; repeat to combine.
    #[arg(long = "filter-file", value_name = "FILE")]
    pub filter_files: Vec<PathBuf>,
    /// A named set of weightings (TOML: name, filters, filter_files), added
    /// to any --filter and --filter-file.
    #[arg(long = "filters", value_name = "FILE.toml")]
    pub filter_set: Option<PathBuf>,
    /// Also give each band's rms period and cycle-to-cycle jitter (and with
    /// --record, the same measured from the record's edge differences).
    #[arg(long)]
    pub period: bool,
    /// Also give the jitter over N periods (implies --period).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..))]
    pub periods: Option<u32>,
    /// Spur list: offset against spur level in dBc (one sideband). Default:
    /// the spurs listed after the table in a `[spurs]` block, if any.
    #[arg(long, value_name = "FILE")]
    pub spurs: Option<PathBuf>,
    /// Line rate for jitter in unit intervals (e.g. 10.3125G).
    #[arg(long, value_name = "RATE", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub ui_rate: Option<Frequency>,
    /// Do not look for spurs in the trace (by default narrow peaks 10 dB or
    /// more above the running median are taken out of the noise and counted
    /// once as tones; a listed spur in the same place takes precedence).
    #[arg(long)]
    pub no_spur_search: bool,
    /// How far above the trace's running median a narrow peak must stand to
    /// be a spur, dB (default 10).
    #[arg(long, value_name = "DB", value_parser = tauwise::spectrum::spurs::threshold_db)]
    pub spur_threshold: Option<f64>,
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
    /// Limit file (repeatable; TOML, see docs/limit-file.md): its lf limits
    /// are checked against the TABLE's points and its interpolation at the
    /// limit's offsets; other metrics are named as left to `stability` or
    /// `wander`.
    #[arg(long = "limit-file", value_name = "FILE", requires = "table")]
    pub limit_files: Vec<PathBuf>,
    #[command(flatten)]
    pub gate: super::common::GateArgs,
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
        .chain(args.filter_files.iter())
        .chain(args.filter_set.iter())
        .chain(args.spurs.iter())
        .chain(args.limit_files.iter())
        .map(|p| p.as_path())
        .collect();
    args.output.check(&inputs, &args.plot)?;
    let carrier = super::common::carrier(args.input.carrier, "--carrier", "jitter")?;
    // Limit files first: a bad file fails before the table is read.
    let (limit_set, elsewhere) = tauwise::limits::read_for(&args.limit_files, "jitter")?;
    let (filters, filter_tables, filter_set) = assemble_weightings(
        &args.filters,
        &args.filter_files,
        args.filter_set.as_deref(),
    )?;
    let mut req = JitterRequest {
        bands: args.bands.iter().map(|b| b.1).collect(),
        setup: JitterSetup {
            filters,
            filter_tables,
            extrapolate: args.extrapolate,
            period: (args.period || args.periods.is_some()).then_some(PeriodRequest {
                periods: args.periods,
            }),
            ..Default::default()
        },
        ui_rate: args.ui_rate.map(Frequency::hertz),
        limits: args.limits.clone(),
        // Spurs found in the trace leave the noise and count once as tones.
        spur_rule: (!args.no_spur_search).then(|| SpurRule {
            threshold_db: (args.spur_threshold).unwrap_or(SpurRule::default().threshold_db),
            ..SpurRule::default()
        }),
        filter_set,
        decision: args.gate.rule(None),
    };
    if let Some(p) = &args.spurs {
        req.setup.spurs = read_spurs(p)?;
    }
    let (mut limit_checks, mut record_period) = (Vec::new(), None);
    let trace = match (&args.table, &args.record) {
        (Some(path), _) => {
            let t = load_table(path, args.quantity, &args.input, Some(carrier))?;
            if !t.spurs.is_empty() && args.spurs.is_some() {
                eprintln!(
                    "tauwise: note: {}: the {} spur(s) listed after the table are not used: --spurs gives the spur list",
                    t.path,
                    t.spurs.len()
                );
            } else if !t.spurs.is_empty() {
                req.setup.spurs = t.spurs.clone();
            }
            limit_checks =
                tauwise::limits::check_lf_with(&t.spectrum, &limit_set, &args.gate.rule(None))?;
            JitterTrace::of_table(&t, path)
        }
        (None, Some(path)) => {
            if !limit_set.is_empty() {
                return Err(Error::option(
                    "--limit-file",
                    "L(f) limits are checked against a phase-noise TABLE, not a record's spectrum",
                ));
            }
            let series = args.input.load(path)?;
            if req.setup.period.is_some() {
                let x = series.record.to_phase();
                record_period = Some(record_period_jitter(&x.x, x.tau0, carrier, args.periods)?);
            }
            let welch = WelchOptions {
                window: args.window,
                segment: args.segment,
                overlap: 0.5,
            };
            let (trace, warnings) = JitterTrace::of_record(&series, carrier, &welch)?;
            for warning in &warnings {
                eprintln!("tauwise: warning: {warning}");
            }
            trace
        }
        (None, None) => {
            return Err(Error::option(
                "TABLE",
                "give a phase-noise TABLE or --record FILE",
            ))
        }
    };
    let limits = LimitsPart::new(limit_checks, elsewhere);
    let (body, judged) = JitterBody::compute(&trace, carrier, req, record_period, limits)?;
    let drawn: Vec<(&str, &BandJitter)> = (args.bands.iter().zip(&judged))
        .filter_map(|((name, _), (r, _))| r.as_ref().ok().map(|r| (name.as_str(), r)))
        .collect();
    let kind = match trace.welch {
        None => TraceKind::Table,
        Some(_) => TraceKind::RecordSpectrum,
    };
    let spurs = &body.found_spurs;
    args.plot.draw(|| {
        let mut chart = jitter_chart(&trace.source, carrier, &trace.drawn, kind, &drawn, spurs)?;
        add_limits(&mut chart, &limit_set, ValueKind::DbcHz);
        Ok(chart)
    })?;
    let source = &trace.source;
    args.output.write(
        trace.input,
        &body,
        |b| b.csv(),
        |b| b.table(source).render(),
    )?;
    let judgements = judged.iter().filter_map(|j| j.1.as_ref());
    Ok(args.gate.outcome(gate(
        judgements.chain(tauwise::limits::judgements(&body.limits.limits)),
    )))
}
