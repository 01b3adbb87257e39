//! Power-law noise identification at one τ.
//!
//! # Lag-1 autocorrelation (Riley & Greenhall 2004)
//!
//! W. J. Riley and C. A. Greenhall, "Power law noise identification using
//! the lag 1 autocorrelation", Proc. 18th European Frequency and Time Forum
//! (2004); also NIST SP 1065 §5.6. For a stationary series z with
//! S_z(f) ∝ f^p, −1 < p < 1, the lag-1 autocorrelation
//! r1 = Σ(z_i − z̄)(z_{i+1} − z̄) / Σ(z_i − z̄)² tends to −p/(2 + p), so
//! that δ = r1/(1 + r1) estimates −p/2. Non-stationary series are
//! differenced first:
//!
//! ```text
//! z = phase decimated to τ (every m-th sample); d = 0
//! loop
//!     δ = r1(z)/(1 + r1(z))
//!     if d ≥ dmin and (δ < 0.25 or d ≥ dmax): stop
//!     z = first difference of z; d = d + 1
//! p = −2(δ + d)        (S_x ∝ f^p of the decimated phase)
//! α = round(p) + 2     (S_y ∝ f^α, since S_y = (2πf)² S_x)
//! ```
//!
//! **Our refinement of the last step.** δ = −p/2 holds for the discrete
//! fractionally integrated process; phase decimated by m behaves, as m
//! grows, like continuous-time noise, whose differenced series have other
//! lag-1 values — flicker FM after two differences tends to r1 = −0.217
//! (δ = −0.277, so α̂ = −1.45, a hair from the RWFM boundary) instead of
//! −1/3, and random-walk FM to +0.25 instead of 0. So instead of rounding
//! p, α is the candidate whose *theoretical* r1 for the decimated, d-times
//! differenced phase at this m ([`edf::decimated_lag1`], from the same
//! autocovariance kernels as the EDF) is nearest the measured r1; the
//! candidates are the α of the estimator's range whose d-th difference is
//! stationary (α + 2d > 1). At m = 1 this reproduces the paper's
//! boundaries up to the small differences of the discrete kernels.
//!
//! with dmin = 0 and dmax = the estimator's phase-difference order (2 for
//! the Allan family, 3 for the Hadamard family), so that the differenced
//! series stays stationary for every α the estimator accepts; α is then
//! clamped to the estimator's range (2 … −2 or 2 … −4).
//!
//! Choices made here (documented in the issue note):
//! - the decimated series is capped at [`MAX_LAG1_POINTS`] points (a
//!   contiguous block from the start of the record), so the cost per τ is
//!   bounded whatever N; with 2^14 points r1 has a standard error near 0.01;
//! - the lag-1 method is used when at least [`MIN_LAG1_POINTS`] finite
//!   decimated points remain (Riley & Greenhall suggest about 30);
//! - gaps (NaN) are skipped: r1 sums run over the finite points and the
//!   finite neighbour pairs, and a difference touching a gap is a gap.
//!
//! # Telling WPM from FPM: R(n) = MVAR/AVAR
//!
//! Decimated flicker PM aliases towards white PM, so when the method above
//! (or the B1 ratio below) reports α = 1 or 2 at n = m ≥ [`MIN_R_FACTOR`],
//! the measured R̂(n) = Mod σ²(τ)/σ²(τ) decides between them: WPM if R̂ is
//! below the geometric mean of the theoretical R(n) of WPM (1/n) and FPM
//! ([`bias::r_ratio`]), FPM otherwise. R̂ is taken from the second
//! differences at start points j = 0, m, 2m, … (a subset of the overlapping
//! terms, so both variances stay unbiased), at most [`MAX_R_BLOCKS`] blocks,
//! using the same j for both so that gaps cancel alike; long windows are
//! summed from a shared dyadic table ([`BlockSums`]), so a τ costs
//! O(blocks·log m) rather than O(blocks·m). Below n = 4 the two
//! R(n) values are too close (0.5 and 0.51 at n = 2) and the first
//! identification stands.
//!
//! # Short series: the B1 ratio (Barnes 1969)
//!
//! With fewer than [`MIN_LAG1_POINTS`] points at τ, the N frequency averages
//! ȳ_k = (x_{(k+1)m} − x_{km})/τ give B̂1 = s²(ȳ)/σ̂²_y(τ) (N-sample over
//! two-sample variance), compared with the theoretical B1(N, μ)
//! ([`bias::b1`], μ = −α − 1). On 20 points B1 alone confuses RWFM with
//! FFM about half the time (B̂1 of a random walk is very dispersed), so —
//! our choice — the lag-1 statistic of the same short series is used as a
//! second witness: α minimises
//!
//! ((ln B̂1 − ln B1(N, μ_α))/s_B)² + ((r1 − ρ1_α)/s_r)²,
//!
//! s_B = sqrt(5/(N − 1)) (the spread of ln B̂1: about 2/(N − 1) from the
//! sample variance and 3/(N − 1) from the two-sample variance) and
//! s_r = 1/sqrt(n) (the spread of a lag-1 autocorrelation of n points), ρ1_α
//! the theoretical value as above (1 where the d-th difference is not
//! stationary for α). WPM against FPM (the same μ) is then settled by R(n)
//! when n ≥ 4, as above.

use crate::stats::block_sums::BlockSums;
use crate::stats::{bias, edf, VarianceKind};
use std::sync::OnceLock;

/// Fewest finite decimated points for the lag-1 method; shorter series use
/// the B1 ratio (Riley & Greenhall 2004: "about 30").
pub const MIN_LAG1_POINTS: usize = 30;
/// Most decimated points the lag-1 method looks at (a contiguous block).
pub const MAX_LAG1_POINTS: usize = 1 << 14;
/// Most τ-blocks used to measure R(n) = MVAR/AVAR.
pub const MAX_R_BLOCKS: usize = 1024;
/// Smallest averaging factor at which R(n) separates WPM from FPM.
pub const MIN_R_FACTOR: usize = 4;
/// Fewest frequency averages for the B1 ratio.
pub const MIN_B1_POINTS: usize = 4;

/// How a noise type was identified.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum IdMethod {
    /// Lag-1 autocorrelation of the decimated, differenced phase.
    Lag1,
    /// B1 bias ratio (with R(n) for WPM against FPM) on a short series.
    B1,
}

impl IdMethod {
    /// The name used in tables and JSON (`lag1`, `b1`).
    pub fn name(self) -> &'static str {
        match self {
            IdMethod::Lag1 => "lag1",
            IdMethod::B1 => "b1",
        }
    }
}

/// The noise type identified at one τ.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NoiseId {
    /// Power-law exponent α of S_y(f) ∝ f^α, inside the estimator's range.
    pub alpha: i32,
    /// The method that decided.
    pub method: IdMethod,
    /// For [`IdMethod::Lag1`]: the lag-1 autocorrelation of the series at the
    /// differencing stage that stopped the loop (δ = r1/(1 + r1)).
    pub r1: Option<f64>,
}

/// Identify the noise type at τ = m·τ0 in the phase record `x` (seconds,
/// NaN = gap) for the estimator family `kind`.
///
/// Returns `None` when τ0 is not positive, m = 0, or too few finite points
/// remain at τ even for the B1 ratio ([`MIN_B1_POINTS`] frequency averages).
///
/// ```
/// use tauwise::stats::{identify, IdMethod, VarianceKind};
/// // A random walk of phase is white FM (α = 0).
/// let mut x = vec![0.0f64; 2000];
/// let mut s: u64 = 12345;
/// for i in 1..x.len() {
///     s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
///     let u = ((s >> 11) as f64 / (1u64 << 53) as f64) - 0.5;
///     x[i] = x[i - 1] + u * 1e-9;
/// }
/// let id = identify(&x, 1.0, 4, VarianceKind::OverlappingAllan).unwrap();
/// assert_eq!(id.alpha, 0);
/// assert_eq!(id.method, IdMethod::Lag1);
/// ```
pub fn identify(x: &[f64], tau0: f64, m: usize, kind: VarianceKind) -> Option<NoiseId> {
    Identifier::new(x, tau0, kind).at(m)
}

/// Identification of one record at many τ: [`identify`] with the window
/// sums of R(n) shared between τ (built on first use, [`BlockSums`]).
/// `Sync`, so the τ can be handled in parallel.
#[derive(Debug)]
pub struct Identifier<'a> {
    x: &'a [f64],
    tau0: f64,
    kind: VarianceKind,
    sums: OnceLock<BlockSums>,
}

impl<'a> Identifier<'a> {
    /// Prepare to identify the noise of phase record `x` (seconds, NaN =
    /// gap) for estimator family `kind`.
    pub fn new(x: &'a [f64], tau0: f64, kind: VarianceKind) -> Self {
        Self {
            x,
            tau0,
            kind,
            sums: OnceLock::new(),
        }
    }

    /// The noise type at τ = m·τ0 (as [`identify`]).
    pub fn at(&self, m: usize) -> Option<NoiseId> {
        if !(self.tau0.is_finite() && self.tau0 > 0.0) || m == 0 {
            return None;
        }
        let finite = self
            .x
            .iter()
            .step_by(m)
            .filter(|v| v.is_finite())
            .take(MIN_LAG1_POINTS)
            .count();
        if finite >= MIN_LAG1_POINTS {
            lag1_id(self, m)
        } else {
            b1_id(self, m)
        }
    }

    /// Σ x[a .. a + len], directly for short windows, else from the table.
    fn window_sum(&self, a: usize, len: usize) -> f64 {
        if len <= DIRECT_WINDOW {
            self.x[a..a + len].iter().sum()
        } else {
            self.sums
                .get_or_init(|| BlockSums::new(self.x))
                .sum(self.x, a, a + len)
        }
    }
}

/// Windows up to this many samples are summed directly.
const DIRECT_WINDOW: usize = 256;

/// Every m-th sample of `x`, at most `cap` of them, from the start.
fn decimate(x: &[f64], m: usize, cap: usize) -> Vec<f64> {
    x.iter().step_by(m).take(cap).copied().collect()
}

/// Lag-1 autocorrelation over finite values and finite neighbour pairs;
/// `None` if fewer than three finite values or no spread.
pub(crate) fn lag1_autocorrelation(z: &[f64]) -> Option<f64> {
    let (mut n, mut sum) = (0usize, 0.0);
    for &v in z.iter().filter(|v| v.is_finite()) {
        n += 1;
        sum += v;
    }
    if n < 3 {
        return None;
    }
    let mean = sum / n as f64;
    let den: f64 = z
        .iter()
        .filter(|v| v.is_finite())
        .map(|v| (v - mean) * (v - mean))
        .sum();
    let num: f64 = z
        .windows(2)
        .filter(|w| w[0].is_finite() && w[1].is_finite())
        .map(|w| (w[0] - mean) * (w[1] - mean))
        .sum();
    (den > 0.0).then(|| num / den)
}

/// The Riley & Greenhall loop; returns the number of differences d at the
/// stop and r1 there.
fn lag1_loop(mut z: Vec<f64>, dmax: usize) -> Option<(usize, f64)> {
    let mut d = 0usize;
    loop {
        let r1 = lag1_autocorrelation(&z)?;
        let delta = r1 / (1.0 + r1);
        if delta < 0.25 || d >= dmax {
            return Some((d, r1));
        }
        z = z.windows(2).map(|w| w[1] - w[0]).collect();
        d += 1;
    }
}

/// α at the stop: the candidate (inside the estimator's range, with a
/// stationary d-th difference) whose theoretical lag-1 autocorrelation at
/// this m and d ([`edf::decimated_lag1`]) is nearest to the measured r1.
/// Falls back to the paper's rounding α = round(−2(δ + d)) + 2 if no
/// candidate has a value.
fn alpha_from_r1(r1: f64, m: usize, d: usize, kind: VarianceKind) -> i32 {
    let mut best: Option<(f64, i32)> = None;
    for alpha in kind.alpha_range() {
        if let Some(rho) = edf::decimated_lag1(alpha, m, d) {
            let dist = (r1 - rho).abs();
            if best.is_none() || best.is_some_and(|(bd, _)| dist < bd) {
                best = Some((dist, alpha));
            }
        }
    }
    match best {
        Some((_, a)) => a,
        None => {
            let delta = r1 / (1.0 + r1);
            clamp_alpha((-2.0 * (delta + d as f64)).round() as i32 + 2, kind)
        }
    }
}

fn clamp_alpha(alpha: i32, kind: VarianceKind) -> i32 {
    let range = kind.alpha_range();
    alpha.clamp(*range.start(), *range.end())
}

fn lag1_id(id: &Identifier, m: usize) -> Option<NoiseId> {
    let kind = id.kind;
    let z = decimate(id.x, m, MAX_LAG1_POINTS);
    let (d, r1) = lag1_loop(z, kind.difference_order())?;
    let mut alpha = alpha_from_r1(r1, m, d, kind);
    if alpha >= 1 {
        if let Some(split) = pm_split(id, m) {
            alpha = split;
        }
    }
    Some(NoiseId {
        alpha,
        method: IdMethod::Lag1,
        r1: Some(r1),
    })
}

/// WPM (2) or FPM (1) from the measured R(n) = MVAR/AVAR at n = m, or `None`
/// when m < [`MIN_R_FACTOR`] or the record has no usable term.
fn pm_split(id: &Identifier, m: usize) -> Option<i32> {
    if m < MIN_R_FACTOR {
        return None;
    }
    let r = measured_r(id, m)?;
    let boundary = (bias::r_ratio(2, m)? * bias::r_ratio(1, m)?).sqrt();
    Some(if r < boundary { 2 } else { 1 })
}

/// R̂(m) = [mean (S₃ − 2S₂ + S₁)²/m²] / [mean (x_{j+2m} − 2x_{j+m} + x_j)²]
/// over start points j = 0, m, 2m, …, S_k the sums of x over the k-th block
/// of m samples from j; at most [`MAX_R_BLOCKS`] blocks.
fn measured_r(id: &Identifier, m: usize) -> Option<f64> {
    let x = id.x;
    let blocks = (x.len() / m).min(MAX_R_BLOCKS);
    if blocks < 3 {
        return None;
    }
    // Block means, and the phase at each block start.
    let means: Vec<f64> = (0..blocks)
        .map(|b| id.window_sum(b * m, m) / m as f64)
        .collect();
    let (mut num, mut den, mut count) = (0.0, 0.0, 0usize);
    for b in 0..blocks - 2 {
        let j = b * m;
        let modified = means[b + 2] - 2.0 * means[b + 1] + means[b];
        let plain = x[j + 2 * m] - 2.0 * x[j + m] + x[j];
        if modified.is_finite() && plain.is_finite() {
            num += modified * modified;
            den += plain * plain;
            count += 1;
        }
    }
    (count > 0 && den > 0.0).then(|| num / den)
}

fn b1_id(id: &Identifier, m: usize) -> Option<NoiseId> {
    let kind = id.kind;
    let dec = decimate(id.x, m, usize::MAX);
    let y: Vec<f64> = dec.windows(2).map(|w| w[1] - w[0]).collect();
    let finite: Vec<f64> = y.iter().copied().filter(|v| v.is_finite()).collect();
    let n = finite.len();
    if n < MIN_B1_POINTS {
        return None;
    }
    let mean = finite.iter().sum::<f64>() / n as f64;
    let sample_var = finite.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
    let (mut s2, mut pairs) = (0.0, 0usize);
    for w in y.windows(2) {
        let d = w[1] - w[0];
        if d.is_finite() {
            s2 += d * d;
            pairs += 1;
        }
    }
    if pairs == 0 || s2 <= 0.0 || sample_var <= 0.0 {
        return None;
    }
    let two_sample = 0.5 * s2 / pairs as f64;
    let observed = (sample_var / two_sample).ln();
    // The lag-1 statistic of the same short series, as a second witness.
    let n_dec = dec.iter().filter(|v| v.is_finite()).count();
    let lag = lag1_loop(dec, kind.difference_order());
    let s_b = (5.0 / (n - 1) as f64).sqrt();
    let s_r = 1.0 / (n_dec as f64).sqrt();
    let mut best: Option<(f64, i32)> = None;
    for alpha in kind.alpha_range() {
        let mu = bias::mu_of_alpha(alpha);
        let mut score = ((observed - bias::b1(n, mu).ln()) / s_b).powi(2);
        if let Some((d, r1)) = lag {
            // A d-th difference that is not stationary for this α behaves
            // like a random walk: r1 near 1.
            let rho = edf::decimated_lag1(alpha, m, d).unwrap_or(1.0);
            score += ((r1 - rho) / s_r).powi(2);
        }
        if best.is_none() || best.is_some_and(|(bs, _)| score < bs) {
            best = Some((score, alpha));
        }
    }
    let (_, mut alpha) = best?;
    if alpha >= 1 {
        if let Some(a) = pm_split(id, m) {
            alpha = a;
        }
    }
    Some(NoiseId {
        alpha,
        method: IdMethod::B1,
        r1: lag.map(|l| l.1),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// r1 of an alternating series is −1 + 1/n-ish; of a ramp near 1 (analytic).
    #[test]
    fn lag1_basic() {
        let alt: Vec<f64> = (0..100)
            .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        assert!((lag1_autocorrelation(&alt).unwrap() + 0.99).abs() < 1e-9);
        let ramp: Vec<f64> = (0..1000).map(|i| i as f64).collect();
        assert!(lag1_autocorrelation(&ramp).unwrap() > 0.99);
        assert_eq!(lag1_autocorrelation(&[1.0, f64::NAN]), None);
        assert_eq!(lag1_autocorrelation(&[2.0; 10]), None);
    }

    /// A pure quadratic (frequency drift) has MVAR = AVAR: every second
    /// difference, of samples or of block means, is 2m² (analytic).
    #[test]
    fn measured_r_of_drift_is_one() {
        let x: Vec<f64> = (0..400).map(|i| (i as f64).powi(2)).collect();
        let id = Identifier::new(&x, 1.0, VarianceKind::Allan);
        assert!((measured_r(&id, 8).unwrap() - 1.0).abs() < 1e-12);
        // Windows beyond the direct length go through the block table.
        let long: Vec<f64> = (0..40_000).map(|i| (i as f64 * 1e-3).powi(2)).collect();
        let id = Identifier::new(&long, 1.0, VarianceKind::Allan);
        assert!((measured_r(&id, 1000).unwrap() - 1.0).abs() < 1e-9);
        let ramp: Vec<f64> = (0..400).map(|i| i as f64).collect();
        let id = Identifier::new(&ramp, 1.0, VarianceKind::Allan);
        assert_eq!(measured_r(&id, 8), None);
    }

    #[test]
    fn too_short() {
        assert_eq!(
            identify(&[0.0, 1.0, 2.0], 1.0, 1, VarianceKind::Allan),
            None
        );
        assert_eq!(identify(&[0.0; 100], 0.0, 1, VarianceKind::Allan), None);
        assert_eq!(identify(&[0.0; 100], 1.0, 0, VarianceKind::Allan), None);
    }
}
