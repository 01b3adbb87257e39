//! Options shared by several subcommands (how to read the input, where and
//! how to write the output), and the writing of a command's document.

use clap::{Args, ValueEnum};
use std::io::Write;
use std::path::{Path, PathBuf};
use tauwise::io::series::{read_series, Series, SeriesOptions};
use tauwise::parse::{
    comment_chars, snap_fraction, time_column, BinaryFormat, Duration, Frequency, Probability,
    TimeColumn,
};
pub use tauwise::parse::{count, mad_limit, overlap_fraction};
use tauwise::prepare::DriftModel;
use tauwise::results::{Document, Input};
use tauwise::tau::TauGrid;
use tauwise::units::ValueUnit;
use tauwise::{DataKind, Record, Result};

/// How to read a time-series input file (the record-input group every
/// command that reads a record shares; the DUT file takes the same keys).
#[derive(Debug, Clone, Args)]
pub struct InputArgs {
    /// What the readings are: phase (time error) or freq (frequency).
    /// Default: from the unit (--units or the header), else phase.
    #[arg(long = "data", value_name = "KIND", value_parser = str::parse::<DataKind>)]
    pub data: Option<DataKind>,
    /// Sampling interval τ0 (e.g. 1s, 100ms, or plain seconds). Default:
    /// the median spacing of the timestamps. With a time column too, the
    /// stamps still place the readings (gaps kept) and must agree with τ0.
    #[arg(long, value_name = "DUR", allow_hyphen_values = true, value_parser = Duration::positive)]
    pub tau0: Option<Duration>,
    /// Unit of the readings: s ms us ns ps (phase) or frac ppm ppb hz
    /// (frequency; hz = absolute readings, needs --carrier). Default: the
    /// unit in the value column's header — (ns) [ps] _us , ns; s ms us ns ps,
    /// frac ppm ppb, Hz kHz MHz GHz (see docs/input-files.md) — else s or
    /// frac. A --units that disagrees with the header is an error.
    #[arg(long = "units", value_name = "U", value_parser = tauwise::units::parse_value_unit)]
    pub units: Option<ValueUnit>,
    /// Nominal (carrier) frequency, e.g. 10MHz; needed with --units hz.
    #[arg(long, value_name = "FREQ", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub carrier: Option<Frequency>,
    /// Column holding the readings (1-based). Default: the last numeric column.
    #[arg(long, value_name = "N")]
    pub value_column: Option<usize>,
    /// Column holding timestamps (seconds, ISO-8601, or the unit in its
    /// header: ms us min h d MJD), 1-based, or `none` for readings without
    /// stamps. Default: column 1 when the file has two or more columns.
    #[arg(long, value_name = "N|none", value_parser = time_column)]
    pub time_column: Option<TimeColumn>,
    /// Round timestamps to the τ0 grid (stamps from a PC clock that wander),
    /// if each lies within FRAC·τ0 of it (--snap alone: 0.25); the largest
    /// distance is reported, a stamp beyond it is an error.
    #[arg(
        long,
        value_name = "FRAC",
        num_args = 0..=1,
        require_equals = true,
        default_missing_value = "0.25",
        value_parser = snap_fraction
    )]
    pub snap: Option<f64>,
    /// Unwrap phase readings that wrap at PERIOD (e.g. 100ns for a
    /// time-interval counter comparing 10 MHz against 10 MHz).
    #[arg(long, value_name = "PERIOD", allow_hyphen_values = true, value_parser = Duration::positive)]
    pub wrap: Option<Duration>,
    /// More characters that start a comment line, besides # ; % and //.
    #[arg(long, value_name = "CHARS", value_parser = comment_chars)]
    pub comment: Option<String>,
    /// Read every comma in a field as a decimal mark (for files where this
    /// is ambiguous; semicolon-, tab- and space-separated files and quoted
    /// fields are recognised without it).
    #[arg(long)]
    pub decimal_comma: bool,
    /// Read the file as a raw binary array of IEEE 754 numbers, no header:
    /// f64le, f32le, f64be or f32be (float64/float32, little/big-endian).
    /// Element i is the reading at i·τ0, so --tau0 is needed; NaN is a gap.
    #[arg(long, value_name = "TYPE", value_parser = str::parse::<BinaryFormat>)]
    pub binary: Option<BinaryFormat>,
}

impl InputArgs {
    /// The reader options these arguments ask for.
    pub fn options(&self) -> Result<SeriesOptions> {
        Ok(SeriesOptions {
            kind: self.data,
            unit: self.units,
            tau0: self.tau0.map(Duration::seconds),
            carrier: self.carrier.map(Frequency::hertz),
            value_column: self.value_column,
            time_column: match self.time_column {
                Some(TimeColumn::Number(n)) => Some(n),
                _ => None,
            },
            no_time_column: self.time_column == Some(TimeColumn::None),
            snap: self.snap,
            wrap: self.wrap.map(Duration::seconds),
            comments: self.comment.clone().unwrap_or_default(),
            decimal_comma: self.decimal_comma,
            binary: self.binary,
        })
    }

    /// Read the series at `path` (`-` = standard input) with these options;
    /// the reader's notes and warnings go to standard error.
    pub fn load(&self, path: &Path) -> Result<Series> {
        let series = self.load_quietly(path)?;
        report_reading(&series.info);
        Ok(series)
    }

    /// [`InputArgs::load`] without printing anything (for `inspect`, which
    /// shows the notes in its output).
    pub fn load_quietly(&self, path: &Path) -> Result<Series> {
        let opts = self.options()?;
        Ok(read_series(path, &opts)?)
    }
}

/// The τ grid of the commands that compute σ(τ) (`--taus`).
#[derive(Debug, Clone, Args)]
pub struct TauArgs {
    /// τ grid: octave, decade, all, log:N (N per decade) or a list of
    /// durations (1,10,100s,1h).
    #[arg(long, value_name = "GRID", default_value = "octave", value_parser = TauGrid::parse)]
    pub taus: TauGrid,
}

/// `--remove-drift MODEL` of the analysis commands.
#[derive(Debug, Clone, Args)]
pub struct DriftArgs {
    /// Remove a least-squares frequency drift first: linear or quadratic
    /// (aging would otherwise read as random-walk FM at long τ).
    #[arg(long, value_name = "MODEL", value_parser = str::parse::<DriftModel>)]
    pub remove_drift: Option<DriftModel>,
}

impl DriftArgs {
    /// `record` with the drift removed when asked for.
    pub fn apply(&self, record: Record) -> Result<Record> {
        match self.remove_drift {
            None => Ok(record),
            Some(m) => {
                let fit = tauwise::prepare::fit_drift(&record, m)?;
                Ok(tauwise::prepare::remove_drift(&record, &fit))
            }
        }
    }
}

/// `--fail-on-violation`, `--decision-rule` and `--conformance` of the
/// commands that give verdicts.
#[derive(Debug, Clone, Args)]
pub struct GateArgs {
    /// Exit with status 3 when a verdict exceeds its limit, 4 when none
    /// does but one cannot be judged, 5 when all were judged and none
    /// exceeds but one is undecided (for scripts).
    #[arg(long)]
    pub fail_on_violation: bool,
    /// How a verdict is reached (docs/decision-rules.md, JCGM 106:2012):
    /// simple (the estimate against the limit, the default) or guarded
    /// (accept only where the probability of conformance is at least
    /// --conformance, reject only where that of non-conformance is, else
    /// undecided). A DUT file's `decision_rule` applies when this is not given.
    #[arg(long, value_name = "RULE", value_parser = str::parse::<tauwise::decision::Rule>)]
    pub decision_rule: Option<tauwise::decision::Rule>,
    /// The conformance level of the guarded rule, in (0.5, 1) (default
    /// 0.95; a DUT file's `conformance` applies when this is not given).
    #[arg(long, value_name = "P", value_parser = tauwise::decision::parse_conformance)]
    pub conformance: Option<f64>,
}

impl GateArgs {
    /// The decision rule asked for, the command line before `dut` (the DUT
    /// file's `decision_rule` and `conformance`), then the defaults.
    pub fn rule(
        &self,
        dut: Option<tauwise::decision::DecisionRule>,
    ) -> tauwise::decision::DecisionRule {
        (dut.unwrap_or_default()).overridden(self.decision_rule, self.conformance)
    }

    /// What the command returns for the verdicts' `gate`.
    pub fn outcome(&self, gate: tauwise::verdict::Gate) -> super::Outcome {
        super::Outcome::of_gate(gate, self.fail_on_violation)
    }
}

/// The chart a command can draw (`--plot FILE`); each command says what
/// its chart shows in its own help (`mut_arg`).
#[derive(Debug, Clone, Args)]
pub struct PlotArgs {
    /// Draw the command's chart to FILE (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
}

/// `--confidence P`: the two-sided confidence level of the intervals,
/// strictly between 0 and 1; the default is the library's
/// ([`tauwise::stats::DEFAULT_CONFIDENCE`]).
#[derive(Debug, Clone, Args)]
pub struct ConfidenceArgs {
    /// Two-sided confidence level of the intervals, in (0, 1).
    #[arg(
        long,
        value_name = "P",
        allow_hyphen_values = true,
        default_value_t = Probability::new(tauwise::stats::DEFAULT_CONFIDENCE).expect("in (0, 1)"),
        value_parser = str::parse::<Probability>
    )]
    pub confidence: Probability,
}

/// The carrier frequency, Hz, or the error naming `option` (the option or
/// value that needs it) and `why`.
pub fn carrier(given: Option<Frequency>, option: impl Into<String>, why: &str) -> Result<f64> {
    given.map(Frequency::hertz).ok_or_else(|| {
        tauwise::Error::option(
            option,
            format!("{why} needs the carrier frequency: give --carrier (e.g. --carrier 10MHz)"),
        )
    })
}

/// Print how a file was read (notes) and what looks wrong (warnings) on
/// standard error, one line each, naming the file.
pub fn report_reading(info: &tauwise::io::series::SeriesInfo) {
    for n in &info.notes {
        eprintln!("tauwise: note: {}: {n}", info.path.display());
    }
    for w in &info.warnings {
        eprintln!("tauwise: warning: {}: {w}", info.path.display());
    }
}

/// Output format of a command's results.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, ValueEnum)]
pub enum Format {
    /// Aligned text for reading.
    #[default]
    Table,
    /// Comma-separated values, one row per result.
    Csv,
    /// JSON (the contract scripts rely on).
    Json,
}

/// Where and how to write a command's results.
#[derive(Debug, Clone, Args)]
pub struct OutputArgs {
    /// Output format [default: from the extension of -o FILE (.csv, .json),
    /// else table].
    #[arg(long = "format", value_enum, value_name = "FORMAT")]
    pub format_given: Option<Format>,
    /// Write the results to FILE (atomically) instead of standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
}

impl OutputArgs {
    /// The output format: `--format` when given, else the one the extension
    /// of `-o FILE` names (`.csv` → CSV, `.json` → JSON, any case), else a
    /// table — so that `-o result.csv` does not write a table into a file
    /// that says it holds CSV.
    pub fn format(&self) -> Format {
        if let Some(f) = self.format_given {
            return f;
        }
        let ext = self
            .output
            .as_deref()
            .and_then(|p| p.extension())
            .map(|e| e.to_string_lossy().to_ascii_lowercase());
        match ext.as_deref() {
            Some("csv") => Format::Csv,
            Some("json") => Format::Json,
            _ => Format::Table,
        }
    }
}

pub use tauwise::io::output_paths::check_output_paths;

impl OutputArgs {
    /// Before any computing: neither `-o` nor the chart file (`plot`) is one
    /// of `inputs`, and their directories take files
    /// ([`check_output_paths`]).
    pub fn check(&self, inputs: &[&Path], plot: &PlotArgs) -> Result<()> {
        check_output_paths(inputs, &[self.output.as_deref(), plot.plot.as_deref()])
    }

    /// Write a command's result in the chosen format: its JSON document
    /// ([`json_doc`]), its CSV (`csv`) or its table text (`table`), to
    /// standard output or atomically to `-o` ([`emit`]).
    pub fn write<B: serde::Serialize>(
        &self,
        input: Input,
        body: &B,
        csv: impl FnOnce(&B) -> Result<String>,
        table: impl FnOnce(&B) -> String,
    ) -> Result<()> {
        let text = match self.format() {
            Format::Json => json_doc(input, body)?,
            Format::Csv => csv(body)?,
            Format::Table => table(body),
        };
        emit(self, &text)
    }
}

/// One record's result, rendered in every format (the analysis commands
/// that take several FILEs).
pub struct Block<B> {
    /// The file as named on the command line.
    pub name: String,
    /// What was read.
    pub input: Input,
    /// The command's result.
    pub body: B,
    /// Its text table.
    pub table: String,
    /// Its CSV.
    pub csv: String,
}

impl OutputArgs {
    /// Write the results of one or more records: one record's document as
    /// [`OutputArgs::write`] does; several in one document, one block per
    /// record ([`tauwise::results::SeveralDocument`], a `file` column in
    /// CSV, a rule naming the file above each table).
    pub fn write_records<B: serde::Serialize>(&self, mut blocks: Vec<Block<B>>) -> Result<()> {
        if blocks.len() == 1 {
            let b = blocks.remove(0);
            return self.write(b.input, &b.body, |_| Ok(b.csv.clone()), |_| b.table.clone());
        }
        let named = |f: fn(&Block<B>) -> &String| -> Vec<(String, String)> {
            blocks
                .iter()
                .map(|b| (b.name.clone(), f(b).clone()))
                .collect()
        };
        let text = match self.format() {
            Format::Csv => tauwise::results::csv_with_file_column(&named(|b| &b.csv))?,
            Format::Table => tauwise::results::tables_text(&named(|b| &b.table)),
            Format::Json => {
                let doc = tauwise::results::SeveralDocument::new(
                    blocks.into_iter().map(|b| (b.input, b.body)).collect(),
                );
                let (text, found) = doc.json()?;
                note_not_finite(&found);
                text
            }
        };
        emit(self, &text)
    }
}

impl PlotArgs {
    /// Draw the chart `make` builds to `--plot FILE` at the default size;
    /// nothing (and no chart built) without `--plot`.
    pub fn draw(&self, make: impl FnOnce() -> Result<tauwise::plot::Chart>) -> Result<()> {
        match &self.plot {
            Some(path) => tauwise::plot::render(&make()?, path, tauwise::plot::DEFAULT_SIZE),
            None => Ok(()),
        }
    }
}

/// Write `text` to standard output, or atomically to the `-o` file
/// (`-o -` is standard output too).
pub fn emit(out: &OutputArgs, text: &str) -> Result<()> {
    emit_to(out.output.as_deref(), text.as_bytes())
}

/// Write `bytes` to `path` atomically, or to standard output when `path` is
/// `None` or `-`. A closed pipe on standard output is not an error.
pub fn emit_to(path: Option<&Path>, bytes: &[u8]) -> Result<()> {
    match path {
        Some(p) if p.as_os_str() != "-" => Ok(tauwise::io::write_atomic(p, bytes)?),
        _ => {
            let mut so = std::io::stdout().lock();
            match so.write_all(bytes).and_then(|_| so.flush()) {
                Ok(()) => Ok(()),
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                Err(e) => Err(tauwise::io::WriteError {
                    path: PathBuf::from("-"),
                    source: e,
                }
                .into()),
            }
        }
    }
}

/// A command's JSON document ([`tauwise::results::Document`]: `"tool"`,
/// `"version"`, `"schema"`, `"input"`, then `body`) as text. When a
/// computed member is not finite the document lists it under
/// `"not_finite"`, and a note on standard error names it.
pub fn json_doc<B: serde::Serialize>(input: Input, body: B) -> Result<String> {
    let (text, found) = Document::new(input, body).json()?;
    note_not_finite(&found);
    Ok(text)
}

/// The note on standard error naming a document's members that are not
/// finite.
pub fn note_not_finite(found: &[String]) {
    if !found.is_empty() {
        eprintln!(
            "tauwise: note: {} computed value(s) are not finite (overflowed or undefined): {}",
            found.len(),
            found.iter().take(5).cloned().collect::<Vec<_>>().join(", ")
        );
    }
}

/// Progress on standard error for commands that can run for seconds on big
/// records: a spinner with the current stage, shown only when stderr is a
/// terminal (nothing at all in pipes, files and CI), cleared at the end.
pub struct Progress(Option<indicatif::ProgressBar>);

impl Progress {
    /// Start the indicator for `command` (no-op when stderr is not a terminal).
    pub fn start(command: &str) -> Self {
        use std::io::IsTerminal;
        let bar = std::io::stderr().is_terminal().then(|| {
            let b = indicatif::ProgressBar::new_spinner();
            b.set_style(
                indicatif::ProgressStyle::with_template("{prefix} {spinner} {msg} ({elapsed})")
                    .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner()),
            );
            b.set_prefix(command.to_string());
            b.enable_steady_tick(std::time::Duration::from_millis(120));
            b
        });
        Progress(bar)
    }

    /// Name the stage now running.
    pub fn stage(&self, what: impl Into<String>) {
        if let Some(b) = &self.0 {
            b.set_message(what.into());
        }
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        if let Some(b) = &self.0 {
            b.finish_and_clear();
        }
    }
}

/// Determinate progress bars on standard error, one per named job of
/// counted steps (a report's devices), shown only when stderr is a terminal
/// and cleared at the end.
pub struct StepBars(Option<(indicatif::MultiProgress, Vec<indicatif::ProgressBar>)>);

impl StepBars {
    /// One bar for each `(name, steps)`.
    pub fn new(jobs: &[(&str, u64)]) -> Self {
        use std::io::IsTerminal;
        if !std::io::stderr().is_terminal() {
            return Self(None);
        }
        let multi = indicatif::MultiProgress::new();
        let width = jobs.iter().map(|j| j.0.chars().count()).max().unwrap_or(0);
        let style =
            indicatif::ProgressStyle::with_template("{prefix} [{bar:30}] {pos}/{len} {msg}")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar())
                .progress_chars("=> ");
        let bars = jobs
            .iter()
            .map(|(name, len)| {
                let b = multi.add(indicatif::ProgressBar::new(*len));
                b.set_style(style.clone());
                b.set_prefix(format!("{name:width$}"));
                b
            })
            .collect();
        Self(Some((multi, bars)))
    }

    /// Move bar `i` to `done` steps with the stage's name.
    pub fn at(&self, i: usize, done: usize, what: &str) {
        if let Some(b) = self.0.as_ref().and_then(|(_, bars)| bars.get(i)) {
            b.set_position(done as u64);
            b.set_message(what.to_string());
        }
    }
}

impl Drop for StepBars {
    fn drop(&mut self) {
        if let Some((multi, bars)) = &self.0 {
            for b in bars {
                b.finish_and_clear();
            }
            let _ = multi.clear();
        }
    }
}
