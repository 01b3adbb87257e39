//! σ(τ) estimators on phase data, and [`Estimator`], the registry that every
//! other layer (CLI, EDF, plots, report) reads.
//!
//! All estimators take a [`PhaseRecord`] (frequency data are integrated first)
//! and a list of averaging factors m (τ = m·τ0). Gaps are NaN: every term
//! whose span touches a gap is skipped, and [`Estimate::terms`] reports how
//! many terms were used. A τ with no usable term is left out of the result.
//!
//! Definitions follow NIST SP 1065 (Riley 2008) and, for MTIE and TIE rms,
//! ITU-T G.810.

use crate::record::PhaseRecord;

/// One estimated deviation at one τ.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Estimate {
    /// Averaging time τ = m·τ0 in seconds.
    pub tau: f64,
    /// Averaging factor m.
    pub m: usize,
    /// The deviation (σ_y dimensionless, or seconds for time deviations).
    pub value: f64,
    /// Number of terms that entered the sum.
    pub terms: usize,
}

/// An estimate with its statistics (filled by [`crate::stats`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// The estimate.
    pub estimate: Estimate,
    /// Equivalent degrees of freedom, when known.
    pub edf: Option<f64>,
    /// Lower bound of the confidence interval on the deviation.
    pub lo: Option<f64>,
    /// Upper bound of the confidence interval on the deviation.
    pub hi: Option<f64>,
    /// Power-law exponent α of S_y(f) ∝ f^α identified at this τ.
    pub alpha: Option<i32>,
}

impl Point {
    /// A point with no statistics yet.
    pub fn bare(estimate: Estimate) -> Self {
        Self {
            estimate,
            edf: None,
            lo: None,
            hi: None,
            alpha: None,
        }
    }

    /// The noise label of [`Point::alpha`] (`WFM`, …).
    pub fn noise(&self) -> Option<&'static str> {
        self.alpha.and_then(crate::model::noise_label)
    }
}

/// One estimator's results over a τ grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    /// The estimator's trade name (`oadev`, …; derived curves such as
    /// `oadev-from-lf` or `best` carry their own name).
    pub estimator: String,
    /// The points in increasing τ.
    pub points: Vec<Point>,
}
