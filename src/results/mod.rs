//! The documents every command writes, owned by the library: one result
//! type per command (`stability`, `noise`, `spectrum`, `convert`, `jitter`,
//! `wander`, `holdover`, `inspect`), each deriving `Serialize`, written as
//! JSON by serde through [`json`] and as CSV by `csv::Writer` through
//! [`csv_text`]. The command line only parses, calls and renders; a
//! library user gets the same documents. The contract (keys, units, the
//! schema version) is `docs/json.md`.
//!
//! The points of one kind of estimate have one shape everywhere
//! ([`crate::deviation::Point`]): a TDEV point of `wander` has the keys of
//! a TDEV point of `stability`.

use crate::error::{Error, Result};
use serde::Serialize;

pub mod json;
pub mod table;

mod convert;
mod fleet;
mod holdover;
mod inspect;
mod jitter;
mod limits;
mod noise;
mod prepare;
mod separate;
mod several;
mod simulate;
mod spectrum;
mod stability;
mod timeline;
mod wander;

pub use convert::{
    ConvertSource, ConvertedCurve, ConvertedPoint, FittedModel, LfBody, SigmaBody, SIGMA_METHOD,
};
pub use fleet::{
    CheckColumn, CheckKind, DeviceSummary, FarPoint, FleetDocument, FleetInput, FleetMatrix,
    FloorPoint, MatrixCell, MatrixRow, SummaryTerm,
};
pub use holdover::HoldoverBody;
pub use inspect::InspectBody;
pub use jitter::{
    extrapolated_text, BandOutcome, JitterBand, JitterBody, JitterRequest, JitterTrace,
    MaybeJudged, SPUR_CONVENTION,
};
pub use limits::{check_text as limit_check_text, LimitsPart};
pub use noise::{noise_cells, rms, DominantRange, ModelSummary, NoiseBody};
pub use prepare::PrepareNotes;
pub use separate::{separate_text, PairInputs, SeparateBody};
pub use several::{csv_with_file_column, tables_text, RecordBlock, SeveralDocument};
pub use simulate::{exact_model_string, shell_word, simulated_file, values_in_words};
pub use spectrum::{SpectrumBody, SpectrumRow, SpectrumRows};
pub use stability::{model_from_stability, AnyCurve, BestCurve, StabilityBody};
pub use timeline::{timeline_text, TimelineBody};
pub use wander::WanderBody;

/// Version of the JSON documents' layout (`"schema"` in every document):
/// raised whenever a key is renamed, removed or changes meaning
/// (docs/json.md lists the changes).
pub const SCHEMA: u32 = 1;

/// A command's JSON document: `"tool"`, `"version"`, `"schema"` and
/// `"input"`, then the command's own members (`body`, flattened).
#[derive(Debug, Clone, Serialize)]
pub struct Document<B: Serialize> {
    /// Always `tauwise`.
    pub tool: &'static str,
    /// The crate version that wrote the document.
    pub version: &'static str,
    /// [`SCHEMA`].
    pub schema: u32,
    /// What was read.
    pub input: Input,
    /// The command's results.
    #[serde(flatten)]
    pub body: B,
}

impl<B: Serialize> Document<B> {
    /// A document of the current schema.
    pub fn new(input: Input, body: B) -> Self {
        Self {
            tool: crate::TOOL,
            version: crate::VERSION,
            schema: SCHEMA,
            input,
            body,
        }
    }

    /// The JSON text ([`json::to_text`]) and the paths of the members that
    /// are not finite (listed in the document under `"not_finite"`).
    pub fn json(&self) -> Result<(String, Vec<String>)> {
        json::to_text(self).map_err(|e| Error::invalid(format!("could not write JSON: {e}")))
    }
}

/// The `"input"` member: a time record, a phase-noise table, or a model.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum Input {
    /// A time record.
    Record(RecordInput),
    /// A phase-noise table.
    Table(TableInput),
    /// A power-law model given on the command line or fitted to a
    /// `stability` document.
    Model(ModelInput),
    /// Several pair records (`separate`).
    Pairs(PairInputs),
}

/// A time record: `{"path","data","tau0","points","gaps","preamble_lines"}`.
/// `points` counts every sample of the record, gaps included; `gaps` the
/// missing ones; `preamble_lines` the lines before the first reading.
#[derive(Debug, Clone, Serialize)]
pub struct RecordInput {
    /// The file (`-` for standard input).
    pub path: String,
    /// `phase` or `freq`.
    pub data: &'static str,
    /// Sampling interval, s.
    pub tau0: f64,
    /// Samples, gaps included.
    pub points: usize,
    /// Missing samples.
    pub gaps: usize,
    /// The lines before the first reading.
    pub preamble_lines: Vec<String>,
}

impl RecordInput {
    /// The summary of a series as read.
    pub fn of(series: &crate::io::series::Series) -> Self {
        Self {
            path: series.info.path.display().to_string(),
            data: series.record.kind().name(),
            tau0: series.record.tau0(),
            points: series.record.len(),
            gaps: series.record.gaps(),
            preamble_lines: series.info.preamble.clone(),
        }
    }
}

impl From<&crate::io::series::Series> for Input {
    fn from(s: &crate::io::series::Series) -> Self {
        Input::Record(RecordInput::of(s))
    }
}

/// A phase-noise table: `{"path","data":"table","quantity","points","from",
/// "to","preamble_lines","spurs_listed"}` (`from`/`to` its lowest and highest
/// offset, Hz).
#[derive(Debug, Clone, Serialize)]
pub struct TableInput {
    /// The file.
    pub path: String,
    /// Always `table`.
    pub data: &'static str,
    /// What the values are (`lf`, `sphi`, `sphi-db`, `sy`).
    pub quantity: &'static str,
    /// Rows of the table.
    pub points: usize,
    /// Lowest offset, Hz.
    pub from: f64,
    /// Highest offset, Hz.
    pub to: f64,
    /// The lines before the first row.
    pub preamble_lines: Vec<String>,
    /// Spurs listed after the table.
    pub spurs_listed: usize,
}

impl TableInput {
    /// The summary of a table as read, with the quantity it was read as.
    pub fn of(t: &crate::io::lf_table::LfTable) -> Self {
        let (lo, hi) = t.spectrum.range();
        Self {
            path: t.path.clone(),
            data: "table",
            quantity: t.quantity.name(),
            points: t.spectrum.len(),
            from: lo,
            to: hi,
            preamble_lines: t.preamble.clone(),
            spurs_listed: t.spurs.len(),
        }
    }
}

/// A model: `{"data":"model","model"}`, or, fitted to a `stability`
/// document, `{"data":"stability","path","model","note"}`.
#[derive(Debug, Clone, Serialize)]
pub struct ModelInput {
    /// `model` or `stability`.
    pub data: &'static str,
    /// The model in h_α notation.
    pub model: String,
    /// The `stability` document the model was fitted to.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub path: Option<String>,
    /// How the model was made, for a fitted one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<&'static str>,
}

/// A number written for machines (CSV cells, data files): the shortest text
/// that reads back to the same `f64`, in plain notation for moderate
/// magnitudes and in exponent notation otherwise; `NaN`, `inf`, `-inf` for
/// the values that are not finite.
pub fn plain(v: f64) -> String {
    if v.is_nan() {
        "NaN".to_string()
    } else if v.is_infinite() {
        if v > 0.0 { "inf" } else { "-inf" }.to_string()
    } else if v == 0.0 || (1e-4..1e15).contains(&v.abs()) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// [`plain`] of a value that may be absent (empty cell).
pub fn plain_opt(v: Option<f64>) -> String {
    v.map(plain).unwrap_or_default()
}

/// CSV (RFC 4180, through `csv::Writer`): the header, then one record per
/// row. A row whose length differs from the header's is an error, never a
/// shifted column; fields holding commas, quotes or line breaks are quoted.
pub fn csv_text<R, S>(header: &[&str], rows: impl IntoIterator<Item = R>) -> Result<String>
where
    R: IntoIterator<Item = S>,
    S: AsRef<[u8]>,
{
    let fail = |e: String| Error::invalid(format!("could not write CSV: {e}"));
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(header).map_err(|e| fail(e.to_string()))?;
    for r in rows {
        w.write_record(r).map_err(|e| fail(e.to_string()))?;
    }
    let bytes = w.into_inner().map_err(|e| fail(e.to_string()))?;
    String::from_utf8(bytes).map_err(|e| fail(e.to_string()))
}
