//! `tauwise inspect FILE`: what a record holds before any analysis — size,
//! span, τ0, gaps, mean frequency offset, linear drift, frequency outliers.

use super::common::{emit, header_json, json_text, num, plain, Format, InputArgs, OutputArgs};
use super::Outcome;
use clap::Args as ClapArgs;
use std::fmt::Write as _;
use std::path::PathBuf;
use tauwise::io::series::Series;
use tauwise::prepare::{summarize, Summary};
use tauwise::units::{format_si, format_sig};
use tauwise::Result;

/// Most outlier indices listed in the output.
const LISTED: usize = 100;

/// Summarise a phase or frequency record.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Input file (`-` reads standard input).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    #[command(flatten)]
    pub input: InputArgs,
    /// Count frequency values further than K scaled MADs from the median.
    #[arg(long = "outliers", value_name = "K", default_value_t = 5.0)]
    pub outlier_limit: f64,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Run `inspect`.
pub fn run(args: Args) -> Result<Outcome> {
    super::common::check_output_paths(&[&args.file], &[args.output.output.as_deref()])?;
    let series = args.input.load(&args.file)?;
    let summary = summarize(&series.record, args.outlier_limit)?;
    let text = match args.output.format {
        Format::Json => json_text(&to_json(&series, &summary)),
        Format::Csv => to_csv(&series, &summary),
        Format::Table => to_table(&series, &summary),
    };
    emit(&args.output, &text)?;
    Ok(Outcome::Done)
}

fn to_json(series: &Series, s: &Summary) -> serde_json::Value {
    let mut m = header_json(series);
    let info = &series.info;
    m.insert("lines".into(), info.lines.into());
    m.insert("bytes".into(), info.bytes.into());
    m.insert("header".into(), serde_json::json!(info.header));
    m.insert(
        "tau0_source".into(),
        if info.tau0_from_timestamps {
            "timestamps"
        } else {
            "option"
        }
        .into(),
    );
    m.insert("inserted_gaps".into(), info.inserted_gaps.into());
    m.insert(
        "start_time".into(),
        info.start_time.map(num).unwrap_or(serde_json::Value::Null),
    );
    m.insert("span".into(), num(s.span));
    m.insert(
        "frequency_offset".into(),
        s.frequency_offset
            .map(num)
            .unwrap_or(serde_json::Value::Null),
    );
    m.insert(
        "drift".into(),
        match &s.drift {
            Some(d) => serde_json::json!({
                "model": d.model.name(),
                "per_day": num(d.per_day()),
                "per_second": num(d.rate),
                "offset_at_centre": num(d.offset),
                "centre": num(d.centre),
                "residual_rms": num(d.residual_rms),
                "points": d.points,
            }),
            None => serde_json::Value::Null,
        },
    );
    m.insert(
        "outliers".into(),
        match &s.outliers {
            Some(o) => serde_json::json!({
                "limit": num(o.limit),
                "count": o.indices.len(),
                "median": num(o.median),
                "mad": num(o.mad),
                "mad_fallback": o.mad_fallback,
                "tested": o.tested,
                "first_indices": o.indices.iter().take(LISTED).collect::<Vec<_>>(),
            }),
            None => serde_json::Value::Null,
        },
    );
    serde_json::Value::Object(m)
}

fn opt(v: Option<f64>) -> String {
    v.map(plain).unwrap_or_default()
}

fn to_csv(series: &Series, s: &Summary) -> String {
    let info = &series.info;
    let mut rows: Vec<(&str, String, &str)> = vec![
        ("path", info.path.display().to_string(), ""),
        ("data", series.record.kind().name().to_string(), ""),
        ("points", s.points.to_string(), ""),
        ("gaps", s.gaps.to_string(), ""),
        ("inserted_gaps", info.inserted_gaps.to_string(), ""),
        ("tau0", plain(s.tau0), "s"),
        (
            "tau0_source",
            if info.tau0_from_timestamps {
                "timestamps"
            } else {
                "option"
            }
            .to_string(),
            "",
        ),
        ("span", plain(s.span), "s"),
        ("start_time", opt(info.start_time), "s"),
        ("frequency_offset", opt(s.frequency_offset), ""),
        ("drift_per_day", opt(s.drift.map(|d| d.per_day())), "1/d"),
        (
            "drift_residual_rms",
            opt(s.drift.map(|d| d.residual_rms)),
            "",
        ),
    ];
    if let Some(o) = &s.outliers {
        rows.push(("outlier_limit", format!("{}", o.limit), "MAD"));
        rows.push(("outliers", o.indices.len().to_string(), ""));
        rows.push(("frequency_median", plain(o.median), ""));
        rows.push(("frequency_mad", plain(o.mad), ""));
    }
    let mut out = String::from("quantity,value,unit\n");
    for (k, v, u) in rows {
        let v = if v.contains([',', '"', '\n']) {
            format!("\"{}\"", v.replace('"', "\"\""))
        } else {
            v
        };
        let _ = writeln!(out, "{k},{v},{u}");
    }
    out
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

fn to_table(series: &Series, s: &Summary) -> String {
    let info = &series.info;
    let mut rows: Vec<(String, String)> = Vec::new();
    rows.push(("input".into(), info.path.display().to_string()));
    rows.push((
        "read".into(),
        format!("{} lines, {} bytes", info.lines, info.bytes),
    ));
    if let Some(h) = &info.header {
        rows.push(("header".into(), h.join(" | ")));
    }
    let kind = match series.record.kind() {
        tauwise::DataKind::Phase => "phase (s)",
        tauwise::DataKind::Freq => "fractional frequency",
    };
    rows.push(("data".into(), kind.into()));
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
