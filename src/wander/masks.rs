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
//! The built-in limits are TOML limit files of the repository's `limits/`
//! folder, embedded at build time ([`BUILTIN_FILES`]) and read by the limit
//! file's own parser: ITU-T G.811, G.812 type I, G.8262 option 1, G.8272
//! PRTC-A and PRTC-B, G.8272.1 ePRTC and the G.8273.2 boundary-clock
//! classes A, B and C, all **recalled from memory** (docs/time-error.md
//! gives every break point and what was left out); every output that uses
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

/// The built-in limits: (name, the limit file's text), each a TOML limit
/// file of the repository's `limits/` folder embedded at build time
/// (nothing is read from disk at run time), read by the same parser as a
/// user's limit file ([`crate::limits::parse_limit_file`]).
pub const BUILTIN_FILES: [(&str, &str); 9] = [
    ("g811", include_str!("../../limits/g811.toml")),
    ("g812-type1", include_str!("../../limits/g812-type1.toml")),
    ("g8262-opt1", include_str!("../../limits/g8262-opt1.toml")),
    (
        "g8272-prtc-a",
        include_str!("../../limits/g8272-prtc-a.toml"),
    ),
    (
        "g8272-prtc-b",
        include_str!("../../limits/g8272-prtc-b.toml"),
    ),
    (
        "g8272.1-eprtc",
        include_str!("../../limits/g8272.1-eprtc.toml"),
    ),
    (
        "g8273.2-class-a",
        include_str!("../../limits/g8273.2-class-a.toml"),
    ),
    (
        "g8273.2-class-b",
        include_str!("../../limits/g8273.2-class-b.toml"),
    ),
    (
        "g8273.2-class-c",
        include_str!("../../limits/g8273.2-class-c.toml"),
    ),
];

/// The names of the built-in limits (`--mask NAME`).
pub const BUILTIN_NAMES: [&str; 9] = [
    "g811",
    "g812-type1",
    "g8262-opt1",
    "g8272-prtc-a",
    "g8272-prtc-b",
    "g8272.1-eprtc",
    "g8273.2-class-a",
    "g8273.2-class-b",
    "g8273.2-class-c",
];

/// The built-in limit file `name` (case ignored), read from its embedded
/// text exactly as a user's limit file; an unknown name is refused with
/// the list of known ones. Every built-in's `note` says it was recalled
/// from memory ([`FROM_MEMORY_NOTE`]); its break points are in
/// docs/time-error.md.
pub fn builtin_file(name: &str) -> Result<crate::limits::LimitFile> {
    let key = name.trim().to_ascii_lowercase();
    let Some((n, text)) = BUILTIN_FILES.iter().find(|(n, _)| *n == key) else {
        return Err(Error::invalid(format!(
            "unknown mask '{name}': the built-in masks are {} (`tauwise wander --list-masks` describes them; or give your own with --limit-file)",
            BUILTIN_NAMES.join(", ")
        )));
    };
    crate::limits::parse_limit_file(text, std::path::Path::new(&format!("limits/{n}.toml")))
}

/// The MTIE and TDEV masks of a built-in limit file ([`builtin_file`]);
/// its time-error limits are in the file.
///
/// The values, recalled from memory (docs/time-error.md lists every break
/// point); check against the current edition of the Recommendation.
pub fn builtin(name: &str) -> Result<Vec<Mask>> {
    Ok(builtin_file(name)?.masks())
}

/// One built-in limit, as `wander --list-masks` lists it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BuiltinInfo {
    /// `--mask NAME`.
    pub name: String,
    /// The metrics it limits (`mtie`, `tdev`, `max-te`, …).
    pub metrics: Vec<String>,
    /// The Recommendation and what it limits, with the source note.
    pub note: String,
}

/// Every built-in limit, in [`BUILTIN_NAMES`] order.
pub fn builtin_list() -> Result<Vec<BuiltinInfo>> {
    BUILTIN_NAMES
        .iter()
        .map(|n| {
            let f = builtin_file(n)?;
            let mut metrics: Vec<String> = Vec::new();
            for l in &f.limits {
                let m = l.metric.name().to_string();
                if !metrics.contains(&m) {
                    metrics.push(m);
                }
            }
            Ok(BuiltinInfo {
                name: f.name.clone(),
                metrics,
                note: f.note.clone().unwrap_or_default(),
            })
        })
        .collect()
}

/// The text of `wander --list-masks`: each built-in limit's name and
/// metrics, its note under it, then where every break point is written and
/// the decision caution.
pub fn builtin_list_text() -> Result<String> {
    let mut out = String::new();
    for b in builtin_list()? {
        out.push_str(&format!(
            "{}  [{}]\n  {}\n",
            b.name,
            b.metrics.join(", "),
            b.note
        ));
    }
    let caution = crate::DECISION_CAUTION;
    out.push_str(&format!(
        "\nEvery break point: docs/time-error.md. {caution}\n"
    ));
    Ok(out)
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
