//! The total deviation TOTDEV (NIST SP 1065, §5.2.11): the overlapping Allan
//! variance of the phase record extended at both ends by inverted reflection,
//! which adds terms at long τ and so narrows the confidence interval.

use super::allan::finish;
use super::gaps::Prepared;
use super::sums::{sum_sq, D2};
use super::Estimate;

/// The reflection-extended phase x*_k of SP 1065 §5.2.11 (0-based) as a
/// combination of record samples, two (index, coefficient) pairs:
/// x*_{−j} = 2x_0 − x_j and x*_{N−1+j} = 2x_{N−1} − x_{N−1−j} for 1 ≤ j ≤ N−2,
/// x*_k = x_k inside the record (the second pair then has coefficient 0).
/// The statistics layer reads the same definition for the exact bias of
/// TOTVAR ([`crate::stats::totals`]).
#[inline]
pub(crate) fn reflected_terms(n: usize, k: isize) -> [(usize, f64); 2] {
    let last = n as isize - 1;
    if k < 0 {
        [(0, 2.0), ((-k) as usize, -1.0)]
    } else if k > last {
        [(last as usize, 2.0), ((2 * last - k) as usize, -1.0)]
    } else {
        [(k as usize, 1.0), (k as usize, 0.0)]
    }
}

/// x*_k of [`reflected_terms`] evaluated on the record.
#[inline]
pub(crate) fn reflected(x: &[f64], k: isize) -> f64 {
    let [(a, ca), (b, cb)] = reflected_terms(x.len(), k);
    ca * x[a] + cb * x[b]
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
