//! `tauwise jitter TABLE`: integrated phase jitter over offset bands, from a
//! phase-noise table or (with `--record`) from the PSD of a time record
//! ([`tauwise::spectrum::jitter`]).

use super::common::{emit, header_json, json_text, num, plain, Format, InputArgs, OutputArgs};
use super::spectrum::welch_options;
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use tauwise::io::lf_table::{
    read_filter_file, read_lf_table, read_spurs, LfTable, TableOptions, TableQuantity,
};
use tauwise::plot::phase_noise::{BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::spectrum::jitter::{integrate_band, Band, BandJitter, JitterSetup, Weighting};
use tauwise::spectrum::welch::welch_record;
use tauwise::spectrum::Spectrum;
use tauwise::units::{format_si, parse_frequency};
use tauwise::{Error, Result, DECISION_CAUTION};

/// Integrated phase jitter over offset bands.
#[derive(Debug, ClapArgs)]
#[command(
    after_help = "Examples:\n  tauwise jitter ocxo-a-lf.csv --carrier 10MHz --band 12k:5M --band 10:1k\n  \
    tauwise jitter ocxo-a-lf.csv --carrier 156.25M --band 12k:20M --filter highpass:1:12k --ui-rate 10.3125G\n  \
    tauwise jitter --record tie.csv --tau0 1us --carrier 10MHz --band 100:400k"
)]
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
    #[arg(long, value_name = "Q", default_value = "lf")]
    pub quantity: String,
    /// Integration band FROM:TO (e.g. 12k:20M); repeat for several bands.
    #[arg(long = "band", value_name = "FROM:TO", required = true)]
    pub bands: Vec<String>,
    /// Butterworth weighting highpass:ORDER:FC or lowpass:ORDER:FC; repeat to combine.
    #[arg(long = "filter", value_name = "FILTER")]
    pub filters: Vec<String>,
    /// Weighting file: offset against |H(f)|² in dB.
    #[arg(long, value_name = "FILE")]
    pub filter_file: Option<PathBuf>,
    /// Spur list: offset against spur level in dBc (one sideband).
    #[arg(long, value_name = "FILE")]
    pub spurs: Option<PathBuf>,
    /// Line rate for jitter in unit intervals (e.g. 10.3125G).
    #[arg(long, value_name = "RATE")]
    pub ui_rate: Option<String>,
    /// Allow bands beyond the table by continuing its end slopes (reported).
    #[arg(long)]
    pub extrapolate: bool,
    /// Window for --record spectra.
    #[arg(long, value_name = "NAME", default_value = "hann")]
    pub window: String,
    /// Segment length for --record spectra (samples).
    #[arg(long, value_name = "N")]
    pub segment: Option<usize>,
    /// Draw L(f) with each integration band shaded and labelled with its
    /// rms jitter to FILE (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// The `"input"` object for a phase-noise table.
pub fn table_input_json(t: &LfTable, quantity: TableQuantity) -> serde_json::Value {
    let (lo, hi) = t.spectrum.range();
    serde_json::json!({
        "path": t.path,
        "data": "table",
        "quantity": quantity.name(),
        "points": t.spectrum.len(),
        "from": num(lo),
        "to": num(hi),
    })
}

/// Header members for a table input.
pub fn table_header(
    t: &LfTable,
    quantity: TableQuantity,
) -> serde_json::Map<String, serde_json::Value> {
    let mut m = serde_json::Map::new();
    m.insert("tool".into(), tauwise::TOOL.into());
    m.insert("version".into(), tauwise::VERSION.into());
    m.insert("input".into(), table_input_json(t, quantity));
    m
}

/// Read a table with the common column options.
pub fn load_table(
    path: &Path,
    quantity: TableQuantity,
    input: &InputArgs,
    carrier: Option<f64>,
) -> Result<LfTable> {
    read_lf_table(
        path,
        &TableOptions {
            quantity,
            offset_column: None,
            value_column: input.value_column,
            carrier,
        },
    )
}

/// Run `jitter`.
pub fn run(args: Args) -> Result<Outcome> {
    let carrier = super::spectrum::carrier_of(&args.input)?.ok_or_else(|| {
        Error::invalid("jitter needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)")
    })?;
    let bands = args
        .bands
        .iter()
        .map(|b| Band::parse(b))
        .collect::<Result<Vec<_>>>()?;
    let mut setup = JitterSetup {
        filters: args
            .filters
            .iter()
            .map(|f| Weighting::parse(f))
            .collect::<Result<Vec<_>>>()?,
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
    let ui_rate = match &args.ui_rate {
        Some(r) => {
            let v = parse_frequency(r)?;
            if v.is_nan() || v <= 0.0 {
                return Err(Error::invalid(format!(
                    "--ui-rate {r}: expected a positive line rate"
                )));
            }
            Some(v)
        }
        None => None,
    };
    // The trace to plot: the table itself, or the record's spectrum
    // averaged into 10 log-spaced bins per decade (readable, same level).
    let mut plot_trace: Option<(Spectrum, TraceKind)> = None;
    let (mut header, spectrum, source): (_, Spectrum, String) = match (&args.table, &args.record) {
        (Some(path), _) => {
            let q = TableQuantity::parse(&args.quantity)?;
            let t = load_table(path, q, &args.input, Some(carrier))?;
            if args.plot.is_some() {
                plot_trace = Some((t.spectrum.clone(), TraceKind::Table));
            }
            (
                table_header(&t, q),
                t.spectrum.clone(),
                format!("table {}", path.display()),
            )
        }
        (None, Some(path)) => {
            let series = args.input.load(path)?;
            let w = welch_record(
                &series.record,
                &welch_options(&args.window, args.segment, 0.5)?,
            )?;
            for warning in &w.warnings {
                eprintln!("tauwise: warning: {warning}");
            }
            if args.plot.is_some() {
                plot_trace = Some((w.log_binned(10, Some(carrier))?, TraceKind::RecordSpectrum));
            }
            let mut h = header_json(&series);
            h.insert("window".into(), w.window.name().into());
            h.insert("enbw_hz".into(), num(w.enbw_hz));
            h.insert("gaps_handling".into(), w.gap_note().into());
            (
                h,
                w.spectrum(Some(carrier))?,
                format!("Welch spectrum of {}", path.display()),
            )
        }
        (None, None) => return Err(Error::invalid("give a phase-noise TABLE or --record FILE")),
    };
    let results = bands
        .iter()
        .map(|&b| integrate_band(&spectrum, b, &setup, ui_rate))
        .collect::<Result<Vec<_>>>()?;
    if let (Some(path), Some((trace, kind))) = (&args.plot, &plot_trace) {
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
                .zip(&results)
                .map(|(name, r)| BandMark::from_jitter(name, r))
                .collect(),
            notes,
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let text = match args.output.format {
        Format::Json => {
            header.insert("carrier".into(), num(carrier));
            header.insert(
                "ui_rate".into(),
                ui_rate.map(num).unwrap_or(serde_json::Value::Null),
            );
            header.insert(
                "spur_convention".into(),
                "spur level in dBc of one sideband; pure PM, 2·10^(dBc/10) rad²".into(),
            );
            header.insert(
                "bands".into(),
                serde_json::Value::Array(results.iter().map(band_json).collect()),
            );
            header.insert("caution".into(), DECISION_CAUTION.into());
            json_text(&serde_json::Value::Object(header))
        }
        Format::Csv => {
            let mut out =
                String::from("from,to,filter,rms_rad,rms_deg,rms_s,rms_ui,spurs,extrapolated\n");
            for r in &results {
                let _ = writeln!(
                    out,
                    "{},{},{},{},{},{},{},{},{}",
                    plain(r.from),
                    plain(r.to),
                    r.filter,
                    plain(r.rms_rad),
                    plain(r.rms_deg),
                    plain(r.rms_s),
                    r.rms_ui.map(plain).unwrap_or_default(),
                    r.spurs,
                    extrapolated_text(r)
                );
            }
            out
        }
        Format::Table => table(&source, carrier, &results),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

fn band_json(r: &BandJitter) -> serde_json::Value {
    serde_json::json!({
        "from": num(r.from),
        "to": num(r.to),
        "filter": r.filter,
        "rms_rad": num(r.rms_rad),
        "rms_deg": num(r.rms_deg),
        "rms_s": num(r.rms_s),
        "rms_ui": r.rms_ui.map(num).unwrap_or(serde_json::Value::Null),
        "spurs": r.spurs,
        "spurs_rad2": num(r.spurs_rad2),
        "extrapolated": r.extrapolated.iter().map(|(a, b)| serde_json::json!([num(*a), num(*b)])).collect::<Vec<_>>(),
    })
}

fn extrapolated_text(r: &BandJitter) -> String {
    r.extrapolated
        .iter()
        .map(|(a, b)| format!("{}:{}", plain(*a), plain(*b)))
        .collect::<Vec<_>>()
        .join(" ")
}

fn table(source: &str, carrier: f64, results: &[BandJitter]) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "Integrated phase jitter, {source}, carrier {}",
        format_si(carrier, "Hz", 4)
    );
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "{:>23}  {:>24}  {:>11}  {:>10}  {:>11}  {:>10}",
        "band", "weighting", "rms rad", "rms deg", "rms time", "rms UI"
    );
    for r in results {
        let band = format!(
            "{} – {}",
            format_si(r.from, "Hz", 4),
            format_si(r.to, "Hz", 4)
        );
        let _ = writeln!(
            out,
            "{:>23}  {:>24}  {:>11.4e}  {:>10.4e}  {:>11}  {:>10}",
            band,
            r.filter,
            r.rms_rad,
            r.rms_deg,
            format_si(r.rms_s, "s", 4),
            r.rms_ui
                .map(|u| format!("{u:.4e}"))
                .unwrap_or_else(|| "-".into())
        );
        if r.spurs > 0 {
            let _ = writeln!(
                out,
                "{:>23}  includes {} spur(s), {:.4e} rad²",
                "", r.spurs, r.spurs_rad2
            );
        }
        for (a, b) in &r.extrapolated {
            let _ = writeln!(
                out,
                "{:>23}  extrapolated {} – {} (end slope continued)",
                "",
                format_si(*a, "Hz", 4),
                format_si(*b, "Hz", 4)
            );
        }
    }
    let _ = writeln!(out);
    let _ = writeln!(out, "{DECISION_CAUTION}");
    out
}
