//! Statistics of Theo1 and TheoH (NIST SP 1065 §5.2.15–5.2.17): their EDF,
//! the bias TheoH keeps for the PM noises, and the expected value of Theo1.
//!
//! # Theo1 EDF
//!
//! SP 1065 tabulates an EDF form per noise type (from memory, kept as
//! [`theo1_edf_sp1065`]). Checked by seeded Monte Carlo at N = 1001, 4096
//! and 16384 up to the last point (`examples/coverage.rs`), the white-FM
//! and white-PM forms hold (within about 10 %, a little below the spread at
//! the longest τ: conservative); the flicker-FM form is 20 % too high at
//! T/τ ≈ 70, the random-walk form 20–40 % too high at τ ≪ T and a third of
//! the measured EDF at the last point, and the flicker-PM form 20 to 1000
//! times too low. [`theo1_edf`] therefore uses:
//!
//! - **WFM, WPM**: the SP 1065 forms;
//! - **FFM, RWFM**: the exact EDF ν = tr(AS)²/tr((AS)²) of the estimate's
//!   quadratic form ([`theo1_edf_exact`], the method of
//!   [`crate::stats::quadratic`]) on a reduced record with the same (N − 1)/m
//!   ([`theo1_edf_exact_reduced`]): these noises are self-similar, so the
//!   EDF depends on the record through (N − 1)/m and settles as m grows
//!   (m′ = 32 is within 1 % of m′ = 64);
//! - **FPM**: PM noise is not self-similar (its EDF grows with m at fixed
//!   (N − 1)/m), so the large-record (Szegő) form of the same quadratic form,
//!   (N − m)·φ(m), with φ from Theo1's transfer function, is corrected for
//!   the finite record by the exact EDF of a reduced record
//!   ([`theo1_edf_pm`]); within 5 % of the exact EDF where both can be
//!   evaluated (N ≤ 1001), except within a few offsets of the last point,
//!   where it is lower (conservative). Flicker PM is taken as IEEE Std
//!   1139's, band-limited at f_h = 1/(2τ0) ([`crate::stats::gacv`]).
//!
//! # TheoH: Theo1 times the record's ThêoBR ratio
//!
//! Beyond 10 % of the record TheoH is R̂·Theo1(τ), R̂ the record's ThêoBR
//! ratio (the mean of AVAR/Theo1 over short τ). R̂ has its own spread and
//! is correlated with Theo1(τ) (both see the record's slow wander), so the
//! relative variance of TheoH² is that of Theo1 plus
//! Δ = Var(R̂)/R̂² + 2·Cov(R̂, Theo1)/(R̂·Theo1) + …, and
//! ν_TheoH = 2/(V_Q + Δ), V_Q = 2/ν_Theo1 the relative variance of Theo1's
//! distribution at τ (that of its quadratic form's weights where the
//! interval uses them; [`theoh_edf`]). Δ is **calibrated by seeded Monte
//! Carlo** over noise type and T/τ (1500 records each at N = 1001, 2049 and
//! 4097; [`theoh_excess`]): for the FM noises it depends on T/τ only (they
//! are self-similar), 0.04–0.22; for flicker PM it falls slowly with N, as
//! (N/1001)^−0.35 (0.012–0.014 at N = 1001); for white PM it is below 1 % of
//! Theo1's own and taken as 0. At N = 4096, T/τ = 8 this takes TheoH's
//! white-FM EDF from Theo1's 30 to 15.
//!
//! The interval is not χ²_ν with that EDF (which over-covered: 0.80 at
//! 68.3 % for the FM noises at T/τ = 2, seeded Monte Carlo, N = 4096):
//! TheoH²/E\[TheoH²\] is taken as Q·R, Q Theo1's own quadratic-form
//! distribution at τ and R an independent gamma factor of mean 1 and
//! relative variance Δ/(1 + V_Q), so that Q·R has the relative variance
//! V_Q + Δ (V_Q = 2/ν of Q) and hence the EDF above
//! ([`crate::stats::form_interval::theoh_interval`], `form-times-ratio`).
//!
//! ThêoBR assumes that Theo1/AVAR is the same at every τ. It is for the FM
//! noises (self-similar) but not for PM noise: for white PM
//! E\[Theo1\]/AVAR = H_{m/2} + 1/m grows like ln m, so a ratio measured at
//! short τ overstates AVAR at long τ (by 26–53 % at N = 4096). For white
//! and flicker PM, TheoH's Theo part is therefore divided by its exact bias
//! for the noise type, B = r(m)·mean_i 1/r(12 + 4i), r(m) =
//! E[Theo1(m)]/AVAR(0.75·m·τ0) ([`theoh_bias`]), like the total family's
//! values ([`crate::stats::totals`]); for the FM noises B = 1.

use crate::stats::gacv::{sampled_phase_gacv, BandLimitedPm};
use crate::stats::quadratic::mean_square;
use crate::stats::Cache;
use std::sync::OnceLock;

/// Equivalent degrees of freedom of Theo1 (NIST SP 1065, Theo1 EDF table,
/// from memory), with N phase samples, the Theo1 factor m (even) and
/// r = τ/τ0 = 0.75·m:
///
/// - WPM (α = 2):  [0.86(N+1)(N − 4r/3) / (N − r)] · [r / (r + 1.14)]
/// - FPM (α = 1):  [(4.798N² − 6.374Nr + 12.387r) / (√(r + 36.6)·(N − r)(r + 0.3))] · [r/(r + 0.3)]
/// - WFM (α = 0):  [(4.1N + 0.8)/r − (3.1N + 6.5)/N] · [r^1.5 / (r^1.5 + 5.2)]
/// - FFM (α = −1): [(2N² − 1.3Nr − 3.5r) / (Nr)] · [r³ / (r³ + 2.3)]
/// - RWFM (α = −2): [(4.4N − 2)/(2.9r)] · [((4.4N − 1)² − 8.6r(4.4N − 1) + 11.4r²) / (4.4N − 3)²]
///
/// Monte Carlo here (tests/long_tau.rs, N = 1001) confirms WFM and WPM
/// within 20 % up to τ = 0.3·T, and RWFM within 2 % up to τ ≈ T/7 (FFM,
/// from the power-law simulator: within 10 % at τ = 48 and 0.3·T); at
/// τ = 0.3·T the RWFM form is about 22 % below the Monte Carlo EDF, which
/// makes the interval wider than it need be (conservative). FPM is not
/// checked by Monte Carlo here.
/// None for other α or when m is not a valid Theo1 factor.
pub fn theo1_edf_sp1065(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    let n = n_phase as f64;
    let r = 0.75 * m as f64;
    let edf = match alpha {
        2 => 0.86 * (n + 1.0) * (n - 4.0 * r / 3.0) / (n - r) * (r / (r + 1.14)),
        1 => {
            (4.798 * n * n - 6.374 * n * r + 12.387 * r) / ((r + 36.6).sqrt() * (n - r) * (r + 0.3))
                * (r / (r + 0.3))
        }
        0 => ((4.1 * n + 0.8) / r - (3.1 * n + 6.5) / n) * (r.powf(1.5) / (r.powf(1.5) + 5.2)),
        -1 => (2.0 * n * n - 1.3 * n * r - 3.5 * r) / (n * r) * (r.powi(3) / (r.powi(3) + 2.3)),
        -2 => {
            let a = 4.4 * n - 1.0;
            (4.4 * n - 2.0) / (2.9 * r)
                * ((a * a - 8.6 * r * a + 11.4 * r * r) / (4.4 * n - 3.0).powi(2))
        }
        _ => return None,
    };
    (edf.is_finite() && edf > 0.0).then_some(edf)
}

/// EDF of Theo1 at the Theo1 factor m (even, 10 ≤ m ≤ N − 1) from N phase
/// samples, for S_y ∝ f^α (module notes): the SP 1065 forms for WFM and
/// WPM, the exact reduced form for FFM and RWFM, the corrected large-record
/// form for FPM. `None` outside α = 2 … −2 or for an invalid m.
pub fn theo1_edf(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    match alpha {
        0 | 2 => theo1_edf_sp1065(alpha, n_phase, m),
        1 => theo1_edf_pm(1, n_phase, m),
        -1 | -2 => theo1_edf_exact_reduced(alpha, n_phase, m),
        _ => None,
    }
}

/// The relative variance Δ that the record's ThêoBR ratio adds to TheoH²
/// beyond Theo1's own (module notes), calibrated by seeded Monte Carlo:
/// for the FM noises a function of T/τ = (N − 1)/(0.75·m) (piecewise linear
/// in ln T/τ between the calibrated points 1.34 … 9.5, constant beyond),
/// for flicker PM such a function times (N/1001)^−0.35, for white PM 0.
/// `None` for other α.
pub fn theoh_excess(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    // T/τ nodes and Δ per FM noise (mean over N = 1001, 2049, 4097; 1500
    // seeded records each).
    const NODES: [f64; 8] = [1.34, 1.5, 2.0, 3.0, 4.0, 6.0, 8.0, 9.5];
    const WFM: [f64; 8] = [0.048, 0.056, 0.067, 0.070, 0.074, 0.075, 0.068, 0.061];
    const FFM: [f64; 8] = [0.058, 0.066, 0.091, 0.095, 0.098, 0.091, 0.078, 0.067];
    const RWFM: [f64; 8] = [0.212, 0.207, 0.175, 0.125, 0.103, 0.081, 0.066, 0.057];
    // Flicker PM at N = 1001, scaled by (N/1001)^−0.35: the joint fit to
    // 1500 seeded records at each of N = 1001, 2049 and 4097 (within 5 % of
    // every calibrated value from T/τ = 2 to 9.5). The single power law
    // used before, 0.013·(N/1001)^−0.31, was 13 % above the calibration at
    // N = 4097, T/τ = 8 (0.0084 against 0.0074) and made TheoH's flicker-PM
    // intervals there too wide (0.732 at 68.3 %, seeded Monte Carlo).
    const FPM: [f64; 8] = [
        0.0105, 0.0114, 0.0134, 0.0135, 0.0130, 0.0124, 0.0121, 0.0116,
    ];
    let (table, scale) = match alpha {
        2 => return Some(0.0),
        1 => (&FPM, (n_phase as f64 / 1001.0).powf(-0.35)),
        0 => (&WFM, 1.0),
        -1 => (&FFM, 1.0),
        -2 => (&RWFM, 1.0),
        _ => return None,
    };
    if m == 0 || n_phase < 2 {
        return None;
    }
    let t_over_tau = (n_phase - 1) as f64 / (0.75 * m as f64);
    let x = t_over_tau.clamp(NODES[0], NODES[NODES.len() - 1]).ln();
    let j = NODES
        .windows(2)
        .position(|w| x <= w[1].ln())
        .unwrap_or(NODES.len() - 2);
    let (x0, x1) = (NODES[j].ln(), NODES[j + 1].ln());
    let w = ((x - x0) / (x1 - x0)).clamp(0.0, 1.0);
    Some(scale * (table[j] * (1.0 - w) + table[j + 1] * w))
}

/// True when TheoH's estimate with factor m on a record of `n_phase`
/// samples is its ThêoBR part (Theo1 factor m, τ = 0.75·m·τ0 at or beyond
/// the switch at 10 % of the record), false when it is the OADEV part
/// (grid factor m, τ = m·τ0 below the switch): the OADEV part has
/// m < 0.1·(N − 1), the ThêoBR part m = 2·round(m_g/1.5) ≥ (4/3)·m_g − 1
/// with m_g ≥ 0.1·(N − 1), which is at least 0.1·(N − 1) for N ≥ 31 (and
/// ThêoBR needs N ≥ 90), so m alone tells them apart, without τ0.
pub fn theoh_ratio_part(n_phase: usize, m: usize) -> bool {
    m as f64 >= 0.1 * n_phase.saturating_sub(1) as f64
}

/// EDF of TheoH's ThêoBR part at the Theo1 factor m from N phase samples:
/// that of the distribution its interval is taken from, ν = 2E²/Var of the
/// product P = Q·R of [`crate::stats::form_interval::theoh_factors`]
/// (Var = (1 + V_Q)(1 + V_R) − 1 = V_Q + Δ, V_Q = 2Σhλ² the relative
/// variance of Theo1's form distribution at τ, Δ from [`theoh_excess`];
/// module notes). Where Theo1's form gives no weights V_Q = 2/ν_Theo1, and
/// ν = 2/(2/ν_Theo1 + Δ) as before; where it does (the FM noises), V_Q is
/// the weights' own (white FM at N = 1025, T/τ = 8: 14.57 against 14.81
/// from Theo1's SP 1065 form), so that the EDF shown and the interval
/// describe one distribution.
pub fn theoh_edf(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    let (q, k) = crate::stats::form_interval::theoh_factors(alpha, m, n_phase)?;
    let mean: f64 = q.iter().map(|(l, h)| l * h).sum();
    let v_q = q.iter().map(|(l, h)| 2.0 * h * l * l).sum::<f64>() / (mean * mean);
    let v_r = k.map_or(0.0, |k| 2.0 / k);
    let var = (1.0 + v_q) * (1.0 + v_r) - 1.0;
    (var.is_finite() && var > 0.0).then(|| 2.0 / var)
}

/// r(m) = E[Theo1(m)]/AVAR(0.75·m·τ0) for white or flicker PM band-limited
/// at f_h = 1/(2τ0) ([`crate::stats::gacv`]), exact from the estimators'
/// terms: Theo1's term mean over the Allan variance at the same τ (a real
/// lag for m not a multiple of 4; for white PM r(m) = H_{m/2} + 1/m where
/// τ/τ0 is whole).
fn pm_theo1_over_allan(kernel: &BandLimitedPm, m: usize) -> f64 {
    let s = |k: usize| kernel.at(k as f64);
    let mf = m as f64;
    let theo: f64 = (1..=m / 2)
        .map(|k| mean_square(&[(0, 1.0), (k, -1.0), (m - k, -1.0), (m, 1.0)], s) / k as f64)
        .sum::<f64>()
        / (0.75 * mf * mf);
    let r = 0.75 * mf;
    let allan =
        (6.0 * kernel.at(0.0) - 8.0 * kernel.at(r) + 2.0 * kernel.at(2.0 * r)) / (2.0 * r * r);
    theo / allan
}

/// Most ThêoBR factors at which [`theoh_bias`] evaluates r exactly; between
/// them 1/r (smooth in m) is interpolated linearly.
const THEOH_BIAS_NODES: usize = 65;

/// The bias factor B = E\[TheoH²\]/AVAR(τ) of TheoH's ThêoBR part for white
/// or flicker PM (α = 2, 1) at the Theo1 factor m on N samples (module
/// notes): B = r(m)·mean_{i=0}^{n} 1/r(12 + 4i), n = ⌊0.1·N/3 − 3⌋, with
/// r = E\[Theo1(m)\]/AVAR(0.75·m·τ0) exact from the estimators' terms (the
/// mean of the ratios taken as the ratio
/// of the means). `None` for the FM noises (B = 1: they are self-similar),
/// and when N < 90.
///
/// ```
/// use tauwise::stats::theo::theoh_bias;
/// // White PM, N = 4096, τ ≈ T/8: ThêoBR overstates AVAR by about a quarter.
/// let b = theoh_bias(2, 4096, 682).unwrap();
/// assert!(b > 1.15 && b < 1.4, "{b}");
/// assert_eq!(theoh_bias(0, 4096, 682), None);
/// ```
pub fn theoh_bias(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if !(1..=2).contains(&alpha) || m < 2 || m % 2 == 1 {
        return None;
    }
    static CACHE: Cache<(i32, usize, usize), f64> = OnceLock::new();
    crate::stats::cached(&CACHE, (alpha, n_phase, m), || {
        theoh_bias_uncached(alpha, n_phase, m)
    })
}

fn theoh_bias_uncached(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    let nb = (0.1 * n_phase as f64 / 3.0 - 3.0).floor();
    if nb < 0.0 {
        return None;
    }
    let nb = nb as usize;
    let top = (12 + 4 * nb).max(m);
    let kernel = BandLimitedPm::new(alpha, 2 * top + 2)?;
    let inv_r = |i: usize| 1.0 / pm_theo1_over_allan(&kernel, 12 + 4 * i);
    // Exact at up to THEOH_BIAS_NODES evenly spread i, linear between.
    let step = nb.div_ceil(THEOH_BIAS_NODES - 1).max(1);
    let mut nodes: Vec<usize> = (0..=nb).step_by(step).collect();
    if *nodes.last()? != nb {
        nodes.push(nb);
    }
    let values: Vec<f64> = nodes.iter().map(|&i| inv_r(i)).collect();
    let mut sum = 0.0;
    for w in 0..nodes.len() {
        if w + 1 == nodes.len() {
            sum += values[w];
            break;
        }
        let (a, b) = (nodes[w], nodes[w + 1]);
        for i in a..b {
            let t = (i - a) as f64 / (b - a) as f64;
            sum += values[w] * (1.0 - t) + values[w + 1] * t;
        }
    }
    let mean_inv = sum / (nb + 1) as f64;
    let bias = pm_theo1_over_allan(&kernel, m) * mean_inv;
    (bias.is_finite() && bias > 0.0).then_some(bias)
}

/// E[Theo1(τ)]/AVAR(τ) at τ = 0.75·m·τ0, exact from the estimators'
/// terms: for white and flicker PM band-limited at f_h = 1/(2τ0) at every
/// even m; for the FM noises (sampled; [`crate::stats::gacv`]) where 0.75·m
/// is whole (m a multiple of 4), else
/// `None`. The ratio ThêoBR's bias correction estimates from the record.
///
/// ```
/// use tauwise::stats::theo::theo1_over_allan;
/// // White FM: Theo1 is unbiased (NIST SP 1065).
/// assert!((theo1_over_allan(0, 40).unwrap() - 1.0).abs() < 0.02);
/// ```
pub fn theo1_over_allan(alpha: i32, m: usize) -> Option<f64> {
    if m < 2 || m % 2 == 1 {
        return None;
    }
    if (1..=2).contains(&alpha) {
        let kernel = BandLimitedPm::new(alpha, 2 * m + 2)?;
        return Some(pm_theo1_over_allan(&kernel, m));
    }
    if !(-2..=0).contains(&alpha) || m % 4 != 0 {
        return None;
    }
    let r = 3 * m / 4;
    let g = sampled_phase_gacv(alpha, 2 * r.max(m) + 1);
    let s = |k: usize| g[k];
    let mf = m as f64;
    let theo: f64 = (1..=m / 2)
        .map(|k| mean_square(&[(0, 1.0), (k, -1.0), (m - k, -1.0), (m, 1.0)], s) / k as f64)
        .sum::<f64>()
        / (0.75 * mf * mf);
    let rf = r as f64;
    let allan = mean_square(&[(0, 1.0), (r, -2.0), (2 * r, 1.0)], s) / (2.0 * rf * rf);
    (allan > 0.0).then(|| theo / allan)
}

/// Theo1's factor m′ on the reduced records of [`theo1_edf_exact_reduced`]
/// is at most this.
pub const THEO1_REDUCED_M: usize = 32;
/// Up to this (N − 1)/m the reduced EDF is evaluated directly; beyond, on
/// the line through (N − 1)/m = 16 and this value.
pub const THEO1_DIRECT_UP_TO: f64 = 32.0;

/// The quadratic form of one Theo1 term set at offset 0 on m + 1 samples:
/// R = Σ_{k=1}^{m/2} (1/k)·c_k c_kᵀ with c_k = e_0 − e_k − e_{m−k} + e_m
/// (NIST SP 1065 eq. 31), row-major.
fn theo1_local_form(m: usize) -> Vec<f64> {
    let len = m + 1;
    let mut r = vec![0.0f64; len * len];
    for k in 1..=m / 2 {
        let w = 1.0 / k as f64;
        let mut c: Vec<(usize, f64)> = Vec::with_capacity(4);
        for (i, v) in [(0, 1.0), (k, -1.0), (m - k, -1.0), (m, 1.0)] {
            match c.iter_mut().find(|e| e.0 == i) {
                Some(e) => e.1 += v,
                None => c.push((i, v)),
            }
        }
        for &(a, ca) in &c {
            for &(b, cb) in &c {
                r[a * len + b] += w * ca * cb;
            }
        }
    }
    r
}

/// The exact EDF ν = tr(AS)²/tr((AS)²) of Theo1 at the (even) factor m on
/// a gap-free record of `n_phase` samples, for the power law α sampled
/// (PM band-limited at f_h = 1/(2τ0); [`crate::stats::gacv`]): the
/// whole estimate as one quadratic form, the
/// local form R = Σ_k (1/k)·c_k c_kᵀ of one offset (NIST SP 1065 eq. 31)
/// added at each of the N − m offsets.
/// O(N²·m): for records of up to some hundreds of samples (the reduced
/// records of [`theo1_edf`]) and for cross-checks.
///
/// ```
/// use tauwise::stats::theo::theo1_edf_exact;
/// // One offset (m = N − 1, the last point), white FM: a few degrees of freedom.
/// let nu = theo1_edf_exact(0, 33, 32).unwrap();
/// assert!(nu > 1.0 && nu < 4.0);
/// ```
pub fn theo1_edf_exact(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if !(-2..=2).contains(&alpha) || m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    theo1_form(m, n_phase)?.edf(&phase_kernel(alpha, n_phase))
}

/// The whole Theo1 estimate at the (even) factor m on a gap-free record of
/// `n_phase` samples as one quadratic form: the local form of one offset
/// added at each of the N − m offsets.
pub(crate) fn theo1_form(
    m: usize,
    n_phase: usize,
) -> Option<crate::stats::quadratic::QuadraticForm> {
    use crate::stats::quadratic::QuadraticForm;
    if m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    let r = theo1_local_form(m);
    let len = m + 1;
    let mut q = QuadraticForm::new(n_phase);
    for start in 0..n_phase - m {
        q.add_local(start, &r, len);
    }
    Some(q)
}

/// The phase autocovariance table (lags 0 … n − 1) behind the exact Theo1
/// EDF: PM band-limited at f_h = 1/(2τ0), the FM noises as the discrete
/// processes sampled ([`crate::stats::gacv`]).
fn phase_kernel(alpha: i32, n: usize) -> Vec<f64> {
    sampled_phase_gacv(alpha, n)
}

/// The exact EDF of Theo1 for an FM noise (α = 0 … −2) at factor m from N
/// samples, evaluated on a reduced record with the same (N − 1)/m and
/// m′ = min(m, [`THEO1_REDUCED_M`]), directly while (N − 1)/m ≤
/// [`THEO1_DIRECT_UP_TO`] and on the straight line through (N − 1)/m = 16
/// and 32 beyond (ν grows linearly in the number of offsets once they far
/// outnumber a term's span): the method of [`crate::stats::totals`] for
/// MTOT. The FM noises are self-similar, so at fixed (N − 1)/m the EDF
/// settles as m grows (`tests/long_tau.rs` checks m′ = 16 against 32 and
/// the seeded Monte Carlo at N = 1001, 4096 and 16384). The reduced
/// records have at most 32·32 + 1 samples.
pub fn theo1_edf_exact_reduced(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if !(-2..=0).contains(&alpha) || m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    let ratio = (n_phase - 1) as f64 / m as f64;
    let mr = m.min(THEO1_REDUCED_M);
    let reduced = |rho: f64| ((rho * mr as f64).round() as usize + 1).max(mr + 1);
    let nu = if ratio <= THEO1_DIRECT_UP_TO {
        cached(alpha, mr, reduced(ratio))?
    } else {
        let lo_ratio = THEO1_DIRECT_UP_TO / 2.0;
        let lo = cached(alpha, mr, reduced(lo_ratio))?;
        let hi = cached(alpha, mr, reduced(THEO1_DIRECT_UP_TO))?;
        hi + (ratio - THEO1_DIRECT_UP_TO) * (hi - lo) / (THEO1_DIRECT_UP_TO - lo_ratio)
    };
    (nu.is_finite() && nu > 0.0).then_some(nu)
}

/// [`theo1_edf_exact`] remembered per (α, m, N): the reduced records take
/// few distinct values, each some milliseconds to evaluate.
fn cached(alpha: i32, m: usize, n: usize) -> Option<f64> {
    static CACHE: Cache<(i32, usize, usize), f64> = OnceLock::new();
    crate::stats::cached(&CACHE, (alpha, m, n), || theo1_edf_exact(alpha, n, m))
}

/// Theo1 factors up to this get the large-record form of [`theo1_edf_pm`] with the
/// transfer function on its own grid; beyond, φ is continued as a power of
/// m fitted to the last two octaves below.
pub const THEO1_INTERIOR_MAX_M: usize = 1 << 18;

/// Factor of the reduced records that give [`theo1_edf_pm`] its
/// finite-record correction.
const THEO1_PM_REDUCED_M: usize = 32;

/// Up to this many offsets (N − m), [`theo1_edf_pm`] evaluates the exact
/// EDF by [`theo1_edf_few_offsets`] when it costs at most
/// [`FEW_OFFSETS_BUDGET`] pair-lag terms.
const FEW_OFFSETS: usize = 16;
/// See [`FEW_OFFSETS`].
const FEW_OFFSETS_BUDGET: usize = 60_000_000;

/// The exact EDF of Theo1 (α = 2 or 1, band-limited PM) from its terms, for
/// records with few offsets M = N − m: with u_{ik} = c_k·x_{i…i+m} and
/// γ_kl(d) = Cov(u_{ik}, u_{i+d,l}),
/// E = M·Σ_k γ_kk(0)/k, Var = 2 Σ_{k,l} (1/kl) Σ_{|d|<M} (M − |d|)·γ_kl(d)²,
/// ν = 2E²/Var. O(m²·M).
pub fn theo1_edf_few_offsets(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    let offsets = n_phase - m;
    let kernel = BandLimitedPm::new(alpha, m + offsets + 1)?;
    let s = kernel.table(m + offsets);
    let comb = |k: usize| -> Vec<(i64, f64)> {
        let mut c: Vec<(i64, f64)> = Vec::with_capacity(4);
        for (i, v) in [
            (0i64, 1.0),
            (k as i64, -1.0),
            ((m - k) as i64, -1.0),
            (m as i64, 1.0),
        ] {
            match c.iter_mut().find(|e| e.0 == i) {
                Some(e) => e.1 += v,
                None => c.push((i, v)),
            }
        }
        c
    };
    let combs: Vec<Vec<(i64, f64)>> = (1..=m / 2).map(comb).collect();
    let gamma = |a: &[(i64, f64)], b: &[(i64, f64)], d: i64| -> f64 {
        let mut g = 0.0;
        for &(ia, ca) in a {
            for &(ib, cb) in b {
                g += ca * cb * s[(d + ib - ia).unsigned_abs() as usize];
            }
        }
        g
    };
    let mf = offsets as f64;
    let mut mean = 0.0;
    let mut var = 0.0;
    for (ki, a) in combs.iter().enumerate() {
        let wk = 1.0 / (ki + 1) as f64;
        mean += wk * gamma(a, a, 0);
        for (li, b) in combs.iter().enumerate() {
            let wl = 1.0 / (li + 1) as f64;
            let mut acc = 0.0;
            for d in -(offsets as i64 - 1)..=(offsets as i64 - 1) {
                let g = gamma(a, b, d);
                acc += (mf - d.unsigned_abs() as f64) * g * g;
            }
            var += wk * wl * acc;
        }
    }
    let e = mf * mean;
    let nu = e * e / var;
    (nu.is_finite() && nu > 0.0).then_some(nu)
}

/// The large-record EDF per offset φ(m) of Theo1 for white PM (α = 2) or
/// flicker PM (α = 1): with P(f) the phase spectrum band-limited at the
/// Nyquist frequency (cycles per sample; white 1, flicker 1/f; see
/// [`crate::stats::gacv`])
/// and Theo1's transfer function
/// G(f) = Σ_{k=1}^{m/2} (1/k)·16 sin²(πfk)·sin²(πf(m − k)),
/// the mean of the sum over M offsets is M·2∫₀^½ PG df and, when M far
/// exceeds m, its variance 2M·2∫₀^½ P²G² df (Parseval over the lag of two
/// terms: the Szegő limit of tr((AS)²)), so
/// ν ≈ M·φ(m), φ = 2(∫PG)²/∫P²G².
/// G is evaluated on f = q/L, L = 16m (a power of two at least that), by
/// three FFTs of its cosine expansion
/// G = 4 Σ_k (1/k)[1 + ½cos 2πfm − cos 2πfk − cos 2πf(m−k) + ½cos 2πf(2k−m)],
/// and both integrals by the trapezoid rule.
pub fn theo1_interior_phi(alpha: i32, m: usize) -> Option<f64> {
    use rustfft::num_complex::Complex;
    if !(1..=2).contains(&alpha) || m < 2 || m % 2 == 1 {
        return None;
    }
    if m > THEO1_INTERIOR_MAX_M {
        // φ continued as c·m^(−p) from the last two octaves computed.
        let top = THEO1_INTERIOR_MAX_M;
        let a = theo1_interior_phi_cached(alpha, top / 2)?;
        let b = theo1_interior_phi_cached(alpha, top)?;
        let p = (a / b).ln() / std::f64::consts::LN_2;
        return Some(b * (top as f64 / m as f64).powf(p));
    }
    let l = (16 * m).next_power_of_two();
    let mut a1 = vec![Complex::new(0.0, 0.0); l];
    let mut a2 = vec![Complex::new(0.0, 0.0); l];
    let mut a3 = vec![Complex::new(0.0, 0.0); l];
    let mut w_sum = 0.0;
    for k in 1..=m / 2 {
        let w = 1.0 / k as f64;
        w_sum += w;
        a1[k].re += w;
        a2[m - k].re += w;
        a3[m - 2 * k].re += w;
    }
    let mut planner = rustfft::FftPlanner::<f64>::new();
    let fft = planner.plan_fft_forward(l);
    for a in [&mut a1, &mut a2, &mut a3] {
        fft.process(a);
    }
    let (mut pg, mut ppgg) = (0.0, 0.0);
    for q in 1..=l / 2 {
        let f = q as f64 / l as f64;
        let c_m = (2.0 * std::f64::consts::PI * f * m as f64).cos();
        let g = 4.0 * (w_sum * (1.0 + 0.5 * c_m) - a1[q].re - a2[q].re + 0.5 * a3[q].re);
        let p = if alpha == 2 { 1.0 } else { 1.0 / f };
        let weight = if q == l / 2 { 0.5 } else { 1.0 };
        pg += weight * p * g;
        ppgg += weight * p * p * g * g;
    }
    (ppgg > 0.0).then(|| 2.0 * pg * pg / (ppgg * l as f64))
}

fn theo1_interior_phi_cached(alpha: i32, m: usize) -> Option<f64> {
    static CACHE: Cache<(i32, usize), f64> = OnceLock::new();
    crate::stats::cached(&CACHE, (alpha, m), || theo1_interior_phi(alpha, m))
}

/// The EDF of Theo1 for white or flicker PM (α = 2, 1) at the (even) factor
/// m from N samples: the large-record form (N − m)·φ(m)
/// ([`theo1_interior_phi`]) times its finite-record correction, the ratio of
/// the exact EDF ([`theo1_edf_exact`]) to the large-record form on a
/// reduced record with the same (N − 1)/m and m′ = min(m, 32) (at most
/// (N − 1)/m = 32; the correction tends to 1 beyond). PM noise is not
/// self-similar — its EDF keeps growing with m at fixed (N − 1)/m — so the
/// reduced record supplies only the correction, not the value.
pub fn theo1_edf_pm(alpha: i32, n_phase: usize, m: usize) -> Option<f64> {
    if !(1..=2).contains(&alpha) || m < 2 || m % 2 == 1 || n_phase < m + 1 {
        return None;
    }
    // Near the last point (few offsets) the large-record form does not
    // hold; there the exact EDF is affordable directly.
    let offsets = n_phase - m;
    if offsets <= FEW_OFFSETS && (m / 2).pow(2) * (2 * offsets - 1) <= FEW_OFFSETS_BUDGET {
        return theo1_edf_few_offsets(alpha, n_phase, m);
    }
    let offsets = (n_phase - m) as f64;
    let large = offsets * theo1_interior_phi_cached(alpha, m)?;
    let ratio = ((n_phase - 1) as f64 / m as f64).min(THEO1_DIRECT_UP_TO);
    let mr = m.min(THEO1_PM_REDUCED_M);
    // The correction varies slowly with (N − 1)/m: evaluated at quarter
    // steps of it, so that at most 128 reduced records are ever computed.
    let quarter = (4.0 * ratio).round() / 4.0;
    let nr = ((quarter * mr as f64).round() as usize + 1).max(mr + 1);
    let exact = cached(alpha, mr, nr)?;
    let correction = exact / ((nr - mr) as f64 * theo1_interior_phi_cached(alpha, mr)?);
    let nu = large * correction;
    (nu.is_finite() && nu > 0.0).then_some(nu)
}
