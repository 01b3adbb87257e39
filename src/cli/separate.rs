//! `tauwise separate --pair A,B=ab.txt …`: the stability of each clock from
//! records of pairs measured against each other (N-cornered hat), as a
//! table, CSV or JSON (docs/json.md), with an optional chart.

use super::common::{ConfidenceArgs, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::Path;
use tauwise::deviation::Estimator;
use tauwise::results::{Input, PairInputs, RecordInput, SeparateBody};
use tauwise::separate::{
    align, separate, simultaneous_sessions, Method, PairRecord, PairSpec, Request,
};
use tauwise::Result;

/// Monte Carlo draws of the covariance form's intervals.
pub const DRAWS: usize = tauwise::separate::DEFAULT_DRAWS;

/// The stability of each clock from pairwise comparisons (N-cornered hat).
#[derive(Debug, ClapArgs)]
#[command(mut_arg("plot", |a| a.help("Draw the σ–τ chart to FILE (.svg or .png): one series per clock, the pair curves faint")))]
pub struct Args {
    /// A pair record: the two clocks it compares and its file,
    /// CLOCK,CLOCK=FILE (the record holds x_first − x_second); give one per
    /// pair, at least three.
    #[arg(long = "pair", value_name = "A,B=FILE", required = true, value_parser = str::parse::<PairSpec>)]
    pub pairs: Vec<PairSpec>,
    #[command(flatten)]
    pub input: InputArgs,
    /// The estimator (adev, oadev, mdev, tdev, hdev, ohdev).
    #[arg(long = "dev", value_name = "EST", default_value = "oadev", value_parser = tauwise::separate::estimator_named)]
    pub dev: Estimator,
    /// How the clocks are separated: independent (three-cornered hat, Gray
    /// & Allan 1974; least squares for more pairs or clocks, Barnes) or
    /// covariance (correlated clocks, Premoli & Tavella 1993: needs one clock
    /// compared with every other and simultaneous records).
    #[arg(long, value_name = "METHOD", default_value = "independent", value_parser = str::parse::<Method>)]
    pub method: Method,
    /// When the pair records were taken: simultaneous (pairs sharing a
    /// clock share its noise, which the intervals use) or separate (each
    /// pair in its own session, no shared noise; the covariance method needs
    /// simultaneous records).
    #[arg(long = "sessions", value_name = "WHEN", default_value = "simultaneous", action = clap::ArgAction::Set, value_parser = simultaneous_sessions)]
    pub simultaneous: bool,
    /// Seed of the covariance form's Monte Carlo intervals.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    #[command(flatten)]
    pub taus: TauArgs,
    #[command(flatten)]
    pub confidence: ConfidenceArgs,
    #[command(flatten)]
    pub drift: super::common::DriftArgs,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `separate`.
pub fn run(args: Args) -> Result<Outcome> {
    let inputs: Vec<&Path> = args.pairs.iter().map(|p| p.path.as_path()).collect();
    args.output.check(&inputs, &args.plot)?;
    if args.pairs.len() < 3 {
        return Err(tauwise::Error::option(
            "--pair",
            format!(
                "{} pair(s) given: separating clocks needs at least three (A,B A,C B,C)",
                args.pairs.len()
            ),
        ));
    }
    let mut records = Vec::new();
    let mut read = Vec::new();
    for p in &args.pairs {
        let mut series = args.input.load(&p.path)?;
        series.record = args.drift.apply(series.record)?;
        read.push(RecordInput::of(&series));
        records.push(PairRecord {
            a: p.a.clone(),
            b: p.b.clone(),
            source: p.path.display().to_string(),
            record: series.record.to_phase(),
            start: series.info.start_time,
        });
    }
    let records = align(records)?;
    let request = Request {
        estimator: args.dev,
        grid: args.taus.taus.clone(),
        confidence: args.confidence.confidence.value(),
        method: args.method,
        seed: args.seed,
        draws: DRAWS,
        simultaneous: args.simultaneous,
    };
    let sep = separate(&records, &request)?;
    let title = format!("{} clocks from {} pairs", sep.clocks.len(), sep.pairs.len());
    args.plot
        .draw(|| Ok(tauwise::plot::separate::chart(&sep, &title)))?;
    let input = Input::Pairs(PairInputs {
        data: "pairs",
        records: read,
    });
    let body = SeparateBody::new(&sep, request.confidence);
    args.output.write(
        input,
        &body,
        |b| b.csv(),
        |_| tauwise::results::separate_text(&sep, request.confidence),
    )?;
    Ok(Outcome::Done)
}
