//! Wander masks: limits on MTIE(τ) or TDEV(τ) as a function of the
//! observation interval τ, built in (ITU-T) or read from a user's limit file
//! ([`crate::limits`]).
//!
//! A mask is one metric (MTIE or TDEV) and one shape:
//! - [`Shape::Formula`]: segments `limit(τ) = a·τ^p + b` on `(lo, hi]`, the way
//!   the Recommendations write their tables;
//! - [`Shape::Step`]: rows `(τ_k, L_k)`; the limit is `L_k` on `(τ_{k−1}, τ_k]`,
//!   the first row opens the mask (its limit holds at `τ_0` itself);
//! - [`Shape::LogLog`]: rows `(τ_k, L_k)`; between rows, log L is linear in
//!   log τ (a straight line on the usual log–log chart), on `[τ_0, τ_last]`.
//!
//! Outside its τ range a mask sets no limit ([`Mask::limit`] returns `None`).
//!
//! The built-in values are those of ITU-T G.811 (primary reference clock),
//! G.8272 (PRTC-A) and G.8262 (EEC option 1, constant temperature) as
//! **recalled from memory** (docs/checks.md §F); every output that uses
//! them carries [`FROM_MEMORY_NOTE`].

use crate::error::{Error, Result};

/// The note carried by every built-in mask, in code and in every output.
pub const FROM_MEMORY_NOTE: &str =
    "values recalled from memory; check against the current edition of the Recommendation";

/// The note carried by every mask verdict: what the tool cannot know.
pub const CONDITIONS_NOTE: &str = "Compliance is formally measured under the conditions the \
Recommendation sets (measurement filter, observation time, temperature), which this tool \
cannot know from the record.";

/// Which wander metric a mask limits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Metric {
    /// Maximum time interval error, ITU-T G.810.
    Mtie,
    /// Time deviation, ITU-T G.810 / NIST SP 1065.
    Tdev,
}

impl Metric {
    /// The estimator of the registry this metric is.
    pub fn estimator(self) -> crate::deviation::Estimator {
        match self {
            Metric::Mtie => crate::deviation::Estimator::Mtie,
            Metric::Tdev => crate::deviation::Estimator::Tdev,
        }
    }

    /// The name used in mask files and in JSON (`mtie`, `tdev`): the
    /// estimator's ([`crate::deviation::Estimator::name`]).
    pub fn name(self) -> &'static str {
        self.estimator().name()
    }

    /// The name in chart axes and tables (`MTIE`, `TDEV`).
    pub fn label(self) -> String {
        self.name().to_uppercase()
    }
}

/// One segment of a formula mask: `limit(τ) = a·τ^p + b` seconds for
/// `lo < τ ≤ hi` (τ in seconds).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Segment {
    /// Lower end of the τ range (exclusive), s.
    pub lo: f64,
    /// Upper end of the τ range (inclusive), s; may be `f64::INFINITY`.
    pub hi: f64,
    /// Coefficient of the power term, s·s^−p.
    pub a: f64,
    /// Exponent p of τ.
    pub p: f64,
    /// Constant term, s.
    pub b: f64,
}

impl Segment {
    /// `a·τ^p + b`.
    pub fn eval(&self, tau: f64) -> f64 {
        self.a * tau.powf(self.p) + self.b
    }
}

/// How a mask's limit depends on τ.
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    /// Segments `a·τ^p + b` on `(lo, hi]`, in increasing τ.
    Formula(Vec<Segment>),
    /// Rows `(τ_k, L_k)`: `L_k` holds on `(τ_{k−1}, τ_k]`; `L_0` at `τ_0`.
    Step(Vec<(f64, f64)>),
    /// Rows `(τ_k, L_k)`: log–log interpolation on `[τ_0, τ_last]`.
    LogLog(Vec<(f64, f64)>),
}

/// One mask: a named limit on one metric.
#[derive(Debug, Clone, PartialEq)]
pub struct Mask {
    /// The mask's name (`g8262-opt1`, or the name in a mask file).
    pub name: String,
    /// Where the values come from, and how far to trust them.
    pub source_note: String,
    /// The metric limited.
    pub metric: Metric,
    /// The limit as a function of τ.
    pub shape: Shape,
}

impl Mask {
    /// The limit at τ (seconds), or `None` where the mask sets none.
    ///
    /// ```
    /// use tauwise::wander::masks::{builtin, Metric};
    /// let g8262 = builtin("g8262-opt1").unwrap();
    /// let mtie = g8262.iter().find(|m| m.metric == Metric::Mtie).unwrap();
    /// assert!((mtie.limit(0.5).unwrap() - 40e-9).abs() < 1e-18);
    /// assert!(mtie.limit(0.05).is_none());
    /// ```
    pub fn limit(&self, tau: f64) -> Option<f64> {
        self.shape.eval(tau)
    }

    /// The τ range the mask covers, `(lowest, highest)`; the lowest end is
    /// exclusive for formula masks and inclusive for row masks.
    pub fn tau_range(&self) -> (f64, f64) {
        self.shape.range()
    }

    /// τ values where the limit changes formula (segment ends or rows), for
    /// reports and tests.
    pub fn breakpoints(&self) -> Vec<f64> {
        self.shape.breakpoints()
    }
}

impl Shape {
    /// The limit at x (τ in seconds, or an offset in hertz for a limit on
    /// L(f)), or `None` where the shape sets none. Step rows: `L_k` on
    /// `(x_{k−1}, x_k]`, `L_0` at `x_0`; log–log rows: log L linear in
    /// log x on `[x_0, x_last]`; formula segments `a·x^p + b` on `(lo, hi]`.
    pub fn eval(&self, tau: f64) -> Option<f64> {
        if !(tau.is_finite() && tau > 0.0) {
            return None;
        }
        match self {
            Shape::Formula(segs) => segs
                .iter()
                .find(|s| tau > s.lo && tau <= s.hi)
                .map(|s| s.eval(tau)),
            Shape::Step(rows) => {
                let first = rows.first()?;
                if tau < first.0 {
                    return None;
                }
                rows.iter().find(|r| r.0 >= tau).map(|r| r.1)
            }
            Shape::LogLog(rows) => {
                let first = rows.first()?;
                let last = rows.last()?;
                if tau < first.0 || tau > last.0 {
                    return None;
                }
                if rows.len() == 1 {
                    return Some(first.1);
                }
                let k = rows
                    .windows(2)
                    .position(|w| tau <= w[1].0)
                    .unwrap_or(rows.len() - 2);
                let (t0, l0) = rows[k];
                let (t1, l1) = rows[k + 1];
                let u = (tau.ln() - t0.ln()) / (t1.ln() - t0.ln());
                Some((l0.ln() + u * (l1.ln() - l0.ln())).exp())
            }
        }
    }

    /// The range the shape covers, `(lowest, highest)`; the lowest end is
    /// exclusive for formula shapes and inclusive for rows.
    pub fn range(&self) -> (f64, f64) {
        match self {
            Shape::Formula(s) => (
                s.first().map(|s| s.lo).unwrap_or(f64::NAN),
                s.last().map(|s| s.hi).unwrap_or(f64::NAN),
            ),
            Shape::Step(r) | Shape::LogLog(r) => (
                r.first().map(|r| r.0).unwrap_or(f64::NAN),
                r.last().map(|r| r.0).unwrap_or(f64::NAN),
            ),
        }
    }

    /// Where the limit changes formula (segment ends or rows).
    pub fn breakpoints(&self) -> Vec<f64> {
        match self {
            Shape::Formula(s) => {
                let mut v: Vec<f64> = s.iter().map(|s| s.lo).collect();
                if let Some(l) = s.last() {
                    if l.hi.is_finite() {
                        v.push(l.hi);
                    }
                }
                v
            }
            Shape::Step(r) | Shape::LogLog(r) => r.iter().map(|r| r.0).collect(),
        }
    }
}

/// The names of the built-in masks.
pub const BUILTIN_NAMES: [&str; 3] = ["g811", "g8272-prtc-a", "g8262-opt1"];

const NS: f64 = 1e-9;
const US: f64 = 1e-6;

fn seg(lo: f64, hi: f64, a: f64, p: f64, b: f64) -> Segment {
    Segment { lo, hi, a, p, b }
}

/// TDEV of G.811, also used by G.8272 PRTC-A (from memory, docs/checks.md §F):
/// 3 ns for 0.1 < τ ≤ 100 s; 0.03·τ ns for 100 < τ ≤ 1000 s;
/// 30 ns for 1000 < τ ≤ 10000 s.
fn g811_tdev() -> Vec<Segment> {
    vec![
        seg(0.1, 100.0, 0.0, 0.0, 3.0 * NS),
        seg(100.0, 1000.0, 0.03 * NS, 1.0, 0.0),
        seg(1000.0, 10000.0, 0.0, 0.0, 30.0 * NS),
    ]
}

/// The masks of one built-in name (one per metric), or an error that lists
/// the known names.
///
/// Values recalled from memory (docs/checks.md §F); check against the current
/// edition of the Recommendation:
/// - `g811` (ITU-T G.811, primary reference clock). MTIE:
///   (0.275e−3·τ + 0.025) µs for 0.1 < τ ≤ 1000 s; (1e−5·τ + 0.29) µs for
///   τ > 1000 s. TDEV: see `g811_tdev` above (3 ns / 0.03·τ ns / 30 ns).
/// - `g8272-prtc-a` (ITU-T G.8272, PRTC class A). MTIE:
///   (0.275e−3·τ + 0.025) µs for 0.1 < τ ≤ 273 s; 0.10 µs for τ > 273 s.
///   TDEV as G.811.
/// - `g8262-opt1` (ITU-T G.8262, EEC option 1, constant temperature). MTIE:
///   40 ns for 0.1 < τ ≤ 1 s; 40·τ^0.1 ns for 1 < τ ≤ 100 s;
///   25.25·τ^0.2 ns for 100 < τ ≤ 1000 s. TDEV: 3.2 ns for 0.1 < τ ≤ 25 s;
///   0.64·τ^0.5 ns for 25 < τ ≤ 100 s; 6.4 ns for 100 < τ ≤ 1000 s.
pub fn builtin(name: &str) -> Result<Vec<Mask>> {
    let key = name.trim().to_ascii_lowercase();
    let (title, mtie, tdev) = match key.as_str() {
        "g811" => (
            "ITU-T G.811 primary reference clock",
            vec![
                seg(0.1, 1000.0, 0.275e-3 * US, 1.0, 0.025 * US),
                seg(1000.0, f64::INFINITY, 1e-5 * US, 1.0, 0.29 * US),
            ],
            g811_tdev(),
        ),
        "g8272-prtc-a" => (
            "ITU-T G.8272 PRTC class A",
            vec![
                seg(0.1, 273.0, 0.275e-3 * US, 1.0, 0.025 * US),
                seg(273.0, f64::INFINITY, 0.0, 0.0, 0.10 * US),
            ],
            g811_tdev(),
        ),
        "g8262-opt1" => (
            "ITU-T G.8262 EEC option 1, constant temperature",
            vec![
                seg(0.1, 1.0, 0.0, 0.0, 40.0 * NS),
                seg(1.0, 100.0, 40.0 * NS, 0.1, 0.0),
                seg(100.0, 1000.0, 25.25 * NS, 0.2, 0.0),
            ],
            vec![
                seg(0.1, 25.0, 0.0, 0.0, 3.2 * NS),
                seg(25.0, 100.0, 0.64 * NS, 0.5, 0.0),
                seg(100.0, 1000.0, 0.0, 0.0, 6.4 * NS),
            ],
        ),
        _ => {
            return Err(Error::invalid(format!(
            "unknown mask '{name}': the built-in masks are {} (or give your own with --limit-file)",
            BUILTIN_NAMES.join(", ")
        )))
        }
    };
    let note = format!("{title}: {FROM_MEMORY_NOTE}");
    Ok(vec![
        Mask {
            name: key.clone(),
            source_note: note.clone(),
            metric: Metric::Mtie,
            shape: Shape::Formula(mtie),
        },
        Mask {
            name: key,
            source_note: note,
            metric: Metric::Tdev,
            shape: Shape::Formula(tdev),
        },
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_builtin_is_continuous_at_its_breakpoints() {
        // The Recommendations' tables join up (docs/checks.md §F, from memory);
        // a typo in a coefficient would show as a jump.
        for name in BUILTIN_NAMES {
            for m in builtin(name).unwrap() {
                if let Shape::Formula(segs) = &m.shape {
                    for w in segs.windows(2) {
                        let left = w[0].eval(w[0].hi);
                        let right = w[1].eval(w[1].lo);
                        assert!(
                            (left - right).abs() / left < 2e-3,
                            "{name} {:?} jumps at {}: {left} vs {right}",
                            m.metric,
                            w[0].hi
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn unknown_name_lists_known_ones() {
        let e = builtin("g999").unwrap_err().to_string();
        for n in BUILTIN_NAMES {
            assert!(e.contains(n), "{e}");
        }
    }

    #[test]
    fn step_and_loglog_rows() {
        let step = Mask {
            name: "s".into(),
            source_note: String::new(),
            metric: Metric::Mtie,
            shape: Shape::Step(vec![(1.0, 1e-8), (10.0, 2e-8), (100.0, 5e-8)]),
        };
        assert_eq!(step.limit(0.5), None);
        assert_eq!(step.limit(1.0), Some(1e-8));
        assert_eq!(step.limit(1.5), Some(2e-8));
        assert_eq!(step.limit(10.0), Some(2e-8));
        assert_eq!(step.limit(10.1), Some(5e-8));
        assert_eq!(step.limit(100.0), Some(5e-8));
        assert_eq!(step.limit(100.1), None);
        let ll = Mask {
            shape: Shape::LogLog(vec![(1.0, 1e-8), (100.0, 1e-6)]),
            ..step
        };
        // log–log straight line of slope 1: limit = 1e-8·τ (analytic).
        assert!((ll.limit(10.0).unwrap() - 1e-7).abs() < 1e-20);
        assert!((ll.limit(3.0).unwrap() - 3e-8).abs() < 1e-20);
        assert_eq!(ll.limit(200.0), None);
    }
}
