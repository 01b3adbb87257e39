//! The `stability` document: σ(τ) curves with their statistics, the `best`
//! curve, and the comparison with a phase-noise table.

use super::{csv_text, Result};
use crate::deviation::{Curve, Estimator, Origin, Point};
use crate::error::Error;
use crate::model::PowerLaw;
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

/// The `best` curve ([`crate::stability::best`]): `{"name": "best",
/// "estimator", "origin": "best", "points"}`, `estimator` the plain
/// estimator of the variance its points estimate.
#[derive(Debug, Clone, Serialize)]
pub struct BestCurve {
    /// Always `best`.
    pub name: &'static str,
    /// The plain estimator of the variance.
    pub estimator: Estimator,
    /// Always [`Origin::Best`].
    pub origin: Origin,
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
        let curve = crate::stability::best_curve(points);
        Self {
            name: crate::stability::BEST_CURVE,
            estimator: curve.estimator,
            origin: curve.origin,
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
    /// CSV: one row per point, `estimator`, `origin`, then
    /// [`Point::COLUMNS`], and a last column `from` when there is a `best`
    /// curve (empty for the other curves).
    pub fn csv(&self) -> Result<String> {
        let with_from = self.curves.iter().any(|c| matches!(c, AnyCurve::Best(_)));
        let mut header = vec!["estimator", "origin"];
        header.extend(Point::COLUMNS);
        if with_from {
            header.push("from");
        }
        let mut rows: Vec<Vec<String>> = Vec::new();
        for c in &self.curves {
            match c {
                AnyCurve::Plain(c) => {
                    for p in &c.points {
                        let mut r =
                            vec![c.estimator.name().to_string(), c.origin.name().to_string()];
                        r.extend(p.cells());
                        if with_from {
                            r.push(String::new());
                        }
                        rows.push(r);
                    }
                }
                AnyCurve::Best(b) => {
                    for p in &b.points {
                        let mut r =
                            vec![b.estimator.name().to_string(), b.origin.name().to_string()];
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

/// Largest `stability --format json` document `--sigma` reads (a result of
/// every estimator at every τ of a long record is a few MB).
const STABILITY_JSON_LIMIT: u64 = 64 << 20;

/// Fit h_α to the measured curves of a `stability` JSON document (the
/// model-based direction of `convert`): ADEV/OADEV as AVAR, MDEV as MVAR,
/// HDEV/OHDEV as HVAR ([`Estimator::transfer_function`]), weighted by each
/// point's EDF (1 when absent); f_h defaults to 1/(2τ0) of the record.
/// Reads documents of schema 1 and the older ones without `"schema"` or
/// `"origin"`.
pub fn model_from_stability(path: &std::path::Path, fh: Option<f64>) -> Result<PowerLaw> {
    use crate::model::fit::{fit_variances, FitPoint};
    let bad = |what: &str| {
        Error::Read(crate::io::ReadError::file(
            path,
            format!("{what}; expected the JSON written by `tauwise stability --format json`"),
        ))
    };
    let text =
        crate::io::text::read_small_text(path, STABILITY_JSON_LIMIT, "stability JSON result")?;
    let doc: serde_json::Value =
        serde_json::from_str(&text).map_err(|e| bad(&format!("not JSON ({e})")))?;
    let tau0 = doc["input"]["tau0"]
        .as_f64()
        .filter(|t| *t > 0.0)
        .ok_or_else(|| bad("no input.tau0"))?;
    let curves = doc["curves"].as_array().ok_or_else(|| bad("no curves"))?;
    let mut points = Vec::new();
    for c in curves {
        // Measured curves of an estimator with a transfer function other
        // than TDEV's (a time variance); converted and best curves are
        // not the record's.
        let Some(kind) = c["estimator"]
            .as_str()
            .and_then(|n| Estimator::from_name(n).ok())
            .filter(|e| e.transfer_function().is_some_and(|t| t != Estimator::Tdev))
        else {
            continue;
        };
        if c["origin"].as_str().is_some_and(|o| o != "measured") {
            continue;
        }
        for p in c["points"].as_array().into_iter().flatten() {
            let (Some(tau), Some(dev)) = (p["tau"].as_f64(), p["dev"].as_f64()) else {
                continue;
            };
            if tau > 0.0 && dev > 0.0 {
                points.push(FitPoint {
                    kind,
                    tau,
                    tau0,
                    var: dev * dev,
                    weight: p["edf"].as_f64().filter(|e| *e > 0.0).unwrap_or(1.0),
                });
            }
        }
    }
    if points.is_empty() {
        return Err(bad("no adev, oadev, mdev, hdev or ohdev points"));
    }
    let f_h = fh.unwrap_or(0.5 / tau0);
    Ok(fit_variances(&points, f_h)?.model)
}
