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
//! whose mean square second difference is half the single MVAR term). The
//! expected ratio E\[MTOT²\]/MVAR for each noise type — 1/2 at m = 1, about
//! 0.995 (WPM) … 0.679 (RWFM) from m ≈ 16 on — is computed exactly from
//! this definition by [`crate::stats::totals`], which divides it out.
//!
//! Gaps: a subsequence is used when none of its samples is missing (for
//! HTOT, none of the 3m + 1 phase samples its frequencies come from).
//!
//! Fast forms. For m < 8: each subsequence's value is the quadratic form
//! of [`subsequence_form`] on the window less the straight line through its
//! end points, O(9m²) per subsequence. From m = 8 on: an exact O(1)-per-subsequence form
//! (notes above `Plan` below) — every term of the inner sum over the
//! reflected extension is a fixed linear combination of window prefix sums,
//! so the sum over all subsequences reduces to weighted lagged products of
//! prefix sums. Both are equal to the direct definition
//! (`reference::reflected_mean_square`) to 1e-10 relative in the tests;
//! subsequences are spread over threads in fixed blocks (reproducible).
//! The six reflection blocks of the fast form share six distinct moving
//! terms (three forward, three backward windows), so the lagged products
//! are summed in three fused passes and the fixed part, a
//! piecewise-quadratic filter on three segments, in one loop (`Plan`).
//! Cost O(N) per τ; memory O(run length) per thread: short runs keep five
//! prefix values a sample, runs longer than 2^18 samples only the prefix
//! sums V (one value a sample), one such run at a time.

use super::allan::finish;
use super::gaps::{Gaps, Prepared};
use super::Estimate;
use rayon::prelude::*;

/// Error-free sum: a + b = s + e exactly (Knuth's TwoSum).
#[inline(always)]
pub(crate) fn two_sum(a: f64, b: f64) -> (f64, f64) {
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

/// The sequence v of the module notes, read without a copy: the phase
/// itself (MTOT, TTOT) or its fractional frequency y_i = (x_{i+1} − x_i)/τ0
/// (HTOT), computed where it is read, so that HTOT holds no frequency copy
/// of the record.
#[derive(Clone, Copy)]
pub(crate) enum Seq<'a> {
    /// v_i = x_i.
    Values(&'a [f64]),
    /// v_i = (x_{i+1} − x_i)/τ0 on phase x with sampling interval τ0.
    Steps(&'a [f64], f64),
}

impl Seq<'_> {
    /// Number of values.
    #[inline]
    pub(crate) fn len(&self) -> usize {
        match *self {
            Seq::Values(v) => v.len(),
            Seq::Steps(x, _) => x.len().saturating_sub(1),
        }
    }

    /// v_i.
    #[inline(always)]
    pub(crate) fn at(&self, i: usize) -> f64 {
        match *self {
            Seq::Values(v) => v[i],
            Seq::Steps(x, tau0) => (x[i + 1] - x[i]) / tau0,
        }
    }

    /// True when v_a … v_b holds no gap, given the gap index of the slice
    /// behind the sequence (for steps, x_a … x_{b+1}).
    #[inline]
    pub(crate) fn clear(&self, gaps: &Gaps, a: usize, b: usize) -> bool {
        match *self {
            Seq::Values(_) => gaps.clear(a, b),
            Seq::Steps(..) => gaps.clear(a, b + 1),
        }
    }
}

/// G(m) of the module notes on sequence v with the gap index of the slice
/// behind it: (Σ over the subsequences used of their mean squares, number
/// used).
pub(crate) fn reflected_mean_square(v: Seq, gaps: &Gaps, m: usize) -> (f64, usize) {
    let len = v.len();
    if m == 0 || len < 3 * m {
        return (0.0, 0);
    }
    if m >= FAST_FROM_M {
        return reflected_mean_square_fast(v, gaps, m);
    }
    // Small m: each subsequence's value is wᵀRw with R the form of
    // [`subsequence_form`] and w the window less the straight line through
    // its end points (R annihilates constants and ramps, so this is exact and
    // keeps the products at the window's own scale). O(9m²) per subsequence.
    let l3 = 3 * m;
    let r = subsequence_form(m);
    let count = len - l3 + 1;
    // Sum in fixed blocks (the same split whatever the thread count), then
    // add the block sums in order, so the result is reproducible.
    const BLOCK: usize = 1024;
    let blocks: Vec<(f64, usize)> = (0..count.div_ceil(BLOCK))
        .into_par_iter()
        .map_init(
            || vec![0.0f64; l3],
            |w, b| {
                let mut s = 0.0;
                let mut used = 0;
                for n in b * BLOCK..((b + 1) * BLOCK).min(count) {
                    if v.clear(gaps, n, n + l3 - 1) {
                        let (first, last) = (v.at(n), v.at(n + l3 - 1));
                        let slope = if l3 > 1 {
                            (last - first) / (l3 - 1) as f64
                        } else {
                            0.0
                        };
                        for (k, wk) in w.iter_mut().enumerate() {
                            *wk = (v.at(n + k) - first) - slope * k as f64;
                        }
                        let mut q = 0.0;
                        for (a, row) in r.chunks_exact(l3).enumerate() {
                            let dot: f64 = row.iter().zip(w.iter()).map(|(x, y)| x * y).sum();
                            q += w[a] * dot;
                        }
                        s += q;
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
    let (s, used) = reflected_mean_square(Seq::Values(p.x), &p.gaps, m);
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
/// subsequence. Valid for 1 ≤ m ≤ (N−1)/3. The frequencies are computed
/// where they are read ([`Seq::Steps`]): no copy of the record.
pub(crate) fn htot(p: &Prepared, m: usize) -> Option<Estimate> {
    let (s, used) = reflected_mean_square(Seq::Steps(p.x, p.tau0), &p.gaps, m);
    finish(m as f64 * p.tau0, m, s, 6.0, used)
}

/// The definition of the module notes as a quadratic form: one
/// subsequence v_0 … v_{3m−1} contributes vᵀRv to G(m) (its mean square of
/// the 6m reflected second differences), with the 3m × 3m matrix R returned
/// here in row-major order. Each z_j is a fixed linear combination c_j of
/// the window: with u_j the weights of the block averages on the reflected
/// copies of each w_k, and w_k = v_k − s·k where the half-average slope s is
/// gᵀv (g = +1/(hd) on the last h samples, −1/(hd) on the first h),
/// c_j = u_j − (Σ_k k·u_j\[k\])·g; then R = (1/6m) Σ_j c_j c_jᵀ.
/// Used by the statistics layer for the exact mean and EDF of MTOT, TTOT
/// and HTOT ([`crate::stats::totals`]). O(m³).
pub(crate) fn subsequence_form(m: usize) -> Vec<f64> {
    let l3 = 3 * m;
    let h = l3 / 2;
    let d = l3 - h;
    let g: Vec<f64> = (0..l3)
        .map(|k| {
            let inv = 1.0 / (h as f64 * d as f64);
            match (k < h, k >= l3 - h) {
                (true, false) => -inv,
                (false, true) => inv,
                _ => 0.0,
            }
        })
        .collect();
    // Window sample behind position p of the 9m extension.
    let source = |p: usize| -> usize {
        if p < l3 {
            l3 - 1 - p
        } else if p < 2 * l3 {
            p - l3
        } else {
            3 * l3 - 1 - p
        }
    };
    let inv_m = 1.0 / m as f64;
    let mut r = vec![0.0f64; l3 * l3];
    let mut c = vec![0.0f64; l3];
    for j in 0..2 * l3 {
        c.fill(0.0);
        for (b, w) in [(0usize, 1.0f64), (1, -2.0), (2, 1.0)] {
            for p in j + b * m..j + (b + 1) * m {
                c[source(p)] += w * inv_m;
            }
        }
        let moment: f64 = c.iter().enumerate().map(|(k, u)| k as f64 * u).sum();
        for (ck, gk) in c.iter_mut().zip(&g) {
            *ck -= moment * gk;
        }
        for a in 0..l3 {
            let ca = c[a];
            if ca == 0.0 {
                continue;
            }
            for (rv, cb) in r[a * l3..(a + 1) * l3].iter_mut().zip(&c) {
                *rv += ca * cb;
            }
        }
    }
    let norm = 1.0 / (2 * l3) as f64;
    r.iter_mut().for_each(|v| *v *= norm);
    r
}

/// A local form R on `len` consecutive frequency samples y_k = x_{k+1} − x_k
/// as the form on the `len + 1` phase samples behind them: DᵀRD with D the
/// first-difference matrix (τ0 taken as 1).
pub(crate) fn frequency_form_on_phase(r: &[f64], len: usize) -> Vec<f64> {
    let n = len + 1;
    let at = |a: isize, b: isize| -> f64 {
        if a < 0 || b < 0 || a >= len as isize || b >= len as isize {
            0.0
        } else {
            r[a as usize * len + b as usize]
        }
    };
    let mut out = vec![0.0f64; n * n];
    for a in 0..n as isize {
        for b in 0..n as isize {
            out[a as usize * n + b as usize] =
                at(a - 1, b - 1) - at(a - 1, b) - at(a, b - 1) + at(a, b);
        }
    }
    out
}

// ---------------------------------------------------------------------------
// Exact O(N)-per-τ form.
//
// For the subsequence starting at n, write the window's own prefix sums
// through the record prefix V (V_t = Σ_{i<t} v_i): W_k = V_{n+k} − V_n −
// s·P(k), P(k) = k(k−1)/2, and s = (V_{n+3m} − V_{n+3m−h} − V_{n+h} + V_n)/(h·d)
// with h = ⌊3m/2⌋, d = 3m − h. Split j = b·m + r (b = 0 … 5, r = 0 … m−1).
// The four prefix positions j + k·m (k = 0 … 3) of z_j fall in the ninths
// B = b + k of the 9m extension, where Q = T − W_{(3−B)m−r} (B ≤ 2),
// T + W_{(B−3)m+r} (3 ≤ B ≤ 5) or 3T − W_{(9−B)m−r} (B ≥ 6), T = W_{3m}. So
//
//   m·z_j(n) = Σ_k γ_k V_{n+A_k+σ_k r} + Σ_{c∈{0,h,3m−h,3m}} φ_c(r)·V_{n+c},
//
// with γ_k ∈ {±1, ±3}, A_k a multiple of m, σ_k = ±1 and φ_c polynomials of
// degree 2 in r, all fixed for given (m, b). Squaring and summing over
// n and r gives three kinds of sum, each O(1) per n after prefix sums:
//
// * moving × moving, equal σ: Σ_t w(t)·V_{t+A}V_{t+A'} with a trapezoid
//   weight w(t) = #{(n, r): n + σr = t};
// * moving × moving, opposite σ: Σ_q V_{q+A} Σ_r V_{q+A'−2r}, the inner sum
//   over every other sample, from prefix sums of V taken over even and odd
//   indices separately;
// * with the fixed part: Σ_r r^p V_{n+A±r}, p ≤ 2, from prefix sums of
//   t^p·V_t, and closed power sums Σ_r r^p, p ≤ 4.
//
// The squares are sums of large terms that cancel, so the sums are taken
// block by block (3m subsequences at a time) on a *local* V built from the
// block's own samples less an affine function of time (the estimator is
// exactly invariant to adding a + b·t to v: the half-average slope removes
// b, and second differences remove a). Prefix sums are double-double.
// ---------------------------------------------------------------------------

/// Below this m the O(m)-per-subsequence form is as fast and simpler.
const FAST_FROM_M: usize = 8;

/// Runs longer than this many samples are summed one at a time across the
/// τ computed in parallel ([`BIG_RUN`]).
const BIG_RUN_LEN: usize = 1 << 18;

/// Held while a run longer than [`BIG_RUN_LEN`] is summed, so that two
/// long-τ sums never hold record-sized arrays at once ([`lock_big_run`]).
static BIG_RUN: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// A moving term γ·V_{n+A+σr}.
#[derive(Clone, Copy)]
struct Moving {
    gamma: f64,
    a: usize,
    plus: bool,
}

/// The constants of one ninth-block b: the four moving terms and the
/// polynomial coefficients [c0, c1, c2] of φ at offsets 0, h, 3m−h, 3m.
struct BlockPlan {
    moving: [Moving; 4],
    fixed: [[f64; 3]; 4],
}

/// The six ninth-blocks aggregated over their distinct moving terms (the
/// first step of [`Plan`]).
struct Aggregate {
    /// The distinct moving terms V_{n+A+σr} of all six blocks (six: A ∈
    /// {0, m, 2m} with σ = +1 and A ∈ {m, 2m, 3m} with σ = −1).
    terms: Vec<(usize, bool)>,
    /// pair\[t1\]\[t2\] = Σ_b g_b\[t1\]·g_b\[t2\], g_b\[t\] the coefficient
    /// of term t in block b: the moving × moving part summed over blocks.
    pair: Vec<Vec<f64>>,
    /// cross\[t\]\[c\]\[p\] = Σ_b g_b\[t\]·φ_b\[c\]\[p\]: the weight of
    /// V_{n+offset c}·Σ_r r^p·(term t) in the moving × fixed part.
    cross: Vec<[[f64; 3]; 4]>,
    /// own\[c\]\[c'\] = Σ_b Σ_{p,q} φ_b\[c\]\[p\]·φ_b\[c'\]\[q\]·Σ_r r^{p+q}:
    /// the fixed × fixed part as a form in the four V_{n+offset}.
    own: [[f64; 4]; 4],
}

impl Aggregate {
    fn new(m: usize) -> Self {
        let l3 = 3 * m;
        let h = l3 / 2;
        let d = l3 - h;
        let g = 1.0 / (h as f64 * d as f64);
        let mf = m as f64;
        let p3m = (l3 as f64) * (l3 as f64 - 1.0) / 2.0;
        let coef = [-1.0, 3.0, -3.0, 1.0];
        let blocks = (0..6)
            .map(|b| {
                let mut theta = 0.0;
                let mut gsum = 0.0;
                let mut pi = [0.0f64; 3];
                let mut moving = [Moving {
                    gamma: 0.0,
                    a: 0,
                    plus: true,
                }; 4];
                for (k, mv) in moving.iter_mut().enumerate() {
                    let ninth = b + k;
                    let (tw, sign, e, plus) = match ninth {
                        0..=2 => (1.0, -1.0, 3 - ninth, false),
                        3..=5 => (1.0, 1.0, ninth - 3, true),
                        _ => (3.0, -1.0, 9 - ninth, false),
                    };
                    let gamma = coef[k] * sign;
                    theta += coef[k] * tw;
                    gsum += gamma;
                    let em = e as f64 * mf;
                    let sg = if plus { 1.0 } else { -1.0 };
                    // P(em + σr) = [(em)² − em]/2 + σ(2em − 1)/2·r + r²/2.
                    pi[0] += gamma * (em * em - em) / 2.0;
                    pi[1] += gamma * sg * (2.0 * em - 1.0) / 2.0;
                    pi[2] += gamma * 0.5;
                    *mv = Moving {
                        gamma,
                        a: e * m,
                        plus,
                    };
                }
                pi[0] += theta * p3m;
                let mid = [g * pi[0], g * pi[1], g * pi[2]];
                let fixed = [
                    [-theta - gsum - mid[0], -mid[1], -mid[2]],
                    mid,
                    mid,
                    [theta - mid[0], -mid[1], -mid[2]],
                ];
                BlockPlan { moving, fixed }
            })
            .collect();
        let mut power = [0.0f64; 5];
        for r in 0..m {
            let rf = r as f64;
            let mut p = 1.0;
            for s in &mut power {
                *s += p;
                p *= rf;
            }
        }
        // Aggregate the six blocks over their distinct moving terms.
        let blocks: Vec<BlockPlan> = blocks;
        let mut terms: Vec<(usize, bool)> = Vec::new();
        for bp in &blocks {
            for mv in &bp.moving {
                if !terms.contains(&(mv.a, mv.plus)) {
                    terms.push((mv.a, mv.plus));
                }
            }
        }
        let nt = terms.len();
        let g: Vec<Vec<f64>> = blocks
            .iter()
            .map(|bp| {
                let mut gb = vec![0.0f64; nt];
                for mv in &bp.moving {
                    let t = terms
                        .iter()
                        .position(|&x| x == (mv.a, mv.plus))
                        .expect("term listed");
                    gb[t] += mv.gamma;
                }
                gb
            })
            .collect();
        let mut pair = vec![vec![0.0f64; nt]; nt];
        let mut cross = vec![[[0.0f64; 3]; 4]; nt];
        for (bp, gb) in blocks.iter().zip(&g) {
            for t1 in 0..nt {
                for t2 in 0..nt {
                    pair[t1][t2] += gb[t1] * gb[t2];
                }
                for (row, fixed) in cross[t1].iter_mut().zip(&bp.fixed) {
                    for (x, f) in row.iter_mut().zip(fixed) {
                        *x += gb[t1] * f;
                    }
                }
            }
        }
        let mut own = [[0.0f64; 4]; 4];
        for bp in &blocks {
            for (row, f1) in own.iter_mut().zip(&bp.fixed) {
                for (x, f2) in row.iter_mut().zip(&bp.fixed) {
                    for (p, a) in f1.iter().enumerate() {
                        for (q, b) in f2.iter().enumerate() {
                            *x += a * b * power[p + q];
                        }
                    }
                }
            }
        }
        Self {
            terms,
            pair,
            cross,
            own,
        }
    }
}

/// Everything about m that does not depend on the data, in the fused
/// form of [`run_sum`].
///
/// The three plus terms V_{n+A+r} (A = 0, m, 2m) and the three minus terms
/// V_{n+A−r} (A = m, 2m, 3m) give three moving × moving sums: plus × plus
/// and minus × minus (each one pass over t with the trapezoid weight and
/// a quadratic form in three V), and plus × minus (one pass with the three
/// every-other-sample inner sums). The fixed part reads the four V_{n+c}
/// only through three values f = (V_n, V_{n+h} + V_{n+3m−h}, V_{n+3m}) (the
/// blocks' φ at offsets h and 3m − h are equal), and each plus window
/// [n + jm, n + (j+1)m) and minus window (n + jm, n + (j+1)m] covers the
/// same segment: so the moving × fixed part is, for each f_k, a fixed
/// piecewise-quadratic filter on V, Σ_j Σ_p seg\[k\]\[j\]\[p\]·Σ_{ρ<m} ρ^p
/// V_{n+jm+ρ} + Σ_j pt\[k\]\[j\]·V_{n+jm} (the minus window's ends moved to
/// the point terms), three moment triples a point in place of six.
struct Plan {
    m: usize,
    h: usize,
    /// Offsets A of the plus terms and of the minus terms.
    pa: [usize; 3],
    qa: [usize; 3],
    /// Coefficients of the products plus i × plus j and minus i × minus j
    /// (i ≤ j, the off-diagonal ones doubled), and plus i × minus j (doubled).
    fpp: [[f64; 3]; 3],
    fmm: [[f64; 3]; 3],
    fpm: [[f64; 3]; 3],
    /// seg\[k\]\[j\]\[p\]: the weight of f_k·Σ_{ρ<m} ρ^p·V_{n+jm+ρ}.
    seg: [[[f64; 3]; 3]; 3],
    /// pt\[k\]\[j\]: the weight of f_k·V_{n+jm}, j = 0 … 3.
    pt: [[f64; 4]; 3],
    /// The fixed × fixed part as a form in f.
    own: [[f64; 3]; 3],
}

impl Plan {
    fn new(m: usize) -> Self {
        let ag = Aggregate::new(m);
        let mut plus: Vec<(usize, usize)> = Vec::new();
        let mut minus: Vec<(usize, usize)> = Vec::new();
        for (t, &(a, pl)) in ag.terms.iter().enumerate() {
            if pl {
                plus.push((a, t));
            } else {
                minus.push((a, t));
            }
        }
        plus.sort_unstable();
        minus.sort_unstable();
        assert!(
            plus.iter().map(|p| p.0).eq([0, m, 2 * m])
                && minus.iter().map(|p| p.0).eq([m, 2 * m, 3 * m]),
            "the six moving terms of the notes"
        );
        let pa = [0, m, 2 * m];
        let qa = [m, 2 * m, 3 * m];
        let mut fpp = [[0.0; 3]; 3];
        let mut fmm = [[0.0; 3]; 3];
        let mut fpm = [[0.0; 3]; 3];
        for i in 0..3 {
            for j in 0..3 {
                let twice = if i == j { 1.0 } else { 2.0 };
                if i <= j {
                    fpp[i][j] = twice * ag.pair[plus[i].1][plus[j].1];
                    fmm[i][j] = twice * ag.pair[minus[i].1][minus[j].1];
                }
                fpm[i][j] = 2.0 * ag.pair[plus[i].1][minus[j].1];
            }
        }
        // cross of the aggregate with the offsets h and 3m − h merged
        // (equal rows: both are the blocks' φ at the half-average points)
        // and doubled (2·moving·fixed).
        let merged = |t: usize| -> [[f64; 3]; 3] {
            let c = &ag.cross[t];
            debug_assert_eq!(c[1], c[2]);
            [c[0], c[1], c[3]].map(|row| row.map(|x| 2.0 * x))
        };
        let mf = m as f64;
        let mut seg = [[[0.0; 3]; 3]; 3];
        let mut pt = [[0.0; 4]; 3];
        for j in 0..3 {
            let (cp, cm) = (merged(plus[j].1), merged(minus[j].1));
            for k in 0..3 {
                let (p, q) = (cp[k], cm[k]);
                // Minus window j in ρ = jm + m − (n + jm + ρ)'s r = m − ρ:
                // Σ_p q_p (m − ρ)^p, over ρ = 1 … m.
                seg[k][j] = [
                    p[0] + q[0] + mf * q[1] + mf * mf * q[2],
                    p[1] - q[1] - 2.0 * mf * q[2],
                    p[2] + q[2],
                ];
                // The segment counts ρ = 0 (r = m), which the minus window
                // does not hold, and misses ρ = m (r = 0), which it does.
                pt[k][j] -= q[0] + mf * q[1] + mf * mf * q[2];
                pt[k][j + 1] += q[0];
            }
        }
        let map = [0usize, 1, 3];
        let own = map.map(|a| map.map(|b| ag.own[a][b]));
        // own[1][1] stands for the four products of V_{n+h} and
        // V_{n+3m−h} (all equal entries), so f_1² carries them exactly.
        Self {
            m,
            h: 3 * m / 2,
            pa,
            qa,
            fpp,
            fmm,
            fpm,
            seg,
            pt,
            own,
        }
    }
}

/// Scratch for one run of consecutive subsequences: the local V (one value
/// a sample of the run). Runs up to [`BIG_RUN_LEN`] samples also keep the
/// prefix sums of V over the samples of one parity (`par`) and the
/// prefix moments P_p(t) = Σ_{s<t} s^p·V_s, p = 0, 1, 2 (`mom`): 5 values
/// a sample. Longer runs take the parity sums from sliding compensated
/// sums and the moments from running cursors instead (no record-sized
/// arrays beyond V).
#[derive(Default)]
struct RunScratch {
    vv: Vec<f64>,
    par: Vec<f64>,
    mom: Vec<[f64; 3]>,
}

/// Running compensated sums P_p(t) = Σ_{s<t} s^p·V_s, p = 0, 1, 2, at a
/// cursor t that moves forward one sample at a time (TwoSum chains: the
/// difference of two cursors is the window sum to about one rounding of
/// its largest partial sum).
#[derive(Clone, Copy, Default)]
struct Cursor {
    t: usize,
    hi: [f64; 3],
    lo: [f64; 3],
}

impl Cursor {
    #[inline(always)]
    fn advance(&mut self, vv: &[f64]) {
        let x = vv[self.t];
        let tf = self.t as f64;
        for (p, v) in [x, x * tf, x * tf * tf].into_iter().enumerate() {
            let (a, e) = two_sum(self.hi[p], v);
            self.hi[p] = a;
            self.lo[p] += e;
        }
        self.t += 1;
    }

    /// P_p(b) − P_p(a) for this cursor at b and `a` at a.
    #[inline(always)]
    fn minus(&self, a: &Cursor) -> [f64; 3] {
        std::array::from_fn(|p| (self.hi[p] - a.hi[p]) + (self.lo[p] - a.lo[p]))
    }
}

/// A compensated sum of V over every other sample, lo, lo + 2, …, hi,
/// whose ends slide (the plus × minus inner sums of long runs).
#[derive(Clone, Copy)]
struct Slide {
    lo: i64,
    hi: i64,
    s: f64,
    e: f64,
    started: bool,
}

impl Slide {
    const EMPTY: Slide = Slide {
        lo: 0,
        hi: -2,
        s: 0.0,
        e: 0.0,
        started: false,
    };

    #[inline(always)]
    fn add(&mut self, x: f64) {
        let (a, e) = two_sum(self.s, x);
        self.s = a;
        self.e += e;
    }

    /// Σ V_u over u = lo, lo + 2, …, hi (lo ≡ hi mod 2).
    #[inline(always)]
    fn window(&mut self, vv: &[f64], lo: i64, hi: i64) -> f64 {
        if !self.started {
            self.started = true;
            self.lo = lo;
            self.hi = lo - 2;
        }
        while self.hi < hi {
            self.hi += 2;
            self.add(vv[self.hi as usize]);
        }
        while self.lo > lo {
            self.lo -= 2;
            self.add(vv[self.lo as usize]);
        }
        while self.lo < lo {
            self.add(-vv[self.lo as usize]);
            self.lo += 2;
        }
        while self.hi > hi {
            self.add(-vv[self.hi as usize]);
            self.hi -= 2;
        }
        self.s + self.e
    }
}

/// Fill the scratch for a run of `len` samples read by `at`: the local
/// V_t = Σ_{i<t} (v_i − α − β·i), t = 0 … len (compensated, stored rounded;
/// α + β·i the straight line through the run's end samples), and when
/// `stored` its parity prefix sums and prefix moments (each a compensated
/// TwoSum chain stored rounded to one f64).
fn build<F: Fn(usize) -> f64>(at: F, len: usize, s: &mut RunScratch, stored: bool) {
    let alpha = at(0);
    let beta = if len > 1 {
        (at(len - 1) - alpha) / (len - 1) as f64
    } else {
        0.0
    };
    s.vv.clear();
    s.vv.resize(len + 1, 0.0);
    let (mut hi, mut lo) = (0.0f64, 0.0f64);
    for (t, out) in s.vv[1..].iter_mut().enumerate() {
        let (a, e) = two_sum(hi, at(t) - alpha - beta * t as f64);
        hi = a;
        lo += e;
        *out = hi + lo;
    }
    s.par.clear();
    s.mom.clear();
    if stored {
        // par[t + 2] = Σ_{u ≤ t, u ≡ t (mod 2)} V_u; mom[t + 1] = P_p(t + 1).
        s.par.resize(len + 3, 0.0);
        s.mom.resize(len + 2, [0.0; 3]);
        let mut ph = [0.0f64; 2];
        let mut pl = [0.0f64; 2];
        let mut mh = [0.0f64; 3];
        let mut ml = [0.0f64; 3];
        let outs = s.par[2..].iter_mut().zip(&mut s.mom[1..]);
        for (t, (&x, (p, mo))) in s.vv.iter().zip(outs).enumerate() {
            let j = t & 1;
            let (a, e) = two_sum(ph[j], x);
            ph[j] = a;
            pl[j] += e;
            *p = a + pl[j];
            let tf = t as f64;
            let xs = [x, x * tf, x * tf * tf];
            for q in 0..3 {
                let (a, e) = two_sum(mh[q], xs[q]);
                mh[q] = a;
                ml[q] += e;
            }
            *mo = [mh[0] + ml[0], mh[1] + ml[1], mh[2] + ml[2]];
        }
    }
}

/// Σ_{i ≤ j} f_ij·x_i·x_j.
#[inline(always)]
fn upper_form(f: &[[f64; 3]; 3], [a, b, c]: [f64; 3]) -> f64 {
    a * (f[0][0] * a + f[0][1] * b + f[0][2] * c)
        + b * (f[1][1] * b + f[1][2] * c)
        + f[2][2] * c * c
}

/// The moving × moving part of [`run_sum`]: Σ_n Σ_{b,r} M_b(n, r)².
fn moving_part(plan: &Plan, vv: &[f64], par: Option<&[f64]>, count: usize) -> f64 {
    let r_max = plan.m as i64 - 1;
    let cnt = count as i64;
    let (pa, qa) = (plan.pa, plan.qa);
    // Plus × plus: t = n + r; weight #{r ∈ [0, m): 0 ≤ t − r < count}.
    let mut spp = 0.0;
    for t in 0..(cnt + r_max) {
        let w = (t.min(r_max) - (t - cnt + 1).max(0) + 1) as f64;
        let t = t as usize;
        spp += w * upper_form(&plan.fpp, pa.map(|a| vv[t + a]));
    }
    // Minus × minus: t = n − r ∈ [−r_max, count), read at t + A ≥ 1.
    let mut smm = 0.0;
    for t in -r_max..cnt {
        let w = (r_max.min(cnt - 1 - t) - (-t).max(0) + 1) as f64;
        smm += w * upper_form(&plan.fmm, qa.map(|a| vv[(t + a as i64) as usize]));
    }
    // Plus × minus: Σ_q V_{q+pa_i}·Σ_{r} V_{q+qa_j−2r} over the r with
    // 0 ≤ q − r < count (every other sample).
    let mut spm = 0.0;
    let mut slides = [[Slide::EMPTY; 2]; 3];
    for q in 0..(cnt + r_max) {
        let rl = (q - cnt + 1).max(0);
        let rh = q.min(r_max);
        let inner: [f64; 3] = match par {
            Some(par) => qa.map(|a| {
                let base = q + a as i64;
                par[(base - 2 * rl) as usize + 2] - par[(base - 2 * rh) as usize]
            }),
            None => {
                let side = (q & 1) as usize;
                std::array::from_fn(|j| {
                    let base = q + qa[j] as i64;
                    slides[j][side].window(vv, base - 2 * rh, base - 2 * rl)
                })
            }
        };
        let qu = q as usize;
        let v = pa.map(|a| vv[qu + a]);
        let f = &plan.fpm;
        for (j, inn) in inner.iter().enumerate() {
            spm += inn * (f[0][j] * v[0] + f[1][j] * v[1] + f[2][j] * v[2]);
        }
    }
    spp + smm + spm
}

/// The fixed part of point n from the three segment moment triples
/// c\[j\]\[p\] = Σ_{ρ<m} ρ^p·V_{n+jm+ρ}: 2·Σ_b Σ_r M_b·F_b + Σ_b Σ_r F_b².
#[inline(always)]
fn point_sum(plan: &Plan, vv: &[f64], n: usize, c: &[[f64; 3]; 3]) -> f64 {
    let m = plan.m;
    let l3 = 3 * m;
    let v = [vv[n], vv[n + m], vv[n + 2 * m], vv[n + l3]];
    let f = [v[0], vv[n + plan.h] + vv[n + l3 - plan.h], v[3]];
    let y: [f64; 3] = std::array::from_fn(|k| {
        let (a, b) = (&plan.seg[k], &plan.pt[k]);
        let mut s = b[0] * v[0] + b[1] * v[1] + b[2] * v[2] + b[3] * v[3];
        for (aj, cj) in a.iter().zip(c) {
            s += aj[0] * cj[0] + aj[1] * cj[1] + aj[2] * cj[2];
        }
        s
    });
    let o = &plan.own;
    let mut own = 0.0;
    for (row, fk) in o.iter().zip(f) {
        own += fk * (row[0] * f[0] + row[1] * f[1] + row[2] * f[2]);
    }
    y[0] * f[0] + y[1] * f[1] + y[2] * f[2] + own
}

/// The moving × fixed and fixed × fixed parts of [`run_sum`], the segment
/// moments from the stored prefix moments (`mom`) or, without them, from
/// four running cursors at n, n + m, n + 2m, n + 3m.
fn fixed_part(plan: &Plan, vv: &[f64], mom: Option<&[[f64; 3]]>, count: usize) -> f64 {
    let m = plan.m;
    let mut acc = 0.0;
    if let Some(mom) = mom {
        for n in 0..count {
            let c: [[f64; 3]; 3] = std::array::from_fn(|j| {
                let u = n + j * m;
                let (a, b) = (&mom[u], &mom[u + m]);
                centred([b[0] - a[0], b[1] - a[1], b[2] - a[2]], u as f64)
            });
            acc += point_sum(plan, vv, n, &c);
        }
        return acc;
    }
    let mut cur = [Cursor::default(); 4];
    let mut c0 = Cursor::default();
    for (j, slot) in cur.iter_mut().enumerate() {
        while c0.t < j * m {
            c0.advance(vv);
        }
        *slot = c0;
    }
    for n in 0..count {
        let c: [[f64; 3]; 3] =
            std::array::from_fn(|j| centred(cur[j + 1].minus(&cur[j]), (n + j * m) as f64));
        acc += point_sum(plan, vv, n, &c);
        for c in &mut cur {
            c.advance(vv);
        }
    }
    acc
}

/// Σ_{n} Σ_{j} (m·z_j(n))² over the subsequences n = start … start+count−1
/// (all clear of gaps), by the exact fast form of the notes above.
///
/// `stored`: the parity sums and window moments from stored prefix arrays
/// (short runs) or from sliding sums and running cursors (long runs: no
/// record-sized arrays beyond V; the moving and the fixed parts then run
/// on two threads). The two give the same sums up to rounding; the
/// caller chooses by the run's length alone.
fn run_sum(
    plan: &Plan,
    v: Seq,
    start: usize,
    count: usize,
    s: &mut RunScratch,
    stored: bool,
) -> f64 {
    let len = count + 3 * plan.m - 1; // samples the run reads
    let _guard = (!stored).then(lock_big_run);
    match v {
        Seq::Values(x) => build(|i| x[start + i], len, s, stored),
        Seq::Steps(x, tau0) => build(|i| (x[start + i + 1] - x[start + i]) / tau0, len, s, stored),
    }
    let vv = &s.vv[..];
    let total = if stored {
        moving_part(plan, vv, Some(&s.par), count) + fixed_part(plan, vv, Some(&s.mom), count)
    } else {
        // A plain scoped thread, not a rayon task: the thread holding
        // BIG_RUN must never pick up a task that waits for it.
        std::thread::scope(|sc| {
            let fixed = sc.spawn(|| fixed_part(plan, vv, None, count));
            let moving = moving_part(plan, vv, None, count);
            moving
                + fixed
                    .join()
                    .unwrap_or_else(|e| std::panic::resume_unwind(e))
        })
    };
    if !stored {
        // Give a record-sized scratch back before the next long run may
        // take the lock (another thread's scratch would otherwise stay).
        *s = RunScratch::default();
    }
    total
}

/// Take [`BIG_RUN`], running other pending rayon tasks while it is held
/// elsewhere (so that a waiting thread still helps, e.g. with the halves
/// of the running long run, instead of blocking a core).
fn lock_big_run() -> std::sync::MutexGuard<'static, ()> {
    loop {
        match BIG_RUN.try_lock() {
            Ok(g) => return g,
            Err(std::sync::TryLockError::Poisoned(e)) => return e.into_inner(),
            Err(std::sync::TryLockError::WouldBlock) => {
                if rayon::yield_now() != Some(rayon::Yield::Executed) {
                    std::thread::sleep(std::time::Duration::from_micros(200));
                }
            }
        }
    }
}

/// The window sums Σ_{ρ<m} ρ^p·V_{u+ρ} (p = 0, 1, 2) from the raw sums
/// d_p = Σ_s s^p·V_s over the window [u, u + m), by ρ = s − u.
#[inline(always)]
fn centred([d0, d1, d2]: [f64; 3], u: f64) -> [f64; 3] {
    [d0, d1 - u * d0, d2 - 2.0 * u * d1 + u * u * d0]
}

/// G(m) by the exact O(N)-per-τ form: (Σ of mean squares, subsequences used).
fn reflected_mean_square_fast(v: Seq, gaps: &Gaps, m: usize) -> (f64, usize) {
    fast_form(v, gaps, m, BIG_RUN_LEN)
}

/// [`reflected_mean_square_fast`] with runs longer than `big_run` samples
/// taken the long way (sliding sums, cursors, two threads, one at a time).
fn fast_form(v: Seq, gaps: &Gaps, m: usize, big_run: usize) -> (f64, usize) {
    let count = v.len() - 3 * m + 1;
    let plan = Plan::new(m);
    let block = 3 * m;
    let norm = (m * m * 6 * m) as f64;
    let blocks: Vec<(f64, usize)> = (0..count.div_ceil(block))
        .into_par_iter()
        .map_init(RunScratch::default, |scr, b| {
            let (lo, hi) = (b * block, ((b + 1) * block).min(count));
            let mut s = 0.0;
            let mut used = 0;
            let mut n = lo;
            while n < hi {
                if !v.clear(gaps, n, n + 3 * m - 1) {
                    n += 1;
                    continue;
                }
                let mut e = n + 1;
                while e < hi && v.clear(gaps, e, e + 3 * m - 1) {
                    e += 1;
                }
                let stored = e - n + 3 * m - 1 <= big_run;
                s += run_sum(&plan, v, n, e - n, scr, stored);
                used += e - n;
                n = e;
            }
            (s / norm, used)
        })
        .collect();
    blocks
        .iter()
        .fold((0.0, 0), |(s, u), &(bs, bu)| (s + bs, u + bu))
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    fn form_value(r: &[f64], v: &[f64]) -> f64 {
        let n = v.len();
        let mut s = 0.0;
        for a in 0..n {
            for b in 0..n {
                s += v[a] * r[a * n + b] * v[b];
            }
        }
        s
    }

    /// Both ways of the fast form's window sums — stored prefix arrays
    /// (short runs) and running cursors (runs longer than 2^18 samples,
    /// which the tests' records never reach through `compute`) — equal the
    /// direct SP 1065 definition (`reference::reflected_mean_square`) to
    /// 1e-10 relative, on phase and on its frequency steps, on random-walk
    /// FM with a frequency offset and on white plus random-walk phase.
    #[test]
    fn stored_and_running_window_sums_equal_the_definition() {
        let mut rng = ChaCha8Rng::seed_from_u64(12);
        let (mut f, mut ph, mut w) = (0.0, 0.0, 0.0);
        let rw: Vec<f64> = (0..700)
            .map(|_| {
                f += rng.gen_range(-1.0..1.0) * 1e-12;
                ph += f + 3e-9;
                ph
            })
            .collect();
        let wp: Vec<f64> = (0..650)
            .map(|_| {
                w += rng.gen_range(-1.0..1.0) * 1e-9;
                w + rng.gen_range(-1.0..1.0) * 3e-9
            })
            .collect();
        for x in [rw, wp] {
            let y: Vec<f64> = x.windows(2).map(|p| (p[1] - p[0]) / 2.0).collect();
            for (seq, direct) in [(Seq::Values(&x), &x), (Seq::Steps(&x, 2.0), &y)] {
                for m in [8usize, 13, 40, seq.len() / 3] {
                    let (want, count) =
                        crate::deviation::reference::reflected_mean_square(direct, m);
                    let plan = Plan::new(m);
                    let norm = (m * m * 6 * m) as f64;
                    for stored in [true, false] {
                        // Runs of 3m subsequences, as `reflected_mean_square_fast`.
                        let mut scr = RunScratch::default();
                        let got = (0..count)
                            .step_by(3 * m)
                            .map(|a| {
                                run_sum(&plan, seq, a, (3 * m).min(count - a), &mut scr, stored)
                            })
                            .sum::<f64>()
                            / norm;
                        assert!(
                            (got - want).abs() <= 1e-10 * want.abs(),
                            "m={m} stored={stored}: {got} vs {want}"
                        );
                    }
                }
            }
        }
    }

    /// The whole fast form, with every run taken the long way (sliding
    /// parity sums, running cursors, the moving and fixed parts on two
    /// threads, the long-run lock) and with every run taken the short way,
    /// equals the direct SP 1065 definition (`reference::reflected_mean_square`,
    /// which skips every subsequence holding a gap) to 1e-10 relative, with
    /// and without gaps, on phase and on its frequency steps; several τ at
    /// once in parallel, as `compute` does (the lock is taken by one at a
    /// time).
    #[test]
    fn long_and_short_runs_equal_the_definition_with_gaps() {
        let mut rng = ChaCha8Rng::seed_from_u64(29);
        let (mut f, mut ph) = (0.0, 0.0);
        let rw: Vec<f64> = (0..900)
            .map(|_| {
                f += rng.gen_range(-1.0..1.0) * 1e-12;
                ph += f + 3e-9;
                ph
            })
            .collect();
        let mut gappy = rw.clone();
        for i in (11..gappy.len()).step_by(97) {
            gappy[i] = f64::NAN;
        }
        for v in &mut gappy[400..431] {
            *v = f64::NAN;
        }
        for x in [rw, gappy] {
            let gaps = Gaps::new(&x);
            let y: Vec<f64> = x.windows(2).map(|p| (p[1] - p[0]) / 2.0).collect();
            for (seq, direct) in [(Seq::Values(&x), &x), (Seq::Steps(&x, 2.0), &y)] {
                let ms = [8usize, 9, 21, 50, 64, 101, seq.len() / 3];
                let got: Vec<[(f64, usize); 2]> = ms
                    .par_iter()
                    .map(|&m| [0, usize::MAX].map(|big| fast_form(seq, &gaps, m, big)))
                    .collect();
                for (&m, pair) in ms.iter().zip(&got) {
                    let (want, count) =
                        crate::deviation::reference::reflected_mean_square(direct, m);
                    for (big, &(s, used)) in ["long", "short"].iter().zip(pair) {
                        assert_eq!(used, count, "m={m} {big}");
                        if count == 0 {
                            continue;
                        }
                        assert!(
                            (s - want).abs() <= 1e-10 * want.abs(),
                            "m={m} {big}: {s} vs {want}"
                        );
                    }
                }
            }
        }
    }

    /// The quadratic form of one subsequence equals the direct SP 1065
    /// computation (`reference::reflected_mean_square` on that window alone),
    /// for odd and even 3m; on phase, the frequency form equals the direct
    /// computation on the differences of the phase window.
    #[test]
    fn subsequence_form_is_the_definition() {
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        for m in [1usize, 2, 3, 5, 8] {
            let r = subsequence_form(m);
            let x: Vec<f64> = (0..3 * m + 1).map(|_| rng.gen_range(-1.0..1.0)).collect();
            let v = &x[..3 * m];
            let (want, count) = crate::deviation::reference::reflected_mean_square(v, m);
            assert_eq!(count, 1);
            let got = form_value(&r, v);
            assert!(
                (got - want).abs() <= 1e-12 * want.abs(),
                "m={m}: {got} vs {want}"
            );
            let y: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
            let (want_y, _) = crate::deviation::reference::reflected_mean_square(&y, m);
            let rx = frequency_form_on_phase(&r, 3 * m);
            let got_y = form_value(&rx, &x);
            assert!(
                (got_y - want_y).abs() <= 1e-12 * want_y.abs(),
                "m={m} on frequency"
            );
        }
    }
}
