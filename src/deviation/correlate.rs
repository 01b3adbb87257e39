//! Linear correlations and convolutions of real sequences by real-to-complex
//! FFTs (`realfft` on top of `rustfft`), for the Theo1 sums.
//!
//! A real FFT of size S holds S reals in and S/2 + 1 complex values out
//! (16 bytes a point), half of a complex FFT of the same size with its
//! scratch. Sizes are the smallest even 2^a·3^b·5^c at or above what is
//! needed (at most a few per cent above it, where a power of two can be
//! nearly twice). The real FFT serves sizes below [`IN_PLACE_FROM`]; its
//! plans are kept per thread and reused. From [`IN_PLACE_FROM`] on the
//! autocorrelations are computed in place (the four-step form below).
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

/// Points of plans a thread keeps (beyond them it gives back its largest
/// plans first, [`plans`]): the cached twiddle tables stay below about 16
/// bytes × this (8 MB) per thread. A Theo1 block at the middle factors
/// plans its autocorrelation and its head and tail autocorrelations; when
/// the blocks also planned their triangle convolutions (until session 13),
/// a cache of 2^18 points was emptied at every block and each plan made
/// again (a tenth of Theo1's time at 10^7 in `sin_cos`); 2^20 was no
/// faster and held more memory.
const CACHE_POINTS: usize = 1 << 19;

/// A thread's plans by size, and the points they hold.
type PlanCache = (HashMap<usize, Pair>, usize);

thread_local! {
    /// The thread's plans.
    static PLANS: RefCell<PlanCache> = RefCell::new((HashMap::new(), 0));
}

/// The smallest even 2^a·3^b·5^c ≥ n (n ≥ 1): twice the smallest
/// 2^a·3^b·5^c ≥ ⌈n/2⌉ ([`crate::simulate::fast_len`]).
pub(crate) fn smooth_size(n: usize) -> usize {
    2 * crate::simulate::fast_len(n.max(2).div_ceil(2))
}

/// The forward real FFT of one size (the inverses are forward transforms
/// of even spectra, [`even_inverse`]), kept per thread.
#[derive(Clone)]
struct Pair {
    fwd: Arc<dyn RealToComplex<f64>>,
}

/// The plans of one size, kept per thread (sizes below [`IN_PLACE_FROM`]).
///
/// Each plan comes from a planner of its own: a planner that has planned
/// other sizes may build the same size from different inner transforms,
/// which moves the last bits of the result, and a statistic at τ must not
/// depend on which other τ were computed before it on the thread.
fn plans(size: usize) -> Pair {
    let fresh = || Pair {
        fwd: RealFftPlanner::<f64>::new().plan_fft_forward(size),
    };
    PLANS.with(|cell| {
        let mut cell = cell.borrow_mut();
        if let Some(pair) = cell.0.get(&size) {
            return pair.clone();
        }
        let points = size;
        if cell.1 + points > CACHE_POINTS {
            // Give back the largest plans first, until the new one fits:
            // the small sizes serve every block of a τ. (Emptying
            // the whole cache here made every small plan again after each
            // large one; planning was about 6 % of the ThêoBR ratio's
            // profile at N = 3·10^6.)
            let mut keys: Vec<usize> = cell.0.keys().copied().collect();
            keys.sort_unstable_by(|a, b| b.cmp(a));
            for key in keys {
                if cell.1 + points <= CACHE_POINTS {
                    break;
                }
                cell.0.remove(&key);
                cell.1 -= key;
            }
        }
        cell.1 += points;
        let pair = fresh();
        cell.0.insert(size, pair.clone());
        pair
    })
}

/// Forward transform of `input` (destroyed) into `out`.
fn forward(pair: &Pair, input: &mut [f64], out: &mut [Complex<f64>]) {
    pair.fwd
        .process(input, out)
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
/// t < len. Working memory 16 bytes a point of S = smooth(len + lags) and
/// the plan's tables; from S = [`IN_PLACE_FROM`] on, 8 bytes a point
/// ([`autocorrelation_in_place`]).
pub(crate) fn autocorrelation(len: usize, y: impl Fn(usize) -> f64, lags: usize) -> Vec<f64> {
    let size = smooth_size(len + lags);
    if size >= IN_PLACE_FROM {
        return autocorrelation_in_place(len, y, lags, size);
    }
    let pair = plans(size);
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

/// hd(ℓ) + tl(ℓ), ℓ = 0 … lags: the sum of the autocorrelations of
/// a_t = `a(t)` and b_t = `b(t)`, t < len, from the sum of their power
/// spectra (one inverse transform).
pub(crate) fn autocorrelation_sum(
    len: usize,
    a: impl Fn(usize) -> f64,
    b: impl Fn(usize) -> f64,
    lags: usize,
) -> Vec<f64> {
    let size = smooth_size(len + lags);
    let pair = plans(size);
    let mut buf = vec![0.0f64; size];
    let mut spec = pair.fwd.make_output_vec();
    for (t, v) in buf[..len].iter_mut().enumerate() {
        *v = a(t);
    }
    forward(&pair, &mut buf, &mut spec);
    let mut power: Vec<f64> = spec.iter().map(|c| c.norm_sqr()).collect();
    buf.fill(0.0);
    for (t, v) in buf[..len].iter_mut().enumerate() {
        *v = b(t);
    }
    forward(&pair, &mut buf, &mut spec);
    for (p, c) in power.iter_mut().zip(&spec) {
        *p += c.norm_sqr();
    }
    even_inverse(&pair, &power, &mut buf, &mut spec);
    buf.truncate(lags.min(size - 1) + 1);
    buf.shrink_to_fit();
    buf
}

/// Hands hd(ℓ) + tl(ℓ), ℓ = 0 … lags, to `visit`, hd and tl the
/// autocorrelations of a_t = `a(t)` and b_t = `b(t)`, t < len: below
/// S = [`IN_PLACE_FROM`] as one slice of their sum ([`autocorrelation_sum`]);
/// from there on as two slices, hd then tl, each computed in place after the
/// previous one is given back (8 bytes a point of S at a time, nothing held
/// beside it by this function).
pub(crate) fn visit_autocorrelations(
    len: usize,
    a: impl Fn(usize) -> f64,
    b: impl Fn(usize) -> f64,
    lags: usize,
    mut visit: impl FnMut(&[f64]),
) {
    let size = smooth_size(len + lags);
    if size >= IN_PLACE_FROM {
        visit(&autocorrelation(len, a, lags));
        visit(&autocorrelation(len, b, lags));
    } else {
        visit(&autocorrelation_sum(len, a, b, lags));
    }
}

// ---------------------------------------------------------------------------
// Record-sized autocorrelations in place (the "four-step" FFT).
// ---------------------------------------------------------------------------

/// From this FFT size on, [`autocorrelation`] works in place on one buffer
/// of S reals ([`autocorrelation_in_place`]) instead of the real FFT with
/// its output, scratch and twiddle tables (about 36 bytes a point). 2^18
/// until session 13; at 2^16 TheoH's working memory at 10^6 points went
/// from 3.7–3.9× to 2.9× the record (its ratio's head and tail transforms
/// of up to 2·10^5 points, two at a time, no longer 7 MB each), at the
/// same time at 10^6 and 10^7. The library's own unit tests lower it to
/// 2^10, so that the Theo1 tests against the direct sums go through the
/// in-place form.
pub(crate) const IN_PLACE_FROM: usize = if cfg!(test) { 1 << 10 } else { 1 << 16 };

/// Columns gathered together in the column pass of the four-step FFT.
const COLUMN_GROUP: usize = 16;

/// Roots of unity e^{−2πi·j/S}, j < S, from two tables of about √S
/// entries each (e^{−2πi·j/S} = lo\[j mod T\]·hi\[j div T\], each entry
/// from `sin_cos` of its own angle: about two roundings). T is the power
/// of two at or above √S, so that the split is a mask and a shift.
struct Roots {
    size: usize,
    shift: u32,
    mask: usize,
    lo: Vec<Complex<f64>>,
    hi: Vec<Complex<f64>>,
}

impl Roots {
    fn new(size: usize) -> Self {
        let t = ((size as f64).sqrt().ceil().max(1.0) as usize).next_power_of_two();
        let root = |j: usize| {
            let (s, c) = (-2.0 * std::f64::consts::PI * (j as f64 / size as f64)).sin_cos();
            Complex::new(c, s)
        };
        let lo = (0..t).map(root).collect();
        let hi = (0..size.div_ceil(t)).map(|a| root(a * t)).collect();
        Self {
            size,
            shift: t.trailing_zeros(),
            mask: t - 1,
            lo,
            hi,
        }
    }

    /// e^{−2πi·j/S}, j < S.
    #[inline]
    fn at(&self, j: usize) -> Complex<f64> {
        debug_assert!(j < self.size);
        self.lo[j & self.mask] * self.hi[j >> self.shift]
    }
}

/// The divisor of `n` nearest to √n from below (n a 2^a·3^b·5^c number).
fn split_size(n: usize) -> usize {
    let root = (n as f64).sqrt() as usize;
    (1..=root.max(1)).rev().find(|d| n % d == 0).unwrap_or(1)
}

/// A complex DFT of size M = M1·M2 done in place by the four-step method
/// (Bailey 1990): M1-point DFTs down the columns of the M1 × M2 row-major
/// matrix (gathered [`COLUMN_GROUP`] at a time), the twiddles
/// e^{−2πi·n2·k1/M}, then M2-point DFTs along the rows. Its output is in
/// transposed order (X_k at M2·(k mod M1) + k div M1); [`FourStep::inverse`]
/// takes that order back to natural order, so a product of spectra never
/// needs the transpose. Memory beyond the buffer: the plans of sizes M1 and
/// M2 and tables of about √M roots.
struct FourStep {
    m1: usize,
    m2: usize,
    col_fwd: Arc<dyn rustfft::Fft<f64>>,
    col_inv: Arc<dyn rustfft::Fft<f64>>,
    row_fwd: Arc<dyn rustfft::Fft<f64>>,
    row_inv: Arc<dyn rustfft::Fft<f64>>,
    roots: Roots,
}

impl FourStep {
    fn new(m: usize) -> Self {
        let m1 = split_size(m);
        let m2 = m / m1;
        // One planner per size, for the reason given at [`plans`].
        let plan = |n: usize, fwd: bool| {
            let mut p = rustfft::FftPlanner::<f64>::new();
            if fwd {
                p.plan_fft_forward(n)
            } else {
                p.plan_fft_inverse(n)
            }
        };
        Self {
            m1,
            m2,
            col_fwd: plan(m1, true),
            col_inv: plan(m1, false),
            row_fwd: plan(m2, true),
            row_inv: plan(m2, false),
            roots: Roots::new(m),
        }
    }

    /// Position of X_k in the transposed output.
    #[inline]
    fn pos(&self, k: usize) -> usize {
        self.m2 * (k % self.m1) + k / self.m1
    }

    /// The column pass: M1-point DFTs (forward or inverse) down every
    /// column, each column multiplied by its twiddles after (forward) or
    /// before (inverse) its DFT; the column groups split among `threads`
    /// scoped threads (plain threads, not rayon tasks: the caller may hold
    /// [`IN_PLACE_LOCK`], and a rayon worker waiting on parallel work could
    /// pick up a task that asks for the same lock).
    fn columns(&self, buf: &mut [Complex<f64>], forward: bool, threads: usize) {
        let m2 = self.m2;
        let groups = m2.div_ceil(COLUMN_GROUP);
        let threads = threads.clamp(1, groups);
        let per = groups.div_ceil(threads);
        let base = SendPtr(buf.as_mut_ptr());
        let len = buf.len();
        std::thread::scope(|scope| {
            for t in 1..threads {
                scope.spawn(move || {
                    // SAFETY: see `column_groups`.
                    unsafe { self.column_groups(base, len, t * per, per, forward) }
                });
            }
            // SAFETY: see `column_groups`.
            unsafe { self.column_groups(base, len, 0, per, forward) }
        });
    }

    /// Column groups g0 … g0 + count − 1 of the column pass.
    ///
    /// # Safety
    /// `base` points to `len` = M1·M2 valid elements; this call reads and
    /// writes only the elements M2·r + c of its own columns
    /// (COLUMN_GROUP·g0 ≤ c < COLUMN_GROUP·(g0 + count)), and no other
    /// running call is given the same groups.
    unsafe fn column_groups(
        &self,
        base: SendPtr,
        len: usize,
        g0: usize,
        count: usize,
        forward: bool,
    ) {
        let (m1, m2) = (self.m1, self.m2);
        debug_assert_eq!(len, m1 * m2);
        let fft = if forward {
            &self.col_fwd
        } else {
            &self.col_inv
        };
        let mut tmp = vec![Complex::new(0.0, 0.0); COLUMN_GROUP * m1];
        let mut scratch = vec![Complex::new(0.0, 0.0); fft.get_inplace_scratch_len()];
        let first = COLUMN_GROUP * g0;
        let last = (COLUMN_GROUP * (g0 + count)).min(m2);
        for c0 in (first..last).step_by(COLUMN_GROUP) {
            let w = COLUMN_GROUP.min(m2 - c0);
            for r in 0..m1 {
                let row = std::slice::from_raw_parts(base.0.add(m2 * r + c0), w);
                for (c, v) in row.iter().enumerate() {
                    tmp[c * m1 + r] = *v;
                }
            }
            let part = &mut tmp[..w * m1];
            if !forward {
                self.twiddle(part, c0, m1, false);
            }
            fft.process_with_scratch(part, &mut scratch);
            if forward {
                self.twiddle(part, c0, m1, true);
            }
            for r in 0..m1 {
                let row = std::slice::from_raw_parts_mut(base.0.add(m2 * r + c0), w);
                for (c, v) in row.iter_mut().enumerate() {
                    *v = part[c * m1 + r];
                }
            }
        }
    }

    /// Multiply gathered columns c0, c0 + 1, … (each M1 long) by
    /// e^{∓2πi·c·k1/M}. The exponent c·k1 mod M is stepped along the column
    /// (an addition and a conditional subtraction a value, no division).
    fn twiddle(&self, tmp: &mut [Complex<f64>], c0: usize, m1: usize, forward: bool) {
        let size = self.roots.size;
        for (c, col) in tmp.chunks_exact_mut(m1).enumerate() {
            let step = (c0 + c) % size;
            let mut j = 0usize;
            if forward {
                for v in col.iter_mut() {
                    *v *= self.roots.at(j);
                    j += step;
                    if j >= size {
                        j -= size;
                    }
                }
            } else {
                for v in col.iter_mut() {
                    *v *= self.roots.at(j).conj();
                    j += step;
                    if j >= size {
                        j -= size;
                    }
                }
            }
        }
    }

    /// The row pass: M2-point DFTs along every row, the rows split among
    /// `threads` scoped threads (see [`FourStep::columns`]).
    fn rows(&self, buf: &mut [Complex<f64>], forward: bool, threads: usize) {
        let fft = if forward {
            &self.row_fwd
        } else {
            &self.row_inv
        };
        let per = self.m1.div_ceil(threads.clamp(1, self.m1)) * self.m2;
        std::thread::scope(|scope| {
            for chunk in buf.chunks_mut(per) {
                scope.spawn(move || {
                    let mut scratch = vec![Complex::new(0.0, 0.0); fft.get_inplace_scratch_len()];
                    fft.process_with_scratch(chunk, &mut scratch);
                });
            }
        });
    }

    /// Forward DFT, natural order in, transposed order out.
    fn forward(&self, buf: &mut [Complex<f64>], threads: usize) {
        self.columns(buf, true, threads);
        self.rows(buf, true, threads);
    }

    /// Unnormalised inverse DFT, transposed order in, natural order out.
    fn inverse(&self, buf: &mut [Complex<f64>], threads: usize) {
        self.rows(buf, false, threads);
        self.columns(buf, false, threads);
    }
}

/// A raw pointer that may cross threads (the column pass).
#[derive(Clone, Copy)]
struct SendPtr(*mut Complex<f64>);
// SAFETY: used only by `FourStep::columns`, whose threads touch disjoint
// columns of the buffer (see `FourStep::column_groups`).
unsafe impl Send for SendPtr {}
unsafe impl Sync for SendPtr {}

/// From this FFT size on an in-place transform runs alone
/// ([`IN_PLACE_LOCK`]) and spreads its passes over the machine's threads;
/// below it, in-place transforms run side by side, one a thread (their
/// buffers are at most 8 MB).
const LOCK_FROM: usize = if cfg!(test) { 1 << 14 } else { 1 << 20 };

/// Held while an in-place transform of [`LOCK_FROM`] points or more runs.
static IN_PLACE_LOCK: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// The lock and the number of threads of an in-place transform of `size`
/// points.
fn in_place_turn(size: usize) -> (Option<std::sync::MutexGuard<'static, ()>>, usize) {
    if size >= LOCK_FROM {
        let guard = IN_PLACE_LOCK.lock().unwrap_or_else(|e| e.into_inner());
        (Some(guard), rayon::current_num_threads().max(1))
    } else {
        (None, 1)
    }
}

/// R(ℓ) = Σ_{t<len−ℓ} y_t·y_{t+ℓ}, ℓ = 0 … lags, in one buffer of
/// S = `size` reals (S even, S ≥ len + lags so that nothing wraps):
///
/// - the buffer, read as M = S/2 complex z_t = y_{2t} + i·y_{2t+1}, is
///   transformed in place ([`FourStep`]);
/// - each pair Z_k, Z_{M−k} gives the real spectrum's X_k = E_k + w^k·O_k
///   and X_{M−k} = conj(E_k − w^k·O_k), w = e^{−2πi/S},
///   E_k = (Z_k + conj Z_{M−k})/2, O_k = (Z_k − conj Z_{M−k})/(2i), and so
///   the power spectrum P_k = |X_k|², P_{M−k};
/// - the inverse of the real, even P is packed the same way:
///   V_k = (P_k + P_{M−k}) + i·(P_k − P_{M−k})·w^{−k} has the inverse
///   M-point DFT v_t = S·(R(2t) + i·R(2t+1)), so the buffer, read as reals
///   after the inverse transform, is S·R in natural order.
///
/// Working memory 8·S bytes plus about √S-sized tables and plans.
fn autocorrelation_in_place(
    len: usize,
    y: impl Fn(usize) -> f64,
    lags: usize,
    size: usize,
) -> Vec<f64> {
    assert!(size % 2 == 0 && size >= len + lags);
    let half = size / 2;
    let (_turn, threads) = in_place_turn(size);
    let plan = FourStep::new(half);
    let roots = Roots::new(size);
    let mut buf = vec![Complex::new(0.0f64, 0.0); half];
    for (t, c) in buf.iter_mut().enumerate() {
        let a = 2 * t;
        let re = if a < len { y(a) } else { 0.0 };
        let im = if a + 1 < len { y(a + 1) } else { 0.0 };
        *c = Complex::new(re, im);
    }
    plan.forward(&mut buf, threads);
    // k = 0 (and M): E_0 = Re Z_0, O_0 = Im Z_0, X_0 = E + O, X_M = E − O.
    {
        let z = buf[0];
        let (p0, pm) = ((z.re + z.im).powi(2), (z.re - z.im).powi(2));
        buf[0] = Complex::new(p0 + pm, p0 - pm);
    }
    for k in 1..=half / 2 {
        let (ik, jk) = (plan.pos(k), plan.pos(half - k));
        let (zk, zj) = (buf[ik], buf[jk]);
        let e = (zk + zj.conj()) * 0.5;
        let o = (zk - zj.conj()) * Complex::new(0.0, -0.5);
        let wo = roots.at(k) * o;
        let pk = (e + wo).norm_sqr();
        let pj = (e - wo).norm_sqr();
        let sum = pk + pj;
        let diff = Complex::new(0.0, pk - pj);
        // V_k = sum + i(P_k − P_{M−k})·w^{−k}; V_{M−k} = sum + i(P_k − P_{M−k})·w^{k}.
        buf[ik] = diff * roots.at(k).conj() + sum;
        if jk != ik {
            buf[jk] = diff * roots.at(k) + sum;
        }
    }
    plan.inverse(&mut buf, threads);
    let keep = lags.min(len.saturating_sub(1)) + 1;
    let scale = 1.0 / size as f64;
    // The buffer read as reals is S·R(0), S·R(1), …: keep R(0 … lags) in
    // the same allocation.
    let mut buf = std::mem::ManuallyDrop::new(buf);
    // SAFETY: Complex<f64> is #[repr(C)] {re, im} (num-complex), so the
    // allocation of `half` complex values is one of 2·half f64 with the
    // same size and alignment (8); ownership moves to the new Vec.
    let mut out =
        unsafe { Vec::from_raw_parts(buf.as_mut_ptr().cast::<f64>(), 2 * half, 2 * half) };
    out.truncate(keep);
    out.iter_mut().for_each(|v| *v *= scale);
    out.shrink_to_fit();
    out
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
            let s = autocorrelation_sum(len, |t| y[t], |t| z[t], lags);
            for l in 0..=lags {
                let want: f64 = (0..len - l).map(|t| y[t] * y[t + l]).sum();
                let want2: f64 = want + (0..len - l).map(|t| z[t] * z[t + l]).sum::<f64>();
                assert!((r[l] - want).abs() <= 1e-12 * len as f64, "len={len} l={l}");
                assert!((s[l] - want2).abs() <= 1e-12 * len as f64);
            }
        }
    }

    /// The in-place four-step autocorrelation equals the sum written out
    /// (analytic identity; 1e-12 of the largest value), for even and odd
    /// half sizes, sizes with a prime factor split unevenly, and sizes
    /// with zero padding well beyond len + lags.
    #[test]
    fn in_place_against_direct_sums() {
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        for (len, lags, size) in [
            (10usize, 9usize, 20usize),
            (7, 6, 14),
            (300, 299, 600),
            (500, 100, 720),
            (1000, 999, 2250),
            (999, 500, 1500),
            (1, 0, 2),
            // From LOCK_FROM on (2^14 in the unit tests): the passes on
            // several threads.
            (16000, 60, 16200),
            (9000, 8999, 18000),
        ] {
            let y: Vec<f64> = (0..len).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let r = autocorrelation_in_place(len, |t| y[t], lags, size);
            assert_eq!(r.len(), lags + 1);
            for l in 0..=lags {
                let want: f64 = (0..len - l).map(|t| y[t] * y[t + l]).sum();
                assert!(
                    (r[l] - want).abs() <= 1e-12 * len as f64,
                    "len={len} size={size} l={l}: {} vs {want}",
                    r[l]
                );
            }
        }
    }
}
