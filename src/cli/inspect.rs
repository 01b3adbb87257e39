//! `tauwise inspect FILE`: what a record holds before any analysis — how the
//! file was read (preamble, header, delimiter, decimal mark, unit and where
//! it came from, notes, warnings, suggested options), size, span, τ0, gaps,
//! mean frequency offset, linear drift, frequency outliers.

use super::common::{InputArgs, OutputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::io::series::suggestions;
use tauwise::prepare::summarize;
use tauwise::results::InspectBody;
use tauwise::Result;

/// Summarise a phase or frequency record.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Count frequency values further than K scaled MADs from the median.
    #[arg(long = "outliers", value_name = "K", default_value_t = 5.0, allow_hyphen_values = true, value_parser = super::common::mad_limit)]
    pub outlier_limit: f64,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `inspect`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(&[&args.file], &[args.output.output.as_deref()])?;
    let series = args.input.load_quietly(&args.file)?;
    let summary = summarize(&series.record, args.outlier_limit)?;
    let hints = suggestions(&series);
    let body = InspectBody::new(&series, &summary, &hints);
    args.output
        .write((&series).into(), &body, |b| b.csv(), |b| b.table().render())?;
    Ok(Outcome::Done)
}
