//! Time error (TE): measurement filters ([`filter`]) and the time-error
//! metrics a synchronisation engineer reports beside MTIE and TDEV.
//!
//! The record's values are read as the time error TE(t) of the clock against
//! its reference, as they are — not relative to the first sample, as TIE is
//! (ITU-T G.810 defines TE(t) = T(t) − T_ref(t)). On them, over the valid
//! samples:
//!
//! - **cTE**, the constant time error: the mean of TE over the record; and
//!   the mean over every window of `cte_window` seconds (default 1000 s,
//!   m = round(window/τ0) consecutive samples, sliding by one sample, only
//!   windows without a gap), reported as the largest |windowed mean| and where
//!   its window starts;
//! - **max |TE|**, the largest |TE_i| of the record as read (no filter);
//! - **dTE_L**, the low-frequency dynamic time error: MTIE and TDEV (the
//!   estimator registry's, ITU-T G.810 / NIST SP 1065, the same functions as
//!   `wander`) of TE through a first-order low-pass at 0.1 Hz, on the τ grid
//!   of the wander analysis, its settling interval dropped;
//! - **dTE_H**, the high-frequency dynamic time error: the peak-to-peak of TE
//!   through a first-order high-pass at 0.1 Hz, its settling interval dropped.
//!
//! The 0.1 Hz first-order split follows the boundary-clock Recommendations as
//! recalled from memory (ITU-T G.8273.2: dTE_L through a 0.1 Hz low-pass,
//! dTE_H through a 0.1 Hz high-pass); check the current edition.
//! A measurement filter given to `wander` (`--te-filter`) does not change
//! these metrics: their filters are part of their definition.

pub mod filter;

use super::masks::{Mask, Metric};
use crate::deviation::{compute, Estimate, Estimator};
use crate::error::{Error, Result};
use crate::limits::{Limit, LimitCheck, LimitMetric, TeMetric};
use crate::record::PhaseRecord;
use crate::units::format_si;
use filter::{AppliedFilter, MeasurementFilter};
use serde::Serialize;

/// Default cTE averaging window, s.
pub const DEFAULT_CTE_WINDOW: f64 = 1000.0;
/// Corner of the dTE_L / dTE_H split, Hz (from memory: ITU-T G.8273.2).
pub const DTE_SPLIT_HZ: f64 = 0.1;
/// Where the split comes from.
pub const SPLIT_NOTE: &str = "dTE_L through a first-order 0.1 Hz low-pass and dTE_H through a \
first-order 0.1 Hz high-pass, as the boundary-clock Recommendation (ITU-T G.8273.2) defines them, \
recalled from memory; check the current edition";

/// What the time-error metrics are computed with.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TeOptions {
    /// cTE averaging window, s.
    pub cte_window: f64,
    /// Corner of the dTE_L / dTE_H split, Hz.
    pub split_hz: f64,
}

impl Default for TeOptions {
    fn default() -> Self {
        Self {
            cte_window: DEFAULT_CTE_WINDOW,
            split_hz: DTE_SPLIT_HZ,
        }
    }
}

/// The time-error metrics of a record (`te` in the `wander` document).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TeMetrics {
    /// cTE: mean TE over the record, s.
    pub cte: f64,
    /// The cTE window, s.
    pub cte_window: f64,
    /// Largest |mean of TE| over the windows, s (None: no gap-free window
    /// as long as the cTE window).
    pub cte_windowed_max_abs: Option<f64>,
    /// Start of that window, s from the record's first sample.
    pub cte_windowed_at: Option<f64>,
    /// Number of windows averaged.
    pub cte_windows: usize,
    /// max |TE| of the record as read, s.
    pub max_abs: f64,
    /// max |TE_L|: the largest |TE| of the record through the dTE_L
    /// low-pass (settling dropped), s.
    pub max_abs_l: f64,
    /// MTIE of the low-passed TE (the point shape of `stability`).
    #[serde(serialize_with = "crate::deviation::serialize_as_points")]
    pub dte_l_mtie: Vec<Estimate>,
    /// TDEV of the low-passed TE.
    #[serde(serialize_with = "crate::deviation::serialize_as_points")]
    pub dte_l_tdev: Vec<Estimate>,
    /// Peak-to-peak of the high-passed TE, s.
    pub dte_h_pkpk: f64,
    /// The low-pass of dTE_L, as applied.
    pub lowpass: AppliedFilter,
    /// The high-pass of dTE_H, as applied.
    pub highpass: AppliedFilter,
    /// Valid samples of the record.
    pub points: usize,
    /// Span of the record, s ((N − 1)·τ0).
    pub span: f64,
    /// What the metrics rest on, and what could not be computed.
    pub notes: Vec<String>,
}

impl TeMetrics {
    /// Scale every time value by `k` (the wander analysis works on an
    /// exactly rescaled copy of a record of extreme magnitude).
    pub fn scale(&mut self, k: f64) {
        self.cte *= k;
        self.cte_windowed_max_abs = self.cte_windowed_max_abs.map(|v| v * k);
        self.max_abs *= k;
        self.max_abs_l *= k;
        self.dte_h_pkpk *= k;
        for e in self.dte_l_mtie.iter_mut().chain(self.dte_l_tdev.iter_mut()) {
            e.value *= k;
        }
    }
}

/// The mean over every window of `m` consecutive samples without a gap,
/// sliding by one sample: (largest |mean|, index of its first sample,
/// number of windows), or None when no window fits. Running sums of
/// x − x_ref (x_ref the first valid sample) keep the rounding small.
///
/// ```
/// use tauwise::wander::te::windowed_means;
/// // Means of 2 consecutive samples: 1.5, 2.5, −1 (the gap breaks two windows).
/// let x = [1.0, 2.0, 3.0, f64::NAN, -1.0, -1.0];
/// assert_eq!(windowed_means(&x, 2), Some((2.5, 1, 3)));
/// ```
pub fn windowed_means(x: &[f64], m: usize) -> Option<(f64, usize, usize)> {
    if m == 0 || m > x.len() {
        return None;
    }
    let xr = x.iter().copied().find(|v| !v.is_nan())?;
    let mut best: Option<(f64, usize)> = None;
    let mut count = 0usize;
    for (start, len) in crate::record::gap_free_runs(x) {
        if len < m {
            continue;
        }
        let run = &x[start..start + len];
        // Exact running sum recomputed every 4096 windows to bound drift.
        let mut s: f64 = run[..m].iter().map(|v| v - xr).sum();
        for j in 0..=len - m {
            if j > 0 {
                if j % 4096 == 0 {
                    s = run[j..j + m].iter().map(|v| v - xr).sum();
                } else {
                    s += (run[j + m - 1] - xr) - (run[j - 1] - xr);
                }
            }
            let mean = (s / m as f64 + xr).abs();
            count += 1;
            if best.map_or(true, |(b, _)| mean > b) {
                best = Some((mean, start + j));
            }
        }
    }
    best.map(|(v, i)| (v, i, count))
}

/// The time-error metrics of `rec` (module notes), with dTE_L's MTIE and
/// TDEV on the averaging factors `mtie_ms` and `tdev_ms` of the low-passed
/// record (the caller plans them on the low-passed record's length, as
/// [`crate::wander::analyse`] does).
pub fn metrics_at(
    rec: &PhaseRecord,
    opts: &TeOptions,
    lowpassed: &filter::Filtered,
    highpassed: &filter::Filtered,
    mtie_ms: &[usize],
    tdev_ms: &[usize],
) -> Result<TeMetrics> {
    let valid: Vec<f64> = rec.x.iter().copied().filter(|v| !v.is_nan()).collect();
    if valid.len() < 2 {
        return Err(Error::insufficient(format!(
            "time-error metrics need at least two valid samples, the record has {}",
            valid.len()
        )));
    }
    if !(opts.cte_window.is_finite() && opts.cte_window > 0.0) {
        return Err(Error::invalid(format!(
            "the cTE window {} s: expected a positive duration",
            opts.cte_window
        )));
    }
    let xr = valid[0];
    let cte = valid.iter().map(|v| v - xr).sum::<f64>() / valid.len() as f64 + xr;
    let max_abs = valid.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let span = (rec.len() - 1) as f64 * rec.tau0;
    let mut notes = Vec::new();
    let m = (opts.cte_window / rec.tau0).round();
    let (windowed, at, windows) = if m < 1.0 {
        notes.push(format!(
            "the windowed cTE was not computed: the cTE window ({}) is shorter than τ0 ({})",
            format_si(opts.cte_window, "s", 4),
            format_si(rec.tau0, "s", 4)
        ));
        (None, None, 0)
    } else if m > rec.len() as f64 {
        notes.push(format!(
            "the windowed cTE was not computed: the record ({}) is shorter than the cTE window ({})",
            format_si(span, "s", 4),
            format_si(opts.cte_window, "s", 4)
        ));
        (None, None, 0)
    } else {
        match windowed_means(&rec.x, m as usize) {
            Some((v, i, n)) => (Some(v), Some(i as f64 * rec.tau0), n),
            None => {
                notes.push(format!(
                    "the windowed cTE was not computed: no gap-free stretch of the record is as long as the cTE window ({})",
                    format_si(opts.cte_window, "s", 4)
                ));
                (None, None, 0)
            }
        }
    };
    let hp = &highpassed.record.x;
    let (lo, hi) = hp
        .iter()
        .filter(|v| !v.is_nan())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    notes.push(SPLIT_NOTE.to_string());
    let max_abs_l = lowpassed
        .record
        .x
        .iter()
        .filter(|v| !v.is_nan())
        .fold(0.0f64, |m, v| m.max(v.abs()));
    Ok(TeMetrics {
        cte,
        cte_window: opts.cte_window,
        cte_windowed_max_abs: windowed,
        cte_windowed_at: at,
        cte_windows: windows,
        max_abs,
        max_abs_l,
        dte_l_mtie: compute(Estimator::Mtie, &lowpassed.record, mtie_ms),
        dte_l_tdev: compute(Estimator::Tdev, &lowpassed.record, tdev_ms),
        dte_h_pkpk: hi - lo,
        lowpass: lowpassed.applied.clone(),
        highpass: highpassed.applied.clone(),
        points: valid.len(),
        span,
        notes,
    })
}

/// The two filters of the dTE split at `opts.split_hz`, applied to `rec`.
pub fn split(rec: &PhaseRecord, opts: &TeOptions) -> Result<(filter::Filtered, filter::Filtered)> {
    Ok((
        MeasurementFilter::lowpass(opts.split_hz).apply(rec)?,
        MeasurementFilter::highpass(opts.split_hz).apply(rec)?,
    ))
}

/// The time-error metrics of `rec` with dTE_L's τ planned as the wander
/// analysis plans them (`grid.grid`, `grid.range`; MTIE to the low-passed
/// record's span, TDEV to a third of it). A record of extreme magnitude is
/// worked on in an exactly rescaled copy, as the wander analysis does.
pub fn metrics(rec: &PhaseRecord, opts: &TeOptions, grid: &super::Options) -> Result<TeMetrics> {
    Ok(metrics_checked(rec, opts, grid, &[])?.0)
}

/// A `dte-l` or `dte-l-tdev` limit as a mask on MTIE or TDEV (to plan its
/// τ as a mask's: the grid, the record's end and its own breakpoints).
fn te_mask(l: &Limit) -> Option<Mask> {
    let metric = match l.metric {
        LimitMetric::Te(TeMetric::DteL) => Metric::Mtie,
        LimitMetric::Te(TeMetric::DteLTdev) => Metric::Tdev,
        _ => return None,
    };
    Some(Mask {
        name: l.name.clone(),
        source_note: l.note.clone().unwrap_or_default(),
        metric,
        shape: l.shape(),
    })
}

/// [`metrics`], and every time-error limit of `limits` judged on them
/// (limits of other metrics are skipped):
///
/// - `cte`: the largest |mean TE| over the cTE windows against the limit;
///   with no window that fits, |mean over the record|, coverage `partial`
///   with the reason;
/// - `max-te`: max |TE| of the record as read; `max-te-l`: max |TE_L|
///   (through the dTE_L low-pass, settling dropped); `dte-h`: the
///   peak-to-peak of the high-passed record — each |value| ≤ max
///   ([`crate::limits::check_single`]);
/// - `dte-l` (MTIE) and `dte-l-tdev` (TDEV) of the low-passed record: as a
///   wander mask ([`crate::limits::check_limit`]), on the τ of its own plan
///   (the grid, the low-passed record's end, its own breakpoints: the τ on
///   both sides of each, which are added to the dTE_L curves), coverage
///   against the low-passed record's span.
pub fn metrics_checked(
    rec: &PhaseRecord,
    opts: &TeOptions,
    grid: &super::Options,
    limits: &[Limit],
) -> Result<(TeMetrics, Vec<LimitCheck>)> {
    let nyquist = 0.5 / rec.tau0;
    if opts.split_hz.is_nan() || opts.split_hz >= nyquist {
        return Err(Error::invalid(format!(
            "the time-error metrics split the record at {} (dTE_L below, dTE_H above), which must lie below the record's Nyquist frequency 1/(2τ0) = {}: they need τ0 below {}",
            format_si(opts.split_hz, "Hz", 4),
            format_si(nyquist, "Hz", 4),
            format_si(0.5 / opts.split_hz, "s", 4)
        )));
    }
    let rescaled = rec.rescaled_for_squares();
    let (r, back) = match &rescaled {
        Some((r, k)) => (r, *k),
        None => (rec, 1.0),
    };
    let (lp, hp) = split(r, opts)?;
    let n = lp.record.len();
    let masks: Vec<Mask> = limits.iter().filter_map(te_mask).collect();
    let (mtie_ms, mtie_support) = super::plan(Metric::Mtie, n, r.tau0, grid, &masks)?;
    let (tdev_ms, tdev_support) = super::plan(Metric::Tdev, n, r.tau0, grid, &masks)?;
    let mut m = metrics_at(r, opts, &lp, &hp, &mtie_ms, &tdev_ms)?;
    if back != 1.0 {
        m.scale(back);
    }
    let lp_why = "the low-passed record's span (settling dropped)";
    let mut checks = Vec::new();
    for l in limits {
        let LimitMetric::Te(t) = l.metric else {
            continue;
        };
        let c = match t {
            TeMetric::DteL | TeMetric::DteLTdev => {
                let Some(mask) = te_mask(l) else {
                    continue;
                };
                let (own, _) =
                    super::plan(mask.metric, n, r.tau0, grid, std::slice::from_ref(&mask))?;
                let (curve, mut support) = if t == TeMetric::DteL {
                    (&m.dte_l_mtie, mtie_support.clone())
                } else {
                    (&m.dte_l_tdev, tdev_support.clone())
                };
                if support.top_why.starts_with("the record")
                    || support.top_why.starts_with("a third")
                {
                    support.top_why = if t == TeMetric::DteL {
                        lp_why.to_string()
                    } else {
                        format!("a third of {lp_why}")
                    };
                }
                let pts: Vec<(f64, f64)> = curve
                    .iter()
                    .filter(|p| own.binary_search(&p.m).is_ok())
                    .map(|p| (p.tau, p.value))
                    .collect();
                crate::limits::check_limit(l, &pts, &support)
            }
            _ => single(l, t, &m),
        };
        checks.push(c);
    }
    Ok((m, checks))
}

/// A single-value time-error limit judged on the metrics.
fn single(l: &Limit, t: TeMetric, m: &TeMetrics) -> LimitCheck {
    let (v, partial) = match t {
        TeMetric::Cte => match m.cte_windowed_max_abs {
            Some(w) => (Some(w), None),
            None => (
                Some(m.cte.abs()),
                Some(format!(
                    "no cTE window of {} fits the record: |cTE| over the whole record ({}) is judged",
                    format_si(m.cte_window, "s", 4),
                    format_si(m.span, "s", 4)
                )),
            ),
        },
        TeMetric::MaxTe => (Some(m.max_abs), None),
        TeMetric::MaxTeL => (Some(m.max_abs_l), None),
        TeMetric::DteH => (Some(m.dte_h_pkpk), None),
        TeMetric::DteL | TeMetric::DteLTdev => (None, None),
    };
    crate::limits::check_single(l, v, m.span, "not computed", partial)
}

/// Time-error limits judged without the filtered metrics (when they
/// cannot be computed, e.g. τ0 too long for the 0.1 Hz split, `why`):
/// `max-te` on the record as read, `cte` on its whole-record mean or the
/// cTE windows as [`metrics_checked`] does; the filtered ones `not-judged`
/// with `why`.
pub fn check_unfiltered(
    rec: &PhaseRecord,
    opts: &TeOptions,
    limits: &[Limit],
    why: &str,
) -> Vec<LimitCheck> {
    let valid: Vec<f64> = rec.x.iter().copied().filter(|v| !v.is_nan()).collect();
    let span = (rec.len().max(1) - 1) as f64 * rec.tau0;
    let mut out = Vec::new();
    for l in limits {
        let LimitMetric::Te(t) = l.metric else {
            continue;
        };
        let c = match t {
            _ if valid.len() < 2 => crate::limits::check_single(
                l,
                None,
                span,
                "the record has fewer than two valid samples",
                None,
            ),
            TeMetric::MaxTe => crate::limits::check_single(
                l,
                Some(valid.iter().fold(0.0f64, |m, v| m.max(v.abs()))),
                span,
                why,
                None,
            ),
            TeMetric::Cte => {
                let m = (opts.cte_window / rec.tau0).round();
                let w = (m >= 1.0 && m <= rec.len() as f64)
                    .then(|| windowed_means(&rec.x, m as usize))
                    .flatten();
                match w {
                    Some((v, _, _)) => crate::limits::check_single(l, Some(v), span, why, None),
                    None => {
                        let xr = valid[0];
                        let mean =
                            valid.iter().map(|v| v - xr).sum::<f64>() / valid.len() as f64 + xr;
                        crate::limits::check_single(
                            l,
                            Some(mean.abs()),
                            span,
                            why,
                            Some(format!(
                                "no cTE window of {} fits the record: |cTE| over the whole record ({}) is judged",
                                format_si(opts.cte_window, "s", 4),
                                format_si(span, "s", 4)
                            )),
                        )
                    }
                }
            }
            _ => {
                if t.is_single() {
                    crate::limits::check_single(l, None, span, why, None)
                } else {
                    crate::limits::check_limit(l, &[], &super::check::Support::unbounded(rec.tau0))
                        .not_judged_because(why)
                }
            }
        };
        out.push(c);
    }
    out
}
