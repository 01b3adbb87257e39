//! `tauwise spectrum FILE`: the PSD of a time record by Welch's method, as
//! L(f), S_φ, S_y and S_x ([`tauwise::spectrum::welch`]).

use super::common::{
    emit, header_json, json_text, num, plain, Format, InputArgs, OutputArgs, PlotArgs,
};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::plot::phase_noise::{LfTrace, PhaseNoisePlot, TraceKind};
use tauwise::spectrum::welch::{welch_record, Welch, WelchOptions, Window};
use tauwise::spectrum::{Quantity, Spectrum};
use tauwise::units::{format_si, format_sig};
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

/// The carrier given with `--carrier`, parsed.
pub fn carrier_of(input: &InputArgs) -> Result<Option<f64>> {
    Ok(input.options()?.carrier)
}

/// Welch options from the command-line words.
pub fn welch_options(window: Window, segment: Option<usize>, overlap: f64) -> Result<WelchOptions> {
    Ok(WelchOptions {
        window,
        segment,
        overlap,
    })
}

/// Run `spectrum`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(
        &[&args.file],
        &[args.output.output.as_deref(), args.plot.plot.as_deref()],
    )?;
    let quantity = args.quantity;
    let carrier = carrier_of(&args.input)?;
    if carrier.is_none() && matches!(quantity, Quantity::Lf | Quantity::Sphi) {
        return Err(Error::option(
            format!("--quantity {}", quantity.name()),
            "needs the carrier frequency: give --carrier (e.g. --carrier 10MHz), or ask for --quantity sy or sx",
        ));
    }
    if let (Some(path), None) = (&args.plot.plot, carrier) {
        return Err(Error::option(
            format!("--plot {}", path.display()),
            "the chart shows L(f), which needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)",
        ));
    }
    let progress = super::common::Progress::start("spectrum");
    progress.stage(format!("reading {}", args.file.display()));
    let series = args.input.load(&args.file)?;
    progress.stage("computing");
    let w = welch_record(
        &series.record,
        &welch_options(args.window, args.segment, args.overlap)?,
    )?;
    for warning in &w.warnings {
        eprintln!("tauwise: warning: {warning}");
    }
    let spec = if args.all_bins {
        w.spectrum(carrier)?
    } else {
        w.log_binned(args.per_decade, carrier)?
    };
    let rows = Rows::new(&spec)?;
    if let Some(path) = &args.plot.plot {
        let name = series.info.path.display().to_string();
        let plot = PhaseNoisePlot {
            title: name.clone(),
            carrier,
            traces: vec![LfTrace::from_spectrum(
                &format!("spectrum of {name}"),
                TraceKind::RecordSpectrum,
                &spec,
            )?],
            bands: Vec::new(),
            notes: vec![format!(
                "Welch's method: {} window, {:.0} % overlap, ENBW {}, {}; {}.",
                w.window.name(),
                w.overlap * 100.0,
                format_si(w.enbw_hz, "Hz", 4),
                if args.all_bins {
                    "every DFT bin".to_string()
                } else {
                    format!(
                        "averaged into {} log-spaced bins per decade",
                        args.per_decade
                    )
                },
                w.gap_note()
            )],
        };
        tauwise::plot::render(&plot.chart(), path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let text = match args.output.format {
        Format::Json => {
            let mut m = header_json(&series);
            m.insert(
                "carrier".into(),
                carrier.map(num).unwrap_or(serde_json::Value::Null),
            );
            m.insert("window".into(), w.window.name().into());
            m.insert("enbw_hz".into(), num(w.enbw_hz));
            m.insert("resolution_hz".into(), num(w.resolution_hz));
            m.insert("segment".into(), w.segment.into());
            m.insert("segments".into(), w.segments.into());
            m.insert("overlap".into(), num(w.overlap));
            m.insert("gaps_handling".into(), w.gap_note().into());
            m.insert(
                "warnings".into(),
                serde_json::to_value(&w.warnings).unwrap_or_default(),
            );
            m.insert(
                "bins".into(),
                if args.all_bins {
                    "all".into()
                } else {
                    format!("log, {} per decade", args.per_decade).into()
                },
            );
            m.insert("points".into(), rows.json());
            json_text(&serde_json::Value::Object(m))
        }
        Format::Csv => rows.csv(),
        Format::Table => table(&series.info.path, &w, carrier, &rows),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

/// The five columns of a spectrum output.
pub struct Rows {
    f: Vec<f64>,
    lf: Option<Vec<f64>>,
    sphi: Option<Vec<f64>>,
    sy: Vec<f64>,
    sx: Vec<f64>,
}

impl Rows {
    /// The columns of `s` (L and S_φ only with a carrier).
    pub fn new(s: &Spectrum) -> Result<Self> {
        let has_carrier = s.carrier.is_some();
        Ok(Self {
            f: s.f.clone(),
            lf: if has_carrier {
                Some(s.values_as(Quantity::Lf)?)
            } else {
                None
            },
            sphi: if has_carrier {
                Some(s.values_as(Quantity::Sphi)?)
            } else {
                None
            },
            sy: s.values_as(Quantity::Sy)?,
            sx: s.values_as(Quantity::Sx)?,
        })
    }

    /// `[{"f","lf_dbc_hz","sphi","sy","sx"}, …]`.
    pub fn json(&self) -> serde_json::Value {
        let opt = |v: &Option<Vec<f64>>, i: usize| {
            v.as_ref()
                .map(|v| num(v[i]))
                .unwrap_or(serde_json::Value::Null)
        };
        serde_json::Value::Array(
            (0..self.f.len())
                .map(|i| {
                    serde_json::json!({
                        "f": num(self.f[i]),
                        "lf_dbc_hz": opt(&self.lf, i),
                        "sphi": opt(&self.sphi, i),
                        "sy": num(self.sy[i]),
                        "sx": num(self.sx[i]),
                    })
                })
                .collect(),
        )
    }

    /// CSV with the header `f,lf_dbc_hz,sphi,sy,sx`.
    pub fn csv(&self) -> String {
        let mut out = String::from("f,lf_dbc_hz,sphi,sy,sx\n");
        let opt =
            |v: &Option<Vec<f64>>, i: usize| v.as_ref().map(|v| plain(v[i])).unwrap_or_default();
        for i in 0..self.f.len() {
            let _ = writeln!(
                out,
                "{},{},{},{},{}",
                plain(self.f[i]),
                opt(&self.lf, i),
                opt(&self.sphi, i),
                plain(self.sy[i]),
                plain(self.sx[i])
            );
        }
        out
    }
}

fn table(path: &std::path::Path, w: &Welch, carrier: Option<f64>, rows: &Rows) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "Spectrum of {} (Welch)", path.display());
    let _ = writeln!(
        out,
        "  window {}, ENBW {}, resolution {}, overlap {:.0} %",
        w.window.name(),
        format_si(w.enbw_hz, "Hz", 4),
        format_si(w.resolution_hz, "Hz", 4),
        w.overlap * 100.0
    );
    let _ = writeln!(out, "  {}", w.gap_note());
    if w.source == tauwise::record::DataKind::Freq {
        let _ = writeln!(
            out,
            "  frequency record: S_y = (2 sin(πfτ0)/τ0)²·S_x of the integrated phase (sampled data); L(f), S_φ and S_x from S_y"
        );
    }
    for warning in &w.warnings {
        let _ = writeln!(out, "  warning: {warning}");
    }
    match carrier {
        Some(c) => {
            let _ = writeln!(out, "  carrier {}", format_si(c, "Hz", 4));
        }
        None => {
            let _ = writeln!(out, "  no carrier given: L(f) and S_φ not shown");
        }
    }
    let _ = writeln!(out);
    out.push_str(&rows.text());
    out
}

impl Rows {
    /// Aligned text columns for reading.
    pub fn text(&self) -> String {
        let mut out = String::new();
        let _ = writeln!(
            out,
            "{:>12}  {:>12}  {:>11}  {:>11}  {:>11}",
            "f", "L(f) dBc/Hz", "S_φ rad²/Hz", "S_y 1/Hz", "S_x s²/Hz"
        );
        for i in 0..self.f.len() {
            let lf = self
                .lf
                .as_ref()
                .map(|v| format!("{:.2}", v[i]))
                .unwrap_or_else(|| "-".into());
            let sp = self
                .sphi
                .as_ref()
                .map(|v| format_sig(v[i], 4))
                .unwrap_or_else(|| "-".into());
            let _ = writeln!(
                out,
                "{:>12}  {:>12}  {:>11}  {:>11}  {:>11}",
                format_si(self.f[i], "Hz", 4),
                lf,
                sp,
                format_sig(self.sy[i], 4),
                format_sig(self.sx[i], 4)
            );
        }
        out
    }
}
