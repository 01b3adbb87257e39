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
/// of the work). In chunks of 4096 terms the increments are computed as one
/// contiguous vector and four lanes advance together, S_{j+4} = S_j + c_j + … + c_{j+3},
/// so the loop vectorises instead of waiting on one chain of additions. Gaps enter the running sum as
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
    const CHUNK: usize = 4096;
    let x = p.x;
    let restart = (16 * m).max(CHUNK);
    let mut c = [0.0f64; CHUNK];
    let mut total = 0.0;
    let mut used = 0usize;
    let ok = |j: usize| !GAPS || p.gaps.clear(j, j + 3 * m - 1);
    let mut sj = 0.0; // S at the start of the chunk
    let mut b = 0;
    while b < nterms {
        if b % restart == 0 {
            sj = mvar_direct::<GAPS>(x, m, b);
        }
        let len = CHUNK.min(restart - b % restart).min(nterms - b);
        // Increments c[t] = S_{b+t+1} − S_{b+t} for every term of the chunk
        // that has a successor (contiguous, so the loop vectorises).
        let n_c = len.min(nterms - 1 - b);
        {
            let x0 = &x[b..b + n_c];
            let x1 = &x[b + m..b + m + n_c];
            let x2 = &x[b + 2 * m..b + 2 * m + n_c];
            let x3 = &x[b + 3 * m..b + 3 * m + n_c];
            for (t, ct) in c[..n_c].iter_mut().enumerate() {
                *ct = (val::<GAPS>(x3, t) - val::<GAPS>(x0, t))
                    + 3.0 * (val::<GAPS>(x1, t) - val::<GAPS>(x2, t));
            }
        }
        // Four lanes hold S at b+k … b+k+3 and advance by four:
        // S_{j+4} = S_j + c_j + c_{j+1} + c_{j+2} + c_{j+3}.
        let mut acc = [0.0f64; 4];
        let mut k = 0;
        if len >= 8 {
            let mut s = [sj, 0.0, 0.0, 0.0];
            for l in 1..4 {
                s[l] = s[l - 1] + c[l - 1];
            }
            while k + 8 <= len {
                let cw: &[f64; 7] = c[k..k + 7].try_into().expect("seven increments");
                for l in 0..4 {
                    if ok(b + k + l) {
                        acc[l] += s[l] * s[l];
                        used += 1;
                    }
                }
                for l in 0..4 {
                    s[l] += (cw[l] + cw[l + 1]) + (cw[l + 2] + cw[l + 3]);
                }
                k += 4;
            }
            sj = s[0];
        }
        // The rest of the chunk one by one; S is carried into the next chunk.
        #[allow(clippy::needless_range_loop)] // t indexes both the terms and c
        for t in k..len {
            if ok(b + t) {
                acc[0] += sj * sj;
                used += 1;
            }
            if t < n_c {
                sj += c[t];
            }
        }
        total += (acc[0] + acc[2]) + (acc[1] + acc[3]);
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
