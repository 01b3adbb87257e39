//! The `separate` document: each clock's σ(τ) separated from the pair
//! records (N-cornered hat), and the pair curves it came from.

use super::{csv_text, Result};
use crate::deviation::Point;
use crate::separate::{Clock, Method, Pair, Resolution, Separation};
use crate::units::{format_si, format_sig};
use serde::Serialize;
use std::fmt::Write as _;

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

/// The method in words, with its source.
pub fn method_text(s: &Separation) -> String {
    match s.method {
        Method::Independent if s.clocks.len() == 3 && s.pairs.len() == 3 => {
            "independent clocks, three-cornered hat (Gray & Allan 1974)".into()
        }
        Method::Independent => "independent clocks, least squares (Barnes)".into(),
        Method::Covariance => format!(
            "covariance-aware (Premoli & Tavella 1993), reference clock {}",
            s.reference.as_deref().unwrap_or("?")
        ),
    }
}

/// The readable `separate` table: one block per clock, then how the
/// intervals were made and the decision caution.
pub fn separate_text(s: &Separation, confidence: f64) -> String {
    let mut t = String::new();
    let est = s
        .clocks
        .first()
        .and_then(|c| c.curves.first())
        .map(|c| c.estimator);
    let _ = writeln!(
        t,
        "# {} clocks from {} pair records of {} points; {}",
        s.clocks.len(),
        s.pairs.len(),
        s.points,
        method_text(s)
    );
    for c in &s.clocks {
        let Some(curve) = c.curves.first() else {
            continue;
        };
        let _ = writeln!(t);
        let _ = writeln!(
            t,
            "{} — {} separated",
            c.name,
            est.map(|e| e.name()).unwrap_or("")
        );
        let _ = writeln!(
            t,
            "{:>10} {:>11} {:>25} {:>9} {:>5}",
            "tau",
            "dev",
            format!("{:.1} % interval", confidence * 100.0),
            "edf",
            "noise"
        );
        let time = est.is_some_and(|e| e.is_time_deviation());
        let fmt = |v: f64| {
            if time {
                format_si(v, "s", 4)
            } else {
                format_sig(v, 4)
            }
        };
        for p in &curve.points {
            let (dev, interval) = match p.resolution {
                Resolution::Resolved => (
                    fmt(p.point.estimate.value),
                    match (p.point.lo, p.point.hi) {
                        (Some(lo), Some(hi)) => format!("[{} … {}]", fmt(lo), fmt(hi)),
                        _ => "—".into(),
                    },
                ),
                Resolution::Below => (
                    format!("< {}", fmt(p.point.estimate.value)),
                    "below resolution".into(),
                ),
            };
            let _ = writeln!(
                t,
                "{:>10} {:>11} {:>25} {:>9} {:>5}",
                format_si(p.point.estimate.tau, "s", 4),
                dev,
                interval,
                p.point
                    .edf
                    .map(|e| format_sig(e, 4))
                    .unwrap_or_else(|| "—".into()),
                p.point.noise().unwrap_or("—"),
            );
        }
    }
    let _ = writeln!(t);
    let _ = writeln!(
        t,
        "{}",
        match (s.method, s.simultaneous) {
            (Method::Independent, true) =>
                "intervals: the pair variances' EDF propagated through the separation (simultaneous pairs sharing a clock covary), Satterthwaite degrees of freedom, χ²",
            (Method::Independent, false) =>
                "intervals: the pair variances' EDF propagated through the separation (pairs from separate sessions, independent), Satterthwaite degrees of freedom, χ²",
            (Method::Covariance, _) =>
                "intervals: seeded Monte Carlo of the same separation (Wishart draws of the difference covariances)",
        }
    );
    if s.clocks
        .iter()
        .flat_map(|c| c.curves.iter().flat_map(|k| k.points.iter()))
        .any(|p| p.resolution == Resolution::Below)
    {
        let _ = writeln!(
            t,
            "< bound: the separated variance is not positive (below the resolution of the data); the value is the upper bound the data allow"
        );
    }
    let _ = writeln!(t, "{}", crate::DECISION_CAUTION);
    t
}
