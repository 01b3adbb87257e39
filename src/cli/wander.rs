//! `tauwise wander FILE`: TIE statistics, MTIE and TDEV of a phase (TIE)
//! record, checked against built-in or user masks.

use super::common::{emit, header_json, json_text, num, plain, Format, InputArgs, OutputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use serde_json::{json, Value};
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::io::series::Series;
use tauwise::tau::TauGrid;
use tauwise::units::format_si;
use tauwise::wander::check::{MaskCheck, Verdict};
use tauwise::wander::masks::{builtin, CONDITIONS_NOTE};
use tauwise::wander::{analyse, default_ms, mask_file::read_mask_file, WanderResult};
use tauwise::{Result, DECISION_CAUTION};

/// MTIE, TDEV and TIE statistics against wander masks.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Input file of phase (time error) readings (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// τ grid: octave, decade, all, log:N or a list of durations.
    /// Default: log:10 from τ0 up to a tenth of the record.
    #[arg(long, value_name = "GRID")]
    pub taus: Option<String>,
    /// Built-in mask to check (repeatable): g811, g8272-prtc-a, g8262-opt1.
    #[arg(long = "mask", value_name = "NAME")]
    pub masks: Vec<String>,
    /// User mask file to check (repeatable); see docs/mask-file.md.
    #[arg(long = "mask-file", value_name = "FILE")]
    pub mask_files: Vec<PathBuf>,
    /// Remove the least-squares constant frequency offset first.
    #[arg(long)]
    pub remove_offset: bool,
    /// Exit with status 3 when any mask fails (for scripts).
    #[arg(long)]
    pub fail_on_violation: bool,
    /// Draw MTIE and TDEV against the masks, violations marked, to FILE
    /// (.svg or .png).
    #[arg(long, value_name = "FILE")]
    pub plot: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `wander`.
pub fn run(args: Args) -> Result<Outcome> {
    // Masks first: a bad name or file fails before the record is read.
    let mut masks = Vec::new();
    for name in &args.masks {
        masks.extend(builtin(name)?);
    }
    for f in &args.mask_files {
        masks.extend(read_mask_file(f)?);
    }
    let progress = super::common::Progress::start("wander");
    progress.stage(format!("reading {}", args.file.display()));
    let series = args.input.load(&args.file)?;
    progress.stage("computing");
    let rec = series.record.to_phase();
    let n = rec.len();
    let ms = match &args.taus {
        Some(g) => TauGrid::parse(g)?.ms(rec.tau0, n.saturating_sub(1))?,
        None => default_ms(n, rec.tau0)?,
    };
    let res = analyse(&rec, &ms, args.remove_offset, &masks)?;
    if let Some(path) = &args.plot {
        let plots = tauwise::plot::wander::plots_from_result(
            &res,
            &masks,
            &series.info.path.display().to_string(),
        );
        let mut notes = Vec::new();
        if let Some(y) = res.tie.offset_removed {
            notes.push(format!(
                "A constant frequency offset of {y:.4e} was removed first."
            ));
        }
        if !masks.is_empty() {
            notes.push(format!("{CONDITIONS_NOTE} {DECISION_CAUTION}"));
        }
        let chart = tauwise::plot::wander::combined_chart(&plots, &notes);
        tauwise::plot::render(&chart, path, tauwise::plot::DEFAULT_SIZE)?;
    }
    let text = match args.output.format {
        Format::Json => json_text(&to_json(&series, &res)),
        Format::Csv => to_csv(&res),
        Format::Table => to_table(&series, &res),
    };
    emit(&args.output, &text)?;
    let failed = res.checks.iter().any(|c| c.verdict == Verdict::Fail);
    Ok(if failed && args.fail_on_violation {
        Outcome::VerdictFailed
    } else {
        Outcome::Done
    })
}

fn opt(v: Option<f64>) -> Value {
    v.map(num).unwrap_or(Value::Null)
}

fn check_json(c: &MaskCheck) -> Value {
    json!({
        "name": c.name,
        "source_note": c.source_note,
        "metric": c.metric.name(),
        "verdict": c.verdict.name(),
        "worst_ratio": opt(c.worst_ratio),
        "worst_margin_db": opt(c.worst_margin_db),
        "worst_tau": opt(c.worst_tau),
        "crossing_tau": opt(c.crossing_tau),
        "checked": c.checked,
        "checked_range": c.checked_range.map(|(a, b)| json!([num(a), num(b)])).unwrap_or(Value::Null),
        "violations": c.violations.iter().map(|v| json!({
            "tau": num(v.tau), "value": num(v.value), "limit": num(v.limit), "ratio": num(v.ratio)
        })).collect::<Vec<_>>(),
    })
}

fn to_json(series: &Series, r: &WanderResult) -> Value {
    let mut m = header_json(series);
    m.insert(
        "tie".into(),
        json!({
            "max_abs": num(r.tie.max_abs),
            "pk_pk": num(r.tie.pk_pk),
            "rms": num(r.tie.rms),
            "offset_removed": opt(r.tie.offset_removed),
            "points": r.tie.points,
        }),
    );
    let curve = |e: &[tauwise::deviation::Estimate]| -> Value {
        e.iter()
            .map(|p| json!({"tau": num(p.tau), "value": num(p.value), "terms": p.terms}))
            .collect()
    };
    m.insert("mtie".into(), curve(&r.mtie));
    m.insert("tdev".into(), curve(&r.tdev));
    m.insert(
        "masks".into(),
        r.checks.iter().map(check_json).collect::<Vec<_>>().into(),
    );
    if !r.checks.is_empty() {
        m.insert(
            "caution".into(),
            format!("{CONDITIONS_NOTE} {DECISION_CAUTION}").into(),
        );
    }
    Value::Object(m)
}

fn to_csv(r: &WanderResult) -> String {
    let mut s = String::from("metric,tau,value,terms\n");
    for (name, c) in [("mtie", &r.mtie), ("tdev", &r.tdev)] {
        for p in c.iter() {
            let _ = writeln!(s, "{name},{},{},{}", plain(p.tau), plain(p.value), p.terms);
        }
    }
    s
}

fn si(v: f64) -> String {
    format_si(v, "s", 4)
}

fn to_table(series: &Series, r: &WanderResult) -> String {
    let rec = &series.record;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{}: {} points at τ0 = {}, {} gaps",
        series.info.path.display(),
        rec.len(),
        si(rec.tau0()),
        rec.gaps()
    );
    let _ = writeln!(s, "\nTIE over the record");
    if let Some(y) = r.tie.offset_removed {
        let _ = writeln!(s, "  frequency offset removed  {y:.4e}");
    }
    let _ = writeln!(s, "  max |TIE|    {}", si(r.tie.max_abs));
    let _ = writeln!(s, "  peak-to-peak {}", si(r.tie.pk_pk));
    let _ = writeln!(s, "  rms          {}", si(r.tie.rms));
    let _ = writeln!(s, "\n{:>12}  {:>12}  {:>12}", "τ", "MTIE", "TDEV");
    let mut taus: Vec<f64> = r.mtie.iter().chain(&r.tdev).map(|p| p.tau).collect();
    taus.sort_by(f64::total_cmp);
    taus.dedup();
    for t in taus {
        let find = |c: &[tauwise::deviation::Estimate]| {
            c.iter()
                .find(|p| p.tau == t)
                .map(|p| si(p.value))
                .unwrap_or_else(|| "—".into())
        };
        let _ = writeln!(
            s,
            "{:>12}  {:>12}  {:>12}",
            si(t),
            find(&r.mtie),
            find(&r.tdev)
        );
    }
    for c in &r.checks {
        let _ = writeln!(
            s,
            "\nmask {} ({}): {}",
            c.name,
            c.metric.name().to_uppercase(),
            c.verdict.name().to_uppercase()
        );
        let _ = writeln!(s, "  {}", c.source_note);
        if let (Some(ratio), Some(db), Some(t)) = (c.worst_ratio, c.worst_margin_db, c.worst_tau) {
            let _ = writeln!(
                s,
                "  worst: {:.3} of the limit ({:+.2} dB margin) at τ = {}",
                ratio,
                db,
                si(t)
            );
        }
        if let Some((a, b)) = c.checked_range {
            let _ = writeln!(s, "  checked {} τ from {} to {}", c.checked, si(a), si(b));
        }
        if !c.violations.is_empty() {
            if let Some(t) = c.crossing_tau {
                let _ = writeln!(s, "  first exceeds the limit near τ = {}", si(t));
            }
            let list: Vec<String> = c.violations.iter().map(|v| si(v.tau)).collect();
            let _ = writeln!(s, "  violations at τ = {}", list.join(", "));
        }
    }
    if !r.checks.is_empty() {
        let _ = writeln!(s, "\n{CONDITIONS_NOTE}\n{DECISION_CAUTION}");
    }
    s
}
