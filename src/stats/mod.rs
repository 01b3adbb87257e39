//! Statistics of the σ(τ) estimates: equivalent degrees of freedom (EDF),
//! confidence intervals from χ² quantiles, and the power-law noise type at
//! each τ.
//!
//! - [`mod@edf`] — the Greenhall & Riley (PTTI 2003) EDF algorithm for the Allan,
//!   modified Allan / time and Hadamard variances, and the NIST SP 1065 rules
//!   for the total variance.
//! - [`closed_form`] — the Howe, Allan & Barnes (1981) closed-form EDF of the
//!   overlapping Allan variance (a cross-check of [`mod@edf`]).
//! - [`mod@interval`] — two-sided χ² interval on a deviation.
//! - [`form_interval`] — at the last octaves (T/τ ≤ 16), the interval from
//!   the exact distribution Σλχ²₁ of the estimate's quadratic form, and
//!   [`weighted_chi2`], that distribution's CDF and quantiles (Imhof 1961,
//!   Ruben 1962).
//! - [`noise_id`] — the dominant noise at each τ ([`dominant_noise`]), the
//!   one identification every consumer uses: lag-1 autocorrelation (Riley &
//!   Greenhall 2004) with the B1 / R(n) fallback (Barnes 1969) for short
//!   series, a rule across τ on a fixed internal grid, and linear frequency
//!   drift.
//! - [`bias`] — the theoretical B1(N, μ) and R(n) ratios the fallback compares
//!   against.
//! - [`gacv`] — the autocovariance kernels of the EDF sums.
//! - [`quadratic`] — exact mean and EDF of an estimator written as a
//!   quadratic form in the phase samples.
//! - [`totals`] — bias and EDF of the total family (TOTDEV, MTOT, TTOT,
//!   HTOT), the MTOT/HTOT ones exact from the estimators' definitions.
//! - [`mod@annotate`] — estimates of one estimator → points with noise type, EDF
//!   and interval.
//!
//! The statistics layer names the variance it works on with its own
//! [`VarianceKind`], so that it does not depend on the estimator registry.

use std::ops::RangeInclusive;

pub mod annotate;
pub mod bias;
pub mod block_sums;
pub mod closed_form;
pub mod coverage;
pub mod edf;
pub mod form_interval;
pub mod gacv;
pub mod interval;
pub mod noise_id;
pub mod quadratic;
pub mod theo;
pub mod totals;
pub mod weighted_chi2;

pub use annotate::{annotate, annotate_with, StatsOptions};
pub use edf::edf;
pub use interval::{interval, DEFAULT_CONFIDENCE};
pub use noise_id::{
    dominant_noise, power_law_at, IdMethod, NoiseAt, NoiseId, NoiseIdentifier, NoiseLabel,
};
pub use totals::totvar_bias;

/// Results remembered per key, shared by every τ and record: values that
/// depend only on the key (noise type, factor, reduced record size …) and
/// take milliseconds or more to compute.
pub(crate) type Cache<K, V> =
    std::sync::OnceLock<std::sync::Mutex<std::collections::HashMap<K, Option<V>>>>;

/// The value for `key` from `cache`, computed by `f` the first time.
pub(crate) fn cached<K: std::hash::Hash + Eq, V: Copy>(
    cache: &Cache<K, V>,
    key: K,
    f: impl FnOnce() -> Option<V>,
) -> Option<V> {
    let map = cache.get_or_init(|| std::sync::Mutex::new(std::collections::HashMap::new()));
    if let Some(v) = map.lock().ok().and_then(|c| c.get(&key).copied()) {
        return v;
    }
    let v = f();
    if let Ok(mut c) = map.lock() {
        c.insert(key, v);
    }
    v
}

/// The variance behind a deviation, as far as its statistics are concerned.
///
/// Greenhall & Riley (2003) describe each variance by three numbers:
/// the order d of the phase difference (2 for the Allan family, 3 for the
/// Hadamard family), the filter factor F (F = m for unmodified variances,
/// F = 1 for modified ones, whose phase is first averaged over τ) and the
/// stride factor S (S = 1 for non-overlapping estimators, S = m for fully
/// overlapping ones: successive terms are τ/S apart).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum VarianceKind {
    /// Non-overlapping Allan variance (ADEV): d = 2, F = m, S = 1.
    Allan,
    /// Overlapping Allan variance (OADEV): d = 2, F = m, S = m.
    OverlappingAllan,
    /// Modified Allan variance (MDEV): d = 2, F = 1, S = m.
    Modified,
    /// Time variance TVAR = (τ²/3)·MVAR (TDEV): the same EDF as [`VarianceKind::Modified`].
    Time,
    /// Non-overlapping Hadamard variance (HDEV): d = 3, F = m, S = 1.
    Hadamard,
    /// Overlapping Hadamard variance (OHDEV): d = 3, F = m, S = m.
    OverlappingHadamard,
    /// Total variance (TOTDEV): d = 2; EDF by the NIST SP 1065 rule, bias
    /// exact ([`totals`]).
    Total,
    /// Modified total variance (MTOT): d = 2, phase averaged over τ;
    /// bias and EDF exact ([`totals`]).
    ModifiedTotal,
    /// Time total variance TTOT = (τ²/3)·MTOT: the statistics of
    /// [`VarianceKind::ModifiedTotal`].
    TimeTotal,
    /// Hadamard total variance (HTOT): d = 3; bias and EDF exact
    /// ([`totals`]).
    HadamardTotal,
}

impl VarianceKind {
    /// Every kind, in a fixed order.
    pub const ALL: [VarianceKind; 10] = [
        VarianceKind::Allan,
        VarianceKind::OverlappingAllan,
        VarianceKind::Modified,
        VarianceKind::Time,
        VarianceKind::Hadamard,
        VarianceKind::OverlappingHadamard,
        VarianceKind::Total,
        VarianceKind::ModifiedTotal,
        VarianceKind::TimeTotal,
        VarianceKind::HadamardTotal,
    ];

    /// Order d of the phase difference: 2 for the Allan family (second
    /// difference of phase), 3 for the Hadamard family (third difference).
    pub fn difference_order(self) -> usize {
        match self {
            VarianceKind::Hadamard
            | VarianceKind::OverlappingHadamard
            | VarianceKind::HadamardTotal => 3,
            _ => 2,
        }
    }

    /// True for the modified variances (phase averaged over τ first: F = 1).
    pub fn is_modified(self) -> bool {
        matches!(
            self,
            VarianceKind::Modified
                | VarianceKind::Time
                | VarianceKind::ModifiedTotal
                | VarianceKind::TimeTotal
        )
    }

    /// True for the total family (TOTDEV, MTOT, TTOT, HTOT): estimators on a
    /// reflected extension of the record, with a bias that depends on the
    /// noise type ([`totals`]).
    pub fn is_total(self) -> bool {
        matches!(
            self,
            VarianceKind::Total
                | VarianceKind::ModifiedTotal
                | VarianceKind::TimeTotal
                | VarianceKind::HadamardTotal
        )
    }

    /// True for the fully overlapping estimators (stride 1 sample: S = m).
    pub fn is_overlapping(self) -> bool {
        !matches!(self, VarianceKind::Allan | VarianceKind::Hadamard)
    }

    /// True for the Hadamard family.
    pub fn is_hadamard(self) -> bool {
        self.difference_order() == 3
    }

    /// The power-law exponents α (S_y ∝ f^α) for which the variance
    /// converges and its EDF is defined: α + 2d > 1 (Greenhall & Riley 2003),
    /// i.e. 2 … −2 for the Allan family and 2 … −4 for the Hadamard family.
    pub fn alpha_range(self) -> RangeInclusive<i32> {
        if self.is_hadamard() {
            -4..=2
        } else {
            -2..=2
        }
    }

    /// A short lower-case name (`allan`, `overlapping-allan`, …) for messages.
    pub fn name(self) -> &'static str {
        match self {
            VarianceKind::Allan => "allan",
            VarianceKind::OverlappingAllan => "overlapping-allan",
            VarianceKind::Modified => "modified-allan",
            VarianceKind::Time => "time",
            VarianceKind::Hadamard => "hadamard",
            VarianceKind::OverlappingHadamard => "overlapping-hadamard",
            VarianceKind::Total => "total",
            VarianceKind::ModifiedTotal => "modified-total",
            VarianceKind::TimeTotal => "time-total",
            VarianceKind::HadamardTotal => "hadamard-total",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::deviation::{compute, Estimator};
    use crate::record::PhaseRecord;

    /// On a gap-free record the term count inverts to a record length with
    /// the same EDF (the record length itself where the count is one-to-one).
    #[test]
    fn equivalent_points_invert_term_counts() {
        let n = 1000;
        let x: Vec<f64> = (0..n).map(|i| ((i * 7919) % 101) as f64 * 1e-9).collect();
        let rec = PhaseRecord::new(x, 1.0).unwrap();
        for &est in Estimator::ALL {
            let Some(kind) = VarianceKind::of_estimator(est) else {
                continue;
            };
            for e in compute(est, &rec, &[1, 2, 3, 7, 50, 100]) {
                let n_eff = kind.equivalent_points(e.m, e.terms);
                if kind.is_overlapping() {
                    assert_eq!(n_eff, n, "{est} m={}", e.m);
                }
                for alpha in kind.alpha_range() {
                    assert_eq!(edf(kind, alpha, e.m, n_eff), edf(kind, alpha, e.m, n));
                }
            }
        }
    }

    #[test]
    fn parameters() {
        assert_eq!(VarianceKind::Allan.difference_order(), 2);
        assert_eq!(VarianceKind::OverlappingHadamard.difference_order(), 3);
        assert!(VarianceKind::Time.is_modified());
        assert!(!VarianceKind::Hadamard.is_overlapping());
        assert!(VarianceKind::Total.is_overlapping());
        assert_eq!(VarianceKind::Modified.alpha_range(), -2..=2);
        assert_eq!(VarianceKind::Hadamard.alpha_range(), -4..=2);
        // α + 2d > 1 (Greenhall & Riley 2003) gives exactly these ranges.
        for k in VarianceKind::ALL {
            let d = k.difference_order() as i32;
            assert_eq!(*k.alpha_range().start(), 2 - 2 * d);
        }
    }
}
