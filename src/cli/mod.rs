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
pub mod separate;
pub mod simulate;
pub mod spectrum;
pub mod stability;
pub mod timeline;
pub mod wander;

/// Oscillator and clock stability analysis.
#[derive(Debug, Parser)]
#[command(name = "tauwise", version, about, long_about = None, max_term_width = 100,
    after_help = EXIT_CODES)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands (their outputs: docs/json.md).
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
    /// The stability of each clock from pairs measured against each other (N-cornered hat).
    Separate(separate::Args),
    /// σ(τ) in a window sliding along the record, and where it departs from the whole.
    Timeline(timeline::Args),
    /// Synthetic power-law noise records (seeded).
    Simulate(simulate::SimulateArgs),
    /// One self-contained HTML report for a device under test.
    Report(report::Args),
}

/// What a subcommand returns to `main` when it did not fail.
pub enum Outcome {
    /// Success.
    Done,
    /// A verdict exceeds its limit and the user asked for a non-zero exit
    /// status (`--fail-on-violation`): exit 3.
    VerdictFailed,
    /// No verdict exceeds, but one could not be judged, with
    /// `--fail-on-violation`: exit 4.
    NotJudged,
    /// None exceeds and all were judged, but the guarded decision rule left
    /// one undecided, with `--fail-on-violation`: exit 5.
    Undecided,
}

impl Outcome {
    /// The outcome of a command whose checks gave `gate`
    /// ([`tauwise::verdict::gate`]), with or without `--fail-on-violation`.
    pub fn of_gate(gate: tauwise::verdict::Gate, fail_on_violation: bool) -> Self {
        use tauwise::verdict::Gate;
        match (gate, fail_on_violation) {
            (_, false) | (Gate::Pass, _) => Outcome::Done,
            (Gate::Exceeds, true) => Outcome::VerdictFailed,
            (Gate::NotJudged, true) => Outcome::NotJudged,
            (Gate::Undecided, true) => Outcome::Undecided,
        }
    }
}

/// The exit statuses, for `--help` texts and the documentation.
pub const EXIT_CODES: &str =
    "Exit status: 0 success (a verdict that exceeds its limit is a result, \
not an error); 1 error in the input or the computation; 2 bad command line (an option value \
refused, options that do not go together); 3 a verdict exceeds \
its limit and --fail-on-violation was given; 4 no verdict exceeds but one could not be judged \
(a value that feeds it is not finite, nothing of its range was checked, too few paths, a band \
outside the table) and --fail-on-violation was given; 5 every verdict was judged and none exceeds, but one is undecided under --decision-rule guarded, and --fail-on-violation was given.";

/// On SIGINT or SIGTERM (and SIGHUP), remove the temporary files of the
/// atomic writes in progress, then end with the conventional status
/// 128 + signal (130 for an interrupt).
fn remove_temp_files_on_signal() {
    let _ = ctrlc::set_handler(|| {
        let n = tauwise::io::remove_pending_temp_files();
        if n > 0 {
            eprintln!("tauwise: interrupted: removed {n} unfinished output file(s)");
        } else {
            eprintln!("tauwise: interrupted");
        }
        std::process::exit(130);
    });
}

/// A bad command line in tauwise's words: `tauwise: error: --budget 1.5:
/// '1.5' has no unit: …` for a value one of the parsers refused (the option,
/// the value, then the parser's reason), clap's own message otherwise
/// (unknown option, missing value, …), after `tauwise: `.
fn command_line_error(e: &clap::Error) -> String {
    use clap::error::{ContextKind, ContextValue, ErrorKind};
    if e.kind() == ErrorKind::ValueValidation {
        let text = |k| match e.get(k) {
            Some(ContextValue::String(s)) => Some(s.clone()),
            _ => None,
        };
        let why = std::error::Error::source(e).map(|s| s.to_string());
        if let (Some(arg), Some(value), Some(why)) = (
            text(ContextKind::InvalidArg),
            text(ContextKind::InvalidValue),
            why,
        ) {
            // `--budget <DUR>` → `--budget`; a positional keeps its name.
            let flag = arg.split_whitespace().next().unwrap_or(&arg);
            return format!("tauwise: error: {flag} {value}: {why}\n");
        }
    }
    format!("tauwise: {}", e.render())
}

/// Run the command line; returns the process exit code.
pub fn main() -> i32 {
    remove_temp_files_on_signal();
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) if !e.use_stderr() => {
            // --help, --version
            let _ = e.print();
            return 0;
        }
        Err(e) => {
            eprint!("{}", command_line_error(&e));
            return 2;
        }
    };
    let result: Result<Outcome, tauwise::Error> = match cli.command {
        Command::Inspect(a) => inspect::run(a),
        Command::Prepare(a) => prepare::run(a),
        Command::Simulate(a) => simulate::run(a),
        Command::Report(a) => report::run(a),
        Command::Stability(a) => stability::run(a),
        Command::Separate(a) => separate::run(a),
        Command::Timeline(a) => timeline::run(a),
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
        Ok(Outcome::NotJudged) => 4,
        Ok(Outcome::Undecided) => 5,
        Err(e) => {
            eprintln!("tauwise: error: {e}");
            if e.is_bad_request() {
                2
            } else {
                1
            }
        }
    }
}
