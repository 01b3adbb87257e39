//! Confidence intervals from the exact distribution of the estimate's
//! quadratic form, where a χ² shape does not describe it.
//!
//! A variance estimate is a quadratic form in the phase samples, so for
//! Gaussian noise σ̂²/E\[σ̂²\] = Σ λ_i χ²₁,i / Σ λ_i exactly, λ_i the
//! eigenvalues of A·S ([`QuadraticForm::eigenvalues`]). The χ²_ν interval
//! of [`crate::stats::interval`] with the right EDF ν = (Σλ)²/Σλ² matches
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
//! interleaved chains, the EDF grows ∝ m), so the reduced record is used
//! only where it is the record itself (m ≤ [`REDUCED_M`]).
//! `tests/edf.rs` measures the reduced spectra's quantiles against those of
//! m′ = 32.
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
/// The form's distribution is used at T/τ up to this; χ²_ν beyond.
pub const FORM_MAX_T_OVER_TAU: f64 = 16.0;

/// How a point's confidence interval was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
pub enum IntervalMethod {
    /// ν·σ̂²/σ² ~ χ²_ν with the point's EDF ([`crate::stats::interval`]).
    #[serde(rename = "chi2")]
    Chi2,
    /// The exact distribution Σλχ²₁/Σλ of the estimate's quadratic form
    /// (this module).
    #[serde(rename = "quadratic-form")]
    QuadraticForm,
}

impl IntervalMethod {
    /// The JSON name: `chi2` or `quadratic-form`.
    pub fn name(self) -> &'static str {
        match self {
            IntervalMethod::Chi2 => "chi2",
            IntervalMethod::QuadraticForm => "quadratic-form",
        }
    }
}

/// The reduced problem standing for estimator `est` at factor m on `n`
/// gap-free samples: (m′, n′), or `None` where no reduced record stands for
/// it (PM noise beyond m′) or the estimator has no form here.
fn reduced(est: Estimator, alpha: i32, m: usize, n: usize) -> Option<(usize, usize)> {
    if m == 0 || n < 2 || !has_form(est) {
        return None;
    }
    let mut mr = m.min(REDUCED_M);
    if alpha > 0 && mr != m {
        return None;
    }
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

type Key = (Estimator, i32, usize, usize, u64);

/// The pivot quantiles (q_lo, q_hi) of σ̂²/E\[σ̂²\] for `est` at factor m
/// on `n` gap-free samples, noise α, two-sided `confidence`: computed on
/// the reduced record (module notes) and remembered. `None` where the form
/// is not used (T/τ > [`FORM_MAX_T_OVER_TAU`], no reduced record, no form).
pub fn pivot_quantiles(
    est: Estimator,
    alpha: i32,
    m: usize,
    n: usize,
    confidence: f64,
) -> Option<(f64, f64)> {
    static CACHE: Cache<Key, (f64, f64)> = OnceLock::new();
    if !(confidence > 0.0 && confidence < 1.0) || t_over_tau(est, m, n) > FORM_MAX_T_OVER_TAU {
        return None;
    }
    let (mr, nr) = reduced(est, alpha, m, n)?;
    crate::stats::cached(&CACHE, (est, alpha, mr, nr, confidence.to_bits()), || {
        let lam = spectrum_cached(est, alpha, mr, nr)?;
        let lo = weighted_chi2::quantile(&lam, 0.5 * (1.0 - confidence)).ok()?;
        let hi = weighted_chi2::quantile(&lam, 0.5 * (1.0 + confidence)).ok()?;
        (lo > 0.0 && hi > lo && hi.is_finite()).then_some((lo, hi))
    })
}

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

/// The two-sided interval (σ_lo, σ_hi) on the deviation `dev` of `est` at
/// factor m (from `n` gap-free-equivalent samples) for noise α with `edf`
/// degrees of freedom, and the method used: the quadratic form's own
/// distribution where [`pivot_quantiles`] gives one, χ²_ν otherwise.
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
    let (lo, hi) = crate::stats::interval(dev, edf, confidence)?;
    Ok(match pivot_quantiles(est, alpha, m, n, confidence) {
        Some((q_lo, q_hi)) => (
            dev / q_hi.sqrt(),
            dev / q_lo.sqrt(),
            IntervalMethod::QuadraticForm,
        ),
        None => (lo, hi, IntervalMethod::Chi2),
    })
}
