//! TDEV, the time deviation (ITU-T G.810; NIST SP 1065 eq. 17):
//!
//! TVAR(τ = n·τ0) = 1 / (6 n² (N − 3n + 1)) · Σ_{j=1}^{N−3n+1} [ Σ_{i=j}^{j+n−1} (x_{i+2n} − 2x_{i+n} + x_i) ]²,
//!
//! TDEV = sqrt(TVAR) = (τ/√3)·Mod σ_y(τ). A term whose span touches a gap is
//! skipped and the mean is over the terms used.
//!
//! [`tdev`] is the fast form: with d_i = x_{i+2n} − 2x_{i+n} + x_i and its
//! running sum P_k = Σ_{i<k} d_i, each inner sum is P_{j+n} − P_j, so one τ
//! costs O(N). Summing the second differences (not the phase itself) keeps
//! the running sum of the size of the signal it must resolve, so a large
//! phase offset or frequency drift does not cost precision. [`tdev_direct`]
//! is the double sum as written, the reference for the tests.

use crate::deviation::Estimate;
use crate::record::PhaseRecord;
use rayon::prelude::*;

/// TDEV by the double sum as written (O(N·n) per τ): the reference.
pub fn tdev_direct(rec: &PhaseRecord, ms: &[usize]) -> Vec<Estimate> {
    let x = &rec.x;
    let big_n = x.len();
    let mut out = Vec::new();
    let mut ms: Vec<usize> = ms.to_vec();
    ms.sort_unstable();
    ms.dedup();
    for n in ms {
        if n == 0 || big_n < 3 * n + 1 {
            continue;
        }
        let mut sum = 0.0;
        let mut terms = 0;
        for j in 0..big_n - 3 * n + 1 {
            let mut inner = 0.0;
            for i in j..j + n {
                inner += x[i + 2 * n] - 2.0 * x[i + n] + x[i];
            }
            if inner.is_nan() {
                continue;
            }
            sum += inner * inner;
            terms += 1;
        }
        if terms > 0 {
            out.push(Estimate {
                tau: n as f64 * rec.tau0,
                m: n,
                value: (sum / (6.0 * (n * n) as f64 * terms as f64)).sqrt(),
                terms,
            });
        }
    }
    out
}

fn tdev_one(
    x: &[f64],
    n: usize,
    tau0: f64,
    gaps: bool,
    p: &mut Vec<f64>,
    c: &mut Vec<u32>,
) -> Option<Estimate> {
    let big_n = x.len();
    if n == 0 || big_n < 3 * n + 1 {
        return None;
    }
    let nd = big_n - 2 * n;
    p.clear();
    p.reserve(nd + 1);
    p.push(0.0);
    let mut acc = 0.0f64;
    if gaps {
        c.clear();
        c.reserve(nd + 1);
        c.push(0);
        let mut bad = 0u32;
        for i in 0..nd {
            let d = x[i + 2 * n] - 2.0 * x[i + n] + x[i];
            if d.is_nan() {
                bad += 1;
            } else {
                acc += d;
            }
            p.push(acc);
            c.push(bad);
        }
    } else {
        let (a, b, cc) = (&x[..nd], &x[n..n + nd], &x[2 * n..]);
        for ((&x0, &x1), &x2) in a.iter().zip(b).zip(cc) {
            acc += x2 - 2.0 * x1 + x0;
            p.push(acc);
        }
    }
    let terms_all = nd - n + 1;
    let (sum, terms) = if gaps {
        let mut s = 0.0;
        let mut t = 0usize;
        for j in 0..terms_all {
            if c[j + n] == c[j] {
                let w = p[j + n] - p[j];
                s += w * w;
                t += 1;
            }
        }
        (s, t)
    } else {
        let mut acc = [0.0f64; 4];
        let (lo, hi) = (&p[..terms_all], &p[n..n + terms_all]);
        let body = terms_all / 4 * 4;
        for k in (0..body).step_by(4) {
            for j in 0..4 {
                let w = hi[k + j] - lo[k + j];
                acc[j] += w * w;
            }
        }
        let mut s = acc[0] + acc[1] + acc[2] + acc[3];
        for k in body..terms_all {
            let w = hi[k] - lo[k];
            s += w * w;
        }
        (s, terms_all)
    };
    (terms > 0).then(|| Estimate {
        tau: n as f64 * tau0,
        m: n,
        value: (sum / (6.0 * (n * n) as f64 * terms as f64)).sqrt(),
        terms,
    })
}

/// TDEV at each usable averaging factor in `ms` (N ≥ 3n + 1), by running
/// sums (see the module notes), in parallel over τ.
///
/// ```
/// use tauwise::{PhaseRecord, wander::tdev::tdev};
/// // NIST SP 1065 nine-point set, τ0 = 1 s: TDEV(1) = 52.67135 (CHECKS.md A, from memory).
/// let y = [892.0, 809.0, 823.0, 798.0, 671.0, 644.0, 883.0, 903.0, 677.0];
/// let mut x = vec![0.0];
/// for v in y { x.push(x.last().unwrap() + v); }
/// let e = tdev(&PhaseRecord::new(x, 1.0).unwrap(), &[1]);
/// assert!((e[0].value - 52.67135).abs() < 1e-4);
/// ```
pub fn tdev(rec: &PhaseRecord, ms: &[usize]) -> Vec<Estimate> {
    let mut ms: Vec<usize> = ms.to_vec();
    ms.sort_unstable();
    ms.dedup();
    let gaps = rec.x.iter().any(|v| v.is_nan());
    let x = &rec.x;
    let tau0 = rec.tau0;
    ms.par_iter()
        .map_init(
            || (Vec::new(), Vec::new()),
            |(p, c), &n| tdev_one(x, n, tau0, gaps, p, c),
        )
        .collect::<Vec<_>>()
        .into_iter()
        .flatten()
        .collect()
}
