//! `tauwise report DUT.toml -o report.html`: one self-contained HTML report
//! for a device under test; or the quick form `tauwise report FILE --tau0 …
//! [--lf TABLE --carrier F]` for a single record (and phase-noise table)
//! without a DUT file.

use super::common::{emit_to, ConfidenceArgs, InputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::PathBuf;
use tauwise::io::dut::{Dut, LfQuantity, LfSource, TimeSource};
use tauwise::report::build::{from_dut_with_progress, BuildOptions};
use tauwise::{DataKind, Error, Result};

/// Make the HTML report for a device under test.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
pub struct Args {
    /// A DUT file (`.toml`, see docs/dut-file.md), or a time record for the
    /// quick form.
    #[arg(value_name = "DUT|FILE")]
    pub input: PathBuf,
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
    /// Exit with status 3 when any verdict exceeds its limit, 4 when none
    /// does but one cannot be judged.
    #[arg(long)]
    pub fail_on_violation: bool,
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

fn is_dut_file(p: &std::path::Path) -> bool {
    p.extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
}

/// The quick form as an in-memory DUT.
fn quick_dut(a: &Args) -> Result<Dut> {
    let opts = a.input_args.options()?;
    let name = a.name.clone().unwrap_or_else(|| {
        a.input
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "record".into())
    });
    let kind = opts.kind.unwrap_or(match opts.unit {
        Some(tauwise::units::ValueUnit::Freq(_)) => DataKind::Freq,
        _ => DataKind::Phase,
    });
    let mut phase_noise = Vec::new();
    if let Some(lf) = &a.lf {
        let carrier = opts.carrier.ok_or_else(|| {
            Error::option(
                "--lf",
                "needs --carrier (the carrier of the phase-noise table, e.g. 10MHz)",
            )
        })?;
        if !lf.is_file() {
            return Err(tauwise::io::ReadError::file(
                lf,
                "cannot open the L(f) table: no such file",
            )
            .into());
        }
        phase_noise.push(LfSource {
            name: lf
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            path: lf.clone(),
            quantity: LfQuantity::Lf,
            carrier,
            uncertainty_db: None,
        });
    }
    Ok(Dut {
        file: a.input.clone(),
        name,
        description: None,
        carrier: opts.carrier,
        records: vec![TimeSource {
            name: a
                .input
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            path: a.input.clone(),
            data: kind,
            tau0: opts.tau0,
            units: opts.unit,
            value_column: opts.value_column,
            time_column: opts.time_column,
            no_time_column: opts.no_time_column,
            snap: opts.snap,
            wrap: opts.wrap,
            comments: opts.comments.clone(),
            decimal_comma: opts.decimal_comma,
            prepare: tauwise::io::dut::RECORD_STEPS,
            bandwidth: None,
        }],
        phase_noise,
        tie: Vec::new(),
        jitter: Vec::new(),
        wander: None,
        holdover: None,
        separate: None,
        timeline: None,
    })
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
    let dut = if is_dut_file(&a.input) {
        if a.lf.is_some() || a.name.is_some() || a.input_args.tau0.is_some() {
            return Err(Error::option(
                "--lf, --name, --tau0",
                "belong to the quick form; a DUT file holds them itself",
            ));
        }
        Dut::read(&a.input)?
    } else {
        quick_dut(&a)?
    };
    // Before any computing: the output must not be an input, and its
    // directory must take the file.
    let mut inputs: Vec<&std::path::Path> = vec![a.input.as_path()];
    inputs.extend(dut.records.iter().chain(&dut.tie).map(|r| r.path.as_path()));
    inputs.extend(dut.phase_noise.iter().map(|t| t.path.as_path()));
    if let Some(w) = &dut.wander {
        inputs.extend(w.mask_files.iter().map(|p| p.as_path()));
    }
    super::common::check_output_paths(&inputs, &[a.output.as_deref()])?;
    let opts = BuildOptions {
        confidence: a.confidence.confidence.value(),
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
    let report = {
        // A progress bar on stderr when it is a terminal, nothing otherwise.
        let bar =
            super::common::Progress::steps("report", tauwise::report::build::steps(&dut) as u64);
        let r = from_dut_with_progress(&dut, &opts, &mut |done, _, what| {
            bar.at(done as u64, what.to_string());
        });
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
    Ok(Outcome::of_gate(
        tauwise::verdict::gate(report.verdicts.iter().map(|v| &v.judgement)),
        a.fail_on_violation,
    ))
}
