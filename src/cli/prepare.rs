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

use super::common::{emit_to, InputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::io::record_file::Start;
use tauwise::prepare::{self, DriftModel};
use tauwise::results::PrepareNotes;
use tauwise::units::format_si;
use tauwise::{Error, Result};

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
    #[arg(long, value_name = "MODEL", value_parser = str::parse::<DriftModel>)]
    pub remove_drift: Option<DriftModel>,
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
    let mut notes = PrepareNotes::read(
        &series.info.path.display().to_string(),
        &series.record,
        series.info.inserted_gaps,
    );
    let steps = prepare::pipeline::Steps {
        outliers: args.outliers,
        drift: args.remove_drift,
        fill_gaps: args.fill_gaps,
    };
    let done = prepare::pipeline::prepare(&series.record, &steps)?;
    notes.steps(&done, series.record.kind());
    let mut record = done.record;
    if let Some(n) = args.decimate {
        let before = record.tau0();
        record = prepare::decimate(&record, n)?;
        notes.decimated(n, before, &record);
    }
    let start = match (series.info.start_unix, series.info.start_time) {
        (Some((s, ns)), _) => Start::DateTime(s, ns),
        (None, Some(t)) => Start::Seconds(t),
        (None, None) => Start::Seconds(0.0),
    };
    let bytes = notes
        .record_file(&record, start)
        .map_err(|e| Error::invalid(format!("could not write the record: {e}")))?;
    emit_to(Some(&args.output), &bytes)?;
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
