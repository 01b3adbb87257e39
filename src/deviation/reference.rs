//! Direct, obviously-correct forms of every estimator, straight from the
//! textbook formula, for tests to compare the fast forms against. They are
//! slow (MDEV O(N·m), MTIE O(N·m) per τ) and make no attempt at speed.
//!
//! Gap rule, spelled out here by scanning: a term is used only when no
//! sample between the first and the last phase index it reads is NaN.

use super::Estimate;

fn clear(x: &[f64], lo: usize, hi: usize) -> bool {
    x[lo..=hi].iter().all(|v| !v.is_nan())
}

fn est(tau: f64, m: usize, value: f64, terms: usize) -> Option<Estimate> {
    (terms > 0).then_some(Estimate {
        tau,
        m,
        value,
        terms,
    })
}

/// ADEV, non-overlapping (NIST SP 1065 eq. 7): decimate the phase to every
/// m-th sample, then 1/(2τ²(K−2)) Σ (x_{j+2} − 2x_{j+1} + x_j)².
pub fn adev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let idx: Vec<usize> = (0..x.len()).step_by(m).collect();
    let mut s = 0.0;
    let mut n = 0;
    for w in idx.windows(3) {
        if clear(x, w[0], w[2]) {
            let d = x[w[2]] - 2.0 * x[w[1]] + x[w[0]];
            s += d * d;
            n += 1;
        }
    }
    est(tau, m, (s / (2.0 * tau * tau * n as f64)).sqrt(), n)
}

/// Overlapping ADEV (NIST SP 1065 eq. 11): 1/(2τ²(N−2m)) Σ (x_{i+2m} − 2x_{i+m} + x_i)².
pub fn oadev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let mut s = 0.0;
    let mut n = 0;
    for i in 0..x.len().saturating_sub(2 * m) {
        if clear(x, i, i + 2 * m) {
            let d = x[i + 2 * m] - 2.0 * x[i + m] + x[i];
            s += d * d;
            n += 1;
        }
    }
    est(tau, m, (s / (2.0 * tau * tau * n as f64)).sqrt(), n)
}

/// MDEV (NIST SP 1065 eq. 14): 1/(2m²τ²(N−3m+1)) Σ_j [Σ_{i=j}^{j+m−1} (x_{i+2m} − 2x_{i+m} + x_i)]².
pub fn mdev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let mut s = 0.0;
    let mut n = 0;
    if x.len() >= 3 * m {
        for j in 0..=x.len() - 3 * m {
            if clear(x, j, j + 3 * m - 1) {
                let mut inner = 0.0;
                for i in j..j + m {
                    inner += x[i + 2 * m] - 2.0 * x[i + m] + x[i];
                }
                s += inner * inner;
                n += 1;
            }
        }
    }
    let mf = m as f64;
    est(
        tau,
        m,
        (s / (2.0 * mf * mf * tau * tau * n as f64)).sqrt(),
        n,
    )
}

/// TDEV (NIST SP 1065 eq. 17): τ/√3 · MDEV.
pub fn tdev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    mdev(x, tau0, m).map(|e| Estimate {
        value: e.value * e.tau / 3f64.sqrt(),
        ..e
    })
}

/// HDEV, non-overlapping (NIST SP 1065 eq. 19): decimate to every m-th
/// sample, then 1/(6τ²(K−3)) Σ (x_{j+3} − 3x_{j+2} + 3x_{j+1} − x_j)².
pub fn hdev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let idx: Vec<usize> = (0..x.len()).step_by(m).collect();
    let mut s = 0.0;
    let mut n = 0;
    for w in idx.windows(4) {
        if clear(x, w[0], w[3]) {
            let d = x[w[3]] - 3.0 * x[w[2]] + 3.0 * x[w[1]] - x[w[0]];
            s += d * d;
            n += 1;
        }
    }
    est(tau, m, (s / (6.0 * tau * tau * n as f64)).sqrt(), n)
}

/// Overlapping HDEV (NIST SP 1065 eq. 20): 1/(6τ²(N−3m)) Σ (x_{i+3m} − 3x_{i+2m} + 3x_{i+m} − x_i)².
pub fn ohdev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let mut s = 0.0;
    let mut n = 0;
    for i in 0..x.len().saturating_sub(3 * m) {
        if clear(x, i, i + 3 * m) {
            let d = x[i + 3 * m] - 3.0 * x[i + 2 * m] + 3.0 * x[i + m] - x[i];
            s += d * d;
            n += 1;
        }
    }
    est(tau, m, (s / (6.0 * tau * tau * n as f64)).sqrt(), n)
}

/// TOTDEV (NIST SP 1065 eq. 25): build the extended sequence x* explicitly
/// (x*_{1−j} = 2x_1 − x_{1+j}, x*_{N+j} = 2x_N − x_{N−j}, 1-based, j = 1 … N−2),
/// then 1/(2τ²(N−2)) Σ_{i=2}^{N−1} (x*_{i−m} − 2x*_i + x*_{i+m})².
/// Each extended value remembers which record samples it reads; a term is
/// used when no sample from the lowest to the highest of those is NaN.
pub fn totdev(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let n = x.len();
    if n < 3 || m == 0 || m > (n - 1) / 2 {
        return None;
    }
    let tau = m as f64 * tau0;
    let ext = n - 2; // reflected samples on each side
                     // star[k + ext] is x*_k (0-based k from −ext to n−1+ext), with the
                     // record indices it reads.
    let mut star = Vec::with_capacity(n + 2 * ext);
    for j in (1..=ext).rev() {
        star.push((2.0 * x[0] - x[j], 0usize, j));
    }
    for (i, &v) in x.iter().enumerate() {
        star.push((v, i, i));
    }
    for j in 1..=ext {
        star.push((2.0 * x[n - 1] - x[n - 1 - j], n - 1 - j, n - 1));
    }
    let mut s = 0.0;
    let mut used = 0;
    for i in 1..n - 1 {
        let a = star[i + ext - m];
        let b = star[i + ext];
        let c = star[i + ext + m];
        let lo = a.1.min(a.2).min(b.1).min(c.1).min(c.2);
        let hi = a.1.max(a.2).max(b.2).max(c.1).max(c.2);
        if clear(x, lo, hi) {
            let d = a.0 - 2.0 * b.0 + c.0;
            s += d * d;
            used += 1;
        }
    }
    est(tau, m, (s / (2.0 * tau * tau * used as f64)).sqrt(), used)
}

/// MTIE (ITU-T G.810): max over windows of m + 1 samples of (max − min),
/// by scanning every window.
pub fn mtie(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let mut best = f64::NEG_INFINITY;
    let mut n = 0;
    for k in 0..x.len().saturating_sub(m) {
        let w = &x[k..=k + m];
        if w.iter().all(|v| !v.is_nan()) {
            let hi = w.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            let lo = w.iter().cloned().fold(f64::INFINITY, f64::min);
            best = best.max(hi - lo);
            n += 1;
        }
    }
    est(m as f64 * tau0, m, best, n)
}

/// TIE rms (ITU-T G.810): sqrt(mean over i of (x_{i+m} − x_i)²).
pub fn tierms(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let mut s = 0.0;
    let mut n = 0;
    for i in 0..x.len().saturating_sub(m) {
        if clear(x, i, i + m) {
            let d = x[i + m] - x[i];
            s += d * d;
            n += 1;
        }
    }
    est(m as f64 * tau0, m, (s / n as f64).sqrt(), n)
}

/// Dispatch by estimator, for tests that loop over the registry. `m` is the
/// estimator's own averaging factor (for `theo1` the even Theo1 factor);
/// `theoh` is a hybrid of two direct forms and has no single one (None).
pub fn evaluate(est_: super::Estimator, x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    use super::Estimator as E;
    match est_ {
        E::Adev => adev(x, tau0, m),
        E::Oadev => oadev(x, tau0, m),
        E::Mdev => mdev(x, tau0, m),
        E::Tdev => tdev(x, tau0, m),
        E::Hdev => hdev(x, tau0, m),
        E::Ohdev => ohdev(x, tau0, m),
        E::Totdev => totdev(x, tau0, m),
        E::Mtot => mtot(x, tau0, m),
        E::Ttot => ttot(x, tau0, m),
        E::Htot => htot(x, tau0, m),
        E::Theo1 => theo1(x, tau0, m),
        E::Theoh => None,
        E::Mtie => mtie(x, tau0, m),
        E::TieRms => tierms(x, tau0, m),
    }
}

/// The modified-total computation of `modtotal` written out directly: for
/// each subsequence of 3m samples, half-average detrend, build the 9m-sample
/// reflected sequence, average each block of m by summing it, and average
/// the 6m squared second differences. Returns (Σ over subsequences, count).
pub fn reflected_mean_square(v: &[f64], m: usize) -> (f64, usize) {
    let l3 = 3 * m;
    let mut total = 0.0;
    let mut count = 0;
    if m == 0 || v.len() < l3 {
        return (0.0, 0);
    }
    for n in 0..=v.len() - l3 {
        let w = &v[n..n + l3];
        if w.iter().any(|x| x.is_nan()) {
            continue;
        }
        let h = l3 / 2;
        let mean1 = w[..h].iter().sum::<f64>() / h as f64;
        let mean2 = w[l3 - h..].iter().sum::<f64>() / h as f64;
        let slope = (mean2 - mean1) / (l3 - h) as f64;
        let w0: Vec<f64> = w
            .iter()
            .enumerate()
            .map(|(k, x)| x - slope * k as f64)
            .collect();
        let mut ext: Vec<f64> = w0.iter().rev().cloned().collect();
        ext.extend(w0.iter());
        ext.extend(w0.iter().rev());
        assert_eq!(ext.len(), 9 * m);
        let avg = |a: usize| ext[a..a + m].iter().sum::<f64>() / m as f64;
        let mut s = 0.0;
        for j in 0..6 * m {
            let z = avg(j + 2 * m) - 2.0 * avg(j + m) + avg(j);
            s += z * z;
        }
        total += s / (6 * m) as f64;
        count += 1;
    }
    (total, count)
}

/// MTOT (NIST SP 1065 §5.2.12): sqrt(mean reflected mean square / (2τ²)).
pub fn mtot(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let tau = m as f64 * tau0;
    let (s, n) = reflected_mean_square(x, m);
    est(tau, m, (s / (n as f64 * 2.0 * tau * tau)).sqrt(), n)
}

/// TTOT (NIST SP 1065 §5.2.13): τ/√3 · MTOT.
pub fn ttot(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    mtot(x, tau0, m).map(|e| Estimate {
        value: e.value * e.tau / 3f64.sqrt(),
        ..e
    })
}

/// HTOT (NIST SP 1065 §5.2.14) on the frequencies y_i = (x_{i+1} − x_i)/τ0:
/// sqrt(mean reflected mean square / 6).
pub fn htot(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    let y: Vec<f64> = x.windows(2).map(|w| (w[1] - w[0]) / tau0).collect();
    let (s, n) = reflected_mean_square(&y, m);
    est(m as f64 * tau0, m, (s / (n as f64 * 6.0)).sqrt(), n)
}

/// Theo1 (NIST SP 1065 eq. 31) at the Theo1 factor m (even), written as in
/// the handbook with δ = 0 … m/2 − 1:
/// 1/(0.75(N−m)(mτ0)²) Σ_{i} Σ_δ 1/(m/2−δ) [(x_i − x_{i−δ+m/2}) + (x_{i+m} − x_{i+δ+m/2})]²,
/// τ = 0.75·m·τ0; an i is used when x_i … x_{i+m} holds no gap.
pub fn theo1(x: &[f64], tau0: f64, m: usize) -> Option<Estimate> {
    if m < 2 || m % 2 == 1 || x.len() < m + 1 {
        return None;
    }
    let half = m / 2;
    let mut s = 0.0;
    let mut n = 0;
    for i in 0..x.len() - m {
        if !clear(x, i, i + m) {
            continue;
        }
        for delta in 0..half {
            let a = (x[i] - x[i + half - delta]) + (x[i + m] - x[i + half + delta]);
            s += a * a / (half - delta) as f64;
        }
        n += 1;
    }
    let mt = m as f64 * tau0;
    est(0.75 * mt, m, (s / (0.75 * n as f64 * mt * mt)).sqrt(), n)
}
