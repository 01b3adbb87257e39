//! Transfer functions of the time-domain variances and their numerical
//! integral over a power-law S_y(f): the exact variance of each power law at
//! any τ, where the IEEE Std 1139 table (see [`super::PowerLaw::avar`]) gives
//! only the large-τ forms.
//!
//! σ²(τ) = ∫_0^F h_α f^α |H(f)|² df  (IEEE Std 1139-2008; NIST SP 1065 §5),
//! with, for τ = nτ0 (docs/design.md §6):
//! - AVAR: |H|² = 2 sin⁴(πfτ)/(πfτ)²;
//! - MVAR: |H|² = 2 sin⁶(πfτ)/((πfτ)² n² sin²(πfτ0));
//! - HVAR: |H|² = (8/3) sin⁶(πfτ)/(πfτ)².
//!
//! F = f_h for WPM and FPM (α > 0; the table's f_h), and F = ∞ for α ≤ 0,
//! where the integrals converge and the table forms are the exact results
//! (they do not depend on f_h). The MVAR transfer function holds the
//! average over n phase samples, so the integral is the variance of the
//! sampled process (aliasing included).

use crate::deviation::Estimator;
use std::f64::consts::PI;

/// |H(f)|² of the variance `kind` at τ = nτ0, as listed in the module notes.
pub fn transfer(kind: Estimator, f: f64, tau: f64, tau0: f64) -> f64 {
    let u = PI * f * tau;
    if u == 0.0 {
        return 0.0;
    }
    let s = u.sin();
    match kind.variance_family() {
        Some(Estimator::Ohdev) => 8.0 / 3.0 * s.powi(6) / (u * u),
        Some(fam @ (Estimator::Mdev | Estimator::Tdev)) => {
            let n = tau / tau0;
            let d = (PI * f * tau0).sin();
            if d == 0.0 {
                // sin⁶(nθ)/sin²(θ) → 0 at the zeros of sin θ (n ≥ 1).
                return 0.0;
            }
            let scale = if fam == Estimator::Tdev {
                tau * tau / 3.0
            } else {
                1.0
            };
            scale * 2.0 * s.powi(6) / (u * u * n * n * d * d)
        }
        Some(_) => 2.0 * s.powi(4) / (u * u),
        None => f64::NAN,
    }
}

/// Number of Simpson intervals in each quarter period of sin(u).
const SIMPSON_PER_PIECE: usize = 16;

/// σ² of the power law h_α f^α with h_α = 1, at τ (and τ0 for MVAR), by
/// numerical integration of S_y(f)|H(f)|² (module notes).
///
/// In u = πfτ the integrand is smooth; it is integrated by composite
/// Simpson on pieces of length π/2 (16 intervals each) up to U = Kπ — K = 400
/// for AVAR and HVAR, 60 periods of sin(u/n) for MVAR — and beyond U, up to
/// πf_hτ or ∞, with the periodic factor replaced by its mean (3/8 for sin⁴,
/// 5/16 for sin⁶, the numerically integrated mean of sin⁶u/(n² sin²(u/n))
/// for MVAR). The relative error is below 1e-4 for every α.
///
/// # Panics
/// Never; returns NaN for τ ≤ 0, τ0 ≤ 0 or f_h ≤ 0.
pub fn variance_numeric(kind: Estimator, alpha: i32, tau: f64, tau0: f64, f_h: f64) -> f64 {
    // The variance family (module notes): Allan, modified Allan (TDEV is
    // τ²/3 of it) or Hadamard; NaN for an estimator without one.
    let (kind, scale_tdev) = match kind.variance_family() {
        Some(Estimator::Tdev) => (Estimator::Mdev, tau * tau / 3.0),
        Some(Estimator::Mdev) => (Estimator::Mdev, 1.0),
        Some(Estimator::Ohdev) => (Estimator::Ohdev, 1.0),
        Some(_) => (Estimator::Oadev, 1.0),
        None => return f64::NAN,
    };
    if !(tau > 0.0 && tau0 > 0.0 && f_h > 0.0) {
        return f64::NAN;
    }
    let n = tau / tau0;
    let a = alpha as f64;
    // S_y(f) df = (u/(πτ))^α du/(πτ); the transfer function in u.
    let scale = (PI * tau).powf(-a - 1.0);
    let g = |u: f64| -> f64 {
        let u = u.max(1e-9);
        let s = u.sin();
        let t = match kind {
            Estimator::Ohdev => 8.0 / 3.0 * s.powi(6) / (u * u),
            Estimator::Mdev => {
                let d = (u / n).sin();
                if d.abs() < 1e-300 {
                    0.0
                } else {
                    2.0 * s.powi(6) / (u * u * n * n * d * d)
                }
            }
            _ => 2.0 * s.powi(4) / (u * u),
        };
        u.powf(a) * t
    };
    let upper = if alpha > 0 {
        PI * f_h * tau
    } else {
        f64::INFINITY
    };
    let numeric_end = match kind {
        Estimator::Mdev => 60.0 * n.ceil() * PI,
        _ => 400.0 * PI,
    }
    .min(upper);
    let piece = PI / 2.0;
    let pieces = (numeric_end / piece).floor() as usize;
    let mut total = 0.0;
    for p in 0..pieces {
        total += simpson(&g, p as f64 * piece, (p + 1) as f64 * piece);
    }
    let done = pieces as f64 * piece;
    if numeric_end > done {
        total += simpson(&g, done, numeric_end);
    }
    if upper > numeric_end {
        // Tail: mean of the periodic factor times ∫ u^(α−2) du.
        let mean = match kind {
            Estimator::Ohdev => 8.0 / 3.0 * 5.0 / 16.0,
            Estimator::Mdev => {
                let period = n.round().max(1.0) * PI;
                let k = (2.0 * n.round().max(1.0)) as usize;
                let h = |u: f64| {
                    let d = (u / n).sin();
                    if d.abs() < 1e-300 {
                        0.0
                    } else {
                        2.0 * u.sin().powi(6) / (n * n * d * d)
                    }
                };
                (0..k)
                    .map(|i| simpson(&h, i as f64 * piece, (i + 1) as f64 * piece))
                    .sum::<f64>()
                    / period
            }
            _ => 2.0 * 3.0 / 8.0,
        };
        let e = a - 1.0; // ∫ u^(α−2) du = u^(α−1)/(α−1)
        let tail = if alpha == 1 {
            (upper / numeric_end).ln()
        } else if upper.is_infinite() {
            -numeric_end.powf(e) / e
        } else {
            (upper.powf(e) - numeric_end.powf(e)) / e
        };
        total += mean * tail;
    }
    total * scale * scale_tdev
}

fn simpson(g: &impl Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    let k = SIMPSON_PER_PIECE;
    let h = (b - a) / k as f64;
    let mut s = g(a) + g(b);
    for i in 1..k {
        let w = if i % 2 == 1 { 4.0 } else { 2.0 };
        s += w * g(a + i as f64 * h);
    }
    s * h / 3.0
}
