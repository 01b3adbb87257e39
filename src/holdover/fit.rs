//! The deterministic part of a holdover fitted on the record — the aging
//! law and the frequency y0 at the start of holdover — and the uncertainty
//! of both, by a **parametric bootstrap** of the fit on records drawn from
//! the fitted noise model.
//!
//! # Estimators
//!
//! - aging: least squares on block means of the frequency
//!   ([`super::aging::fit_linear`], [`super::aging::fit_log`]);
//! - y0 ([`estimate_y0`]): the mean frequency over the last settle window W,
//!   carried to the window's end by the fitted law,
//!   ŷ0 = ȳ_W + [y_a(T) − mean_W y_a].
//!
//! # Why a bootstrap
//!
//! The textbook standard error of a regression slope assumes independent
//! residuals. The residuals of a clock's frequency are anything but: flicker
//! and random-walk FM make neighbouring block means move together, and the
//! textbook σ_D is then far too small (on records of white + random-walk FM
//! with no aging it was 15× too small, and "significant" aging was found in
//! 85 % of pure-noise records). Here the spread is measured instead: records
//! as long as the one fitted are drawn from the fitted power-law model
//! (Kasdin & Walter 1992, by [`super::paths::NoisePaths`]) plus the fitted
//! law, the same estimators are run on each, and the errors
//! (D̂ − D, ŷ0 − y0) are collected over [`REPLICATES`] records. Their second
//! moments about zero give σ_D, σ_y0 and their correlation; the Monte Carlo
//! of [`super::predict`] draws (δy0, δD) jointly from them, path by path.
//!
//! The true y0 of a bootstrap record is the law's frequency at its end plus
//! the random-walk FM level there ([`super::paths::NoisePaths::fill_with_level`]):
//! the part of the frequency that carries on into the holdover. The white and
//! flicker parts do not carry on as a level; the holdover paths, drawn from
//! rest at the start of holdover, hold them. (Flicker FM has a long memory
//! that this split leaves out; its effect on the percentiles is measured by
//! the calibration sweep, `examples/holdover_calibration.rs`.)
//!
//! The bootstrap records are sampled at a step Δ = T/N with N ≥ 800 (four
//! samples per aging block) and at least 8 samples per settle window, at
//! most the record's own τ0; the estimators only see block means and the
//! window mean, which depend on the phase at the block and window edges, so
//! the coarser sampling changes nothing but the cost. The bootstrap records
//! have no gaps; a record with many gaps is fitted with fewer blocks than
//! the bootstrap assumes.

use super::aging::{fit_linear, fit_log, Aging, AgingModel};
use super::paths::NoisePaths;
use crate::deviation::Estimator;
use crate::error::{Error, Result};
use crate::model::fit::{fit_variances, FitPoint, ModelFit};
use crate::model::PowerLaw;
use crate::record::{FrequencyRecord, PhaseRecord};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

/// Bootstrap records per fit.
pub const REPLICATES: usize = 400;

/// Least number of samples of a bootstrap record (4 per aging block).
const MIN_SAMPLES: usize = 4 * super::aging::BLOCKS;

/// Most samples of a bootstrap record.
const MAX_SAMPLES: usize = 1 << 15;

/// ŷ0 = ȳ_W + [y_a(T) − mean_W y_a]: the mean of the valid frequency values
/// over the last `window` samples, carried to the record's end T by the
/// aging law (module notes). Fails when the window holds no valid value.
pub fn estimate_y0(y: &FrequencyRecord, aging: &Aging, window: usize) -> Result<f64> {
    let n = y.y.len();
    let first = n.saturating_sub(window.max(1));
    let tau0 = y.tau0;
    let (mut sy, mut sa, mut k) = (0.0, 0.0, 0usize);
    for i in first..n {
        let v = y.y[i];
        if !v.is_nan() {
            sy += v;
            sa += aging.y((i as f64 + 0.5) * tau0);
            k += 1;
        }
    }
    if k == 0 {
        return Err(Error::insufficient(
            "the settle window holds no valid frequency sample",
        ));
    }
    Ok(sy / k as f64 + aging.y(n as f64 * tau0) - sa / k as f64)
}

/// MDEV points enter the noise fit up to this fraction of the record.
const MDEV_REACH: f64 = 1.0 / 16.0;

/// The longest τ, from this fraction of the record, where the fitted model
/// is held to the measured Hadamard variance (see [`fit_noise`]).
const LONG_REACH: f64 = 1.0 / 16.0;

/// The power-law model of a holdover's random part, fitted
/// ([`crate::model::fit::fit_variances`], EDF-weighted, f_h = 1/(2τ0)) to
/// the record's overlapping Hadamard variance at every octave τ and to its
/// modified Allan variance up to a sixteenth of the record.
///
/// The Hadamard variance does not see a linear frequency drift (NIST SP
/// 1065 §5.2.8), so the aging neither poses as random-walk FM nor, once
/// fitted and removed from the record, takes the random walk's power at the
/// longest τ with it — which the Allan variance of a detrended record does:
/// there the fitted RWFM came out too small, and with it the bootstrap
/// uncertainty of the aging (by 2.5× on records of white and random-walk
/// FM). MDEV at short τ separates white from flicker PM, where the
/// detrending changes nothing.
pub fn fit_noise(x: &PhaseRecord) -> Result<ModelFit> {
    fit_noise_spread(x).map(|(fit, _)| fit)
}

/// How well a record pins down its random-walk FM level, from its
/// longest-τ overlapping Hadamard variances (τ ≥ a sixteenth of the
/// record, the points where [`fit_noise`] holds the model to the measured
/// low-frequency power).
///
/// # Why
///
/// Over a record a few times longer than the τ where random-walk FM takes
/// over, h₋₂ rests on a handful of long-τ points with a few degrees of
/// freedom each: on 4096-point records of white FM with weak RWFM (h₀ =
/// 1e-22, h₋₂ = 3e-29, crossover near 500 s) the fitted h₋₂ is unbiased
/// on average but zero in 30 % of the records and below half the truth in
/// another 20 % (seeded Monte Carlo, 200 records). The aging's σ_D scales
/// with √h₋₂ where RWFM dominates, so a bootstrap from the point estimate
/// alone made σ_D far too small exactly where h₋₂ came out small: |D̂|/σ_D
/// beyond 2 in 25 % of pure-noise records (nominal 4.6 %), sd 2.5.
///
/// # The draw
///
/// With ν_i the EDF and σ̂²_i the measured (log-bias-corrected) variance of
/// each long point, W = Σ ν_i·σ̂²_i is compared with what the model without
/// RWFM gives there (R = Σ ν_i·σ²_rest,i) and what h₋₂ = 1 gives (U =
/// Σ ν_i·b_i). W is a sum of scaled χ² variables, with Satterthwaite's
/// effective degrees of freedom ν_W = (Σ ν_i σ̂²_i)² / Σ ν_i σ̂⁴_i. Each
/// bootstrap record draws the level it could have measured, E =
/// W·χ²_{ν_W}/ν_W (the sampling distribution of W about its value, mean
/// W), and h₋₂ = max(0, (E − R)/U): the bootstrap repeats the noise
/// estimate as well as the aging fit, so σ_D and σ_y0 hold the uncertainty
/// of the noise model too.
///
/// Calibration (seeded Monte Carlo, `examples/holdover_calibration.rs`,
/// 400 records of 4096 points each, rerun with the simulator's flicker
/// terms in steady state; the table is in docs/verdicts.md): (D̂ − D)/σ_D
/// has sd 1.25 / 0.91 / 0.75 and lies beyond 2 in 7.5 / 4.0 / 2.0 % of the
/// records (nominal 1 and 4.6 %) for weak RWFM, strong RWFM and all four
/// FM/PM terms; from the point estimate alone (200 records, before the
/// per-term random streams) it was 2.55 / 1.01 / 1.60 and 25 / 5 / 16 %.
/// (The posterior form W·ν_W/χ²_{ν_W}, tried as well, over-covers: sd 0.6–0.9.)
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct RwfmSpread {
    /// W = Σ ν_i·σ̂²_i over the long points.
    pub measured: f64,
    /// R = Σ ν_i·σ²_i of the model without its RWFM term.
    pub rest: f64,
    /// U = Σ ν_i·b_i, b_i the Hadamard variance of h₋₂ = 1.
    pub unit: f64,
    /// ν_W, the effective degrees of freedom of W.
    pub edf: f64,
}

impl RwfmSpread {
    /// One draw of h₋₂ (see the type's notes).
    pub fn draw(&self, rng: &mut impl rand::Rng) -> f64 {
        use rand_distr::{ChiSquared, Distribution};
        let Ok(chi) = ChiSquared::new(self.edf) else {
            return ((self.measured - self.rest) / self.unit).max(0.0);
        };
        let c: f64 = chi.sample(rng);
        let level = self.measured * c / self.edf;
        let h = (level - self.rest) / self.unit;
        if h.is_finite() {
            h.max(0.0)
        } else {
            0.0
        }
    }
}

/// [`fit_noise`], with the spread of its random-walk FM level
/// ([`RwfmSpread`]; `None` when the record has no Hadamard point with an
/// EDF at a sixteenth of its length or beyond).
pub fn fit_noise_spread(x: &PhaseRecord) -> Result<(ModelFit, Option<RwfmSpread>)> {
    let req = crate::stability::Request {
        estimators: vec![Estimator::Ohdev, Estimator::Mdev],
        ..crate::stability::Request::new(Vec::new())
    };
    let curves = crate::stability::analyse(x, &req)?;
    let reach = MDEV_REACH * x.span();
    let mut points = Vec::new();
    for (curve, kind) in curves.iter().zip([Estimator::Ohdev, Estimator::Mdev]) {
        for p in &curve.points {
            let e = p.estimate;
            if kind == Estimator::Mdev && e.tau > reach {
                continue;
            }
            if let Some(edf) = p.edf.filter(|v| v.is_finite() && *v > 0.0) {
                if e.value.is_finite() && e.value > 0.0 {
                    points.push(FitPoint {
                        kind,
                        tau: e.tau,
                        tau0: x.tau0,
                        var: e.value * e.value / log_bias(edf).exp(),
                        weight: edf,
                    });
                }
            }
        }
    }
    if points.is_empty() {
        return Err(Error::insufficient(format!(
            "fitting the noise model needs OHDEV or MDEV points with a known EDF; the record \
             ({} phase points) gives none",
            x.len()
        )));
    }
    let f_h = 0.5 / x.tau0;
    let mut fit = fit_variances(&points, f_h)?;
    // The longest τ: does the model hold the measured low-frequency power?
    let from = LONG_REACH * x.span();
    let mut rest_model = fit.model;
    rest_model.set(-2, 0.0);
    let (mut excess, mut unit, mut measured, mut rest, mut square) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for c in curves.iter().filter(|c| c.estimator == Estimator::Ohdev) {
        for p in &c.points {
            let e = p.estimate;
            if let Some(edf) = p.edf.filter(|v| v.is_finite() && *v > 0.0 && e.tau >= from) {
                let var = e.value * e.value / log_bias(edf).exp();
                let model = fit.model.variance(Estimator::Ohdev, e.tau, x.tau0);
                let b = crate::model::fit::basis(Estimator::Ohdev, -2, e.tau, x.tau0, f_h);
                excess += edf * (e.value * e.value - model);
                unit += edf * b;
                measured += edf * var;
                square += edf * var * var;
                rest += edf * rest_model.variance(Estimator::Ohdev, e.tau, x.tau0);
            }
        }
    }
    if excess > 0.0 && unit > 0.0 {
        let h = fit.model.get(-2) + excess / unit;
        fit.model.set(-2, h);
        if let Some(f) = fit.fitted.get_mut(0) {
            *f = true;
        }
    }
    let spread = (unit > 0.0 && measured > 0.0 && square > 0.0).then(|| RwfmSpread {
        measured,
        rest,
        unit,
        edf: measured * measured / square,
    });
    Ok((fit, spread.filter(|s| s.edf.is_finite() && s.edf > 0.0)))
}

/// E[ln(σ̂²/σ²)] for a variance estimate with ν degrees of freedom,
/// σ̂²/σ² ~ χ²_ν/ν: ψ(ν/2) − ln(ν/2) (analytic; ψ the digamma function).
/// A fit in log space sees every point this much low — at the longest τ,
/// where ν is a few units, by 30 % and more — so each variance is divided
/// by its exponential before the fit.
pub fn log_bias(edf: f64) -> f64 {
    let a = 0.5 * edf.max(1e-3);
    statrs::function::gamma::digamma(a) - a.ln()
}

/// How the aging is obtained, for the bootstrap to repeat it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AgingSource {
    /// Fitted on the record with this law.
    Fitted(AgingModel),
    /// Given (not fitted, no uncertainty).
    Given,
}

/// The uncertainty of the fitted deterministic part (module notes).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Spread {
    /// Standard uncertainty of the aging parameter (D in 1/s, or A of the
    /// log law); 0 when the aging was given.
    pub param_sigma: f64,
    /// Standard uncertainty of ŷ0 (0 when y0 is not estimated).
    pub y0_sigma: f64,
    /// Correlation of the two errors.
    pub corr: f64,
    /// Bootstrap records used.
    pub replicates: usize,
    /// Sampling step of the bootstrap records, s.
    pub step: f64,
}

/// What the bootstrap repeats.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BootstrapSpec<'a> {
    /// The noise model the records are drawn from.
    pub noise: &'a PowerLaw,
    /// The spread of its random-walk FM level, drawn per record (`None`:
    /// the model's h₋₂ as it is, e.g. for a model the user gave).
    pub rwfm: Option<RwfmSpread>,
    /// The law the records carry (the fitted or given one).
    pub law: &'a Aging,
    /// How the law is obtained from a record.
    pub source: AgingSource,
    /// Settle window of ŷ0, s (`None`: y0 not estimated from the record).
    pub window: Option<f64>,
    /// Length of the record fitted, s.
    pub span: f64,
    /// Its sampling interval, s.
    pub tau0: f64,
    /// Bootstrap records.
    pub replicates: usize,
    /// Seed (the same seed gives the same spread).
    pub seed: u64,
}

/// The law's parameter (D or A).
fn param(a: &Aging) -> f64 {
    match *a {
        Aging::Linear { d, .. } => d,
        Aging::Log { a, .. } => a,
    }
}

/// The sampling of the bootstrap records: (step, samples) — see the module
/// notes.
pub fn sampling(span: f64, tau0: f64, window: Option<f64>) -> (f64, usize) {
    let own = (span / tau0).round().max(1.0) as usize;
    let mut n = MIN_SAMPLES as f64;
    if let Some(w) = window {
        n = n.max((8.0 * span / w).ceil());
    }
    let n = (n as usize).clamp(1, MAX_SAMPLES).min(own);
    (span / n as f64, n)
}

/// Draw `replicates` records of `n` samples at `step` from `noise` plus
/// `law`, and evaluate `stat(record, level)` on each (`level` the
/// random-walk FM frequency at the record's end); `None` where `stat`
/// fails. Replicate b draws from ChaCha8 on stream b, so the result does not
/// depend on the number of threads.
#[allow(clippy::too_many_arguments)]
fn replicate<T, F>(
    noise: &PowerLaw,
    rwfm: Option<&RwfmSpread>,
    law: &Aging,
    n: usize,
    step: f64,
    replicates: usize,
    seed: u64,
    stat: F,
) -> Result<Vec<Option<T>>>
where
    T: Send,
    F: Fn(&FrequencyRecord, f64) -> Option<T> + Sync,
{
    let gen = NoisePaths::new(noise, step, n)?;
    let seed = seed.wrapping_mul(0x9E37_79B9_7F4A_7C15).wrapping_add(1);
    Ok((0..replicates)
        .into_par_iter()
        .map_init(
            || vec![0.0f64; n + 1],
            |x, b| {
                let mut rng = ChaCha8Rng::seed_from_u64(seed);
                rng.set_stream(b as u64);
                let level = match rwfm {
                    Some(spread) => {
                        let mut m = *noise;
                        m.set(-2, spread.draw(&mut rng));
                        match NoisePaths::new(&m, step, n) {
                            Ok(g) => g.fill_with_level(&mut rng, x),
                            Err(_) => return None,
                        }
                    }
                    None => gen.fill_with_level(&mut rng, x),
                };
                let y: Vec<f64> = (0..n)
                    .map(|k| (x[k + 1] - x[k]) / step + law.y((k as f64 + 0.5) * step))
                    .collect();
                stat(&FrequencyRecord { y, tau0: step }, level)
            },
        )
        .collect())
}

/// Run the parametric bootstrap (module notes).
pub fn bootstrap(spec: &BootstrapSpec) -> Result<Spread> {
    let (step, n) = sampling(spec.span, spec.tau0, spec.window);
    if n < 16 {
        return Err(Error::insufficient(format!(
            "the bootstrap of the aging fit needs a record of at least 16 samples, got {n}"
        )));
    }
    if spec.replicates < 10 {
        return Err(Error::invalid(format!(
            "the bootstrap needs at least 10 records, got {}",
            spec.replicates
        )));
    }
    let window = spec
        .window
        .map(|w| ((w / step).round() as usize).clamp(1, n));
    let truth_param = param(spec.law);
    let truth_end = spec.law.y(n as f64 * step);
    let errors = replicate(
        spec.noise,
        spec.rwfm.as_ref(),
        spec.law,
        n,
        step,
        spec.replicates,
        spec.seed,
        |rec, level| {
            let fitted = match spec.source {
                AgingSource::Given => *spec.law,
                AgingSource::Fitted(AgingModel::Linear) => fit_linear(rec).ok()?,
                AgingSource::Fitted(AgingModel::Log) => fit_log(rec).ok()?,
            };
            let dy = match window {
                Some(w) => estimate_y0(rec, &fitted, w).ok()? - (truth_end + level),
                None => 0.0,
            };
            Some((param(&fitted) - truth_param, dy))
        },
    )?;
    let ok: Vec<(f64, f64)> = errors.into_iter().flatten().collect();
    if ok.len() * 2 < spec.replicates {
        return Err(Error::insufficient(format!(
            "the aging fit failed on {} of {} bootstrap records",
            spec.replicates - ok.len(),
            spec.replicates
        )));
    }
    let m = ok.len() as f64;
    let (spp, syy, spy) = ok.iter().fold((0.0, 0.0, 0.0), |a, &(p, y)| {
        (a.0 + p * p, a.1 + y * y, a.2 + p * y)
    });
    let (param_sigma, y0_sigma) = ((spp / m).sqrt(), (syy / m).sqrt());
    let corr = if param_sigma > 0.0 && y0_sigma > 0.0 {
        (spy / m / (param_sigma * y0_sigma)).clamp(-1.0, 1.0)
    } else {
        0.0
    };
    Ok(Spread {
        param_sigma,
        y0_sigma,
        corr,
        replicates: ok.len(),
        step,
    })
}

/// The standard uncertainty of the drift rate fitted by
/// [`crate::prepare::fit_drift`] (least squares on the frequency, linear or
/// quadratic; the rate at the centre), by the same parametric bootstrap:
/// the fit repeated on `replicates` records of `span` seconds drawn from
/// `noise` (module notes), per second.
pub fn drift_sigma(
    noise: &PowerLaw,
    rwfm: Option<&RwfmSpread>,
    model: crate::prepare::DriftModel,
    span: f64,
    tau0: f64,
    replicates: usize,
    seed: u64,
) -> Result<f64> {
    let (step, n) = sampling(span, tau0, None);
    if n < 16 {
        return Err(Error::insufficient(format!(
            "the bootstrap of the drift fit needs a record of at least 16 samples, got {n}"
        )));
    }
    let none = Aging::Linear {
        c: 0.0,
        d: 0.0,
        d_sigma: 0.0,
    };
    let rates = replicate(noise, rwfm, &none, n, step, replicates, seed, |rec, _| {
        crate::prepare::fit_drift_y(&rec.y, rec.tau0, model)
            .ok()
            .map(|f| f.rate)
    })?;
    let ok: Vec<f64> = rates.into_iter().flatten().collect();
    if ok.len() * 2 < replicates.max(1) {
        return Err(Error::insufficient(
            "the drift fit failed on most bootstrap records",
        ));
    }
    Ok((ok.iter().map(|r| r * r).sum::<f64>() / ok.len() as f64).sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// White FM alone (analytic): block means are independent, so the
    /// bootstrap σ_D equals the regression formula σ_ȳ/√Σ(t_b − t̄)² with
    /// σ_ȳ² = h0/(2·T_b), within the bootstrap's own sampling error
    /// (1/√(2·400) = 3.5 %; tolerance 12 %). ŷ0 is a mean over W plus the
    /// carry D̂·(T − t̄_W), both with known variance (analytic).
    #[test]
    fn white_fm_matches_the_regression_formula() {
        let h0 = 1e-22;
        let mut noise = PowerLaw::zero(0.5);
        noise.set(0, h0);
        let law = Aging::Linear {
            c: 0.0,
            d: 0.0,
            d_sigma: 0.0,
        };
        let span = 100_000.0;
        let w = span / 10.0;
        let s = bootstrap(&BootstrapSpec {
            noise: &noise,
            rwfm: None,
            law: &law,
            source: AgingSource::Fitted(AgingModel::Linear),
            window: Some(w),
            span,
            tau0: 1.0,
            replicates: REPLICATES,
            seed: 3,
        })
        .unwrap();
        let b = super::super::aging::BLOCKS as f64;
        let tb = span / b;
        let var_block = h0 / (2.0 * tb);
        // Σ(t_b − t̄)² for B equally spaced blocks: T_b²·B(B² − 1)/12.
        let sxx = tb * tb * b * (b * b - 1.0) / 12.0;
        let want_d = (var_block / sxx).sqrt();
        assert!(
            (s.param_sigma / want_d - 1.0).abs() < 0.12,
            "{} vs {want_d}",
            s.param_sigma
        );
        // ŷ0 = ȳ_W + D̂·(T − W/2 − t̄_W)… with the window's centre T − W/2:
        // var = h0/(2W) + (W/2)²·σ_D² − 2·(W/2)·cov; the mean over W and D̂
        // share the last W/T_b blocks: cov(ȳ_W, D̂) = Σ_{b∈W} (t_b − t̄)/sxx ·
        // var_block·(T_b/W).
        let nw = (w / tb).round() as usize;
        let tbar = span / 2.0;
        let cov: f64 = (0..nw)
            .map(|j| {
                let t = span - (j as f64 + 0.5) * tb;
                (t - tbar) / sxx * var_block * tb / w
            })
            .sum();
        let carry = w / 2.0;
        let want_y0 = (h0 / (2.0 * w) + carry * carry * want_d * want_d + 2.0 * carry * cov).sqrt();
        assert!(
            (s.y0_sigma / want_y0 - 1.0).abs() < 0.12,
            "{} vs {want_y0}",
            s.y0_sigma
        );
        assert!(s.corr > 0.0, "{}", s.corr);
    }

    #[test]
    fn given_aging_has_no_parameter_error() {
        let mut noise = PowerLaw::zero(0.5);
        noise.set(-2, 1e-30);
        let law = Aging::Linear {
            c: 1e-9,
            d: 1e-15,
            d_sigma: 0.0,
        };
        let s = bootstrap(&BootstrapSpec {
            noise: &noise,
            rwfm: None,
            law: &law,
            source: AgingSource::Given,
            window: Some(3600.0),
            span: 86400.0,
            tau0: 1.0,
            replicates: 50,
            seed: 1,
        })
        .unwrap();
        assert_eq!(s.param_sigma, 0.0);
        assert!(s.y0_sigma > 0.0);
        assert_eq!(sampling(86400.0, 1.0, Some(3600.0)), (86400.0 / 800.0, 800));
        assert_eq!(sampling(100.0, 1.0, None), (1.0, 100));
    }
}
