//! Decimation by an integer factor.

use crate::error::{Error, Result};
use crate::record::{FrequencyRecord, PhaseRecord, Record};

/// Decimate by an integer factor n, giving τ0' = n·τ0.
///
/// Phase: keep every n-th sample, x'_k = x_{kn} (phase is a point value, so
/// this is exact; NIST SP 1065 §5). Frequency: average blocks of n values,
/// y'_k = (1/n) Σ_{i=kn}^{kn+n−1} y_i (the mean frequency over the longer
/// interval); a block holding a gap gives a gap, and a final partial block is
/// dropped. The result must keep at least 2 samples.
pub fn decimate(record: &Record, n: usize) -> Result<Record> {
    if n == 0 {
        return Err(Error::invalid(
            "decimation factor 0: expected a whole number ≥ 1",
        ));
    }
    let tau0 = record.tau0() * n as f64;
    let out = match record {
        Record::Phase(p) => Record::Phase(PhaseRecord {
            x: p.x.iter().step_by(n).copied().collect(),
            tau0,
        }),
        Record::Frequency(f) => Record::Frequency(FrequencyRecord {
            y: f.y
                .chunks_exact(n)
                .map(|c| c.iter().sum::<f64>() / n as f64)
                .collect(),
            tau0,
        }),
    };
    if out.len() < 2 {
        return Err(Error::insufficient(format!(
            "decimating {} samples by {n} leaves {}; expected at least 2",
            record.len(),
            out.len()
        )));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prepare::testing::freq;

    #[test]
    fn decimation() {
        let r = Record::Phase(PhaseRecord::new((0..10).map(f64::from).collect(), 1.0).unwrap());
        let d = decimate(&r, 3).unwrap();
        assert_eq!(d.tau0(), 3.0);
        assert_eq!(d.to_phase().x, vec![0.0, 3.0, 6.0, 9.0]);
        let f = decimate(&freq(vec![1.0, 3.0, f64::NAN, 1.0, 5.0]), 2).unwrap();
        let y = f.to_frequency().y;
        assert_eq!(y[0], 2.0);
        assert!(y[1].is_nan());
        assert_eq!(y.len(), 2);
        assert!(decimate(&r, 0).is_err());
        assert!(decimate(&r, 10).is_err());
    }
}
