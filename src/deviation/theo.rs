//! Theo1, its bias-removed form ThêoBR and the hybrid TheoH (NIST SP 1065
//! §5.2.15–5.2.17; Howe & Tasset 2004). Theo1 reaches τ = 0.75·(N−1)·τ0,
//! three quarters of the record, where the Allan variance has run out of
//! terms.
//!
//! Theo1 lives on its own lattice of averaging times, τ = 0.75·m·τ0 with m
//! even: the averaging factors passed to [`crate::deviation::compute`] for
//! `theo1` and `theoh` are read as the τ grid (τ ≈ m·τ0) and moved to the
//! nearest Theo1 factor m' = 2·round(m/1.5), which must be at least 10
//! (SP 1065 defines Theo1 for even 10 ≤ m' ≤ N − 1; shorter grid τ are left
//! out); the estimate reports m' and its exact τ = 0.75·m'·τ0.

use super::allan::{finish, oadev};
use super::gaps::Prepared;
use super::Estimate;
use crate::record::gap_free_runs;
use crate::tau::THEO1_MIN_FACTOR;
use rayon::prelude::*;

/// The Theo1 factor m' (even, 10 ≤ m' ≤ N−1: NIST SP 1065 §5.2.15)
/// nearest to a grid factor m (τ = m·τ0 ≈ 0.75·m'·τ0); None when that
/// factor is below 10 or the record is too short for m' = 10.
pub(crate) fn theo_factor(m: usize, n_phase: usize) -> Option<usize> {
    let top = n_phase.checked_sub(1)? & !1; // largest even ≤ N−1
    if top < THEO1_MIN_FACTOR || m == 0 {
        return None;
    }
    let mp = (2.0 * (m as f64 / 1.5).round()) as usize;
    (mp >= THEO1_MIN_FACTOR).then(|| mp.min(top))
}

/// The Theo1 double sum and the number of i used:
/// Σ_{i} Σ_{k=1}^{m/2} (1/k)·(x_i − x_{i+k} − x_{i+m−k} + x_{i+m})², i = 0 … N−m−1,
/// an i used when x_i … x_{i+m} holds no gap. (With k = m/2 − δ this is the
/// SP 1065 form Σ_δ 1/(m/2−δ)·[(x_i − x_{i−δ+m/2}) + (x_{i+m} − x_{i+δ+m/2})]².)
///
/// Two exact forms, chosen by m alone (so a value never depends on the
/// other τ asked for):
///
/// - m < [`BLOCK_FORM_FROM`]: k outside, i inside, each inner sum one
///   vectorised pass over four shifted copies of each gap-free stretch;
///   O(N·m/2) per τ.
/// - from [`BLOCK_FORM_FROM`] on: the correlation form of [`theo1_block`]
///   on blocks of 3m terms; O(N·log²m) per τ, memory O(m) per thread.
pub(crate) fn theo1_sum(p: &Prepared, m: usize) -> (f64, usize) {
    let x = p.x;
    let n = x.len();
    if m < 2 || m % 2 == 1 || n < m + 1 {
        return (0.0, 0);
    }
    // A term is used when x_i … x_{i+m} is clear: the terms are those of
    // the gap-free stretches (the whole record when it has no gap) taken
    // one by one.
    let stretches: Vec<(usize, usize)> = if p.gaps.is_none() {
        vec![(0, n)]
    } else {
        gap_free_runs(x)
            .into_iter()
            .map(|(a, len)| (a, a + len))
            .filter(|&(a, b)| b - a > m)
            .collect()
    };
    let used: usize = stretches.iter().map(|&(a, b)| b - a - m).sum();
    if used == 0 {
        return (0.0, 0);
    }
    if m >= BLOCK_FORM_FROM {
        // Blocks of at most 3m terms (the first index of each block and its
        // number of terms), summed in record order.
        let per_block = 3 * m;
        let blocks: Vec<(usize, usize)> = stretches
            .iter()
            .flat_map(|&(a, b)| {
                let terms = b - a - m;
                (0..terms)
                    .step_by(per_block)
                    .map(move |s| (a + s, per_block.min(terms - s)))
            })
            .collect();
        let sums: Vec<f64> = blocks
            .par_iter()
            .map_init(
                rustfft::FftPlanner::<f64>::new,
                |planner, &(start, count)| theo1_block(&x[start..start + count + m], m, planner),
            )
            .collect();
        return (sums.iter().sum(), used);
    }
    let per_k: Vec<f64> = (1..=m / 2)
        .into_par_iter()
        .map(|k| {
            let s: f64 = stretches
                .iter()
                .map(|&(a, b)| sum_sq_4(&x[a..b], [0, k, m - k, m], b - a - m))
                .sum();
            s / k as f64
        })
        .collect();
    (per_k.iter().sum(), used)
}

/// FFT size from which a block is computed alone (see [`theo1_block`]).
const BIG_FFT: usize = 1 << 18;

/// Held while a block of FFT size ≥ [`BIG_FFT`] is computed, so that the
/// τ computed in parallel do not hold several record-sized buffers at once.
static BIG_BLOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Theo1 factors from this one on use the correlation form
/// ([`theo1_block`]); below it the direct sum is as fast.
pub(crate) const BLOCK_FORM_FROM: usize = 192;

/// The Theo1 double sum over the n = seg.len() − m terms i = 0 … n−1 of a
/// gap-free segment (m even), exactly, in O((n + m)·log(n + m) + m·log²m).
///
/// With y the segment less the straight line through its end points (Theo1
/// is exactly invariant to a + b·t), Δ_k(i) = y_{i+k} − y_i and L = n + m,
/// each term is (Δ_k(i+m−k) − Δ_k(i))², and the sum over i of each product
/// is a lagged product sum of y over a range of i. Each such range sum is
/// the whole-segment autocorrelation R(ℓ) = Σ_{t<L−ℓ} y_t·y_{t+ℓ} less
/// products that lie wholly within the first m samples (autocorrelation
/// hd(ℓ) of y_0 … y_{m−1}) or the last m (tl(ℓ) of y_n … y_{L−1}):
///
/// - Σ_i Δ_k(i)² = Σ_{i<n}(y_{i+k}² + y_i²) − 2(R(k) − tl(k));
/// - Σ_i Δ_k(i+m−k)² = Σ_{i<n}(y_{i+m}² + y_{i+m−k}²) − 2(R(k) − hd(k));
/// - Σ_i Δ_k(i)·Δ_k(i+m−k) = [R(m−k) − hd(m−k)] − P_k − R(m) + [R(m−k) − tl(m−k)],
///   with P_k = Σ_{i<n} y_{i+k}·y_{i+m−k} = R(m−2k) − H_k − T_k.
///
/// H_k = Σ_{j<k} y_j·y_{j+m−2k} are the products at lag m − 2k whose two
/// indices add to less than m (a triangle, not a segment), and T_k the same
/// at the other end (H_k of the reversed segment); their weighted sum
/// Σ_k H_k/k comes from [`head_triangle`]. R, hd and tl come from FFTs; the
/// sums of squares from double-double prefix sums. Rounding: the products
/// are of a local, detrended y over 4m samples, so the cancellation is
/// bounded (tested to 1e-10 relative against the direct sum, random-walk FM
/// included).
fn theo1_block(seg: &[f64], m: usize, planner: &mut rustfft::FftPlanner<f64>) -> f64 {
    use rustfft::num_complex::Complex;
    let len = seg.len();
    let n = len - m;
    let half = m / 2;
    let slope = (seg[len - 1] - seg[0]) / (len - 1) as f64;
    let y: Vec<f64> = seg
        .iter()
        .enumerate()
        .map(|(t, &v)| (v - seg[0]) - slope * t as f64)
        .collect();
    // A large block takes the big-block lock (one at a time across the τ
    // computed in parallel) and its own planner (its twiddles freed after).
    let size = (len + m + 1).next_power_of_two();
    let _guard = (size >= BIG_FFT).then(|| BIG_BLOCK.lock().unwrap_or_else(|e| e.into_inner()));
    let mut own_planner;
    let planner = if size >= BIG_FFT {
        own_planner = rustfft::FftPlanner::<f64>::new();
        &mut own_planner
    } else {
        planner
    };
    // R(ℓ), ℓ = 0 … m (zero-padded: no wrap-around). Only forward plans:
    // the inverse of a real even spectrum P is the forward transform of P
    // (over the size), read at index 0 and size − ℓ.
    let mut buf: Vec<Complex<f64>> = Vec::with_capacity(size);
    buf.extend(y.iter().map(|&v| Complex::new(v, 0.0)));
    buf.resize(size, Complex::new(0.0, 0.0));
    let fwd = planner.plan_fft_forward(size);
    fwd.process(&mut buf);
    for c in &mut buf {
        *c = Complex::new(c.norm_sqr(), 0.0);
    }
    fwd.process(&mut buf);
    let scale = 1.0 / size as f64;
    let r: Vec<f64> = (0..=m).map(|l| buf[(size - l) % size].re * scale).collect();
    // hd and tl at once: head in the real part, tail in the imaginary part;
    // their spectra A, B from Z(k) and Z(−k), then |A|² + i|B|² back
    // (inverse as conj ∘ forward ∘ conj), in the same buffer.
    let size2 = (2 * m + 1).next_power_of_two();
    buf.truncate(size2);
    buf.fill(Complex::new(0.0, 0.0));
    for t in 0..m {
        buf[t] = Complex::new(y[t], y[n + t]);
    }
    let fwd2 = planner.plan_fft_forward(size2);
    fwd2.process(&mut buf);
    let spectra = |zk: Complex<f64>, zc: Complex<f64>| {
        let a = (zk + zc) * 0.5;
        let b = (zk - zc) * Complex::new(0.0, -0.5);
        // conj of |A|² + i|B|² for the inverse by the forward transform.
        Complex::new(a.norm_sqr(), -b.norm_sqr())
    };
    for k in 0..=size2 / 2 {
        let j = (size2 - k) % size2;
        let (zk, zj) = (buf[k], buf[j]);
        buf[k] = spectra(zk, zj.conj());
        buf[j] = spectra(zj, zk.conj());
    }
    fwd2.process(&mut buf);
    let scale2 = 1.0 / size2 as f64;
    let hd: Vec<f64> = buf[..=m].iter().map(|c| c.re * scale2).collect();
    let tl: Vec<f64> = buf[..=m].iter().map(|c| -c.im * scale2).collect();
    drop(buf);
    let sq: Vec<f64> = y.iter().map(|v| v * v).collect();
    let q = super::modtotal::PrefixSums::new(&sq);
    drop(sq);
    let sqw = |a: usize| q.sum(a, a + n);
    let (s0, sm) = (sqw(0), sqw(m));
    let mut acc = 0.0;
    for k in 1..=half {
        let d1 = sqw(k) + s0 - 2.0 * (r[k] - tl[k]);
        let d2 = sm + sqw(m - k) - 2.0 * (r[k] - hd[k]);
        let x = (r[m - k] - hd[m - k]) - r[m - 2 * k] - r[m] + (r[m - k] - tl[m - k]);
        acc += (d1 + d2 - 2.0 * x) / k as f64;
    }
    let tail: Vec<f64> = y[n..].iter().rev().copied().collect();
    let tri = head_triangle(&y[..m], planner) + head_triangle(&tail, planner);
    acc - 2.0 * tri
}

/// Σ_{k=1}^{m/2} (1/k)·Σ_{j<k} z_j·z_{j+m−2k} for z of even length m: the
/// products z_u·z_v, u ≤ v, v − u even, u + v < m, each weighted by
/// 2/(m − (v − u)). With w = m − 1 − v and b_w = z_{m−1−w} this is
/// Σ_{u≤w} h(u+w)·z_u·b_w, h(s) = 2/(s+1) for odd s < m, else 0: split
/// [0, m) in halves, the pairs across the split are one convolution (FFT),
/// the pairs within each half recurse. O(m·log²m).
fn head_triangle(z: &[f64], planner: &mut rustfft::FftPlanner<f64>) -> f64 {
    let m = z.len();
    let b: Vec<f64> = z.iter().rev().copied().collect();
    let h: Vec<f64> = (0..2 * m)
        .map(|s| {
            if s % 2 == 1 && s < m {
                2.0 / (s + 1) as f64
            } else {
                0.0
            }
        })
        .collect();
    lower_pairs(z, &b, &h, 0, m, planner)
}

/// Σ_{lo ≤ u ≤ w < hi} h(u+w)·a_u·b_w with h(s) = 0 for s ≥ h.len() / 2
/// (see [`head_triangle`]).
fn lower_pairs(
    a: &[f64],
    b: &[f64],
    h: &[f64],
    lo: usize,
    hi: usize,
    planner: &mut rustfft::FftPlanner<f64>,
) -> f64 {
    let reach = h.len() / 2; // h(s) = 0 from s = reach on
    if 2 * lo >= reach || hi <= lo {
        return 0.0;
    }
    if hi - lo <= 64 {
        let mut s = 0.0;
        for u in lo..hi {
            let mut inner = 0.0;
            for w in u..hi {
                inner += h[u + w] * b[w];
            }
            s += a[u] * inner;
        }
        return s;
    }
    let mid = (lo + hi) / 2;
    let mut s = lower_pairs(a, b, h, lo, mid, planner) + lower_pairs(a, b, h, mid, hi, planner);
    if lo + mid < reach {
        s += cross_pairs(&a[lo..mid], &b[mid..hi], &h[lo + mid..], planner);
    }
    s
}

/// Σ_{u,w} h(u+w)·a_u·b_w over all u < a.len(), w < b.len() (h indexed
/// from 0 at u = w = 0): Σ_s h(s)·(a ∗ b)(s), the convolution by one FFT
/// of a + i·b (the imaginary part of the inverse of its square is 2·a ∗ b;
/// the inverse is the forward transform read at −t).
fn cross_pairs(a: &[f64], b: &[f64], h: &[f64], planner: &mut rustfft::FftPlanner<f64>) -> f64 {
    use rustfft::num_complex::Complex;
    let top = (a.len() + b.len() - 1).min(h.len());
    if a.len() * b.len() <= 4096 {
        let mut s = 0.0;
        for (u, &av) in a.iter().enumerate() {
            for (w, &bv) in b.iter().enumerate().take(top.saturating_sub(u)) {
                s += h[u + w] * av * bv;
            }
        }
        return s;
    }
    let size = (a.len() + b.len() - 1).next_power_of_two();
    let mut buf = vec![Complex::new(0.0, 0.0); size];
    for (c, &v) in buf.iter_mut().zip(a) {
        c.re = v;
    }
    for (c, &v) in buf.iter_mut().zip(b) {
        c.im = v;
    }
    let fwd = planner.plan_fft_forward(size);
    fwd.process(&mut buf);
    for c in &mut buf {
        *c = *c * *c;
    }
    // Inverse by the forward transform read backwards.
    fwd.process(&mut buf);
    let scale = 0.5 / size as f64;
    h[..top]
        .iter()
        .enumerate()
        .map(|(t, &hv)| hv * buf[(size - t) % size].im * scale)
        .sum()
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
/// Cost: the n + 1 ≈ N/30 Theo1 values beyond m = 256 come together from
/// [`theo1_sums_many`], run on each gap-free stretch of the record,
/// O(N²/450) at most; the few below from direct sums. Computed once per
/// record.
pub(crate) fn theobr_ratio(p: &Prepared) -> Option<f64> {
    let n = p.x.len();
    let nb = (0.1 * n as f64 / 3.0 - 3.0).floor();
    if nb < 0.0 {
        return None;
    }
    let nb = nb as usize;
    let direct = |i: usize| theo1_at(p, 12 + 4 * i).map(|e| e.value * e.value);
    // The Theo1 values beyond m = DIRECT_UP_TO all at once from the
    // all-factor form, run on each gap-free stretch of the record (a Theo1
    // term is used only when its whole span x_i … x_{i+m} is clear, so the
    // record's sum is the sum over its stretches); the short ones one
    // direct Theo1 sum per factor.
    let first_fast = (0..=nb)
        .find(|&i| 12 + 4 * i > DIRECT_UP_TO)
        .unwrap_or(nb + 1);
    let mut theo: Vec<Option<f64>> = (0..first_fast).into_par_iter().map(direct).collect();
    let ms: Vec<usize> = (first_fast..=nb).map(|i| 12 + 4 * i).collect();
    // Stretches in parallel; their sums are added in record order.
    let per_stretch: Vec<(Vec<f64>, usize)> = gap_free_runs(p.x)
        .into_par_iter()
        .map(|(a, len)| (a, a + len))
        .map(|(a, b)| {
            let fit: Vec<usize> = ms.iter().copied().take_while(|&m| m < b - a).collect();
            if fit.is_empty() {
                return (Vec::new(), b - a);
            }
            (theo1_sums_many(&p.x[a..b], &fit), b - a)
        })
        .collect();
    let mut sums = vec![0.0f64; ms.len()];
    let mut used = vec![0usize; ms.len()];
    for (s, len) in per_stretch {
        for (j, v) in s.into_iter().enumerate() {
            sums[j] += v;
            used[j] += len - ms[j];
        }
    }
    theo.extend(ms.iter().enumerate().map(|(j, &m)| {
        let mt = m as f64 * p.tau0;
        (used[j] > 0).then(|| sums[j] / (0.75 * mt * mt * used[j] as f64))
    }));
    let ratios: Vec<Option<f64>> = (0..=nb)
        .into_par_iter()
        .map(|i| {
            let a = oadev(p, 9 + 3 * i)?.value;
            let t = theo[i]?;
            (t > 0.0).then(|| (a * a) / t)
        })
        .collect();
    let good: Vec<f64> = ratios.into_iter().flatten().collect();
    if good.is_empty() {
        return None;
    }
    Some(good.iter().sum::<f64>() / good.len() as f64)
}

/// ThêoBR takes its Theo1 values up to this factor from the direct sum:
/// there the autocorrelation form of [`theo1_sums_many`] loses most to
/// rounding, and the direct sum is cheap.
const DIRECT_UP_TO: usize = 256;

/// The Theo1 double sum of [`theo1_sum`] for many even factors at once, on
/// a gap-free record: entry j is the sum for `ms[j]` (every ms\[j\] even,
/// 2 ≤ ms\[j\] ≤ N − 1).
///
/// Expanding the square (x_i − x_{i+k} − x_{i+m−k} + x_{i+m})² leaves sums
/// W(p, ℓ) = Σ_{i<N−m} x_{i+p}·x_{i+p+ℓ} over the offsets p ∈ {0, k, m−k, m}.
/// Each is the whole-record autocorrelation R(ℓ) = Σ_t x_t x_{t+ℓ} (one
/// FFT) less a head of p products and a tail of m − ℓ − p products; the
/// heads and tails needed have length k at every lag, or length ≤ m at lag
/// k, so they are kept as running arrays while k grows. Lag-0 sums come
/// from double-double prefix sums of x². The record is first reduced by a
/// straight line through its end points (Theo1 is exactly invariant to it).
/// Cost O(N log N + K·(M + J)) for largest factor M, K = M/2 and J factors:
/// made for the ThêoBR ratio (J ≈ N/30 factors up to M ≈ 0.13·N).
///
/// Rounding: the expansion subtracts sums of squares of the record, so the
/// relative error grows with the ratio of the record's spread to its
/// m-scale differences: about 1e-15 on white plus random-walk phase, but
/// about 1.5e-16·(N/m)³ on random-walk FM (2e-11 at N/m = 50; 5e-8 at
/// N = 172800, m = 256 by that scaling) — why ThêoBR uses it from m = 256 on.
pub(crate) fn theo1_sums_many(x: &[f64], ms: &[usize]) -> Vec<f64> {
    use rustfft::num_complex::Complex;
    let n = x.len();
    let Some(&mx) = ms.iter().max() else {
        return Vec::new();
    };
    if n < 3 || mx + 1 > n {
        return Vec::new();
    }
    let slope = (x[n - 1] - x[0]) / (n - 1) as f64;
    let xd: Vec<f64> = x
        .iter()
        .enumerate()
        .map(|(t, &v)| (v - x[0]) - slope * t as f64)
        .collect();
    // R(ℓ), ℓ = 0 … mx, by FFT (zero-padded, no wrap-around).
    let size = (n + mx + 1).next_power_of_two();
    let mut buf: Vec<Complex<f64>> = xd.iter().map(|&v| Complex::new(v, 0.0)).collect();
    buf.resize(size, Complex::new(0.0, 0.0));
    let mut planner = rustfft::FftPlanner::<f64>::new();
    planner.plan_fft_forward(size).process(&mut buf);
    for c in &mut buf {
        *c = Complex::new(c.norm_sqr(), 0.0);
    }
    planner.plan_fft_inverse(size).process(&mut buf);
    let r: Vec<f64> = buf[..=mx].iter().map(|c| c.re / size as f64).collect();
    let sq: Vec<f64> = xd.iter().map(|v| v * v).collect();
    let q = super::modtotal::PrefixSums::new(&sq);
    let sqw = |p: usize, l: usize| q.sum(p, p + l);
    let mut out = vec![0.0f64; ms.len()];
    // hd[ℓ] = Σ_{t<k} x_t x_{t+ℓ}; tl[ℓ] = the last k products at lag ℓ.
    let mut hd = vec![0.0f64; mx + 1];
    let mut tl = vec![0.0f64; mx + 1];
    // pk[h] = Σ_{t<h} x_t x_{t+k}; sk[h] = the last h products at lag k.
    let mut pk = vec![0.0f64; mx + 1];
    let mut sk = vec![0.0f64; mx + 1];
    for k in 1..=mx / 2 {
        let t = k - 1;
        for (lag, h) in hd.iter_mut().enumerate() {
            if t + lag < n {
                *h += xd[t] * xd[t + lag];
            }
        }
        for (lag, v) in tl.iter_mut().enumerate() {
            if n >= lag + k {
                *v += xd[n - lag - k] * xd[n - k];
            }
        }
        let (mut a, mut b) = (0.0, 0.0);
        for h in 0..=mx {
            pk[h] = a;
            sk[h] = b;
            if h + k < n {
                a += xd[h] * xd[h + k];
                b += xd[n - k - 1 - h] * xd[n - 1 - h];
            }
        }
        let kf = k as f64;
        for (o, &m) in out.iter_mut().zip(ms) {
            if m < 2 * k {
                continue;
            }
            let l = n - m;
            let squares = sqw(0, l) + sqw(k, l) + sqw(m - k, l) + sqw(m, l);
            let ab = r[k] - sk[m - k];
            let ac = r[m - k] - tl[m - k];
            let ad = r[m];
            let lag = m - 2 * k;
            let bc = if lag == 0 {
                sqw(k, l)
            } else {
                r[lag] - hd[lag] - tl[lag]
            };
            let bd = r[m - k] - hd[m - k];
            let cd = r[k] - pk[m - k];
            *o += (squares - 2.0 * ab - 2.0 * ac + 2.0 * ad + 2.0 * bc - 2.0 * bd - 2.0 * cd) / kf;
        }
    }
    out
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

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// The triangle sum of `head_triangle` (D&C with FFT) equals its
    /// definition summed directly, for lengths across the direct/FFT
    /// thresholds (analytic identity; 1e-12 relative).
    #[test]
    fn head_triangle_equals_its_definition() {
        let mut rng = ChaCha8Rng::seed_from_u64(8);
        let mut planner = rustfft::FftPlanner::new();
        for m in [2usize, 10, 64, 66, 130, 256, 600, 1000] {
            let z: Vec<f64> = (0..m).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let mut want = 0.0;
            for k in 1..=m / 2 {
                let mut s = 0.0;
                for j in 0..k {
                    s += z[j] * z[j + m - 2 * k];
                }
                want += s / k as f64;
            }
            let got = head_triangle(&z, &mut planner);
            assert!(
                (got - want).abs() <= 1e-12 * want.abs().max(1.0),
                "m={m}: {got} vs {want}"
            );
        }
    }

    /// The block correlation form equals the direct double sum (SP 1065
    /// eq. 31) to 1e-10 relative on white + random-walk phase and on
    /// random-walk FM with a frequency offset, for blocks of n terms of
    /// several shapes (n < m, n = m, n = 3m).
    #[test]
    fn block_form_equals_the_direct_sum() {
        let mut rng = ChaCha8Rng::seed_from_u64(9);
        let (mut f, mut ph, mut w) = (0.0, 0.0, 0.0);
        let len = 1400;
        let a: Vec<f64> = (0..len)
            .map(|i| {
                w += rng.gen_range(-1.0..1.0) * 1e-9;
                1e-6 + w + rng.gen_range(-1.0..1.0) * 3e-9 + 5e-11 * i as f64
            })
            .collect();
        let b: Vec<f64> = (0..len)
            .map(|_| {
                f += rng.gen_range(-1.0..1.0) * 1e-12;
                ph += f + 1e-9;
                ph
            })
            .collect();
        let mut planner = rustfft::FftPlanner::new();
        for x in [a, b] {
            for (m, n) in [(200usize, 50usize), (256, 256), (300, 900), (1000, 399)] {
                let seg = &x[..n + m];
                let p = Prepared::new(seg, 1.0);
                let half = m / 2;
                let mut want = 0.0;
                for k in 1..=half {
                    want += sum_sq_4(seg, [0, k, m - k, m], n) / k as f64;
                }
                let got = theo1_block(seg, m, &mut planner);
                assert!(
                    (got - want).abs() <= 1e-10 * want.abs(),
                    "m={m} n={n}: {got} vs {want}"
                );
                assert_eq!(theo1_sum(&p, m).1, n);
            }
        }
    }

    /// All-factor Theo1 sums (autocorrelation form) equal the direct sum
    /// (SP 1065 eq. 31 as in `theo1_sum`) to 1e-10 relative, on white plus
    /// random-walk phase with an offset and a frequency offset, and on
    /// random-walk FM.
    #[test]
    fn many_factors_equal_the_direct_sum() {
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let mut w = 0.0;
        let a: Vec<f64> = (0..700)
            .map(|i| {
                w += rng.gen_range(-1.0..1.0) * 1e-9;
                1e-6 + w + rng.gen_range(-1.0..1.0) * 3e-9 + 5e-11 * i as f64
            })
            .collect();
        let (mut f, mut ph) = (0.0, 0.0);
        let b: Vec<f64> = (0..600)
            .map(|_| {
                f += rng.gen_range(-1.0..1.0) * 1e-12;
                ph += f;
                ph
            })
            .collect();
        for x in [a, b] {
            let n = x.len();
            let ms = [12usize, 16, 50, 100, 298, n - 2, (n - 1) & !1];
            let p = Prepared::new(&x, 1.0);
            let fast = theo1_sums_many(&x, &ms);
            for (&m, &s) in ms.iter().zip(&fast) {
                let (d, used) = theo1_sum(&p, m);
                assert_eq!(used, n - m);
                assert!((s - d).abs() <= 1e-10 * d.abs(), "m={m}: {s} vs {d}");
            }
        }
        assert!(theo1_sums_many(&[1.0, 2.0], &[2]).is_empty());
    }
}
