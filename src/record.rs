//! Time-domain records: phase x(t) in seconds and fractional frequency y(t),
//! both sampled at a fixed interval τ0, with missing samples (gaps) held as NaN.
//!
//! Conversions (NIST SP 1065, §3):
//! - frequency → phase: x_{i+1} = x_i + y_i·τ0, x_0 = 0;
//! - phase → frequency: y_i = (x_{i+1} − x_i)/τ0.
//!
//! Gaps survive both directions. A missing y_i makes the step from x_i to
//! x_{i+1} unknown, so x_{i+1} is marked missing; the integration goes on with
//! the missing step taken as zero, which only shifts later phase by an unknown
//! constant. Every estimator skips each term whose span touches a gap (see
//! [`crate::deviation`]), so that constant never enters a result. A missing
//! x_i makes y_{i−1} and y_i missing.

use crate::error::{Error, Result};

/// Which quantity a record or input file holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum DataKind {
    /// Phase (time error, time interval error) in seconds.
    Phase,
    /// Fractional frequency y = Δν/ν0 (dimensionless).
    Freq,
}

impl DataKind {
    /// The name used on the command line and in JSON (`phase`, `freq`).
    pub fn name(self) -> &'static str {
        match self {
            DataKind::Phase => "phase",
            DataKind::Freq => "freq",
        }
    }
}

impl std::str::FromStr for DataKind {
    type Err = String;
    /// `phase`, or `freq` (also `frequency`): the command line's `--data`
    /// and the DUT file's `data`.
    fn from_str(text: &str) -> std::result::Result<Self, String> {
        match text.trim() {
            "phase" => Ok(DataKind::Phase),
            "freq" | "frequency" => Ok(DataKind::Freq),
            other => Err(format!("expected phase or freq, got '{other}'")),
        }
    }
}

/// Phase record: x_i in seconds at t_i = i·τ0; NaN marks a gap.
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseRecord {
    /// Phase samples in seconds (NaN = missing).
    pub x: Vec<f64>,
    /// Sampling interval τ0 in seconds (> 0).
    pub tau0: f64,
}

/// Fractional-frequency record: y_i averaged over [t_i, t_i + τ0]; NaN marks a gap.
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyRecord {
    /// Fractional-frequency samples (NaN = missing).
    pub y: Vec<f64>,
    /// Sampling interval τ0 in seconds (> 0).
    pub tau0: f64,
}

/// A record of either kind.
#[derive(Debug, Clone, PartialEq)]
pub enum Record {
    /// Phase data.
    Phase(PhaseRecord),
    /// Frequency data.
    Frequency(FrequencyRecord),
}

fn check_tau0(tau0: f64) -> Result<()> {
    if tau0.is_finite() && tau0 > 0.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "τ0 must be a positive number of seconds, got {tau0}"
        )))
    }
}

impl PhaseRecord {
    /// A phase record; fails when τ0 is not a positive finite number.
    pub fn new(x: Vec<f64>, tau0: f64) -> Result<Self> {
        check_tau0(tau0)?;
        Ok(Self { x, tau0 })
    }

    /// Number of samples (including gaps).
    pub fn len(&self) -> usize {
        self.x.len()
    }

    /// True when the record holds no samples.
    pub fn is_empty(&self) -> bool {
        self.x.is_empty()
    }

    /// Number of missing samples.
    pub fn gaps(&self) -> usize {
        self.x.iter().filter(|v| v.is_nan()).count()
    }

    /// Span of the record, (N − 1)·τ0, in seconds.
    pub fn span(&self) -> f64 {
        self.x.len().saturating_sub(1) as f64 * self.tau0
    }

    /// First differences divided by τ0: y_i = (x_{i+1} − x_i)/τ0 (NaN where
    /// either end is missing). N phase points give N − 1 frequency points.
    pub fn to_frequency(&self) -> FrequencyRecord {
        let tau0 = self.tau0;
        let y = self.x.windows(2).map(|w| (w[1] - w[0]) / tau0).collect();
        FrequencyRecord { y, tau0 }
    }

    /// The record rescaled by an exact power of two when its magnitudes
    /// would overflow or underflow the sums of squares every deviation
    /// forms (|x| above 1e100 s or, non-zero, below 1e-100 s): returns the
    /// scaled copy and the factor to multiply results of the first degree
    /// in x (deviations, MTIE, TIE statistics) by. `None` when the record
    /// needs no rescaling (every ordinary record). Multiplying by 2^k is
    /// exact, so σ(scaled)·2^−k is the deviation of the record itself, and
    /// EDF and noise type, which do not depend on the scale, are unchanged.
    ///
    /// ```
    /// use tauwise::PhaseRecord;
    /// let r = PhaseRecord::new(vec![1e160, -2e160, 3e160], 1.0).unwrap();
    /// let (s, back) = r.rescaled_for_squares().unwrap();
    /// assert!(s.x.iter().all(|v| v.abs() <= 4.0));
    /// assert_eq!(s.x[1] * back, -2e160);
    /// assert!(PhaseRecord::new(vec![1e-9, 2e-9], 1.0).unwrap().rescaled_for_squares().is_none());
    /// ```
    pub fn rescaled_for_squares(&self) -> Option<(PhaseRecord, f64)> {
        let big = self
            .x
            .iter()
            .filter(|v| v.is_finite())
            .fold(0.0f64, |m, v| m.max(v.abs()));
        if big == 0.0 || (1e-100..=1e100).contains(&big) {
            return None;
        }
        // 2^k with big·2^k in [1, 2): exact scaling.
        let k = -(big.log2().floor() as i32);
        let scale = 2f64.powi(k);
        if !(scale.is_finite() && scale > 0.0) {
            return None;
        }
        let x = self.x.iter().map(|v| v * scale).collect();
        Some((PhaseRecord { x, tau0: self.tau0 }, 2f64.powi(-k)))
    }
}

impl FrequencyRecord {
    /// A frequency record; fails when τ0 is not a positive finite number.
    pub fn new(y: Vec<f64>, tau0: f64) -> Result<Self> {
        check_tau0(tau0)?;
        Ok(Self { y, tau0 })
    }

    /// Number of samples (including gaps).
    pub fn len(&self) -> usize {
        self.y.len()
    }

    /// True when the record holds no samples.
    pub fn is_empty(&self) -> bool {
        self.y.is_empty()
    }

    /// Number of missing samples.
    pub fn gaps(&self) -> usize {
        self.y.iter().filter(|v| v.is_nan()).count()
    }

    /// Integrate to phase: x_0 = 0, x_{i+1} = x_i + y_i·τ0. N frequency
    /// points give N + 1 phase points. A missing y_i marks x_{i+1} missing
    /// (see the module notes).
    pub fn to_phase(&self) -> PhaseRecord {
        let tau0 = self.tau0;
        let mut x = Vec::with_capacity(self.y.len() + 1);
        let mut acc = 0.0f64;
        x.push(0.0);
        for &yi in &self.y {
            if yi.is_nan() {
                x.push(f64::NAN);
            } else {
                acc += yi * tau0;
                x.push(acc);
            }
        }
        // A missing phase point must also carry into a *following* valid
        // sample only through the constant offset, which estimators ignore.
        PhaseRecord { x, tau0 }
    }
}

/// The maximal runs of a series that hold no gap (NaN), as (start, length)
/// in record order. Estimators whose terms may not straddle a gap (Theo1's
/// all-factor sums, Welch segments) work run by run.
///
/// ```
/// let x = [1.0, 2.0, f64::NAN, 3.0, f64::NAN, f64::NAN, 4.0, 5.0];
/// assert_eq!(tauwise::record::gap_free_runs(&x), vec![(0, 2), (3, 1), (6, 2)]);
/// ```
pub fn gap_free_runs(v: &[f64]) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, x) in v.iter().enumerate() {
        match (x.is_nan(), start) {
            (false, None) => start = Some(i),
            (true, Some(s)) => {
                out.push((s, i - s));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((s, v.len() - s));
    }
    out
}

impl Record {
    /// The kind of data held.
    pub fn kind(&self) -> DataKind {
        match self {
            Record::Phase(_) => DataKind::Phase,
            Record::Frequency(_) => DataKind::Freq,
        }
    }

    /// Sampling interval τ0 in seconds.
    pub fn tau0(&self) -> f64 {
        match self {
            Record::Phase(p) => p.tau0,
            Record::Frequency(f) => f.tau0,
        }
    }

    /// Number of samples as read.
    pub fn len(&self) -> usize {
        match self {
            Record::Phase(p) => p.len(),
            Record::Frequency(f) => f.len(),
        }
    }

    /// True when the record holds no samples.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Number of gaps as read.
    pub fn gaps(&self) -> usize {
        match self {
            Record::Phase(p) => p.gaps(),
            Record::Frequency(f) => f.gaps(),
        }
    }

    /// The record as phase (integrating frequency data).
    pub fn to_phase(&self) -> PhaseRecord {
        match self {
            Record::Phase(p) => p.clone(),
            Record::Frequency(f) => f.to_phase(),
        }
    }

    /// The record as phase, consuming it (no copy for phase data).
    pub fn into_phase(self) -> PhaseRecord {
        match self {
            Record::Phase(p) => p,
            Record::Frequency(f) => f.to_phase(),
        }
    }

    /// The record as fractional frequency (differencing phase data).
    pub fn to_frequency(&self) -> FrequencyRecord {
        match self {
            Record::Phase(p) => p.to_frequency(),
            Record::Frequency(f) => f.clone(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_keeps_values() {
        let y = FrequencyRecord::new(vec![1.0, 2.0, -1.0, 0.5], 2.0).unwrap();
        let x = y.to_phase();
        assert_eq!(x.x, vec![0.0, 2.0, 6.0, 4.0, 5.0]);
        assert_eq!(x.to_frequency().y, y.y);
    }

    #[test]
    fn gaps_survive() {
        let y = FrequencyRecord::new(vec![1.0, f64::NAN, 1.0], 1.0).unwrap();
        let x = y.to_phase();
        assert!(x.x[2].is_nan());
        assert_eq!(x.gaps(), 1);
        let back = x.to_frequency();
        assert!(back.y[1].is_nan() && back.y[2].is_nan());
        assert_eq!(back.y[0], 1.0);
    }

    #[test]
    fn tau0_must_be_positive() {
        assert!(PhaseRecord::new(vec![], 0.0).is_err());
        assert!(PhaseRecord::new(vec![], -1.0).is_err());
        assert!(FrequencyRecord::new(vec![], f64::NAN).is_err());
    }
}
