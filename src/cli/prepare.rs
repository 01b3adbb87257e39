//! `tauwise prepare FILE -o OUT`: a cleaned copy of a record — outliers made
//! gaps, drift removed, gaps filled, decimated — written atomically as one
//! value per line (phase in seconds, or fractional frequency) after a `#`
//! comment header that says what was done.
//!
//! The steps run in this order: outliers (on the frequency as read), drift
//! (fitted after the outliers are gone), gap filling
//! ([`tauwise::prepare::pipeline`], shared with the report), decimation.

use super::common::{plain, InputArgs};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::io::Write;
use std::path::{Path, PathBuf};
use tauwise::prepare::{self, DriftModel};
use tauwise::units::{format_si, format_sig};
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
    #[arg(long = "outliers", value_name = "K")]
    pub outliers: Option<f64>,
    /// Fill interior gaps by linear interpolation.
    #[arg(long)]
    pub fill_gaps: bool,
    /// Keep every N-th phase sample (or average N frequency values).
    #[arg(long, value_name = "N")]
    pub decimate: Option<usize>,
}

/// Run `prepare`.
pub fn run(args: Args) -> Result<Outcome> {
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

    write_record(&args.output, &record, &notes)?;
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

fn write_body(w: &mut dyn Write, record: &Record, notes: &[String]) -> std::io::Result<()> {
    let (what, values): (&str, &[f64]) = match record {
        Record::Phase(p) => ("phase in seconds", &p.x),
        Record::Frequency(f) => ("fractional frequency", &f.y),
    };
    writeln!(w, "# {} {} prepare", tauwise::TOOL, tauwise::VERSION)?;
    writeln!(
        w,
        "# data: {} ({what}), one value per line, NaN = gap",
        record.kind().name()
    )?;
    writeln!(w, "# tau0: {} s", plain(record.tau0()))?;
    writeln!(w, "# samples: {}, gaps: {}", record.len(), record.gaps())?;
    for n in notes {
        writeln!(w, "# {n}")?;
    }
    for &v in values {
        writeln!(w, "{}", plain(v))?;
    }
    Ok(())
}

fn write_record(path: &Path, record: &Record, notes: &[String]) -> Result<()> {
    if path.as_os_str() == "-" {
        let mut so = std::io::BufWriter::new(std::io::stdout().lock());
        return match write_body(&mut so, record, notes).and_then(|_| so.flush()) {
            Ok(()) => Ok(()),
            Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
            Err(e) => Err(Error::from(tauwise::io::WriteError {
                path: path.to_path_buf(),
                source: e,
            })),
        };
    }
    tauwise::io::write_atomic_with(path, |w| write_body(w, record, notes))?;
    Ok(())
}
