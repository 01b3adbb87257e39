//! The preparation of a record before analysis, as one step list shared by
//! `tauwise prepare` and the report (so both do the same thing to the same
//! record and say the same about it).
//!
//! The steps run in this order:
//!
//! 1. **outliers** — frequency values further than K scaled MADs from the
//!    median ([`super::find_outliers`], the MAD test of NIST SP 1065 §5, from
//!    memory) are taken out:
//!    - frequency data: the value becomes a gap;
//!    - phase data, a *glitch* (a phase sample whose frequencies on both
//!      sides are outliers or gaps): the sample becomes a gap
//!      ([`super::remove_outliers`]);
//!    - phase data, a *step* (one outlying frequency between good phase
//!      samples, e.g. a phase hit that stays): the step is taken out of the
//!      later phase, x_k ← x_k − (y_i − ỹ)·τ0 for k > i (ỹ the median
//!      frequency), and x_{i+1} becomes a gap, so the outlying frequency is a
//!      gap and no estimator term spans it (a gap only shifts later phase by
//!      a constant that no estimator sees, see [`crate::record`]);
//! 2. **drift** — a least-squares drift model fitted to the frequency after
//!    step 1 and removed ([`super::fit_drift`], [`super::remove_drift`]);
//! 3. **gap filling** — interior gaps filled by linear interpolation
//!    ([`super::fill_gaps`]).
//!
//! [`Prepared`] keeps what each step did (serde), including every outlier
//! with its time, and also the record after steps 1 and 3 only
//! ([`Prepared::before_drift`]) for analyses that fit their own drift law
//! (holdover fits the aging itself).

use super::{
    fill_gaps, find_outliers, remove_drift, remove_outliers, DriftFit, DriftModel, Outliers,
};
use crate::error::{Error, Result};
use crate::record::{PhaseRecord, Record};

/// What to do to a record before analysis (module notes; the default does
/// nothing).
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Steps {
    /// Take out outliers beyond this many scaled MADs (`None`: keep every
    /// sample).
    pub outliers: Option<f64>,
    /// Remove this drift model (`None`: keep the drift).
    pub drift: Option<DriftModel>,
    /// Fill interior gaps by linear interpolation.
    pub fill_gaps: bool,
}

impl Steps {
    /// True when no step changes the record.
    pub fn is_empty(&self) -> bool {
        self.outliers.is_none() && self.drift.is_none() && !self.fill_gaps
    }
}

/// What was done with one outlying frequency value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum OutlierAction {
    /// Frequency data: the value was made a gap.
    FrequencyGap,
    /// Phase data: a phase sample next to it was made a gap (a glitch).
    PhaseGlitch,
    /// Phase data: a phase step taken out of the later phase, one sample
    /// made a gap.
    PhaseStep,
}

impl OutlierAction {
    /// In words, for tables and the report.
    pub fn words(self) -> &'static str {
        match self {
            OutlierAction::FrequencyGap => "frequency value made a gap",
            OutlierAction::PhaseGlitch => "phase glitch: the sample made a gap",
            OutlierAction::PhaseStep => {
                "phase step: taken out of the later phase, one sample made a gap"
            }
        }
    }
}

/// One outlying frequency value y_i.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct OutlierEvent {
    /// Index i of y_i (the interval [iτ0, (i+1)τ0] from the first sample).
    pub index: usize,
    /// Its time, (i + ½)·τ0 from the first sample, s.
    pub t: f64,
    /// The value y_i (fractional frequency).
    pub y: f64,
    /// |y_i − median| in scaled MADs.
    pub mads: f64,
    /// What was done with it (`None` when only found, not taken out).
    pub action: Option<OutlierAction>,
}

/// Outliers found (and, in a preparation, taken out).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct OutlierReport {
    /// The limit K in scaled MADs.
    pub limit: f64,
    /// Median of the frequency values.
    pub median: f64,
    /// The scaled MAD (an estimate of σ for normal data).
    pub mad: f64,
    /// True when the MAD was 0 and the fallback scale was used.
    pub mad_fallback: bool,
    /// Frequency values tested.
    pub tested: usize,
    /// Every outlier, in record order.
    pub events: Vec<OutlierEvent>,
    /// Samples of the record made gaps.
    pub samples_made_gaps: usize,
    /// Phase steps taken out of the later phase.
    pub steps_removed: usize,
}

impl OutlierReport {
    /// The outliers of `found`, none taken out.
    pub fn found(found: &Outliers, record: &Record) -> Self {
        let y = super::frequency_of(record);
        let tau0 = record.tau0();
        Self {
            limit: found.limit,
            median: found.median,
            mad: found.mad,
            mad_fallback: found.mad_fallback,
            tested: found.tested,
            events: found
                .indices
                .iter()
                .map(|&i| OutlierEvent {
                    index: i,
                    t: (i as f64 + 0.5) * tau0,
                    y: y[i],
                    mads: if found.mad > 0.0 {
                        (y[i] - found.median).abs() / found.mad
                    } else {
                        f64::INFINITY
                    },
                    action: None,
                })
                .collect(),
            samples_made_gaps: 0,
            steps_removed: 0,
        }
    }
}

/// What gap filling did.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct GapReport {
    /// Gaps before filling.
    pub before: usize,
    /// Samples filled.
    pub filled: usize,
    /// Gaps left (before the first or after the last valid sample).
    pub left: usize,
}

/// A prepared record and what was done to it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Prepared {
    /// The steps asked for.
    pub steps: Steps,
    /// Outliers (when asked for).
    pub outliers: Option<OutlierReport>,
    /// The drift removed (when asked for).
    pub drift: Option<DriftFit>,
    /// Gap filling (when asked for).
    pub gaps: Option<GapReport>,
    /// The record after every step.
    #[serde(skip)]
    pub record: Record,
    /// The record after the outlier and gap steps, with its drift kept.
    #[serde(skip)]
    pub before_drift: Record,
}

/// Take outliers out of a record (step 1 of the module notes).
fn take_out_outliers(record: &Record, limit: f64) -> Result<(Record, OutlierReport)> {
    let found = find_outliers(record, limit)?;
    let mut report = OutlierReport::found(&found, record);
    let removal = remove_outliers(record, &found);
    let mut out = removal.record;
    match (&mut out, record) {
        (Record::Frequency(_), _) => {
            for e in &mut report.events {
                e.action = Some(OutlierAction::FrequencyGap);
            }
            report.samples_made_gaps = removal.replaced;
        }
        (Record::Phase(p), Record::Phase(orig)) => {
            let tau0 = p.tau0;
            let steps: std::collections::HashSet<usize> = removal.steps.iter().copied().collect();
            let mut made = removal.replaced;
            // Take each step out of the later phase (in record order, so
            // each shift applies to the phase after it), then blank x_{i+1}.
            let mut shift = 0.0;
            let mut next = removal.steps.iter().copied().peekable();
            for k in 0..p.x.len() {
                while let Some(&i) = next.peek() {
                    if i + 1 == k {
                        shift += (orig.x[i + 1] - orig.x[i]) / tau0 - found.median;
                        next.next();
                    } else {
                        break;
                    }
                }
                if shift != 0.0 && !p.x[k].is_nan() {
                    p.x[k] -= shift * tau0;
                }
            }
            for &i in &removal.steps {
                if !p.x[i + 1].is_nan() {
                    p.x[i + 1] = f64::NAN;
                    made += 1;
                }
            }
            for e in &mut report.events {
                e.action = Some(if steps.contains(&e.index) {
                    OutlierAction::PhaseStep
                } else {
                    OutlierAction::PhaseGlitch
                });
            }
            report.samples_made_gaps = made;
            report.steps_removed = removal.steps.len();
        }
        (Record::Phase(_), Record::Frequency(_)) => {
            return Err(Error::invalid(
                "internal: outlier removal changed the kind of the record",
            ))
        }
    }
    Ok((out, report))
}

/// Run the steps on a record (module notes).
///
/// ```
/// use tauwise::prepare::pipeline::{prepare, Steps, OutlierAction};
/// use tauwise::{PhaseRecord, Record};
/// // A phase ramp of 1 ns/s with a little noise and a 100 ns phase step
/// // after x_50.
/// let mut state = 7u64;
/// let mut noise = move || {
///     state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
///     ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 1e-11
/// };
/// let x: Vec<f64> = (0..100)
///     .map(|i| i as f64 * 1e-9 + if i > 50 { 1e-7 } else { 0.0 } + noise())
///     .collect();
/// let rec = Record::Phase(PhaseRecord::new(x, 1.0).unwrap());
/// let p = prepare(&rec, &Steps { outliers: Some(5.0), ..Steps::default() }).unwrap();
/// let o = p.outliers.unwrap();
/// assert_eq!(o.events.len(), 1);
/// assert_eq!(o.events[0].index, 50);
/// assert_eq!(o.events[0].action, Some(OutlierAction::PhaseStep));
/// // The step is gone: the phase after it continues the ramp.
/// let x = p.record.to_phase().x;
/// assert!(x[51].is_nan());
/// assert!((x[99] - x[49] - 50e-9).abs() < 1e-10);
/// ```
pub fn prepare(record: &Record, steps: &Steps) -> Result<Prepared> {
    let mut rec = record.clone();
    let mut outliers = None;
    if let Some(k) = steps.outliers {
        let (r, rep) = take_out_outliers(&rec, k)?;
        rec = r;
        outliers = Some(rep);
    }
    let mut before_drift = rec.clone();
    let mut drift = None;
    if let Some(model) = steps.drift {
        let fit = super::fit_drift(&rec, model)?;
        rec = remove_drift(&rec, &fit);
        drift = Some(fit);
    }
    let mut gaps = None;
    if steps.fill_gaps {
        let before = rec.gaps();
        let f = fill_gaps(&rec);
        rec = f.record;
        gaps = Some(GapReport {
            before,
            filled: f.filled,
            left: f.left,
        });
        before_drift = fill_gaps(&before_drift).record;
    }
    if drift.is_none() {
        before_drift = rec.clone();
    }
    Ok(Prepared {
        steps: *steps,
        outliers,
        drift,
        gaps,
        record: rec,
        before_drift,
    })
}

/// A phase record's gaps as runs: (first missing sample, length), in record
/// order — for the data-quality figures of a record.
pub fn gap_runs(x: &PhaseRecord) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, v) in x.x.iter().enumerate() {
        match (v.is_nan(), start) {
            (true, None) => start = Some(i),
            (false, Some(s)) => {
                out.push((s, i - s));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((s, x.x.len() - s));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::FrequencyRecord;

    /// A phase ramp of 1 ns per sample with uniform noise of 10 ps
    /// (a 64-bit LCG, Knuth's MMIX constants).
    fn ramp(n: usize) -> Vec<f64> {
        let mut state = 11u64;
        (0..n)
            .map(|i| {
                state = state
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                let u = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
                i as f64 * 1e-9 + 1e-11 * u
            })
            .collect()
    }

    #[test]
    fn glitch_and_step_in_phase() {
        let mut x = ramp(200);
        x[30] += 1e-7; // glitch
        for v in x.iter_mut().skip(121) {
            *v -= 5e-8; // step after x_120
        }
        let rec = Record::Phase(PhaseRecord::new(x, 2.0).unwrap());
        let p = prepare(
            &rec,
            &Steps {
                outliers: Some(5.0),
                ..Steps::default()
            },
        )
        .unwrap();
        let o = p.outliers.as_ref().unwrap();
        let got: Vec<(usize, Option<OutlierAction>)> =
            o.events.iter().map(|e| (e.index, e.action)).collect();
        assert_eq!(
            got,
            vec![
                (29, Some(OutlierAction::PhaseGlitch)),
                (30, Some(OutlierAction::PhaseGlitch)),
                (120, Some(OutlierAction::PhaseStep)),
            ]
        );
        assert_eq!(o.steps_removed, 1);
        assert_eq!(o.samples_made_gaps, 2);
        assert!((o.events[2].t - 241.0).abs() < 1e-12);
        // The frequency of the prepared record is the ramp's 0.5e-9 wherever
        // it is not a gap (analytic: the step and the glitch are gone).
        let y = p.record.to_frequency().y;
        for (i, v) in y.iter().enumerate() {
            if !v.is_nan() {
                assert!((v - 0.5e-9).abs() < 1e-11, "y[{i}] = {v}");
            }
        }
        let bits =
            |r: &Record| -> Vec<u64> { r.to_phase().x.iter().map(|v| v.to_bits()).collect() };
        assert_eq!(bits(&p.record), bits(&p.before_drift));
        // With gap filling as well the record has no gap left.
        let p = prepare(
            &rec,
            &Steps {
                outliers: Some(5.0),
                fill_gaps: true,
                drift: Some(DriftModel::Linear),
            },
        )
        .unwrap();
        assert_eq!(p.record.gaps(), 0);
        assert_eq!(p.before_drift.gaps(), 0);
        assert_eq!(p.gaps.unwrap().before, 2);
        assert!(p.drift.is_some());
        // Drift kept in before_drift: its frequency still has the ramp's offset
        // and no trend; the drift-free record too (a ramp has no drift).
        let y = p.before_drift.to_frequency().y;
        assert!(y.iter().all(|v| (v - 0.5e-9).abs() < 1e-10));
    }

    #[test]
    fn frequency_outliers_become_gaps() {
        let y0 = ramp(51);
        let mut y: Vec<f64> = y0.windows(2).map(|w| w[1] - w[0]).collect();
        y[10] = 5e-9;
        let rec = Record::Frequency(FrequencyRecord::new(y, 1.0).unwrap());
        let p = prepare(
            &rec,
            &Steps {
                outliers: Some(5.0),
                ..Steps::default()
            },
        )
        .unwrap();
        let o = p.outliers.unwrap();
        assert_eq!(o.events.len(), 1);
        assert_eq!(o.events[0].action, Some(OutlierAction::FrequencyGap));
        assert!(p.record.to_frequency().y[10].is_nan());
        assert!(o.events[0].mads > 100.0, "{}", o.events[0].mads);
    }

    #[test]
    fn nothing_asked_changes_nothing() {
        let rec = Record::Phase(PhaseRecord::new(ramp(20), 1.0).unwrap());
        let p = prepare(&rec, &Steps::default()).unwrap();
        assert_eq!(p.record, rec);
        assert!(p.outliers.is_none() && p.drift.is_none() && p.gaps.is_none());
        assert!(Steps::default().is_empty());
    }

    #[test]
    fn gap_runs_of_a_record() {
        let x = PhaseRecord::new(
            vec![0.0, f64::NAN, f64::NAN, 1.0, f64::NAN, 2.0, f64::NAN],
            1.0,
        )
        .unwrap();
        assert_eq!(gap_runs(&x), vec![(1, 2), (4, 1), (6, 1)]);
    }
}
