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

/// Points of plans a thread keeps (beyond them it gives back its largest
/// plans first, [`plans`]): the cached twiddle tables stay below about 16 bytes × this (8 MB) per thread.
/// A Theo1 block at the middle factors plans its autocorrelation, its head
/// and tail autocorrelations and the triangle convolutions (about 2^19
/// points at m = 2^16): a cache of 2^18 points was emptied at every block
/// and each plan made again (a tenth of Theo1's time at 10^7 in `sin_cos`);
/// 2^20 was no faster and held more memory.
const CACHE_POINTS: usize = 1 << 19;

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
            // Give back the largest plans first, until the new one fits:
            // the small sizes serve every level of a triangle recursion
            // (and every block), a large one a few cross terms. (Emptying
            // the whole cache here made every small plan again after each
            // large one; planning was about 6 % of the ThêoBR ratio's
            // profile at N = 3·10^6.)
            let mut keys: Vec<(usize, bool)> = cell.0.keys().copied().collect();
            keys.sort_unstable_by(|a, b| b.cmp(a));
            for key in keys {
                if cell.1 + points <= CACHE_POINTS {
                    break;
                }
                cell.0.remove(&key);
                cell.1 -= key.0 * (1 + usize::from(key.1));
            }
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
/// t < len. Working memory 16 bytes a point of S = smooth(len + lags) and
/// the plan's tables; from S = [`IN_PLACE_FROM`] on, 8 bytes a point
/// ([`autocorrelation_in_place`]).
pub(crate) fn autocorrelation(len: usize, y: impl Fn(usize) -> f64, lags: usize) -> Vec<f64> {
    let size = smooth_size(len + lags);
    if size >= IN_PLACE_FROM {
        return autocorrelation_in_place(len, y, lags, size);
    }
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
    let _guard = (size >= BIG).then(|| BIG_LOCK.lock().unwrap_or_else(|e| e.into_inner()));
    let pair = plans(size, false);
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

/// Σ_{s<top} h(s)·[(a1 ∗ b1)(s) + (a2 ∗ b2)(s)] for the pairs of sequences
/// (a1, b1) = `p1`, (a2, b2) = `p2` (a of la values, b of lb), where h(s)
/// is zero for every s ≢ `par` (mod 2) (h(s) is not asked there).
///
/// Only the convolution at s ≡ π is needed, so each is taken from the
/// even and odd halves: with a_e(p) = a(2p), a_o(p) = a(2p+1) and b_e, b_o
/// alike, (a ∗ b)(2r + 1) = (a_e ∗ b_o)(r) + (a_o ∗ b_e)(r) and
/// (a ∗ b)(2r) = (a_e ∗ b_e)(r) + (a_o′ ∗ b_o)(r), a_o′ = a_o behind one
/// zero: four convolutions of half length, whose products of spectra are
/// added for both pairs before one inverse transform (8 forward and 1
/// inverse transforms of about half the size, where the two pairs taken
/// apart, each transformed whole, take 4 forward and 2 inverse of
/// the full size). Working memory about 40 bytes a point of the half size.
/// From S = smooth(la + lb − 1) ≥ [`IN_PLACE_FROM`] on, each pair is
/// [`parity_convolution_in_place`] (two complex buffers of the half size,
/// about 16 bytes a point of S, one pair at a time).
pub(crate) fn weighted_convolution_pair_sum<A1, B1, A2, B2>(
    p1: (A1, B1),
    p2: (A2, B2),
    (la, lb): (usize, usize),
    top: usize,
    par: usize,
    h: impl Fn(usize) -> f64,
) -> f64
where
    A1: Fn(usize) -> f64,
    B1: Fn(usize) -> f64,
    A2: Fn(usize) -> f64,
    B2: Fn(usize) -> f64,
{
    if la == 0 || lb == 0 {
        return 0.0;
    }
    if smooth_size(la + lb - 1) >= IN_PLACE_FROM {
        return parity_convolution_in_place(p1, (la, lb), top, par, &h)
            + parity_convolution_in_place(p2, (la, lb), top, par, &h);
    }
    let par = par % 2;
    let (l0, l1) = parity_factor_lengths((la, lb), par);
    let size = smooth_size(parity_convolution_len(l0, l1));
    let pair = plans(size, true);
    let mut acc = pair.fwd.make_output_vec();
    let mut bufs = (
        vec![0.0f64; size],
        pair.fwd.make_output_vec(),
        pair.fwd.make_output_vec(),
    );
    for_parity_halves(&pair, &mut bufs, &mut acc, (l0, l1), par, &p1.0, &p1.1);
    for_parity_halves(&pair, &mut bufs, &mut acc, (l0, l1), par, &p2.0, &p2.1);
    let (mut buf, fa, fb) = bufs;
    drop((fa, fb));
    inverse(&pair, &mut acc, &mut buf);
    let scale = 1.0 / size as f64;
    // s = 2r + π < top.
    let rn = if top > par {
        (top - par).div_ceil(2).min(size)
    } else {
        0
    };
    buf[..rn]
        .iter()
        .enumerate()
        .map(|(r, v)| h(2 * r + par) * (v * scale))
        .sum()
}

/// The lengths of the two products' factors of one pair (a of la values,
/// b of lb) split in its halves for the lags of parity `par`
/// ([`parity_halves`]): (x0, y0) and (x1, y1).
fn parity_factor_lengths((la, lb): (usize, usize), par: usize) -> ((usize, usize), (usize, usize)) {
    let (ea, oa, eb, ob) = (la.div_ceil(2), la / 2, lb.div_ceil(2), lb / 2);
    if par == 1 {
        ((ea, ob), (oa, eb))
    } else {
        ((ea, eb), (if oa > 0 { oa + 1 } else { 0 }, ob))
    }
}

/// The longer of the two products' linear convolutions (at least 1).
fn parity_convolution_len(l0: (usize, usize), l1: (usize, usize)) -> usize {
    let conv_len = |(x, y): (usize, usize)| if x > 0 && y > 0 { x + y - 1 } else { 0 };
    conv_len(l0).max(conv_len(l1)).max(1)
}

/// Add to `acc` the spectrum products of one pair (a, b) split in its
/// halves ([`parity_halves`]), as [`weighted_convolution_pair_sum`] needs
/// them for lags s of parity `par`. `l` holds the two products' factor
/// lengths ([`parity_factor_lengths`]).
fn for_parity_halves(
    pair: &Pair,
    bufs: &mut (Vec<f64>, Vec<Complex<f64>>, Vec<Complex<f64>>),
    acc: &mut [Complex<f64>],
    (l0, l1): ((usize, usize), (usize, usize)),
    par: usize,
    a: impl Fn(usize) -> f64,
    b: impl Fn(usize) -> f64,
) {
    let (x0, y0, x1, y1) = parity_halves(&a, &b, par);
    add_spectrum_product(pair, bufs, acc, l0, x0, y0);
    add_spectrum_product(pair, bufs, acc, l1, x1, y1);
}

/// The halves (x0, y0, x1, y1) of one pair (a, b) for the lags of parity
/// π = `par`: (a ∗ b)(2r + π) = (x0 ∗ y0)(r) + (x1 ∗ y1)(r). For π = 1
/// (s odd) A_even ∗ B_odd and A_odd ∗ B_even; for π = 0 (s even)
/// A_even ∗ B_even and A_odd shifted by one (a(2p − 1), zero at p = 0) ∗
/// B_odd. Their lengths are [`parity_factor_lengths`].
#[allow(clippy::type_complexity)] // four closures of distinct types
fn parity_halves<'a>(
    a: &'a impl Fn(usize) -> f64,
    b: &'a impl Fn(usize) -> f64,
    par: usize,
) -> (
    impl Fn(usize) -> f64 + 'a,
    impl Fn(usize) -> f64 + 'a,
    impl Fn(usize) -> f64 + 'a,
    impl Fn(usize) -> f64 + 'a,
) {
    let par = par % 2;
    (
        move |p: usize| a(2 * p),
        move |q: usize| b(2 * q + par),
        move |p: usize| {
            if p + par == 0 {
                0.0
            } else {
                a(2 * p + 2 * par - 1)
            }
        },
        move |q: usize| b(2 * q + 1 - par),
    )
}

/// acc += FFT(x)·FFT(y), x of lx.0 values and y of lx.1 (zero-padded to
/// the plan's size; nothing when either is empty). `bufs` is the real
/// buffer and the two spectra's scratch.
fn add_spectrum_product(
    pair: &Pair,
    bufs: &mut (Vec<f64>, Vec<Complex<f64>>, Vec<Complex<f64>>),
    acc: &mut [Complex<f64>],
    lx: (usize, usize),
    x: impl Fn(usize) -> f64,
    y: impl Fn(usize) -> f64,
) {
    if lx.0 == 0 || lx.1 == 0 {
        return;
    }
    let (buf, fa, fb) = bufs;
    // The transform uses its input as scratch: the padding is zeroed anew
    // each time (only the padding: the rest is written).
    for (p, v) in buf[..lx.0].iter_mut().enumerate() {
        *v = x(p);
    }
    buf[lx.0..].fill(0.0);
    forward(pair, buf, fa);
    for (q, v) in buf[..lx.1].iter_mut().enumerate() {
        *v = y(q);
    }
    buf[lx.1..].fill(0.0);
    forward(pair, buf, fb);
    for ((c, x), y) in acc.iter_mut().zip(fa.iter()).zip(fb.iter()) {
        *c += x * y;
    }
}

// ---------------------------------------------------------------------------
// Record-sized autocorrelations in place (the "four-step" FFT).
// ---------------------------------------------------------------------------

/// From this FFT size on, [`autocorrelation`] works in place on one buffer
/// of S reals ([`autocorrelation_in_place`]) instead of the real FFT with
/// its output, scratch and twiddle tables (about 36 bytes a point). The
/// library's own unit tests lower it to 2^10, so that the Theo1 tests
/// against the direct sums go through the in-place form.
pub(crate) const IN_PLACE_FROM: usize = if cfg!(test) { 1 << 10 } else { BIG };

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

/// Σ_{s<top, s ≡ π} h(s)·(a ∗ b)(s) for one pair (a, b) = `pair` (a of la
/// values, b of lb; π = `par`), in place in two buffers of M complex values,
/// M = 2^a·3^b·5^c at least the halves' convolution length (about
/// (la + lb)/2).
///
/// The halves of [`weighted_convolution_pair_sum`]: (a ∗ b)(2r + π) =
/// (x0 ∗ y0)(r) + (x1 ∗ y1)(r), with (x0, y0, x1, y1) = (a_e, b_o, a_o, b_e)
/// for π = 1 and (a_e, b_e, a_o′, b_o) for π = 0 (a_o′ = a_o behind one
/// zero). X = x0 + i·x1 and Y = y0 + i·y1 are transformed in place
/// ([`FourStep`]); each pair X_k, X_{M−k} gives the spectra
/// X0_k = (X_k + conj X_{M−k})/2 and X1_k = (X_k − conj X_{M−k})/(2i) (and
/// alike for Y), and C_k = X0_k·Y0_k + X1_k·Y1_k (C_{M−k} = conj C_k, the
/// spectrum of a real sequence) is transformed back: the real part over M
/// is the sum of the two convolutions at r, weighted and summed where
/// 2r + π < top. Three transforms of about half the full convolution's
/// length, where the full one in place takes two of the full length.
/// Working memory 32 bytes a point of M (about 16 bytes a point of
/// la + lb).
fn parity_convolution_in_place<A, B>(
    (a, b): (A, B),
    (la, lb): (usize, usize),
    top: usize,
    par: usize,
    h: impl Fn(usize) -> f64,
) -> f64
where
    A: Fn(usize) -> f64,
    B: Fn(usize) -> f64,
{
    if la == 0 || lb == 0 {
        return 0.0;
    }
    let par = par % 2;
    let (l0, l1) = parity_factor_lengths((la, lb), par);
    let size = crate::simulate::fast_len(parity_convolution_len(l0, l1));
    // Two buffers of M complex values: the memory of one transform of 4M
    // reals, and its turn.
    let (_turn, threads) = in_place_turn(4 * size);
    let plan = FourStep::new(size);
    let mut x = vec![Complex::new(0.0f64, 0.0); size];
    let mut y = vec![Complex::new(0.0f64, 0.0); size];
    let (x0, y0, x1, y1) = parity_halves(&a, &b, par);
    fill_pair(&mut x, (x0, l0.0), (x1, l1.0));
    fill_pair(&mut y, (y0, l0.1), (y1, l1.1));
    plan.forward(&mut x, threads);
    plan.forward(&mut y, threads);
    let parts = |z: Complex<f64>, zj: Complex<f64>| {
        (
            (z + zj.conj()) * 0.5,
            (z - zj.conj()) * Complex::new(0.0, -0.5),
        )
    };
    for k in 0..=size / 2 {
        let (ik, jk) = (plan.pos(k), plan.pos((size - k) % size));
        let (xa, xb) = parts(x[ik], x[jk]);
        let (ya, yb) = parts(y[ik], y[jk]);
        let c = xa * ya + xb * yb;
        x[ik] = c;
        if jk != ik {
            x[jk] = c.conj();
        }
    }
    drop(y);
    plan.inverse(&mut x, threads);
    let scale = 1.0 / size as f64;
    // s = 2r + π < top.
    let rn = if top > par {
        (top - par).div_ceil(2).min(size)
    } else {
        0
    };
    x[..rn]
        .iter()
        .enumerate()
        .map(|(r, v)| h(2 * r + par) * (v.re * scale))
        .sum()
}

/// buf[p] = re(p) + i·im(p), each part zero from its length on (the rest
/// of the buffer is left as it is: zero).
fn fill_pair(
    buf: &mut [Complex<f64>],
    (re, nr): (impl Fn(usize) -> f64, usize),
    (im, ni): (impl Fn(usize) -> f64, usize),
) {
    for (p, c) in buf.iter_mut().enumerate().take(nr.max(ni)) {
        let r = if p < nr { re(p) } else { 0.0 };
        let i = if p < ni { im(p) } else { 0.0 };
        *c = Complex::new(r, i);
    }
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
            let hw: Vec<f64> = (0..2 * len - 1).map(|_| rng.gen_range(-1.0..1.0)).collect();
            // All lags: the two parities, the second pair zero.
            let c: f64 = [0usize, 1]
                .iter()
                .map(|&par| {
                    weighted_convolution_pair_sum(
                        (|t| y[t], |t| z[t]),
                        (|_| 0.0, |_| 0.0),
                        (len, len),
                        2 * len - 1,
                        par,
                        |s| if s % 2 == par { hw[s] } else { 0.0 },
                    )
                })
                .sum();
            for l in 0..=lags {
                let want: f64 = (0..len - l).map(|t| y[t] * y[t + l]).sum();
                let want2: f64 = want + (0..len - l).map(|t| z[t] * z[t + l]).sum::<f64>();
                assert!((r[l] - want).abs() <= 1e-12 * len as f64, "len={len} l={l}");
                assert!((s[l] - want2).abs() <= 1e-12 * len as f64);
            }
            let want: f64 = (0..2 * len - 1)
                .map(|q| {
                    hw[q]
                        * (0..len)
                            .filter(|&u| q >= u && q - u < len)
                            .map(|u| y[u] * z[q - u])
                            .sum::<f64>()
                })
                .sum();
            assert!((c - want).abs() <= 1e-12 * (len * len) as f64, "len={len}");
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

    /// The weighted convolution sum equals the sum written out (analytic
    /// identity; 1e-12 of the sum of the absolute terms' scale), unequal
    /// lengths and partial ranges of s included: in place one parity at a
    /// time ([`parity_convolution_in_place`], both parities added), and the
    /// sum of two pairs with the weights of one parity
    /// ([`weighted_convolution_pair_sum`]: by the real FFT below
    /// [`IN_PLACE_FROM`], lowered to 2^10 in the unit tests, in place from
    /// there on).
    #[test]
    fn weighted_convolution_against_direct_sums() {
        let mut rng = ChaCha8Rng::seed_from_u64(4);
        for (la, lb, cut) in [
            (1usize, 1usize, 0usize),
            (5, 3, 2),
            (400, 700, 0),
            (400, 700, 500),
            (1500, 1500, 1700),
            (2047, 10, 0),
            (2, 1, 0),
            (3, 4, 1),
            (301, 6, 0),
            (300, 201, 57),
            (255, 256, 0),
            (9000, 9001, 4000),
        ] {
            let a: Vec<f64> = (0..la).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let b: Vec<f64> = (0..lb).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let top = la + lb - 1 - cut;
            let hw: Vec<f64> = (0..top).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let want: f64 = (0..top)
                .map(|q| {
                    hw[q]
                        * (0..la)
                            .filter(|&u| q >= u && q - u < lb)
                            .map(|u| a[u] * b[q - u])
                            .sum::<f64>()
                })
                .sum();
            let tol = 1e-12 * (la * lb) as f64;
            // In place, one parity at a time (whatever the size).
            let got: f64 = [0usize, 1]
                .iter()
                .map(|&par| {
                    parity_convolution_in_place((|u| a[u], |w| b[w]), (la, lb), top, par, |s| hw[s])
                })
                .sum();
            assert!(
                (got - want).abs() <= tol,
                "{la} {lb} {top}: {got} vs {want}"
            );
            // Two pairs at once, the weights zero at one parity (even and
            // odd la, lb and top among the cases).
            let a2: Vec<f64> = (0..la).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let b2: Vec<f64> = (0..lb).map(|_| rng.gen_range(-1.0..1.0)).collect();
            for par in [0usize, 1] {
                let hp = |q: usize| if q % 2 == par { hw[q] } else { 0.0 };
                let conv = |x: &[f64], y: &[f64], q: usize| -> f64 {
                    (0..x.len())
                        .filter(|&u| q >= u && q - u < y.len())
                        .map(|u| x[u] * y[q - u])
                        .sum()
                };
                let want: f64 = (0..top)
                    .map(|q| hp(q) * (conv(&a, &b, q) + conv(&a2, &b2, q)))
                    .sum();
                let got = weighted_convolution_pair_sum(
                    (|u| a[u], |w| b[w]),
                    (|u| a2[u], |w| b2[w]),
                    (la, lb),
                    top,
                    par,
                    hp,
                );
                assert!(
                    (got - want).abs() <= 2.0 * tol,
                    "pair {la} {lb} {top} π={par}: {got} vs {want}"
                );
            }
        }
    }
}
