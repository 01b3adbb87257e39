//! The distribution of a weighted sum of independent χ²₁ variables,
//! Q = Σ_i λ_i·χ²₁,i (all λ_i > 0): its CDF by numerical inversion of the
//! characteristic function, and its quantiles.
//!
//! A variance estimate is a quadratic form xᵀAx in Gaussian phase samples,
//! so it is distributed exactly as such a sum, the λ_i being the non-zero
//! eigenvalues of A·S (S the covariance of x; see
//! [`crate::stats::quadratic::QuadraticForm::eigenvalues`]). The χ²_ν of
//! [`mod@crate::stats::interval`] is the special case of ν equal weights.
//!
//! # Imhof's formula
//!
//! J. P. Imhof, "Computing the distribution of quadratic forms in normal
//! variables", Biometrika 48 (1961) 419–426, eq. (3.2) with no
//! non-centrality and unit multiplicities:
//!
//! P(Q > x) = ½ + (1/π) ∫₀^∞ sin θ(u) / (u·ρ(u)) du,
//!
//! θ(u) = ½ Σ_i arctan(λ_i u) − ½ x u,  ρ(u) = Π_i (1 + λ_i² u²)^{1/4}.
//!
//! The integral is evaluated here by 8-point Gauss–Legendre on panels short
//! enough that θ changes by at most π across each (|θ′| ≤ ½(Σλ + x)), up
//! to a point U beyond which the remainder is below [`TAIL_TOLERANCE`] by
//! Imhof's bound, taken over the weights with λ_i U ≥ 1 (for which
//! (1 + λ_i²u²)^{1/4} ≥ (λ_i u)^{1/2}):
//! |∫_U^∞| ≤ (2/(π k)) Π_{i ≤ k} (λ_i U)^{−1/2}, k of them.
//! With few weights the remainder decays slowly (as U^{−k/2}); the
//! integration stops after [`MAX_PANELS`] panels.
//!
//! # Talbot's contour
//!
//! Imhof's integral runs along the real axis of the characteristic
//! function, where the integrand oscillates at the rate x/2 and decays only
//! as u^{−k/2}: in the far upper tail (x many times the mean, which the
//! product quantiles of TheoH's interval ask for) it needed up to 1500
//! panels. [`cdf_with`] therefore inverts the Laplace transform instead,
//! L(s) = E\[e^{−sQ}\] = Π_i (1 + 2λ_i s)^{−h_i/2}, whose singularities lie
//! on the negative real axis (branch points at −1/(2λ_i)), along a contour
//! that wraps around them: the fixed Talbot contour of J. Abate and
//! P. P. Valkó, "Multi-precision Laplace transform inversion", Int. J.
//! Numer. Meth. Engng 60 (2004) 979–993 (after A. Talbot, J. Inst. Maths
//! Applics 23 (1979) 97–120), with M nodes:
//!
//! f(x) ≈ (r/M)·\[½ F(r) e^{rx} + Σ_{k=1}^{M−1} Re(e^{x s_k} F(s_k)(1 + iσ_k))\],
//!
//! s_k = r θ_k (cot θ_k + i), σ_k = θ_k + (θ_k cot θ_k − 1) cot θ_k,
//! θ_k = kπ/M, r = 2M/(5x), with F(s) = L(s)/s for the CDF (x at or below
//! the mean) and F(s) = (1 − L(s))/s for P(Q > x) (above the mean, so that
//! a small upper tail is not the difference of two numbers near 1). Along
//! the contour e^{xs} decays, so the trapezoid rule in θ converges
//! geometrically (about 10^{−0.6M}) while rounding grows as e^{0.4M}·ε:
//! M = [`CONTOUR_NODES`].0 = 24 gives about 1e−12 absolute.
//!
//! The contour cannot follow a distribution that is nearly shifted — a
//! lumped term of many degrees of freedom whose mean lies above x makes
//! L(s) grow like e^{−μs} in the left half-plane (Talbot's method fails on
//! delays). Each value is therefore computed with [`CONTOUR_NODES`].0 and
//! .1 (= 32) nodes; where the two differ by more than [`CONTOUR_AGREE`], or
//! either is not finite, Imhof's integral answers. `tests/edf.rs` checks
//! the contour against Imhof's integral, Ruben's series and seeded Monte
//! Carlo.
//!
//! # Ruben's series
//!
//! Where the weights are few or alike, [`cdf`] uses instead the exact
//! expansion of H. Ruben, "Probability content of regions under spherical
//! normal distributions IV", Ann. Math. Statist. 33 (1962) 542–570, in the
//! form of R. W. Farebrother, Applied Statistics algorithm AS 204 (1984):
//! a mixture of χ²_{k+2j} CDFs with positive weights summing to one, whose
//! truncation error is the weight left out. It converges geometrically with
//! ratio 1 − λ_min/λ_max and is chosen when at most [`RUBEN_MAX_TERMS`]
//! terms reach a remainder of 1e−10; Talbot's contour otherwise (many
//! weights spread widely), Imhof's integral where the contour does not
//! confirm itself.

use crate::error::{Error, Result};

/// Target bound on the truncated part of Imhof's integral.
pub const TAIL_TOLERANCE: f64 = 1e-7;
/// At most this many quadrature panels per CDF value.
pub const MAX_PANELS: usize = 400_000;

/// The node counts of the two contour sums each CDF value by Talbot's
/// contour is computed with (module notes).
pub const CONTOUR_NODES: (usize, usize) = (24, 32);
/// The two contour sums must agree within this (absolute, on the CDF) for
/// the contour's value to stand; Imhof's integral answers otherwise.
pub const CONTOUR_AGREE: f64 = 1e-9;

/// Gauss–Legendre nodes and weights on [−1, 1], 8 points (Abramowitz &
/// Stegun Table 25.4).
const GL8: [(f64, f64); 4] = [
    (0.183_434_642_495_65, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887),
    (0.796_666_477_413_627, 0.222_381_034_453_374),
    (0.960_289_856_497_536, 0.101_228_536_290_376),
];

/// P(Σ λ_i χ²₁,i ≤ x) for positive weights `lambdas` (Ruben 1962, Talbot contour or Imhof 1961; module
/// notes). Weights that are not positive and finite are ignored; `x ≤ 0`
/// gives 0.
///
/// ```
/// use tauwise::stats::weighted_chi2::cdf;
/// // Two unit weights: χ²₂, an exponential with mean 2 (analytic).
/// let p = cdf(&[1.0, 1.0], 2.0);
/// assert!((p - (1.0 - (-1.0f64).exp())).abs() < 1e-6);
/// ```
pub fn cdf(lambdas: &[f64], x: f64) -> f64 {
    let terms: Vec<(f64, f64)> = lambdas.iter().map(|&l| (l, 1.0)).collect();
    cdf_with(&terms, x)
}

/// P(Σ_i λ_i·χ²_{h_i} ≤ x) for (weight λ_i, degrees of freedom h_i) pairs,
/// h_i > 0 not necessarily whole (a χ²_h is a gamma variable): the same
/// methods as [`cdf`] with multiplicities (Imhof 1961 eq. 3.2 and
/// Farebrother 1984 both carry them). Pairs that are not positive and
/// finite are ignored.
pub fn cdf_with(terms: &[(f64, f64)], x: f64) -> f64 {
    let lam = clean(terms);
    if lam.is_empty() || !(x > 0.0) {
        return if x > 0.0 { 1.0 } else { 0.0 };
    }
    // Prepared once per set of weights and kept for the next call on the
    // same set (an integral over another variable asks for many values of
    // one CDF); the same result as preparing it anew.
    Method::remembered(&lam).cdf(x)
}

/// The method [`cdf_with`] evaluates the CDF of one set of (cleaned, not
/// empty) weights with, prepared once: Ruben's mixture with its
/// coefficients already computed, or Imhof's integral. A quantile asks for
/// the CDF of the same weights a few dozen times; the coefficients a_j
/// depend on the weights only (not on x), so computing them once turns each
/// further CDF value from O(J²) into O(J) work, with bit-for-bit the same
/// result (the same operations in the same order).
enum Method {
    Ruben(RubenMixture),
    /// Talbot's contour, Imhof's integral where it does not confirm itself.
    Contour(Vec<(f64, f64)>),
}

impl Method {
    fn of(lam: Vec<(f64, f64)>) -> Self {
        match ruben_terms(&lam) {
            Some(j) => Method::Ruben(RubenMixture::new(&lam, j)),
            None => Method::Contour(lam),
        }
    }

    /// [`Method::of`], remembered per thread for the last set of weights
    /// (compared bit for bit, so the answer is the one `of` gives).
    fn remembered(lam: &[(f64, f64)]) -> std::rc::Rc<Self> {
        type Last = Option<(Vec<(u64, u64)>, std::rc::Rc<Method>)>;
        thread_local! {
            static LAST: std::cell::RefCell<Last> = const { std::cell::RefCell::new(None) };
        }
        let key: Vec<(u64, u64)> = lam
            .iter()
            .map(|(l, h)| (l.to_bits(), h.to_bits()))
            .collect();
        LAST.with(|last| {
            let mut last = last.borrow_mut();
            if let Some((k, m)) = last.as_ref() {
                if *k == key {
                    return m.clone();
                }
            }
            let m = std::rc::Rc::new(Method::of(lam.to_vec()));
            *last = Some((key, m.clone()));
            m
        })
    }

    fn cdf(&self, x: f64) -> f64 {
        match self {
            Method::Ruben(r) => r.cdf(x),
            Method::Contour(lam) => contour_or_imhof(lam, x),
        }
    }
}

fn clean(terms: &[(f64, f64)]) -> Vec<(f64, f64)> {
    terms
        .iter()
        .copied()
        .filter(|(l, h)| l.is_finite() && *l > 0.0 && h.is_finite() && *h > 0.0)
        .collect()
}

/// [`cdf`] by Imhof's integral alone (for cross-checks).
pub fn imhof_cdf(lambdas: &[f64], x: f64) -> f64 {
    let lam = clean(&lambdas.iter().map(|&l| (l, 1.0)).collect::<Vec<_>>());
    if lam.is_empty() || !(x > 0.0) {
        return if x > 0.0 { 1.0 } else { 0.0 };
    }
    imhof(&lam, x)
}

/// [`cdf`] by Talbot's contour alone with `nodes` nodes (for
/// cross-checks; `None` where the sum is not finite).
pub fn contour_cdf(lambdas: &[f64], x: f64, nodes: usize) -> Option<f64> {
    let lam = clean(&lambdas.iter().map(|&l| (l, 1.0)).collect::<Vec<_>>());
    if lam.is_empty() || !(x > 0.0) {
        return Some(if x > 0.0 { 1.0 } else { 0.0 });
    }
    contour(&lam, x, nodes.max(2))
}

/// The CDF [`cdf_with`] takes where Ruben's series is long (`lam` cleaned,
/// not empty): Talbot's contour with [`CONTOUR_NODES`].0 nodes where it
/// agrees with [`CONTOUR_NODES`].1 within [`CONTOUR_AGREE`], otherwise
/// Imhof's integral (module notes).
fn contour_or_imhof(lam: &[(f64, f64)], x: f64) -> f64 {
    match (
        contour(lam, x, CONTOUR_NODES.0),
        contour(lam, x, CONTOUR_NODES.1),
    ) {
        (Some(a), Some(b)) if (a - b).abs() <= CONTOUR_AGREE => a.clamp(0.0, 1.0),
        _ => imhof(lam, x),
    }
}

/// P(Σλ_iχ²_{h_i} ≤ x) by the fixed Talbot contour with `m` nodes
/// (module notes): the CDF from F(s) = L(s)/s at x up to the mean, one
/// minus the upper tail from F(s) = (1 − L(s))/s beyond. Each term
/// e^{xs}F(s) is formed from one exponent (x·s + ln L(s)), so that a large
/// L(s) against a small e^{xs} does not overflow. Not clamped; `None` when
/// not finite.
fn contour(lam: &[(f64, f64)], x: f64, m: usize) -> Option<f64> {
    use rustfft::num_complex::Complex64 as C;
    let mean: f64 = lam.iter().map(|&(l, h)| l * h).sum();
    let upper = x > mean;
    let mf = m as f64;
    let r = 2.0 * mf / (5.0 * x);
    // e^{xs}·F(s).
    let term = |s: C| -> C {
        let mut log_l = C::new(0.0, 0.0);
        for &(l, h) in lam {
            log_l -= 0.5 * h * (1.0 + 2.0 * l * s).ln();
        }
        let both = (x * s + log_l).exp();
        if upper {
            ((x * s).exp() - both) / s
        } else {
            both / s
        }
    };
    let mut sum = 0.5 * term(C::new(r, 0.0)).re;
    for k in 1..m {
        let theta = k as f64 * std::f64::consts::PI / mf;
        let cot = theta.cos() / theta.sin();
        let s = C::new(r * theta * cot, r * theta);
        let sigma = theta + (theta * cot - 1.0) * cot;
        sum += (term(s) * C::new(1.0, sigma)).re;
    }
    let v = r / mf * sum;
    let p = if upper { 1.0 - v } else { v };
    p.is_finite().then_some(p)
}

/// [`cdf`] by Ruben's series alone, with up to `terms` terms (for
/// cross-checks).
pub fn ruben_cdf(lambdas: &[f64], x: f64, terms: usize) -> f64 {
    let lam = clean(&lambdas.iter().map(|&l| (l, 1.0)).collect::<Vec<_>>());
    if lam.is_empty() || !(x > 0.0) {
        return if x > 0.0 { 1.0 } else { 0.0 };
    }
    ruben(&lam, x, terms.max(1))
}

/// Ruben's series is used when it needs at most this many terms.
pub const RUBEN_MAX_TERMS: usize = 3000;

/// The number of terms Ruben's series needs for a remainder below 1e−10,
/// ln(1e−10)/ln γ with γ = 1 − β/λ_max, β = λ_min; `None` above
/// [`RUBEN_MAX_TERMS`].
fn ruben_terms(lam: &[(f64, f64)]) -> Option<usize> {
    let (lo, hi) = lam.iter().fold((f64::INFINITY, 0.0f64), |(a, b), &(l, _)| {
        (a.min(l), b.max(l))
    });
    let gamma = 1.0 - lo / hi;
    if gamma <= 0.0 {
        return Some(1);
    }
    let j = ((1e-10f64).ln() / gamma.ln()).ceil();
    (j.is_finite() && j <= RUBEN_MAX_TERMS as f64).then_some(j as usize + 1)
}

/// Ruben's (1962) expansion in χ² distributions, in the form of
/// Farebrother (1984, Applied Statistics algorithm AS 204) for the central
/// case: with β = λ_min and γ_i = 1 − β/λ_i,
/// P(Q ≤ x) = Σ_j a_j·F_{k+2j}(x/β), a_0 = Π (β/λ_i)^{1/2},
/// a_j = (1/(2j)) Σ_{r<j} g_{j−r} a_r, g_s = Σ_i γ_i^s. The a_j are
/// positive and sum to 1, so the remainder after J terms is at most
/// 1 − Σ_{j<J} a_j. Fast where the weights are few or alike (k = 2, 3: the
/// case Imhof's integral handles worst).
fn ruben(lam: &[(f64, f64)], x: f64, terms: usize) -> f64 {
    RubenMixture::new(lam, terms).cdf(x)
}

/// The mixture of Ruben's expansion for one set of weights ([`ruben`]):
/// k = Σh_i, β = λ_min and the coefficients a_0 … a_J, J the first index at
/// which the weight left out, 1 − Σ_{j≤J} a_j, falls below 1e−11 (or the
/// last of `terms`). The coefficients depend on the weights only, so one
/// mixture serves every x a quantile search asks about.
struct RubenMixture {
    k: f64,
    beta: f64,
    a: Vec<f64>,
    /// ln Γ(ν_j/2 + 1) and ν_j·ln2/2 for ν_j = k + 2(j − 1), j ≥ 1 (index
    /// j − 1): the x-independent parts of the recursion's correction.
    ln_gammas: Vec<f64>,
    half_nu_ln2: Vec<f64>,
}

impl RubenMixture {
    fn new(lam: &[(f64, f64)], terms: usize) -> Self {
        use statrs::function::gamma::ln_gamma;
        let k: f64 = lam.iter().map(|t| t.1).sum();
        let beta = lam.iter().map(|t| t.0).fold(f64::INFINITY, f64::min);
        let gammas: Vec<(f64, f64)> = lam.iter().map(|&(l, h)| (1.0 - beta / l, h)).collect();
        let mut a = Vec::with_capacity(terms);
        a.push(
            lam.iter()
                .map(|&(l, h)| 0.5 * h * (beta / l).ln())
                .sum::<f64>()
                .exp(),
        );
        let mut powers: Vec<f64> = gammas.iter().map(|t| t.0).collect();
        let mut g = Vec::with_capacity(terms);
        let mut mass = a[0];
        for j in 1..terms {
            g.push(
                powers
                    .iter()
                    .zip(&gammas)
                    .map(|(p, t)| p * t.1)
                    .sum::<f64>(),
            );
            for (p, t) in powers.iter_mut().zip(&gammas) {
                *p *= t.0;
            }
            let aj = (0..j).map(|r| g[j - r - 1] * a[r]).sum::<f64>() / (2.0 * j as f64);
            a.push(aj);
            mass += aj;
            if 1.0 - mass < 1e-11 {
                break;
            }
        }
        let (ln_gammas, half_nu_ln2) = (1..a.len())
            .map(|j| {
                let nu = k + 2.0 * (j - 1) as f64;
                (ln_gamma(0.5 * nu + 1.0), 0.5 * nu * std::f64::consts::LN_2)
            })
            .unzip();
        Self {
            k,
            beta,
            a,
            ln_gammas,
            half_nu_ln2,
        }
    }

    /// Σ_j a_j·F_{k+2j}(x/β), with F_{k+2j} by the recursion
    /// F_{ν+2}(y) = F_ν(y) − y^{ν/2} e^{−y/2} / (2^{ν/2} Γ(ν/2 + 1)).
    fn cdf(&self, x: f64) -> f64 {
        use statrs::distribution::{ChiSquared, ContinuousCDF};
        let k = self.k;
        let y = x / self.beta;
        let mut f = ChiSquared::new(k).map_or(f64::NAN, |c| c.cdf(y));
        let mut total = self.a[0] * f;
        let ln_y = y.ln();
        for (j, &aj) in self.a.iter().enumerate().skip(1) {
            let nu = k + 2.0 * (j - 1) as f64;
            let log_term =
                0.5 * nu * ln_y - 0.5 * y - self.half_nu_ln2[j - 1] - self.ln_gammas[j - 1];
            f = (f - log_term.exp()).max(0.0);
            total += aj * f;
        }
        total.clamp(0.0, 1.0)
    }
}

/// Imhof's integral (module notes).
fn imhof(lam: &[(f64, f64)], x: f64) -> f64 {
    let total: f64 = lam.iter().map(|&(l, h)| l * h).sum();
    let mut sorted = lam.to_vec();
    sorted.sort_by(|a, b| b.0.total_cmp(&a.0));
    // Integrand sin θ(u)/(u ρ(u)); at u → 0 it tends to ½(Σhλ − x).
    let f = |u: f64| -> f64 {
        if u == 0.0 {
            return 0.5 * (total - x);
        }
        let mut theta = -0.5 * x * u;
        let mut log_rho = 0.0;
        for &(l, h) in lam {
            let lu = l * u;
            theta += 0.5 * h * lu.atan();
            log_rho += 0.25 * h * (lu * lu).ln_1p();
        }
        theta.sin() / (u * log_rho.exp())
    };
    // Imhof's bound on the remainder beyond u, over the weights with λu ≥ 1.
    let tail = |u: f64| -> f64 {
        let mut log_prod = 0.0;
        let mut k = 0.0;
        for &(l, h) in &sorted {
            if l * u < 1.0 {
                break;
            }
            log_prod -= 0.5 * h * (l * u).ln();
            k += h;
        }
        if k == 0.0 {
            f64::INFINITY
        } else {
            2.0 / (std::f64::consts::PI * k) * log_prod.exp()
        }
    };
    let h = 2.0 * std::f64::consts::PI / (total + x);
    let mut integral = 0.0;
    let mut a = 0.0;
    for panel in 0..MAX_PANELS {
        let mid = a + 0.5 * h;
        let mut s = 0.0;
        for &(t, w) in &GL8 {
            s += w * (f(mid - 0.5 * h * t) + f(mid + 0.5 * h * t));
        }
        integral += 0.5 * h * s;
        a += h;
        // Check the bound every few panels (it needs a sort-order walk).
        if panel % 8 == 7 && tail(a) < TAIL_TOLERANCE {
            break;
        }
    }
    let p_above = 0.5 + integral / std::f64::consts::PI;
    (1.0 - p_above).clamp(0.0, 1.0)
}

/// The p-quantile of Σ λ_i χ²₁,i (positive weights; module notes), by
/// bisection with secant steps on [`cdf`]. A single weight is λ·χ²₁ and is
/// answered exactly from [`crate::stats::interval::chi2_quantile`].
///
/// Errors when p is not inside (0, 1) or no weight is positive.
///
/// ```
/// use tauwise::stats::weighted_chi2::quantile;
/// use tauwise::stats::interval::chi2_quantile;
/// // Ten equal weights: χ²₁₀ (NIST/SEMATECH e-Handbook χ² table: 3.247).
/// let q = quantile(&[1.0; 10], 0.025).unwrap();
/// assert!((q - chi2_quantile(0.025, 10.0).unwrap()).abs() < 1e-5);
/// ```
pub fn quantile(lambdas: &[f64], p: f64) -> Result<f64> {
    let terms: Vec<(f64, f64)> = lambdas.iter().map(|&l| (l, 1.0)).collect();
    quantile_with(&terms, p)
}

/// The p-quantile of Σ λ_i χ²_{h_i} for (weight, degrees of freedom)
/// pairs ([`cdf_with`]).
pub fn quantile_with(terms: &[(f64, f64)], p: f64) -> Result<f64> {
    if !(p > 0.0 && p < 1.0) {
        return Err(Error::invalid(format!(
            "quantile probability must be in (0, 1), got {p}"
        )));
    }
    let lam = clean(terms);
    if lam.is_empty() {
        return Err(Error::invalid(
            "a weighted χ² sum needs at least one positive weight",
        ));
    }
    if lam.len() == 1 {
        let (l, h) = lam[0];
        return Ok(l * crate::stats::interval::chi2_quantile(p, h)?);
    }
    // The weights' CDF, prepared once for the whole search (and kept for
    // the next search on the same weights: a two-sided interval asks for
    // two quantiles of each).
    let method = Method::remembered(&lam);
    search_quantile(&lam, p, |x| method.cdf(x))
}

/// The p-quantile search of [`quantile_with`] on `lam` (cleaned, two terms
/// or more) with its CDF `cdf_at`: from the χ² with the same first two
/// moments, a bracket by steps of 1.25, then regula falsi (Illinois) with a
/// bisection safeguard.
fn search_quantile(lam: &[(f64, f64)], p: f64, cdf_at: impl Fn(f64) -> f64) -> Result<f64> {
    let total: f64 = lam.iter().map(|&(l, h)| l * h).sum();
    let sq: f64 = lam.iter().map(|&(l, h)| l * l * h).sum();
    // Start from the χ² with the same first two moments (scale g, ν):
    // Q ≈ g·χ²_ν with g = Σhλ²/Σhλ, ν = (Σhλ)²/Σhλ².
    let nu = total * total / sq;
    let g = sq / total;
    let guess = g * crate::stats::interval::chi2_quantile(p, nu)?;
    // Bracket around the guess by steps of 1.25.
    let x0 = guess.max(1e-300);
    let f0 = cdf_at(x0) - p;
    let (mut lo, mut hi, mut f_lo, mut f_hi) = (x0, x0, f0, f0);
    let mut tries = 0;
    while f_hi < 0.0 && tries < 400 {
        lo = hi;
        f_lo = f_hi;
        hi *= 1.25;
        f_hi = cdf_at(hi) - p;
        tries += 1;
    }
    while f_lo >= 0.0 && tries < 400 {
        hi = lo;
        f_hi = f_lo;
        lo /= 1.25;
        f_lo = cdf_at(lo) - p;
        tries += 1;
    }
    if f_hi < 0.0 || f_lo >= 0.0 {
        return Err(Error::invalid(format!(
            "weighted χ² quantile at p = {p}: no bracket found"
        )));
    }
    // Regula falsi (Illinois) with bisection safeguard.
    let mut x = hi;
    for it in 0..100 {
        let secant = hi - f_hi * (hi - lo) / (f_hi - f_lo);
        x = if it % 3 == 2 || !(secant > lo && secant < hi) {
            0.5 * (lo + hi)
        } else {
            secant
        };
        let fx = cdf_at(x) - p;
        if fx.abs() < 1e-8 || (hi - lo) < 1e-9 * hi {
            break;
        }
        if fx < 0.0 {
            lo = x;
            f_lo = fx;
            f_hi *= 0.5;
        } else {
            hi = x;
            f_hi = fx;
            f_lo *= 0.5;
        }
    }
    Ok(x)
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ChiSquared, ContinuousCDF};

    /// Equal weights give χ²_k exactly (analytic), for several k.
    #[test]
    fn equal_weights_are_chi2() {
        for &k in &[2usize, 3, 5, 10, 40] {
            let chi = ChiSquared::new(k as f64).unwrap();
            for &x in &[0.2, 1.0, k as f64, 2.0 * k as f64 + 3.0] {
                let got = cdf(&vec![1.0; k], x);
                assert!((got - chi.cdf(x)).abs() < 2e-6, "k={k} x={x}: {got}");
            }
        }
    }

    /// The textbook form of Ruben's series as it stood before the mixture's
    /// coefficients were computed once per set of weights: the a_j
    /// recomputed inside every CDF value (Farebrother 1984, AS 204).
    fn ruben_direct(lam: &[(f64, f64)], x: f64, terms: usize) -> f64 {
        use statrs::distribution::{ChiSquared, ContinuousCDF};
        use statrs::function::gamma::ln_gamma;
        let k: f64 = lam.iter().map(|t| t.1).sum();
        let beta = lam.iter().map(|t| t.0).fold(f64::INFINITY, f64::min);
        let y = x / beta;
        let gammas: Vec<(f64, f64)> = lam.iter().map(|&(l, h)| (1.0 - beta / l, h)).collect();
        let mut a = Vec::with_capacity(terms);
        a.push(
            lam.iter()
                .map(|&(l, h)| 0.5 * h * (beta / l).ln())
                .sum::<f64>()
                .exp(),
        );
        let mut powers: Vec<f64> = gammas.iter().map(|t| t.0).collect();
        let mut g = Vec::with_capacity(terms);
        // F_{k+2j}(y) by the recursion F_{ν+2} = F_ν − y^{ν/2} e^{−y/2} / (2^{ν/2} Γ(ν/2 + 1)).
        let mut f = ChiSquared::new(k).map_or(f64::NAN, |c| c.cdf(y));
        let mut total = a[0] * f;
        let mut mass = a[0];
        for j in 1..terms {
            g.push(
                powers
                    .iter()
                    .zip(&gammas)
                    .map(|(p, t)| p * t.1)
                    .sum::<f64>(),
            );
            for (p, t) in powers.iter_mut().zip(&gammas) {
                *p *= t.0;
            }
            let aj = (0..j).map(|r| g[j - r - 1] * a[r]).sum::<f64>() / (2.0 * j as f64);
            a.push(aj);
            let nu = k + 2.0 * (j - 1) as f64;
            let log_term = 0.5 * nu * y.ln()
                - 0.5 * y
                - 0.5 * nu * std::f64::consts::LN_2
                - ln_gamma(0.5 * nu + 1.0);
            f = (f - log_term.exp()).max(0.0);
            total += aj * f;
            mass += aj;
            if 1.0 - mass < 1e-11 {
                break;
            }
        }
        total.clamp(0.0, 1.0)
    }

    /// The CDF as it stood: method chosen and (for Ruben) the coefficients
    /// computed anew for every x.
    fn cdf_direct(terms: &[(f64, f64)], x: f64) -> f64 {
        let lam = clean(terms);
        if lam.is_empty() || !(x > 0.0) {
            return if x > 0.0 { 1.0 } else { 0.0 };
        }
        match ruben_terms(&lam) {
            Some(j) => ruben_direct(&lam, x, j),
            None => contour_or_imhof(&lam, x),
        }
    }

    /// Weight sets of the shapes the pivot quantiles ask about: few and
    /// alike, one dominant among many, a lumped gamma term with a
    /// fractional degree of freedom, and a wide spread that goes to Imhof.
    fn weight_sets() -> Vec<Vec<(f64, f64)>> {
        let mut dominant = vec![(1.0, 1.0)];
        dominant.extend(std::iter::repeat((0.08, 1.0)).take(100));
        vec![
            vec![(1.0, 1.0), (0.3, 1.0)],
            vec![(1.0, 1.0), (0.3, 1.0), (0.1, 1.0)],
            vec![(0.4, 1.0), (0.35, 1.0), (0.2, 1.0), (0.012, 4.17)],
            vec![(0.2, 1.0), (0.11, 2.5), (0.07, 1.0), (0.0031, 37.3)],
            dominant,
            (1..60).map(|i| (1.0 / (i * i) as f64, 1.0)).collect(),
        ]
    }

    /// Weight sets where Ruben's series is long, so the contour answers:
    /// the slow case of Imhof's integral from `stability --dev theoh` on a
    /// 10^5-point record (a few large eigenvalues of Theo1's form at
    /// T/τ ≈ 4 and one lumped term), one with more weights, a wide spread,
    /// and a nearly shifted one (a lumped term of 300 degrees of freedom)
    /// where the contour must give way to Imhof's integral below its mean.
    fn contour_sets() -> Vec<Vec<(f64, f64)>> {
        vec![
            vec![
                (0.347786407589415, 1.0),
                (0.30134143103895505, 1.0),
                (0.15779800335075048, 1.0),
                (0.05787034425234455, 1.0),
                (0.025767595719323064, 1.0),
                (0.02382864047034923, 1.0),
                (0.015758659399150846, 1.0),
                (0.013128092672917265, 1.0),
                (0.007566993371279785, 1.0),
                (0.0074700601634341765, 1.0),
                (0.007029122399506108, 1.0),
                (0.0018732244621520622, 18.49999841063442),
            ],
            vec![
                (0.1571929692436698, 1.0),
                (0.15432149250952243, 1.0),
                (0.13197458012052418, 1.0),
                (0.12082365318958749, 1.0),
                (0.09616267101544614, 1.0),
                (0.07907605505214553, 1.0),
                (0.04765024252858258, 1.0),
                (0.047188674912327894, 1.0),
                (0.02570854210478926, 1.0),
                (0.014467306209846256, 1.0),
                (0.012950984392095617, 1.0),
                (0.0031657352728430995, 1.0),
                (0.001138243005584211, 33.87475502940092),
            ],
            vec![(1.0, 1.0), (2e-6, 500.0)],
            vec![(0.9, 1.0), (0.1 / 300.0, 300.0)],
        ]
    }

    /// P(λ₁χ²₁ + g·χ²_h ≤ x) by the direct integral over the second term
    /// (analytic: E_G\[F_{χ²₁}((x − 2gG)/λ₁)\], G ~ Gamma(h/2, 1), F_{χ²₁}(y)
    /// = erf(√(y/2))), the midpoint rule on ±12 standard deviations of G.
    fn two_term_cdf(l1: f64, (g, h): (f64, f64), x: f64) -> f64 {
        use statrs::function::{erf::erf, gamma::ln_gamma};
        let a = 0.5 * h;
        let (lo, hi) = ((a - 12.0 * a.sqrt()).max(0.0), a + 12.0 * a.sqrt());
        let n = 200_000;
        let d = (hi - lo) / n as f64;
        let lg = ln_gamma(a);
        (0..n)
            .map(|i| {
                let gg = lo + (i as f64 + 0.5) * d;
                let y = (x - 2.0 * g * gg) / l1;
                let f = if y > 0.0 { erf((0.5 * y).sqrt()) } else { 0.0 };
                ((a - 1.0) * gg.ln() - gg - lg).exp() * d * f
            })
            .sum()
    }

    /// Talbot's contour (the fast route) against Imhof's integral (the
    /// route it replaces, Imhof 1961) — within 1e−6 absolute on the CDF,
    /// from the far lower tail to 26 times the mean — and against Ruben's
    /// exact series run long enough (remainder below 1e−10; Farebrother
    /// 1984) where it can be: within 1e−9; on two terms spread widely or
    /// nearly shifted (where Imhof's integral itself errs by up to 2e−6),
    /// against the direct integral over the second term: within 1e−8. The
    /// quantiles at the levels the intervals and the product tables use
    /// agree with those of Imhof's integral (p = 0.025 … 0.975) and of
    /// Ruben's series (p = 1e−6 … 1 − 1e−6) within 1e−6 relative.
    #[test]
    fn contour_agrees_with_imhof_and_ruben() {
        for (n, w) in contour_sets().into_iter().enumerate() {
            let lam = clean(&w);
            let mean: f64 = lam.iter().map(|(l, h)| l * h).sum();
            for &f in &[0.02, 0.05, 0.1, 0.3, 0.6, 1.0, 1.5, 3.0, 6.0, 12.0, 26.0] {
                let x = f * mean;
                let got = contour_or_imhof(&lam, x);
                if n < 2 {
                    let im = imhof(&lam, x);
                    assert!(
                        (got - im).abs() < 1e-6,
                        "set {n} x={x}: {got} vs Imhof {im}"
                    );
                } else {
                    // Two terms: the direct integral over the second. Where
                    // the contour gives way (the shifted set below its lumped
                    // term's mean), the value is Imhof's integral's, whose
                    // own error there reaches 6e−6.
                    let want = two_term_cdf(lam[0].0, lam[1], x);
                    let stands = matches!(
                        (contour(&lam, x, CONTOUR_NODES.0), contour(&lam, x, CONTOUR_NODES.1)),
                        (Some(a), Some(b)) if (a - b).abs() <= CONTOUR_AGREE
                    );
                    if stands {
                        assert!((got - want).abs() < 1e-8, "set {n} x={x}: {got} vs {want}");
                    } else {
                        assert_eq!(got.to_bits(), imhof(&lam, x).to_bits());
                        assert!((got - want).abs() < 1e-5, "set {n} x={x}: {got} vs {want}");
                    }
                }
                if n < 2 {
                    let rb = ruben(&lam, x, 6000);
                    assert!(
                        (got - rb).abs() < 1e-9,
                        "set {n} x={x}: {got} vs Ruben {rb}"
                    );
                }
            }
            for &p in &[1e-6, 0.025, 0.1585, 0.5, 0.8415, 0.975, 1.0 - 1e-6] {
                let got = quantile_with(&w, p).unwrap();
                // Imhof's integral is accurate to about 1e−7 absolute, too
                // coarse for a quantile at p = 1e−6; Ruben's series is not.
                if n < 2 && (0.01..=0.99).contains(&p) {
                    let want = search_quantile(&lam, p, |x| imhof(&lam, x)).unwrap();
                    assert!(
                        (got / want - 1.0).abs() < 1e-6,
                        "set {n} p={p}: {got} vs {want}"
                    );
                }
                if n < 2 {
                    let want = search_quantile(&lam, p, |x| ruben(&lam, x, 6000)).unwrap();
                    assert!(
                        (got / want - 1.0).abs() < 1e-6,
                        "set {n} p={p}: {got} vs {want}"
                    );
                }
            }
        }
        // The nearly shifted set takes Imhof's integral below its lumped
        // term's mean (the contour's two sums disagree there).
        let shifted = clean(&contour_sets()[3]);
        let a = contour(&shifted, 0.05, CONTOUR_NODES.0);
        let b = contour(&shifted, 0.05, CONTOUR_NODES.1);
        assert!(!matches!((a, b), (Some(a), Some(b)) if (a - b).abs() <= CONTOUR_AGREE));
    }

    /// Computing Ruben's coefficients once per set of weights is an exact
    /// speed-up: every CDF value and every quantile is bit-for-bit the one
    /// of the direct form (each coefficient recomputed for every x; the
    /// quantile by the same search on that CDF).
    #[test]
    fn prepared_mixture_equals_direct_series_bit_for_bit() {
        for w in weight_sets() {
            let lam = clean(&w);
            for &x in &[1e-3, 0.05, 0.3, 0.9, 1.0, 1.7, 4.0, 11.0] {
                assert_eq!(
                    cdf_with(&w, x).to_bits(),
                    cdf_direct(&w, x).to_bits(),
                    "{w:?} x={x}"
                );
                if let Some(j) = ruben_terms(&lam) {
                    assert_eq!(
                        ruben(&lam, x, j).to_bits(),
                        ruben_direct(&lam, x, j).to_bits()
                    );
                }
            }
            for &p in &[0.025, 0.1585, 0.5, 0.8415, 0.975] {
                let got = quantile_with(&w, p).unwrap();
                let want = search_quantile(&lam, p, |x| cdf_direct(&lam, x)).unwrap();
                assert_eq!(got.to_bits(), want.to_bits(), "{w:?} p={p}");
            }
        }
    }
}
