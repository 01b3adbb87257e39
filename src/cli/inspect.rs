//! `tauwise inspect FILE`: what a record holds before any analysis — how the
//! file was read (preamble, header, delimiter, decimal mark, unit and where
//! it came from, notes, warnings, suggested options), size, span, τ0, gaps,
//! mean frequency offset, linear drift, frequency outliers.

use super::common::{emit, json_doc, Format, InputArgs, OutputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::io::series::{suggestions, Series, Suggestion, UnitSource};
use tauwise::prepare::{summarize, Summary};
use tauwise::results::InspectBody;
use tauwise::units::{format_si, format_sig};
use tauwise::Result;

/// Most preamble lines shown in the table (JSON carries them all).
const PREAMBLE_SHOWN: usize = 20;

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
    let text = match args.output.format() {
        Format::Json => json_doc(
            (&series).into(),
            InspectBody::new(&series, &summary, &hints),
        )?,
        Format::Csv => InspectBody::new(&series, &summary, &hints).csv()?,
        Format::Table => to_table(&series, &summary, &hints),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

/// A duration in seconds, with days or hours when long.
fn duration_text(s: f64) -> String {
    let si = format_si(s, "s", 4);
    if s >= 2.0 * 86400.0 {
        format!("{si} ({} d)", format_sig(s / 86400.0, 4))
    } else if s >= 2.0 * 3600.0 {
        format!("{si} ({} h)", format_sig(s / 3600.0, 4))
    } else {
        si
    }
}

fn to_table(series: &Series, s: &Summary, hints: &[Suggestion]) -> String {
    let info = &series.info;
    let mut rows: Vec<(String, String)> = Vec::new();
    rows.push(("input".into(), info.path.display().to_string()));
    let read = match info.format {
        tauwise::io::series::InputFormat::Npy => format!("{} bytes (numpy .npy)", info.bytes),
        tauwise::io::series::InputFormat::Text => format!(
            "{} lines, {} bytes{}{}",
            info.lines,
            info.bytes,
            info.delimiter
                .map(|d| format!(", fields separated by {}", d.name()))
                .unwrap_or_default(),
            if info.bom {
                ", UTF-8 byte-order mark skipped"
            } else {
                ""
            }
        ),
    };
    rows.push(("read".into(), read));
    if info.preamble_lines > 0 {
        rows.push((
            "preamble".into(),
            format!(
                "{} line(s) before the first reading{}",
                info.preamble_lines,
                info.first_data_line
                    .map(|l| format!(" (readings from line {l})"))
                    .unwrap_or_default()
            ),
        ));
        for l in info.preamble.iter().take(PREAMBLE_SHOWN) {
            rows.push((String::new(), format!("| {l}")));
        }
        if info.preamble_lines as usize > PREAMBLE_SHOWN {
            rows.push((
                String::new(),
                format!("| … {} more", info.preamble_lines as usize - PREAMBLE_SHOWN),
            ));
        }
    }
    if let Some(h) = &info.header {
        rows.push((
            "header".into(),
            format!(
                "{}{}",
                h.join(" | "),
                info.header_line
                    .map(|l| format!("  (line {l})"))
                    .unwrap_or_default()
            ),
        ));
    }
    let kind = match series.record.kind() {
        tauwise::DataKind::Phase => "phase",
        tauwise::DataKind::Freq => "frequency",
    };
    let unit_from = match info.unit_source {
        UnitSource::Option => "--units",
        UnitSource::Header => "from the header",
        UnitSource::Default => "default: no unit given or in the header",
    };
    rows.push((
        "data".into(),
        format!(
            "{kind} in {} ({unit_from}), column {}{}",
            info.unit,
            info.value_column,
            match (info.time_column, info.time_kind) {
                (Some(c), Some(k)) => format!(
                    "; time column {c} ({})",
                    match k {
                        tauwise::io::series::TimeKind::Seconds => "seconds",
                        tauwise::io::series::TimeKind::DateTime => "date-times",
                        tauwise::io::series::TimeKind::Mjd => "MJD",
                    }
                ),
                _ => "; no time column".to_string(),
            }
        ),
    ));
    if let Some(d) = &info.decimal_comma {
        rows.push(("decimal mark".into(), format!("comma — {d}")));
    }
    rows.push(("points".into(), s.points.to_string()));
    let gaps = if info.inserted_gaps > 0 {
        format!(
            "{} ({} inserted for timestamp jumps)",
            s.gaps, info.inserted_gaps
        )
    } else {
        s.gaps.to_string()
    };
    rows.push(("gaps".into(), gaps));
    rows.push((
        "τ0".into(),
        format!(
            "{}{}",
            format_si(s.tau0, "s", 4),
            if info.tau0_from_timestamps {
                " (median timestamp spacing)"
            } else {
                " (given)"
            }
        ),
    ));
    rows.push(("span".into(), duration_text(s.span)));
    if let Some(t) = info.start_time {
        let mut v = format_sig(t, 10);
        if t > 1e9 {
            if let Some(d) = chrono::DateTime::from_timestamp(t.floor() as i64, 0) {
                let _ = write!(
                    v,
                    " s  (as Unix time: {})",
                    d.format("%Y-%m-%d %H:%M:%S UTC")
                );
            }
        } else {
            v.push_str(" s");
        }
        rows.push(("first timestamp".into(), v));
    }
    rows.push((
        "frequency offset".into(),
        s.frequency_offset
            .map(|v| format!("{} (mean of y)", format_sig(v, 4)))
            .unwrap_or_else(|| "— (no frequency values)".into()),
    ));
    rows.push((
        "linear drift".into(),
        match &s.drift {
            Some(d) => format!(
                "{} per day (least squares on y; residual rms {})",
                format_sig(d.per_day(), 4),
                format_sig(d.residual_rms, 4)
            ),
            None => "— (too few frequency values)".into(),
        },
    ));
    if let Some(o) = &s.outliers {
        let mut v = format!(
            "{} of {} frequency values beyond {} × MAD ({}{}) from the median {}",
            o.indices.len(),
            o.tested,
            format_sig(o.limit, 3),
            format_sig(o.mad, 4),
            if o.mad_fallback {
                ", MAD was 0: mean absolute deviation used"
            } else {
                ""
            },
            format_sig(o.median, 4)
        );
        if !o.indices.is_empty() {
            let list: Vec<String> = o.indices.iter().take(10).map(|i| i.to_string()).collect();
            let _ = write!(
                v,
                "; at y index {}{}",
                list.join(", "),
                if o.indices.len() > 10 { ", …" } else { "" }
            );
        }
        rows.push(("outliers".into(), v));
    }
    for n in &info.notes {
        rows.push(("note".into(), n.clone()));
    }
    for w in &info.warnings {
        rows.push(("warning".into(), w.clone()));
    }
    for h in hints {
        rows.push(("suggestion".into(), format!("{} — {}", h.option, h.reason)));
    }
    let w = rows
        .iter()
        .map(|(k, _)| k.chars().count())
        .max()
        .unwrap_or(0);
    let mut out = String::new();
    for (k, v) in rows {
        let pad = w - k.chars().count();
        let _ = writeln!(out, "{k}{}  {v}", " ".repeat(pad));
    }
    out
}
