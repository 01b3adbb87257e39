//! Theoretical bias ratios used to tell power-law noises apart when a series
//! is too short for the lag-1 autocorrelation.
//!
//! - B1(N, μ), Barnes (1969), "Tables of bias functions, B1 and B2, for
//!   variances based on finite samples of processes with power law spectral
//!   densities", NBS Technical Note 375, as reproduced in the bias-function section of
//!   NIST SP 1065: the expected ratio of the N-sample variance to the
//!   two-sample (Allan) variance of N frequency averages,
//!
//!   B1(N, μ) = N(1 − N^μ) / (2(N − 1)(1 − 2^μ)),  μ ≠ 0,
//!   B1(N, 0) = N ln N / (2(N − 1) ln 2),
//!
//!   where σ_y²(τ) ∝ τ^μ: μ = −α − 1 for α ≤ 1 and μ = −2 for α = 2 (WPM and
//!   FPM share μ = −2 and cannot be told apart by B1).
//! - R(n) = Mod σ_y²(τ)/σ_y²(τ) at τ = nτ0, from the IEEE Std 1139 table
//!   (docs/checks.md §C) with the cut-off f_h = 1/(2τ0) of sampled data:
//!   WPM 1/n; FPM 3.37/(1.038 + 3 ln(πn)); WFM 1/2; FFM 0.936/(2 ln 2);
//!   RWFM 5.42·6/(2π)². The WPM value is exact for sampled white phase.

use std::f64::consts::{LN_2, PI};

/// μ, the exponent of σ_y²(τ) ∝ τ^μ, for noise S_y ∝ f^α
/// (μ = −α − 1, and −2 for both WPM and FPM).
pub fn mu_of_alpha(alpha: i32) -> i32 {
    (-alpha - 1).max(-2)
}

/// B1(N, μ), Barnes (1969): expected N-sample variance over the two-sample
/// variance for N frequency averages with σ_y² ∝ τ^μ.
///
/// ```
/// use tauwise::stats::bias::b1;
/// // White FM (μ = −1): B1 = 1 for every N (analytic).
/// assert!((b1(20, -1) - 1.0).abs() < 1e-12);
/// // Random-walk FM (μ = 1): B1 = N/2 (analytic).
/// assert!((b1(20, 1) - 10.0).abs() < 1e-12);
/// ```
pub fn b1(n: usize, mu: i32) -> f64 {
    let nf = n as f64;
    if mu == 0 {
        nf * nf.ln() / (2.0 * (nf - 1.0) * LN_2)
    } else {
        let muf = mu as f64;
        nf * (1.0 - nf.powf(muf)) / (2.0 * (nf - 1.0) * (1.0 - 2f64.powf(muf)))
    }
}

/// R(n) = MVAR/AVAR at τ = nτ0 for noise S_y ∝ f^α (α = 2 … −2), from the
/// IEEE Std 1139 closed forms with f_h = 1/(2τ0). `None` outside 2 … −2 or
/// for n = 0.
pub fn r_ratio(alpha: i32, n: usize) -> Option<f64> {
    if n == 0 {
        return None;
    }
    let nf = n as f64;
    match alpha {
        2 => Some(1.0 / nf),
        1 => Some((3.37 / (1.038 + 3.0 * (PI * nf).ln())).min(1.0)),
        0 => Some(0.5),
        -1 => Some(0.936 / (2.0 * LN_2)),
        -2 => Some(5.42 * 6.0 / (4.0 * PI * PI)),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// WPM: B1 = 2(N + 1)/(3N) (analytic: E s² = 2σ²(N + 1)/N, AVAR = 3σ²).
    #[test]
    fn b1_white_pm() {
        for n in [5usize, 20, 1000] {
            let want = 2.0 * (n as f64 + 1.0) / (3.0 * n as f64);
            assert!((b1(n, -2) - want).abs() < 1e-12);
        }
    }

    #[test]
    fn b1_is_continuous_at_mu_zero() {
        // The μ = 0 form is the limit of the general one (analytic).
        let n = 50usize;
        let nf = n as f64;
        let eps = 1e-6;
        let near = nf * (1.0 - nf.powf(eps)) / (2.0 * (nf - 1.0) * (1.0 - 2f64.powf(eps)));
        assert!((near - b1(n, 0)).abs() < 1e-4);
    }

    #[test]
    fn mu_mapping() {
        assert_eq!(mu_of_alpha(2), -2);
        assert_eq!(mu_of_alpha(1), -2);
        assert_eq!(mu_of_alpha(0), -1);
        assert_eq!(mu_of_alpha(-2), 1);
        assert_eq!(mu_of_alpha(-4), 3);
    }

    #[test]
    fn r_values() {
        // IEEE Std 1139 table ratios (docs/checks.md §C).
        assert!((r_ratio(-1, 8).unwrap() - 0.675).abs() < 1e-3);
        assert!((r_ratio(-2, 8).unwrap() - 0.824).abs() < 1e-3);
        assert!(r_ratio(1, 16).unwrap() > r_ratio(2, 16).unwrap());
    }
}
