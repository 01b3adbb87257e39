//! Bias and EDF of the total family: TOTDEV, MTOT, TTOT and HTOT
//! (NIST SP 1065, §5.2.11–5.2.14).
//!
//! # Bias
//!
//! The total estimators read reflected copies of the record, which makes
//! them biased estimators of the variance they stand for: TOTVAR of the
//! Allan variance, MTOT of the modified Allan variance (TTOT of TVAR, by the
//! same factor), HTOT of the Hadamard variance. The bias factor
//! B = E\[estimate\]/E\[target\] depends on the noise type; a value is corrected
//! by dividing the variance by B (the deviation by √B).
//!
//! SP 1065 tabulates these factors. Here they are computed exactly from the
//! estimators' own definitions under the sampled power-law noise of IEEE
//! Std 1139 (WPM and FPM band-limited at f_h = 1/(2τ0); the kernels of
//! `gacv::sampled_phase_gacv`), as means of quadratic forms
//! ([`crate::stats::quadratic`]):
//!
//! - **TOTVAR.** Of the N − 2 terms, N − 2m are ordinary Allan terms; the
//!   2(m − 1) terms at the ends read a reflected sample 2x_0 − x_j (or its
//!   twin at the far end) and have their own mean. So
//!   B = [(N − 2m)·E_A + Σ_ends E_t] / ((N − 2)·E_A), exact for every N, m
//!   and α, in O(m). It reproduces SP 1065's B = 1 − a·τ/T with
//!   a = 0.481 (FFM) and 0.750 (RWFM) and a = 0 for WFM (docs/checks.md §D;
//!   checked in `tests/totals.rs`), and gives the factors SP 1065 does not
//!   tabulate: white PM B = 1 + (4/3)·τ/T (the reflected ends add variance),
//!   flicker PM B ≈ 1 + (1.0 … 1.2)·τ/T, growing slowly with m.
//! - **MTOT, TTOT.** Every subsequence contributes vᵀRv with the same R
//!   (`deviation::modtotal::subsequence_form`), so
//!   B = tr(RS)/E[MVAR term], independent of N. It is 1/2 at m = 1 exactly
//!   (MTOT(1) = MDEV(1)/√2, see the module notes of the estimator) and
//!   settles by m ≈ 16: 0.995 (WPM), 0.851 (FPM), 0.771 (WFM), 0.717
//!   (FFM), 0.679 (RWFM). Computed at the actual m up to m = 64, and at
//!   m = 64 beyond (it has settled to 0.1 %).
//! - **HTOT.** The same form on the frequencies. For a power law α the
//!   frequencies are the phase of the power law α + 2, so HTOT's factor at α
//!   is MTOT's at α + 2: 0.995 (WFM), 0.851 (FFM), 0.771 (RWFM), 0.717
//!   (FWFM), 0.679 (RRFM) — SP 1065's HTOT factors 1 + a with a = −0.005,
//!   −0.149, −0.229, −0.283, −0.321 (from memory; checked in
//!   `tests/totals.rs`). Given for α ≤ 0: for WPM and FPM the factor keeps
//!   changing with m (1.38 and 1.26 at m = 64, still growing).
//!
//! # EDF
//!
//! - **TOTDEV**: SP 1065's b·(T/τ) − c (WFM b = 1.50, c = 0; FFM 1.17,
//!   0.22; RWFM 0.93, 0.36; docs/checks.md §D, from memory), times the small-m
//!   factor described in [`mod@crate::stats::edf`]. The exact EDF of the
//!   quadratic form ([`totvar_edf_exact`]) agrees with it within 1–4 % at
//!   m = 16 for T/τ = 2 … 64 (`tests/totals.rs`). At m = 1 TOTVAR is the
//!   overlapping AVAR term for term (no reflected term), and gets exactly
//!   the overlapping Allan EDF. SP 1065 gives no rule for WPM and FPM;
//!   their EDF grows with m at fixed T/τ, so no reduced record stands for a
//!   long one. For white PM the EDF is exact, in O(m)
//!   ([`totvar_edf_white_pm`]): the reflected ends tie every end term to
//!   x_0 or x_{N−1}, whose squares then dominate the variance at long τ
//!   (N = 4096, m = 256: EDF 296 where the overlapping ADEV has 1826). For
//!   flicker PM, our rule: the overlapping Allan EDF of flicker PM with the
//!   same penalty the reflected ends cost white PM,
//!   1/ν = 1/ν_OADEV(FPM) + 1/ν_TOT(WPM) − 1/ν_OADEV(WPM), which the
//!   seeded Monte Carlo of `examples/coverage.rs` finds 0–25 % below the
//!   spread it measures (conservative).
//! - **MTOT, TTOT, HTOT**: the exact EDF ν = tr(AS)²/tr((AS)²) of the
//!   quadratic form of the whole estimate. It depends on the record through
//!   T/τ = (N − 1)/m and, weakly, through m: at fixed T/τ it has settled to
//!   about 2 % by m = 16. So it is evaluated on a reduced record with
//!   m' = min(m, 16) and the same T/τ — exact for m ≤ 16 — directly while
//!   T/τ ≤ 32 (at most 513 samples), and beyond that continued on the
//!   straight line through T/τ = 16 and 32 (ν grows linearly in T/τ once the
//!   subsequences far outnumber their span; the line meets the exact value
//!   at T/τ = 128 within 0.5 %). SP 1065's empirical forms (from memory:
//!   MTOT b·(T/τ) − c with WPM 1.90, 2.10; FPM 1.20, 1.40; WFM 1.10, 1.20;
//!   FFM 0.85, 0.50; RWFM 0.75, 0.31, and HTOT (T/τ)/(b0 + b1·τ/T) with
//!   WFM 0.559, 1.004; FFM 0.868, 1.006; RWFM 0.938, 1.000) agree with the
//!   exact values within 20 % for T/τ ≥ 8 (`tests/totals.rs`); at the
//!   longest τ (T/τ ≈ 3–4) they overstate the EDF by up to 70 % (RWFM),
//!   which is why the exact form is used. HTOT's EDF is given for α ≤ 0
//!   only (for WPM and FPM it grows with m at fixed T/τ).
//!
//! Both are model values: they assume the identified power law holds at
//! that τ.

use crate::deviation::modtotal::{frequency_form_on_phase, subsequence_form};
use crate::deviation::total::reflected_terms;
use crate::stats::gacv::{self, sampled_phase_gacv};
use crate::stats::quadratic::{mean_square, QuadraticForm};
use crate::stats::VarianceKind;
use crate::stats::{cached, Cache};
use std::sync::OnceLock;

/// MTOT and HTOT bias factors are computed at the actual m up to here, and
/// at this m beyond.
pub const BIAS_EXACT_UP_TO_M: usize = 64;
/// The reduced records of the EDF use m' = min(m, this).
pub const EDF_REDUCED_M: usize = 16;
/// Up to this T/τ the EDF is evaluated directly on the reduced record;
/// beyond, on the line through T/τ = 16 and this value.
pub const EDF_DIRECT_UP_TO: f64 = 32.0;

/// Bias factor B = E\[estimate\]/E\[target variance\] of a total-family
/// variance at averaging factor `m` on `n_phase` phase samples, for noise
/// S_y ∝ f^α (see the module notes). `None` for the other kinds, outside
/// the kind's α range, or when the record is too short for m.
///
/// ```
/// use tauwise::stats::{totals, VarianceKind};
/// // TOTVAR on random-walk FM, τ = T/4: SP 1065's 1 − 0.750·τ/T = 0.8125.
/// let b = totals::bias(VarianceKind::Total, -2, 250, 1001).unwrap();
/// assert!((b - 0.8125).abs() < 0.002);
/// // MTOT is MDEV/√2 at m = 1, whatever the noise.
/// let b1 = totals::bias(VarianceKind::ModifiedTotal, 0, 1, 100).unwrap();
/// assert!((b1 - 0.5).abs() < 1e-12);
/// ```
pub fn bias(kind: VarianceKind, alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if !kind.alpha_range().contains(&alpha) || m == 0 {
        return None;
    }
    match kind {
        VarianceKind::Total => totvar_bias(alpha, m, n_phase),
        VarianceKind::ModifiedTotal | VarianceKind::TimeTotal => {
            (n_phase >= 3 * m).then(|| local_bias(Local::Modified, alpha, m))?
        }
        VarianceKind::HadamardTotal => {
            (alpha <= 0 && n_phase > 3 * m).then(|| local_bias(Local::Hadamard, alpha, m))?
        }
        _ => None,
    }
}

/// Exact bias factor of TOTVAR, E\[TOTVAR\]/AVAR (module notes), for
/// 1 ≤ m ≤ (N − 1)/2 and α = 2 … −2.
///
/// ```
/// use tauwise::stats::totals::totvar_bias;
/// // White FM: the reflected ends are unbiased (SP 1065: a = 0).
/// assert!((totvar_bias(0, 100, 1001).unwrap() - 1.0).abs() < 2e-3);
/// ```
pub fn totvar_bias(alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if !(-2..=2).contains(&alpha) || m == 0 || n_phase < 2 * m + 1 {
        return None;
    }
    // B = 1 − 2·S(m)/(N − 2) with S(m) = Σ_{i=1}^{m−1} (1 − E_i/E_A) over
    // the left-end terms (the right-end ones mirror them: the GACV is even),
    // a function of m alone, exact for every m from the kernels one lag at
    // a time (O(m)).
    let s = end_sum(m, |k| {
        gacv::sampled_phase_gacv_at(alpha, k).expect("α = 2 … −2 checked above")
    })?;
    Some(1.0 - 2.0 * s / (n_phase as f64 - 2.0))
}

/// S(m) = Σ_{i=1}^{m−1} (1 − E_i/E_A) for the GACV `g`: E_A the mean square
/// of an Allan term x_0 − 2x_m + x_{2m}, E_i that of the left-end term
/// x*_{i−m} − 2x_i + x_{i+m} with x*_{i−m} = 2x_0 − x_{m−i}.
fn end_sum(m: usize, g: impl Fn(usize) -> f64) -> Option<f64> {
    let mean = |terms: &[(usize, f64)]| mean_square(terms, &g);
    let inner = mean(&[(0, 1.0), (m, -2.0), (2 * m, 1.0)]);
    if !(inner > 0.0) {
        return None;
    }
    let mut s = 0.0;
    for i in 1..m {
        let [a, b] = reflected_terms(2 * m + 1, i as isize - m as isize);
        s += 1.0 - mean(&[a, b, (i, -2.0), (i + m, 1.0)]) / inner;
    }
    Some(s)
}

/// The two members built from the modified-total subsequence form.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
enum Local {
    /// MTOT and TTOT: the form on 3m phase samples.
    Modified,
    /// HTOT: the form on 3m frequency samples, i.e. 3m + 1 phase samples.
    Hadamard,
}

impl Local {
    /// The subsequence form on phase and its length.
    fn form(self, m: usize) -> (Vec<f64>, usize) {
        let r = subsequence_form(m);
        match self {
            Local::Modified => (r, 3 * m),
            Local::Hadamard => (frequency_form_on_phase(&r, 3 * m), 3 * m + 1),
        }
    }

    /// The target variance's term on the same phase window: the second
    /// difference of m-sample averages of phase (MVAR) or of frequency
    /// (HVAR), as (index, coefficient) pairs.
    fn target_term(self, m: usize) -> Vec<(usize, f64)> {
        let w = 1.0 / m as f64;
        let mut c = vec![0.0f64; 3 * m + 1];
        for i in 0..m {
            for (k, v) in [(0, 1.0), (1, -2.0), (2, 1.0)] {
                match self {
                    Local::Modified => c[i + k * m] += v * w,
                    // y_t = x_{t+1} − x_t.
                    Local::Hadamard => {
                        c[i + k * m + 1] += v * w;
                        c[i + k * m] -= v * w;
                    }
                }
            }
        }
        c.into_iter().enumerate().filter(|t| t.1 != 0.0).collect()
    }

    /// Phase samples spanned by `count` consecutive subsequences.
    fn samples(self, m: usize, count: usize) -> usize {
        match self {
            Local::Modified => count + 3 * m - 1,
            Local::Hadamard => count + 3 * m,
        }
    }
}

/// (member, α, m'): what the cached results depend on.
type Key = (Local, i32, usize);

/// The bias factor of each (member, α, m').
static BIAS_CACHE: Cache<Key, f64> = OnceLock::new();
/// The EDF at T/τ = 16 and 32 of each (member, α, m'), the ends of the line
/// used beyond T/τ = 32.
static EDF_LINE_CACHE: Cache<Key, (f64, f64)> = OnceLock::new();

fn local_bias(which: Local, alpha: i32, m: usize) -> Option<f64> {
    let mr = m.min(BIAS_EXACT_UP_TO_M);
    cached(&BIAS_CACHE, (which, alpha, mr), || {
        let (r, len) = which.form(mr);
        let g = sampled_phase_gacv(alpha, len);
        let mut estimate = QuadraticForm::new(len);
        estimate.add_local(0, &r, len);
        let num = estimate.mean(&g);
        let den = mean_square(&which.target_term(mr), |k| g[k]);
        (den > 0.0 && num.is_finite()).then_some(num / den)
    })
}

/// The exact EDF of the whole estimate on a gap-free record of `n_phase`
/// samples at factor m: `count` subsequences' forms added at successive
/// offsets, ν = tr(AS)²/tr((AS)²). O(n²·m).
fn local_edf_exact(which: Local, alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    let q = local_whole_form(which, m, n_phase)?;
    let g = sampled_phase_gacv(alpha, q.samples());
    q.edf(&g)
}

/// The whole estimate as one quadratic form: `count` subsequences' forms
/// added at successive offsets on a gap-free record of `n_phase` samples.
fn local_whole_form(which: Local, m: usize, n_phase: usize) -> Option<QuadraticForm> {
    let (r, len) = which.form(m);
    if m == 0 || n_phase < len {
        return None;
    }
    let count = n_phase - len + 1;
    let mut q = QuadraticForm::new(which.samples(m, count));
    for start in 0..count {
        q.add_local(start, &r, len);
    }
    Some(q)
}

/// The whole MTOT/TTOT (`hadamard` false) or HTOT (true) estimate at
/// factor m on a gap-free record of `n_phase` samples as one quadratic
/// form (for [`crate::stats::form_interval`]).
pub(crate) fn modified_total_form(
    hadamard: bool,
    m: usize,
    n_phase: usize,
) -> Option<QuadraticForm> {
    let which = if hadamard {
        Local::Hadamard
    } else {
        Local::Modified
    };
    local_whole_form(which, m, n_phase)
}

/// TOTVAR's N − 2 terms at factor m on a gap-free record of `n_phase`
/// samples, reflected ends included, as one quadratic form.
pub(crate) fn totvar_form(m: usize, n_phase: usize) -> Option<QuadraticForm> {
    if m == 0 || n_phase < 2 * m + 1 {
        return None;
    }
    let mut q = QuadraticForm::new(n_phase);
    for i in 1..n_phase - 1 {
        let [a, b] = reflected_terms(n_phase, i as isize - m as isize);
        let [c, d] = reflected_terms(n_phase, (i + m) as isize);
        q.add_square(&[a, b, (i, -2.0), c, d]);
    }
    Some(q)
}

/// The EDF of MTOT/TTOT (`Local::Modified`) or HTOT at m on `n_phase`
/// samples by the reduced record and its line (module notes).
fn local_edf(which: Local, alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if n_phase < 2 {
        return None;
    }
    let ratio = (n_phase - 1) as f64 / m as f64; // T/τ
    let mr = m.min(EDF_REDUCED_M);
    let reduced = |t_over_tau: f64| (t_over_tau * mr as f64).round() as usize + 1;
    let nu = if ratio <= EDF_DIRECT_UP_TO {
        local_edf_exact(which, alpha, mr, reduced(ratio))?
    } else {
        let lo_ratio = EDF_DIRECT_UP_TO / 2.0;
        let (lo, hi) = cached(&EDF_LINE_CACHE, (which, alpha, mr), || {
            Some((
                local_edf_exact(which, alpha, mr, reduced(lo_ratio))?,
                local_edf_exact(which, alpha, mr, reduced(EDF_DIRECT_UP_TO))?,
            ))
        })?;
        hi + (ratio - EDF_DIRECT_UP_TO) * (hi - lo) / (EDF_DIRECT_UP_TO - lo_ratio)
    };
    (nu.is_finite() && nu > 0.0).then_some(nu)
}

/// EDF of a total-family variance at factor `m` on `n_phase` phase samples
/// (module notes): TOTDEV by the SP 1065 rule (α = 0 … −2), MTOT and TTOT
/// by the exact quadratic form (α = 2 … −2), HTOT likewise (α = 0 … −4).
/// `None` for other kinds and outside those ranges.
///
/// ```
/// use tauwise::stats::{totals, VarianceKind};
/// // MTOT, white FM, N = 1025, m = 64 (T/τ = 16): exact, about 15.2.
/// let nu = totals::edf(VarianceKind::ModifiedTotal, 0, 64, 1025).unwrap();
/// assert!((nu - 15.2).abs() < 0.5);
/// ```
pub fn edf(kind: VarianceKind, alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if m == 0 || !kind.alpha_range().contains(&alpha) {
        return None;
    }
    match kind {
        VarianceKind::Total => totdev_edf(alpha, m, n_phase),
        VarianceKind::ModifiedTotal | VarianceKind::TimeTotal => {
            if n_phase < 3 * m {
                return None;
            }
            local_edf(Local::Modified, alpha, m, n_phase)
        }
        VarianceKind::HadamardTotal => {
            if alpha > 0 || n_phase < 3 * m + 1 {
                return None;
            }
            local_edf(Local::Hadamard, alpha, m, n_phase)
        }
        _ => None,
    }
}

/// EDF of TOTVAR (module notes): at m = 1, where TOTVAR is the overlapping
/// AVAR term for term, the overlapping Allan EDF; for the FM noises NIST SP
/// 1065 b·(T/τ) − c times the small-m factor of the overlapping Allan EDF
/// (see the module notes of [`mod@crate::stats::edf`]); for white PM the
/// exact EDF of the quadratic form ([`totvar_edf_white_pm`]); for flicker
/// PM the overlapping Allan EDF with the reflected ends' white-PM penalty
/// added: 1/ν = 1/ν_OADEV(FPM) + [1/ν_TOT(WPM) − 1/ν_OADEV(WPM)] (our rule,
/// checked by seeded Monte Carlo in `tests/coverage.rs` and
/// `examples/coverage.rs`).
fn totdev_edf(alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    use crate::stats::edf::{greenhall_edf, large_r_coefficients, Differences, PhaseModel};
    if n_phase < 3 || 2 * m > n_phase - 1 {
        return None;
    }
    let oadev_kind = VarianceKind::OverlappingAllan;
    // The overlapping Allan EDF for the same record (N − 2m terms).
    let oadev = |a: i32| crate::stats::edf::edf(oadev_kind, a, m, n_phase);
    if m == 1 {
        return oadev(alpha);
    }
    let ratio = (n_phase - 1) as f64 / m as f64;
    let (b, c) = match alpha {
        2 => return totvar_edf_white_pm(m, n_phase),
        1 => return totvar_edf_flicker_pm(m, n_phase),
        0 => (1.50, 0.0),
        -1 => (1.17, 0.22),
        -2 => (0.93, 0.36),
        _ => return None,
    };
    let oadev = Differences::of(oadev_kind)?;
    let j_max = crate::stats::edf::J_MAX;
    let exact = greenhall_edf(oadev, alpha, m, n_phase, j_max, PhaseModel::Discrete)?;
    let r = (n_phase - 2 * m) as f64 / m as f64;
    let factor = match large_r_coefficients(alpha, 2, false) {
        Some((a0, a1)) if r > 3.0 && m * 3 <= j_max => exact * (a0 - a1 / r) / r,
        _ => 1.0,
    };
    let nu = (b * ratio - c) * factor;
    (nu > 0.0).then_some(nu)
}

/// The EDF of TOTVAR for flicker PM at factor m on a gap-free record of
/// `n_phase` samples.
///
/// Exact ([`totvar_edf_by_terms`], remembered per (m, N)) while
/// m·N ≤ [`TOTVAR_FPM_EXACT_BUDGET`]: that covers every τ of records up to
/// 2048 samples, and m ≤ 1024 at N = 4096. Beyond, the larger of two values
/// that both lie at or below the exact one at T/τ ≤ 16 (measured up to
/// m = 8192 by `examples/totdev_fpm_edf.rs`, table in docs/statistics.md):
/// the exact EDF on the reduced record with the same T/τ = (N − 1)/m and the
/// largest m′ within the budget (at fixed T/τ the flicker-PM EDF grows
/// slowly with m: T/τ = 4 gives 20.4, 21.3, 22.2, 22.9 at m = 1024 … 8192),
/// and the bound [`totvar_edf_flicker_pm_bound`] (10–20 % below the exact
/// EDF at T/τ ≤ 8, approaching it as m grows). So a long record's interval
/// there errs wide, never narrow.
pub fn totvar_edf_flicker_pm(m: usize, n_phase: usize) -> Option<f64> {
    static EXACT: Cache<(usize, usize), f64> = OnceLock::new();
    if m == 0 || n_phase < 2 * m + 1 || n_phase < 3 {
        return None;
    }
    let exact = |m: usize, n: usize| cached(&EXACT, (m, n), || totvar_edf_by_terms(1, m, n));
    if m.saturating_mul(n_phase) <= TOTVAR_FPM_EXACT_BUDGET {
        return exact(m, n_phase);
    }
    let ratio = (n_phase - 1) as f64 / m as f64;
    let reduced_n = |mr: usize| (ratio * mr as f64).round() as usize + 1;
    let mut mr = m;
    while mr > 1 && mr.saturating_mul(reduced_n(mr)) > TOTVAR_FPM_EXACT_BUDGET {
        mr /= 2;
    }
    let nr = reduced_n(mr).max(2 * mr + 1);
    let reduced = exact(mr, nr);
    let bound = totvar_edf_flicker_pm_bound(m, n_phase);
    match (reduced, bound) {
        (Some(a), Some(b)) => Some(a.max(b)),
        (a, b) => a.or(b),
    }
}

/// Above this m·N the flicker-PM EDF of TOTVAR is not computed exactly at
/// the point itself ([`totvar_edf_flicker_pm`]); at the budget the exact
/// sum costs about 0.2 s once per (m, N) (2 cores).
pub const TOTVAR_FPM_EXACT_BUDGET: usize = 1 << 22;

/// A lower bound on TOTVAR's flicker-PM EDF (our rule, the only one before
/// [`totvar_edf_by_terms`]): the overlapping Allan EDF of flicker PM with
/// the penalty the reflected ends cost white PM,
/// 1/ν = 1/ν_OADEV(FPM) + [1/ν_TOT(WPM) − 1/ν_OADEV(WPM)]. Against the exact
/// EDF: 10–21 % low at T/τ = 3 … 8, 1–6 % at T/τ = 16 (m ≥ 16).
pub fn totvar_edf_flicker_pm_bound(m: usize, n_phase: usize) -> Option<f64> {
    let oa = |a: i32| crate::stats::edf::edf(VarianceKind::OverlappingAllan, a, m, n_phase);
    let penalty = 1.0 / totvar_edf_white_pm(m, n_phase)? - 1.0 / oa(2)?;
    let inv = 1.0 / oa(1)? + penalty.max(0.0);
    (inv.is_finite() && inv > 0.0).then(|| 1.0 / inv)
}

/// The exact EDF of TOTVAR for white PM on a gap-free record of `n_phase`
/// samples at factor m, in O(m) (module notes).
///
/// With unit white phase the covariance matrix is the identity, so
/// ν = tr(A)²/‖A‖²_F for A = Σ_t c_t c_tᵀ, c_t the coefficients of term t
/// (x*_{i−m} − 2x_i + x*_{i+m}, reflections included), and
/// ‖A‖²_F = Σ_{t,u} (c_t·c_u)². Two terms that share no sample other than
/// an end sample x_0 or x_{N−1} meet only there, so with
/// Q_0 = Σ_u c_{u,0}², Q_L = Σ_u c_{u,N−1}² and Q_0L = Σ_u c_{u,0}c_{u,N−1},
///
/// ```text
/// Σ_u (c_t·c_u)² = c_{t,0}²Q_0 + c_{t,L}²Q_L + 2c_{t,0}c_{t,L}Q_0L
///     + Σ_{u sharing an inner sample} [(c_t·c_u)² − (c_{t,0}c_{u,0} + c_{t,L}c_{u,L})²]
/// ```
///
/// A term whose centre is at least 3m from both ends shares samples only
/// with the four ordinary terms at ±m, ±2m and contributes 36 + 2·16 + 2·1,
/// that is 70 (its own |c|² = 6). So only the O(m) terms near the ends are
/// summed. Checked against the dense quadratic form [`totvar_edf_exact`].
/// Beyond m = [`TOTVAR_WPM_EXACT_UP_TO_M`] it is evaluated there with the
/// same (N − 1)/m (the EDF has settled: the mean grows as m, the variance
/// as m², at fixed (N − 1)/m).
///
/// ```
/// use tauwise::stats::totals::{totvar_edf_exact, totvar_edf_white_pm};
/// let fast = totvar_edf_white_pm(20, 201).unwrap();
/// let dense = totvar_edf_exact(2, 20, 201).unwrap();
/// assert!((fast / dense - 1.0).abs() < 1e-12);
/// ```
pub fn totvar_edf_white_pm(m: usize, n_phase: usize) -> Option<f64> {
    if m == 0 || n_phase < 2 * m + 1 || n_phase < 3 {
        return None;
    }
    if m > TOTVAR_WPM_EXACT_UP_TO_M {
        // Mean ∝ m and variance ∝ m² at fixed (N − 1)/m (the end samples'
        // squares dominate): the EDF has settled to O(1/m′) there.
        let mr = TOTVAR_WPM_EXACT_UP_TO_M;
        let nr = ((n_phase - 1) as f64 * mr as f64 / m as f64).round() as usize + 1;
        return totvar_edf_white_pm_exact(mr, nr.max(2 * mr + 1));
    }
    totvar_edf_white_pm_exact(m, n_phase)
}

/// [`totvar_edf_white_pm`] is exact up to this m, and beyond evaluated at
/// it with the same (N − 1)/m.
pub const TOTVAR_WPM_EXACT_UP_TO_M: usize = 1 << 14;

/// A term's merged coefficients: up to five (index, weight) pairs.
#[derive(Clone, Copy)]
struct Term {
    c: [(usize, f64); 5],
    len: usize,
}

impl Term {
    fn coef(&self, k: usize) -> f64 {
        self.c[..self.len]
            .iter()
            .find(|e| e.0 == k)
            .map_or(0.0, |e| e.1)
    }
}

fn totvar_edf_white_pm_exact(m: usize, n_phase: usize) -> Option<f64> {
    let n = n_phase;
    if m == 0 || n < 2 * m + 1 || n < 3 {
        return None;
    }
    let last = n - 1;
    // The merged coefficients of the term centred at i (1 ≤ i ≤ N − 2).
    let term = |i: usize| -> Term {
        let [a, b] = reflected_terms(n, i as isize - m as isize);
        let [c, d] = reflected_terms(n, (i + m) as isize);
        let mut t = Term {
            c: [(0, 0.0); 5],
            len: 0,
        };
        for (k, w) in [a, b, (i, -2.0), c, d] {
            if w == 0.0 {
                continue;
            }
            match t.c[..t.len].iter_mut().find(|e| e.0 == k) {
                Some(e) => e.1 += w,
                None => {
                    t.c[t.len] = (k, w);
                    t.len += 1;
                }
            }
        }
        let mut j = 0;
        for q in 0..t.len {
            if t.c[q].1 != 0.0 {
                t.c[j] = t.c[q];
                j += 1;
            }
        }
        t.len = j;
        t
    };
    // Centres of the terms that read the inner sample j (0 < j < N − 1).
    let touching = |j: usize, out: &mut [usize; 5]| -> usize {
        let mut k = 0;
        let mut push = |i: usize| {
            if (1..last).contains(&i) && !out[..k].contains(&i) {
                out[k] = i;
                k += 1;
            }
        };
        push(j);
        if j + m < last {
            push(j + m);
        }
        if j > m {
            push(j - m);
        }
        if j < m {
            push(m - j); // reflected at the start: x*_{i−m} = 2x_0 − x_{m−i}
        }
        if let Some(i) = (2 * last).checked_sub(m + j) {
            if i + m > last && i < last && i >= 1 {
                push(i); // reflected at the end
            }
        }
        k
    };
    // Q_0, Q_L, Q_0L over the terms that read an end sample.
    let (mut q0, mut ql, mut q0l) = (0.0, 0.0, 0.0);
    let mut end = |i: usize| {
        let t = term(i);
        let (a, b) = (t.coef(0), t.coef(last));
        q0 += a * a;
        ql += b * b;
        q0l += a * b;
    };
    let left_top = m.min(last - 1);
    for i in 1..=left_top {
        end(i);
    }
    for i in last.saturating_sub(m).max(1).max(left_top + 1)..last {
        end(i);
    }
    // Terms with centre in [3m, N − 1 − 3m] are ordinary (70, |c|² = 6).
    let generic = |i: usize| i >= 3 * m && i + 3 * m <= last;
    let generic_count = if last >= 6 * m { last - 6 * m + 1 } else { 0 };
    let mut trace = 6.0 * generic_count as f64;
    let mut frob = 70.0 * generic_count as f64;
    let mut near = |i: usize| {
        let t = term(i);
        trace += t.c[..t.len].iter().map(|e| e.1 * e.1).sum::<f64>();
        let (t0, tl) = (t.coef(0), t.coef(last));
        let mut partners = [0usize; 25];
        let mut np = 0;
        let mut buf = [0usize; 5];
        for e in &t.c[..t.len] {
            if e.0 == 0 || e.0 == last {
                continue;
            }
            let k = touching(e.0, &mut buf);
            for &u in &buf[..k] {
                if !partners[..np].contains(&u) {
                    partners[np] = u;
                    np += 1;
                }
            }
        }
        let mut p = t0 * t0 * q0 + tl * tl * ql + 2.0 * t0 * tl * q0l;
        for &u in &partners[..np] {
            let cu = term(u);
            let d: f64 = t.c[..t.len].iter().map(|e| e.1 * cu.coef(e.0)).sum();
            let e = t0 * cu.coef(0) + tl * cu.coef(last);
            p += d * d - e * e;
        }
        frob += p;
    };
    if generic_count > 0 {
        for i in (1..3 * m).chain(last - 3 * m + 1..last) {
            near(i);
        }
    } else {
        for i in (1..last).filter(|&i| !generic(i)) {
            near(i);
        }
    }
    (frob > 0.0).then(|| trace * trace / frob)
}

/// The exact EDF of TOTVAR for a gap-free record of `n_phase` samples at
/// factor m and noise α = 2 … −2: the N − 2 terms, reflected ends included,
/// as one quadratic form (module notes). Dense, O(N²·m): for cross-checks on
/// records of up to a few thousand samples.
///
/// ```
/// use tauwise::stats::totals::totvar_edf_exact;
/// // White FM, N = 161, m = 10 (T/τ = 16): SP 1065 gives 1.5·16 = 24.
/// let nu = totvar_edf_exact(0, 10, 161).unwrap();
/// assert!((nu - 24.0).abs() < 1.0);
/// ```
pub fn totvar_edf_exact(alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if !(-2..=2).contains(&alpha) || m == 0 || n_phase < 2 * m + 1 {
        return None;
    }
    totvar_form(m, n_phase)?.edf(&sampled_phase_gacv(alpha, n_phase))
}

/// The exact EDF of MTOT (and TTOT; `hadamard` false) or HTOT (true) on a
/// gap-free record of `n_phase` samples, without the reduced record: for
/// cross-checks of [`edf`]. O(N²·m).
pub fn modified_total_edf_exact(
    hadamard: bool,
    alpha: i32,
    m: usize,
    n_phase: usize,
) -> Option<f64> {
    let which = if hadamard {
        Local::Hadamard
    } else {
        Local::Modified
    };
    if m == 0 || !(-4..=2).contains(&alpha) {
        return None;
    }
    local_edf_exact(which, alpha, m, n_phase)
}

/// The exact EDF of TOTVAR at factor m on a gap-free record of `n_phase`
/// samples for noise α = 2 … −2, from the covariances of its terms, in
/// O(m·N) instead of the dense form's O(N²·m).
///
/// With T_t = c_tᵀx the N − 2 terms (x*_{i−m} − 2x_i + x*_{i+m}, reflected
/// ends included) and G_tu = E\[T_t T_u\] = c_tᵀ S c_u, the estimate
/// Σ T_t² has mean Σ_t G_tt and variance 2 Σ_{t,u} G_tu², so
/// ν = (Σ_t G_tt)² / Σ_{t,u} G_tu² (the definition of the EDF; Greenhall &
/// Riley 2003 evaluate the same for estimators whose terms are all alike).
/// The N − 2m inner terms (centres m … N − 1 − m) are ordinary overlapping
/// Allan terms, whose covariance r(k) depends only on their distance k:
/// their pairs sum to Σ_{|k|<L} (L − |k|)·r(k)², L = N − 2m, in O(N). The
/// 2(m − 1) end terms (each reading a reflected sample 2x_0 − x_j or its
/// twin at the far end) are paired with every term directly: O(m·N).
/// Checked against the dense form [`totvar_edf_exact`] (`tests/edf.rs`).
///
/// ```
/// use tauwise::stats::totals::{totvar_edf_by_terms, totvar_edf_exact};
/// for alpha in [2, 1, 0, -1, -2] {
///     let fast = totvar_edf_by_terms(alpha, 12, 97).unwrap();
///     let dense = totvar_edf_exact(alpha, 12, 97).unwrap();
///     assert!((fast / dense - 1.0).abs() < 1e-9, "α = {alpha}");
/// }
/// ```
pub fn totvar_edf_by_terms(alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    let (mean, sq, _) = totvar_term_sums(alpha, m, n_phase)?;
    (sq > 0.0 && mean.is_finite()).then(|| mean * mean / sq)
}

/// (Σ_t G_tt, Σ_{t,u} G_tu², Σ over the inner pairs alone) of
/// [`totvar_edf_by_terms`].
fn totvar_term_sums(alpha: i32, m: usize, n_phase: usize) -> Option<(f64, f64, f64)> {
    use rayon::prelude::*;
    let n = n_phase;
    if !(-2..=2).contains(&alpha) || m == 0 || n < 2 * m + 1 || n < 3 {
        return None;
    }
    let g = sampled_phase_gacv(alpha, n);
    if g.len() < n {
        return None;
    }
    let s = |k: usize| g[k];
    let term = |i: usize| -> [(usize, f64); 5] {
        let [a, b] = reflected_terms(n, i as isize - m as isize);
        let [c, d] = reflected_terms(n, (i + m) as isize);
        [a, b, (i, -2.0), c, d]
    };
    let cov = |t: &[(usize, f64); 5], u: &[(usize, f64); 5]| -> f64 {
        let mut v = 0.0;
        for &(i, ci) in t {
            if ci == 0.0 {
                continue;
            }
            for &(j, cj) in u {
                if cj != 0.0 {
                    v += ci * cj * s(i.abs_diff(j));
                }
            }
        }
        v
    };
    // Inner terms: covariance at centre distance k.
    let inner = n - 2 * m;
    let w = [(0usize, 1.0), (m, -2.0), (2 * m, 1.0)];
    let r = |k: usize| -> f64 {
        let mut v = 0.0;
        for &(a, ca) in &w {
            for &(b, cb) in &w {
                v += ca * cb * s((k + a).abs_diff(b));
            }
        }
        v
    };
    let r0 = r(0);
    let mut inner_sq = r0 * r0 * inner as f64;
    for k in 1..inner {
        let v = r(k);
        inner_sq += 2.0 * (inner - k) as f64 * v * v;
    }
    // h(d) = E[x_p·T_j] for p − j = d, an inner term T_j centred at j:
    // s(|d + m|) − 2s(|d|) + s(|d − m|), tabled for |d| ≤ N.
    let off = n as isize;
    let h: Vec<f64> = (-off..=off)
        .map(|d| {
            s((d + m as isize).unsigned_abs().min(n)) - 2.0 * s(d.unsigned_abs().min(n))
                + s((d - m as isize).unsigned_abs().min(n))
        })
        .collect();
    let ends: Vec<[(usize, f64); 5]> = (1..m).chain(n - m..n - 1).map(term).collect();
    // For each end term: its own G_tt, Σ over inner u of G_tu² and Σ over
    // end u of G_tu².
    let (end_diag, end_inner, end_end) = ends
        .par_iter()
        .map(|t| {
            let with_end: f64 = ends
                .iter()
                .map(|u| {
                    let v = cov(t, u);
                    v * v
                })
                .sum();
            let mut with_inner = 0.0;
            for j in m..n - m {
                let mut v = 0.0;
                for &(p, c) in t {
                    v += c * h[(p as isize - j as isize + off) as usize];
                }
                with_inner += v * v;
            }
            (cov(t, t), with_inner, with_end)
        })
        .reduce(|| (0.0, 0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1, a.2 + b.2));
    let mean = inner as f64 * r0 + end_diag;
    let sq = inner_sq + 2.0 * end_inner + end_end;
    Some((mean, sq, inner_sq))
}

/// What the reflected ends cost TOTVAR's EDF at factor m on a gap-free
/// record of `n_phase` samples, noise α: 1/ν_TOT − 1/ν_inner, ν_TOT the
/// exact EDF of all N − 2 terms ([`totvar_edf_by_terms`]) and ν_inner that
/// of its N − 2m inner terms alone (the overlapping Allan variance on the
/// same record), both exact for the sampled power law.
pub fn totvar_end_penalty(alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    let (mean, sq, inner_sq) = totvar_term_sums(alpha, m, n_phase)?;
    let inner = (n_phase - 2 * m) as f64;
    let g = sampled_phase_gacv(alpha, 2 * m);
    let w = [(0usize, 1.0), (m, -2.0), (2 * m, 1.0)];
    let r0 = mean_square(&w, |k| g[k]);
    let inner_mean = inner * r0;
    let p = sq / (mean * mean) - inner_sq / (inner_mean * inner_mean);
    p.is_finite().then_some(p)
}
