//! Gauss–Legendre quadrature: fixed rules computed from the Legendre
//! recurrence (Golub & Welsch's classical nodes found by Newton's method on
//! P_n), and an adaptive bisection on top of them.

use super::gt;
use std::sync::OnceLock;

/// Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1].
///
/// Nodes are the roots of the Legendre polynomial P_n, found by Newton's
/// method from the Chebyshev-like start cos(π(i − ¼)/(n + ½)); weights are
/// w_i = 2/((1 − x_i²)·P_n'(x_i)²) (Abramowitz & Stegun 25.4.29).
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n {
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            // P_n(z) and P_n'(z) by the three-term recurrence.
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            let pn = if n == 0 { 1.0 } else { p1 };
            let pn1 = if n == 1 { 1.0 } else { p0 };
            dp = n as f64 * (z * pn - pn1) / (z * z - 1.0);
            let dz = pn / dp;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        x[i] = z;
        w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
    }
    (x, w)
}

fn rule8() -> &'static (Vec<f64>, Vec<f64>) {
    static R: OnceLock<(Vec<f64>, Vec<f64>)> = OnceLock::new();
    R.get_or_init(|| gauss_legendre(8))
}

/// ∫_a^b g with the 8-point Gauss–Legendre rule.
pub fn gl8(g: &impl Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    let (x, w) = rule8();
    let h = 0.5 * (b - a);
    let c = 0.5 * (a + b);
    x.iter()
        .zip(w)
        .map(|(xi, wi)| wi * g(c + h * xi))
        .sum::<f64>()
        * h
}

/// ∫_a^b g by adaptive bisection of the 8-point rule until two levels agree
/// to `rel` (relative) or the interval has been halved [`MAX_DEPTH`] times.
/// Ask for a `rel` well above the integrand's own rounding noise (an
/// integrand evaluated at sin(10⁷π·…) is good to ~10⁻⁹ only), or every
/// branch runs to the depth limit.
pub const MAX_DEPTH: u32 = 18;

/// See [`MAX_DEPTH`].
pub fn adaptive(g: &impl Fn(f64) -> f64, a: f64, b: f64, rel: f64) -> f64 {
    fn rec(g: &impl Fn(f64) -> f64, a: f64, b: f64, whole: f64, rel: f64, depth: u32) -> f64 {
        let m = 0.5 * (a + b);
        let l = gl8(g, a, m);
        let r = gl8(g, m, b);
        let two = l + r;
        if depth >= MAX_DEPTH || (two - whole).abs() <= rel * two.abs() || !(two.is_finite()) {
            return two;
        }
        rec(g, a, m, l, rel, depth + 1) + rec(g, m, b, r, rel, depth + 1)
    }
    if !gt(b, a) {
        return 0.0;
    }
    let whole = gl8(g, a, b);
    rec(g, a, b, whole, rel, 0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Analytic: the n-point rule integrates polynomials of degree 2n − 1 exactly.
    #[test]
    fn exact_for_polynomials() {
        for n in [1, 2, 5, 8, 16] {
            let (x, w) = gauss_legendre(n);
            let sw: f64 = w.iter().sum();
            assert!((sw - 2.0).abs() < 1e-13, "n={n}");
            let d = 2 * n - 1;
            let got: f64 = x
                .iter()
                .zip(&w)
                .map(|(xi, wi)| wi * xi.powi(d as i32 - 1))
                .sum();
            let want = if (d - 1) % 2 == 0 {
                2.0 / d as f64
            } else {
                0.0
            };
            assert!((got - want).abs() < 1e-12, "n={n}");
        }
    }

    #[test]
    fn adaptive_handles_peaks() {
        let g = |x: f64| 1.0 / (1e-4 + x * x);
        let got = adaptive(&g, -1.0, 1.0, 1e-12);
        let want = 2.0 * (1.0f64 / 1e-2).atan() / 1e-2;
        assert!((got / want - 1.0).abs() < 1e-9);
    }
}
