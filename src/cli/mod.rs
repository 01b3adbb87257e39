//! Command-line layer: clap definitions (one file per subcommand) and
//! rendering helpers. Nothing here computes; it calls the library.

use clap::{Parser, Subcommand};

pub mod common;
pub mod convert;
pub mod holdover;
pub mod inspect;
pub mod jitter;
pub mod noise;
pub mod prepare;
pub mod report;
pub mod simulate;
pub mod spectrum;
pub mod stability;
pub mod wander;

/// Oscillator and clock stability analysis.
#[derive(Debug, Parser)]
#[command(name = "tauwise", version, about, long_about = None, max_term_width = 100)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands (DESIGN.md §5).
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Summarise a record: points, span, τ0, gaps, offset, drift, outliers.
    Inspect(inspect::Args),
    /// Write a cleaned copy of a record (drift, outliers, gaps, decimation).
    Prepare(prepare::Args),
    /// σ(τ) curves with confidence intervals and noise type.
    Stability(stability::Args),
    /// The dominant noise per τ (WPM … RWFM, or drift) and the fitted power-law model.
    Noise(noise::Args),
    /// PSD of a time record as L(f), S_φ, S_y, S_x (Welch's method).
    Spectrum(spectrum::Args),
    /// Convert between phase-noise tables, power-law models and σ(τ).
    Convert(convert::Args),
    /// Integrated phase jitter over offset bands, with optional weighting.
    Jitter(jitter::Args),
    /// MTIE, TDEV and TIE statistics against wander masks.
    Wander(wander::Args),
    /// Time error predicted over a holdover span, against a budget.
    Holdover(holdover::Args),
    /// Synthetic power-law noise records (seeded).
    Simulate(simulate::SimulateArgs),
    /// One self-contained HTML report for a device under test.
    Report(report::Args),
}

/// What a subcommand returns to `main` when it did not fail.
pub enum Outcome {
    /// Success.
    Done,
    /// A verdict failed and the user asked for a non-zero exit status.
    VerdictFailed,
}

/// Run the command line; returns the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    let result: Result<Outcome, tauwise::Error> = match cli.command {
        Command::Inspect(a) => inspect::run(a),
        Command::Prepare(a) => prepare::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Report(a) => report::run(a),
        Command::Stability(a) => stability::run(a),
        Command::Noise(a) => noise::run(a),
        Command::Spectrum(a) => spectrum::run(a),
        Command::Convert(a) => convert::run(a),
        Command::Jitter(a) => jitter::run(a),
        Command::Wander(a) => wander::run(a),
        Command::Holdover(a) => holdover::run(a),
    };
    match result {
        Ok(Outcome::Done) => 0,
        Ok(Outcome::VerdictFailed) => 3,
        Err(e) => {
            eprintln!("tauwise: error: {e}");
            1
        }
    }
}
