//! The `separate` document: each clock's σ(τ) separated from the pair
//! records (N-cornered hat), and the pair curves it came from.

use super::{csv_text, Result};
use crate::deviation::Point;
use crate::separate::{Clock, Method, Pair, Resolution, Separation};
use serde::Serialize;

/// The `separate` results: `{"confidence","method","reference","clocks",
/// "pairs","caution"}`; each clock `{"name","curves"}`, each curve in the
/// shape of a `stability` curve (origin `separated`) whose points add
/// `variance`, `variance_sd` and `resolution`.
#[derive(Debug, Clone, Serialize)]
pub struct SeparateBody {
    /// Two-sided confidence of the intervals.
    pub confidence: f64,
    /// `independent` or `covariance`.
    pub method: Method,
    /// The reference clock of the covariance form.
    pub reference: Option<String>,
    /// Samples of each aligned pair record.
    pub points: usize,
    /// `simultaneous` or `separate` pair records.
    pub sessions: &'static str,
    /// The clocks.
    pub clocks: Vec<Clock>,
    /// The pairs and their measured curves.
    pub pairs: Vec<Pair>,
    /// [`crate::DECISION_CAUTION`].
    pub caution: &'static str,
}

/// The `"inputs"` of a `separate` document: one record input per pair.
#[derive(Debug, Clone, Serialize)]
pub struct PairInputs {
    /// Always `pairs`.
    pub data: &'static str,
    /// The pair records as read.
    pub records: Vec<super::RecordInput>,
}

impl SeparateBody {
    /// The body of a separation.
    pub fn new(s: &Separation, confidence: f64) -> Self {
        Self {
            confidence,
            method: s.method,
            reference: s.reference.clone(),
            points: s.points,
            sessions: if s.simultaneous {
                "simultaneous"
            } else {
                "separate"
            },
            clocks: s.clocks.clone(),
            pairs: s.pairs.clone(),
            caution: crate::DECISION_CAUTION,
        }
    }

    /// CSV: one row per point, clocks first (`kind` = `clock`, `name` the
    /// clock), then the pairs (`kind` = `pair`, `name` `A-B`), then
    /// [`Point::COLUMNS`], `variance`, `variance_sd`, `resolution` (empty
    /// for pairs).
    pub fn csv(&self) -> Result<String> {
        let mut header = vec!["kind", "name", "estimator"];
        header.extend(Point::COLUMNS);
        header.extend(["variance", "variance_sd", "resolution"]);
        let mut rows: Vec<Vec<String>> = Vec::new();
        for c in &self.clocks {
            for curve in &c.curves {
                for p in &curve.points {
                    let mut r = vec![
                        "clock".to_string(),
                        c.name.clone(),
                        curve.estimator.name().to_string(),
                    ];
                    r.extend(p.point.cells());
                    r.push(super::plain(p.variance));
                    r.push(super::plain_opt(p.variance_sd));
                    r.push(
                        match p.resolution {
                            Resolution::Resolved => "resolved",
                            Resolution::Below => "below",
                        }
                        .to_string(),
                    );
                    rows.push(r);
                }
            }
        }
        for pair in &self.pairs {
            for p in &pair.curve.points {
                let mut r = vec![
                    "pair".to_string(),
                    format!("{}-{}", pair.a, pair.b),
                    pair.curve.estimator.name().to_string(),
                ];
                r.extend(p.cells());
                r.extend([String::new(), String::new(), String::new()]);
                rows.push(r);
            }
        }
        csv_text(&header, rows)
    }
}
