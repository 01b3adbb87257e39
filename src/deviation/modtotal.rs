//! The modified-total family (NIST SP 1065 §5.2.12–5.2.14): modified total
//! deviation MTOT, time total deviation TTOT and Hadamard total deviation
//! HTOT. All three share one computation on a sequence v (phase for MTOT and
//! TTOT, fractional frequency for HTOT), for each subsequence of 3m samples
//! v_n … v_{n+3m−1}, n = 0 … L−3m:
//!
//! 1. remove its linear trend by the half-average method: slope
//!    s = (mean of the last ⌊3m/2⌋ − mean of the first ⌊3m/2⌋) / (3m − ⌊3m/2⌋),
//!    w_k = v_{n+k} − s·k (a constant left in w drops out below);
//! 2. extend w at both ends by uninverted, even reflection to 9m samples,
//!    X = [w_{3m−1} … w_0, w_0 … w_{3m−1}, w_{3m−1} … w_0];
//! 3. take the 6m second differences of m-sample averages of X,
//!    z_j = X̄_{j+2m} − 2X̄_{j+m} + X̄_j, X̄_j = (1/m) Σ_{t=j}^{j+m−1} X_t, j = 0 … 6m−1,
//!    and their mean square (1/(6m)) Σ_j z_j².
//!
//! The mean over subsequences of that mean square is G(m); then
//! Mod Totvar(τ) = G(m)/(2τ²) on phase, Time Totvar(τ) = (τ²/3)·Mod Totvar(τ),
//! and Htotvar(τ) = G(m)/6 on frequency.
//!
//! At m = 1 the definition gives exactly MTOT = MDEV/√2 and HTOT =
//! OHDEV/√2 (the detrended triple (a, b, a) reflects to [a b a a b a a b a],
//! whose mean square second difference is half the single MVAR term); for
//! m ≥ 4, Monte Carlo on N = 1001 gives E[MTOT²]/E[MDEV²] ≈ 1.00 (WPM),
//! 0.77 (WFM), 0.68 (RWFM) — the bias no table here corrects yet.
//!
//! Gaps: a subsequence is used when none of its samples is missing (for
//! HTOT, none of the 3m + 1 phase samples its frequencies come from).
//!
//! Fast form: local sums of v come from prefix sums kept in double-double
//! arithmetic (each prefix as an unevaluated sum hi + lo, built with the
//! error-free TwoSum), so that a sum over any stretch is accurate to a unit
//! in the last place of the stretch itself however large the prefix has
//! grown. The running sums of X then cost O(m) per subsequence instead of
//! O(m²), and subsequences are spread over threads. O(N·m) per τ.

use super::allan::finish;
use super::gaps::{Gaps, Prepared};
use super::Estimate;
use rayon::prelude::*;

/// Error-free sum: a + b = s + e exactly (Knuth's TwoSum).
#[inline(always)]
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    let e = (a - (s - bb)) + (b - bb);
    (s, e)
}

/// Prefix sums of a sequence (gaps taken as 0) as double-double numbers.
pub(crate) struct PrefixSums {
    hi: Vec<f64>,
    lo: Vec<f64>,
}

impl PrefixSums {
    pub(crate) fn new(v: &[f64]) -> Self {
        let mut hi = Vec::with_capacity(v.len() + 1);
        let mut lo = Vec::with_capacity(v.len() + 1);
        let (mut h, mut l) = (0.0f64, 0.0f64);
        hi.push(h);
        lo.push(l);
        for &x in v {
            let x = if x.is_nan() { 0.0 } else { x };
            let (s, e) = two_sum(h, x);
            h = s;
            l += e;
            hi.push(h);
            lo.push(l);
        }
        Self { hi, lo }
    }

    /// Σ_{i=a}^{b−1} v_i.
    #[inline(always)]
    pub(crate) fn sum(&self, a: usize, b: usize) -> f64 {
        (self.hi[b] - self.hi[a]) + (self.lo[b] - self.lo[a])
    }
}

/// The mean square of the 6m reflected second differences for the
/// subsequence starting at n (steps 1–3 of the module notes); `q` is scratch
/// of length ≥ 9m + 1.
fn subsequence(ps: &PrefixSums, n: usize, m: usize, q: &mut [f64]) -> f64 {
    let l3 = 3 * m;
    let h = l3 / 2;
    let dist = (l3 - h) as f64;
    let mean1 = ps.sum(n, n + h) / h as f64;
    let mean2 = ps.sum(n + l3 - h, n + l3) / h as f64;
    let s = (mean2 - mean1) / dist;
    // Detrended local prefix sums W_k = Σ_{t<k} (v_{n+t} − s·t), k = 0 … 3m,
    // stored in q[3m + k] for the middle copy.
    for k in 0..=l3 {
        let kf = k as f64;
        q[l3 + k] = ps.sum(n, n + k) - s * (kf * (kf - 1.0) * 0.5);
    }
    let t = q[2 * l3];
    // Prefix sums of the extended sequence X over positions 0 … 9m:
    // left reflection Q(p) = T − W_{3m−p}; middle T + W_{p−3m};
    // right reflection 3T − W_{9m−p}. The middle stores W; fix it up after.
    for p in 0..l3 {
        q[p] = t - q[2 * l3 - p];
    }
    for p in 2 * l3 + 1..=3 * l3 {
        q[p] = 3.0 * t - q[l3 + 3 * l3 - p];
    }
    for v in &mut q[l3..=2 * l3] {
        *v += t;
    }
    // z_j·m = Q(j+3m) − 3Q(j+2m) + 3Q(j+m) − Q(j).
    let nz = 2 * l3;
    let (a, b, c, d) = (
        &q[..nz],
        &q[m..m + nz],
        &q[2 * m..2 * m + nz],
        &q[l3..l3 + nz],
    );
    let mut acc = [0.0f64; 4];
    let chunks = nz / 4;
    for ch in 0..chunks {
        let i = 4 * ch;
        for l in 0..4 {
            let z = (d[i + l] - a[i + l]) + 3.0 * (b[i + l] - c[i + l]);
            acc[l] += z * z;
        }
    }
    let mut tail = 0.0;
    for i in 4 * chunks..nz {
        let z = (d[i] - a[i]) + 3.0 * (b[i] - c[i]);
        tail += z * z;
    }
    let mf = m as f64;
    ((acc[0] + acc[2]) + (acc[1] + acc[3]) + tail) / (mf * mf * nz as f64)
}

/// G(m) of the module notes on sequence v with its gap index: (Σ over the
/// subsequences used of their mean squares, number used).
pub(crate) fn reflected_mean_square(v: &[f64], gaps: &Gaps, m: usize) -> (f64, usize) {
    let len = v.len();
    if m == 0 || len < 3 * m {
        return (0.0, 0);
    }
    let ps = PrefixSums::new(v);
    let count = len - 3 * m + 1;
    // Sum in fixed blocks (the same split whatever the thread count), then
    // add the block sums in order, so the result is reproducible.
    const BLOCK: usize = 256;
    let blocks: Vec<(f64, usize)> = (0..count.div_ceil(BLOCK))
        .into_par_iter()
        .map_init(
            || vec![0.0f64; 9 * m + 1],
            |q, b| {
                let mut s = 0.0;
                let mut used = 0;
                for n in b * BLOCK..((b + 1) * BLOCK).min(count) {
                    if gaps.clear(n, n + 3 * m - 1) {
                        s += subsequence(&ps, n, m, q);
                        used += 1;
                    }
                }
                (s, used)
            },
        )
        .collect();
    blocks
        .iter()
        .fold((0.0, 0), |(s, u), &(bs, bu)| (s + bs, u + bu))
}

/// Modified total deviation (NIST SP 1065 §5.2.12):
/// Mod Totvar(τ) = G(m)/(2τ²) with G from the phase record (module notes).
/// Valid for 1 ≤ m ≤ N/3.
pub(crate) fn mtot(p: &Prepared, m: usize) -> Option<Estimate> {
    let tau = m as f64 * p.tau0;
    let (s, used) = reflected_mean_square(p.x, &p.gaps, m);
    finish(tau, m, s, 2.0 * tau * tau, used)
}

/// Time total deviation (NIST SP 1065 §5.2.13): σ_x(τ) = (τ/√3)·MTOT(τ), in seconds.
pub(crate) fn ttot(p: &Prepared, m: usize) -> Option<Estimate> {
    mtot(p, m).map(|e| Estimate {
        value: e.value * e.tau / 3f64.sqrt(),
        ..e
    })
}

/// Hadamard total deviation (NIST SP 1065 §5.2.14): Htotvar(τ) = G(m)/6 with
/// G from the fractional frequency y_i = (x_{i+1} − x_i)/τ0 (module notes):
/// the half-average detrend removes a linear frequency drift from each
/// subsequence. Valid for 1 ≤ m ≤ (N−1)/3.
pub(crate) fn htot(p: &Prepared, m: usize) -> Option<Estimate> {
    let y: Vec<f64> = p.x.windows(2).map(|w| (w[1] - w[0]) / p.tau0).collect();
    htot_on_frequency(&y, p.tau0, m)
}

/// HTOT on a fractional-frequency sequence (τ = m·τ0).
pub(crate) fn htot_on_frequency(y: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let gaps = Gaps::new(y);
    let (s, used) = reflected_mean_square(y, &gaps, m);
    finish(m as f64 * tau0, m, s, 6.0, used)
}
