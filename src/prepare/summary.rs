//! The figures `tauwise inspect` shows for a record.

use super::drift::{fit_drift_y, DriftFit, DriftModel};
use super::offset::{frequency_of, mean_valid};
use super::outliers::{find_outliers_y, Outliers};
use crate::error::{Error, Result};
use crate::record::Record;

/// The figures `tauwise inspect` shows for a record.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    /// Samples, gaps included.
    pub points: usize,
    /// Missing samples.
    pub gaps: usize,
    /// (N − 1)·τ0 for phase, N·τ0 for frequency (the time the record covers).
    pub span: f64,
    /// Sampling interval.
    pub tau0: f64,
    /// Mean fractional-frequency offset ([`super::mean_frequency`]).
    pub frequency_offset: Option<f64>,
    /// Linear drift fit ([`super::fit_drift`]), when at least 2 frequency values.
    pub drift: Option<DriftFit>,
    /// Frequency outliers beyond the requested MAD limit.
    pub outliers: Option<Outliers>,
}

/// Summarise a record: size, span, offset, linear drift, outliers beyond
/// `outlier_limit`·MAD of the frequency.
pub fn summarize(record: &Record, outlier_limit: f64) -> Result<Summary> {
    let y = frequency_of(record);
    let span = match record {
        Record::Phase(p) => p.span(),
        Record::Frequency(f) => f.len() as f64 * f.tau0,
    };
    let outliers = match find_outliers_y(&y, outlier_limit) {
        Ok(o) => Some(o),
        Err(Error::Insufficient(_)) => None,
        Err(e) => return Err(e),
    };
    Ok(Summary {
        points: record.len(),
        gaps: record.gaps(),
        span,
        tau0: record.tau0(),
        frequency_offset: mean_valid(&y),
        drift: fit_drift_y(&y, record.tau0(), DriftModel::Linear).ok(),
        outliers,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prepare::testing::close;
    use crate::record::PhaseRecord;

    #[test]
    fn summary_of_constructed_record() {
        // x = y0·t + D·t²/2: y_i = y0 + D·(i + ½)τ0 exactly (analytic).
        let (y0, d, tau0) = (2e-9, 1e-14, 10.0);
        let x: Vec<f64> = (0..1000)
            .map(|i| {
                let t = i as f64 * tau0;
                y0 * t + d * t * t / 2.0
            })
            .collect();
        let s = summarize(&Record::Phase(PhaseRecord::new(x, tau0).unwrap()), 5.0).unwrap();
        assert_eq!((s.points, s.gaps), (1000, 0));
        assert_eq!(s.span, 9990.0);
        let mean = y0 + d * 999.0 * tau0 / 2.0;
        assert!(close(s.frequency_offset.unwrap(), mean, 1e-9));
        assert!(close(s.drift.unwrap().per_day(), d * 86400.0, 1e-6));
    }
}
