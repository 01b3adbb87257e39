//! The `stability` document: σ(τ) curves with their statistics, the `best`
//! curve, and the comparison with a phase-noise table.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, Result};
use crate::deviation::{Approximation, Curve, Estimator, Origin, Point};
use crate::error::Error;
use crate::model::PowerLaw;
use crate::stability::{BestPoint, Comparison};
use crate::units::format_si;
use serde::Serialize;

/// The `stability` results: `{"confidence","curves","consistency"?,
/// "limits"?, "limits_elsewhere"?, "limits_caution"?}`.
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
    /// With `--limit-file`: the σ limit checks (`"limits"`,
    /// `"limits_elsewhere"`, `"limits_caution"`).
    #[serde(flatten)]
    pub limits: super::LimitsPart,
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

/// The footnote under a table with bias-corrected values.
const CORRECTED_NOTE: &str = "* bias-corrected value: totdev, mtot, ttot, htot divided by their \
     bias for the noise type shown (--uncorrected reports them as computed); theoh beyond \
     10 % of the record is Theo1 scaled by the record's ThêoBR ratio";

/// True when the point of `est` is a bias-corrected value: a total-family
/// value divided by its bias ([`Point::bias`]), or TheoH's ThêoBR part
/// ([`Estimator::bias_corrected_from`]) on a record of `n` phase points.
fn corrected(est: Estimator, p: &Point, n: usize, tau0: f64) -> bool {
    p.bias.is_some()
        || est
            .bias_corrected_from(n, tau0)
            .is_some_and(|from| p.estimate.tau >= from)
}

impl StabilityBody {
    /// The table for reading: one block per curve (τ with SI prefix, the
    /// value to 4 significant digits and its interval; bias-corrected
    /// values marked `*` with a footnote; values carrying an approximation
    /// marked `≈` after the row, with a footnote), the `best` block, and the
    /// comparison with the phase-noise table. `input` is the record the
    /// curves were computed on.
    pub fn table(&self, input: &super::RecordInput) -> Text {
        let mut t = Text::new();
        t.line(format!("# {}", input.path));
        for c in &self.curves {
            match c {
                AnyCurve::Plain(c) => t.table(self.curve_table(c, input)),
                AnyCurve::Best(b) => t.table(best_table(b, input)),
            }
        }
        for c in self.consistency.iter().flatten() {
            t.extend(consistency_table(c));
        }
        if self.consistency.is_some() {
            t.line(format!(
                "Agreement: |ln(measured/from table)| within √(δ_m² + δ_t²), δ_m the measured interval's half-width (log) on the table's side, δ_t the table's uncertainty (u dB in L(f) is a factor 10^(u/20) in σ); compared only where at most {:.0} % of σ² comes from below the table's lowest offset, and from 2τ0 when f_h is 1/(2τ0) (at τ0 a sampled record's σ depends on how the instrument sampled).",
                crate::stability::MAX_BELOW_TABLE * 100.0
            ));
        }
        t.extend(self.limits.table());
        t
    }

    fn curve_table(&self, c: &Curve, input: &super::RecordInput) -> Table {
        let est = (c.origin == Origin::Measured).then_some(c.estimator);
        let title = est.map(|e| e.title()).unwrap_or("");
        let unit = if c.estimator.is_time_deviation() {
            Unit::Si("s")
        } else {
            Unit::Plain
        };
        let mut t = Table::new(vec![
            Column::right("tau", 10).unit(Unit::Si("s")),
            Column::right("m", 9),
            Column::right("dev", 10).unit(unit).marked(),
            Column::right(format!("{:.1} % interval", self.confidence * 100.0), 25).unit(unit),
            Column::right("edf", 9).unit(Unit::Plain),
            Column::right("terms", 9),
            Column::right("noise", 5),
        ])
        .heading("")
        .heading(format!("{} — {title}", c.name()));
        let mut any = false;
        for p in &c.points {
            let marked = est.is_some_and(|e| corrected(e, p, input.points, input.tau0));
            any |= marked;
            let dev = Cell::num(p.estimate.value);
            t.row_with(
                vec![
                    Cell::num(p.estimate.tau),
                    Cell::int(p.estimate.m),
                    if marked { dev.mark('*') } else { dev },
                    Cell::range(p.lo, p.hi),
                    Cell::opt(p.edf),
                    Cell::int(p.estimate.terms),
                    p.noise().map_or_else(Cell::none, Cell::text),
                ],
                approximation_tail(p),
            );
        }
        if any {
            t.note(CORRECTED_NOTE);
        }
        approximation_notes(&mut t, c.points.iter());
        t
    }
}

/// The `best` block, with the estimator of each point.
fn best_table(b: &BestCurve, input: &super::RecordInput) -> Table {
    let from = |r: &BestPointRow| Estimator::from_name(r.from).ok();
    let family = b
        .points
        .first()
        .and_then(from)
        .and_then(|e| e.variance_title())
        .unwrap_or("Allan variance");
    let mut t = Table::new(vec![
        Column::right("tau", 10).unit(Unit::Si("s")),
        Column::right("dev", 10).unit(Unit::Plain).marked(),
        Column::right("interval", 25).unit(Unit::Plain),
        Column::right("edf", 9).unit(Unit::Plain),
        Column::right("noise", 5),
        Column::right("from", 7),
    ])
    .heading("")
    .heading(format!(
        "{} — at each τ the estimator of the {family} with the most degrees of freedom (chosen from the EDF rules, the same for any noise type, not from the values)",
        crate::stability::BEST_CURVE
    ));
    let mut any = false;
    for r in &b.points {
        let p = &r.point;
        let marked = from(r).is_some_and(|e| corrected(e, p, input.points, input.tau0));
        any |= marked;
        let dev = Cell::num(p.estimate.value);
        t.row_with(
            vec![
                Cell::num(p.estimate.tau),
                if marked { dev.mark('*') } else { dev },
                Cell::range(p.lo, p.hi),
                Cell::opt(p.edf),
                p.noise().map_or_else(Cell::none, Cell::text),
                Cell::text(r.from),
            ],
            approximation_tail(p),
        );
    }
    if any {
        t.note(CORRECTED_NOTE);
    }
    approximation_notes(&mut t, b.points.iter().map(|r| &r.point));
    t.note(crate::DECISION_CAUTION);
    t
}

/// What follows a row of a σ(τ) table: `  ≈` ([`Approximation::MARK`])
/// for a point whose value carries an approximation
/// ([`Point::approximation`]), else nothing.
fn approximation_tail(p: &Point) -> String {
    match p.approximation {
        Some(_) => format!("  {}", Approximation::MARK),
        None => String::new(),
    }
}

/// One note per approximation among the table's `points`
/// ([`Approximation::distinct`], [`Approximation::note`]).
fn approximation_notes<'a>(t: &mut Table, points: impl Iterator<Item = &'a Point>) {
    for a in Approximation::distinct(points.map(|p| p.approximation)) {
        t.note(a.note());
    }
}

/// One comparison of a measured curve with the phase-noise table.
fn consistency_table(c: &Comparison) -> Text {
    let mut t = Text::new();
    t.blank();
    t.line(format!(
        "{}: measured against the phase-noise table at the record's bandwidth f_h = {}{} (table uncertainty ±{} dB)",
        c.estimator,
        format_si(c.f_h, "Hz", 4),
        if c.bandwidth_given { ", as given" } else { " = 1/(2τ0)" },
        c.table_uncertainty_db
    ));
    if let Some(a) = &c.apart {
        t.line(format!(
            "  no common range: {} (a factor {:.3} apart)",
            a.reason, a.factor
        ));
        return t;
    }
    let mut tab = Table::new(vec![
        Column::right("tau", 10).unit(Unit::Si("s")),
        Column::right("measured", 11).unit(Unit::Plain),
        Column::right("interval", 25).unit(Unit::Plain),
        Column::right("from table", 11).unit(Unit::Plain),
        Column::right("ratio", 8).unit(Unit::Fixed(3, "")),
        Column::right("tolerance", 10).unit(Unit::Fixed(1, "%")),
        Column::right("agree", 6),
    ]);
    for p in &c.points {
        tab.row(vec![
            Cell::num(p.tau),
            Cell::num(p.measured),
            Cell::range(Some(p.lo), Some(p.hi)),
            Cell::num(p.converted),
            Cell::num(p.ratio),
            Cell::num((p.tolerance.exp() - 1.0) * 100.0),
            Cell::text(if p.agree { "yes" } else { "no" }),
        ]);
    }
    let agree = c.points.iter().filter(|p| p.agree).count();
    tab.note(format!(
        "  {} of {} τ agree{}",
        agree,
        c.points.len(),
        if c.without_interval > 0 {
            format!(
                "; {} τ without a confidence interval not compared",
                c.without_interval
            )
        } else {
            String::new()
        }
    ));
    t.table(tab);
    t
}
