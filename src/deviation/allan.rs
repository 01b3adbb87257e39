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
/// Fast form: S_{j+1} = S_j + (x_{j+3m} − 3x_{j+2m} + 3x_{j+m} − x_j), a
/// running sum restarted from the direct sum every B ≥ 4m steps (so rounding
/// cannot build up and the restarts cost at most a quarter of the work), run
/// on four independent stretches of j at once. Gaps enter the running sum as
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

#[inline(always)]
fn mvar_step<const GAPS: bool>(x: &[f64], m: usize, j: usize) -> f64 {
    (val::<GAPS>(x, j + 3 * m) - val::<GAPS>(x, j))
        + 3.0 * (val::<GAPS>(x, j + m) - val::<GAPS>(x, j + 2 * m))
}

fn mvar_lanes<const GAPS: bool>(p: &Prepared, m: usize, nterms: usize) -> (f64, usize) {
    const LANES: usize = 4;
    let x = p.x;
    let block = (4 * m).max(512);
    let lane_len = nterms / LANES;
    let mut acc = [0.0f64; LANES];
    let mut used = [0usize; LANES];
    let mut t0 = 0;
    while t0 < lane_len {
        let len = block.min(lane_len - t0);
        let mut s: [f64; LANES] =
            std::array::from_fn(|l| mvar_direct::<GAPS>(x, m, l * lane_len + t0));
        for t in t0..t0 + len {
            for l in 0..LANES {
                let j = l * lane_len + t;
                if !GAPS || p.gaps.clear(j, j + 3 * m - 1) {
                    acc[l] += s[l] * s[l];
                    used[l] += 1;
                }
                if t + 1 < t0 + len {
                    s[l] += mvar_step::<GAPS>(x, m, j);
                }
            }
        }
        t0 += len;
    }
    // The tail that does not fill the four lanes.
    let mut tail = 0.0;
    let mut tail_used = 0;
    let start = LANES * lane_len;
    let mut s = 0.0;
    for j in start..nterms {
        if (j - start) % block == 0 {
            s = mvar_direct::<GAPS>(x, m, j);
        }
        if !GAPS || p.gaps.clear(j, j + 3 * m - 1) {
            tail += s * s;
            tail_used += 1;
        }
        if j + 1 < nterms {
            s += mvar_step::<GAPS>(x, m, j);
        }
    }
    let sum = (acc[0] + acc[2]) + (acc[1] + acc[3]) + tail;
    (sum, used.iter().sum::<usize>() + tail_used)
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
