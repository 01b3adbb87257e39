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

use crate::deviation::{compute, Estimate, Estimator};
use crate::error::{Error, Result};
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
    Ok(TeMetrics {
        cte,
        cte_window: opts.cte_window,
        cte_windowed_max_abs: windowed,
        cte_windowed_at: at,
        cte_windows: windows,
        max_abs,
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
    use super::masks::Metric;
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
    let (mtie_ms, _) = super::plan(Metric::Mtie, n, r.tau0, grid, &[])?;
    let (tdev_ms, _) = super::plan(Metric::Tdev, n, r.tau0, grid, &[])?;
    let mut m = metrics_at(r, opts, &lp, &hp, &mtie_ms, &tdev_ms)?;
    if back != 1.0 {
        m.scale(back);
    }
    Ok(m)
}
