//! Linear correlations and convolutions of real sequences by real-to-complex
//! FFTs (`realfft` on top of `rustfft`), for the Theo1 sums.
//!
//! A real FFT of size S holds S reals in and S/2 + 1 complex values out
//! (16 bytes a point), half of a complex FFT of the same size with its
//! scratch. Sizes are the smallest even 2^a·3^b·5^c at or above what is
//! needed (at most a few per cent above it, where a power of two can be
//! nearly twice). Plans below [`BIG`] are kept per thread and reused; a
//! plan of [`BIG`] points or more is made for the call and dropped after
//! it (its twiddle tables are as large as its data), and such calls run one
//! at a time across threads.
//!
//! Zero padding makes the circular results linear: for a sequence of
//! length L, the circular autocorrelation at size S ≥ L + ℓ equals the
//! linear one R(ℓ) = Σ_{t<L−ℓ} y_t·y_{t+ℓ} (the wrapped products would need
//! t + ℓ − S ≥ 0 with t < L).

use realfft::num_complex::Complex;
use realfft::{RealFftPlanner, RealToComplex};
use std::cell::RefCell;
use std::collections::HashMap;
use std::sync::Arc;

/// FFT size from which a plan is made for one call and the call runs alone.
pub(crate) const BIG: usize = 1 << 18;

/// Held while an FFT of [`BIG`] points or more is computed.
static BIG_LOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Points of plans a thread keeps before it starts afresh: the cached
/// twiddle tables stay below about 16 bytes × this (16 MB) per thread.
const CACHE_POINTS: usize = 1 << 20;

/// A thread's plans by (size, with inverse), and the points they hold.
type PlanCache = (HashMap<(usize, bool), Pair>, usize);

thread_local! {
    /// The thread's plans.
    static PLANS: RefCell<PlanCache> = RefCell::new((HashMap::new(), 0));
}

/// The smallest even 2^a·3^b·5^c ≥ n (n ≥ 1): twice the smallest
/// 2^a·3^b·5^c ≥ ⌈n/2⌉ ([`crate::simulate::fast_len`]).
pub(crate) fn smooth_size(n: usize) -> usize {
    2 * crate::simulate::fast_len(n.max(2).div_ceil(2))
}

/// The forward real FFT of one size, and its inverse when asked, from the
/// thread's planner (small sizes) or a planner of their own (from [`BIG`]
/// on).
#[derive(Clone)]
struct Pair {
    fwd: Arc<dyn RealToComplex<f64>>,
    inv: Option<Arc<dyn realfft::ComplexToReal<f64>>>,
}

/// The plans of one size, kept per thread below [`BIG`] points.
///
/// Each plan comes from a planner of its own: a planner that has planned
/// other sizes may build the same size from different inner transforms,
/// which moves the last bits of the result, and a statistic at τ must not
/// depend on which other τ were computed before it on the thread.
fn plans(size: usize, with_inverse: bool) -> Pair {
    let fresh = || {
        let mut p = RealFftPlanner::<f64>::new();
        Pair {
            fwd: p.plan_fft_forward(size),
            inv: with_inverse.then(|| p.plan_fft_inverse(size)),
        }
    };
    if size >= BIG {
        return fresh();
    }
    PLANS.with(|cell| {
        let mut cell = cell.borrow_mut();
        if let Some(pair) = cell.0.get(&(size, with_inverse)) {
            return pair.clone();
        }
        let points = size * (1 + usize::from(with_inverse));
        if cell.1 + points > CACHE_POINTS {
            *cell = (HashMap::new(), 0);
        }
        cell.1 += points;
        let pair = fresh();
        cell.0.insert((size, with_inverse), pair.clone());
        pair
    })
}

/// Forward transform of `input` (destroyed) into `out`.
fn forward(pair: &Pair, input: &mut [f64], out: &mut [Complex<f64>]) {
    pair.fwd
        .process(input, out)
        .expect("buffer lengths match the plan");
}

/// Inverse transform of `spec` (destroyed; the imaginary parts at 0 and at
/// S/2 are set to 0, as a real sequence's spectrum has them) into `out`.
fn inverse(pair: &Pair, spec: &mut [Complex<f64>], out: &mut [f64]) {
    spec[0].im = 0.0;
    if let Some(last) = spec.last_mut() {
        last.im = 0.0;
    }
    pair.inv
        .as_ref()
        .expect("planned with its inverse")
        .process(spec, out)
        .expect("buffer lengths match the plan");
}

/// The inverse transform of a real, even spectrum P (P_k = P_{S−k}; the
/// half k ≤ S/2 given in `power`) by the forward transform: for such P
/// the inverse DFT is the forward DFT over S, so `buf` (S reals) receives
/// P in full, is transformed forward into `spec`, and receives the real
/// parts over S back. Only forward plans are made (half the twiddle tables).
fn even_inverse(pair: &Pair, power: &[f64], buf: &mut [f64], spec: &mut [Complex<f64>]) {
    let size = buf.len();
    for (k, b) in buf.iter_mut().enumerate() {
        *b = power[k.min(size - k)];
    }
    forward(pair, buf, spec);
    let scale = 1.0 / size as f64;
    for (b, c) in buf.iter_mut().zip(spec.iter()) {
        *b = c.re * scale;
    }
}

/// R(ℓ) = Σ_{t<len−ℓ} y_t·y_{t+ℓ} for ℓ = 0 … lags, y_t = `y(t)` for
/// t < len. Working memory 16 bytes a point of S = smooth(len + lags).
pub(crate) fn autocorrelation(len: usize, y: impl Fn(usize) -> f64, lags: usize) -> Vec<f64> {
    let size = smooth_size(len + lags);
    let _guard = (size >= BIG).then(|| BIG_LOCK.lock().unwrap_or_else(|e| e.into_inner()));
    let pair = plans(size, false);
    let mut buf = vec![0.0f64; size];
    for (t, b) in buf[..len].iter_mut().enumerate() {
        *b = y(t);
    }
    let mut spec = pair.fwd.make_output_vec();
    forward(&pair, &mut buf, &mut spec);
    // The power spectrum P_k = |X_k|², k ≤ S/2, mirrored into buf; then
    // the forward transform of P is S·R (see [`even_inverse`]).
    for (k, b) in buf.iter_mut().enumerate() {
        *b = spec[k.min(size - k)].norm_sqr();
    }
    forward(&pair, &mut buf, &mut spec);
    let scale = 1.0 / size as f64;
    buf.truncate(lags.min(size - 1) + 1);
    for (b, c) in buf.iter_mut().zip(&spec) {
        *b = c.re * scale;
    }
    buf.shrink_to_fit();
    buf
}

/// hd(ℓ) + tl(ℓ), ℓ = 0 … lags: the sum of the autocorrelations of `a`
/// and `b` (equal lengths), from the sum of their power spectra (one
/// inverse transform).
pub(crate) fn autocorrelation_sum(a: &[f64], b: &[f64], lags: usize) -> Vec<f64> {
    let len = a.len().max(b.len());
    let size = smooth_size(len + lags);
    let _guard = (size >= BIG).then(|| BIG_LOCK.lock().unwrap_or_else(|e| e.into_inner()));
    let pair = plans(size, false);
    let mut buf = vec![0.0f64; size];
    let mut spec = pair.fwd.make_output_vec();
    buf[..a.len()].copy_from_slice(a);
    forward(&pair, &mut buf, &mut spec);
    let mut power: Vec<f64> = spec.iter().map(|c| c.norm_sqr()).collect();
    buf.fill(0.0);
    buf[..b.len()].copy_from_slice(b);
    forward(&pair, &mut buf, &mut spec);
    for (p, c) in power.iter_mut().zip(&spec) {
        *p += c.norm_sqr();
    }
    even_inverse(&pair, &power, &mut buf, &mut spec);
    buf.truncate(lags.min(size - 1) + 1);
    buf.shrink_to_fit();
    buf
}

/// The linear convolution (a ∗ b)(s) = Σ_{u+w=s} a_u·b_w for s < `top`
/// (top ≤ a.len() + b.len() − 1).
pub(crate) fn convolution(a: &[f64], b: &[f64], top: usize) -> Vec<f64> {
    let size = smooth_size(a.len() + b.len() - 1);
    let _guard = (size >= BIG).then(|| BIG_LOCK.lock().unwrap_or_else(|e| e.into_inner()));
    let pair = plans(size, true);
    let mut buf = vec![0.0f64; size];
    let mut fa = pair.fwd.make_output_vec();
    let mut fb = pair.fwd.make_output_vec();
    buf[..a.len()].copy_from_slice(a);
    forward(&pair, &mut buf, &mut fa);
    buf.fill(0.0);
    buf[..b.len()].copy_from_slice(b);
    forward(&pair, &mut buf, &mut fb);
    for (x, y) in fa.iter_mut().zip(&fb) {
        *x *= y;
    }
    drop(fb);
    inverse(&pair, &mut fa, &mut buf);
    let scale = 1.0 / size as f64;
    buf[..top.min(size)].iter().map(|v| v * scale).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// Smooth sizes are even, of the form 2^a·3^b·5^c, at least n, and
    /// no other such number lies between n and them (analytic).
    #[test]
    fn smooth_sizes() {
        let smooth = |mut v: usize| {
            for p in [2, 3, 5] {
                while v % p == 0 {
                    v /= p;
                }
            }
            v == 1
        };
        for n in 1..3000usize {
            let s = smooth_size(n);
            assert!(s >= n && s % 2 == 0 && smooth(s), "n={n}: {s}");
            assert!((n.max(2)..s).all(|v| v % 2 == 1 || !smooth(v)), "n={n}");
        }
        assert_eq!(smooth_size(10_000_001), 10_077_696);
    }

    /// The FFT forms equal their sums written out (analytic identities;
    /// 1e-12 of the largest value), on lengths around the plan threshold.
    #[test]
    fn against_direct_sums() {
        let mut rng = ChaCha8Rng::seed_from_u64(2);
        for len in [3usize, 17, 100, 1001] {
            let y: Vec<f64> = (0..len).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let z: Vec<f64> = (0..len).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let lags = len - 1;
            let r = autocorrelation(len, |t| y[t], lags);
            let s = autocorrelation_sum(&y, &z, lags);
            let c = convolution(&y, &z, 2 * len - 1);
            for l in 0..=lags {
                let want: f64 = (0..len - l).map(|t| y[t] * y[t + l]).sum();
                let want2: f64 = want + (0..len - l).map(|t| z[t] * z[t + l]).sum::<f64>();
                assert!((r[l] - want).abs() <= 1e-12 * len as f64, "len={len} l={l}");
                assert!((s[l] - want2).abs() <= 1e-12 * len as f64);
            }
            for (q, cv) in c.iter().enumerate() {
                let want: f64 = (0..len)
                    .filter(|&u| q >= u && q - u < len)
                    .map(|u| y[u] * z[q - u])
                    .sum();
                assert!((cv - want).abs() <= 1e-12 * len as f64);
            }
        }
    }
}
