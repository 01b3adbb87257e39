//! Theo1, its bias-removed form ThêoBR and the hybrid TheoH (NIST SP 1065
//! §5.2.15–5.2.17; Howe & Tasset 2004). Theo1 reaches τ = 0.75·(N−1)·τ0,
//! three quarters of the record, where the Allan variance has run out of
//! terms.
//!
//! Theo1 lives on its own lattice of averaging times, τ = 0.75·m·τ0 with m
//! even: the averaging factors passed to [`crate::deviation::compute`] for
//! `theo1` and `theoh` are read as the τ grid (τ ≈ m·τ0) and moved to the
//! nearest Theo1 factor m' = 2·round(m/1.5); the estimate reports m' and its
//! exact τ = 0.75·m'·τ0.

use super::allan::{finish, oadev};
use super::gaps::Prepared;
use super::Estimate;
use rayon::prelude::*;

/// The Theo1 factor m' (even, 2 ≤ m' ≤ N−1) nearest to a grid factor m
/// (τ = m·τ0 ≈ 0.75·m'·τ0); None when the record is too short.
pub(crate) fn theo_factor(m: usize, n_phase: usize) -> Option<usize> {
    let top = n_phase.checked_sub(1)? & !1; // largest even ≤ N−1
    if top < 2 || m == 0 {
        return None;
    }
    let mp = (2.0 * (m as f64 / 1.5).round()) as usize;
    Some(mp.clamp(2, top))
}

/// The Theo1 double sum and the number of i used:
/// Σ_{i} Σ_{k=1}^{m/2} (1/k)·(x_i − x_{i+k} − x_{i+m−k} + x_{i+m})², i = 0 … N−m−1,
/// an i used when x_i … x_{i+m} holds no gap. (With k = m/2 − δ this is the
/// SP 1065 form Σ_δ 1/(m/2−δ)·[(x_i − x_{i−δ+m/2}) + (x_{i+m} − x_{i+δ+m/2})]².)
///
/// Fast form: k outside, i inside, so that each inner sum is one vectorised
/// pass over four shifted copies of the record; the k are spread over
/// threads and added back in order. O(N·m/2) per τ.
pub(crate) fn theo1_sum(p: &Prepared, m: usize) -> (f64, usize) {
    let x = p.x;
    let n = x.len();
    if m < 2 || m % 2 == 1 || n < m + 1 {
        return (0.0, 0);
    }
    let count = n - m;
    let used = if p.gaps.is_none() {
        count
    } else {
        (0..count).filter(|&i| p.gaps.clear(i, i + m)).count()
    };
    if used == 0 {
        return (0.0, 0);
    }
    let per_k: Vec<f64> = (1..=m / 2)
        .into_par_iter()
        .map(|k| {
            let s = if p.gaps.is_none() {
                sum_sq_4(x, [0, k, m - k, m], count)
            } else {
                let mut s = 0.0;
                for i in 0..count {
                    if p.gaps.clear(i, i + m) {
                        let v = (x[i] - x[i + k]) - (x[i + m - k] - x[i + m]);
                        s += v * v;
                    }
                }
                s
            };
            s / k as f64
        })
        .collect();
    (per_k.iter().sum(), used)
}

/// Σ_{i<n} (x_{i+o0} − x_{i+o1} − x_{i+o2} + x_{i+o3})², vectorisable.
fn sum_sq_4(x: &[f64], o: [usize; 4], n: usize) -> f64 {
    let c0 = &x[o[0]..o[0] + n];
    let c1 = &x[o[1]..o[1] + n];
    let c2 = &x[o[2]..o[2] + n];
    let c3 = &x[o[3]..o[3] + n];
    let mut acc = [0.0f64; 4];
    let chunks = n / 4;
    for ch in 0..chunks {
        let b = 4 * ch;
        for l in 0..4 {
            let v = (c0[b + l] - c1[b + l]) - (c2[b + l] - c3[b + l]);
            acc[l] += v * v;
        }
    }
    let mut s = 0.0;
    for i in 4 * chunks..n {
        let v = (c0[i] - c1[i]) - (c2[i] - c3[i]);
        s += v * v;
    }
    (acc[0] + acc[2]) + (acc[1] + acc[3]) + s
}

/// Theo1 variance at the Theo1 factor m (even):
/// Theo1(τ) = 1/(0.75·(N−m)·(m·τ0)²) · Σ_i Σ_{k=1}^{m/2} (1/k)(x_i − x_{i+k} − x_{i+m−k} + x_{i+m})²,
/// τ = 0.75·m·τ0 (NIST SP 1065 eq. 31). For white FM it equals the Allan
/// variance at the same τ.
pub(crate) fn theo1_at(p: &Prepared, m: usize) -> Option<Estimate> {
    let (s, used) = theo1_sum(p, m);
    let mt = m as f64 * p.tau0;
    finish(0.75 * mt, m, s, 0.75 * mt * mt, used)
}

/// Theo1 deviation at the grid factor m (see the module notes).
pub(crate) fn theo1(p: &Prepared, m: usize) -> Option<Estimate> {
    theo1_at(p, theo_factor(m, p.x.len())?)
}

/// The ThêoBR bias ratio (NIST SP 1065 eq. 32, from memory):
/// R = (1/(n+1)) Σ_{i=0}^{n} AVAR(m = 9+3i) / Theo1(m = 12+4i),
/// n = ⌊0.1·N/3 − 3⌋ (N phase samples), both at τ = (9+3i)·τ0. It averages,
/// over short τ where AVAR is reliable, how far Theo1 falls below AVAR for
/// the noise at hand. None when N < 90 (n < 0) or no pair is computable.
///
/// Cost: the n + 1 ≈ N/30 Theo1 values make this O(N³/1800) operations —
/// about a second at N = 10⁴; it is computed once per record.
pub(crate) fn theobr_ratio(p: &Prepared) -> Option<f64> {
    let n = p.x.len();
    let nb = (0.1 * n as f64 / 3.0 - 3.0).floor();
    if nb < 0.0 {
        return None;
    }
    let nb = nb as usize;
    let ratios: Vec<Option<f64>> = (0..=nb)
        .into_par_iter()
        .map(|i| {
            let a = oadev(p, 9 + 3 * i)?.value;
            let t = theo1_at(p, 12 + 4 * i)?.value;
            (t > 0.0).then(|| (a * a) / (t * t))
        })
        .collect();
    let good: Vec<f64> = ratios.into_iter().flatten().collect();
    if good.is_empty() {
        return None;
    }
    Some(good.iter().sum::<f64>() / good.len() as f64)
}

/// The TheoH switch point: the Allan variance serves up to 10 % of the
/// record length T = (N−1)·τ0, ThêoBR beyond (NIST SP 1065 §5.2.17, switch
/// at k ≈ 0.1·T, from memory).
pub(crate) fn theoh_switch(n_phase: usize, tau0: f64) -> f64 {
    0.1 * n_phase.saturating_sub(1) as f64 * tau0
}

/// TheoH at the grid factor m, given the record's ThêoBR ratio:
/// the overlapping ADEV at τ = m·τ0 when τ is below [`theoh_switch`], else
/// ThêoBR = sqrt(R·Theo1) at the nearest Theo1 factor.
pub(crate) fn theoh(p: &Prepared, m: usize, ratio: Option<f64>) -> Option<Estimate> {
    let split = theoh_switch(p.x.len(), p.tau0);
    if (m as f64) * p.tau0 < split {
        return oadev(p, m);
    }
    let r = ratio?;
    let e = theo1(p, m)?;
    Some(Estimate {
        value: e.value * r.sqrt(),
        ..e
    })
}

/// Equivalent degrees of freedom of Theo1 (NIST SP 1065, Theo1 EDF table,
/// from memory), with N phase samples, the Theo1 factor m (even) and
/// r = τ/τ0 = 0.75·m:
///
/// - WPM (α = 2):  [0.86(N+1)(N − 4r/3) / (N − r)] · [r / (r + 1.14)]
/// - FPM (α = 1):  [(4.798N² − 6.374Nr + 12.387r) / (√(r + 36.6)·(N − r)(r + 0.3))] · [r/(r + 0.3)]
/// - WFM (α = 0):  [(4.1N + 0.8)/r − (3.1N + 6.5)/N] · [r^1.5 / (r^1.5 + 5.2)]
/// - FFM (α = −1): [(2N² − 1.3Nr − 3.5r) / (Nr)] · [r³ / (r³ + 2.3)]
/// - RWFM (α = −2): [(4.4N − 2)/(2.9r)] · [((4.4N − 1)² − 8.6r(4.4N − 1) + 11.4r²) / (4.4N − 3)²]
///
/// Monte Carlo here (tests/long_tau.rs, N = 1001) confirms WFM and WPM
/// within 20 % up to τ = 0.3·T, and RWFM within 2 % up to τ ≈ T/7 (FFM,
/// from the power-law simulator: within 10 % at τ = 48 and 0.3·T); at
/// τ = 0.3·T the RWFM form is about 22 % below the Monte Carlo EDF, which
/// makes the interval wider than it need be (conservative). FPM is not
/// checked by Monte Carlo here.
/// None for other α or when m is not a valid Theo1 factor.
pub fn theo1_edf(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    let n = n_phase as f64;
    let r = 0.75 * m as f64;
    let edf = match alpha {
        2 => 0.86 * (n + 1.0) * (n - 4.0 * r / 3.0) / (n - r) * (r / (r + 1.14)),
        1 => {
            (4.798 * n * n - 6.374 * n * r + 12.387 * r) / ((r + 36.6).sqrt() * (n - r) * (r + 0.3))
                * (r / (r + 0.3))
        }
        0 => ((4.1 * n + 0.8) / r - (3.1 * n + 6.5) / n) * (r.powf(1.5) / (r.powf(1.5) + 5.2)),
        -1 => (2.0 * n * n - 1.3 * n * r - 3.5 * r) / (n * r) * (r.powi(3) / (r.powi(3) + 2.3)),
        -2 => {
            let a = 4.4 * n - 1.0;
            (4.4 * n - 2.0) / (2.9 * r)
                * ((a * a - 8.6 * r * a + 11.4 * r * r) / (4.4 * n - 3.0).powi(2))
        }
        _ => return None,
    };
    (edf.is_finite() && edf > 0.0).then_some(edf)
}
