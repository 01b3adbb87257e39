//! MTIE, the maximum time interval error (ITU-T G.810):
//!
//! MTIE(τ = n·τ0) = max over k of [ max_{k ≤ i ≤ k+n} x_i − min_{k ≤ i ≤ k+n} x_i ],
//!
//! the largest peak-to-peak phase excursion in any window of n + 1 samples.
//! A window that holds a gap (NaN) is skipped, and `terms` counts the windows
//! used.
//!
//! [`mtie`] is the fast form: window maxima and minima for power-of-two
//! lengths w are built by doubling, M_2w[i] = max(M_w[i], M_w[i+w]); a window
//! of any length L = n + 1 with w ≤ L < 2w is the union of two overlapping
//! power-of-two windows, max over [k, k+L) = max(M_w[k], M_w[k+L−w]) (the
//! "sparse table" of range-maximum queries). One O(N) pass per τ plus
//! log2(N) O(N) doubling passes in all, in place. [`mtie_direct`] is the
//! textbook window scan, kept as the reference that the tests compare with.

use crate::deviation::Estimate;
use crate::record::PhaseRecord;
use rayon::prelude::*;

/// The valid averaging factors among `ms`: sorted, deduplicated, 1 ≤ m < N.
fn usable(ms: &[usize], n: usize) -> Vec<usize> {
    let mut v: Vec<usize> = ms.iter().copied().filter(|&m| m >= 1 && m < n).collect();
    v.sort_unstable();
    v.dedup();
    v
}

/// MTIE by direct scan of every window (O(N·n) per τ): the reference
/// implementation of the G.810 definition.
pub fn mtie_direct(rec: &PhaseRecord, ms: &[usize]) -> Vec<Estimate> {
    let x = &rec.x;
    let mut out = Vec::new();
    for m in usable(ms, x.len()) {
        let mut best = f64::NEG_INFINITY;
        let mut terms = 0;
        for k in 0..x.len() - m {
            let w = &x[k..=k + m];
            if w.iter().any(|v| v.is_nan()) {
                continue;
            }
            let hi = w.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            let lo = w.iter().cloned().fold(f64::INFINITY, f64::min);
            best = best.max(hi - lo);
            terms += 1;
        }
        if terms > 0 {
            out.push(Estimate {
                tau: m as f64 * rec.tau0,
                m,
                value: best,
                terms,
            });
        }
    }
    out
}

#[inline]
fn fmax(a: f64, b: f64) -> f64 {
    if a > b {
        a
    } else {
        b
    }
}

#[inline]
fn fmin(a: f64, b: f64) -> f64 {
    if a < b {
        a
    } else {
        b
    }
}

/// Turn window extrema of length w (array of N − w + 1) into those of length
/// 2w (N − 2w + 1), in place.
fn double(a: &mut Vec<f64>, w: usize, f: fn(f64, f64) -> f64) {
    let new_len = a.len().saturating_sub(w);
    let mut start = 0;
    while start < new_len {
        let end = (start + w).min(new_len);
        let (head, tail) = a.split_at_mut(start + w);
        for (d, s) in head[start..end].iter_mut().zip(&tail[..end - start]) {
            *d = f(*d, *s);
        }
        start = end;
    }
    a.truncate(new_len);
}

const CHUNK: usize = 1 << 15;

/// MTIE by the doubling method (see the module notes); same results as
/// [`mtie_direct`], at O(N) per τ.
///
/// ```
/// use tauwise::{PhaseRecord, wander::mtie::mtie};
/// // A ramp x = y0·t has MTIE(τ) = y0·τ (analytic, CHECKS.md F).
/// let y0 = 1e-9;
/// let r = PhaseRecord::new((0..1000).map(|i| y0 * i as f64).collect(), 1.0).unwrap();
/// let e = mtie(&r, &[1, 10, 100]);
/// assert!((e[2].value - 100.0 * y0).abs() < 1e-18);
/// ```
pub fn mtie(rec: &PhaseRecord, ms: &[usize]) -> Vec<Estimate> {
    let n = rec.x.len();
    let ms = usable(ms, n);
    if ms.is_empty() {
        return Vec::new();
    }
    let gaps = rec.x.iter().any(|v| v.is_nan());
    // bad[i] = number of gaps among x[0..i]; a window [k, k+L) is clean when
    // bad[k+L] == bad[k].
    let bad: Vec<u32> = if gaps {
        let mut c = Vec::with_capacity(n + 1);
        let mut acc = 0u32;
        c.push(0);
        for v in &rec.x {
            acc += v.is_nan() as u32;
            c.push(acc);
        }
        c
    } else {
        Vec::new()
    };
    let clean: Vec<f64> = rec
        .x
        .iter()
        .map(|&v| if v.is_nan() { 0.0 } else { v })
        .collect();
    let mut hi = clean.clone();
    let mut lo = clean;
    let mut w = 1usize;
    let mut out = Vec::with_capacity(ms.len());
    for m in ms {
        let len = m + 1;
        while 2 * w <= len {
            double(&mut hi, w, fmax);
            double(&mut lo, w, fmin);
            w *= 2;
        }
        let count = n - len + 1; // windows
        let shift = len - w;
        let (hi, lo, bad) = (&hi, &lo, &bad);
        let chunks = count.div_ceil(CHUNK);
        let (value, terms) = (0..chunks)
            .into_par_iter()
            .map(|c| {
                let a = c * CHUNK;
                let b = (a + CHUNK).min(count);
                let h1 = &hi[a..b];
                let h2 = &hi[a + shift..b + shift];
                let l1 = &lo[a..b];
                let l2 = &lo[a + shift..b + shift];
                if gaps {
                    let mut best = f64::NEG_INFINITY;
                    let mut t = 0usize;
                    for k in 0..b - a {
                        if bad[a + k + len] == bad[a + k] {
                            best = fmax(best, fmax(h1[k], h2[k]) - fmin(l1[k], l2[k]));
                            t += 1;
                        }
                    }
                    (best, t)
                } else {
                    // Four accumulators so that the reduction vectorises.
                    let mut acc = [f64::NEG_INFINITY; 4];
                    let body = (b - a) / 4 * 4;
                    for k in (0..body).step_by(4) {
                        for j in 0..4 {
                            let r = fmax(h1[k + j], h2[k + j]) - fmin(l1[k + j], l2[k + j]);
                            acc[j] = fmax(acc[j], r);
                        }
                    }
                    let mut best = fmax(fmax(acc[0], acc[1]), fmax(acc[2], acc[3]));
                    for k in body..b - a {
                        best = fmax(best, fmax(h1[k], h2[k]) - fmin(l1[k], l2[k]));
                    }
                    (best, b - a)
                }
            })
            .reduce(
                || (f64::NEG_INFINITY, 0),
                |p, q| (fmax(p.0, q.0), p.1 + q.1),
            );
        if terms > 0 {
            out.push(Estimate {
                tau: m as f64 * rec.tau0,
                m,
                value,
                terms,
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Fast = direct on a small record with gaps (the full randomized check
    /// is in tests/wander.rs).
    #[test]
    fn fast_matches_direct_small() {
        let mut x: Vec<f64> = (0..200)
            .map(|i| ((i * 7919) % 101) as f64 * 1e-9 - (i as f64) * 1e-11)
            .collect();
        x[17] = f64::NAN;
        x[120] = f64::NAN;
        let r = PhaseRecord::new(x, 0.5).unwrap();
        let ms: Vec<usize> = (1..199).collect();
        let a = mtie(&r, &ms);
        let b = mtie_direct(&r, &ms);
        assert_eq!(a, b);
    }
}
