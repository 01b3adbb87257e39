//! `tauwise separate --pair A,B=ab.txt …`: the stability of each clock from
//! records of pairs measured against each other (N-cornered hat), as a
//! table, CSV or JSON (docs/json.md), with an optional chart.

use super::common::{ConfidenceArgs, InputArgs, OutputArgs, PlotArgs, TauArgs};
use super::Outcome;
use clap::{Args as ClapArgs, ValueEnum};
use std::path::Path;
use tauwise::deviation::Estimator;
use tauwise::results::{Input, PairInputs, RecordInput, SeparateBody};
use tauwise::separate::{align, separate, Method, PairRecord, PairSpec, Request};
use tauwise::Result;

/// Monte Carlo draws of the covariance form's intervals.
pub const DRAWS: usize = 400;

/// How to separate (`--method`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MethodArg {
    /// Independent clocks: three-cornered hat (Gray & Allan 1974), least
    /// squares for more pairs or clocks (Barnes).
    Independent,
    /// Correlated clocks (Premoli & Tavella 1993): needs one clock compared
    /// with every other and simultaneous records.
    Covariance,
}

/// When the pair records were taken (`--sessions`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SessionsArg {
    /// All pairs recorded over the same span (a multi-channel counter).
    Simultaneous,
    /// Each pair recorded in its own session.
    Separate,
}

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
    /// How the clocks are separated.
    #[arg(long, value_enum, default_value = "independent")]
    pub method: MethodArg,
    /// When the pair records were taken: at the same time (pairs sharing a
    /// clock share its noise, which the intervals use), or in separate
    /// sessions (no shared noise; the covariance method needs simultaneous
    /// records).
    #[arg(long, value_enum, default_value = "simultaneous")]
    pub sessions: SessionsArg,
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
        method: match args.method {
            MethodArg::Independent => Method::Independent,
            MethodArg::Covariance => Method::Covariance,
        },
        seed: args.seed,
        draws: DRAWS,
        simultaneous: args.sessions == SessionsArg::Simultaneous,
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
