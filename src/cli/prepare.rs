//! `tauwise prepare FILE -o OUT`: a cleaned copy of a record — outliers made
//! gaps, drift removed, gaps filled, decimated — written atomically in the
//! form every command reads back as it was ([`tauwise::io::record_file`]):
//! `#` comment lines that say what was done, a header `time (s),phase (s)`
//! (or `time,frequency (frac)`), and rows of time stamp and value — the
//! stamps carry τ0 and the record's start (ISO-8601 UTC when the input had
//! date-times), NaN marks a gap.
//!
//! The steps run in this order: outliers (on the frequency as read), drift
//! (fitted after the outliers are gone), gap filling
//! ([`tauwise::prepare::pipeline`], shared with the report), decimation.

use super::common::{plain, InputArgs};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::io::Write;
use std::path::{Path, PathBuf};
use tauwise::io::record_file::{write_record_file, RecordFile, Start};
use tauwise::prepare::{self, DriftModel};
use tauwise::units::{format_si, format_sig};
use tauwise::units::{FreqUnit, PhaseUnit, ValueUnit};
use tauwise::{Error, Record, Result};

/// Drift model to remove (`--remove-drift`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DriftArg {
    /// Least-squares line through the frequency.
    Linear,
    /// Least-squares parabola through the frequency.
    Quadratic,
}

impl From<DriftArg> for DriftModel {
    fn from(d: DriftArg) -> Self {
        match d {
            DriftArg::Linear => DriftModel::Linear,
            DriftArg::Quadratic => DriftModel::Quadratic,
        }
    }
}

/// The record with the drift of `model` removed (when asked for), for the
/// analysis commands' `--remove-drift`.
pub fn without_drift(record: Record, model: Option<DriftArg>) -> Result<Record> {
    match model {
        None => Ok(record),
        Some(m) => {
            let fit = prepare::fit_drift(&record, m.into())?;
            Ok(prepare::remove_drift(&record, &fit))
        }
    }
}

/// Write a cleaned copy of a phase or frequency record.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Output file (`-` writes to standard output).
    #[arg(short = 'o', long = "output", value_name = "OUT")]
    pub output: PathBuf,
    /// Remove frequency drift fitted by least squares (the frequency at the
    /// record's centre is kept).
    #[arg(long, value_enum, value_name = "MODEL")]
    pub remove_drift: Option<DriftArg>,
    /// Take out the frequency values further than K scaled MADs from the
    /// median: a frequency value or a phase glitch becomes a gap, a phase
    /// step is taken out of the later phase (one sample becomes a gap).
    #[arg(long = "outliers", value_name = "K", allow_hyphen_values = true, value_parser = super::common::mad_limit)]
    pub outliers: Option<f64>,
    /// Fill interior gaps by linear interpolation.
    #[arg(long)]
    pub fill_gaps: bool,
    /// Keep every N-th phase sample (or average N frequency values).
    #[arg(long, value_name = "N", value_parser = super::common::count)]
    pub decimate: Option<usize>,
}

/// Run `prepare`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(&[&args.file], &[Some(args.output.as_path())])?;
    let series = args.input.load(&args.file)?;
    let mut record = series.record;
    let mut notes: Vec<String> = Vec::new();
    notes.push(format!(
        "read: {} ({} samples, {} gaps, τ0 {}{})",
        series.info.path.display(),
        record.len(),
        record.gaps(),
        format_si(record.tau0(), "s", 6),
        if series.info.inserted_gaps > 0 {
            format!(
                ", {} gaps inserted for timestamp jumps",
                series.info.inserted_gaps
            )
        } else {
            String::new()
        }
    ));

    let steps = prepare::pipeline::Steps {
        outliers: args.outliers,
        drift: args.remove_drift.map(DriftModel::from),
        fill_gaps: args.fill_gaps,
    };
    let kind = record.kind();
    let done = prepare::pipeline::prepare(&record, &steps)?;
    if let Some(o) = &done.outliers {
        let mut n = format!(
            "outliers: {} frequency values beyond {} × MAD (median {}, MAD {}); {} samples made gaps",
            o.events.len(),
            format_sig(o.limit, 3),
            format_sig(o.median, 6),
            format_sig(o.mad, 6),
            o.samples_made_gaps
        );
        if o.steps_removed > 0 {
            n.push_str(&format!(
                "; {} phase steps taken out of the later phase (one sample each made a gap)",
                o.steps_removed
            ));
        }
        notes.push(n);
        for e in o.events.iter().take(20) {
            notes.push(format!(
                "  outlier at t = {} s (y index {}): y = {}, {} MAD{}",
                format_sig(e.t, 8),
                e.index,
                format_sig(e.y, 6),
                format_sig(e.mads, 3),
                e.action
                    .map(|a| format!("; {}", a.words()))
                    .unwrap_or_default()
            ));
        }
        if o.events.len() > 20 {
            notes.push(format!("  … and {} more", o.events.len() - 20));
        }
    }
    if let Some(fit) = &done.drift {
        let model = fit.model;
        let mut n = format!(
            "drift removed: {} fit to frequency, {} per day at the centre (t = {} s from the first sample)",
            model.name(),
            format_sig(fit.per_day(), 6),
            format_sig(fit.centre, 8)
        );
        if model == DriftModel::Quadratic {
            n.push_str(&format!(
                ", change of drift {} per day²",
                format_sig(fit.curvature_per_day2(), 6)
            ));
        }
        n.push_str(&format!(
            "; frequency at the centre {} kept",
            format_sig(fit.offset, 6)
        ));
        notes.push(n);
    }
    if let Some(g) = &done.gaps {
        notes.push(format!(
            "gaps filled by linear interpolation of {}: {} samples; {} left at the ends",
            match kind {
                tauwise::DataKind::Phase => "phase",
                tauwise::DataKind::Freq => "frequency",
            },
            g.filled,
            g.left
        ));
    }
    record = done.record;

    if let Some(n) = args.decimate {
        let before = record.tau0();
        record = prepare::decimate(&record, n)?;
        notes.push(format!(
            "decimated by {n}: τ0 {} → {}{}",
            format_si(before, "s", 6),
            format_si(record.tau0(), "s", 6),
            match record {
                Record::Phase(_) => " (every n-th phase sample)",
                Record::Frequency(_) => " (block means of frequency; a block with a gap is a gap)",
            }
        ));
    }

    let start = match (series.info.start_unix, series.info.start_time) {
        (Some((s, ns)), _) => Start::DateTime(s, ns),
        (None, Some(t)) => Start::Seconds(t),
        (None, None) => Start::Seconds(0.0),
    };
    write_record(&args.output, &record, &notes, start)?;
    if args.output.as_os_str() != "-" {
        eprintln!(
            "tauwise: wrote {} ({} {} samples, τ0 {}, {} gaps)",
            args.output.display(),
            record.len(),
            record.kind().name(),
            format_si(record.tau0(), "s", 6),
            record.gaps()
        );
    }
    Ok(Outcome::Done)
}

fn write_body(
    w: &mut dyn Write,
    record: &Record,
    notes: &[String],
    start: Start,
) -> std::io::Result<()> {
    let (what, unit) = match record {
        Record::Phase(_) => ("phase in seconds", ValueUnit::Phase(PhaseUnit::S)),
        Record::Frequency(_) => ("fractional frequency", ValueUnit::Freq(FreqUnit::Frac)),
    };
    let mut comments = vec![
        format!("{} {} prepare", tauwise::TOOL, tauwise::VERSION),
        format!(
            "data: {} ({what}), one sample per row after the header, NaN = gap",
            record.kind().name()
        ),
        format!("tau0: {} s", plain(record.tau0())),
        format!("samples: {}, gaps: {}", record.len(), record.gaps()),
    ];
    comments.extend(notes.iter().cloned());
    write_record_file(
        w,
        &RecordFile {
            record,
            unit,
            carrier: None,
            start,
            comments: &comments,
        },
    )
}

fn write_record(path: &Path, record: &Record, notes: &[String], start: Start) -> Result<()> {
    if path.as_os_str() == "-" {
        let mut so = std::io::BufWriter::new(std::io::stdout().lock());
        return match write_body(&mut so, record, notes, start).and_then(|_| so.flush()) {
            Ok(()) => Ok(()),
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
            Err(e) => Err(Error::from(tauwise::io::WriteError {
                path: path.to_path_buf(),
                source: e,
            })),
        };
    }
    tauwise::io::write_atomic_with(path, |w| write_body(w, record, notes, start))?;
    Ok(())
}
