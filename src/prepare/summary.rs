//! The figures `tauwise inspect` shows for a record.

use super::drift::{fit_drift_at, DriftFit, DriftModel};
use super::outliers::{find_outliers_at, Outliers};
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
///
/// Memory: the record alone. The frequencies (for phase,
/// y_i = (x_{i+1} − x_i)/τ0 as in [`crate::record::PhaseRecord::to_frequency`])
/// are read where they are used: the offset is their mean in index order,
/// the drift fit reads them through a closure
/// (`prepare::drift::fit_drift_at`), and the outlier search takes its
/// median and MAD by a radix selection over them
/// (`prepare::outliers::find_outliers_at`) — no copy of the record.
pub fn summarize(record: &Record, outlier_limit: f64) -> Result<Summary> {
    match record {
        Record::Phase(p) => {
            let (x, tau0) = (&p.x, p.tau0);
            summarize_at(
                record,
                x.len().saturating_sub(1),
                |i| (x[i + 1] - x[i]) / tau0,
                outlier_limit,
            )
        }
        Record::Frequency(f) => summarize_at(record, f.y.len(), |i| f.y[i], outlier_limit),
    }
}

/// [`summarize`] given the frequencies y_i = `at(i)`, i < `len`.
fn summarize_at(
    record: &Record,
    len: usize,
    at: impl Fn(usize) -> f64 + Sync,
    outlier_limit: f64,
) -> Result<Summary> {
    let span = match record {
        Record::Phase(p) => p.span(),
        Record::Frequency(f) => f.len() as f64 * f.tau0,
    };
    let (s, n) = (0..len)
        .map(&at)
        .filter(|v| !v.is_nan())
        .fold((0.0, 0usize), |(s, n), v| (s + v, n + 1));
    let frequency_offset = (n > 0).then(|| s / n as f64);
    let drift = fit_drift_at(len, &at, record.tau0(), DriftModel::Linear).ok();
    let found = find_outliers_at(len, &at, outlier_limit);
    let outliers = match found {
        Ok(o) => Some(o),
        Err(Error::Insufficient(_)) => None,
        Err(e) => return Err(e),
    };
    Ok(Summary {
        points: record.len(),
        gaps: record.gaps(),
        span,
        tau0: record.tau0(),
        frequency_offset,
        drift,
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

    /// The summary's outliers (found on the frequency copy it hands over)
    /// are those of `find_outliers` on the record, phase and frequency, with
    /// gaps (the same MAD rule; seeded random data with planted jumps).
    #[test]
    fn summary_outliers_are_find_outliers() {
        use crate::prepare::outliers::find_outliers;
        use crate::record::FrequencyRecord;
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        let mut x: Vec<f64> = Vec::new();
        let mut acc = 0.0;
        for i in 0..2001 {
            acc += rng.gen_range(-1.0..1.0) * 1e-9 + if i % 397 == 5 { 4e-8 } else { 0.0 };
            x.push(if i % 251 == 9 { f64::NAN } else { acc });
        }
        let y: Vec<f64> = x.windows(2).map(|w| (w[1] - w[0]) / 2.0).collect();
        for r in [
            Record::Phase(PhaseRecord::new(x, 2.0).unwrap()),
            Record::Frequency(FrequencyRecord::new(y, 2.0).unwrap()),
        ] {
            let s = summarize(&r, 5.0).unwrap();
            let want = find_outliers(&r, 5.0).unwrap();
            assert!(!want.indices.is_empty());
            assert_eq!(s.outliers.unwrap(), want);
        }
        let r = Record::Phase(PhaseRecord::new(vec![0.0, 1.0, 3.0], 1.0).unwrap());
        assert!(summarize(&r, 0.0).is_err());
    }
}
