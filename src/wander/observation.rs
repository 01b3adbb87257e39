//! The observation a wander verdict rests on: the record's span, sampling
//! interval, valid samples and gaps, and warnings when the span is shorter
//! than what a mask's longest τ needs.
//!
//! The rules (each warning names its source):
//! - MTIE(τ) is defined for τ up to the observation period (ITU-T G.810): a
//!   mask running to τ_max needs a record of at least τ_max. A mask with no
//!   upper end is checked only up to the record's span.
//! - TDEV(τ) needs at least 3τ of record (one second difference of
//!   τ-averages, NIST SP 1065 §5.2.6), and the measurement Recommendations
//!   ask for an observation of at least 12 times the longest τ (recalled from
//!   memory; check the current edition): a record between 3τ_max and 12τ_max
//!   gives a TDEV at τ_max from few terms.
//!
//! No other usual observation time of the built-in Recommendations is
//! recalled reliably enough to be stated here.

use super::masks::{Mask, Metric};
use crate::record::{gap_free_runs, PhaseRecord};
use crate::units::format_si;
use serde::Serialize;

/// TDEV observation rule: at least this many times the longest τ (from
/// memory; module notes).
pub const TDEV_USUAL_FACTOR: f64 = 12.0;

/// What the analysed record offers (`observation` in the `wander` document).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observation {
    /// Span of the analysed record, (N − 1)·τ0, s.
    pub span: f64,
    /// Sampling interval τ0, s.
    pub tau0: f64,
    /// Valid samples.
    pub points: usize,
    /// Gaps (runs of missing samples).
    pub gaps: usize,
    /// Where the span falls short of what a mask needs.
    pub warnings: Vec<String>,
}

impl Observation {
    /// One line for tables and reports.
    pub fn line(&self) -> String {
        format!(
            "observation: {} at τ0 = {} ({} valid samples, {} gap(s)); the verdicts rest on it",
            format_si(self.span, "s", 4),
            format_si(self.tau0, "s", 4),
            self.points,
            self.gaps
        )
    }
}

/// The observation of `rec` (the record as analysed) and its warnings for
/// `masks` (module notes).
///
/// ```
/// use tauwise::PhaseRecord;
/// use tauwise::wander::{masks::builtin, observation::observe};
/// // 500 s at 1 s against G.8262 option 1 (MTIE and TDEV to 1000 s).
/// let r = PhaseRecord::new(vec![0.0; 501], 1.0).unwrap();
/// let o = observe(&r, &builtin("g8262-opt1").unwrap());
/// assert_eq!(o.span, 500.0);
/// assert_eq!(o.warnings.len(), 2);
/// assert!(o.warnings[0].contains("MTIE") && o.warnings[1].contains("TDEV"));
/// ```
pub fn observe(rec: &PhaseRecord, masks: &[Mask]) -> Observation {
    let span = rec.len().saturating_sub(1) as f64 * rec.tau0;
    let runs = gap_free_runs(&rec.x);
    let gaps = match runs.len() {
        0 => usize::from(!rec.is_empty()),
        k => {
            let lead = usize::from(runs[0].0 > 0);
            let (s, l) = runs[k - 1];
            let trail = usize::from(s + l < rec.len());
            k - 1 + lead + trail
        }
    };
    let points = rec.x.iter().filter(|v| !v.is_nan()).count();
    let s = |v: f64| format_si(v, "s", 4);
    let mut warnings = Vec::new();
    let mut seen = Vec::new();
    for m in masks {
        let key = (m.name.clone(), m.metric);
        if seen.contains(&key) {
            continue;
        }
        seen.push(key);
        let (_, hi) = m.tau_range();
        let what = format!("{} ({})", m.name, m.metric.label());
        match m.metric {
            Metric::Mtie if !hi.is_finite() => warnings.push(format!(
                "{what} has no upper end: its verdict speaks for τ up to the record's span, {}, only",
                s(span)
            )),
            Metric::Mtie if span < hi * (1.0 - 1e-9) => warnings.push(format!(
                "{what} runs to τ = {}: MTIE there needs an observation of at least {} (ITU-T G.810: MTIE is defined up to the observation period); the record spans {}, so τ above it were not checked",
                s(hi),
                s(hi),
                s(span)
            )),
            Metric::Tdev if !hi.is_finite() => warnings.push(format!(
                "{what} has no upper end: its verdict speaks for τ up to a third of the record's span, {}, only",
                s(span / 3.0)
            )),
            Metric::Tdev if span < 3.0 * hi * (1.0 - 1e-9) => warnings.push(format!(
                "{what} runs to τ = {}: TDEV there needs at least {} of record (3τ, NIST SP 1065 §5.2.6) and usually {} (12τ; recalled from memory, check the current edition); the record spans {}, so τ above {} were not checked",
                s(hi),
                s(3.0 * hi),
                s(TDEV_USUAL_FACTOR * hi),
                s(span),
                s(span / 3.0)
            )),
            Metric::Tdev if span < TDEV_USUAL_FACTOR * hi * (1.0 - 1e-9) => warnings.push(format!(
                "{what} runs to τ = {}: the record ({}) is shorter than the usual observation of 12τ = {} (recalled from memory, check the current edition); TDEV near τ = {} rests on few terms",
                s(hi),
                s(span),
                s(TDEV_USUAL_FACTOR * hi),
                s(hi)
            )),
            _ => {}
        }
    }
    Observation {
        span,
        tau0: rec.tau0,
        points,
        gaps,
        warnings,
    }
}
