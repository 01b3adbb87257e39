//! Time-interval-error statistics on phase data (ITU-T G.810): the maximum
//! time interval error MTIE and the rms time interval error TIE rms.

use super::allan::finish;
use super::gaps::Prepared;
use super::sums::{sum_sq, D1};
use super::Estimate;

/// TIE rms (ITU-T G.810, Appendix II):
///
/// TIErms(τ) = sqrt( 1/(N−m) Σ_{i=0}^{N−m−1} (x_{i+m} − x_i)² ), τ = m·τ0, in seconds.
///
/// Valid for 1 ≤ m ≤ N−1; a term is used when x_i … x_{i+m} holds no gap.
pub(crate) fn tierms(p: &Prepared, m: usize) -> Option<Estimate> {
    let n = p.x.len();
    if m == 0 || n < m + 1 {
        return None;
    }
    let tau = m as f64 * p.tau0;
    let (s, used) = sum_sq(p.x, &p.gaps, m, 0, n - m, &D1);
    finish(tau, m, s, 1.0, used)
}

#[inline(always)]
fn max(a: f64, b: f64) -> f64 {
    if a > b {
        a
    } else {
        b
    }
}

#[inline(always)]
fn min(a: f64, b: f64) -> f64 {
    if a < b {
        a
    } else {
        b
    }
}

/// MTIE (ITU-T G.810 definition: the largest peak-to-peak phase over every
/// observation window of length τ = m·τ0):
///
/// MTIE(τ) = max_{k=0}^{N−m−1} [ max_{k≤i≤k+m} x_i − min_{k≤i≤k+m} x_i ], in seconds.
///
/// Each window holds m + 1 samples; a window holding a gap is skipped, and
/// `terms` counts the windows used. Valid for 1 ≤ m ≤ N−1.
///
/// Fast form (van Herk 1992; Gil & Werman 1993): cut the record into blocks
/// of w = m + 1 samples. A window starting at offset i of a block is the
/// block's suffix from i joined to the next block's prefix of length i, so its
/// maximum is max(suffix max, prefix max); the suffix extrema of a block are
/// computed once backwards and the prefix extrema grow by one sample per
/// window. About three comparisons per sample for each of max and min: O(N)
/// per τ whatever m is, with O(min(w, N − m)) scratch memory.
pub(crate) fn mtie(p: &Prepared, m: usize) -> Option<Estimate> {
    let x = p.x;
    let n = x.len();
    if m == 0 || n < m + 1 {
        return None;
    }
    let w = m + 1;
    let windows = n - m;
    let buf_len = w.min(windows);
    let mut suf_max = vec![0.0f64; buf_len];
    let mut suf_min = vec![0.0f64; buf_len];
    let mut best = f64::NEG_INFINITY;
    let mut used = 0usize;
    let mut s = 0;
    while s < windows {
        // Suffix extrema of the block x[s .. s+w) (the block is whole: s < windows
        // means s + m ≤ n − 1), stored for offsets i < buf_len.
        let block_end = s + w;
        let mut hi = f64::NEG_INFINITY;
        let mut lo = f64::INFINITY;
        for idx in (s..block_end).rev() {
            let v = x[idx];
            hi = max(v, hi);
            lo = min(v, lo);
            let i = idx - s;
            if i < buf_len {
                suf_max[i] = hi;
                suf_min[i] = lo;
            }
        }
        // Window starting at s + i, i = 0 … w−1, while it fits in the record.
        let count = w.min(windows - s);
        let mut pre_max = f64::NEG_INFINITY;
        let mut pre_min = f64::INFINITY;
        let gap_free = p.gaps.is_none();
        for i in 0..count {
            if i > 0 {
                let v = x[block_end + i - 1];
                pre_max = max(v, pre_max);
                pre_min = min(v, pre_min);
            }
            let k = s + i;
            if gap_free || p.gaps.clear(k, k + m) {
                let range = max(suf_max[i], pre_max) - min(suf_min[i], pre_min);
                best = max(range, best);
                used += 1;
            }
        }
        s += w;
    }
    if used == 0 {
        return None;
    }
    Some(Estimate {
        tau: m as f64 * p.tau0,
        m,
        value: best,
        terms: used,
    })
}
