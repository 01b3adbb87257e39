//! `tauwise report DUT.toml -o report.html`: one self-contained HTML report
//! for a device under test; or the quick form `tauwise report FILE --tau0 …
//! [--lf TABLE --carrier F]` for a single record (and phase-noise table)
//! without a DUT file. With several DUT files, one comparison report
//! (`tauwise::report::fleet`); `--format json` prints the verdict matrix
//! (`tauwise::results::FleetDocument`) for any number of DUT files.

use super::common::{emit_to, ConfidenceArgs, InputArgs, StepBars};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::io::dut::Dut;
use tauwise::report::build::{from_dut_with_progress, BuildOptions};
use tauwise::report::duts::{dut_inputs, read_duts, QuickForm};
use tauwise::{Error, Result};

/// What `report` writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum ReportFormat {
    /// The self-contained HTML report (one device) or comparison (several).
    #[default]
    Html,
    /// The verdict matrix of the DUT files as JSON (docs/json.md).
    Json,
}

/// Make the HTML report for a device under test, or compare several.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
pub struct Args {
    /// A DUT file (`.toml`, see docs/dut-file.md), or a time record for the
    /// quick form; several DUT files make one comparison report.
    #[arg(value_name = "DUT|FILE", required = true, num_args = 1..)]
    pub inputs: Vec<PathBuf>,
    /// html (default) or json: the verdict matrix of the DUT files.
    #[arg(long, value_enum, default_value_t = ReportFormat::Html)]
    pub format: ReportFormat,
    /// Write the report to FILE (atomically); default: standard output.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
    #[command(flatten)]
    pub confidence: ConfidenceArgs,
    /// Also write every chart of the report into DIR as PNG files
    /// (stability.png, phase-noise.png, wander-mtie.png, holdover.png, …).
    #[arg(long, value_name = "DIR")]
    pub charts: Option<PathBuf>,
    /// Size of the --charts pictures in pixels, WIDTHxHEIGHT.
    #[arg(long, value_name = "WxH", default_value = "960x600", value_parser = parse_size)]
    pub chart_size: (u32, u32),
    #[command(flatten)]
    pub gate: super::common::GateArgs,
    /// Quick form: device name (default: the record's file name).
    #[arg(long, value_name = "NAME")]
    pub name: Option<String>,
    /// Quick form: an L(f) table for the phase-noise section (needs --carrier).
    #[arg(long = "lf", value_name = "TABLE")]
    pub lf: Option<PathBuf>,
    /// Quick form: how to read the record.
    #[command(flatten)]
    pub input_args: InputArgs,
}

/// Parse `960x600`.
fn parse_size(text: &str) -> std::result::Result<(u32, u32), tauwise::units::UnitError> {
    text.split_once(['x', 'X', '×'])
        .and_then(|(w, h)| Some((w.trim().parse().ok()?, h.trim().parse().ok()?)))
        .ok_or_else(|| tauwise::units::UnitError::Bad {
            text: text.to_string(),
            what: "chart size",
            expected: "WIDTHxHEIGHT in pixels, e.g. 960x600",
        })
}

/// Run `report`.
pub fn run(a: Args) -> Result<Outcome> {
    let quick = QuickForm {
        name: a.name.clone(),
        lf: a.lf.clone(),
        options: a.input_args.options()?,
    };
    let quick_opts = a.lf.is_some() || a.name.is_some() || a.input_args.tau0.is_some();
    let duts = read_duts(&a.inputs, &quick, quick_opts)?;
    // Before any computing: the output must not be an input, and its
    // directory must take the file.
    let inputs: Vec<&std::path::Path> = duts.iter().flat_map(dut_inputs).collect();
    super::common::check_output_paths(&inputs, &[a.output.as_deref()])?;
    let opts = BuildOptions {
        confidence: a.confidence.confidence.value(),
        decision_rule: a.gate.decision_rule,
        conformance: a.gate.conformance,
        ..BuildOptions::default()
    };
    let size = a.chart_size;
    if let Some(dir) = &a.charts {
        if !dir.is_dir() {
            return Err(Error::option(
                format!("--charts {}", dir.display()),
                "not a directory",
            ));
        }
    }
    if duts.len() == 1 && a.format == ReportFormat::Html {
        return single(&a, &duts[0], &opts, size);
    }
    let fleet = {
        let jobs: Vec<(&str, u64)> = duts
            .iter()
            .map(|d| (d.name.as_str(), tauwise::report::build::steps(d) as u64))
            .collect();
        let bars = StepBars::new(&jobs);
        let r =
            tauwise::report::fleet::build(&duts, &opts, &|i, done, _, what| bars.at(i, done, what));
        drop(bars);
        r?
    };
    let gate = tauwise::verdict::gate(
        fleet
            .reports
            .iter()
            .flat_map(|r| r.verdicts.iter().map(|v| &v.judgement)),
    );
    match a.format {
        ReportFormat::Json => {
            let (text, found) =
                tauwise::results::FleetDocument::new(fleet.matrix.clone()).json()?;
            super::common::note_not_finite(&found);
            emit_to(a.output.as_deref(), text.as_bytes())?;
        }
        ReportFormat::Html => {
            let html = tauwise::report::fleet::render_html(&fleet)?;
            emit_to(a.output.as_deref(), html.as_bytes())?;
        }
    }
    if let Some(dir) = &a.charts {
        for (stem, chart) in tauwise::report::fleet::charts(&fleet) {
            tauwise::plot::render(&chart, &dir.join(format!("{stem}.png")), size)?;
        }
    }
    Ok(a.gate.outcome(gate))
}

/// The single-device HTML report.
fn single(a: &Args, dut: &Dut, opts: &BuildOptions, size: (u32, u32)) -> Result<Outcome> {
    let report = {
        // A progress bar on stderr when it is a terminal, nothing otherwise.
        let bar = StepBars::new(&[("report", tauwise::report::build::steps(dut) as u64)]);
        let r = from_dut_with_progress(dut, opts, &mut |done, _, what| bar.at(0, done, what));
        drop(bar);
        r?
    };
    let html = tauwise::report::render_html(&report)?;
    emit_to(a.output.as_deref(), html.as_bytes())?;
    if let Some(dir) = &a.charts {
        for (stem, chart) in tauwise::report::charts(&report) {
            tauwise::plot::render(&chart, &dir.join(format!("{stem}.png")), size)?;
        }
    }
    Ok(a.gate.outcome(tauwise::verdict::gate(
        report.verdicts.iter().map(|v| &v.judgement),
    )))
}
