//! Fit of a power-law model (h_α ≥ 0, α = 2 … −2) to measured variances or
//! to S_y(f) points.
//!
//! # Variances
//!
//! Each point i is a measured variance v_i of kind AVAR, MVAR or HVAR at τ_i
//! (τ0_i its sampling interval) with a weight w_i, normally its EDF (the
//! variance of ln σ̂² is about 2/EDF). The model value is linear in h:
//! p_i(h) = Σ_α h_α B_α(i), where B_α(i) is the variance of the unit power
//! law h_α = 1 at that point. For n = τ/τ0 < 64 (or 2πf_hτ < 200) B is the
//! numerical integral of the transfer function ([`super::response`]),
//! which is exact at short τ — the table's MVAR forms are large-n limits
//! (MVAR of WFM is h_0(1 + 1/n²)/(4τ), not h_0/(4τ)) — and beyond that the
//! IEEE Std 1139 closed forms ([`PowerLaw::avar`], [`PowerLaw::mvar`],
//! [`PowerLaw::hvar`]).
//!
//! The fit minimises the weighted squared log ratio
//! J(h) = Σ w_i ln²(p_i(h)/v_i) over h ≥ 0 by Gauss–Newton steps, each a
//! non-negative least-squares problem: linearising ln p around the current
//! p gives min Σ w_i (B(i)·h/p_i − (1 − ln(p_i/v_i)))² over h ≥ 0, solved by
//! Lawson–Hanson ([`nnls`]); the first step (p = v) is the fit of relative
//! residuals. A step that raises J is shortened (h stays ≥ 0 on the
//! segment). Using AVAR and MVAR points together separates white from
//! flicker PM, whose AVAR both fall as τ^−2 but whose MVAR do not.
//!
//! # Spectra
//!
//! [`fit_sy`] fits S_y(f) = Σ h_α f^α to (f, S_y) points the same way, with
//! B_α(i) = f_i^α.

use super::response::variance_numeric;
use super::PowerLaw;
use crate::deviation::Estimator;
use crate::error::{Error, Result};
use nalgebra::{DMatrix, DVector};

/// One measured variance to fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitPoint {
    /// The estimator whose variance the point holds (its
    /// [`Estimator::variance_family`] picks the closed form: `oadev`,
    /// `mdev`, `ohdev`, …).
    pub kind: Estimator,
    /// Averaging time τ in seconds.
    pub tau: f64,
    /// Sampling interval τ0 of the record, seconds (τ = nτ0).
    pub tau0: f64,
    /// The measured variance (the deviation squared), > 0.
    pub var: f64,
    /// Weight, normally the point's EDF (> 0).
    pub weight: f64,
}

/// The τ range over which one term gives the largest share of the model's
/// Allan variance (closed forms of [`PowerLaw::avar`]).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Dominant {
    /// α of the term.
    pub alpha: i32,
    /// Start of the range, seconds.
    pub tau_from: f64,
    /// End of the range, seconds.
    pub tau_to: f64,
}

/// Why a term is not in a fitted model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LeftOutReason {
    /// The non-negative fit put h_α at zero (the data ask for less than
    /// nothing of it).
    AtZero,
    /// h_α came out below [`SIGNIFICANCE`] standard errors: the data do not
    /// show it, so it was removed and the model refitted without it.
    NotSignificant,
}

/// A term left out of a fitted model, and why.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LeftOut {
    /// α of the term.
    pub alpha: i32,
    /// Its h_α in the fit that removed it (0 when at zero).
    pub h: f64,
    /// Its standard error there, when one could be computed.
    pub std_err: Option<f64>,
    /// Why it was left out.
    pub reason: LeftOutReason,
}

/// A term is kept only when h_α ≥ this many standard errors (2σ).
pub const SIGNIFICANCE: f64 = 2.0;

/// The covariance of a variance fit is multiplied by this for the
/// correlation of neighbouring octave points of one curve (see
/// [`fit_variances`]). Seeded Monte Carlo (`tests/model.rs`): without it,
/// on records of WFM + FFM, |ĥ − h| exceeded 2 standard errors in a quarter
/// of the fits instead of one in twenty.
pub const NEIGHBOUR_INFLATION: f64 = 2.5;

/// A fitted power-law model.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ModelFit {
    /// The fitted h_α (zero where a term is not in the fit) and f_h.
    pub model: PowerLaw,
    /// `fitted[k]`: h_α with α = k − 2 came out positive (is in the model).
    pub fitted: [bool; 5],
    /// Standard error of each fitted h_α (`None` for a term not in the
    /// model, and for spectrum fits); see [`fit_variances`].
    pub std_err: [Option<f64>; 5],
    /// The terms that were candidates but are not in the model, and why.
    pub left_out: Vec<LeftOut>,
    /// Residual per input point, 10·log10(model/measured) in dB.
    pub residual_db: Vec<f64>,
    /// The dominant term over consecutive τ ranges, in increasing τ. For
    /// variances the ranges cover the fitted τ; for [`fit_sy`] they cover
    /// τ = 1/(2π f_max) … 1/(2π f_min).
    pub dominant: Vec<Dominant>,
}

/// Below this n = τ/τ0 the basis is integrated numerically.
const NUMERIC_BELOW_N: f64 = 64.0;
/// Below this 2πf_hτ the FPM/WPM basis is integrated numerically.
const NUMERIC_BELOW_FH: f64 = 200.0;

/// The variance of the unit power law h_α = 1 at a point (module notes).
/// The numerical integrals are remembered per thread (a fit of many
/// records on one τ grid, as a Monte Carlo does, makes each only once).
pub fn basis(kind: Estimator, alpha: i32, tau: f64, tau0: f64, f_h: f64) -> f64 {
    type Key = (Estimator, i32, u64, u64, u64);
    thread_local! {
        static SEEN: std::cell::RefCell<std::collections::HashMap<Key, f64>> =
            std::cell::RefCell::new(std::collections::HashMap::new());
    }
    let key = (kind, alpha, tau.to_bits(), tau0.to_bits(), f_h.to_bits());
    if let Some(v) = SEEN.with(|m| m.borrow().get(&key).copied()) {
        return v;
    }
    let v = basis_uncached(kind, alpha, tau, tau0, f_h);
    SEEN.with(|m| {
        let mut m = m.borrow_mut();
        if m.len() > 100_000 {
            m.clear();
        }
        m.insert(key, v);
    });
    v
}

fn basis_uncached(kind: Estimator, alpha: i32, tau: f64, tau0: f64, f_h: f64) -> f64 {
    let n = tau / tau0;
    let short_fh = alpha > 0 && 2.0 * std::f64::consts::PI * f_h * tau < NUMERIC_BELOW_FH;
    if n < NUMERIC_BELOW_N || short_fh {
        variance_numeric(kind, alpha, tau, tau0, f_h)
    } else {
        let mut m = PowerLaw::zero(f_h);
        m.set(alpha, 1.0);
        m.variance(kind, tau, tau0)
    }
}

/// Fit h_α ≥ 0 (all five terms) to measured variances (module notes),
/// keeping only the terms the data show.
///
/// **Standard errors.** With the weights taken as EDFs, ln σ̂²_i has
/// variance about 2/EDF_i, so the weighted least squares in log space has
/// the covariance (JᵀWJ)⁻¹ for J_ik = ∂ln p_i/∂h_k = B_k(i)/p_i and
/// W = diag(EDF/2) at the fitted h (the Gauss–Newton information). That
/// would hold for independent points; the points of a record are not, so
/// three inflations follow, our rules: points of different variances at
/// the same τ (an OADEV and an MDEV point) come from the same data and carry
/// nearly the same information, so the covariance is multiplied by
/// points/distinct τ; neighbouring τ of one curve share most of their
/// samples, for which it is multiplied by [`NEIGHBOUR_INFLATION`]
/// (calibrated by seeded Monte Carlo on octave-grid fits, the grid
/// [`crate::stability::fit_record_model`] always uses); and by the reduced
/// χ² of the fit when it exceeds 1 (a model that misses its points is less
/// certain than the weights say).
///
/// **Significance.** A term whose h_α is below [`SIGNIFICANCE`] (2)
/// standard errors is removed and the model refitted without it, the least
/// significant first, until every remaining term is significant (or one
/// remains); such terms, and those the non-negative fit puts at zero, are
/// listed in [`ModelFit::left_out`] with the reason.
///
/// Errors when there is no point, or a point has a non-positive or
/// non-finite variance, weight, τ or τ0, or τ < τ0, or f_h ≤ 0.
pub fn fit_variances(points: &[FitPoint], f_h: f64) -> Result<ModelFit> {
    fit_variances_terms(points, f_h, [true; 5])
}

/// [`fit_variances`] with only the terms where `allowed[α + 2]` is true.
pub fn fit_variances_terms(points: &[FitPoint], f_h: f64, allowed: [bool; 5]) -> Result<ModelFit> {
    let mut allowed = allowed;
    let mut removed: Vec<LeftOut> = Vec::new();
    loop {
        let mut fit = fit_variances_once(points, f_h, allowed)?;
        let weakest = (0..5)
            .filter(|&k| fit.fitted[k])
            .filter_map(|k| fit.std_err[k].map(|se| (k, fit.model.h[k] / se)))
            .min_by(|a, b| a.1.total_cmp(&b.1));
        let active = fit.fitted.iter().filter(|f| **f).count();
        match weakest {
            Some((k, z)) if z < SIGNIFICANCE && active > 1 => {
                removed.push(LeftOut {
                    alpha: k as i32 - 2,
                    h: fit.model.h[k],
                    std_err: fit.std_err[k],
                    reason: LeftOutReason::NotSignificant,
                });
                allowed[k] = false;
            }
            _ => {
                for k in (0..5).rev() {
                    if allowed[k] && !fit.fitted[k] {
                        fit.left_out.push(LeftOut {
                            alpha: k as i32 - 2,
                            h: 0.0,
                            std_err: None,
                            reason: LeftOutReason::AtZero,
                        });
                    }
                }
                fit.left_out.extend(removed);
                fit.left_out.sort_by_key(|l| -l.alpha);
                return Ok(fit);
            }
        }
    }
}

/// One weighted log-space fit with the `allowed` terms, with the standard
/// errors of [`fit_variances`] (no pruning).
fn fit_variances_once(points: &[FitPoint], f_h: f64, allowed: [bool; 5]) -> Result<ModelFit> {
    check_fh(f_h)?;
    if points.is_empty() {
        return Err(Error::insufficient("no variance points to fit a model to"));
    }
    for (i, p) in points.iter().enumerate() {
        let ok = |v: f64| v.is_finite() && v > 0.0;
        if !(ok(p.tau) && ok(p.tau0) && ok(p.var) && ok(p.weight)) {
            return Err(Error::invalid(format!(
                "fit point {} (τ = {} s): τ, τ0, variance and weight must be positive numbers",
                i + 1,
                p.tau
            )));
        }
        if p.tau < p.tau0 * (1.0 - 1e-9) {
            return Err(Error::invalid(format!(
                "fit point {}: τ = {} s is shorter than τ0 = {} s",
                i + 1,
                p.tau,
                p.tau0
            )));
        }
    }
    let rows: Vec<[f64; 5]> = points
        .iter()
        .map(|p| {
            let mut r = [0.0; 5];
            for (k, v) in r.iter_mut().enumerate() {
                if allowed[k] {
                    *v = basis(p.kind, k as i32 - 2, p.tau, p.tau0, f_h);
                }
            }
            r
        })
        .collect();
    let v: Vec<f64> = points.iter().map(|p| p.var).collect();
    let w: Vec<f64> = points.iter().map(|p| p.weight).collect();
    let h = log_fit(&rows, &v, &w)?;
    let model = PowerLaw { h, f_h };
    let lo = points.iter().map(|p| p.tau).fold(f64::INFINITY, f64::min);
    let hi = points.iter().map(|p| p.tau).fold(0.0, f64::max);
    let dominant = dominant_ranges(&h, lo, hi, |a, t| unit_avar(a, t, f_h));
    let mut fit = finish(model, &rows, &v, dominant);
    let mut taus: Vec<u64> = points.iter().map(|p| p.tau.to_bits()).collect();
    taus.sort_unstable();
    taus.dedup();
    let duplication = points.len() as f64 / taus.len() as f64;
    fit.std_err = standard_errors(&rows, &v, &w, &h, duplication);
    Ok(fit)
}

/// Standard errors of the positive h_α of a log-space variance fit (see
/// [`fit_variances`]): the diagonal of (JᵀWJ)⁻¹·duplication·max(1, χ²_red),
/// W = weight/2. `None` where h_α is zero or the information matrix is
/// singular.
fn standard_errors(
    rows: &[[f64; 5]],
    v: &[f64],
    w: &[f64],
    h: &[f64; 5],
    duplication: f64,
) -> [Option<f64>; 5] {
    let active: Vec<usize> = (0..5).filter(|&k| h[k] > 0.0).collect();
    let mut out = [None; 5];
    let k = active.len();
    if k == 0 {
        return out;
    }
    // Columns scaled by h_k, so the matrix is of order one: J'_ik = B_k(i)h_k/p_i.
    let mut info = vec![0.0f64; k * k];
    let mut chi2 = 0.0;
    for ((r, &vi), &wi) in rows.iter().zip(v).zip(w) {
        let p = dot(r, h);
        if !(p > 0.0) {
            return out;
        }
        let wgt = 0.5 * wi;
        chi2 += wgt * (p / vi).ln().powi(2);
        for (a, &ka) in active.iter().enumerate() {
            for (b, &kb) in active.iter().enumerate() {
                info[a * k + b] += wgt * (r[ka] * h[ka] / p) * (r[kb] * h[kb] / p);
            }
        }
    }
    let Some(inv) = invert_spd(&info, k) else {
        return out;
    };
    let dof = rows.len().saturating_sub(k);
    let scale = duplication
        * NEIGHBOUR_INFLATION
        * if dof > 0 {
            (chi2 / dof as f64).max(1.0)
        } else {
            1.0
        };
    for (a, &ka) in active.iter().enumerate() {
        let var = inv[a * k + a] * scale;
        if var.is_finite() && var >= 0.0 {
            out[ka] = Some(var.sqrt() * h[ka]);
        }
    }
    out
}

/// The inverse of a symmetric positive definite k × k matrix (row-major) by
/// LU decomposition with partial pivoting (nalgebra); `None` when singular,
/// i.e. when a pivot is below 10⁻¹³ of the largest entry.
fn invert_spd(a: &[f64], k: usize) -> Option<Vec<f64>> {
    let scale = a.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    let lu = DMatrix::from_row_slice(k, k, a).lu();
    let u = lu.u();
    if (0..k).any(|j| !(u[(j, j)].abs() > 1e-13 * scale)) {
        return None;
    }
    let inv = lu.try_inverse()?;
    // Row-major, as given.
    Some(inv.transpose().as_slice().to_vec())
}

/// Fit S_y(f) = Σ h_α f^α (h_α ≥ 0) to spectrum points in log space, with
/// optional weights (equal when `None`; for a Welch estimate, the number of
/// averaged segments). Every f must lie in (0, f_h].
pub fn fit_sy(f: &[f64], sy: &[f64], weights: Option<&[f64]>, f_h: f64) -> Result<ModelFit> {
    check_fh(f_h)?;
    if f.len() != sy.len() || weights.is_some_and(|w| w.len() != f.len()) {
        return Err(Error::invalid(
            "spectrum fit: frequency, S_y and weight lists differ in length",
        ));
    }
    if f.is_empty() {
        return Err(Error::insufficient("no spectrum points to fit a model to"));
    }
    let ones = vec![1.0; f.len()];
    let w = weights.unwrap_or(&ones);
    for i in 0..f.len() {
        let ok = |v: f64| v.is_finite() && v > 0.0;
        if !(ok(f[i]) && ok(sy[i]) && ok(w[i])) {
            return Err(Error::invalid(format!(
                "spectrum point {} (f = {} Hz): f, S_y and weight must be positive numbers",
                i + 1,
                f[i]
            )));
        }
        if f[i] > f_h * (1.0 + 1e-12) {
            return Err(Error::invalid(format!(
                "spectrum point {}: f = {} Hz is above the model's f_h = {} Hz",
                i + 1,
                f[i],
                f_h
            )));
        }
    }
    let rows: Vec<[f64; 5]> = f
        .iter()
        .map(|&fi| std::array::from_fn(|k| fi.powi(k as i32 - 2)))
        .collect();
    let h = log_fit(&rows, sy, w)?;
    let model = PowerLaw { h, f_h };
    let fmin = f.iter().copied().fold(f64::INFINITY, f64::min);
    let fmax = f.iter().copied().fold(0.0, f64::max);
    let two_pi = 2.0 * std::f64::consts::PI;
    let dominant = dominant_ranges(&h, 1.0 / (two_pi * fmax), 1.0 / (two_pi * fmin), |a, t| {
        unit_avar(a, t, f_h)
    });
    Ok(finish(model, &rows, sy, dominant))
}

/// AVAR of the unit power law from the closed form (used to judge which
/// term dominates; the short-τ refinements of [`basis`] do not move the
/// crossovers noticeably).
fn unit_avar(alpha: i32, tau: f64, f_h: f64) -> f64 {
    let mut m = PowerLaw::zero(f_h);
    m.set(alpha, 1.0);
    m.avar(tau)
}

fn check_fh(f_h: f64) -> Result<()> {
    if f_h.is_finite() && f_h > 0.0 {
        Ok(())
    } else {
        Err(Error::invalid(format!(
            "f_h must be a positive frequency, got {f_h}"
        )))
    }
}

fn finish(model: PowerLaw, rows: &[[f64; 5]], v: &[f64], dominant: Vec<Dominant>) -> ModelFit {
    let residual_db = rows
        .iter()
        .zip(v)
        .map(|(r, &vi)| 10.0 * (dot(r, &model.h) / vi).log10())
        .collect();
    ModelFit {
        model,
        fitted: std::array::from_fn(|k| model.h[k] > 0.0),
        std_err: [None; 5],
        left_out: Vec::new(),
        residual_db,
        dominant,
    }
}

fn dot(r: &[f64; 5], h: &[f64; 5]) -> f64 {
    r.iter().zip(h).map(|(a, b)| a * b).sum()
}

fn objective(rows: &[[f64; 5]], v: &[f64], w: &[f64], h: &[f64; 5]) -> f64 {
    let mut j = 0.0;
    for ((r, &vi), &wi) in rows.iter().zip(v).zip(w) {
        let p = dot(r, h);
        if p <= 0.0 || !p.is_finite() {
            return f64::INFINITY;
        }
        j += wi * (p / vi).ln().powi(2);
    }
    j
}

/// Gauss–Newton in log space with an NNLS solve per step (module notes).
fn log_fit(rows: &[[f64; 5]], v: &[f64], w: &[f64]) -> Result<[f64; 5]> {
    let m = rows.len();
    // Column scales so that the NNLS columns are of order one.
    let mut scale = [0.0f64; 5];
    for (r, &vi) in rows.iter().zip(v) {
        for k in 0..5 {
            scale[k] = scale[k].max(r[k] / vi);
        }
    }
    let cols: Vec<usize> = (0..5).filter(|&k| scale[k] > 0.0).collect();
    if cols.is_empty() {
        return Err(Error::insufficient(
            "no power-law term contributes at the given points",
        ));
    }
    let mut h = [0.0f64; 5];
    let mut p: Vec<f64> = v.to_vec();
    let mut current = f64::INFINITY;
    for _ in 0..100 {
        let mut a = DMatrix::<f64>::zeros(m, cols.len());
        let mut b = DVector::<f64>::zeros(m);
        for i in 0..m {
            let sw = w[i].sqrt();
            let r = (p[i] / v[i]).ln();
            for (j, &k) in cols.iter().enumerate() {
                a[(i, j)] = sw * rows[i][k] / (scale[k] * p[i]);
            }
            b[i] = sw * (1.0 - r);
        }
        let g = nnls(&a, &b);
        let mut cand = [0.0f64; 5];
        for (j, &k) in cols.iter().enumerate() {
            cand[k] = g[j] / scale[k];
        }
        let mut jc = objective(rows, v, w, &cand);
        if current.is_finite() {
            let mut lambda = 1.0;
            let mut tries = 0;
            while jc > current && tries < 40 {
                lambda *= 0.5;
                for k in 0..5 {
                    cand[k] = h[k] + lambda * (cand[k] - h[k]);
                }
                jc = objective(rows, v, w, &cand);
                tries += 1;
            }
            if jc > current {
                break;
            }
        }
        if !jc.is_finite() {
            return Err(Error::insufficient(
                "the model fit found no power law with a positive value at every point",
            ));
        }
        let done = current.is_finite() && (current - jc) <= 1e-12 * current.max(1e-300);
        h = cand;
        current = jc;
        for (pi, r) in p.iter_mut().zip(rows) {
            *pi = dot(r, &h);
        }
        if done {
            break;
        }
    }
    if !current.is_finite() {
        return Err(Error::insufficient("the model fit did not converge"));
    }
    Ok(h)
}

/// Dominant-term ranges over [lo, hi]: on a grid of 40 points per decade,
/// then the boundaries refined by bisection in log τ.
fn dominant_ranges(
    h: &[f64; 5],
    lo: f64,
    hi: f64,
    unit: impl Fn(i32, f64) -> f64,
) -> Vec<Dominant> {
    let top = |t: f64| -> Option<i32> {
        let mut best: Option<(i32, f64)> = None;
        for (k, &hk) in h.iter().enumerate() {
            if hk > 0.0 {
                let a = k as i32 - 2;
                let c = hk * unit(a, t);
                match best {
                    Some((_, b)) if b >= c => {}
                    _ => best = Some((a, c)),
                }
            }
        }
        best.map(|b| b.0)
    };
    if !(lo > 0.0 && hi >= lo) {
        return Vec::new();
    }
    let steps = (((hi / lo).log10() * 40.0).ceil() as usize).max(1);
    let at = |i: usize| lo * (hi / lo).powf(i as f64 / steps as f64);
    let mut out: Vec<Dominant> = Vec::new();
    let Some(mut cur) = top(lo) else {
        return out;
    };
    let mut from = lo;
    for i in 1..=steps {
        let t = at(i);
        let Some(a) = top(t) else { continue };
        if a != cur {
            let (mut l, mut r) = (at(i - 1).ln(), t.ln());
            for _ in 0..40 {
                let mid = 0.5 * (l + r);
                if top(mid.exp()) == Some(cur) {
                    l = mid;
                } else {
                    r = mid;
                }
            }
            let edge = (0.5 * (l + r)).exp();
            out.push(Dominant {
                alpha: cur,
                tau_from: from,
                tau_to: edge,
            });
            from = edge;
            cur = top(t).unwrap_or(a);
        }
    }
    out.push(Dominant {
        alpha: cur,
        tau_from: from,
        tau_to: hi,
    });
    out
}

/// Non-negative least squares, min ‖Ax − b‖ over x ≥ 0, by the active-set
/// algorithm of Lawson & Hanson (*Solving Least Squares Problems*, 1974,
/// ch. 23). Each passive-set subproblem is solved by QR ([`lstsq`]).
pub fn nnls(a: &DMatrix<f64>, b: &DVector<f64>) -> DVector<f64> {
    let (m, n) = a.shape();
    let mut x = DVector::<f64>::zeros(n);
    let mut passive = vec![false; n];
    let norm = a.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    let tol = 10.0 * f64::EPSILON * norm * (m.max(n) as f64);
    let grad = |x: &DVector<f64>| -> DVector<f64> { a.tr_mul(&(b - a * x)) };
    let mut outer = 0;
    loop {
        let wv = grad(&x);
        let pick = (0..n)
            .filter(|&j| !passive[j] && wv[j] > tol)
            .max_by(|&i, &j| wv[i].total_cmp(&wv[j]));
        let Some(t) = pick else { break };
        outer += 1;
        if outer > 3 * n + 10 {
            break;
        }
        passive[t] = true;
        loop {
            let cols: Vec<usize> = (0..n).filter(|&j| passive[j]).collect();
            let s_p = lstsq(a, &cols, b);
            let mut s = DVector::<f64>::zeros(n);
            for (i, &j) in cols.iter().enumerate() {
                s[j] = s_p[i];
            }
            if cols.iter().all(|&j| s[j] > 0.0) {
                x = s;
                break;
            }
            // Step towards s until the first passive component reaches zero.
            let mut alpha = 1.0f64;
            for &j in &cols {
                if s[j] <= 0.0 {
                    let d = x[j] - s[j];
                    alpha = alpha.min(if d > 0.0 { x[j] / d } else { 0.0 });
                }
            }
            x = &x + (&s - &x) * alpha;
            for &j in &cols {
                if x[j] <= tol {
                    passive[j] = false;
                    x[j] = 0.0;
                }
            }
            if !passive.iter().any(|&p| p) {
                break;
            }
        }
    }
    x
}

/// Least squares on the columns `cols` of A by Householder QR (nalgebra):
/// A_cols = QR, then R·x = Qᵀb by back substitution. Components whose pivot
/// |R_jj| is below 10⁻¹² of the largest entry of A_cols (rank deficiency)
/// are set to zero, so that repeated or null columns get no weight.
pub fn lstsq(a: &DMatrix<f64>, cols: &[usize], b: &DVector<f64>) -> Vec<f64> {
    let m = a.nrows();
    let k = cols.len();
    let mut x = vec![0.0; k];
    if k == 0 || m == 0 {
        return x;
    }
    let sub = a.select_columns(cols);
    let scale = sub.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    let qr = sub.qr();
    let r = qr.r();
    let y = qr.q().tr_mul(b);
    let steps = k.min(m);
    for j in (0..steps).rev() {
        let piv = r[(j, j)];
        if piv.abs() <= 1e-12 * scale {
            x[j] = 0.0;
            continue;
        }
        let s: f64 = (j + 1..k).map(|c| r[(j, c)] * x[c]).sum();
        x[j] = (y[j] - s) / piv;
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lstsq_solves_a_small_system() {
        // Exact fit y = 2 + 3t on four points (analytic).
        let a = DMatrix::from_row_slice(4, 2, &[1., 0., 1., 1., 1., 2., 1., 3.]);
        let b = DVector::from_vec(vec![2., 5., 8., 11.]);
        let x = lstsq(&a, &[0, 1], &b);
        assert!((x[0] - 2.0).abs() < 1e-12 && (x[1] - 3.0).abs() < 1e-12);
    }

    #[test]
    fn nnls_clamps_a_negative_coefficient() {
        // b = 1·a0 − 1·a1 exactly: the unconstrained solution is (1, −1);
        // with x ≥ 0 the answer is the projection on a0 alone (analytic).
        let a = DMatrix::from_row_slice(3, 2, &[1., 0., 0., 1., 1., 1.]);
        let b = DVector::from_vec(vec![1., -1., 0.]);
        let x = nnls(&a, &b);
        assert!((x[0] - 0.5).abs() < 1e-12, "{x}");
        assert_eq!(x[1], 0.0);
    }

    /// The solvers this module used before nalgebra, kept as references.
    mod reference {
        /// Householder QR least squares on the columns `cols` of the
        /// row-major m × n matrix `a`; negligible pivots give zero.
        pub fn lstsq(a: &[f64], n: usize, cols: &[usize], b: &[f64]) -> Vec<f64> {
            let m = b.len();
            let k = cols.len();
            let mut r = vec![0.0f64; m * k];
            for i in 0..m {
                for (j, &c) in cols.iter().enumerate() {
                    r[i * k + j] = a[i * n + c];
                }
            }
            let mut y = b.to_vec();
            let scale = r.iter().fold(0.0f64, |s, v| s.max(v.abs()));
            let steps = k.min(m);
            for j in 0..steps {
                let norm: f64 = (j..m).map(|i| r[i * k + j].powi(2)).sum::<f64>().sqrt();
                if norm == 0.0 {
                    continue;
                }
                let alpha = if r[j * k + j] > 0.0 { -norm } else { norm };
                let mut v: Vec<f64> = (j..m).map(|i| r[i * k + j]).collect();
                v[0] -= alpha;
                let vn: f64 = v.iter().map(|e| e * e).sum();
                if vn == 0.0 {
                    continue;
                }
                for c in j..k {
                    let d: f64 = (j..m).map(|i| v[i - j] * r[i * k + c]).sum::<f64>() * 2.0 / vn;
                    for i in j..m {
                        r[i * k + c] -= d * v[i - j];
                    }
                }
                let d: f64 = (j..m).map(|i| v[i - j] * y[i]).sum::<f64>() * 2.0 / vn;
                for i in j..m {
                    y[i] -= d * v[i - j];
                }
            }
            let mut x = vec![0.0; k];
            for j in (0..steps).rev() {
                let piv = r[j * k + j];
                if piv.abs() <= 1e-12 * scale {
                    x[j] = 0.0;
                    continue;
                }
                let s: f64 = (j + 1..k).map(|c| r[j * k + c] * x[c]).sum();
                x[j] = (y[j] - s) / piv;
            }
            x
        }

        /// Gauss–Jordan inverse with partial pivoting (row-major).
        pub fn invert(a: &[f64], k: usize) -> Option<Vec<f64>> {
            let mut m = a.to_vec();
            let mut inv = vec![0.0f64; k * k];
            for i in 0..k {
                inv[i * k + i] = 1.0;
            }
            let scale = a.iter().fold(0.0f64, |s, v| s.max(v.abs()));
            for col in 0..k {
                let piv = (col..k)
                    .max_by(|&x, &y| m[x * k + col].abs().total_cmp(&m[y * k + col].abs()))?;
                if !(m[piv * k + col].abs() > 1e-13 * scale) {
                    return None;
                }
                for j in 0..k {
                    m.swap(col * k + j, piv * k + j);
                    inv.swap(col * k + j, piv * k + j);
                }
                let d = m[col * k + col];
                for j in 0..k {
                    m[col * k + j] /= d;
                    inv[col * k + j] /= d;
                }
                for row in 0..k {
                    if row != col {
                        let f = m[row * k + col];
                        if f != 0.0 {
                            for j in 0..k {
                                m[row * k + j] -= f * m[col * k + j];
                                inv[row * k + j] -= f * inv[col * k + j];
                            }
                        }
                    }
                }
            }
            Some(inv)
        }
    }

    /// A small deterministic generator (xorshift64*) in [−½, ½).
    fn uniform(state: &mut u64) -> f64 {
        *state ^= *state >> 12;
        *state ^= *state << 25;
        *state ^= *state >> 27;
        (state.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }

    /// nalgebra's QR gives the old Householder solver's results on the same
    /// inputs to 1e−10 relative: random full-rank systems (over- and
    /// exactly determined, column subsets), the log-fit scaling of
    /// columns over 20 decades, and rank-deficient ones (a repeated column,
    /// a null column), where both set the dependent component to zero.
    #[test]
    fn lstsq_agrees_with_the_old_solver() {
        let mut st = 0x5eed_u64;
        for trial in 0..300 {
            let m = 1 + trial % 9;
            let n = 1 + trial % 5;
            let mut a: Vec<f64> = (0..m * n).map(|_| uniform(&mut st)).collect();
            match trial % 4 {
                // Column scales as in the log fit (B_α(i)/v_i spans decades).
                1 => {
                    for i in 0..m {
                        for j in 0..n {
                            a[i * n + j] *= 10f64.powi(4 * j as i32 - 8);
                        }
                    }
                }
                // A repeated column.
                2 if n >= 2 => {
                    for i in 0..m {
                        a[i * n + n - 1] = a[i * n];
                    }
                }
                // A null column.
                3 => {
                    for i in 0..m {
                        a[i * n + n / 2] = 0.0;
                    }
                }
                _ => {}
            }
            let b: Vec<f64> = (0..m).map(|_| uniform(&mut st)).collect();
            let am = DMatrix::from_row_slice(m, n, &a);
            let bv = DVector::from_vec(b.clone());
            let all: Vec<usize> = (0..n).collect();
            let subset: Vec<usize> = (0..n).filter(|j| j % 2 == 0).collect();
            for cols in [all, subset] {
                let new = lstsq(&am, &cols, &bv);
                let old = reference::lstsq(&a, n, &cols, &b);
                let size = old.iter().fold(0.0f64, |s, v| s.max(v.abs()));
                for (x, y) in new.iter().zip(&old) {
                    assert!(
                        (x - y).abs() <= 1e-10 * y.abs().max(1e-6 * size),
                        "trial {trial} cols {cols:?}: {new:?} vs {old:?}"
                    );
                }
            }
        }
    }

    /// The LU inverse equals the old Gauss–Jordan inverse to 1e−10 relative
    /// on random SPD information matrices, and both refuse the same singular
    /// ones.
    #[test]
    fn invert_agrees_with_the_old_solver() {
        let mut st = 77u64;
        for k in 1..=5 {
            for _ in 0..40 {
                let g: Vec<f64> = (0..(k + 3) * k).map(|_| uniform(&mut st)).collect();
                let mut a = vec![0.0; k * k];
                for i in 0..k {
                    for j in 0..k {
                        a[i * k + j] = (0..k + 3).map(|r| g[r * k + i] * g[r * k + j]).sum();
                    }
                }
                let new = invert_spd(&a, k).unwrap();
                let old = reference::invert(&a, k).unwrap();
                for (x, y) in new.iter().zip(&old) {
                    assert!(close(*x, *y, 1e-10), "k = {k}: {new:?} vs {old:?}");
                }
            }
        }
        let singular = [1.0, 2.0, 2.0, 4.0];
        assert!(invert_spd(&singular, 2).is_none() && reference::invert(&singular, 2).is_none());
    }

    /// A 2 × 2 and a 3 × 3 inverse (analytic), and a singular matrix.
    #[test]
    fn invert_small_matrices() {
        let inv = invert_spd(&[4.0, 2.0, 2.0, 3.0], 2).unwrap();
        let want = [3.0 / 8.0, -2.0 / 8.0, -2.0 / 8.0, 4.0 / 8.0];
        for (a, b) in inv.iter().zip(want) {
            assert!((a - b).abs() < 1e-15);
        }
        let a = [2.0, -1.0, 0.0, -1.0, 2.0, -1.0, 0.0, -1.0, 2.0];
        let inv = invert_spd(&a, 3).unwrap();
        let want = [0.75, 0.5, 0.25, 0.5, 1.0, 0.5, 0.25, 0.5, 0.75];
        for (x, y) in inv.iter().zip(want) {
            assert!((x - y).abs() < 1e-15);
        }
        assert!(invert_spd(&[1.0, 1.0, 1.0, 1.0], 2).is_none());
    }

    #[test]
    fn fit_rejects_bad_points() {
        let p = FitPoint {
            kind: Estimator::Oadev,
            tau: 1.0,
            tau0: 1.0,
            var: -1.0,
            weight: 1.0,
        };
        assert!(fit_variances(&[p], 0.5).is_err());
        assert!(fit_variances(&[], 0.5).is_err());
        let q = FitPoint { var: 1e-22, ..p };
        assert!(fit_variances(&[q], 0.0).is_err());
        let r = FitPoint { tau: 0.5, ..q };
        assert!(fit_variances(&[r], 0.5).is_err());
        assert!(fit_sy(&[1.0], &[1.0], None, 0.5).is_err());
        assert!(fit_sy(&[0.1, 0.2], &[1.0], None, 0.5).is_err());
    }
}
