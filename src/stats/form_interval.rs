//! Confidence intervals from the exact distribution of the estimate's
//! quadratic form, where a χ² shape does not describe it.
//!
//! A variance estimate is a quadratic form in the phase samples, so for
//! Gaussian noise σ̂²/E\[σ̂²\] = Σ λ_i χ²₁,i / Σ λ_i exactly, λ_i the
//! eigenvalues of A·S ([`QuadraticForm::eigenvalues`]). The χ²_ν interval
//! of [`mod@crate::stats::interval`] with the right EDF ν = (Σλ)²/Σλ² matches
//! the first two moments, and its shape is right when the λ are many and
//! alike. At the last octaves (few terms) and for TOTDEV (whose reflected
//! ends make the two end samples' squares dominate) a few unequal λ carry
//! the variance: the distribution has a lighter lower tail than χ²_ν, and
//! the χ² interval reaches too far up (coverage 0.72–0.82 at 68.3 % in the
//! seeded sweep, `docs/statistics.md` § Coverage).
//!
//! Here the pivot interval is taken from the distribution itself:
//! σ² ∈ \[σ̂²/q_hi, σ̂²/q_lo\] with q_lo, q_hi its (1 ∓ P)/2 quantiles
//! ([`crate::stats::weighted_chi2`], Imhof 1961).
//!
//! # The reduced record
//!
//! The eigenvalues of the full form cost O(N³). For the FM noises
//! (α = 0 … −2), which are self-similar, the normalised spectrum depends on
//! the record through T/τ and settles as m grows, so it is computed on a
//! record with the same T/τ = (N − 1)/m and m′ = min(m, [`REDUCED_M`])
//! (the method of [`crate::stats::totals`] for the EDF of MTOT). For the PM
//! noises the spectrum keeps changing with m (the bulk splits into m
//! interleaved chains, the EDF grows ∝ m); there the leading eigenvalues
//! that keep their share are kept and the rest is matched to the point's
//! EDF ([`pivot_weights`]).
//! `tests/edf.rs` measures the reduced spectra's quantiles against those of
//! m′ = 32.
//!
//! Non-overlapping ADEV and HDEV need no reduced record: they read only
//! the ⌊(n − 1)/m⌋ + 1 samples x_0, x_m, x_{2m}, …, and their form on those
//! samples, with the phase covariance at lags that are multiples of m, is
//! exact for every noise type and every m ([`spectrum_subsampled`]).
//!
//! # When the form is used
//!
//! At T/τ ≤ [`FORM_MAX_T_OVER_TAU`] (τ at least a sixteenth of the record)
//! for every estimator with a form here: ADEV, OADEV, MDEV, TDEV, HDEV,
//! OHDEV, TOTDEV, MTOT, TTOT, HTOT and Theo1 (not TheoH, whose record-made
//! ThêoBR ratio is not a quadratic form). Beyond, the χ²_ν interval: the
//! measured rule is that at T/τ = 32 the two intervals' bounds agree within
//! a few per cent for every estimator and FM noise (`tests/edf.rs`).
//! Each point says which it used ([`IntervalMethod`]).

use crate::deviation::Estimator;
use crate::stats::quadratic::QuadraticForm;
use crate::stats::{gacv, weighted_chi2, Cache, VarianceKind};
use std::sync::OnceLock;

/// The reduced records use m′ = min(m, this).
pub const REDUCED_M: usize = 16;
/// Theo1's reduced records use m′ = min(m, this) (its spectrum settles
/// more slowly: at m′ = 16 the white-FM EDF at T/τ = 4 is 8 % below m′ = 32).
pub const THEO1_REDUCED_M: usize = 32;
/// The form's distribution is used at T/τ up to this; χ²_ν beyond.
pub const FORM_MAX_T_OVER_TAU: f64 = 16.0;

/// How a point's confidence interval was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
pub enum IntervalMethod {
    /// ν·σ̂²/σ² ~ χ²_ν with the point's EDF ([`mod@crate::stats::interval`]).
    #[serde(rename = "chi2")]
    Chi2,
    /// The exact distribution Σλχ²₁/Σλ of the estimate's quadratic form
    /// (this module).
    #[serde(rename = "quadratic-form")]
    QuadraticForm,
    /// TheoH's ThêoBR part: Theo1's quadratic-form distribution times an
    /// independent gamma factor for the record's ThêoBR ratio
    /// ([`theoh_interval`]).
    #[serde(rename = "form-times-ratio")]
    FormTimesRatio,
    /// The union of the quadratic-form and the χ²_ν interval, taken at
    /// confidence levels of [`GUARD_CONFIDENCE`] and above ([`interval_for`]).
    #[serde(rename = "union")]
    Union,
    /// Percentiles of a seeded Monte Carlo of the statistic (the covariance
    /// separation of `separate`, `crate::separate`).
    #[serde(rename = "monte-carlo")]
    MonteCarlo,
}

impl IntervalMethod {
    /// The JSON name: `chi2`, `quadratic-form`, `form-times-ratio`, `union`
    /// or `monte-carlo`.
    pub fn name(self) -> &'static str {
        match self {
            IntervalMethod::Chi2 => "chi2",
            IntervalMethod::QuadraticForm => "quadratic-form",
            IntervalMethod::FormTimesRatio => "form-times-ratio",
            IntervalMethod::Union => "union",
            IntervalMethod::MonteCarlo => "monte-carlo",
        }
    }
}

/// The reduced problem standing for estimator `est` at factor m on `n`
/// gap-free samples: (m′, n′), or `None` where no reduced record stands for
/// it (PM noise beyond m′) or the estimator has no form here.
fn reduced(est: Estimator, m: usize, n: usize) -> Option<(usize, usize)> {
    if m == 0 || n < 2 || !has_form(est) {
        return None;
    }
    let cap = if est == Estimator::Theo1 {
        THEO1_REDUCED_M
    } else {
        REDUCED_M
    };
    let mut mr = m.min(cap);
    if est == Estimator::Theo1 && mr % 2 == 1 {
        mr -= 1;
    }
    if mr == 0 {
        return None;
    }
    let ratio = (n - 1) as f64 / m as f64;
    let nr = if mr == m {
        n
    } else {
        (ratio * mr as f64).round() as usize + 1
    };
    Some((mr, nr))
}

/// True for the estimators whose whole estimate is built here as a
/// quadratic form.
pub fn has_form(est: Estimator) -> bool {
    !matches!(est, Estimator::Theoh | Estimator::Mtie | Estimator::TieRms)
}

/// T/τ of a point: (N − 1)/m, for Theo1 (τ = 0.75·m·τ0) (N − 1)/(0.75 m).
fn t_over_tau(est: Estimator, m: usize, n: usize) -> f64 {
    let tau = if est == Estimator::Theo1 {
        0.75 * m as f64
    } else {
        m as f64
    };
    (n.saturating_sub(1)) as f64 / tau
}

/// The estimate of `est` at factor m on a gap-free record of n samples as a
/// quadratic form, with the polynomial degree its combinations annihilate.
pub fn whole_form(est: Estimator, m: usize, n: usize) -> Option<(QuadraticForm, usize)> {
    let diff = |q: &mut QuadraticForm, coef: &[f64], stride: usize| {
        let span = (coef.len() - 1) * m;
        if n <= span {
            return false;
        }
        let mut i = 0;
        while i + span < n {
            let t: Vec<(usize, f64)> = coef
                .iter()
                .enumerate()
                .map(|(k, &c)| (i + k * m, c))
                .collect();
            q.add_square(&t);
            i += stride;
        }
        true
    };
    let allan = [1.0, -2.0, 1.0];
    let hadamard = [1.0, -3.0, 3.0, -1.0];
    let mut q = QuadraticForm::new(n);
    let ok = match est {
        Estimator::Adev => diff(&mut q, &allan, m),
        Estimator::Oadev => diff(&mut q, &allan, 1),
        Estimator::Hdev => diff(&mut q, &hadamard, m),
        Estimator::Ohdev => diff(&mut q, &hadamard, 1),
        Estimator::Mdev | Estimator::Tdev => {
            if n < 3 * m {
                return None;
            }
            let w = 1.0 / m as f64;
            for i in 0..=n - 3 * m {
                let mut t = Vec::with_capacity(3 * m);
                for j in 0..m {
                    t.push((i + j, w));
                    t.push((i + j + m, -2.0 * w));
                    t.push((i + j + 2 * m, w));
                }
                q.add_square(&t);
            }
            true
        }
        Estimator::Totdev => {
            q = crate::stats::totals::totvar_form(m, n)?;
            true
        }
        Estimator::Mtot | Estimator::Ttot => {
            q = crate::stats::totals::modified_total_form(false, m, n)?;
            true
        }
        Estimator::Htot => {
            q = crate::stats::totals::modified_total_form(true, m, n)?;
            true
        }
        Estimator::Theo1 => {
            q = crate::stats::theo::theo1_form(m, n)?;
            true
        }
        _ => false,
    };
    if !ok {
        return None;
    }
    let kind = VarianceKind::of_estimator(est);
    let degree = kind.map_or(2, |k| k.difference_order());
    Some((q, degree))
}

/// The normalised eigenvalues (Σλ = 1, largest first) of the estimate of
/// `est` at factor m on a gap-free record of n samples for the sampled
/// power law α ([`gacv`], IEEE Std 1139 with f_h = 1/(2τ0)), computed on
/// the full form. O(n³).
pub fn spectrum_exact(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<Vec<f64>> {
    if !(-2..=2).contains(&alpha) {
        // The Hadamard family's α = −3, −4 have no sampled model here.
        if !(VarianceKind::of_estimator(est).is_some_and(|k| k.is_hadamard())
            && (-4..=-3).contains(&alpha))
        {
            return None;
        }
    }
    let (q, degree) = whole_form(est, m, n)?;
    let g = gacv::sampled_phase_gacv(alpha, q.samples());
    let lam = q.eigenvalues(&g, degree)?;
    let total: f64 = lam.iter().sum();
    (total > 0.0 && total.is_finite()).then(|| lam.iter().map(|l| l / total).collect())
}

/// True for the estimators whose form is built on the samples they read
/// ([`spectrum_subsampled`]): non-overlapping ADEV and HDEV.
pub fn is_subsampled(est: Estimator) -> bool {
    matches!(est, Estimator::Adev | Estimator::Hdev)
}

/// The phase GACV of the sampled power law α ([`gacv`], as
/// [`spectrum_exact`] uses it) at the lags 0, m, 2m, …, (k − 1)·m: the
/// covariance of the k samples x_0, x_m, …, x_{(k−1)m}. α = 2 … −2 lag by
/// lag from the closed forms (flicker PM from its Ci series or quadrature);
/// the Hadamard family's α = −3, −4 from the discrete kernels' table.
fn strided_gacv(alpha: i32, m: usize, k: usize) -> Option<Vec<f64>> {
    if k == 0 || m == 0 {
        return None;
    }
    if (-2..=2).contains(&alpha) {
        (0..k)
            .map(|j| gacv::sampled_phase_gacv_at(alpha, j * m))
            .collect()
    } else {
        let table = gacv::sampled_phase_gacv(alpha, (k - 1) * m);
        (table.len() > (k - 1) * m).then(|| table.iter().step_by(m).copied().collect())
    }
}

/// The normalised eigenvalues (Σλ = 1, largest first) of non-overlapping
/// ADEV or HDEV at factor m on `n` gap-free samples, noise α, computed on
/// the samples the estimate reads.
///
/// Their terms are second (third) differences of x_0, x_m, x_{2m}, …,
/// x_{km}, k = ⌊(n − 1)/m⌋: the estimate at factor m on n samples is
/// exactly the estimate at factor 1 on those k + 1 samples, whose
/// covariance is the phase GACV at lags that are multiples of m
/// (`strided_gacv`; analytic). So the spectrum is exact for every noise
/// type and every m, at O(k³) instead of the whole record's O(n³), and
/// T/τ is never rounded (the reduced record of m′ = 16 samples per τ gave
/// T/τ = 3.999 a third Allan term where the record has two). At the
/// T/τ ≤ [`FORM_MAX_T_OVER_TAU`] where the form is used, k ≤ 16.
/// `tests/edf.rs` checks it against the differences' covariance (white PM,
/// white FM, random-walk FM: analytic) and against [`spectrum_exact`] on
/// whole records of up to 512 samples (every noise type). `None` for
/// other estimators, fewer samples than one term needs, or α without a
/// model.
pub fn spectrum_subsampled(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<Vec<f64>> {
    if !is_subsampled(est) || m == 0 || n < 2 {
        return None;
    }
    let hadamard = est == Estimator::Hdev;
    if !((-2..=2).contains(&alpha) || (hadamard && (-4..=-3).contains(&alpha))) {
        return None;
    }
    let k = (n - 1) / m + 1;
    let (q, degree) = whole_form(est, 1, k)?;
    let g = strided_gacv(alpha, m, k)?;
    let lam = q.eigenvalues(&g, degree)?;
    let total: f64 = lam.iter().sum();
    (total > 0.0 && total.is_finite()).then(|| lam.iter().map(|l| l / total).collect())
}

type Key = (Estimator, i32, usize, usize, u64, u64);

/// The pivot quantiles (q_lo, q_hi) of σ̂²/E\[σ̂²\] for `est` at factor m
/// on `n` gap-free samples, noise α, EDF `edf`, two-sided `confidence`:
/// computed from the weights of [`pivot_weights`] and remembered. `None`
/// where the form is not used (T/τ > [`FORM_MAX_T_OVER_TAU`], no form, or
/// no weights).
pub fn pivot_quantiles(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    edf: f64,
    confidence: f64,
) -> Option<(f64, f64)> {
    static CACHE: Cache<Key, (f64, f64)> = OnceLock::new();
    if !(confidence > 0.0 && confidence < 1.0 && edf.is_finite() && edf > 0.0)
        || t_over_tau(est, m, n) > FORM_MAX_T_OVER_TAU
    {
        return None;
    }
    let key = if is_subsampled(est) {
        // Exact on the samples read: the weights depend on m and their
        // count only.
        (
            est,
            alpha,
            m,
            n.saturating_sub(1) / m + 1,
            0,
            confidence.to_bits(),
        )
    } else {
        let (mr, nr) = reduced(est, m, n)?;
        if mr != m && alpha == 1 && carries_flicker_pm(est) {
            // The exact mean at (m, n) and the EDF: the weights depend on
            // all three (TOTDEV's EDF is the point's).
            let nu_bits = if est == Estimator::Totdev {
                edf.to_bits()
            } else {
                0
            };
            (est, alpha, m, n, nu_bits, confidence.to_bits())
        } else {
            let pm_bits = if mr == m || alpha <= 0 {
                0
            } else {
                edf.to_bits()
            };
            (est, alpha, mr, nr, pm_bits, confidence.to_bits())
        }
    };
    crate::stats::cached(&CACHE, key, || {
        let w = pivot_weights(est, alpha, m, n, edf)?;
        let lo = weighted_chi2::quantile_with(&w, 0.5 * (1.0 - confidence)).ok()?;
        let hi = weighted_chi2::quantile_with(&w, 0.5 * (1.0 + confidence)).ok()?;
        (lo > 0.0 && hi > lo && hi.is_finite()).then_some((lo, hi))
    })
}

/// The weights (λ_i, degrees of freedom h_i) of σ̂²/E\[σ̂²\] ≈ Σ λ_i χ²_{h_i}
/// (Σ h_i λ_i = 1) for `est` at factor m on `n` samples, noise α:
///
/// - non-overlapping ADEV and HDEV, every noise and every m: the exact
///   eigenvalues of the form on the samples they read
///   ([`spectrum_subsampled`]), each with h = 1;
/// - FM noises, or m ≤ [`REDUCED_M`]: the eigenvalues of the reduced
///   record's form, each with h = 1 (exact for m ≤ m′);
/// - OADEV, OHDEV and TOTDEV on flicker PM at m > m′: the leading
///   eigenvalues carried to m per unit m and divided by the exact mean,
///   the rest matched to the exact EDF (`flicker_pm_carried_weights`);
/// - other PM cases at m > m′ (the **split spectrum**): the form's bulk splits
///   into ever more, ever smaller eigenvalues as m grows at fixed T/τ,
///   while a few (TOTDEV's two end samples, read by every reflected term)
///   keep their share of the mean. Those are found as the leading
///   eigenvalues whose share at m′ = 16 is at least 3/4 of that at m′ = 8;
///   they are kept, their shares continued to the actual m as
///   λ(m) = λ∞ + c/m through m′ = 8 and 16 (TOTDEV white PM at T/τ = 8:
///   0.090, 0.080 → 0.071), and the rest is one gamma term g·χ²_h with the rest's
///   mean and the variance left by the point's EDF ν
///   (2/ν − 2Σ λ_top²). With no such eigenvalue (or no variance left)
///   `None`: the χ²_ν interval is the model.
pub fn pivot_weights(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    edf: f64,
) -> Option<Vec<(f64, f64)>> {
    if is_subsampled(est) {
        return Some(lumped(&spectrum_subsampled(est, alpha, m, n)?, LUMP_BELOW));
    }
    let (mr, nr) = reduced(est, m, n)?;
    if mr == m || alpha <= 0 {
        return Some(lumped(&spectrum_cached(est, alpha, mr, nr)?, LUMP_BELOW));
    }
    if alpha == 1 && carries_flicker_pm(est) {
        return flicker_pm_carried_weights(est, m, n, edf);
    }
    let top = continued_shares(
        est,
        alpha,
        m,
        n,
        if alpha == 1 {
            FPM_SPLIT_TOP
        } else {
            SPLIT_MAX_TOP
        },
    )?;
    if top.is_empty() {
        return None;
    }
    let mean_rest = 1.0 - top.iter().sum::<f64>();
    let var_rest = 2.0 / edf - 2.0 * top.iter().map(|l| l * l).sum::<f64>();
    if !(mean_rest > 0.0 && var_rest > 0.0) {
        return None;
    }
    let g = var_rest / (2.0 * mean_rest);
    let mut w: Vec<(f64, f64)> = top.iter().map(|&l| (l, 1.0)).collect();
    w.push((g, mean_rest / g));
    Some(w)
}

/// The leading shares of the split spectrum continued to factor m (at most
/// `max_top`; see [`pivot_weights`]): those whose share at m′ = 16 is at
/// least 3/4 of that at m′ = 8, continued as λ(m) = λ16 + d·q·(1 − q^k)/(1 − q),
/// d = λ16 − λ8, k = log2(m/16) — a step that shrinks by a factor q per
/// doubling of m. White PM: q = 1/2, i.e. λ = λ∞ + c/m. Flicker PM: q
/// measured from m′ = 4, 8, 16 (TOTDEV at T/τ = 4: 0.65 … 0.71 from the
/// exact spectra at m′ = 8 … 128).
fn continued_shares(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    max_top: usize,
) -> Option<Vec<f64>> {
    let ratio = (n - 1) as f64 / m as f64;
    let at = |mm: usize| spectrum_cached(est, alpha, mm, (ratio * mm as f64).round() as usize + 1);
    let fine = at(REDUCED_M)?;
    let coarse = at(REDUCED_M / 2)?;
    let doublings = (m as f64 / REDUCED_M as f64).log2().max(0.0);
    let steps = at(REDUCED_M / 4);
    let top: Vec<f64> = fine
        .iter()
        .zip(&coarse)
        .enumerate()
        .take(max_top)
        .take_while(|(_, (f, c))| **f >= 0.75 * **c)
        .map(|(i, (f, c))| {
            let d = f - c;
            let q = match (alpha, &steps) {
                (1, Some(s)) if s.len() > i && (c - s[i]) * d > 0.0 => {
                    (d / (c - s[i])).clamp(0.0, PM_STEP_RATIO_MAX)
                }
                _ => 0.5,
            };
            f + d * q * (1.0 - q.powf(doublings)) / (1.0 - q)
        })
        .take_while(|l| *l > 0.0)
        .collect();
    Some(top)
}

/// The reduced record flicker-PM OADEV and OHDEV take their leading
/// eigenvalues from, and the last of TOTDEV's four
/// (`flicker_pm_carried_weights`).
pub const FPM_TRANSFER_M: usize = 32;

/// The weights of OADEV, OHDEV or TOTDEV on flicker PM at factor m >
/// [`REDUCED_M`] on `n` samples (`edf`: the point's, used by TOTDEV).
/// TOTDEV's leading eigenvalues are continued per unit m from four reduced
/// records ([`totdev_flicker_pm_shares`]), and beyond its end pair the
/// rule below compares with the third; OADEV's and OHDEV's as follows.
///
/// Flicker-PM phase at scale m is a log-correlated field: the Allan and
/// Hadamard combinations cancel the kernel's ln m, so the covariance of
/// two terms whose distance is a given fraction of m does not depend on m,
/// and the leading eigenvalues of the form (the covariance matrix of its
/// n − d·m terms) grow as m·Λ_i with Λ_i settling fast — exact spectra at
/// T/τ = 4 (`examples/flicker_pm_spectrum.rs`): Λ_1 = 3.684, 3.676, 3.672,
/// 3.670, 3.669, 3.668, 3.667 at m = 16 … 1024 for OADEV. TOTDEV at
/// m = 512, N = 2049: 0.5983, 0.7211, 1.2797, 1.8311 against the exact
/// 0.6004, 0.7197, 1.2803, 1.8305 (the former share continuation: 0.6268,
/// 0.7325, 1.273, 1.8512). The mean of the
/// form grows faster (each doubling of m adds an octave of fine structure,
/// about 2.6·m to the OADEV mean per doubling), so the leading *shares*
/// fall like 1/ln m — the geometric continuation of the shares that the
/// other split spectra use misses this. Here the leading shares at
/// m′ = [`FPM_TRANSFER_M`] (same T/τ) are carried to m with the exact
/// means of both forms: λ_i(m) = λ_i(m′)·(M(m′)/m′)/(M(m)/m); the rest is
/// one gamma term with the rest's mean and the variance left by the form's
/// exact EDF at m ([`overlapping_moments`]). Kept: the [`FPM_SPLIT_TOP`]
/// (two) leading eigenvalues, and further ones up to [`SPLIT_MAX_TOP`]
/// while each is at least half the largest and the rest keeps at least the
/// variance 2λ²_{k+1} of the next (which it holds). The carried shares are
/// slightly too large (Λ_i/m still falls a little beyond m′, more for the
/// deeper ones), so keeping small ones takes variance from the rest and
/// moves the lower tail to the narrow side (OHDEV at N = 513, m = 128: the
/// 2.5 % quantile 4 % above the exact one with up to eight kept
/// regardless of size); at T/τ = 8, where the leading eigenvalues are
/// nearly equal, keeping only two put the 97.5 % quantile 1.4 % low. Against the exact
/// spectrum at m = 1024, N = 4096 (T/τ = 4), the 15.85 %, 84.15 %, 2.5 %
/// and 97.5 % quantiles agree within 0.3 %, 0.3 %, 1.8 % and 0.2 % (OADEV)
/// and 0.7 %, 0.7 %, 0.5 % and 0.3 % (OHDEV); `tests/edf.rs` checks the
/// method against exact spectra at N ≤ 1025.
///
/// The exact EDF here is that of the sampled band-limited flicker PM of
/// IEEE Std 1139 (f_h = 1/(2τ0), the process `simulate` draws), and it is
/// the EDF the point reports ([`form_edf`]); Greenhall & Riley's rule on
/// the discrete Kasdin–Walter kernel is about 7 % higher at T/τ = 4 (37.5
/// against 35.0 at m = 1024, N = 4096; seeded Monte Carlo measures 35.5).
fn flicker_pm_carried_weights(est: Estimator, m: usize, n: usize, edf: f64) -> Option<Weights> {
    let ratio = (n - 1) as f64 / m as f64;
    let mr = FPM_TRANSFER_M;
    let nr = (ratio * mr as f64).round() as usize + 1;
    let fine = spectrum_cached(est, 1, mr, nr)?;
    let (mean_r, _) = flicker_pm_moments(est, mr, nr, edf)?;
    let (mean_m, nu) = flicker_pm_moments(est, m, n, edf)?;
    let scale = (mean_r / mr as f64) / (mean_m / m as f64);
    if !scale.is_finite() {
        return None;
    }
    let carried: Vec<f64> = if est == Estimator::Totdev {
        totdev_flicker_pm_shares(m, n, mean_m)?
    } else {
        fine.iter().map(|l| l * scale).collect()
    };
    let base = if est == Estimator::Totdev {
        FPM_SPLIT_TOP
    } else {
        0
    };
    // The rest's (mean, variance) with the k leading eigenvalues kept.
    let rest = |k: usize| {
        let top = &carried[..k.min(carried.len())];
        (
            1.0 - top.iter().sum::<f64>(),
            2.0 / nu - 2.0 * top.iter().map(|l| l * l).sum::<f64>(),
        )
    };
    let first = carried.get(base).copied().unwrap_or(0.0);
    let k = (FPM_SPLIT_TOP + 1..=SPLIT_MAX_TOP.min(carried.len()))
        .take_while(|&k| {
            let (mean, var) = rest(k);
            let (kept, next) = (carried[k - 1], carried.get(k).copied().unwrap_or(0.0));
            kept >= 0.5 * first && mean > 0.0 && var >= 2.0 * next * next
        })
        .last()
        .unwrap_or(FPM_SPLIT_TOP);
    let top = &carried[..k.min(carried.len())];
    let mean_rest = 1.0 - top.iter().sum::<f64>();
    let var_rest = 2.0 / nu - 2.0 * top.iter().map(|l| l * l).sum::<f64>();
    if !(mean_rest > 0.0 && var_rest > 0.0) {
        return None;
    }
    let g = var_rest / (2.0 * mean_rest);
    let mut w: Weights = top.iter().map(|&l| (l, 1.0)).collect();
    w.push((g, mean_rest / g));
    Some(w)
}

/// TOTDEV's leading shares on flicker PM at factor m on `n` samples (form
/// mean `mean_m`): for each of the [`SPLIT_MAX_TOP`] leading eigenvalues,
/// u = Λ/m (Λ the unnormalised eigenvalue) at m′ = 4, 8, 16 and 32 (same
/// T/τ), continued to m with increments per doubling that approach a
/// limit geometrically (`continue_per_doubling`), divided by the exact M(m)/m.
/// The end pair (x_0 and x_{N−1}, read by every reflected term) grows like
/// ln m in u — the fine structure of the two end samples adds coherently
/// to 2(m − 1) terms — while the others settle (exact spectra at T/τ = 4:
/// u of the pair 5.83, 6.46, 7.15, 7.88, 8.64, 9.42 at m′ = 4 … 128, the
/// continuation from 4 … 32 gives 8.64 and 9.43 at 64 and 128; the third
/// 3.21 … 3.68).
fn totdev_flicker_pm_shares(m: usize, n: usize, mean_m: f64) -> Option<Vec<f64>> {
    let ratio = (n - 1) as f64 / m as f64;
    let per_m = |mm: usize| -> Option<Vec<f64>> {
        let nn = (ratio * mm as f64).round() as usize + 1;
        let lam = spectrum_cached(Estimator::Totdev, 1, mm, nn)?;
        let (mean, _) = flicker_pm_moments(Estimator::Totdev, mm, nn, 1.0)?;
        Some(lam.iter().map(|l| l * mean / mm as f64).collect())
    };
    let ms = [4usize, 8, 16, FPM_TRANSFER_M];
    let u: Vec<Vec<f64>> = ms.iter().map(|&mm| per_m(mm)).collect::<Option<_>>()?;
    let doublings = (m as f64 / FPM_TRANSFER_M as f64).log2().max(0.0);
    let count = SPLIT_MAX_TOP.min(u.iter().map(Vec::len).min()?);
    let shares: Vec<f64> = (0..count)
        .map(|i| {
            continue_per_doubling([u[0][i], u[1][i], u[2][i], u[3][i]], doublings)
                / (mean_m / m as f64)
        })
        .collect();
    shares
        .iter()
        .all(|v| v.is_finite() && *v > 0.0)
        .then_some(shares)
}

/// Continue a sequence u at four successive doublings of m by `k` more
/// doublings (k real ≥ 0), its increments per doubling d_j approaching a
/// limit d∞ geometrically: d_{j+1} − d∞ = r·(d_j − d∞), r from the three
/// increments (clamped to [0, 0.9]; 1/2 where they do not fix it).
fn continue_per_doubling(u: [f64; 4], k: f64) -> f64 {
    let d = [u[1] - u[0], u[2] - u[1], u[3] - u[2]];
    let (e1, e2) = (d[1] - d[0], d[2] - d[1]);
    let r = if e1 != 0.0 && (e2 / e1).is_finite() && e2 / e1 > 0.0 {
        (e2 / e1).min(PM_STEP_RATIO_MAX)
    } else {
        0.5
    };
    let d_inf = d[2] + e2 * r / (1.0 - r);
    // Σ_{j=1..k} (d∞ + (d₂ − d∞)·r^j)
    u[3] + k * d_inf + (d[2] - d_inf) * r * (1.0 - r.powf(k)) / (1.0 - r)
}

/// True for the estimators whose flicker-PM weights beyond the reduced
/// record are carried by the exact means (`flicker_pm_carried_weights`):
/// OADEV, OHDEV and TOTDEV.
fn carries_flicker_pm(est: Estimator) -> bool {
    matches!(est, Estimator::Oadev | Estimator::Ohdev | Estimator::Totdev)
}

/// The exact mean of the form of `est` at factor m on `n` samples for
/// flicker PM, and the EDF the rest is matched to: OADEV and OHDEV both
/// from their terms ([`overlapping_moments`]); TOTDEV the mean
/// (N − 2)·B·E_A from its exact bias factor B
/// ([`crate::stats::totals::totvar_bias`]) and the mean square E_A of an
/// Allan term, the EDF the point's `edf` (exact from the terms while
/// m·N ≤ 2²², a lower bound beyond: [`crate::stats::totals`]).
fn flicker_pm_moments(est: Estimator, m: usize, n: usize, edf: f64) -> Option<(f64, f64)> {
    match est {
        Estimator::Oadev | Estimator::Ohdev => flicker_pm_overlapping_moments(est, m, n),
        Estimator::Totdev => {
            let b = crate::stats::totals::totvar_bias(1, m, n)?;
            let s = |k: usize| gacv::sampled_phase_gacv_at(1, k).unwrap_or(f64::NAN);
            let e_a = crate::stats::quadratic::mean_square(&[(0, 1.0), (m, -2.0), (2 * m, 1.0)], s);
            let mean = (n as f64 - 2.0) * b * e_a;
            (mean > 0.0 && mean.is_finite() && edf > 0.0).then_some((mean, edf))
        }
        _ => None,
    }
}

/// The EDF an OADEV or OHDEV point on flicker PM (α = 1) at factor m on
/// `n` samples reports, at every T/τ: the exact ν = 2E\[Q\]²/Var\[Q\] of
/// the form's terms for the sampled band-limited flicker PM the interval
/// describes ([`overlapping_moments_fast`], equal to
/// [`overlapping_moments`] to rounding). Where the interval is the form's
/// (T/τ ≤ [`FORM_MAX_T_OVER_TAU`]) it is the EDF of the interval's
/// weights: the exact spectrum at m ≤ [`REDUCED_M`] (the same Gaussian
/// moments), the carried one beyond, whose rest is matched to it. Beyond,
/// the interval is χ²_ν with this ν.
///
/// Greenhall & Riley's rule on the discrete Kasdin–Walter kernel
/// ([`fn@crate::stats::edf`]) is 7–9 % higher: at T/τ = 4 … 16 (37.5
/// against 35.0 at m = 1024, N = 4097; seeded Monte Carlo measures 35.5)
/// and beyond (624 / 396 / 241 against 573 / 366 / 225 at m = 32 / 64 / 128,
/// N = 4096, T/τ = 128 / 64 / 32; seeded Monte Carlo 543 at m = 32), where
/// its χ²_ν intervals covered 0.637 at 68.3 % (T/τ = 128, 1000 records).
/// `None` for other estimators or noises. O(min(n, 35·m + 4096)) the first
/// time for each (estimator, m, n), then cached
/// (`flicker_pm_overlapping_moments`, shared with the interval's weights).
pub fn form_edf(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<f64> {
    if alpha != 1 || !matches!(est, Estimator::Oadev | Estimator::Ohdev) || m == 0 {
        return None;
    }
    flicker_pm_overlapping_moments(est, m, n).map(|(_, nu)| nu)
}

/// [`overlapping_moments`] for flicker PM, computed once per
/// (estimator, m, n): the point's EDF ([`form_edf`]) and its interval's
/// weights at each confidence (`flicker_pm_carried_weights`) ask for the
/// same O(n) sum.
fn flicker_pm_overlapping_moments(est: Estimator, m: usize, n: usize) -> Option<(f64, f64)> {
    static CACHE: Cache<(Estimator, usize, usize), (f64, f64)> = OnceLock::new();
    crate::stats::cached(&CACHE, (est, m, n), || {
        overlapping_moments_fast(est, 1, m, n)
    })
}

/// The binomial coefficients c of the OADEV (d = 2) or OHDEV (d = 3)
/// terms and their number T = n − d·m on `n` samples at factor m, for
/// [`overlapping_moments`] and [`overlapping_moments_fast`]; `None` for
/// other estimators, m = 0, α outside 2 … −2 or no term.
fn overlapping_terms(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
) -> Option<(&'static [f64], usize)> {
    let coef: &'static [f64] = match est {
        Estimator::Oadev => &[1.0, -2.0, 1.0],
        Estimator::Ohdev => &[1.0, -3.0, 3.0, -1.0],
        _ => return None,
    };
    let d = coef.len() - 1;
    (m > 0 && n > d * m && (-2..=2).contains(&alpha)).then(|| (coef, n - d * m))
}

/// The exact mean E\[Q\] and EDF ν = 2E\[Q\]²/Var\[Q\] of the OADEV or
/// OHDEV form Q = Σ_i d_i² at factor m on `n` gap-free samples, noise α
/// (2 … −2, the sampled power law of [`gacv`]), from the covariance of its
/// T = n − d·m terms. The differences are stationary, so the covariance
/// of terms k apart is r(k) = Σ_ab c_a c_b s(|k + (b − a)·m|) (c the
/// binomial coefficients of order d = 2 or 3, s the phase GACV), and
/// E\[Q\] = T·r(0), Var\[Q\] = 2·Σ_ij r(i − j)² = 2·(T·r(0)² +
/// 2Σ_{k=1}^{T−1} (T − k)·r(k)²) (Gaussian fourth moments; the definition
/// of the EDF, Greenhall & Riley 2003). O(n·d²). `None` for other
/// estimators, α outside 2 … −2 or fewer than one term.
pub fn overlapping_moments(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<(f64, f64)> {
    let (coef, terms) = overlapping_terms(est, alpha, m, n)?;
    let s = |lag: usize| gacv::sampled_phase_gacv_at(alpha, lag);
    let r = |k: usize| -> Option<f64> {
        let mut v = 0.0;
        for (a, ca) in coef.iter().enumerate() {
            for (b, cb) in coef.iter().enumerate() {
                let lag = (k + b * m).abs_diff(a * m);
                v += ca * cb * s(lag)?;
            }
        }
        Some(v)
    };
    let r0 = r(0)?;
    let t = terms as f64;
    let mut sq = t * r0 * r0;
    for k in 1..terms {
        let rk = r(k)?;
        sq += 2.0 * (t - k as f64) * rk * rk;
    }
    let mean = t * r0;
    (mean > 0.0 && sq > 0.0 && mean.is_finite()).then(|| (mean, mean * mean / sq))
}

/// Beyond the lag (d + [`MOMENT_TAIL_STEPS`])·m + [`MOMENT_TAIL_FLOOR`]
/// [`overlapping_moments_fast`] leaves out the terms' covariance.
pub const MOMENT_TAIL_STEPS: usize = 32;

/// See [`MOMENT_TAIL_STEPS`].
pub const MOMENT_TAIL_FLOOR: usize = 4096;

/// [`overlapping_moments`] with the covariance sum Σ (T − k)·r(k)² taken
/// up to the lag K = (d + [`MOMENT_TAIL_STEPS`])·m + [`MOMENT_TAIL_FLOOR`]
/// (all of it when the record has no more terms), each r(k) from the
/// 2d + 1 lags of the autocorrelation w_j = Σ_{b−a=j} c_a c_b of the
/// coefficients, the sum in fixed chunks over the threads (the same
/// result on any number of them). O(min(n, K)·d).
///
/// What is left out (analytic): beyond d·m the terms do not overlap and
/// r(k) is the 2d-th difference at step m of the phase GACV s. For white
/// PM, white FM and random-walk FM r(k) = 0 there (the sum is exact). For
/// flicker PM s(k) = −(γ + ln πk − Ci(πk))/π: its smooth part gives
/// r(k) ≈ (2d − 1)!·m^{2d}/(π·k^{2d}) and the oscillating part of Ci (for
/// odd m) |r(k)| ≈ 4^d/(π³k²), so the tail left out is below
/// (m/K)^{4d−1} + 10⁻¹² of the sum; for flicker FM r(k) ~ m²/k² and the
/// tail is below (m/K)³ ≈ 3·10⁻⁵. Tested against [`overlapping_moments`]
/// (tests/edf.rs).
pub fn overlapping_moments_fast(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
) -> Option<(f64, f64)> {
    use rayon::prelude::*;
    let (coef, terms) = overlapping_terms(est, alpha, m, n)?;
    let d = coef.len() - 1;
    // w_j for j = −d … d (index j + d), symmetric.
    let w: Vec<f64> = (0..=2 * d)
        .map(|jj| {
            let j = jj as isize - d as isize;
            (0..=d)
                .filter_map(|a| {
                    let b = a as isize + j;
                    (0..=d as isize)
                        .contains(&b)
                        .then(|| coef[a] * coef[b as usize])
                })
                .sum()
        })
        .collect();
    let s = |lag: usize| gacv::sampled_phase_gacv_at(alpha, lag);
    let r = |k: usize| -> Option<f64> {
        let mut v = 0.0;
        for (jj, wj) in w.iter().enumerate() {
            let lag = (k + jj * m).abs_diff(d * m);
            v += wj * s(lag)?;
        }
        Some(v)
    };
    let r0 = r(0)?;
    let t = terms as f64;
    let last = terms
        .saturating_sub(1)
        .min((d + MOMENT_TAIL_STEPS) * m + MOMENT_TAIL_FLOOR);
    const CHUNK: usize = 1 << 16;
    let parts: Vec<Option<f64>> = (0..last.div_ceil(CHUNK))
        .into_par_iter()
        .map(|c| {
            let mut acc = 0.0;
            for k in (1 + c * CHUNK)..=((c + 1) * CHUNK).min(last) {
                let rk = r(k)?;
                acc += (t - k as f64) * rk * rk;
            }
            Some(acc)
        })
        .collect();
    let mut sq = t * r0 * r0;
    for p in parts {
        sq += 2.0 * p?;
    }
    let mean = t * r0;
    (mean > 0.0 && sq > 0.0 && mean.is_finite()).then(|| (mean, mean * mean / sq))
}

/// Eigenvalues below this fraction of the largest are lumped into one gamma
/// term by [`lumped`].
pub const LUMP_BELOW: f64 = 0.02;

/// The weights (λ, 1) of a spectrum (largest first), with those below
/// `below`·λ_max replaced by one gamma term g·χ²_h of the same mean and
/// variance (g = Σλ²/Σλ, h = (Σλ)²/Σλ² over the lumped ones): a sum of
/// many small terms is close to its two-moment gamma, and Imhof's integral
/// then converges in a few hundred panels instead of 10⁵ (a few dominant
/// weights among many small ones is its slow case). `tests/edf.rs`
/// measures the change in the quantiles (below 0.5 %).
pub fn lumped(lam: &[f64], below: f64) -> Vec<(f64, f64)> {
    let top = lam.first().copied().unwrap_or(0.0);
    let mut w: Vec<(f64, f64)> = Vec::new();
    let (mut s1, mut s2) = (0.0, 0.0);
    for &l in lam {
        if l >= below * top {
            w.push((l, 1.0));
        } else {
            s1 += l;
            s2 += l * l;
        }
    }
    if s1 > 0.0 && s2 > 0.0 {
        w.push((s2 / s1, s1 * s1 / s2));
    }
    w
}

/// The largest per-doubling step ratio q the split spectrum continues a
/// flicker-PM share with ([`pivot_weights`]).
pub const PM_STEP_RATIO_MAX: f64 = 0.9;

/// For flicker PM the split spectrum of MDEV, TDEV and the modified totals
/// keeps at most this many leading eigenvalues, continued as shares; OADEV,
/// OHDEV and TOTDEV keep at least this many, carried per unit m
/// (`flicker_pm_carried_weights`). Continued as shares, further
/// eigenvalues (whose shares fall like 1/ln m) took all the variance the
/// exact EDF leaves.
pub const FPM_SPLIT_TOP: usize = 2;

/// At most this many leading eigenvalues are kept apart in the split
/// spectrum of [`pivot_weights`].
pub const SPLIT_MAX_TOP: usize = 8;

/// [`spectrum_exact`] remembered per (estimator, α, m′, n′).
fn spectrum_cached(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<Vec<f64>> {
    type SpecKey = (Estimator, i32, usize, usize);
    static SPECTRA: OnceLock<
        std::sync::Mutex<std::collections::HashMap<SpecKey, Option<Vec<f64>>>>,
    > = OnceLock::new();
    let map = SPECTRA.get_or_init(Default::default);
    if let Some(v) = map
        .lock()
        .ok()
        .and_then(|c| c.get(&(est, alpha, m, n)).cloned())
    {
        return v;
    }
    let v = spectrum_exact(est, alpha, m, n);
    if let Ok(mut c) = map.lock() {
        c.insert((est, alpha, m, n), v.clone());
    }
    v
}

/// From this two-sided confidence level on, [`interval_for`] keeps the union
/// of the quadratic-form and the χ²_ν interval (see there why).
pub const GUARD_CONFIDENCE: f64 = 0.9;

/// The two-sided interval (σ_lo, σ_hi) on the deviation `dev` of `est` at
/// factor m (from `n` gap-free-equivalent samples) for noise α with `edf`
/// degrees of freedom, and the method used: the quadratic form's own
/// distribution where [`pivot_quantiles`] gives one, χ²_ν otherwise.
///
/// At confidence levels of 90 % and above — the levels decisions are taken
/// at — the interval is the union of the two: seeded Monte Carlo at
/// N = 4096 (300 records per noise type) put the form's 95 % coverage at
/// 0.91–0.93 in a few cells at T/τ = 4 (MDEV/TDEV WFM, OHDEV and HTOT FFM)
/// where χ²_ν gave 0.958–0.964, so there the wider χ² bound is kept rather
/// than risk an interval that is too narrow ([`GUARD_CONFIDENCE`]).
///
/// Errors as [`crate::stats::interval()`].
pub fn interval_for(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    dev: f64,
    edf: f64,
    confidence: f64,
) -> crate::Result<(f64, f64, IntervalMethod)> {
    interval_for_rule(est, alpha, m, n, dev, edf, confidence, true)
}

/// [`interval_for`] with the guard (the union with χ²_ν at
/// [`GUARD_CONFIDENCE`] and above) on or off: off, the form's own interval
/// at every confidence — how the coverage sweep measures what the guard
/// adds (`examples/coverage.rs --no-guard`). The commands use
/// [`interval_for`].
#[allow(clippy::too_many_arguments)]
pub fn interval_for_rule(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    dev: f64,
    edf: f64,
    confidence: f64,
    guard: bool,
) -> crate::Result<(f64, f64, IntervalMethod)> {
    let pivot = pivot_quantiles(est, alpha, m, n, edf, confidence);
    pivot_interval(
        dev,
        edf,
        confidence,
        pivot,
        IntervalMethod::QuadraticForm,
        guard,
    )
}

/// The pivot interval σ² ∈ \[σ̂²/q_hi, σ̂²/q_lo\] from `pivot` (reported as
/// `method`), united with the χ²_ν interval when `guard` is on and the
/// confidence is at least [`GUARD_CONFIDENCE`] (then [`IntervalMethod::Union`]);
/// the χ²_ν interval when there is no pivot.
fn pivot_interval(
    dev: f64,
    edf: f64,
    confidence: f64,
    pivot: Option<(f64, f64)>,
    method: IntervalMethod,
    guard: bool,
) -> crate::Result<(f64, f64, IntervalMethod)> {
    let (lo, hi) = crate::stats::interval(dev, edf, confidence)?;
    Ok(match pivot {
        Some((q_lo, q_hi)) if guard && confidence >= GUARD_CONFIDENCE => (
            (dev / q_hi.sqrt()).min(lo),
            (dev / q_lo.sqrt()).max(hi),
            IntervalMethod::Union,
        ),
        Some((q_lo, q_hi)) => (dev / q_hi.sqrt(), dev / q_lo.sqrt(), method),
        None => (lo, hi, IntervalMethod::Chi2),
    })
}

/// The phase GACV table (lags 0 … n − 1) the spectra use: the sampled power
/// law α of IEEE Std 1139 with f_h = 1/(2τ0) ([`gacv`]).
pub fn phase_gacv(alpha: i32, n: usize) -> Vec<f64> {
    gacv::sampled_phase_gacv(alpha, n.saturating_sub(1))
}

/// Weights (λ_i, h_i) of a sum Σλ_iχ²_{h_i}.
pub type Weights = Vec<(f64, f64)>;

/// TheoH's ThêoBR part as a product: TheoH² = R̂·Theo1²(τ), R̂ the record's
/// ThêoBR ratio ([`crate::stats::theo`]). The pivot TheoH²/E\[TheoH²\] is
/// taken as P = Q·R with
///
/// - Q = Theo1²/E\[Theo1²\] with Theo1's own distribution at τ: the weights
///   of its quadratic form ([`pivot_weights`]), or χ²_ν/ν with Theo1's EDF
///   ν where the form gives none;
/// - R an independent gamma factor with mean 1 and relative variance
///   V_R = Δ/(1 + V_Q), Δ the excess relative variance the ratio adds
///   ([`crate::stats::theo::theoh_excess`], seeded Monte Carlo), V_Q = 2Σh_iλ_i²
///   that of Q; i.e. R = χ²_k/k with k = 2/V_R.
///
/// The product then has exactly the relative variance the calibration
/// measured for TheoH², (1 + V_Q)(1 + V_R) − 1 = V_Q + Δ (the correlation
/// of R̂ with Theo1(τ) is inside Δ), so its EDF is the
/// [`crate::stats::theo::theoh_edf`] reported, while its shape is Theo1's
/// — whose χ² interval errs wide at the last octaves for the same reason as
/// every other estimator's (few unequal eigenvalues; module notes).
///
/// Returns the weights of Q and k (`None` for k: no excess, P = Q).
pub fn theoh_factors(alpha: i32, m: usize, n: usize) -> Option<(Weights, Option<f64>)> {
    let nu_t1 = crate::stats::theo::theo1_edf(alpha, n, m)?;
    let q = pivot_weights(Estimator::Theo1, alpha, m, n, nu_t1)
        .filter(|w| !w.is_empty())
        .unwrap_or_else(|| vec![(1.0 / nu_t1, nu_t1)]);
    let v_q: f64 = q.iter().map(|(l, h)| 2.0 * h * l * l).sum();
    let delta = crate::stats::theo::theoh_excess(alpha, n, m)?;
    let v_r = delta / (1.0 + v_q);
    let k = (v_r > 1e-9).then(|| 2.0 / v_r);
    Some((q, k))
}

/// The nodes (s_j, w_j) of E\[g(ln R)\] for R = χ²_k/k: the trapezoid rule
/// on the density of S = ln R, f_S(s) = a^a·exp(a·s − a·eˢ)/Γ(a), a = k/2,
/// with step `per_sigma`⁻¹·σ (σ = a^{−½}, the spread of S for large a), out
/// to where the density is below 1e−13 of its peak at s = 0; weights
/// normalised to sum 1. The density is analytic and decays at least
/// exponentially on both sides, so the trapezoid rule converges
/// geometrically in the step (for a normal density the error is about
/// 2·exp(−2π²/h²), h the step in σ: 5e−9 at h = 1; `tests/edf.rs`
/// compares steps of σ/2 and σ/8).
pub fn log_gamma_nodes(k: f64, per_sigma: f64) -> Vec<(f64, f64)> {
    let a = 0.5 * k;
    let log_f = |s: f64| a * s - a * s.exp() + a; // relative to the peak at 0
    let step = a.powf(-0.5) / per_sigma;
    let mut nodes = vec![(0.0, 1.0)];
    for dir in [-1.0, 1.0] {
        let mut j = 1.0;
        loop {
            let s = dir * j * step;
            let w = log_f(s).exp();
            if !(w > 1e-13) || j > 10_000.0 {
                break;
            }
            nodes.push((s, w));
            j += 1.0;
        }
    }
    let total: f64 = nodes.iter().map(|n| n.1).sum();
    nodes.iter().map(|&(s, w)| (s, w / total)).collect()
}

/// Trapezoid steps per σ of ln R in [`theoh_pivot_quantiles`] before
/// [`product_quantiles`] took its place (kept for the comparisons of
/// `tests/edf.rs`).
pub const PRODUCT_NODES_PER_SIGMA: f64 = 1.5;

/// P(Q·R ≤ x) for Q = Σλ_iχ²_{h_i} (`q`) and R = χ²_k/k independent
/// (`nodes` from [`log_gamma_nodes`]): Σ_j w_j·F_Q(x·e^{−s_j}).
pub fn product_cdf(q: &[(f64, f64)], nodes: &[(f64, f64)], x: f64) -> f64 {
    nodes
        .iter()
        .map(|&(s, w)| w * weighted_chi2::cdf_with(q, x * (-s).exp()))
        .sum()
}

/// The p-quantile of Q·R ([`product_cdf`] on `nodes`, made for R = χ²_k/k):
/// the secant method in ln x, first on a coarse node set
/// ([`log_gamma_nodes`] at one node per 0.75 σ, within about 1e−3) from
/// the gamma with the product's two moments, then on `nodes` from there,
/// to about 1e−6 relative.
pub fn product_quantile(q: &[(f64, f64)], k: f64, nodes: &[(f64, f64)], p: f64) -> Option<f64> {
    let mean_q: f64 = q.iter().map(|(l, h)| l * h).sum();
    let v_q: f64 = q.iter().map(|(l, h)| 2.0 * h * l * l).sum::<f64>() / (mean_q * mean_q);
    let v = (1.0 + v_q) * (1.0 + 2.0 / k) - 1.0;
    let nu = 2.0 / v;
    let guess = mean_q / nu * crate::stats::interval::chi2_quantile(p, nu).ok()?;
    if !(guess.is_finite() && guess > 0.0) {
        return None;
    }
    let coarse = log_gamma_nodes(k, 0.75);
    let t = secant_in_log(
        |t| product_cdf(q, &coarse, t.exp()) - p,
        guess.ln(),
        0.05,
        1e-4,
    )?;
    let t = secant_in_log(|t| product_cdf(q, nodes, t.exp()) - p, t, 1e-3, 1e-6)?;
    let x = t.exp();
    (x.is_finite() && x > 0.0).then_some(x)
}

/// The root of the increasing function `f` by the secant method from
/// `start` and `start + step`, each step at most 1 and kept inside the
/// bracket found so far (bisection when a step leaves it, steps of ½
/// outward while one side is open), until a step is below `tol` or |f| below 2e−8 (the CDFs here are
/// accurate to about 1e−7, Imhof's tail bound).
fn secant_in_log(f: impl Fn(f64) -> f64, start: f64, step: f64, tol: f64) -> Option<f64> {
    let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
    let (mut t0, mut t1) = (start, start + step);
    let (mut f0, mut f1) = (f(t0), f(t1));
    for (t, ft) in [(t0, f0), (t1, f1)] {
        if ft < 0.0 {
            lo = lo.max(t);
        } else {
            hi = hi.min(t);
        }
    }
    for _ in 0..200 {
        if f1.abs() < 2e-8 {
            break;
        }
        // A secant step through a flat tail can be huge: at most 1 in ln x.
        let mut t2 = if f1 != f0 {
            (t1 - f1 * (t1 - t0) / (f1 - f0)).clamp(t1 - 1.0, t1 + 1.0)
        } else {
            f64::NAN
        };
        if !(t2 > lo && t2 < hi) {
            t2 = match (lo.is_finite(), hi.is_finite()) {
                (true, true) => 0.5 * (lo + hi),
                (true, false) => lo + 0.5,
                (false, true) => hi - 0.5,
                _ => return None,
            };
        }
        let f2 = f(t2);
        if f2 < 0.0 {
            lo = lo.max(t2);
        } else {
            hi = hi.min(t2);
        }
        (t0, f0, t1, f1) = (t1, f1, t2, f2);
        if (t1 - t0).abs() < tol || (hi - lo) < tol {
            break;
        }
    }
    t1.is_finite().then_some(t1)
}

/// The product P = Q·R of [`product_cdf`] prepared for fast quantiles, the
/// outer integral taken over Q instead of R:
///
/// P(Q·R ≤ x) = E_Q\[F_R(x/Q)\] = ∫ F_R(x / F_Q⁻¹(Φ(z))) φ(z) dz,
///
/// F_R(r) = P(k/2, k·r/2) the regularised incomplete gamma function (R =
/// χ²_k/k, closed form), Φ and φ the standard normal CDF and density. The
/// integral is the trapezoid rule in z on \[−[`PRODUCT_Z_MAX`], +[`PRODUCT_Z_MAX`]\]
/// (weights h·φ(z_i) normalised to sum 1): Q's quantiles q_i = F_Q⁻¹(Φ(z_i))
/// are found once per point ([`weighted_chi2::quantile_with`], which keeps
/// Q's prepared CDF between calls), after which every value of the product
/// CDF, and its density in ln x,
/// dP/d ln x = Σ w_i·r_i f_R(r_i), r f_R(r) = exp(a ln(a r) − a r − ln Γ(a)),
/// a = k/2, r_i = x/q_i, costs a few hundred gamma functions. The quantile
/// is then a safeguarded Newton iteration in ln x (bisection when a step
/// leaves the bracket), to 1e−12 in ln x.
///
/// Error bounds: (1) each q_i is Q's exact quantile of a probability within
/// 1e−8 of Φ(z_i) (the stopping rule of `quantile_with`), which moves the
/// integral by at most 1e−8 × the total variation of F_R(x/q) in z (≤ 1):
/// |ΔP| ≤ 1e−8; (2) the trapezoid rule converges geometrically in the step
/// for this analytic integrand, and the step is halved (the new grid keeps
/// the old nodes) until the quantiles agree with those of twice the step
/// within 1e−7 ([`product_quantiles`]); (3) the tails beyond |z| = 6.5 hold
/// 8e−11. A quantile error in ln x is |ΔP| over the density in ln x (about
/// 0.06/σ at the 2.5 % point, σ the spread of ln P), so ≈ 2e−7·σ relative.
/// `tests/edf.rs` measures it against [`product_quantile`] (the outer
/// integral over R, the direct form of the definition) on fine nodes.
#[derive(Debug, Clone)]
pub struct ProductTable {
    a: f64,
    ln_gamma_a: f64,
    /// (q_i, w_i) of the current grid.
    nodes: Vec<(f64, f64)>,
    /// Q's weights and the current trapezoid step in z.
    q: Weights,
    step: f64,
}

/// The trapezoid rule of [`ProductTable`] runs over |z| ≤ this.
pub const PRODUCT_Z_MAX: f64 = 6.5;

/// The first and the finest z step [`product_quantiles`] uses.
pub const PRODUCT_Z_STEP: (f64, f64) = (0.5, 1.0 / 32.0);

/// The nodes (q_i, φ(z_i)) from the quantiles found at each z_i (z
/// ascending, z = 0 in the middle), made non-decreasing outward from the
/// middle: a node of the far tails whose search failed (Imhof's CDF, used
/// for many unequal weights, is accurate to 1e−7 absolute and cannot place
/// a quantile at p = Φ(−6.5) ≈ 4e−11) or came out of order takes its inner
/// neighbour's q. Such a node's integrand F_R(x/q) errs by at most its
/// weight φ(z_i)·h/Σ, and only where F_R(x/q) has not yet reached its
/// limit 1 (lower tail) or 0 (upper tail) at the neighbour's q — far from
/// the quantiles asked for, so the effect is far below that weight
/// (`tests/edf.rs` compares the quantiles with the direct integral).
/// `None` when the middle has no quantile.
fn settle(found: &[(f64, Option<f64>)]) -> Option<Vec<(f64, f64)>> {
    let mid = found.len() / 2;
    let centre = found.get(mid)?.1?;
    let mut q = vec![centre; found.len()];
    for i in (0..mid).rev() {
        q[i] = found[i].1.map_or(q[i + 1], |v| v.min(q[i + 1]));
    }
    for i in mid + 1..found.len() {
        q[i] = found[i].1.map_or(q[i - 1], |v| v.max(q[i - 1]));
    }
    Some(
        found
            .iter()
            .zip(q)
            .map(|(&(z, _), qv)| (qv, (-0.5 * z * z).exp()))
            .collect(),
    )
}

fn normal_cdf(z: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(-z / std::f64::consts::SQRT_2)
}

impl ProductTable {
    /// The table for Q = Σλ_iχ²_{h_i} (`q`) and R = χ²_k/k at z step `step`;
    /// `None` when a quantile of Q cannot be found or k is not positive.
    pub fn new(q: &[(f64, f64)], k: f64, step: f64) -> Option<Self> {
        if !(k > 0.0 && k.is_finite() && step > 0.0) {
            return None;
        }
        let a = 0.5 * k;
        let mut t = Self {
            a,
            ln_gamma_a: statrs::function::gamma::ln_gamma(a),
            nodes: Vec::new(),
            q: q.to_vec(),
            step,
        };
        let count = (PRODUCT_Z_MAX / step).round() as i64;
        let found: Vec<(f64, Option<f64>)> = (-count..=count)
            .map(|i| {
                let z = i as f64 * step;
                (z, t.search(z))
            })
            .collect();
        t.nodes = settle(&found)?;
        t.normalise();
        Some(t)
    }

    /// Q's quantile at Φ(z), if the search finds one.
    fn search(&self, z: f64) -> Option<f64> {
        let qz = weighted_chi2::quantile_with(&self.q, normal_cdf(z)).ok()?;
        (qz > 0.0 && qz.is_finite()).then_some(qz)
    }

    fn normalise(&mut self) {
        let total: f64 = self.nodes.iter().map(|n| n.1).sum();
        for n in &mut self.nodes {
            n.1 /= total;
        }
    }

    /// The same table at half the z step (the old nodes kept, the midpoints
    /// added).
    pub fn halved(&self) -> Option<Self> {
        let step = 0.5 * self.step;
        let count = (PRODUCT_Z_MAX / step).round() as i64;
        let found: Vec<(f64, Option<f64>)> = (-count..=count)
            .map(|i| {
                let z = i as f64 * step;
                // The even nodes are the old ones (the same z): their q is
                // kept, only the midpoints are searched for.
                let old = (i % 2 == 0)
                    .then(|| self.nodes.get(((i + count) / 2) as usize))
                    .flatten();
                (z, old.map(|n| n.0).or_else(|| self.search(z)))
            })
            .collect();
        let nodes = settle(&found)?;
        let mut t = Self {
            nodes,
            step,
            ..self.clone()
        };
        t.normalise();
        Some(t)
    }

    /// The same table at twice the z step (every other node, no search).
    pub fn coarsened(&self) -> Self {
        let mut t = Self {
            nodes: self.nodes.iter().copied().step_by(2).collect(),
            step: 2.0 * self.step,
            ..self.clone()
        };
        t.normalise();
        t
    }

    /// The z step of the table.
    pub fn step(&self) -> f64 {
        self.step
    }

    /// P(Q·R ≤ x).
    pub fn cdf(&self, x: f64) -> f64 {
        self.cdf_and_density(x.ln()).0
    }

    /// P(Q·R ≤ eᵗ) and its derivative in t.
    fn cdf_and_density(&self, t: f64) -> (f64, f64) {
        let (mut p, mut d) = (0.0, 0.0);
        for &(qv, w) in &self.nodes {
            let ar = self.a * (t - qv.ln()).exp();
            let (f, g) = if !(ar > 0.0) {
                (0.0, 0.0)
            } else if !ar.is_finite() {
                (1.0, 0.0)
            } else {
                (
                    statrs::function::gamma::checked_gamma_lr(self.a, ar).unwrap_or(f64::NAN),
                    (self.a * ar.ln() - ar - self.ln_gamma_a).exp(),
                )
            };
            p += w * f;
            d += w * g;
        }
        (p.clamp(0.0, 1.0), d)
    }

    /// The p-quantile of Q·R: safeguarded Newton in ln x from the gamma
    /// with the product's two moments, to 1e−12 in ln x.
    pub fn quantile(&self, p: f64) -> Option<f64> {
        if !(p > 0.0 && p < 1.0) {
            return None;
        }
        let mean_q: f64 = self.q.iter().map(|(l, h)| l * h).sum();
        let v_q: f64 = self.q.iter().map(|(l, h)| 2.0 * h * l * l).sum::<f64>() / (mean_q * mean_q);
        let v = (1.0 + v_q) * (1.0 + 1.0 / self.a) - 1.0;
        let nu = 2.0 / v;
        let guess = mean_q / nu * crate::stats::interval::chi2_quantile(p, nu).ok()?;
        if !(guess.is_finite() && guess > 0.0) {
            return None;
        }
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        let mut t = guess.ln();
        for _ in 0..200 {
            let (f, d) = self.cdf_and_density(t);
            let f = f - p;
            if !f.is_finite() {
                return None;
            }
            if f < 0.0 {
                lo = t;
            } else {
                hi = t;
            }
            if f == 0.0 {
                break;
            }
            let newton = t - f / d;
            let next = if d > 0.0 && newton > lo && newton < hi && (newton - t).abs() <= 1.0 {
                newton
            } else {
                match (lo.is_finite(), hi.is_finite()) {
                    (true, true) => 0.5 * (lo + hi),
                    (true, false) => lo + 0.5,
                    (false, true) => hi - 0.5,
                    _ => return None,
                }
            };
            let done = (next - t).abs() < 1e-12 || hi - lo < 1e-12;
            t = next;
            if done {
                break;
            }
        }
        let x = t.exp();
        (x.is_finite() && x > 0.0).then_some(x)
    }
}

/// The `probs` quantiles of Q·R (Q = Σλ_iχ²_{h_i} from `q`, R = χ²_k/k
/// independent). Where Q's CDF is not a long prepared series
/// ([`prepared_cdf_pays`]), by [`product_quantile`] on nodes
/// [`PRODUCT_DIRECT_NODES_PER_SIGMA`] per σ; otherwise by [`ProductTable`]: the table at z step
/// [`PRODUCT_Z_STEP`].0, checked against the table of every other node
/// (twice the step, no new searches): where the quantiles of the two agree
/// within [`PRODUCT_QUANTILE_AGREE`] relative, those of the finer one are
/// returned (the trapezoid rule converges geometrically in the step, so the
/// finer one's error is far below the difference); otherwise the step is
/// halved (the old nodes kept) and checked again. Where that would take a
/// step below [`PRODUCT_Z_STEP`].1 (R far sharper than Q, so that
/// F_R(x/q(z)) turns from 1 to 0 within a small part of a unit of z),
/// [`product_quantile`]'s outer integral over R, accurate in that case,
/// answers instead.
pub fn product_quantiles(q: &[(f64, f64)], k: f64, probs: &[f64]) -> Option<Vec<f64>> {
    if !prepared_cdf_pays(q) {
        let nodes = log_gamma_nodes(k, PRODUCT_DIRECT_NODES_PER_SIGMA);
        return probs
            .iter()
            .map(|&p| product_quantile(q, k, &nodes, p))
            .collect();
    }
    let quantiles =
        |t: &ProductTable| -> Option<Vec<f64>> { probs.iter().map(|&p| t.quantile(p)).collect() };
    let mut table = ProductTable::new(q, k, PRODUCT_Z_STEP.0)?;
    let mut coarse = quantiles(&table.coarsened())?;
    loop {
        let fine = quantiles(&table)?;
        let agree = fine
            .iter()
            .zip(&coarse)
            .all(|(f, c)| (f / c - 1.0).abs() < PRODUCT_QUANTILE_AGREE);
        if agree {
            return Some(fine);
        }
        if 0.5 * table.step() < PRODUCT_Z_STEP.1 {
            let nodes = log_gamma_nodes(k, PRODUCT_DIRECT_NODES_PER_SIGMA);
            return probs
                .iter()
                .map(|&p| product_quantile(q, k, &nodes, p))
                .collect();
        }
        table = table.halved()?;
        coarse = fine;
    }
}

/// Trapezoid steps per σ of ln R where [`product_quantiles`] takes the
/// outer integral over R: 3 (1.5, used before, was 8e−7 from 4 per σ in
/// the quantiles of `tests/edf.rs`; the rule's error falls as
/// exp(−c·steps per σ)).
pub const PRODUCT_DIRECT_NODES_PER_SIGMA: f64 = 3.0;

/// True when Q's CDF is Ruben's series with at least
/// [`PREPARED_MIN_TERMS`] terms — the choice [`weighted_chi2`] makes (the
/// number of terms for a remainder below 1e−10 is
/// ln(1e−10)/ln(1 − λ_min/λ_max), Ruben's series up to
/// [`weighted_chi2::RUBEN_MAX_TERMS`], Talbot's contour beyond). Then
/// preparing its coefficients costs far more than a value, and the outer
/// integral over Q ([`ProductTable`]: one prepared CDF for a few hundred
/// values) is the cheap route; otherwise (the contour, or a short
/// series), where every value costs the same, the outer integral over R
/// ([`product_quantile`]) asks for fewer values. Both compute the same
/// integral; the choice only changes the time (`tests/edf.rs` holds both
/// within 1e−6 of the direct integral on fine nodes).
pub fn prepared_cdf_pays(q: &[(f64, f64)]) -> bool {
    let (lo, hi) = q
        .iter()
        .filter(|(l, h)| l.is_finite() && *l > 0.0 && h.is_finite() && *h > 0.0)
        .fold((f64::INFINITY, 0.0f64), |(a, b), &(l, _)| {
            (a.min(l), b.max(l))
        });
    let gamma = 1.0 - lo / hi;
    if !(gamma > 0.0 && gamma < 1.0) {
        return false;
    }
    let terms = (1e-10f64).ln() / gamma.ln();
    (PREPARED_MIN_TERMS as f64..=weighted_chi2::RUBEN_MAX_TERMS as f64).contains(&terms)
}

/// The shortest Ruben series for which [`product_quantiles`] takes the
/// outer integral over Q ([`prepared_cdf_pays`]).
pub const PREPARED_MIN_TERMS: usize = 100;

/// [`product_quantiles`] accepts a table whose quantiles agree with those
/// of twice its z step within this (relative).
pub const PRODUCT_QUANTILE_AGREE: f64 = 1e-7;

/// The pivot quantiles (q_lo, q_hi) of TheoH²/E\[TheoH²\] at its ThêoBR
/// part (Theo1 factor m, `n` samples, noise α, two-sided `confidence`):
/// the product distribution of [`theoh_factors`], remembered per
/// (α, m, n, confidence). `None` where Theo1 or the excess has no rule
/// for α.
pub fn theoh_pivot_quantiles(
    alpha: i32,
    m: usize,
    n: usize,
    confidence: f64,
) -> Option<(f64, f64)> {
    static CACHE: Cache<(i32, usize, usize, u64), (f64, f64)> = OnceLock::new();
    if !(confidence > 0.0 && confidence < 1.0) {
        return None;
    }
    crate::stats::cached(&CACHE, (alpha, m, n, confidence.to_bits()), || {
        let (q, k) = theoh_factors(alpha, m, n)?;
        let (p_lo, p_hi) = (0.5 * (1.0 - confidence), 0.5 * (1.0 + confidence));
        let (lo, hi) = match k {
            Some(k) => {
                let x = product_quantiles(&q, k, &[p_lo, p_hi])?;
                (x[0], x[1])
            }
            None => (
                weighted_chi2::quantile_with(&q, p_lo).ok()?,
                weighted_chi2::quantile_with(&q, p_hi).ok()?,
            ),
        };
        (lo > 0.0 && hi > lo && hi.is_finite()).then_some((lo, hi))
    })
}

/// The two-sided interval (σ_lo, σ_hi) on TheoH's deviation `dev` at its
/// ThêoBR part (Theo1 factor m, `n` samples, noise α, EDF `edf` — that of
/// [`crate::stats::theo::theoh_edf`]) and the method used: the pivot
/// interval σ² ∈ \[σ̂²/q_hi, σ̂²/q_lo\] of the product distribution
/// ([`theoh_pivot_quantiles`]), with the union with the χ²_ν interval at
/// [`GUARD_CONFIDENCE`] and above as for every other estimator
/// ([`interval_for`]); χ²_ν where the product has no rule.
///
/// Errors as [`crate::stats::interval()`].
pub fn theoh_interval(
    alpha: i32,
    m: usize,
    n: usize,
    dev: f64,
    edf: f64,
    confidence: f64,
) -> crate::Result<(f64, f64, IntervalMethod)> {
    theoh_interval_rule(alpha, m, n, dev, edf, confidence, true)
}

/// [`theoh_interval`] with the guard on or off (as [`interval_for_rule`]).
pub fn theoh_interval_rule(
    alpha: i32,
    m: usize,
    n: usize,
    dev: f64,
    edf: f64,
    confidence: f64,
    guard: bool,
) -> crate::Result<(f64, f64, IntervalMethod)> {
    let pivot = theoh_pivot_quantiles(alpha, m, n, confidence);
    pivot_interval(
        dev,
        edf,
        confidence,
        pivot,
        IntervalMethod::FormTimesRatio,
        guard,
    )
}
