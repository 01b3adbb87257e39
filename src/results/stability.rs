//! The `stability` document: σ(τ) curves with their statistics, the `best`
//! curve, and the comparison with a phase-noise table.

use super::{csv_text, Result};
use crate::deviation::{Curve, Point};
use crate::stability::{BestPoint, Comparison};
use serde::Serialize;

/// The `stability` results: `{"confidence","curves","consistency"?}`.
#[derive(Debug, Clone, Serialize)]
pub struct StabilityBody {
    /// Two-sided confidence level of the intervals.
    pub confidence: f64,
    /// The measured curves, the curves converted from a phase-noise table,
    /// and the `best` curve last.
    pub curves: Vec<AnyCurve>,
    /// With a phase-noise table: one comparison per convertible curve.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub consistency: Option<Vec<Comparison>>,
}

/// A curve of the `stability` document.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum AnyCurve {
    /// A curve of points ([`Point`]).
    Plain(Curve),
    /// The `best` curve, whose points also say which estimator each came
    /// from (`"from"`).
    Best(BestCurve),
}

/// The `best` curve ([`crate::stability::best`]).
#[derive(Debug, Clone, Serialize)]
pub struct BestCurve {
    /// Always `best`.
    pub estimator: &'static str,
    /// The chosen points.
    pub points: Vec<BestPointRow>,
}

/// A point of the `best` curve: the [`Point`] keys and `"from"`.
#[derive(Debug, Clone, Serialize)]
pub struct BestPointRow {
    /// The point as its estimator gave it.
    #[serde(flatten)]
    pub point: Point,
    /// The estimator it came from.
    pub from: &'static str,
}

impl BestCurve {
    /// The curve of these points.
    pub fn new(points: &[BestPoint]) -> Self {
        Self {
            estimator: crate::stability::BEST_CURVE,
            points: points
                .iter()
                .map(|b| BestPointRow {
                    point: b.point,
                    from: b.from.name(),
                })
                .collect(),
        }
    }
}

impl StabilityBody {
    /// CSV: one row per point, `estimator` then [`Point::COLUMNS`], and a
    /// last column `from` when there is a `best` curve (empty for the
    /// other curves).
    pub fn csv(&self) -> Result<String> {
        let with_from = self.curves.iter().any(|c| matches!(c, AnyCurve::Best(_)));
        let mut header = vec!["estimator"];
        header.extend(Point::COLUMNS);
        if with_from {
            header.push("from");
        }
        let mut rows: Vec<Vec<String>> = Vec::new();
        for c in &self.curves {
            match c {
                AnyCurve::Plain(c) => {
                    for p in &c.points {
                        let mut r = vec![c.estimator.clone()];
                        r.extend(p.cells());
                        if with_from {
                            r.push(String::new());
                        }
                        rows.push(r);
                    }
                }
                AnyCurve::Best(b) => {
                    for p in &b.points {
                        let mut r = vec![b.estimator.to_string()];
                        r.extend(p.point.cells());
                        r.push(p.from.to_string());
                        rows.push(r);
                    }
                }
            }
        }
        csv_text(&header, rows)
    }
}
