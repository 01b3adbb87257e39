//! Grids of averaging times τ = m·τ0, given as averaging factors m.
//!
//! - `octave` (the default): m = 1, 2, 4, 8, …
//! - `decade`: the 1-2-5 sequence m = 1, 2, 5, 10, 20, 50, …
//! - `all`: every m from 1 to the largest valid one.
//! - `log:N`: N points per decade, m = round(10^(k/N)), duplicates dropped.
//! - an explicit list of durations, `1,10,100s,1h` (plain numbers are seconds;
//!   see [`crate::units::parse_duration`]); each must be a whole multiple of τ0.

use crate::error::{Error, Result};
use crate::units::{format_si, parse_duration, UnitError};

/// A τ grid, as chosen on the command line with `--taus`.
#[derive(Debug, Clone, PartialEq)]
pub enum TauGrid {
    /// m = 2^k.
    Octave,
    /// m = {1, 2, 5}·10^k.
    Decade,
    /// Every m.
    All,
    /// N points per decade, m = round(10^(k/N)).
    PerDecade(u32),
    /// Explicit averaging times in seconds.
    Explicit(Vec<f64>),
}

impl std::str::FromStr for TauGrid {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        TauGrid::parse(text)
    }
}

const GRID_EXPECTED: &str =
    "expected octave, decade, all, log:N (N points per decade, 1 to 1000) or a comma-separated list of durations such as 1,10,100s,1h";

/// Theo1's smallest factor m′ (τ = 7.5·τ0; NIST SP 1065 §5.2.15: m even,
/// 10 ≤ m ≤ N − 1).
pub const THEO1_MIN_FACTOR: usize = 10;

/// Relative tolerance for an explicit τ to count as a whole multiple of τ0.
const WHOLE_TOL: f64 = 1e-6;

impl TauGrid {
    /// Parse `octave`, `decade`, `all`, `log:N` or a list of durations.
    ///
    /// ```
    /// use tauwise::tau::TauGrid;
    /// assert_eq!(TauGrid::parse("octave").unwrap(), TauGrid::Octave);
    /// assert_eq!(TauGrid::parse("log:10").unwrap(), TauGrid::PerDecade(10));
    /// assert_eq!(TauGrid::parse("1,10,100s,1h").unwrap(),
    ///            TauGrid::Explicit(vec![1.0, 10.0, 100.0, 3600.0]));
    /// assert!(TauGrid::parse("weekly").is_err());
    /// ```
    pub fn parse(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let lower = t.to_ascii_lowercase();
        let invalid = |reason: String| UnitError::Invalid {
            text: t.to_string(),
            reason,
        };
        match lower.as_str() {
            "" => return Err(invalid(format!("empty τ grid: {GRID_EXPECTED}"))),
            "octave" => return Ok(TauGrid::Octave),
            "decade" => return Ok(TauGrid::Decade),
            "all" => return Ok(TauGrid::All),
            _ => {}
        }
        if let Some(n) = lower.strip_prefix("log:") {
            return match n.trim().parse::<u32>() {
                Ok(k) if (1..=1000).contains(&k) => Ok(TauGrid::PerDecade(k)),
                _ => Err(invalid(format!(
                    "τ grid '{t}': '{n}' is not a number of points per decade from 1 to 1000"
                ))),
            };
        }
        let mut taus = Vec::new();
        for part in t.split(',') {
            let p = part.trim();
            let tau = parse_duration(p).map_err(|_| {
                invalid(format!(
                    "τ grid '{t}': '{p}' is not a duration; {GRID_EXPECTED}"
                ))
            })?;
            if tau <= 0.0 || tau.is_nan() {
                return Err(invalid(format!("τ grid '{t}': τ = '{p}' must be positive")));
            }
            taus.push(tau);
        }
        Ok(TauGrid::Explicit(taus))
    }

    /// The averaging factors to pass to [`crate::deviation::compute`] for
    /// `est` on a record of `n_phase` samples at τ0: [`TauGrid::ms`] up to
    /// the estimator's largest factor, except for Theo1, which lives on its
    /// own lattice τ = 0.75·m′·τ0 with m′ even and m′ ≥ 10 (NIST SP 1065
    /// §5.2.15): there the octave grid is τ = 7.5·2^k·τ0 (m′ = 10·2^k,
    /// exactly octave-spaced from Theo1's shortest τ), and every other grid
    /// keeps the τ whose nearest lattice point has m′ ≥ 10. The factors
    /// returned for Theo1 are grid factors m = round(0.75·m′), which
    /// `compute` maps back to m′.
    ///
    /// ```
    /// use tauwise::deviation::Estimator;
    /// use tauwise::tau::TauGrid;
    /// let ms = TauGrid::Octave.ms_for(Estimator::Theo1, 1.0, 1001).unwrap();
    /// assert_eq!(ms, vec![8, 15, 30, 60, 120, 240, 480]); // τ = 7.5, 15, 30, … s
    /// ```
    pub fn ms_for(
        &self,
        est: crate::deviation::Estimator,
        tau0: f64,
        n_phase: usize,
    ) -> Result<Vec<usize>> {
        let max_m = est.max_m(n_phase);
        if est != crate::deviation::Estimator::Theo1 {
            return self.ms(tau0, max_m);
        }
        let top = n_phase.saturating_sub(1) & !1; // largest even m′ ≤ N − 1
        let lattice = |m: usize| 2 * ((m as f64 / 1.5).round() as usize);
        let out: Vec<usize> = match self {
            TauGrid::Octave => {
                // Check τ0 as ms() does.
                self.ms(tau0, 0)?;
                let mut v = Vec::new();
                let mut mp = THEO1_MIN_FACTOR;
                while mp <= top {
                    v.push((0.75 * mp as f64).round() as usize);
                    match mp.checked_mul(2) {
                        Some(n) => mp = n,
                        None => break,
                    }
                }
                v
            }
            _ => self
                .ms(tau0, max_m)?
                .into_iter()
                .filter(|&m| lattice(m) >= THEO1_MIN_FACTOR)
                .collect(),
        };
        Ok(out)
    }

    /// Averaging factors for this grid: sorted, deduplicated, within
    /// 1..=max_m. Explicit τ must be whole multiples of τ0 (within 1e-6
    /// relative), else [`Error::Invalid`] naming the τ; an explicit τ beyond
    /// max_m·τ0 (too long for the record) is left out, like any τ that cannot
    /// be computed.
    ///
    /// ```
    /// use tauwise::tau::TauGrid;
    /// assert_eq!(TauGrid::Octave.ms(1.0, 20).unwrap(), vec![1, 2, 4, 8, 16]);
    /// assert_eq!(TauGrid::Decade.ms(1.0, 60).unwrap(), vec![1, 2, 5, 10, 20, 50]);
    /// assert!(TauGrid::Explicit(vec![1.5]).ms(1.0, 10).is_err());
    /// ```
    pub fn ms(&self, tau0: f64, max_m: usize) -> Result<Vec<usize>> {
        if !(tau0.is_finite() && tau0 > 0.0) {
            return Err(Error::invalid(format!(
                "τ0 must be a positive number of seconds, got {tau0}"
            )));
        }
        let mut out: Vec<usize> = match self {
            TauGrid::Octave => {
                let mut v = Vec::new();
                let mut m = 1usize;
                while m <= max_m {
                    v.push(m);
                    match m.checked_mul(2) {
                        Some(n) => m = n,
                        None => break,
                    }
                }
                v
            }
            TauGrid::Decade => {
                let mut v = Vec::new();
                let mut dec = 1usize;
                'outer: loop {
                    for k in [1usize, 2, 5] {
                        match dec.checked_mul(k) {
                            Some(m) if m <= max_m => v.push(m),
                            _ => break 'outer,
                        }
                    }
                    match dec.checked_mul(10) {
                        Some(d) => dec = d,
                        None => break,
                    }
                }
                v
            }
            TauGrid::All => (1..=max_m).collect(),
            TauGrid::PerDecade(n) => {
                let n = (*n).max(1) as f64;
                let mut v = Vec::new();
                let mut k = 0u32;
                loop {
                    let m = 10f64.powf(k as f64 / n).round();
                    if m > max_m as f64 {
                        break;
                    }
                    v.push(m as usize);
                    k += 1;
                }
                v
            }
            TauGrid::Explicit(taus) => {
                let mut v = Vec::new();
                for &tau in taus {
                    let ratio = tau / tau0;
                    let m = ratio.round();
                    if !(tau.is_finite() && m >= 1.0 && (ratio - m).abs() <= WHOLE_TOL * ratio) {
                        return Err(Error::invalid(format!(
                            "τ = {} is not a whole multiple of τ0 = {}",
                            format_si(tau, "s", 6),
                            format_si(tau0, "s", 6)
                        )));
                    }
                    if m <= max_m as f64 {
                        v.push(m as usize);
                    }
                }
                v
            }
        };
        out.sort_unstable();
        out.dedup();
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn empty_when_record_too_short() {
        assert!(TauGrid::Octave.ms(1.0, 0).unwrap().is_empty());
        assert!(TauGrid::All.ms(1.0, 0).unwrap().is_empty());
    }

    #[test]
    fn bad_tau0() {
        assert!(TauGrid::Octave.ms(0.0, 10).is_err());
    }
}
