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
//! central 90 % in a tenth. The |TE| percentiles are exceeded in about 5 %
//! (p95) and half (p50) only where TE is far from zero against its spread
//! (with aging); about a mean near zero the folding makes them wide for any
//! calibrated prediction (docs/verdicts.md). The fitted aging in standard uncertainties,
//! D̂/σ_D, is collected as well: on records with no aging it should behave
//! like a standard normal variable (about 4.6 % beyond 2).

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
    Ok(Calibration {
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
    let end =
        pred.te.last().copied().ok_or_else(|| {
            crate::error::Error::insufficient("the prediction gave no time point")
        })?;
    let (d, sd) = match model.aging {
        super::aging::Aging::Linear { d, d_sigma, .. } => (d, d_sigma),
        super::aging::Aging::Log { a, a_sigma, .. } => (a, a_sigma),
    };
    Ok(Outcome {
        true_te,
        p50: end.p50,
        p95: end.p95,
        pit,
        z: if sd > 0.0 {
            (d - trial.aging) / sd
        } else {
            0.0
        },
    })
}
