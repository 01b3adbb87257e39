//! `tauwise wander FILE`: TIE statistics, MTIE and TDEV of a phase (TIE)
//! record, checked against built-in or user masks.

use super::common::{Block, InputArgs, OutputArgs, PlotArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::path::{Path, PathBuf};
use tauwise::parse::{parse_tau_range, Duration, TeFilter};
use tauwise::plot::overlay;
use tauwise::plot::stability::suffixed_path;
use tauwise::plot::wander::{plots_from_result, wander_chart};
use tauwise::results::{RecordInput, WanderBody};
use tauwise::tau::TauGrid;
use tauwise::units::UnitError;
use tauwise::verdict::gate;
use tauwise::wander::masks::{builtin, builtin_file, builtin_list_text};
use tauwise::wander::te::{TeOptions, DEFAULT_CTE_WINDOW};
use tauwise::wander::{analyse_limits, Options};
use tauwise::Result;

/// MTIE, TDEV and TIE statistics against wander masks.
#[derive(Debug, ClapArgs)]
#[command(after_help = super::EXIT_CODES)]
#[command(mut_arg("plot", |a| a.help("Draw MTIE and TDEV against the masks, violations marked, to FILE \
(.svg or .png).")))]
pub struct Args {
    /// Input file of phase (time error) readings (`-` reads standard
    /// input); several files give one block each, and --plot FILE overlays
    /// their MTIE (and their TDEV in FILE-tdev.EXT).
    #[arg(value_name = "FILE", required_unless_present = "list_masks")]
    pub files: Vec<PathBuf>,
    /// List the built-in limits (name, metrics, Recommendation and source
    /// note) and exit.
    #[arg(long)]
    pub list_masks: bool,
    #[command(flatten)]
    pub input: InputArgs,
    /// τ grid: octave, decade, all, log:N or a list of durations, used as
    /// given. Default: 10 per decade over the whole record (MTIE to its
    /// span, TDEV to a third of it) with every mask's breakpoints.
    #[arg(long, value_name = "GRID", value_parser = TauGrid::parse)]
    pub taus: Option<TauGrid>,
    /// Only τ in FROM:TO, each with its unit (e.g. 1s:3h); the checks then
    /// say which part of each mask they covered.
    #[arg(long, value_name = "FROM:TO", value_parser = parse_tau_range)]
    pub tau_range: Option<(f64, f64)>,
    /// Built-in limit to check (repeatable), used exactly as a limit file:
    /// g811, g812-type1, g8262-opt1, g8272-prtc-a, g8272-prtc-b,
    /// g8272.1-eprtc, g8273.2-class-a/-b/-c (--list-masks describes them).
    #[arg(long = "mask", value_name = "NAME", value_parser = mask_name)]
    pub masks: Vec<String>,
    /// Limit file to check (repeatable; TOML, see docs/limit-file.md): its
    /// mtie and tdev limits are checked here, any other metric is named as
    /// left to `stability` or `jitter`. `--mask-file` is the same option.
    #[arg(long = "limit-file", visible_alias = "mask-file", value_name = "FILE")]
    pub mask_files: Vec<PathBuf>,
    /// Remove the least-squares constant frequency offset first.
    #[arg(long)]
    pub remove_offset: bool,
    /// Measurement filter applied to the time-error record before the TIE
    /// statistics, MTIE, TDEV and the masks: lowpass:FC or highpass:FC,
    /// optionally with an order (lowpass:2:0.1Hz); see docs/time-error.md.
    #[arg(long, value_name = "FILTER", value_parser = str::parse::<TeFilter>)]
    pub te_filter: Option<TeFilter>,
    /// Add the time-error metrics: cTE (mean, and the largest mean over
    /// --cte-window), max |TE|, dTE_L (MTIE, TDEV through a 0.1 Hz low-pass),
    /// dTE_H (peak-to-peak through a 0.1 Hz high-pass).
    #[arg(long)]
    pub te: bool,
    /// Window of the windowed cTE, with its unit (default 1000s); needs --te.
    #[arg(long, value_name = "DURATION", requires = "te", value_parser = cte_window)]
    pub cte_window: Option<f64>,
    #[command(flatten)]
    pub gate: super::common::GateArgs,
    #[command(flatten)]
    pub plot: PlotArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `wander`.
pub fn run(args: Args) -> Result<Outcome> {
    if args.list_masks || args.files.is_empty() {
        super::common::emit_to(None, builtin_list_text()?.as_bytes())?;
        return Ok(Outcome::Done);
    }
    let tdev_plot = (args.files.len() > 1)
        .then(|| args.plot.plot.as_deref().map(|p| suffixed_path(p, "tdev")))
        .flatten();
    let inputs: Vec<&Path> = args.files.iter().map(PathBuf::as_path).collect();
    let outputs = [
        args.output.output.as_deref(),
        args.plot.plot.as_deref(),
        tdev_plot.as_deref(),
    ];
    tauwise::io::output_paths::check_output_paths(&inputs, &outputs)?;
    // Limits first: a bad name or file fails before the record is read.
    // A built-in is a limit file like the user's.
    let mut limits = Vec::new();
    for name in &args.masks {
        limits.extend(builtin_file(name)?.limits);
    }
    let (set, elsewhere) = tauwise::limits::read_for(&args.mask_files, "wander")?;
    limits.extend(set);
    let masks: Vec<_> = (limits.iter())
        .filter_map(tauwise::limits::Limit::as_mask)
        .collect();
    let opts = Options {
        grid: args.taus.clone(),
        range: args.tau_range,
        remove_offset: args.remove_offset,
        filter: args.te_filter,
        te: args.te.then(|| TeOptions {
            cte_window: args.cte_window.unwrap_or(DEFAULT_CTE_WINDOW),
            ..TeOptions::default()
        }),
        decision: args.gate.rule(None),
    };
    let progress = super::common::Progress::start("wander");
    let (mut blocks, mut charts, mut judgements) = (Vec::new(), Vec::new(), Vec::new());
    for file in &args.files {
        progress.stage(format!("reading {}", file.display()));
        let series = args.input.load(file)?;
        progress.stage("computing");
        let res = analyse_limits(&series.record.to_phase(), &opts, &masks, &limits)?;
        let title = series.info.path.display().to_string();
        charts.push((title.clone(), plots_from_result(&res, &masks, &title)));
        if let [_] = &args.files[..] {
            args.plot.draw(|| Ok(wander_chart(&res, &masks, &title)))?;
        }
        judgements.extend(res.checks.iter().map(|c| c.judgement.clone()));
        judgements.extend(res.te_checks.iter().map(|c| c.judgement.clone()));
        let body = WanderBody::new(res).with_elsewhere(elsewhere.clone());
        blocks.push(Block {
            name: file.display().to_string(),
            input: (&series).into(),
            table: body.table(&RecordInput::of(&series)).render(),
            csv: body.csv()?,
            body,
        });
    }
    if let (Some(path), Some(tdev_path)) = (&args.plot.plot, &tdev_plot) {
        let [mtie, tdev] = overlay::records_wander_charts(&charts, !masks.is_empty());
        tauwise::plot::render(&mtie, path, tauwise::plot::DEFAULT_SIZE)?;
        tauwise::plot::render(&tdev, tdev_path, tauwise::plot::DEFAULT_SIZE)?;
    }
    args.output.write_records(blocks)?;
    Ok(args.gate.outcome(gate(&judgements)))
}

fn mask_name(text: &str) -> std::result::Result<String, UnitError> {
    builtin(text)
        .map(|_| text.to_string())
        .map_err(|e| UnitError::Invalid {
            text: text.to_string(),
            reason: e.to_string(),
        })
}

/// `--cte-window`: a positive duration with its unit.
fn cte_window(text: &str) -> std::result::Result<f64, UnitError> {
    Duration::positive_with_unit(text).map(Duration::seconds)
}
