//! Frequency aging: its model, its fit on a frequency record, and the time
//! error it adds through a holdover.
//!
//! Two models of the aging part of the fractional frequency, with t the time
//! since the start of the record:
//! - linear: y_a(t) = c + D·t (D in 1/s);
//! - logarithmic (the usual quartz aging law): y_a(t) = c + A·ln(1 + t/t_c).
//!
//! Both are fitted by least squares on block means of the frequency record
//! (at most [`BLOCKS`] blocks), which also gives the parameter's standard
//! error from the block residuals, s²/Σ(u_b − ū)² (linear regression
//! standard error, e.g. Draper & Smith, *Applied Regression Analysis*). The
//! block means tame the correlation of the residuals that WFM and slower
//! noises cause; with strong RWFM the standard error is still optimistic.
//! The log model's time constant t_c is found by profiling the residual sum
//! of squares over t_c (log grid, then golden-section refinement).
//!
//! Through a holdover that starts at record time T_s, the aging adds to the
//! time error, for s the time since the start of holdover,
//! TE_a(t) = ∫_0^t [y_a(T_s + s) − y_a(T_s)] ds:
//! - linear: ½·D·t²;
//! - log: A·[F(T_s + t) − F(T_s) − t·ln(1 + T_s/t_c)], F(u) = (t_c + u)·ln(1 + u/t_c) − u.

use crate::error::{Error, Result};
use crate::record::FrequencyRecord;

/// Largest number of blocks used by the fits.
pub const BLOCKS: usize = 200;

/// Which aging law to fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum AgingModel {
    /// y = c + D·t.
    Linear,
    /// y = c + A·ln(1 + t/t_c).
    Log,
}

impl AgingModel {
    /// `linear` or `log`.
    pub fn name(self) -> &'static str {
        match self {
            AgingModel::Linear => "linear",
            AgingModel::Log => "log",
        }
    }
}

impl std::str::FromStr for AgingModel {
    type Err = crate::units::UnitError;

    /// `linear` or `log` (any case).
    fn from_str(text: &str) -> std::result::Result<Self, Self::Err> {
        match text.trim().to_ascii_lowercase().as_str() {
            "linear" => Ok(AgingModel::Linear),
            "log" => Ok(AgingModel::Log),
            _ => Err(crate::units::UnitError::Bad {
                text: text.to_string(),
                what: "aging law",
                expected: "linear (y = c + D·t) or log (y = c + A·ln(1 + t/t_c))",
            }),
        }
    }
}

/// A fitted or given aging law.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Aging {
    /// y_a(t) = c + D·t; `d` and its standard error `d_sigma` in 1/s.
    Linear {
        /// Constant term c.
        c: f64,
        /// Aging rate D, 1/s.
        d: f64,
        /// Standard error of D (0 when given).
        d_sigma: f64,
    },
    /// y_a(t) = c + A·ln(1 + t/t_c).
    Log {
        /// Constant term c.
        c: f64,
        /// Coefficient A.
        a: f64,
        /// Standard error of A.
        a_sigma: f64,
        /// Time constant t_c, s.
        tc: f64,
    },
}

impl Aging {
    /// The law's name.
    pub fn model(&self) -> AgingModel {
        match self {
            Aging::Linear { .. } => AgingModel::Linear,
            Aging::Log { .. } => AgingModel::Log,
        }
    }

    /// y_a(t) at record time t.
    pub fn y(&self, t: f64) -> f64 {
        match *self {
            Aging::Linear { c, d, .. } => c + d * t,
            Aging::Log { c, a, tc, .. } => c + a * (t / tc).ln_1p(),
        }
    }

    /// The aging rate dy_a/dt at record time t, 1/s.
    pub fn rate(&self, t: f64) -> f64 {
        match *self {
            Aging::Linear { d, .. } => d,
            Aging::Log { a, tc, .. } => a / (tc + t),
        }
    }

    /// The standard error of the fitted parameter (D or A).
    pub fn sigma(&self) -> f64 {
        match *self {
            Aging::Linear { d_sigma, .. } => d_sigma,
            Aging::Log { a_sigma, .. } => a_sigma,
        }
    }

    /// TE_a(t) for a holdover starting at record time `ts` (module notes).
    pub fn te(&self, ts: f64, t: f64) -> f64 {
        match *self {
            Aging::Linear { d, .. } => 0.5 * d * t * t,
            Aging::Log { a, .. } => a * self.te_per_unit(ts, t),
        }
    }

    /// ∂TE_a(t)/∂(parameter): ½t² for the linear law, TE_a/A for the log law.
    pub fn te_per_unit(&self, ts: f64, t: f64) -> f64 {
        match *self {
            Aging::Linear { .. } => 0.5 * t * t,
            Aging::Log { tc, .. } => {
                let f = |u: f64| (tc + u) * (u / tc).ln_1p() - u;
                f(ts + t) - f(ts) - t * (ts / tc).ln_1p()
            }
        }
    }
}

/// Block means (t_b, ȳ_b) of the valid samples; y_i is the mean over
/// [iτ0, (i+1)τ0], so its time is (i + ½)τ0.
pub fn block_means(rec: &FrequencyRecord, blocks: usize) -> Vec<(f64, f64)> {
    let n = rec.y.len();
    let blocks = blocks.clamp(1, n.max(1));
    let mut out = Vec::with_capacity(blocks);
    for b in 0..blocks {
        let (lo, hi) = (b * n / blocks, (b + 1) * n / blocks);
        let (mut st, mut sy, mut k) = (0.0, 0.0, 0usize);
        for i in lo..hi {
            let y = rec.y[i];
            if !y.is_nan() {
                st += (i as f64 + 0.5) * rec.tau0;
                sy += y;
                k += 1;
            }
        }
        if k > 0 {
            out.push((st / k as f64, sy / k as f64));
        }
    }
    out
}

/// Least squares y = c + s·u on points (u, y): (c, s, standard error of s, RSS).
fn line_fit(pts: &[(f64, f64)]) -> Option<(f64, f64, f64, f64)> {
    let n = pts.len();
    if n < 3 {
        return None;
    }
    let ub = pts.iter().map(|p| p.0).sum::<f64>() / n as f64;
    let yb = pts.iter().map(|p| p.1).sum::<f64>() / n as f64;
    let (mut suu, mut suy) = (0.0, 0.0);
    for &(u, y) in pts {
        suu += (u - ub) * (u - ub);
        suy += (u - ub) * (y - yb);
    }
    if suu <= 0.0 {
        return None;
    }
    let s = suy / suu;
    let c = yb - s * ub;
    let rss: f64 = pts.iter().map(|&(u, y)| (y - c - s * u).powi(2)).sum();
    let se = (rss / (n - 2) as f64 / suu).sqrt();
    Some((c, s, se, rss))
}

/// Fit the linear law on a frequency record.
///
/// ```
/// use tauwise::{FrequencyRecord, holdover::aging::fit_linear};
/// let d = 1e-10 / 86400.0;
/// let y: Vec<f64> = (0..1000).map(|i| 3e-9 + d * (i as f64 + 0.5) * 60.0).collect();
/// let a = fit_linear(&FrequencyRecord::new(y, 60.0).unwrap()).unwrap();
/// assert!((a.rate(0.0) - d).abs() < 1e-6 * d);
/// ```
pub fn fit_linear(rec: &FrequencyRecord) -> Result<Aging> {
    let pts = block_means(rec, BLOCKS);
    let (c, d, d_sigma, _) = line_fit(&pts).ok_or_else(|| {
        Error::insufficient("fitting the aging needs at least three blocks of valid frequency data")
    })?;
    Ok(Aging::Linear { c, d, d_sigma })
}

/// Fit the logarithmic law y = c + A·ln(1 + t/t_c) on a frequency record.
pub fn fit_log(rec: &FrequencyRecord) -> Result<Aging> {
    let pts = block_means(rec, BLOCKS);
    if pts.len() < 4 {
        return Err(Error::insufficient(
            "fitting a logarithmic aging needs at least four blocks of valid frequency data",
        ));
    }
    let span = rec.y.len() as f64 * rec.tau0;
    let fit_at = |ltc: f64| {
        let tc = ltc.exp();
        let u: Vec<(f64, f64)> = pts.iter().map(|&(t, y)| ((t / tc).ln_1p(), y)).collect();
        line_fit(&u).map(|(c, a, se, rss)| (rss, c, a, se, tc))
    };
    // Profile t_c from a hundredth of the first block to 100 spans.
    let (lo, hi) = ((pts[0].0 * 0.01).max(rec.tau0).ln(), (100.0 * span).ln());
    let grid = 80;
    let mut best: Option<(f64, f64)> = None; // (rss, ln tc)
    for k in 0..=grid {
        let l = lo + (hi - lo) * k as f64 / grid as f64;
        if let Some(r) = fit_at(l) {
            if best.map_or(true, |b| r.0 < b.0) {
                best = Some((r.0, l));
            }
        }
    }
    let (_, l0) = best.ok_or_else(|| Error::insufficient("the logarithmic aging fit failed"))?;
    let step = (hi - lo) / grid as f64;
    let (mut a, mut b) = ((l0 - step).max(lo), (l0 + step).min(hi));
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let rss = |l: f64| fit_at(l).map_or(f64::INFINITY, |r| r.0);
    for _ in 0..60 {
        let (c1, c2) = (b - g * (b - a), a + g * (b - a));
        if rss(c1) < rss(c2) {
            b = c2;
        } else {
            a = c1;
        }
    }
    let (_, c, a_coef, a_sigma, tc) = fit_at(0.5 * (a + b))
        .ok_or_else(|| Error::insufficient("the logarithmic aging fit failed"))?;
    Ok(Aging::Log {
        c,
        a: a_coef,
        a_sigma,
        tc,
    })
}

/// Parse an aging rate such as `5e-11/day`, `1ppb/day`, `2e-12/h`,
/// `5e-11/24h` ([`crate::parse::Rate`]: the time is required). Returns the
/// rate per second.
///
/// ```
/// use tauwise::holdover::aging::parse_aging_rate;
/// assert!((parse_aging_rate("1e-10/day").unwrap() - 1e-10 / 86400.0).abs() < 1e-25);
/// assert!(parse_aging_rate("fast").is_err());
/// ```
pub fn parse_aging_rate(text: &str) -> Result<f64> {
    Ok(text.parse::<crate::parse::Rate>()?.per_second())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The log-law time error equals the numerical integral of the frequency
    /// (analytic: trapezoid rule on a fine grid).
    #[test]
    fn log_te_is_the_integral_of_frequency() {
        let a = Aging::Log {
            c: 0.0,
            a: 2e-9,
            a_sigma: 0.0,
            tc: 5000.0,
        };
        let (ts, t) = (86400.0, 3.0 * 86400.0);
        let n = 200_000;
        let h = t / n as f64;
        let y0 = a.y(ts);
        let mut s = 0.0;
        for k in 0..=n {
            let w = if k == 0 || k == n { 0.5 } else { 1.0 };
            s += w * (a.y(ts + k as f64 * h) - y0);
        }
        s *= h;
        assert!((a.te(ts, t) - s).abs() < 1e-9 * s.abs());
    }

    #[test]
    fn log_fit_recovers_the_law() {
        let truth = Aging::Log {
            c: 1e-9,
            a: 3e-9,
            a_sigma: 0.0,
            tc: 20_000.0,
        };
        let tau0 = 100.0;
        let y: Vec<f64> = (0..5000)
            .map(|i| truth.y((i as f64 + 0.5) * tau0))
            .collect();
        let f = fit_log(&FrequencyRecord::new(y, tau0).unwrap()).unwrap();
        let t = 6e5;
        assert!((f.rate(t) - truth.rate(t)).abs() < 1e-3 * truth.rate(t));
    }
}
