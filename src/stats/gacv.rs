//! Generalised autocovariances (GACV) of power-law phase, the kernels of the
//! EDF sums in [`mod@crate::stats::edf`].
//!
//! A GACV s(t) of a non-stationary process is defined up to a polynomial of
//! low degree; every covariance of a finite difference of high enough order
//! is Σ_ab h_a h_b s(t + b − a) and does not depend on that polynomial.
//!
//! # Continuous time (Greenhall & Riley 2003)
//!
//! In units of τ, for S_y(f) ∝ f^α, the integrated phase has
//! sw(t) = −|t| (α = 2), t² ln|t| (1), |t|³ (0), −t⁴ ln|t| (−1), −|t|⁵ (−2),
//! t⁶ ln|t| (−3), |t|⁷ (−4); the phase averaged over τ/F has
//! sx(t) = F²·[2 sw(t) − sw(t − 1/F) − sw(t + 1/F)], and sampled phase
//! (F = ∞) has sx(t) = sw(t) at α + 2.
//!
//! # Discrete time (Kasdin & Walter 1992)
//!
//! The discrete power-law process — the one `simulate` produces, and the
//! one on which the classical closed forms were calibrated — filters white
//! noise by (1 − z⁻¹)^(−β/2). Its phase samples have, at integer lag k:
//!
//! - white PM: s(k) = δ_k;
//! - flicker PM, spectrum |2 sin πf|⁻¹: s(k) = −O(|k|),
//!   O(n) = Σ_{j=1}^{n} 1/(2j − 1) (analytic: the structure function is
//!   (4/π)∫_0^{π/2} sin²(kθ)/sin θ dθ = (4/π)·O(k));
//! - each further integration (α → α − 2) solves
//!   s′(k + 1) − 2s′(k) + s′(k − 1) = −s(k), s′(0) = 0, s′ even
//!   (white FM −|k|/2, random-walk FM (|k|³ − |k|)/12, flicker FM from
//!   flicker PM, and on to α = −3, −4).
//!
//! For large k the flicker-PM kernel tends to −½ ln k − (ln 2 + γ/2): on the
//! continuous scale above (sx(k/m) − sx(0) = −2 ln k − 3) the discrete
//! process has −2 ln k − κ with κ = 4 ln 2 + 2γ ([`FLICKER_PM_DISCRETE_KAPPA`]),
//! which shifts Table 3's b0 by (κ − 3)·C(2d, d).

/// κ = 4 ln 2 + 2γ: the zero-lag constant of discrete flicker PM on the
/// continuous-time scale (see the module notes); the continuous τ0-average
/// has 3.
pub const FLICKER_PM_DISCRETE_KAPPA: f64 = 4.0 * std::f64::consts::LN_2 + 2.0 * EULER_GAMMA;

/// Euler–Mascheroni constant γ.
const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// sw(t; α): GACV of integrated phase in units of τ (α = 2 … −4).
pub(crate) fn sw(t: f64, alpha: i32) -> f64 {
    let a = t.abs();
    let ln = |p: i32| if t == 0.0 { 0.0 } else { a.powi(p) * a.ln() };
    match alpha {
        2 => -a,
        1 => ln(2),
        0 => a.powi(3),
        -1 => -ln(4),
        -2 => -a.powi(5),
        -3 => ln(6),
        _ => a.powi(7),
    }
}

/// sx(t; F, α) for the continuous τ/F-average (`Some(F)`) or sampled phase
/// (`None`, F = ∞).
///
/// For α = 1 and |t| > 2/F the second difference is evaluated without
/// cancellation: with u = 1/(F|t|), sx = −2 ln|t| − g(u)/u²,
/// g(u) = (1 − u)² ln(1 − u) + (1 + u)² ln(1 + u) = 3u² − u⁴/6 − u⁶/30 − …
/// (the plain form loses about log10(F²) digits).
pub(crate) fn sx_continuous(t: f64, factor: Option<f64>, alpha: i32) -> f64 {
    let Some(f) = factor else {
        return sw(t, alpha + 2);
    };
    let h = 1.0 / f;
    if alpha == 1 && t.abs() > 2.0 * h {
        let u = h / t.abs();
        let g_over_u2 = if u < 1e-3 {
            let u2 = u * u;
            3.0 - u2 / 6.0 - u2 * u2 / 30.0
        } else {
            ((1.0 - u).powi(2) * (-u).ln_1p() + (1.0 + u).powi(2) * u.ln_1p()) / (u * u)
        };
        -2.0 * t.abs().ln() - g_over_u2
    } else {
        f * f * (2.0 * sw(t, alpha) - sw(t - h, alpha) - sw(t + h, alpha))
    }
}

/// GACV of the phase samples of the discrete power-law process with
/// exponent α (2 … −4), at lags 0 ..= `kmax`.
///
/// RWFM (α = −2) is the exception: a counter samples the phase of a
/// continuous random-walk FM, whose frequency steps between samples are
/// MA(1)-correlated (they are τ0 averages of a continuous random walk). Its
/// GACV is the continuous |t|³/12 at integer lags, k³/12, not the plain
/// discrete random walk's (k³ − k)/12; the simulator draws this process
/// (src/simulate.rs, RWFM shaping).
pub(crate) fn discrete_phase_gacv(alpha: i32, kmax: usize) -> Vec<f64> {
    let n = kmax + 1;
    if alpha == -2 {
        return (0..n).map(|k| (k as f64).powi(3) / 12.0).collect();
    }
    let (mut s, mut a): (Vec<f64>, i32) = if alpha % 2 == 0 {
        ((0..n).map(|k| if k == 0 { 1.0 } else { 0.0 }).collect(), 2)
    } else {
        let mut odd = 0.0;
        let v = (0..n)
            .map(|k| {
                if k > 0 {
                    odd += 1.0 / (2 * k - 1) as f64;
                }
                -odd
            })
            .collect();
        (v, 1)
    };
    while a > alpha {
        s = integrate(&s);
        a -= 2;
    }
    s
}

/// One value of [`discrete_phase_gacv`] at lag k without the table, for the
/// noise types with a closed form: WPM δ_k, FPM −O(k), WFM −k/2, RWFM k³/12.
/// For FPM, O(k) = Σ_{j=1}^{k} 1/(2j − 1) = H_{2k} − H_k/2 is summed
/// directly up to k = 1024 and beyond taken from the asymptotic series of the
/// harmonic numbers, O(k) = ½ ln k + ln 2 + γ/2 + 1/(48k²) − 7/(1920k⁴) + …
/// (the next term is below 1e−19 there). `None` for FFM and α < −2, which
/// have no closed form here.
pub(crate) fn discrete_phase_gacv_at(alpha: i32, k: usize) -> Option<f64> {
    let kf = k as f64;
    match alpha {
        2 => Some(if k == 0 { 1.0 } else { 0.0 }),
        1 => Some(if k <= 1024 {
            -(1..=k).map(|j| 1.0 / (2 * j - 1) as f64).sum::<f64>()
        } else {
            let k2 = kf * kf;
            -(0.5 * kf.ln() + std::f64::consts::LN_2 + EULER_GAMMA / 2.0 + 1.0 / (48.0 * k2)
                - 7.0 / (1920.0 * k2 * k2))
        }),
        0 => Some(-kf / 2.0),
        -2 => Some(kf.powi(3) / 12.0),
        _ => None,
    }
}

/// The phase autocovariance at real lags t (in samples) of white or
/// flicker PM band-limited to the Nyquist frequency f_h = 1/(2τ0) — the
/// processes of IEEE Std 1139 with that f_h, which `simulate` draws — in
/// units where the spectra are 1 (white) and 1/(2πf) (flicker, f in
/// cycles per sample) on (0, ½):
///
/// - white PM: s(t) = sinc(t) = sin(πt)/(πt) (δ_k at whole lags);
/// - flicker PM: s(t) = −(1/π)·Cin(π|t|) with Cin(x) = ∫₀^x (1 − cos u)/u du
///   (= γ + ln x − Ci(x)), from s(t) − s(0) = −2∫₀^½ (1 − cos 2πft)/(2πf) df;
///   defined up to a constant, which every combination used here cancels.
///
/// These differ from the discrete Kasdin–Walter kernels of
/// [`discrete_phase_gacv`] near the Nyquist frequency (flicker PM there has
/// |2 sin πf|⁻¹), which matters for estimators with many short lags such as
/// Theo1 (its flicker-PM EDF is about 10 % higher on the discrete process).
#[derive(Debug, Clone)]
pub(crate) struct BandLimitedPm {
    alpha: i32,
    /// Cin(πk), k = 0 ..= kmax (flicker PM only).
    cin_pi: Vec<f64>,
}

impl BandLimitedPm {
    /// The kernel of α = 2 or 1 for lags up to `kmax`; `None` for other α.
    pub(crate) fn new(alpha: i32, kmax: usize) -> Option<Self> {
        let pi = std::f64::consts::PI;
        let cin_pi = match alpha {
            2 => Vec::new(),
            1 => {
                let mut v = Vec::with_capacity(kmax + 1);
                let mut acc = 0.0;
                v.push(0.0);
                for j in 0..kmax {
                    acc += cin_piece(j as f64 * pi, (j + 1) as f64 * pi);
                    v.push(acc);
                }
                v
            }
            _ => return None,
        };
        Some(Self { alpha, cin_pi })
    }

    /// s(t); for flicker PM |t| must not exceed the `kmax` given.
    pub(crate) fn at(&self, t: f64) -> f64 {
        let pi = std::f64::consts::PI;
        let a = t.abs();
        if self.alpha == 2 {
            return if a == 0.0 {
                1.0
            } else {
                (pi * a).sin() / (pi * a)
            };
        }
        let whole = (a.floor() as usize).min(self.cin_pi.len() - 1);
        let rest = if a > whole as f64 {
            cin_piece(whole as f64 * pi, a * pi)
        } else {
            0.0
        };
        -(self.cin_pi[whole] + rest) / pi
    }

    /// s(k) at whole lags 0 ..= kmax, as a table.
    pub(crate) fn table(&self, kmax: usize) -> Vec<f64> {
        (0..=kmax).map(|k| self.at(k as f64)).collect()
    }
}

/// Cin(x) = ∫₀^x (1 − cos u)/u du for x ≥ 0 (see [`BandLimitedPm`]); for
/// the tests (the kernel keeps its own table of Cin(πk)).
#[cfg(test)]
pub(crate) fn cin(x: f64) -> f64 {
    if !(x > 0.0) {
        return 0.0;
    }
    let pi = std::f64::consts::PI;
    let whole = (x / pi).floor() as usize;
    let mut total = 0.0;
    for j in 0..whole {
        total += cin_piece(j as f64 * pi, (j + 1) as f64 * pi);
    }
    total + cin_piece(whole as f64 * pi, x)
}

/// ∫_a^b (1 − cos u)/u du for 0 ≤ a ≤ b, b − a ≤ π, by 16-point
/// Gauss–Legendre quadrature (the integrand is smooth; the rule is exact to
/// rounding on such an interval).
fn cin_piece(a: f64, b: f64) -> f64 {
    if !(b > a) {
        return 0.0;
    }
    let f = |u: f64| {
        if u < 1e-4 {
            u / 2.0 - u * u * u / 24.0
        } else {
            (1.0 - u.cos()) / u
        }
    };
    let (mid, half) = (0.5 * (a + b), 0.5 * (b - a));
    GL16.iter()
        .map(|&(node, weight)| weight * (f(mid + half * node) + f(mid - half * node)))
        .sum::<f64>()
        * half
}

/// The 16-point Gauss–Legendre rule on [−1, 1]: the positive nodes and
/// their weights (Abramowitz & Stegun, Table 25.4).
const GL16: [(f64, f64); 8] = [
    (0.095_012_509_837_637_44, 0.189_450_610_455_068_5),
    (0.281_603_550_779_258_9, 0.182_603_415_044_923_6),
    (0.458_016_777_657_227_4, 0.169_156_519_395_002_5),
    (0.617_876_244_402_643_7, 0.149_595_988_816_576_7),
    (0.755_404_408_355_003, 0.124_628_971_255_533_9),
    (0.865_631_202_387_831_7, 0.095_158_511_682_492_79),
    (0.944_575_023_073_232_6, 0.062_253_523_938_647_89),
    (0.989_400_934_991_649_9, 0.027_152_459_411_754_09),
];

/// GACV of the phase samples of the IEEE Std 1139 power law sampled at τ0,
/// the processes `simulate` draws (each record the sampled continuous
/// model, WPM and FPM band-limited at f_h = 1/(2τ0)), at lags 0 ..= kmax:
/// white PM δ_k; flicker PM [`BandLimitedPm`]; white FM −k/2; flicker FM
/// k²·ln k (sampled continuous FFM phase: Greenhall & Riley's
/// sw(t; α + 2) = t² ln|t|); random-walk FM k³/12. For α = −3, −4, which
/// have no sampled model here, the discrete kernels of
/// [`discrete_phase_gacv`]. The statistics that divide a bias out (the
/// total family, TheoH) use these, so that the value corrected is the
/// variance of the process measured: at m = 2 the discrete kernels put
/// MTOT's flicker-PM bias 2.7 % and HTOT's flicker-FM bias 4.7 % off, which
/// the seeded Monte Carlo of `examples/coverage.rs` showed as coverage of
/// 0.49 and 0.24 instead of 0.683.
pub(crate) fn sampled_phase_gacv(alpha: i32, kmax: usize) -> Vec<f64> {
    match alpha {
        1 => BandLimitedPm::new(1, kmax)
            .map(|k| k.table(kmax))
            .unwrap_or_default(),
        -1 => (0..=kmax).map(flicker_fm_sampled).collect(),
        _ => discrete_phase_gacv(alpha, kmax),
    }
}

/// One value of [`sampled_phase_gacv`] at lag k without a table, for
/// α = 2 … −2 (`None` otherwise). Flicker PM beyond k = 20 from the
/// asymptotic series of Ci at x = πk, where sin x = 0:
/// Ci(πk) = −(−1)^k·(1/x²)(1 − 6/x² + 120/x⁴ − 5040/x⁶ + 362880/x⁸ − …)
/// (Abramowitz & Stegun 5.2.8, 5.2.35; the next term is below 1e−13 there),
/// and by quadrature below.
pub(crate) fn sampled_phase_gacv_at(alpha: i32, k: usize) -> Option<f64> {
    let pi = std::f64::consts::PI;
    match alpha {
        1 => Some(if k <= 20 {
            let mut c = 0.0;
            for j in 0..k {
                c += cin_piece(j as f64 * pi, (j + 1) as f64 * pi);
            }
            -c / pi
        } else {
            let x = pi * k as f64;
            let x2 = x * x;
            let g = (1.0 - 6.0 / x2 + 120.0 / (x2 * x2) - 5040.0 / (x2 * x2 * x2)
                + 362_880.0 / (x2 * x2 * x2 * x2))
                / x2;
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            let ci = -sign * g;
            -(EULER_GAMMA + x.ln() - ci) / pi
        }),
        -1 => Some(flicker_fm_sampled(k)),
        2 | 0 | -2 => discrete_phase_gacv_at(alpha, k),
        _ => None,
    }
}

/// k²·ln k (0 at k = 0): sampled continuous flicker FM phase.
fn flicker_fm_sampled(k: usize) -> f64 {
    if k == 0 {
        0.0
    } else {
        let kf = k as f64;
        kf * kf * kf.ln()
    }
}

/// One integration of the process: s′(k+1) − 2s′(k) + s′(k−1) = −s(k),
/// s′(0) = 0, s′(1) = s′(−1).
fn integrate(old: &[f64]) -> Vec<f64> {
    let n = old.len();
    let mut s = vec![0.0; n];
    if n > 1 {
        s[1] = -old[0] / 2.0;
    }
    for k in 1..n.saturating_sub(1) {
        s[k + 1] = 2.0 * s[k] - s[k - 1] - old[k];
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Closed forms of the discrete kernels (analytic).
    #[test]
    fn discrete_closed_forms() {
        let w = discrete_phase_gacv(0, 10);
        for (k, v) in w.iter().enumerate() {
            assert!((v + k as f64 / 2.0).abs() < 1e-12);
        }
        let r = discrete_phase_gacv(-2, 50);
        for (k, v) in r.iter().enumerate() {
            let kf = k as f64;
            assert!((v - kf.powi(3) / 12.0).abs() < 1e-9 * (1.0 + kf.powi(3)));
        }
        let f = discrete_phase_gacv(1, 3);
        assert!((f[3] + (1.0 + 1.0 / 3.0 + 1.0 / 5.0)).abs() < 1e-15);
    }

    /// The closed forms without the table equal the table (analytic; for
    /// flicker PM the asymptotic series beyond k = 1024, to the rounding of
    /// the table's own running sum, about 1e−15 relative).
    #[test]
    fn closed_forms_at_one_lag() {
        for alpha in [2, 1, 0, -2] {
            let t = discrete_phase_gacv(alpha, 5000);
            for k in [0usize, 1, 2, 7, 1024, 1025, 1500, 4999] {
                let v = discrete_phase_gacv_at(alpha, k).unwrap();
                assert!(
                    (v - t[k]).abs() <= 2e-15 * (1.0 + t[k].abs()),
                    "α={alpha} k={k}: {v} vs {}",
                    t[k]
                );
            }
        }
        assert_eq!(discrete_phase_gacv_at(-1, 3), None);
    }

    /// Cin against its series γ + ln x − Ci(x), Ci(x) = γ + ln x +
    /// Σ (−x²)^n/(2n·(2n)!) (Abramowitz & Stegun 5.2.16), so
    /// Cin(x) = −Σ_{n≥1} (−x²)^n/(2n·(2n)!) (analytic), at small x where
    /// the series is accurate; and the band-limited white kernel at whole
    /// lags is δ_k.
    #[test]
    fn cin_series() {
        for x in [0.3f64, 1.0, 3.0, std::f64::consts::PI, 5.5, 9.0] {
            let (mut sum, mut term) = (0.0, 1.0);
            for n in 1..80 {
                term *= -x * x / ((2 * n - 1) as f64 * (2 * n) as f64);
                sum -= term / (2 * n) as f64;
            }
            assert!((cin(x) - sum).abs() < 1e-12 * sum.abs().max(1.0), "x={x}");
        }
        let white = BandLimitedPm::new(2, 0).unwrap();
        for k in 1..20 {
            assert!(white.at(k as f64).abs() < 1e-15);
        }
        // The table of Cin(πk) and single values agree.
        let flicker = BandLimitedPm::new(1, 50).unwrap();
        for t in [0.0, 1.0, 2.5, 17.0, 49.9] {
            let want = -cin(std::f64::consts::PI * t) / std::f64::consts::PI;
            assert!((flicker.at(t) - want).abs() < 1e-12, "t={t}");
        }
        // Large x: Cin(x) − ln x → γ (A&S 5.2.2 with Ci → 0).
        let x = 2000.0 * std::f64::consts::PI;
        assert!((cin(x) - x.ln() - EULER_GAMMA).abs() < 1e-7);
    }

    /// The sampled kernels one lag at a time equal their tables (flicker PM:
    /// the Ci series against Gauss–Legendre quadrature, 1e−12), and flicker
    /// FM's second difference at lag 1 is 8·ln 2 · (τ/τ0)² … with the AVAR
    /// of sampled FFM, 2·ln2·h (IEEE Std 1139): E[(x₂ − 2x₁ + x₀)²] =
    /// −8s(1) + 2s(2) = 8 ln 2 in these units (analytic).
    #[test]
    fn sampled_kernels() {
        for alpha in [2, 1, 0, -1, -2] {
            let t = sampled_phase_gacv(alpha, 300);
            for k in [0usize, 1, 2, 19, 20, 21, 22, 150, 300] {
                let v = sampled_phase_gacv_at(alpha, k).unwrap();
                assert!(
                    (v - t[k]).abs() < 1e-12 * (1.0 + t[k].abs()),
                    "α={alpha} k={k}"
                );
            }
        }
        let s = sampled_phase_gacv(-1, 2);
        let second = 6.0 * s[0] - 8.0 * s[1] + 2.0 * s[2];
        assert!((second - 8.0 * std::f64::consts::LN_2).abs() < 1e-12);
    }

    /// Flicker PM: −O(k) → −½ ln k − (ln 2 + γ/2) (analytic asymptote).
    #[test]
    fn flicker_pm_asymptote() {
        let f = discrete_phase_gacv(1, 10_000);
        let k = 10_000.0f64;
        let want = -(0.5 * k.ln() + std::f64::consts::LN_2 + EULER_GAMMA / 2.0);
        assert!((f[10_000] - want).abs() < 1e-7);
        assert!((FLICKER_PM_DISCRETE_KAPPA - 3.927_020_052_042_847).abs() < 1e-8);
    }

    /// The stable α = 1 form equals the plain second difference where the
    /// latter is still accurate, and tends to −(2 ln|t| + 3) (analytic).
    #[test]
    fn stable_flicker_pm_sx() {
        for &f in &[5.0, 10.0, 40.0] {
            for &t in &[0.5, 1.0, 1.3, 2.7, 4.0] {
                let h = 1.0 / f;
                let plain = f * f * (2.0 * sw(t, 1) - sw(t - h, 1) - sw(t + h, 1));
                let stable = sx_continuous(t, Some(f), 1);
                assert!((plain - stable).abs() < 1e-9, "F={f} t={t}");
            }
        }
        let v = sx_continuous(2.0, Some(1e9), 1);
        assert!((v + 2.0 * 2f64.ln() + 3.0).abs() < 1e-12);
    }
}
