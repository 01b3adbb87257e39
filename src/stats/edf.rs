//! Equivalent degrees of freedom (EDF) of the stability variances.
//!
//! A variance estimate σ̂² with ν equivalent degrees of freedom is treated as
//! ν·σ̂²/σ² ~ χ²_ν, so that Var[σ̂²] = 2σ⁴/ν, i.e. ν = 2·E[σ̂²]²/Var[σ̂²].
//!
//! # The Greenhall & Riley algorithm
//!
//! C. A. Greenhall and W. J. Riley, "Uncertainty of stability variances based
//! on finite differences", Proc. 35th PTTI Meeting (2003). A variance is the
//! mean of M squared terms, each a d-th difference (lag τ = mτ0) of phase
//! that has first been averaged over τ/F; successive terms are τ/S apart:
//!
//! | estimator | d | F | S |
//! |---|---|---|---|
//! | ADEV | 2 | m | 1 |
//! | OADEV | 2 | m | m |
//! | MDEV, TDEV | 2 | 1 | m |
//! | HDEV | 3 | m | 1 |
//! | OHDEV | 3 | m | m |
//!
//! With N phase points, the filter spans L = m/F + m·d samples, there are
//! M = 1 + ⌊S(N − L)/m⌋ terms, r = M/S, and the sums run to
//! J = min(M, (d + 1)S). In units of τ, with S_y(f) ∝ f^α:
//!
//! - sw(t) is the generalised autocovariance of the integrated phase:
//!   −|t| (α = 2), t² ln|t| (1), |t|³ (0), −t⁴ ln|t| (−1), −|t|⁵ (−2),
//!   t⁶ ln|t| (−3), |t|⁷ (−4);
//! - sx(t) = F²·[2 sw(t) − sw(t − 1/F) − sw(t + 1/F)] is that of the phase
//!   averaged over τ/F (for F = ∞, sx(t) = sw(t) taken at α + 2);
//! - sz(t) = Σ_{k=−d}^{d} (−1)^k C(2d, d+k) sx(t + k) is that of the d-th
//!   difference;
//! - BasicSum(J, M, S) = sz(0)² + (1 − J/M)·sz(J/S)² + 2 Σ_{j=1}^{J−1} (1 − j/M)·sz(j/S)²,
//!
//! and 1/EDF = BasicSum/(M·sz(0)²) — the Gaussian variance of a mean of
//! correlated squares — evaluated in four cases:
//!
//! 1. modified (F = 1), all α: if J ≤ Jmax the direct sum; else if r > d + 1,
//!    1/EDF = (a0 − a1/r)/r with (a0, a1) from Table 1; else the direct sum
//!    re-sampled on Jmax points: S → m′ = Jmax/r, M → J → Jmax;
//! 2. unmodified, α ≤ 0: if J ≤ Jmax the direct sum with F = m when
//!    m(d + 1) ≤ Jmax and F = ∞ otherwise; else if r > d + 1, Table 2;
//!    else the re-sampled sum with F = ∞;
//! 3. unmodified, α = 1: the direct sum with F = m; else if r > d + 1,
//!    1/EDF = (a0 − a1/r)/((b0 + b1 ln m)²·r) with Table 2 and Table 3;
//!    else the re-sampled sum with F = m′, normalised by (b0 + b1 ln m)²;
//! 4. unmodified, α = 2: with K = ⌈r⌉, 1/EDF = (1/M)·Σ_{|k|<K, |k|≤d}
//!    (1 − |k|/r)·[C(2d, d−k)/C(2d, d)]²; for K > d this is (a0 − a1/r)/M
//!    with a0 = C(4d, 2d)/C(2d, d)², a1 = d/2.
//!
//! Jmax = 100, as in the paper.
//!
//! **Phase model (our one change).** The paper's sums model phase in
//! continuous time: for unmodified FM-noise variances averaged over τ0
//! (F = m) while m(d + 1) ≤ Jmax, for modified ones continuously averaged
//! over τ (F = 1). At small m that differs from phase *samples* (white FM,
//! OADEV, m = 1, N = 1001: 782 against the exact 666; MDEV, m = 2: 479
//! against 504). [`PhaseModel::Discrete`], the default, therefore evaluates
//! the direct sums with m(d + 1) ≤ Jmax on the exact autocovariances of the
//! phase samples of the discrete power-law process (Kasdin & Walter 1992,
//! see [`crate::stats::gacv`]) — for modified variances after the mean of m
//! samples — and keeps the paper's continuous forms for larger m, where the
//! two converge. For flicker PM the bandwidth constant does not vanish with
//! m, so Table 3's b0 is replaced by that of the discrete process
//! (b0 + (4 ln 2 + 2γ − 3)·C(2d, d), f_h at the Nyquist frequency).
//! `tests/edf.rs` checks the result against exact covariance sums and a
//! seeded Monte Carlo; [`PhaseModel::Paper`] keeps the printed algorithm.
//!
//! The table entries are the large-r limits
//! a0 = ∫ ρ(t)² dt and a1 = ∫ |t| ρ(t)² dt over |t| ≤ d + 1, ρ = sz/sz(0);
//! Table 1 is quoted from the paper (from memory) and agrees with those
//! integrals to the printed three decimals; Table 2 was recomputed here from
//! the same integrals (three decimals; the α = 1 row is the un-normalised
//! ∫ sz², because sz(0) grows as b0 + b1 ln m). Table 3 is evaluated in
//! closed form: b1 = 2·C(2d, d), b0 = 3·C(2d, d) − 4 Σ_{k=1}^{d} (−1)^k
//! C(2d, d+k) ln k (6.000/4.000, 15.23/12.00, 47.76/40.00 for d = 1, 2, 3).
//! `tests/edf.rs` re-derives the tables by quadrature and checks that each
//! approximation branch meets the direct sum.
//!
//! # Total variance
//!
//! NIST SP 1065 (Riley 2008, §5.2.11 and its EDF table; docs/checks.md §D, from
//! memory): EDF = b·(T/τ) − c with T = (N − 1)τ0 the record length: WFM
//! b = 1.50, c = 0; FFM b = 1.17, c = 0.22; RWFM b = 0.93, c = 0.36. These
//! describe the continuous-time, large-m behaviour: at m = 1, where TOTVAR
//! and the overlapping AVAR are the same sum, the rule gives 1500 for white
//! FM at N = 1001 against the true 666. We therefore multiply the rule by
//! the overlapping Allan EDF's own small-m factor, EDF_OADEV(m)/EDF_OADEV,∞(m)
//! (our discrete-model EDF over its large-r limit (a0 − a1/r)/r, taken as 1
//! where m(d + 1) > Jmax or r ≤ 3, where the two agree), which makes m = 1
//! exact and leaves larger m as printed (our choice, checked by the Monte
//! Carlo in `tests/edf.rs`).
//!
//! SP 1065 gives no TOTVAR EDF for WPM and FPM; [`crate::stats::totals`]
//! gives the exact one for white PM and a rule for flicker PM (the reflected
//! ends tie many terms to the two end samples: N = 1001, white PM, a TOTDEV
//! EDF of 265 at m = 50 and 43 at m = 200 where the overlapping ADEV has
//! 477 and 373 — borrowing the OADEV rule would overstate the confidence
//! several-fold).

use crate::stats::{gacv, VarianceKind};

/// Jmax of Greenhall & Riley (2003): the largest sum evaluated directly.
pub const J_MAX: usize = 100;

/// EDF of a variance estimate of the given kind at averaging factor `m`
/// from `n_phase` phase points, for noise S_y(f) ∝ f^α.
///
/// Returns `None` when α is outside the kind's range
/// ([`VarianceKind::alpha_range`]), when the record is too short for one
/// term, or when a rule gives no positive EDF.
///
/// ```
/// use tauwise::stats::{edf, VarianceKind};
/// // White FM, overlapping ADEV, m = 1, N = 1001: about 666 (compare the
/// // Howe–Allan–Barnes closed form, 665.8).
/// let nu = edf(VarianceKind::OverlappingAllan, 0, 1, 1001).unwrap();
/// assert!((nu - 666.0).abs() < 2.0);
/// ```
pub fn edf(kind: VarianceKind, alpha: i32, m: usize, n_phase: usize) -> Option<f64> {
    if !kind.alpha_range().contains(&alpha) || m == 0 {
        return None;
    }
    match kind {
        VarianceKind::Total
        | VarianceKind::ModifiedTotal
        | VarianceKind::TimeTotal
        | VarianceKind::HadamardTotal => crate::stats::totals::edf(kind, alpha, m, n_phase),
        _ => greenhall_edf(
            Differences::of(kind)?,
            alpha,
            m,
            n_phase,
            J_MAX,
            PhaseModel::Discrete,
        ),
    }
}

/// How the phase samples of a record are modelled in the autocovariance
/// sums (see the module notes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PhaseModel {
    /// As printed in Greenhall & Riley (2003): continuous-time phase,
    /// averaged over τ0 (F = m) in unmodified sums at α = 1 and, while
    /// m(d + 1) ≤ Jmax, at α ≤ 0; continuously averaged over τ (F = 1) in
    /// modified sums.
    Paper,
    /// tauwise's default: where m(d + 1) ≤ Jmax the sums use the exact
    /// autocovariances of the phase samples of the discrete power-law
    /// process (Kasdin & Walter 1992); above, the paper's continuous forms,
    /// with the flicker-PM zero-lag constant of the discrete process.
    Discrete,
}

/// The autocovariance kernel sx(t) of the (possibly averaged) phase, t in
/// units of τ.
enum Kernel {
    /// Continuous time: average over τ/F (`Some(F)`) or sampled (`None`).
    Continuous { factor: Option<f64>, alpha: i32 },
    /// Discrete samples 1/m apart with GACV `table[k]`; `boxcar` averages m
    /// consecutive samples first (modified variances).
    Discrete {
        table: Vec<f64>,
        m: usize,
        boxcar: bool,
    },
    /// Discrete flicker PM at any m: the exact sample GACV up to lag
    /// [`FLICKER_PM_EXACT_LAGS`], put on the continuous scale
    /// (4·s(k) + 2 ln m + κ − 3), and the continuous τ0-average beyond,
    /// where the two agree to O(1/k²).
    FlickerPm { table: Vec<f64>, m: usize },
}

/// Lags (in samples) up to which [`Kernel::FlickerPm`] uses the exact
/// discrete autocovariance.
const FLICKER_PM_EXACT_LAGS: usize = 1 << 12;

impl Kernel {
    fn discrete(alpha: i32, m: usize, d: usize, boxcar: bool) -> Self {
        Kernel::Discrete {
            table: gacv::discrete_phase_gacv(alpha, (2 * d + 3) * m + 2),
            m,
            boxcar,
        }
    }

    fn flicker_pm(m: usize) -> Self {
        Kernel::FlickerPm {
            table: gacv::discrete_phase_gacv(1, FLICKER_PM_EXACT_LAGS),
            m,
        }
    }

    fn sx(&self, t: f64) -> f64 {
        match self {
            Kernel::FlickerPm { table, m } => {
                let mf = *m as f64;
                let k = (t * mf).round().abs();
                if k <= FLICKER_PM_EXACT_LAGS as f64 {
                    4.0 * table[k as usize] + 2.0 * mf.ln() + gacv::FLICKER_PM_DISCRETE_KAPPA - 3.0
                } else {
                    gacv::sx_continuous(t, Some(mf), 1)
                }
            }
            Kernel::Continuous { factor, alpha } => gacv::sx_continuous(t, *factor, *alpha),
            Kernel::Discrete { table, m, boxcar } => {
                let k0 = (t * *m as f64).round() as i64;
                let at = |k: i64| table[k.unsigned_abs() as usize];
                if *boxcar {
                    let mi = *m as i64;
                    let sum: f64 = (1 - mi..mi)
                        .map(|u| (mi - u.abs()) as f64 * at(k0 + u))
                        .sum();
                    sum / (mi * mi) as f64
                } else {
                    at(k0)
                }
            }
        }
    }

    /// sz(t) = Σ_{k=−d}^{d} (−1)^k C(2d, d+k) sx(t + k).
    fn sz(&self, t: f64, d: usize) -> f64 {
        let di = d as i64;
        (-di..=di)
            .map(|k| {
                let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
                sign * binom(2 * d, (di + k) as usize) * self.sx(t + k as f64)
            })
            .sum()
    }
}

/// Binomial coefficient C(n, k) as f64 (small n only).
fn binom(n: usize, k: usize) -> f64 {
    if k > n {
        return 0.0;
    }
    let k = k.min(n - k);
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}

/// BasicSum(J, M, S) = sz(0)² + (1 − J/M) sz(J/S)² + 2 Σ_{j=1}^{J−1} (1 − j/M) sz(j/S)²,
/// with the zero-lag value `z0` given.
fn basic_sum(j: usize, m_terms: f64, s: f64, z0: f64, kernel: &Kernel, d: usize) -> f64 {
    let z = |lag: usize| kernel.sz(lag as f64 / s, d).powi(2);
    let mut sum = z0 * z0 + (1.0 - j as f64 / m_terms) * z(j);
    for i in 1..j {
        sum += 2.0 * (1.0 - i as f64 / m_terms) * z(i);
    }
    sum
}

/// 1/EDF = BasicSum(J, M, S)/(M·sz(0)²) with the kernel's own sz(0).
fn direct(j: usize, m_terms: f64, s: f64, kernel: &Kernel, d: usize) -> f64 {
    let z0 = kernel.sz(0.0, d);
    basic_sum(j, m_terms, s, z0, kernel, d) / (z0 * z0 * m_terms)
}

/// Theoretical lag-1 autocorrelation of the d-th differences (d = 0 … 3) of
/// phase samples taken every m samples, for noise S_y ∝ f^α:
/// ρ1 = sz(1)/sz(0) with the discrete-process kernel where m(d + 1) ≤ Jmax
/// and the continuous one beyond (sampled phase; flicker PM with its
/// discrete bandwidth). `None` when the d-th difference is not stationary
/// (α + 2d ≤ 1). Used by [`crate::stats::noise_id`].
pub fn decimated_lag1(alpha: i32, m: usize, d: usize) -> Option<f64> {
    if d > 3 || !(-4..=2).contains(&alpha) || alpha + 2 * d as i32 <= 1 || m == 0 {
        return None;
    }
    let kernel = if alpha == 2 {
        Kernel::discrete(2, 1, d, false)
    } else if m * (d + 1) <= J_MAX {
        Kernel::discrete(alpha, m, d, false)
    } else if alpha == 1 {
        Kernel::flicker_pm(m)
    } else {
        Kernel::Continuous {
            factor: None,
            alpha,
        }
    };
    let z0 = kernel.sz(0.0, d);
    (z0 != 0.0).then(|| kernel.sz(1.0, d) / z0)
}

/// Table 1 of Greenhall & Riley (2003): (a0, a1) for the modified variances
/// (F = 1), rows α = 2 … −4, columns d = 1, 2, 3 (from memory; agrees with
/// the defining integrals to three decimals).
const TABLE1: [[Option<(f64, f64)>; 3]; 7] = [
    [
        Some((0.667, 0.333)),
        Some((0.778, 0.500)),
        Some((0.880, 0.667)),
    ],
    [
        Some((0.840, 0.345)),
        Some((0.997, 0.616)),
        Some((1.141, 0.843)),
    ],
    [
        Some((1.079, 0.368)),
        Some((1.033, 0.607)),
        Some((1.184, 0.848)),
    ],
    [None, Some((1.048, 0.534)), Some((1.180, 0.816))],
    [None, Some((1.302, 0.535)), Some((1.175, 0.777))],
    [None, None, Some((1.194, 0.703))],
    [None, None, Some((1.489, 0.702))],
];

/// Table 2: (a0, a1) for the unmodified variances, rows α = 1 … −4,
/// columns d = 1, 2, 3, recomputed from the large-r integrals (α = 1 row
/// un-normalised, to be divided by (b0 + b1 ln m)²).
const TABLE2: [[Option<(f64, f64)>; 3]; 6] = [
    [
        Some((78.56, 25.17)),
        Some((789.5, 410.4)),
        Some((9949.0, 6520.0)),
    ],
    [
        Some((0.667, 0.167)),
        Some((0.667, 0.333)),
        Some((0.778, 0.500)),
    ],
    [None, Some((0.852, 0.375)), Some((0.997, 0.617))],
    [None, Some((1.079, 0.368)), Some((1.033, 0.607))],
    [None, None, Some((1.053, 0.553))],
    [None, None, Some((1.302, 0.535))],
];

/// Large-r coefficients (a0, a1) used by the approximation branches
/// (Tables 1 and 2 of Greenhall & Riley 2003), for d = 1 … 3.
pub fn large_r_coefficients(alpha: i32, d: usize, modified: bool) -> Option<(f64, f64)> {
    if !(1..=3).contains(&d) || !(-4..=2).contains(&alpha) {
        return None;
    }
    if modified {
        TABLE1[(2 - alpha) as usize][d - 1]
    } else if alpha == 2 {
        Some((
            binom(4 * d, 2 * d) / binom(2 * d, d).powi(2),
            d as f64 / 2.0,
        ))
    } else {
        TABLE2[(1 - alpha) as usize][d - 1]
    }
}

/// Table 3 of Greenhall & Riley (2003): sz(0; m, α = 1, d) ≈ b0 + b1 ln m
/// for large m, in closed form b1 = 2·C(2d, d),
/// b0 = 3·C(2d, d) − 4 Σ_{k=1}^{d} (−1)^k C(2d, d+k) ln k.
pub fn flicker_pm_log_coefficients(d: usize) -> (f64, f64) {
    let c = binom(2 * d, d);
    let tail: f64 = (1..=d)
        .map(|k| {
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            sign * binom(2 * d, d + k) * (k as f64).ln()
        })
        .sum();
    (3.0 * c - 4.0 * tail, 2.0 * c)
}

/// A variance as Greenhall & Riley (2003) describe it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Differences {
    /// Order d of the phase difference: 1 (first difference), 2 (Allan
    /// family), 3 (Hadamard family).
    pub order: usize,
    /// Overlapping estimator (stride S = m) or not (S = 1).
    pub overlapping: bool,
    /// Modified (phase averaged over τ first, F = 1) or not (F = m).
    pub modified: bool,
}

impl Differences {
    /// The description of a [`VarianceKind`]; `None` for the total family,
    /// which has its own rules ([`crate::stats::totals`]).
    pub fn of(kind: VarianceKind) -> Option<Self> {
        (!kind.is_total()).then(|| Differences {
            order: kind.difference_order(),
            overlapping: kind.is_overlapping(),
            modified: kind.is_modified(),
        })
    }
}

/// The Greenhall & Riley (2003) EDF of `variance` at averaging factor `m`
/// from `n` phase points, for S_y ∝ f^α. `j_max` is the paper's Jmax (use [`J_MAX`]; a larger value
/// evaluates more sums directly); `model` chooses the paper's phase model or
/// tauwise's discrete one ([`PhaseModel`]).
///
/// Returns `None` when α + 2d ≤ 1 (the variance of the estimate diverges),
/// d is outside 1 … 3, α outside 2 … −4, or there is no complete term.
pub fn greenhall_edf(
    variance: Differences,
    alpha: i32,
    m: usize,
    n: usize,
    j_max: usize,
    model: PhaseModel,
) -> Option<f64> {
    let Differences {
        order: d,
        overlapping,
        modified,
    } = variance;
    if !(1..=3).contains(&d) || !(-4..=2).contains(&alpha) || alpha + 2 * d as i32 <= 1 || m == 0 {
        return None;
    }
    let s_int = if overlapping { m } else { 1 };
    let span = if modified { m + m * d } else { 1 + m * d };
    if n < span {
        return None;
    }
    let m_terms_int = 1 + s_int * (n - span) / m;
    let j = m_terms_int.min((d + 1) * s_int);
    let m_terms = m_terms_int as f64;
    let s = s_int as f64;
    let r = m_terms / s;
    let dd = (d + 1) as f64;
    let jm = j_max as f64;

    // Where the paper uses F = m for FM noises (m(d + 1) ≤ Jmax), the
    // discrete model uses the exact sample autocovariances instead.
    let small_m = m * (d + 1) <= j_max;
    let discrete = small_m && model == PhaseModel::Discrete;
    let continuous = |factor: Option<f64>| Kernel::Continuous { factor, alpha };
    let inv = if alpha == 2 && !modified {
        // Case 4, α = 2 unmodified: white phase samples, exact finite sum.
        let k_top = r.ceil() as usize;
        let c0 = binom(2 * d, d);
        let kmax = (k_top.saturating_sub(1)).min(d);
        let mut sum = 1.0;
        for k in 1..=kmax {
            sum += 2.0 * (1.0 - k as f64 / r) * (binom(2 * d, d - k) / c0).powi(2);
        }
        sum / m_terms
    } else if modified {
        // Case 1, modified variances, all α.
        if j <= j_max {
            let kernel = if discrete {
                Kernel::discrete(alpha, m, d, true)
            } else {
                continuous(Some(1.0))
            };
            direct(j, m_terms, s, &kernel, d)
        } else if r > dd {
            let (a0, a1) = large_r_coefficients(alpha, d, true)?;
            (a0 - a1 / r) / r
        } else {
            direct(j_max, jm, jm / r, &continuous(Some(1.0)), d)
        }
    } else if alpha <= 0 {
        // Case 2, unmodified, α ≤ 0.
        if j <= j_max {
            let kernel = if discrete {
                Kernel::discrete(alpha, m, d, false)
            } else if small_m {
                continuous(Some(m as f64))
            } else {
                continuous(None)
            };
            direct(j, m_terms, s, &kernel, d)
        } else if r > dd {
            let (a0, a1) = large_r_coefficients(alpha, d, false)?;
            (a0 - a1 / r) / r
        } else {
            direct(j_max, jm, jm / r, &continuous(None), d)
        }
    } else {
        // Case 3, unmodified, α = 1: sz(0) ≈ b0 + b1 ln m.
        let (b0, b1) = flicker_pm_log_coefficients(d);
        let shift = match model {
            PhaseModel::Paper => 0.0,
            PhaseModel::Discrete => (gacv::FLICKER_PM_DISCRETE_KAPPA - 3.0) * binom(2 * d, d),
        };
        let norm = (b0 + shift + b1 * (m as f64).ln()).powi(2);
        if j <= j_max {
            let kernel = match model {
                PhaseModel::Discrete => Kernel::flicker_pm(m),
                PhaseModel::Paper => continuous(Some(m as f64)),
            };
            direct(j, m_terms, s, &kernel, d)
        } else if r > dd {
            let (a0, a1) = large_r_coefficients(alpha, d, false)?;
            (a0 - a1 / r) / (norm * r)
        } else {
            let mp = jm / r;
            let kernel = continuous(Some(mp));
            let z0 = kernel.sz(0.0, d);
            basic_sum(j_max, jm, mp, z0, &kernel, d) / (norm * jm)
        }
    };
    (inv.is_finite() && inv > 0.0).then(|| 1.0 / inv)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Table 3 closed form against the paper's printed values (from memory).
    #[test]
    fn table3() {
        let (b0, b1) = flicker_pm_log_coefficients(1);
        assert!((b0 - 6.0).abs() < 1e-12 && (b1 - 4.0).abs() < 1e-12);
        let (b0, b1) = flicker_pm_log_coefficients(2);
        assert!((b0 - 15.23).abs() < 0.005 && (b1 - 12.0).abs() < 1e-12);
        let (_, b1) = flicker_pm_log_coefficients(3);
        assert!((b1 - 40.0).abs() < 1e-12);
    }

    /// Case 4 large-r constants: a0 = C(4d,2d)/C(2d,d)², a1 = d/2 (analytic).
    #[test]
    fn white_pm_constants() {
        let (a0, a1) = large_r_coefficients(2, 2, false).unwrap();
        assert!((a0 - 70.0 / 36.0).abs() < 1e-12);
        assert_eq!(a1, 1.0);
    }

    /// Lag-1 autocorrelations of differenced decimated phase (analytic):
    /// second difference of white phase −2/3, of a random walk −1/2; random
    /// walk FM +1/4 at every m (samples of continuous RWFM: MA(1) second
    /// differences, ρ = 1/4); flicker FM −1/3 at m = 1 (ARFIMA d = −½) and
    /// (9 ln 3 − 16 ln 2)/(8 ln 2) = −0.2168 in the continuous limit.
    #[test]
    fn decimated_lag1_values() {
        let close = |a: f64, b: f64| (a - b).abs() < 1e-9;
        assert!(close(decimated_lag1(2, 7, 2).unwrap(), -2.0 / 3.0));
        assert!(close(decimated_lag1(0, 5, 2).unwrap(), -0.5));
        assert!(close(decimated_lag1(0, 5000, 2).unwrap(), -0.5));
        assert!(close(decimated_lag1(-2, 1, 2).unwrap(), 0.25));
        assert!(close(decimated_lag1(-2, 5000, 2).unwrap(), 0.25));
        assert!(close(decimated_lag1(-1, 1, 2).unwrap(), -1.0 / 3.0));
        let cont = (9.0 * 3f64.ln() - 16.0 * 2f64.ln()) / (8.0 * 2f64.ln());
        assert!(close(decimated_lag1(-1, 5000, 2).unwrap(), cont));
        assert_eq!(decimated_lag1(-1, 4, 1), None); // first difference of FFM phase: not stationary
    }

    #[test]
    fn out_of_range() {
        assert_eq!(edf(VarianceKind::OverlappingAllan, -3, 1, 100), None);
        assert!(edf(VarianceKind::OverlappingHadamard, -4, 1, 100).is_some());
        assert_eq!(edf(VarianceKind::OverlappingAllan, 0, 60, 100), None);
        assert_eq!(edf(VarianceKind::Total, 0, 0, 100), None);
        assert_eq!(crate::stats::totvar_bias(-3, 1, 100), None);
        assert_eq!(crate::stats::totvar_bias(0, 0, 100), None);
    }
}
