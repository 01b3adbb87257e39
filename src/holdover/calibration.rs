//! A seeded check of the holdover prediction against the true futures of
//! records of a known model.
//!
//! Each trial synthesises one record of the model (Kasdin & Walter 1992,
//! [`crate::simulate::simulate_phase`]) with its linear aging, long enough
//! to hold the record *and* the holdover span after it. The record part goes
//! through the whole pipeline a user would run — [`super::model_from_record`]
//! (aging fit, noise fit, bootstrap uncertainties) and [`super::predict`] —
//! and the true time error at the end of the span, x(T + S) − x(T), is set
//! against the predicted p50 and p95 of |TE(S)| and against the predicted
//! distribution of the signed TE (the fraction of paths below it, the
//! probability integral transform). Over many trials an honest prediction
//! has the true signed TE above its median in half of them and outside its
//! central 90 % in a tenth, and beyond the median on the side away from
//! zero in half (a check the other two miss: a prediction centred too far
//! from zero on both sides alike). The |TE| percentiles are exceeded in
//! about 5 % (p95) and half (p50) only where the mean TE is far from zero
//! against its spread (an aging, or a frequency offset carried on); about
//! a mean near zero they are wide for any honest prediction
//! (docs/verdicts.md). The fitted aging in standard uncertainties,
//! D̂/σ_D, is collected as well: on records with no aging it should behave
//! like a standard normal variable (about 4.6 % beyond 2).

use super::aging::Aging;
use super::{model_from_record, simulate_te, summarise, FromRecord, Settings};
use crate::error::Result;
use crate::model::PowerLaw;
use crate::record::{PhaseRecord, Record};
use crate::simulate::{simulate_phase, SimSpec};
use rayon::prelude::*;

/// One calibration run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Trial {
    /// The noise model of the records (f_h = 1/(2τ0) when it has WPM/FPM).
    pub model: PowerLaw,
    /// Linear aging D of the records, 1/s.
    pub aging: f64,
    /// Frequency offset of the records at their start (dimensionless): a
    /// free-running unit's offset, which carries on into the holdover.
    pub offset: f64,
    /// Sampling interval, s.
    pub tau0: f64,
    /// Points of each record fitted.
    pub points: usize,
    /// Holdover span after the record, in samples of τ0.
    pub span_samples: usize,
    /// Records (trials).
    pub records: usize,
    /// Monte Carlo paths of each prediction.
    pub paths: usize,
    /// Simulation steps of each prediction.
    pub steps: usize,
    /// Seed of the first record (record r uses seed + r).
    pub seed: u64,
    /// Give the prediction the true noise model instead of fitting it on
    /// each record (separates the bootstrap from the noise fit).
    pub true_noise: bool,
    /// Bootstrap records of each fit ([`super::fit::REPLICATES`] by default).
    pub replicates: usize,
}

/// What one trial gave.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Outcome {
    /// True |TE| at the span end.
    pub true_te: f64,
    /// Predicted p50 of |TE| there.
    pub p50: f64,
    /// Predicted p95 of |TE| there.
    pub p95: f64,
    /// Error of the fitted aging in standard uncertainties, (D̂ − D)/σ_D.
    pub z: f64,
    /// The fraction of the predicted paths whose signed TE at the span end
    /// lies below the true signed TE (the probability integral transform:
    /// uniform on 0…1 when the predicted distribution of TE is right).
    pub pit: f64,
    /// r = a/n at the span end: a is the spread the uncertainties of the
    /// fitted y0 and aging give TE there, a² = σ_y0²·t² + σ_D²·u² +
    /// 2ρ·σ_y0·σ_D·t·u (u the aging's TE per unit of its parameter), and n
    /// is the spread of the predicted paths' TE with y0 and the aging known
    /// exactly (the same paths without their errors); infinite when those
    /// paths have no noise. Where r is 1 or more and the true
    /// mean TE is zero, no rule can put the exceedance of its |TE| p95 near
    /// 5 % without being overconfident at some aging (at most 3.0 % at
    /// r = 1; docs/verdicts.md).
    pub spread_ratio: f64,
    /// m/a: the predicted mean TE at the span end (the deterministic part,
    /// te0 + y0·t + aging) in units of a, signed; 0 when a is. Where it is
    /// small as well as r large, the record cannot tell the mean from zero,
    /// and the |TE| percentiles are wide however they are made; where it is
    /// large the folding does not matter.
    pub mean_in_spreads: f64,
}

/// The summary over the trials.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Calibration {
    /// Every trial.
    pub outcomes: Vec<Outcome>,
    /// Fraction of trials with the true |TE| above the predicted p50.
    pub above_p50: f64,
    /// Fraction above the predicted p95.
    pub above_p95: f64,
    /// Fraction of trials with |D̂ − D|/σ_D > 2.
    pub z_beyond_2: f64,
    /// Standard deviation of (D̂ − D)/σ_D over the trials (1 when σ_D is honest).
    pub z_sd: f64,
    /// Fraction of trials with the true signed TE above the predicted
    /// median of the signed TE (nominal 50 %).
    pub above_signed_median: f64,
    /// Fraction of trials with the true signed TE outside the predicted
    /// central 90 % of the signed TE (nominal 10 %).
    pub outside_signed_90: f64,
    /// Fraction of trials with the true signed TE beyond the predicted
    /// median on the side away from zero (the side of the predicted mean
    /// m; nominal 50 %). The signed checks above are blind to a prediction
    /// centred too far from zero on both sides alike; this one is not.
    pub outward_of_median: f64,
    /// The median over the trials of [`Outcome::spread_ratio`].
    pub median_spread_ratio: f64,
    /// The median over the trials of |[`Outcome::mean_in_spreads`]|.
    pub median_mean_in_spreads: f64,
}

/// Run the trials (module notes); records are independent and run in
/// parallel, and the same `trial` gives the same result.
pub fn run(trial: &Trial) -> Result<Calibration> {
    let outcomes: Vec<Outcome> = (0..trial.records)
        .into_par_iter()
        .map(|r| one(trial, trial.seed.wrapping_add(r as u64)))
        .collect::<Result<_>>()?;
    let n = outcomes.len().max(1) as f64;
    let above_p50 = outcomes.iter().filter(|o| o.true_te > o.p50).count() as f64 / n;
    let above_p95 = outcomes.iter().filter(|o| o.true_te > o.p95).count() as f64 / n;
    let zs: Vec<f64> = outcomes.iter().map(|o| o.z).collect();
    let z_beyond_2 = zs.iter().filter(|z| z.abs() > 2.0).count() as f64 / n;
    let mean = zs.iter().sum::<f64>() / n;
    let z_sd = (zs.iter().map(|z| (z - mean).powi(2)).sum::<f64>() / (n - 1.0).max(1.0)).sqrt();
    let above_signed_median = outcomes.iter().filter(|o| o.pit > 0.5).count() as f64 / n;
    let outside_signed_90 = outcomes
        .iter()
        .filter(|o| o.pit < 0.05 || o.pit > 0.95)
        .count() as f64
        / n;
    let outward_of_median = outcomes
        .iter()
        .filter(|o| {
            (o.mean_in_spreads > 0.0 && o.pit > 0.5) || (o.mean_in_spreads < 0.0 && o.pit < 0.5)
        })
        .count() as f64
        / n;
    Ok(Calibration {
        outward_of_median,
        median_spread_ratio: median(outcomes.iter().map(|o| o.spread_ratio)),
        median_mean_in_spreads: median(outcomes.iter().map(|o| o.mean_in_spreads.abs())),
        above_signed_median,
        outside_signed_90,
        outcomes,
        above_p50,
        above_p95,
        z_beyond_2,
        z_sd,
    })
}

fn one(trial: &Trial, seed: u64) -> Result<Outcome> {
    let mut spec = SimSpec::new(
        trial.model,
        trial.tau0,
        trial.points + trial.span_samples,
        seed,
    );
    spec.drift_per_s = trial.aging;
    spec.freq_offset = trial.offset;
    let full = simulate_phase(&spec)?;
    let last = trial.points - 1;
    let signed_te = full.x[last + trial.span_samples] - full.x[last];
    let true_te = signed_te.abs();
    let rec = Record::Phase(PhaseRecord::new(
        full.x[..trial.points].to_vec(),
        trial.tau0,
    )?);
    let model = model_from_record(
        &rec,
        &FromRecord {
            seed,
            noise: trial.true_noise.then_some(trial.model),
            replicates: trial.replicates,
            ..FromRecord::default()
        },
    )?;
    let span = trial.span_samples as f64 * trial.tau0;
    let settings = Settings {
        paths: trial.paths,
        steps: trial.steps,
        seed,
        ..Settings::new(span, 1.0)
    };
    // One simulation gives both the |TE| percentiles and the signed PIT.
    let (te, n, step) = simulate_te(&model, &settings)?;
    let pred = summarise(&model, &settings, &te, n, step)?;
    let below = (0..trial.paths)
        .filter(|p| te[p * n + n - 1] < signed_te)
        .count();
    let pit = below as f64 / trial.paths as f64;
    let ends: Vec<f64> = (0..trial.paths).map(|p| te[p * n + n - 1]).collect();
    let (spread_ratio, mean_in_spreads) = spreads(&model, &settings, &ends)?;
    let end =
        pred.te.last().copied().ok_or_else(|| {
            crate::error::Error::insufficient("the prediction gave no time point")
        })?;
    let (d, sd) = match model.aging {
        Aging::Linear { d, d_sigma, .. } => (d, d_sigma),
        Aging::Log { a, a_sigma, .. } => (a, a_sigma),
    };
    Ok(Outcome {
        true_te,
        p50: end.p50,
        p95: end.p95,
        pit,
        spread_ratio,
        mean_in_spreads,
        z: if sd > 0.0 {
            (d - trial.aging) / sd
        } else {
            0.0
        },
    })
}

/// The median of `values` (NaN when there are none).
fn median(values: impl Iterator<Item = f64>) -> f64 {
    let mut v: Vec<f64> = values.collect();
    crate::prepare::outliers::median_in_place(&mut v).unwrap_or(f64::NAN)
}

/// ([`Outcome::spread_ratio`], [`Outcome::mean_in_spreads`]) of the
/// prediction from `model` under `settings`, whose paths' signed TE at the
/// span end are `ends` (path order). n is the spread of the same paths'
/// noise: each end less its base and its own y0 and aging errors, as
/// the prediction composed it.
fn spreads(model: &super::HoldoverModel, settings: &Settings, ends: &[f64]) -> Result<(f64, f64)> {
    let plan = super::Plan::new(model, settings)?;
    let k = settings.steps;
    let (t, b, u) = (plan.t[k], plan.base[k], plan.unit[k]);
    let (sy, sd, rho) = (plan.sy0, plan.sd, plan.rho);
    let a = ((sy * t).powi(2) + (sd * u).powi(2) + 2.0 * rho * sy * sd * t * u)
        .max(0.0)
        .sqrt();
    let noise: Vec<f64> = ends
        .iter()
        .enumerate()
        .map(|(p, x)| {
            let (dy, dd) = plan.errors(super::path_errors(settings.seed, p));
            x - b - dy * t - dd * u
        })
        .collect();
    let count = noise.len() as f64;
    let mean = noise.iter().sum::<f64>() / count;
    let n = (noise.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (count - 1.0)).sqrt();
    // Both are 0 when a is: a prediction with y0 and the aging given.
    if a > 0.0 {
        Ok((a / n, b / a))
    } else {
        Ok((0.0, 0.0))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::holdover::HoldoverModel;

    /// Analytic: with white FM alone the noise part of TE after S seconds
    /// has variance h0·S/2 (S_y = h0 one-sided makes the phase a Wiener
    /// process), and a² = (σ_y0·S)² + (σ_D·S²/2)² with uncorrelated errors.
    /// Here a = 1.118e−10 s and n = 2.236e−10 s, so r = 0.5; m = y0·S =
    /// 1e−9 s, m/a = 8.944. The paths' spread is a seeded Monte Carlo of
    /// 4000 paths (relative standard error of n about 1.1 %).
    #[test]
    fn spreads_are_the_analytic_ones_for_white_fm() {
        let model = HoldoverModel {
            te0: 0.0,
            y0: 1e-12,
            y0_sigma: 1e-13,
            aging: Aging::Linear {
                c: 0.0,
                d: 0.0,
                d_sigma: 1e-16,
            },
            start: 0.0,
            temp_worst: 0.0,
            noise: PowerLaw::parse("h0=1e-22", 0.5).unwrap(),
            uncertainty: Default::default(),
        };
        let settings = Settings {
            paths: 4000,
            steps: 100,
            seed: 7,
            ..Settings::new(1000.0, 1.0)
        };
        let (te, n, _) = simulate_te(&model, &settings).unwrap();
        let ends: Vec<f64> = (0..settings.paths).map(|p| te[p * n + n - 1]).collect();
        let (r, m) = spreads(&model, &settings, &ends).unwrap();
        assert!((r / 0.5 - 1.0).abs() < 0.05, "r = {r}");
        assert!((m - 1e-9 / 1.25e-20f64.sqrt()).abs() < 1e-9, "m/a = {m}");
    }
}
