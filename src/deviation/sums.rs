//! Vectorisable sums of squared finite differences of phase, the inner loop
//! of every σ estimator.
//!
//! For coefficients c_0 … c_{K−1} and spacing m the sum is
//! Σ_{i=a}^{a+n−1} (Σ_k c_k x_{i+k·m})². With no gap the loop runs over four
//! independent accumulators on fixed-size chunks, so the compiler can use
//! SIMD; with gaps each term is first checked against the gap index.

use super::gaps::Gaps;

/// Coefficients of the first difference x_{i+m} − x_i.
pub(crate) const D1: [f64; 2] = [-1.0, 1.0];
/// Coefficients of the second difference x_{i+2m} − 2x_{i+m} + x_i.
pub(crate) const D2: [f64; 3] = [1.0, -2.0, 1.0];
/// Coefficients of the third difference x_{i+3m} − 3x_{i+2m} + 3x_{i+m} − x_i.
pub(crate) const D3: [f64; 4] = [-1.0, 3.0, -3.0, 1.0];

/// One term Σ_k c_k x_{i+k·m}.
#[inline(always)]
pub(crate) fn term<const K: usize>(x: &[f64], i: usize, m: usize, c: &[f64; K]) -> f64 {
    let mut v = 0.0;
    for (k, ck) in c.iter().enumerate() {
        v += ck * x[i + k * m];
    }
    v
}

/// Σ_{i=a}^{a+n−1} (Σ_k c_k x_{i+k·m})² over the terms whose span
/// `i ..= i + (K−1)·m` is clear of gaps; returns (sum, terms used).
/// Requires a + n − 1 + (K−1)·m < x.len().
pub(crate) fn sum_sq<const K: usize>(
    x: &[f64],
    gaps: &Gaps,
    m: usize,
    a: usize,
    n: usize,
    c: &[f64; K],
) -> (f64, usize) {
    if n == 0 {
        return (0.0, 0);
    }
    let reach = (K - 1) * m;
    if !gaps.is_none() {
        let mut s = 0.0;
        let mut used = 0usize;
        for i in a..a + n {
            if gaps.clear(i, i + reach) {
                let v = term(x, i, m, c);
                s += v * v;
                used += 1;
            }
        }
        return (s, used);
    }
    let cols: [&[f64]; K] = std::array::from_fn(|k| &x[a + k * m..a + k * m + n]);
    const L: usize = 8;
    let mut acc = [0.0f64; L];
    let chunks = n / L;
    for ch in 0..chunks {
        let b = ch * L;
        let mut v = [0.0f64; L];
        for (col, ck) in cols.iter().zip(c.iter()) {
            let s: &[f64; L] = col[b..b + L].try_into().expect("chunk of L");
            for l in 0..L {
                v[l] += ck * s[l];
            }
        }
        for l in 0..L {
            acc[l] += v[l] * v[l];
        }
    }
    let mut s = 0.0;
    for i in chunks * L..n {
        let mut v = 0.0;
        for (col, ck) in cols.iter().zip(c.iter()) {
            v += ck * col[i];
        }
        s += v * v;
    }
    // Pairwise combination of the lanes.
    let s4 = [
        acc[0] + acc[4],
        acc[1] + acc[5],
        acc[2] + acc[6],
        acc[3] + acc[7],
    ];
    ((s4[0] + s4[2]) + (s4[1] + s4[3]) + s, n)
}

/// The same sum on samples spaced by `m` (non-overlapping estimators):
/// Σ_{j=0}^{n−1} (Σ_k c_k x_{(j+k)·m})², terms whose span
/// `j·m ..= (j+K−1)·m` is clear of gaps.
pub(crate) fn sum_sq_decimated<const K: usize>(
    x: &[f64],
    gaps: &Gaps,
    m: usize,
    n: usize,
    c: &[f64; K],
) -> (f64, usize) {
    let mut s = 0.0;
    let mut used = 0usize;
    for j in 0..n {
        let i = j * m;
        if gaps.clear(i, i + (K - 1) * m) {
            let v = term(x, i, m, c);
            s += v * v;
            used += 1;
        }
    }
    (s, used)
}
