//! The total deviation TOTDEV (NIST SP 1065, §5.2.11): the overlapping Allan
//! variance of the phase record extended at both ends by inverted reflection,
//! which adds terms at long τ and so narrows the confidence interval.

use super::allan::finish;
use super::gaps::Prepared;
use super::sums::{sum_sq, D2};
use super::Estimate;

/// The reflection-extended phase x*_k of SP 1065 §5.2.11 (0-based):
/// x*_{−j} = 2x_0 − x_j and x*_{N−1+j} = 2x_{N−1} − x_{N−1−j} for 1 ≤ j ≤ N−2,
/// x*_k = x_k inside the record.
#[inline]
pub(crate) fn reflected(x: &[f64], k: isize) -> f64 {
    let last = x.len() as isize - 1;
    if k < 0 {
        2.0 * x[0] - x[(-k) as usize]
    } else if k > last {
        2.0 * x[last as usize] - x[(2 * last - k) as usize]
    } else {
        x[k as usize]
    }
}

/// Total deviation (NIST SP 1065 eq. 25, phase form):
///
/// Totvar(τ) = 1/(2τ²(N−2)) Σ_{i=1}^{N−2} (x*_{i−m} − 2x_i + x*_{i+m})²,
///
/// with x* the inverted reflection of the record at both ends (see
/// [`reflected`]). No trend is removed: the reflection continues a linear
/// phase ramp exactly, so a frequency offset leaves TOTDEV unchanged.
/// Valid for 1 ≤ m ≤ (N−1)/2 (τ up to half the record).
///
/// Gaps: a term is used when x_{max(0,i−m)} … x_{min(N−1,i+m)}, every sample
/// it reads (a reflected value reads x_0 or x_{N−1} and a sample nearer the
/// middle), holds no gap.
///
/// Fast form: the N−2m interior terms are exactly the overlapping-ADEV sum;
/// the 2(m−1) boundary terms are added one by one. O(N) per τ, no extended
/// copy of the record.
pub(crate) fn totdev(p: &Prepared, m: usize) -> Option<Estimate> {
    let x = p.x;
    let n = x.len();
    if m == 0 || n < 3 || m > (n - 1) / 2 {
        return None;
    }
    let tau = m as f64 * p.tau0;
    let (mut s, mut used) = sum_sq(x, &p.gaps, m, 0, n - 2 * m, &D2);
    let boundary = (1..m).chain(n - m..n - 1);
    for i in boundary {
        let lo = i.saturating_sub(m);
        let hi = (i + m).min(n - 1);
        if p.gaps.clear(lo, hi) {
            let ii = i as isize;
            let mm = m as isize;
            let v = reflected(x, ii - mm) - 2.0 * x[i] + reflected(x, ii + mm);
            s += v * v;
            used += 1;
        }
    }
    finish(tau, m, s, 2.0 * tau * tau, used)
}

/// Equivalent degrees of freedom of the total variance (NIST SP 1065,
/// TOTVAR EDF table; CHECKS.md D, from memory):
/// EDF = b·(T/τ) − c with T = (N−1)·τ0, τ = m·τ0:
/// WFM (α = 0) b = 1.50, c = 0; FFM (α = −1) b = 1.17, c = 0.22;
/// RWFM (α = −2) b = 0.93, c = 0.36. None for other α (the table gives none).
///
/// ```
/// // WFM, N = 1001, m = 10: 1.5 · 1000/10 = 150.
/// assert_eq!(tauwise::deviation::totdev_edf(0, 1001, 10), Some(150.0));
/// ```
pub fn totdev_edf(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if n_phase < 2 || m == 0 {
        return None;
    }
    let (b, c) = match alpha {
        0 => (1.50, 0.0),
        -1 => (1.17, 0.22),
        -2 => (0.93, 0.36),
        _ => return None,
    };
    let t_over_tau = (n_phase - 1) as f64 / m as f64;
    Some(b * t_over_tau - c)
}

/// Bias of the total variance, E(Totvar)/AVAR = 1 − a·τ/T (NIST SP 1065;
/// CHECKS.md D, from memory): a = 0 for white noise (WPM α = 2, WFM α = 0),
/// a = 0.481 = 1/(3 ln 2) for FFM (α = −1), a = 0.750 for RWFM (α = −2).
/// Divide Totvar by it (TOTDEV by its square root) to remove the bias.
/// None for other α.
pub fn totvar_bias(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if n_phase < 2 || m == 0 {
        return None;
    }
    let a = match alpha {
        2 | 0 => 0.0,
        -1 => 0.481,
        -2 => 0.750,
        _ => return None,
    };
    Some(1.0 - a * m as f64 / (n_phase - 1) as f64)
}
