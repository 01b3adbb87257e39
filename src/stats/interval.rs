//! Two-sided confidence interval on a deviation from its EDF.
//!
//! With ν equivalent degrees of freedom, ν·σ̂²/σ² ~ χ²_ν (NIST SP 1065 §5.3),
//! so at confidence P the interval on σ is
//!
//! σ_lo = σ̂·sqrt(ν / χ²_ν((1 + P)/2)),  σ_hi = σ̂·sqrt(ν / χ²_ν((1 − P)/2)),
//!
//! where χ²_ν(p) is the p-quantile of the χ² distribution with ν degrees of
//! freedom (statrs `ChiSquared`; ν need not be an integer). The default P is
//! 0.683, the one-sigma probability of a normal variable.

use crate::error::{Error, Result};
use statrs::distribution::{ChiSquared, Continuous, ContinuousCDF, Normal};
use statrs::function::gamma::ln_gamma;

/// The default two-sided confidence, 0.683 (one sigma).
pub const DEFAULT_CONFIDENCE: f64 = 0.683;

/// The p-quantile of χ² with `dof` degrees of freedom.
///
/// statrs' inverse CDF is polished here by safeguarded Newton steps on its
/// own CDF; above [`WILSON_HILFERTY_DOF`] the Wilson–Hilferty form is used,
/// and in the far lower tail of ν ≲ 1 the leading term of the series.
///
/// ```
/// use tauwise::stats::interval::chi2_quantile;
/// // NIST/SEMATECH e-Handbook χ² table, 10 degrees of freedom.
/// assert!((chi2_quantile(0.025, 10.0).unwrap() - 3.247).abs() < 5e-4);
/// assert!((chi2_quantile(0.975, 10.0).unwrap() - 20.483).abs() < 5e-4);
/// ```
pub fn chi2_quantile(p: f64, dof: f64) -> Result<f64> {
    if !(p > 0.0 && p < 1.0) {
        return Err(Error::invalid(format!(
            "χ² quantile probability must be in (0, 1), got {p}"
        )));
    }
    if !(dof.is_finite() && dof > 0.0) {
        return Err(Error::invalid(format!(
            "degrees of freedom must be a positive number, got {dof}"
        )));
    }
    if dof > WILSON_HILFERTY_DOF {
        return Ok(wilson_hilferty(p, dof));
    }
    let dist = ChiSquared::new(dof)
        .map_err(|e| Error::invalid(format!("χ² with {dof} degrees of freedom: {e}")))?;
    // Far lower tail (only reachable for ν of order 1 or less): P(a, x) =
    // x^a/Γ(a + 1)·(1 + O(x)) with a = ν/2, x = q/2, so
    // q = 2·(p·Γ(a + 1))^{1/a}, relative error O(q). statrs' CDF is floored
    // near x = 1e−15 there, so its quantile cannot be polished.
    let a = 0.5 * dof;
    let tail = 2.0 * ((p.ln() + ln_gamma(a + 1.0)) / a).exp();
    if tail < 1e-10 {
        return Ok(tail);
    }
    // Bracket [lo, hi] around the quantile, starting from statrs' estimate.
    let start = dist.inverse_cdf(p);
    let mut q = if start.is_finite() && start > 0.0 {
        start
    } else {
        dof
    };
    let mut lo = 0.0_f64;
    let mut hi = f64::INFINITY;
    for _ in 0..200 {
        let c = dist.cdf(q);
        let err = c - p;
        if err.abs() <= 1e-14 {
            break;
        }
        if err > 0.0 {
            hi = hi.min(q);
        } else {
            lo = lo.max(q);
        }
        let dens = dist.pdf(q);
        let mut next = if dens > 0.0 { q - err / dens } else { f64::NAN };
        if !(next.is_finite() && next > lo && next < hi) {
            next = if hi.is_finite() {
                0.5 * (lo + hi)
            } else {
                2.0 * q.max(1e-300)
            };
        }
        if (next - q).abs() <= 1e-15 * q {
            q = next;
            break;
        }
        q = next;
    }
    Ok(q)
}

/// Above this many degrees of freedom [`chi2_quantile`] uses the
/// Wilson–Hilferty form (statrs' incomplete gamma loses accuracy near 1e7).
pub const WILSON_HILFERTY_DOF: f64 = 1e5;

/// Wilson & Hilferty (1931): χ²_ν(p) ≈ ν·(1 − 2/(9ν) + z_p·sqrt(2/(9ν)))³,
/// z_p the standard normal quantile (statrs `Normal`); relative error well
/// below 1e−7 for ν > 1e5.
fn wilson_hilferty(p: f64, dof: f64) -> f64 {
    let z = Normal::new(0.0, 1.0).map_or(f64::NAN, |n| n.inverse_cdf(p));
    let c = 2.0 / (9.0 * dof);
    dof * (1.0 - c + z * c.sqrt()).powi(3)
}

/// Two-sided interval (σ_lo, σ_hi) on the deviation `dev` with `edf`
/// equivalent degrees of freedom at two-sided confidence `confidence`.
///
/// Errors with [`Error::Invalid`] when `confidence` is not inside (0, 1),
/// `edf` is not positive, or `dev` is negative or not finite.
///
/// ```
/// use tauwise::stats::interval;
/// let (lo, hi) = interval(1e-11, 10.0, 0.95).unwrap();
/// // NIST/SEMATECH e-Handbook χ² table, ν = 10: 3.247 and 20.483.
/// assert!((lo - 1e-11 * (10.0f64 / 20.483).sqrt()).abs() < 1e-15);
/// assert!((hi - 1e-11 * (10.0f64 / 3.247).sqrt()).abs() < 1e-15);
/// ```
pub fn interval(dev: f64, edf: f64, confidence: f64) -> Result<(f64, f64)> {
    check_confidence(confidence)?;
    if !(dev.is_finite() && dev >= 0.0) {
        return Err(Error::invalid(format!(
            "deviation must be a finite non-negative number, got {dev}"
        )));
    }
    if !(edf.is_finite() && edf > 0.0) {
        return Err(Error::invalid(format!(
            "EDF must be a positive number, got {edf}"
        )));
    }
    let upper_q = chi2_quantile(0.5 * (1.0 + confidence), edf)?;
    let lower_q = chi2_quantile(0.5 * (1.0 - confidence), edf)?;
    Ok((dev * (edf / upper_q).sqrt(), dev * (edf / lower_q).sqrt()))
}

/// Check a two-sided confidence: it must lie strictly inside (0, 1).
pub fn check_confidence(confidence: f64) -> Result<()> {
    if confidence > 0.0 && confidence < 1.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "confidence must be strictly between 0 and 1 (e.g. 0.683 or 0.95), got {confidence}"
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantile_inverts_cdf() {
        for &dof in &[0.3, 1.0, 2.5, 10.0, 100.0, 1e4, 1e5] {
            let dist = ChiSquared::new(dof).unwrap();
            for &p in &[1e-6, 0.0015, 0.1585, 0.5, 0.8415, 0.975, 0.999999] {
                let q = chi2_quantile(p, dof).unwrap();
                if q < 1e-10 {
                    // series P(a, x) ≈ x^a/Γ(a+1) (analytic)
                    let a = dof / 2.0;
                    let series = ((q / 2.0).ln() * a - ln_gamma(a + 1.0)).exp();
                    assert!((series / p - 1.0).abs() < 1e-8);
                    continue;
                }
                assert!(
                    (dist.cdf(q) - p).abs() < 1e-8,
                    "ν={dof} p={p}: q={q} cdf={}",
                    dist.cdf(q)
                );
            }
        }
    }

    /// At the switch-over ν the polished statrs quantile and Wilson–Hilferty
    /// agree (the latter an analytic approximation with O(1/ν) error).
    #[test]
    fn wilson_hilferty_meets_statrs() {
        let nu = WILSON_HILFERTY_DOF;
        for &p in &[0.0005, 0.1585, 0.5, 0.8415, 0.9995] {
            let exact = chi2_quantile(p, nu).unwrap();
            let wh = wilson_hilferty(p, nu);
            assert!((exact / wh - 1.0).abs() < 1e-7, "p={p}: {exact} vs {wh}");
            let above = chi2_quantile(p, nu * 1.000001).unwrap();
            assert!((above / exact - 1.0).abs() < 1e-5);
        }
    }

    #[test]
    fn bad_confidence() {
        for c in [0.0, 1.0, -0.5, 1.5, f64::NAN] {
            assert!(matches!(interval(1.0, 10.0, c), Err(Error::Invalid(_))));
        }
        assert!(interval(1.0, 0.0, 0.683).is_err());
        assert!(interval(f64::NAN, 10.0, 0.683).is_err());
    }
}
