//! Preparing a record for analysis: frequency offset and drift, outliers,
//! gap filling and decimation.
//!
//! Everything here works on the fractional frequency of the record. For a
//! frequency record that is y_i itself; for a phase record it is the first
//! difference y_i = (x_{i+1} − x_i)/τ0 (NIST SP 1065 §3). Either way y_i is
//! the mean frequency over [iτ0, (i+1)τ0], so it is placed at the interval's
//! centre t_i = (i + ½)τ0. Gaps (NaN) are left out of every fit and statistic.
//!
//! Changes are written back in the record's own kind: a drift removed from
//! phase data is removed as the phase it integrates to, exactly, so that the
//! first differences of the result are the drift-free frequencies.
//!
//! One idea per file: [`offset`] (the frequency and its mean), [`drift`]
//! (drift models, their least-squares fit and removal), [`outliers`] (the
//! MAD test and the removal of outliers), [`gaps`] (gap filling),
//! [`decimate`](mod@decimate), [`summary`] (what `tauwise inspect` reports) and
//! [`pipeline`] (the step list shared by `tauwise prepare` and the report).

pub mod decimate;
pub mod drift;
pub mod gaps;
pub mod offset;
pub mod outliers;
pub mod pipeline;
pub mod summary;

pub use decimate::decimate;
pub use drift::{fit_drift, fit_drift_y, remove_drift, DriftFit, DriftModel};
pub use gaps::{fill_gaps, GapFill};
pub use offset::{frequency_of, mean_frequency};
pub use outliers::{
    find_outliers, find_outliers_y, median_in_place, remove_outliers, OutlierRemoval, Outliers,
    MAD_SCALE,
};
pub use summary::{summarize, Summary};

/// Seconds per day, for drift figures "per day".
pub const DAY: f64 = 86400.0;

/// Helpers shared by the unit tests of this module's files.
#[cfg(test)]
pub(crate) mod testing {
    use crate::record::{FrequencyRecord, Record};

    pub(crate) fn freq(y: Vec<f64>) -> Record {
        Record::Frequency(FrequencyRecord::new(y, 1.0).unwrap())
    }

    /// A small deterministic generator for test data (xorshift64*).
    pub(crate) struct Rng(pub(crate) u64);
    impl Rng {
        pub(crate) fn next(&mut self) -> f64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        }
    }

    pub(crate) fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::{FrequencyRecord, PhaseRecord, Record};

    fn record_strategy() -> impl proptest::strategy::Strategy<Value = (Record, f64)> {
        use proptest::prelude::*;
        (
            proptest::collection::vec(prop_oneof![4 => -1e-6f64..1e-6, 1 => Just(f64::NAN)], 0..60),
            any::<bool>(),
            0.5f64..10.0,
            0.5f64..8.0,
        )
            .prop_map(|(v, phase, tau0, k)| {
                let r = if phase {
                    Record::Phase(PhaseRecord { x: v, tau0 })
                } else {
                    Record::Frequency(FrequencyRecord { y: v, tau0 })
                };
                (r, k)
            })
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig { cases: 200, ..Default::default() })]

        /// Any record, however short or gappy: no panic, and the documented
        /// invariants hold.
        #[test]
        fn never_panics_and_keeps_invariants((r, k) in record_strategy()) {
            let _ = summarize(&r, k);
            if let Ok(o) = find_outliers(&r, k) {
                let rem = remove_outliers(&r, &o);
                proptest::prop_assert_eq!(rem.record.len(), r.len());
                proptest::prop_assert!(rem.record.gaps() >= r.gaps());
                proptest::prop_assert_eq!(rem.record.gaps() - r.gaps(), rem.replaced);
            }
            for model in [DriftModel::Linear, DriftModel::Quadratic] {
                if let Ok(f) = fit_drift(&r, model) {
                    let d = remove_drift(&r, &f);
                    proptest::prop_assert_eq!(d.len(), r.len());
                    proptest::prop_assert_eq!(d.gaps(), r.gaps());
                }
            }
            let g = fill_gaps(&r);
            proptest::prop_assert_eq!(g.record.len(), r.len());
            proptest::prop_assert_eq!(g.record.gaps(), g.left);
            proptest::prop_assert_eq!(g.filled + g.left, r.gaps());
            for n in 1..4 {
                if let Ok(d) = decimate(&r, n) {
                    proptest::prop_assert!(d.len() >= 2);
                    proptest::prop_assert_eq!(d.tau0(), r.tau0() * n as f64);
                }
            }
        }
    }
}
