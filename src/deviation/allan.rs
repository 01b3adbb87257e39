//! The Allan family on phase data: ADEV (non-overlapping), overlapping ADEV,
//! modified ADEV and the time deviation TDEV (NIST SP 1065, §5.2).
//!
//! Notation: N phase samples x_0 … x_{N−1} (seconds), τ = m·τ0.

use super::gaps::Prepared;
use super::sums::{sum_sq, sum_sq_decimated, D2};
use super::Estimate;

/// Build an estimate from a variance sum: σ = sqrt(sum / (norm · terms)).
pub(crate) fn finish(tau: f64, m: usize, sum: f64, norm: f64, terms: usize) -> Option<Estimate> {
    if terms == 0 {
        return None;
    }
    Some(Estimate {
        tau,
        m,
        value: (sum / (norm * terms as f64)).sqrt(),
        terms,
    })
}

/// Non-overlapping Allan deviation (NIST SP 1065 eq. 7, phase form):
///
/// σ_y²(τ) = 1/(2τ²(K−2)) Σ_{j=0}^{K−3} (x_{(j+2)m} − 2x_{(j+1)m} + x_{jm})²,
///
/// on the K = ⌊(N−1)/m⌋ + 1 samples spaced by τ. Valid for 1 ≤ m ≤ (N−1)/2.
pub(crate) fn adev(p: &Prepared, m: usize) -> Option<Estimate> {
    let n = p.x.len();
    if m == 0 || n < 2 * m + 1 {
        return None;
    }
    let k = (n - 1) / m + 1;
    let tau = m as f64 * p.tau0;
    let (s, used) = sum_sq_decimated(p.x, &p.gaps, m, k - 2, &D2);
    finish(tau, m, s, 2.0 * tau * tau, used)
}

/// Overlapping Allan deviation (NIST SP 1065 eq. 11, phase form):
///
/// σ_y²(τ) = 1/(2τ²(N−2m)) Σ_{i=0}^{N−2m−1} (x_{i+2m} − 2x_{i+m} + x_i)².
///
/// Valid for 1 ≤ m ≤ (N−1)/2. O(N) per τ.
pub(crate) fn oadev(p: &Prepared, m: usize) -> Option<Estimate> {
    let n = p.x.len();
    if m == 0 || n < 2 * m + 1 {
        return None;
    }
    let tau = m as f64 * p.tau0;
    let (s, used) = sum_sq(p.x, &p.gaps, m, 0, n - 2 * m, &D2);
    finish(tau, m, s, 2.0 * tau * tau, used)
}

/// Sum of the squared inner sums of MVAR and the number of terms used:
/// Σ_j S_j², S_j = Σ_{i=j}^{j+m−1} (x_{i+2m} − 2x_{i+m} + x_i), j = 0 … N−3m,
/// each term used when x_j … x_{j+3m−1} holds no gap.
///
/// Fast form: S_{j+1} = S_j + c_j with c_j = x_{j+3m} − 3x_{j+2m} + 3x_{j+m} − x_j,
/// a running sum restarted from the direct sum every B = max(16m, 4096)
/// terms (so rounding cannot build up, and the restarts cost a few per cent
/// of the work). The terms go in blocks of eight: the eight increments of a
/// block are computed together (a contiguous, vectorised load of the four
/// shifted copies of x), their exclusive prefix sums give S at the eight
/// terms from the S carried into the block, and only that carry links one
/// block to the next, so the processor overlaps the blocks instead of
/// waiting on one chain of additions. Gaps enter the running sum as
/// zeros; a term whose span holds a gap is skipped, so those zeros never
/// reach a result. O(N) per τ.
pub(crate) fn mvar_sum(p: &Prepared, m: usize) -> (f64, usize) {
    let x = p.x;
    let n = x.len();
    if m == 0 || n < 3 * m {
        return (0.0, 0);
    }
    let nterms = n - 3 * m + 1;
    if p.gaps.is_none() {
        mvar_lanes::<false>(p, m, nterms)
    } else {
        mvar_lanes::<true>(p, m, nterms)
    }
}

#[inline(always)]
fn val<const GAPS: bool>(x: &[f64], i: usize) -> f64 {
    let v = x[i];
    if GAPS && v.is_nan() {
        0.0
    } else {
        v
    }
}

#[inline(always)]
fn mvar_direct<const GAPS: bool>(x: &[f64], m: usize, j: usize) -> f64 {
    let mut s = 0.0;
    for i in j..j + m {
        s += val::<GAPS>(x, i + 2 * m) - 2.0 * val::<GAPS>(x, i + m) + val::<GAPS>(x, i);
    }
    s
}

fn mvar_lanes<const GAPS: bool>(p: &Prepared, m: usize, nterms: usize) -> (f64, usize) {
    const L: usize = 8;
    let x = p.x;
    let restart = (16 * m).max(4096);
    let mut total = 0.0;
    let mut used = 0usize;
    let ok = |j: usize| !GAPS || p.gaps.clear(j, j + 3 * m - 1);
    let inc = |j: usize| {
        (val::<GAPS>(x, j + 3 * m) - val::<GAPS>(x, j))
            + 3.0 * (val::<GAPS>(x, j + m) - val::<GAPS>(x, j + 2 * m))
    };
    let mut b = 0;
    while b < nterms {
        let len = restart.min(nterms - b);
        // S_b from its definition, then S_{j+1} = S_j + c_j.
        let mut base = mvar_direct::<GAPS>(x, m, b);
        let mut acc = [0.0f64; L];
        let blocks = if b + len < nterms {
            len / L
        } else {
            (len - 1) / L
        };
        {
            let x0 = &x[b..b + blocks * L];
            let x1 = &x[b + m..b + m + blocks * L];
            let x2 = &x[b + 2 * m..b + 2 * m + blocks * L];
            let x3 = &x[b + 3 * m..b + 3 * m + blocks * L];
            for k in 0..blocks {
                let o = k * L;
                let mut c = [0.0f64; L];
                #[allow(clippy::needless_range_loop)] // l indexes five arrays
                for l in 0..L {
                    c[l] = (val::<GAPS>(x3, o + l) - val::<GAPS>(x0, o + l))
                        + 3.0 * (val::<GAPS>(x1, o + l) - val::<GAPS>(x2, o + l));
                }
                // Exclusive prefix sums: S_{b+o+l} = base + pre[l]. The chain
                // within a block does not depend on the previous block, so
                // blocks overlap in the processor; only `base` is carried.
                let mut pre = [0.0f64; L];
                for l in 1..L {
                    pre[l] = pre[l - 1] + c[l - 1];
                }
                for l in 0..L {
                    if ok(b + o + l) {
                        let s = base + pre[l];
                        acc[l] += s * s;
                        if GAPS {
                            used += 1;
                        }
                    }
                }
                base += pre[L - 1] + c[L - 1];
            }
        }
        if !GAPS {
            used += blocks * L;
        }
        // The terms after the last whole block, one by one.
        for j in b + blocks * L..b + len {
            if ok(j) {
                acc[0] += base * base;
                used += 1;
            }
            if j + 1 < nterms {
                base += inc(j);
            }
        }
        total += ((acc[0] + acc[4]) + (acc[2] + acc[6])) + ((acc[1] + acc[5]) + (acc[3] + acc[7]));
        b += len;
    }
    (total, used)
}

/// Modified Allan deviation (NIST SP 1065 eq. 14, phase form):
///
/// Mod σ_y²(τ) = 1/(2m²τ²(N−3m+1)) Σ_{j=0}^{N−3m} [Σ_{i=j}^{j+m−1} (x_{i+2m} − 2x_{i+m} + x_i)]².
///
/// Valid for 1 ≤ m ≤ N/3. O(N) per τ (see [`mvar_sum`]).
pub(crate) fn mdev(p: &Prepared, m: usize) -> Option<Estimate> {
    let tau = m as f64 * p.tau0;
    let (s, used) = mvar_sum(p, m);
    let mf = m as f64;
    finish(tau, m, s, 2.0 * mf * mf * tau * tau, used)
}

/// Time deviation (NIST SP 1065 eq. 17): σ_x(τ) = (τ/√3)·Mod σ_y(τ), in seconds.
pub(crate) fn tdev(p: &Prepared, m: usize) -> Option<Estimate> {
    mdev(p, m).map(|e| Estimate {
        value: e.value * e.tau / 3f64.sqrt(),
        ..e
    })
}
