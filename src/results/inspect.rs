//! The `inspect` document: how a file was read and what the record holds.

use super::table::{Cell, Column, Table};
use super::{csv_text, plain, plain_opt, Result};
use crate::io::series::{Series, SeriesInfo, Suggestion, UnitSource};
use crate::prepare::{DriftModel, Summary};
use crate::units::{format_si, format_sig};
use serde::Serialize;
use std::fmt::Write as _;

/// Most outlier indices listed.
pub const LISTED_OUTLIERS: usize = 100;

/// The `inspect` results: `{"reading","suggestions","lines","bytes",
/// "header","tau0_source","inserted_gaps","start_time","span",
/// "frequency_offset","drift","outliers"}`.
#[derive(Debug, Clone, Serialize)]
pub struct InspectBody {
    /// How the file was read.
    pub reading: SeriesInfo,
    /// Options that would read it better.
    pub suggestions: Vec<Suggestion>,
    /// Lines of the file.
    pub lines: u64,
    /// Bytes of the file.
    pub bytes: u64,
    /// The column names, when the file has a header.
    pub header: Option<Vec<String>>,
    /// `timestamps` or `option`.
    pub tau0_source: &'static str,
    /// Gaps inserted for timestamp jumps.
    pub inserted_gaps: usize,
    /// The first timestamp, s.
    pub start_time: Option<f64>,
    /// Span of the record, s.
    pub span: f64,
    /// Mean fractional frequency offset.
    pub frequency_offset: Option<f64>,
    /// The linear drift of the frequency.
    pub drift: Option<DriftOut>,
    /// Frequency outliers.
    pub outliers: Option<OutliersOut>,
    #[serde(skip)]
    rows: Vec<(&'static str, String, &'static str)>,
    #[serde(skip)]
    summary: Summary,
    #[serde(skip)]
    kind: crate::DataKind,
}

/// `{"model","per_day","per_second","offset_at_centre","centre",
/// "residual_rms","points"}`.
#[derive(Debug, Clone, Serialize)]
pub struct DriftOut {
    /// `linear` or `quadratic`.
    pub model: &'static str,
    /// Drift per day.
    pub per_day: f64,
    /// Drift per second.
    pub per_second: f64,
    /// Fractional frequency at the centre.
    pub offset_at_centre: f64,
    /// Centre of the fit, s from the first sample.
    pub centre: f64,
    /// rms residual.
    pub residual_rms: f64,
    /// Frequency values used.
    pub points: usize,
}

/// `{"limit","count","median","mad","mad_fallback","tested","first_indices"}`.
#[derive(Debug, Clone, Serialize)]
pub struct OutliersOut {
    /// Limit in scaled MADs.
    pub limit: f64,
    /// Outliers found.
    pub count: usize,
    /// Median frequency.
    pub median: f64,
    /// Scaled MAD.
    pub mad: f64,
    /// MAD was 0: the mean absolute deviation was used.
    pub mad_fallback: bool,
    /// Values tested.
    pub tested: usize,
    /// The first [`LISTED_OUTLIERS`] indices.
    pub first_indices: Vec<usize>,
}

fn unit_source(s: UnitSource) -> &'static str {
    match s {
        UnitSource::Option => "option",
        UnitSource::Header => "header",
        UnitSource::Default => "default",
    }
}

fn model_name(m: DriftModel) -> &'static str {
    m.name()
}

impl InspectBody {
    /// The summary of `series`.
    pub fn new(series: &Series, s: &Summary, hints: &[Suggestion]) -> Self {
        let info = &series.info;
        let tau0_source = if info.tau0_from_timestamps {
            "timestamps"
        } else {
            "option"
        };
        let mut rows: Vec<(&'static str, String, &'static str)> = vec![
            ("path", info.path.display().to_string(), ""),
            ("data", series.record.kind().name().to_string(), ""),
            ("unit", info.unit.clone(), ""),
            ("unit_source", unit_source(info.unit_source).to_string(), ""),
            ("preamble_lines", info.preamble_lines.to_string(), ""),
            (
                "decimal_comma",
                info.decimal_comma.is_some().to_string(),
                "",
            ),
            ("points", s.points.to_string(), ""),
            ("gaps", s.gaps.to_string(), ""),
            ("inserted_gaps", info.inserted_gaps.to_string(), ""),
            ("tau0", plain(s.tau0), "s"),
            ("tau0_source", tau0_source.to_string(), ""),
            ("span", plain(s.span), "s"),
            ("start_time", plain_opt(info.start_time), "s"),
            ("frequency_offset", plain_opt(s.frequency_offset), ""),
            (
                "drift_per_day",
                plain_opt(s.drift.map(|d| d.per_day())),
                "1/d",
            ),
            (
                "drift_residual_rms",
                plain_opt(s.drift.map(|d| d.residual_rms)),
                "",
            ),
        ];
        if let Some(o) = &s.outliers {
            rows.push(("outlier_limit", format!("{}", o.limit), "MAD"));
            rows.push(("outliers", o.indices.len().to_string(), ""));
            rows.push(("frequency_median", plain(o.median), ""));
            rows.push(("frequency_mad", plain(o.mad), ""));
        }
        for h in hints {
            rows.push(("suggestion", h.option.clone(), ""));
        }
        Self {
            reading: info.clone(),
            suggestions: hints.to_vec(),
            lines: info.lines,
            bytes: info.bytes,
            header: info.header.clone(),
            tau0_source,
            inserted_gaps: info.inserted_gaps,
            start_time: info.start_time,
            span: s.span,
            frequency_offset: s.frequency_offset,
            drift: s.drift.map(|d| DriftOut {
                model: model_name(d.model),
                per_day: d.per_day(),
                per_second: d.rate,
                offset_at_centre: d.offset,
                centre: d.centre,
                residual_rms: d.residual_rms,
                points: d.points,
            }),
            outliers: s.outliers.as_ref().map(|o| OutliersOut {
                limit: o.limit,
                count: o.indices.len(),
                median: o.median,
                mad: o.mad,
                mad_fallback: o.mad_fallback,
                tested: o.tested,
                first_indices: o.indices.iter().take(LISTED_OUTLIERS).copied().collect(),
            }),
            rows,
            summary: s.clone(),
            kind: series.record.kind(),
        }
    }

    /// CSV: `quantity,value,unit`, one row per quantity.
    pub fn csv(&self) -> Result<String> {
        csv_text(
            &["quantity", "value", "unit"],
            self.rows.iter().map(|(k, v, u)| [*k, v.as_str(), *u]),
        )
    }
}

/// Most preamble lines shown in the table (JSON carries them all).
const PREAMBLE_SHOWN: usize = 20;

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

impl InspectBody {
    /// The table for reading: one line per figure (how the file was read,
    /// preamble, header, unit, points, gaps, τ0, span, offset, drift,
    /// outliers, notes, warnings, suggestions), the names aligned.
    pub fn table(&self) -> Table {
        let info = &self.reading;
        let s = &self.summary;
        let mut rows: Vec<(String, String)> = Vec::new();
        rows.push(("input".into(), info.path.display().to_string()));
        let read = match info.format {
            crate::io::series::InputFormat::Npy => format!("{} bytes (numpy .npy)", info.bytes),
            crate::io::series::InputFormat::Binary => format!(
                "{} bytes (raw binary, {})",
                info.bytes,
                info.binary.map_or("", |b| b.describe())
            ),
            crate::io::series::InputFormat::Text => format!(
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
        let kind = match self.kind {
            crate::DataKind::Phase => "phase",
            crate::DataKind::Freq => "frequency",
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
                            crate::io::series::TimeKind::Seconds => "seconds",
                            crate::io::series::TimeKind::DateTime => "date-times",
                            crate::io::series::TimeKind::Mjd => "MJD",
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
        for h in &self.suggestions {
            rows.push(("suggestion".into(), format!("{} — {}", h.option, h.reason)));
        }
        let mut t = Table::new(vec![Column::left("", 0).fit(), Column::left("", 0).gap(2)]);
        for (k, v) in rows {
            t.row(vec![Cell::text(k), Cell::text(v)]);
        }
        t
    }
}
