//! Tables interpolated linearly in log f / log value (equivalently linearly in
//! log f / dB), and their exact integrals.
//!
//! Between two table points (f_i, v_i) and (f_{i+1}, v_{i+1}) the value is the
//! power law v(f) = v_i·(f/f_i)^{b_i} with b_i = ln(v_{i+1}/v_i)/ln(f_{i+1}/f_i)
//! (a slope of s dB/decade is b = s/10). The integral of a power law is exact:
//!
//! ∫_a^b c·f^e df = c·(b^{e+1} − a^{e+1})/(e+1), and c·ln(b/a) for e = −1,
//!
//! evaluated as c·a^{e+1}·ln(b/a)·expm1(u)/u with u = (e+1)·ln(b/a), which is
//! continuous through e = −1 and loses no precision near it (docs/design.md §6).
//!
//! Outside the table, a [`LogLog`] either refuses ([`Extend::No`]) or
//! continues the power law of the nearest end segment ([`Extend::EndSlope`]).

use super::gt;
use crate::error::{Error, Result};

/// What a table does outside its offset range.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Extend {
    /// Values outside the table are an error.
    No,
    /// Continue the power law of the first (below) or last (above) segment.
    EndSlope,
}

/// A positive table interpolated as a power law between its points.
#[derive(Debug, Clone, PartialEq)]
pub struct LogLog {
    f: Vec<f64>,
    v: Vec<f64>,
    /// Exponent b_i of segment i (between points i and i+1).
    b: Vec<f64>,
}

/// ∫_a^b c·f^e df for 0 < a ≤ b, exact (module notes).
pub fn power_integral(c: f64, e: f64, a: f64, b: f64) -> f64 {
    power_integral_from(c * a.powf(e), a, e, b)
}

/// ∫_a^b v_a·(f/a)^e df for 0 < a ≤ b: the same integral written with the
/// value v_a at the lower end, v_a·a·ln(b/a)·expm1(u)/u, u = (e+1)·ln(b/a).
/// This form never forms c = v_a/a^e, which overflows for the steep
/// exponents that neighbouring bins of a noisy spectrum can have.
pub fn power_integral_from(v_a: f64, a: f64, e: f64, b: f64) -> f64 {
    if !gt(b, a) {
        return 0.0;
    }
    let l = (b / a).ln();
    let u = (e + 1.0) * l;
    let ratio = if u.abs() < 1e-12 { 1.0 } else { u.exp_m1() / u };
    v_a * a * l * ratio
}

impl LogLog {
    /// A table from offsets (positive, strictly increasing) and positive
    /// finite values; at least two points.
    pub fn new(f: &[f64], v: &[f64]) -> Result<Self> {
        if f.len() != v.len() || f.len() < 2 {
            return Err(Error::invalid(format!(
                "a log–log table needs at least 2 points with one value each (got {} offsets, {} values)",
                f.len(),
                v.len()
            )));
        }
        if !gt(f[0], 0.0)
            || f.windows(2).any(|w| !gt(w[1], w[0]))
            || f.iter().any(|x| !x.is_finite())
        {
            return Err(Error::invalid(
                "log–log table offsets must be positive, finite and strictly increasing",
            ));
        }
        if v.iter().any(|x| !(x.is_finite() && *x > 0.0)) {
            return Err(Error::invalid(
                "log–log table values must be positive and finite",
            ));
        }
        let b = f
            .windows(2)
            .zip(v.windows(2))
            .map(|(fw, vw)| (vw[1] / vw[0]).ln() / (fw[1] / fw[0]).ln())
            .collect();
        Ok(Self {
            f: f.to_vec(),
            v: v.to_vec(),
            b,
        })
    }

    /// The table offsets.
    pub fn offsets(&self) -> &[f64] {
        &self.f
    }

    /// Lowest and highest offset.
    pub fn range(&self) -> (f64, f64) {
        (self.f[0], self.f[self.f.len() - 1])
    }

    /// Exponent of the first segment (used below the table by [`Extend::EndSlope`]).
    pub fn low_slope(&self) -> f64 {
        self.b[0]
    }

    /// Exponent of the last segment (used above the table by [`Extend::EndSlope`]).
    pub fn high_slope(&self) -> f64 {
        self.b[self.b.len() - 1]
    }

    /// The power law (c, e) with v(f) = c·f^e that holds at `f`: the segment
    /// containing f, or the end segment's law outside the table.
    /// Points on a knot take the segment above it (the last knot the one below).
    pub fn law_at(&self, f: f64) -> (f64, f64) {
        let n = self.f.len();
        let i = if f <= self.f[0] {
            0
        } else if f >= self.f[n - 1] {
            n - 2
        } else {
            self.f.partition_point(|&x| x <= f) - 1
        }
        .min(n - 2);
        let e = self.b[i];
        // c = v_i / f_i^e, computed in logs for range safety.
        let c = (self.v[i].ln() - e * self.f[i].ln()).exp();
        (c, e)
    }

    /// The interpolated value at `f`; `None` outside the table with [`Extend::No`].
    pub fn eval(&self, f: f64, extend: Extend) -> Option<f64> {
        let (lo, hi) = self.range();
        if (f < lo || f > hi) && extend == Extend::No {
            return None;
        }
        if f <= 0.0 {
            return None;
        }
        let n = self.f.len();
        let i = if f <= lo {
            0
        } else if f >= hi {
            n - 2
        } else {
            (self.f.partition_point(|&x| x <= f) - 1).min(n - 2)
        };
        Some(self.v[i] * (f / self.f[i]).powf(self.b[i]))
    }

    /// ∫_a^b v(f)·f^p df, exact segment by segment. Parts of [a, b] outside
    /// the table are integrated along the end slopes with [`Extend::EndSlope`]
    /// and are an error with [`Extend::No`]. Requires 0 < a ≤ b.
    pub fn integrate(&self, a: f64, b: f64, p: f64, extend: Extend) -> Result<f64> {
        if !(a > 0.0 && b >= a && b.is_finite()) {
            return Err(Error::invalid(format!(
                "integration range must satisfy 0 < from ≤ to, got {a} Hz to {b} Hz"
            )));
        }
        let (lo, hi) = self.range();
        if extend == Extend::No && (a < lo * (1.0 - 1e-12) || b > hi * (1.0 + 1e-12)) {
            return Err(Error::invalid(format!(
                "range {a} Hz to {b} Hz is outside the table ({lo} Hz to {hi} Hz)"
            )));
        }
        let mut total = 0.0;
        for (x0, x1) in self.pieces(a, b) {
            let (_, e) = self.law_at(0.5 * (x0 + x1));
            let v0 = self.value_on_piece(x0, x1, x0);
            total += power_integral_from(v0 * x0.powf(p), x0, e + p, x1);
        }
        Ok(total)
    }

    /// The value at `x` along the power law of the piece [x0, x1] (which
    /// lies inside one segment or one extension).
    pub fn value_on_piece(&self, x0: f64, x1: f64, x: f64) -> f64 {
        let n = self.f.len();
        let mid = 0.5 * (x0 + x1);
        let i = if mid <= self.f[0] {
            0
        } else if mid >= self.f[n - 1] {
            n - 2
        } else {
            (self.f.partition_point(|&q| q <= mid) - 1).min(n - 2)
        };
        self.v[i] * (x / self.f[i]).powf(self.b[i])
    }

    /// [a, b] cut at the table's knots (and its ends), in increasing order.
    pub fn pieces(&self, a: f64, b: f64) -> Vec<(f64, f64)> {
        let mut cuts = vec![a];
        cuts.extend(self.f.iter().copied().filter(|&x| x > a && x < b));
        cuts.push(b);
        cuts.windows(2)
            .filter(|w| w[1] > w[0])
            .map(|w| (w[0], w[1]))
            .collect()
    }

    /// The product of two tables on [a, b], as a table: every knot of either
    /// inside [a, b] plus the ends. Because a product of power laws is a power
    /// law, interpolating the product at the merged knots is exact.
    pub fn product(&self, other: &LogLog, a: f64, b: f64, extend: Extend) -> Result<LogLog> {
        let mut knots = vec![a];
        knots.extend(
            self.f
                .iter()
                .chain(other.f.iter())
                .copied()
                .filter(|&x| x > a && x < b),
        );
        knots.push(b);
        knots.sort_by(|x, y| x.total_cmp(y));
        knots.dedup();
        let mut v = Vec::with_capacity(knots.len());
        for &x in &knots {
            let p = self
                .eval(x, extend)
                .zip(other.eval(x, extend))
                .ok_or_else(|| {
                    Error::invalid(format!("offset {x} Hz is outside one of the tables"))
                })?;
            v.push(p.0 * p.1);
        }
        LogLog::new(&knots, &v)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Analytic: ∫ f^e over [a, b] against the elementary antiderivatives.
    #[test]
    fn power_integral_matches_antiderivative() {
        let (a, b) = (3.0f64, 70.0f64);
        for e in [-3.0, -2.0, -1.5, -0.5, 0.0, 1.0, 2.0] {
            let want: f64 = (b.powf(e + 1.0) - a.powf(e + 1.0)) / (e + 1.0);
            let got = power_integral(1.0, e, a, b);
            assert!((got / want - 1.0).abs() < 1e-13, "e={e}");
        }
        let want = (b / a).ln();
        assert!((power_integral(2.0, -1.0, a, b) / (2.0 * want) - 1.0).abs() < 1e-15);
        // Continuity through e = −1.
        let near = power_integral(1.0, -1.0 + 1e-9, a, b);
        assert!((near / want - 1.0).abs() < 1e-8);
    }

    /// Interpolation is linear in log f / dB; the integral of a −20 dB/decade
    /// segment is the closed form ∫ v0 (f0/f)² df = v0 f0² (1/a − 1/b) (analytic).
    #[test]
    fn interpolation_and_segment_integral() {
        let t = LogLog::new(&[10.0, 100.0, 1000.0], &[1e-10, 1e-12, 1e-12]).unwrap();
        let mid = t.eval(31.622776601683793, Extend::No).unwrap();
        assert!((10.0 * mid.log10() - (-110.0)).abs() < 1e-9);
        let got = t.integrate(10.0, 100.0, 0.0, Extend::No).unwrap();
        let want = 1e-10 * 100.0 * (1.0 / 10.0 - 1.0 / 100.0);
        assert!((got / want - 1.0).abs() < 1e-12);
        let flat = t.integrate(100.0, 1000.0, 0.0, Extend::No).unwrap();
        assert!((flat / (900.0 * 1e-12) - 1.0).abs() < 1e-12);
        assert!(t.integrate(5.0, 100.0, 0.0, Extend::No).is_err());
        let ext = t.integrate(5.0, 10.0, 0.0, Extend::EndSlope).unwrap();
        let want_ext = 1e-10 * 100.0 * (1.0 / 5.0 - 1.0 / 10.0);
        assert!((ext / want_ext - 1.0).abs() < 1e-12);
    }

    /// Direct check against a dense trapezoid on the interpolated table.
    #[test]
    fn integral_matches_dense_trapezoid() {
        let f = [1.0, 3.0, 10.0, 40.0, 100.0];
        let v = [1e-3, 2e-5, 3e-6, 3e-6, 1e-7];
        let t = LogLog::new(&f, &v).unwrap();
        let n = 400_000;
        let (a, b) = (1.5f64, 90.0f64);
        let mut s = 0.0;
        let l = (b / a).ln();
        for i in 0..n {
            let u0 = a * (l * i as f64 / n as f64).exp();
            let u1 = a * (l * (i + 1) as f64 / n as f64).exp();
            let g = |x: f64| t.eval(x, Extend::No).unwrap() * x;
            s += 0.5 * (g(u0) + g(u1)) * (u1 - u0);
        }
        let got = t.integrate(a, b, 1.0, Extend::No).unwrap();
        assert!((got / s - 1.0).abs() < 1e-6, "{got} vs {s}");
    }

    #[test]
    fn product_is_exact() {
        let t = LogLog::new(&[1.0, 10.0, 100.0], &[1.0, 0.01, 0.01]).unwrap();
        let h = LogLog::new(&[2.0, 50.0], &[0.1, 1.0]).unwrap();
        let p = t.product(&h, 2.0, 50.0, Extend::No).unwrap();
        for x in [2.0, 3.3, 9.9, 10.0, 27.0, 50.0] {
            let want = t.eval(x, Extend::No).unwrap() * h.eval(x, Extend::No).unwrap();
            assert!((p.eval(x, Extend::No).unwrap() / want - 1.0).abs() < 1e-12);
        }
    }
}
