//! Time interval error statistics over a whole record, and the removal of a
//! constant frequency offset.
//!
//! TIE follows ITU-T G.810: the time error of the clock relative to the
//! reference, counted from the start of the observation,
//! TIE_i = x_i − x_s, where x_s is the first valid sample. With the offset
//! removed, TIE_i = x_i − x_s − ŷ·(t_i − t_s), where ŷ is the least-squares
//! slope of x against t over the valid samples (a constant fractional
//! frequency offset):
//!
//! ŷ = Σ (t_i − t̄)(x_i − x̄) / Σ (t_i − t̄)².
//!
//! Reported: max |TIE|, peak-to-peak max TIE − min TIE, and
//! rms = sqrt(mean TIE²), all over the valid samples.

use crate::error::{Error, Result};
use crate::record::PhaseRecord;

/// TIE statistics of a record.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TieStats {
    /// max |TIE_i|, s.
    pub max_abs: f64,
    /// max TIE_i − min TIE_i, s.
    pub pk_pk: f64,
    /// sqrt(mean TIE_i²), s.
    pub rms: f64,
    /// The fractional frequency offset removed first, when asked for.
    pub offset_removed: Option<f64>,
    /// Number of valid samples used.
    pub points: usize,
}

/// Least-squares slope of x against t = i·τ0 over the valid samples: a
/// constant fractional frequency offset. Needs two valid samples.
pub fn frequency_offset(rec: &PhaseRecord) -> Result<f64> {
    let (mut n, mut si, mut sx) = (0usize, 0.0f64, 0.0f64);
    for (i, &x) in rec.x.iter().enumerate() {
        if !x.is_nan() {
            n += 1;
            si += i as f64;
            sx += x;
        }
    }
    if n < 2 {
        return Err(Error::insufficient(
            "a frequency offset needs at least two valid phase samples",
        ));
    }
    let (ib, xb) = (si / n as f64, sx / n as f64);
    let (mut sxy, mut sxx) = (0.0f64, 0.0f64);
    for (i, &x) in rec.x.iter().enumerate() {
        if !x.is_nan() {
            let di = i as f64 - ib;
            sxy += di * (x - xb);
            sxx += di * di;
        }
    }
    Ok(sxy / sxx / rec.tau0)
}

/// The record with a constant frequency offset y removed: x_i − y·i·τ0
/// (gaps stay gaps).
pub fn remove_offset(rec: &PhaseRecord, y: f64) -> PhaseRecord {
    let tau0 = rec.tau0;
    PhaseRecord {
        x: rec
            .x
            .iter()
            .enumerate()
            .map(|(i, &x)| x - y * i as f64 * tau0)
            .collect(),
        tau0,
    }
}

/// TIE statistics of a record; with `remove_offset` the least-squares
/// frequency offset is removed first (and reported).
///
/// ```
/// use tauwise::{PhaseRecord, wander::tie::tie_stats};
/// // A ramp of 1 ns per sample: TIE = 0, 1, 2, 3 ns (analytic).
/// let r = PhaseRecord::new(vec![5e-9, 6e-9, 7e-9, 8e-9], 1.0).unwrap();
/// let s = tie_stats(&r, false).unwrap();
/// assert!((s.max_abs - 3e-9).abs() < 1e-20 && (s.pk_pk - 3e-9).abs() < 1e-20);
/// assert!((s.rms - (14.0f64 / 4.0).sqrt() * 1e-9).abs() < 1e-20);
/// // With the offset removed, nothing is left.
/// assert!(tie_stats(&r, true).unwrap().max_abs < 1e-20);
/// ```
pub fn tie_stats(rec: &PhaseRecord, remove_offset: bool) -> Result<TieStats> {
    let y = if remove_offset {
        Some(frequency_offset(rec)?)
    } else {
        None
    };
    let start = rec
        .x
        .iter()
        .position(|v| !v.is_nan())
        .ok_or_else(|| Error::insufficient("the record holds no valid phase sample"))?;
    let x0 = rec.x[start];
    let slope = y.unwrap_or(0.0) * rec.tau0;
    let (mut lo, mut hi, mut ss, mut n) = (f64::INFINITY, f64::NEG_INFINITY, 0.0f64, 0usize);
    for (i, &x) in rec.x.iter().enumerate().skip(start) {
        if x.is_nan() {
            continue;
        }
        let tie = x - x0 - slope * (i - start) as f64;
        lo = lo.min(tie);
        hi = hi.max(tie);
        ss += tie * tie;
        n += 1;
    }
    Ok(TieStats {
        max_abs: lo.abs().max(hi.abs()),
        pk_pk: hi - lo,
        rms: (ss / n as f64).sqrt(),
        offset_removed: y,
        points: n,
    })
}
