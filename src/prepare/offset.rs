//! The fractional frequency of a record and its mean offset.

use crate::record::Record;

/// The fractional frequency of a record, y_i over [iτ0, (i+1)τ0] (NaN = gap).
pub fn frequency_of(record: &Record) -> Vec<f64> {
    match record {
        Record::Frequency(f) => f.y.clone(),
        Record::Phase(p) => p.to_frequency().y,
    }
}

/// Mean fractional-frequency offset: the mean of the valid y_i,
/// ȳ = (1/n) Σ y_i. For gap-free phase data this is (x_{N−1} − x_0)/((N−1)τ0).
/// `None` when no frequency value is available.
pub fn mean_frequency(record: &Record) -> Option<f64> {
    mean_valid(&frequency_of(record))
}

/// The mean of the values that are not NaN; `None` when there are none.
pub(crate) fn mean_valid(v: &[f64]) -> Option<f64> {
    let (s, n) = v
        .iter()
        .filter(|x| !x.is_nan())
        .fold((0.0, 0usize), |(s, n), x| (s + x, n + 1));
    (n > 0).then(|| s / n as f64)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prepare::testing::close;
    use crate::record::PhaseRecord;

    #[test]
    fn mean_frequency_of_phase_is_end_to_end_slope() {
        // Analytic: for gap-free phase, the mean of first differences is
        // (x_{N−1} − x_0)/((N−1)τ0).
        let x: Vec<f64> = (0..50).map(|i| 1e-9 * (i as f64).powi(2)).collect();
        let r = Record::Phase(PhaseRecord::new(x.clone(), 2.0).unwrap());
        let m = mean_frequency(&r).unwrap();
        assert!(close(m, (x[49] - x[0]) / (49.0 * 2.0), 1e-12));
    }
}
