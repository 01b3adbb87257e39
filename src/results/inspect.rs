//! The `inspect` document: how a file was read and what the record holds.

use super::{csv_text, plain, plain_opt, Result};
use crate::io::series::{Series, SeriesInfo, Suggestion, UnitSource};
use crate::prepare::{DriftModel, Summary};
use serde::Serialize;

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
