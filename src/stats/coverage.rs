//! Coverage of the confidence intervals by seeded Monte Carlo: the fraction
//! of seeded power-law records whose interval at a τ contains the true
//! value there. An interval is honest when that fraction is the nominal
//! confidence; this module is how tauwise checks it (the coverage tests in
//! `tests/coverage.rs`, and the full sweep of `examples/coverage.rs`).
//!
//! Records come from [`crate::simulate`] (Kasdin & Walter 1992, shaped so
//! that each record is the sampled continuous model of IEEE Std 1139 with
//! f_h = 1/(2τ0)); every statistic is the one the commands print — noise
//! identified per τ by [`crate::stats::dominant_noise`], EDF, interval and
//! bias correction by [`crate::stats::annotate_with`].
//!
//! The true value of each estimator for a unit power law h_α = 1
//! ([`truth`]) is its target variance from the transfer-function integral
//! of the model ([`crate::model::fit::basis`], IEEE Std 1139 / NIST SP 1065):
//! AVAR for ADEV, OADEV, TOTDEV and TheoH; MVAR for MDEV and MTOT; TVAR =
//! (τ²/3)·MVAR for TDEV and TTOT; HVAR for HDEV, OHDEV and HTOT (the total
//! family bias-corrected, as the commands report it); for Theo1, which is
//! biased except for white FM, its own expectation E\[Theo1\] =
//! [`crate::stats::theo::theo1_over_allan`]·AVAR.

use crate::deviation::{compute, Estimator};
use crate::model::fit::basis;
use crate::model::PowerLaw;
use crate::simulate::{simulate_phase, SimSpec};
use crate::stats::annotate::point_interval_rule;
use crate::stats::{annotate_with, NoiseIdentifier, StatsOptions};
use crate::tau::TauGrid;
use rayon::prelude::*;

/// The true deviation at τ (seconds; m the estimator's factor) of `est`
/// for the unit power law h_α = 1 sampled at τ0 (f_h = 1/(2τ0)); `None`
/// for MTIE and TIE rms, for Theo1 where τ/τ0 is not whole, and outside
/// α = 2 … −2.
pub fn truth(est: Estimator, alpha: i32, tau: f64, m: usize, tau0: f64) -> Option<f64> {
    if !(-2..=2).contains(&alpha) {
        return None;
    }
    let f_h = 0.5 / tau0;
    let b = |k: Estimator| basis(k, alpha, tau, tau0, f_h);
    let var = match est {
        Estimator::Adev | Estimator::Oadev | Estimator::Totdev | Estimator::Theoh => {
            b(Estimator::Oadev)
        }
        Estimator::Mdev | Estimator::Mtot => b(Estimator::Mdev),
        Estimator::Tdev | Estimator::Ttot => tau * tau / 3.0 * b(Estimator::Mdev),
        Estimator::Hdev | Estimator::Ohdev | Estimator::Htot => b(Estimator::Ohdev),
        Estimator::Theo1 => crate::stats::theo::theo1_over_allan(alpha, m)? * b(Estimator::Oadev),
        Estimator::Mtie | Estimator::TieRms => return None,
    };
    (var.is_finite() && var > 0.0).then(|| var.sqrt())
}

/// What to run.
#[derive(Debug, Clone)]
pub struct CoverageSpec {
    /// Estimators to check.
    pub estimators: Vec<Estimator>,
    /// Noise types (α) to simulate, one power law per record.
    pub alphas: Vec<i32>,
    /// Points per record.
    pub points: usize,
    /// Records per noise type.
    pub records: usize,
    /// First seed; record r of noise α uses seed + 1000·(2 − α) + r·7919.
    pub seed: u64,
    /// τ grid of every estimator.
    pub grid: TauGrid,
    /// Keep only τ with T/τ at most this (None: every τ).
    pub max_t_over_tau: Option<f64>,
    /// Keep only τ with T/τ at least this (None: every τ).
    pub min_t_over_tau: Option<f64>,
    /// The identification's rule across τ.
    pub rule: crate::stats::noise_id::CrossTauRule,
    /// The intervals' guard as the commands have it (true), or off: the
    /// quadratic form's (TheoH: form-times-ratio) interval alone at every
    /// confidence ([`crate::stats::annotate::point_interval_rule`]), to
    /// measure what the union with χ² at 90 % and above adds.
    pub guard: bool,
    /// Also check the 99 % intervals ([`CoverageCell::coverage_99`]; no
    /// hits counted when false).
    pub check_99: bool,
}

/// The outcome at one (estimator, noise type, τ).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CoverageCell {
    /// The estimator.
    pub estimator: Estimator,
    /// The simulated power law.
    pub alpha: i32,
    /// Averaging factor (the estimator's own).
    pub m: usize,
    /// τ in seconds (τ0 = 1 s).
    pub tau: f64,
    /// T/τ with T = (N − 1)τ0.
    pub t_over_tau: f64,
    /// Records that gave a value at this τ.
    pub records: usize,
    /// Records whose point had an interval.
    pub with_interval: usize,
    /// Intervals (68.3 %) that contained the truth.
    pub hits_68: usize,
    /// Intervals (95 %) that contained the truth.
    pub hits_95: usize,
    /// Intervals (99 %) that contained the truth (0 unless
    /// [`CoverageSpec::check_99`]).
    pub hits_99: usize,
    /// Records whose label at τ was the simulated type.
    pub labelled_right: usize,
    /// Records labelled `drift` at τ.
    pub labelled_drift: usize,
    /// Mean of the EDF given.
    pub mean_edf: f64,
    /// The EDF the spread of the values shows: 2·E[σ̂²]²/Var[σ̂²].
    pub monte_carlo_edf: f64,
    /// The same over the records whose label at τ was the simulated type
    /// (a record read as another type gets another bias correction and
    /// spreads the values beyond what the interval of the right type
    /// describes; NaN with fewer than two).
    pub monte_carlo_edf_right: f64,
    /// Mean σ̂² over the true σ² (1 for an unbiased value).
    pub mean_ratio: f64,
}

impl CoverageCell {
    /// Coverage of the 68.3 % intervals (fraction of the intervals given).
    pub fn coverage_68(&self) -> f64 {
        self.hits_68 as f64 / self.with_interval.max(1) as f64
    }
    /// Coverage of the 95 % intervals.
    pub fn coverage_95(&self) -> f64 {
        self.hits_95 as f64 / self.with_interval.max(1) as f64
    }
    /// Coverage of the 99 % intervals.
    pub fn coverage_99(&self) -> f64 {
        self.hits_99 as f64 / self.with_interval.max(1) as f64
    }
}

/// One point of one record: (estimator index, m, τ, value/truth, edf,
/// hits at 68.3 %, 95 % and 99 %, label right, drift).
type Sample = (usize, usize, f64, f64, Option<f64>, [bool; 3], bool, bool);

/// Run the Monte Carlo (module notes). Records are drawn and analysed in
/// parallel; the result is in estimator, α, τ order and does not depend on
/// the number of threads.
pub fn run(spec: &CoverageSpec) -> crate::Result<Vec<CoverageCell>> {
    let n = spec.points;
    let t = (n.saturating_sub(1)) as f64;
    let keep = |tau: f64| {
        let r = t / tau;
        spec.max_t_over_tau.map_or(true, |mx| r <= mx)
            && spec.min_t_over_tau.map_or(true, |mn| r >= mn)
    };
    let opts = StatsOptions::default();
    let mut cells = Vec::new();
    for &alpha in &spec.alphas {
        let mut model = PowerLaw::zero(0.5);
        model.set(alpha, 1.0);
        let per_record: Vec<Vec<Sample>> = (0..spec.records)
            .into_par_iter()
            .map(|r| -> crate::Result<Vec<Sample>> {
                let seed = spec.seed + 1000 * (2 - alpha) as u64 + 7919 * r as u64;
                let rec = simulate_phase(&SimSpec::new(model, 1.0, n, seed))?;
                let ids = NoiseIdentifier::with_rule(&rec, spec.rule);
                let mut out = Vec::new();
                for (k, &est) in spec.estimators.iter().enumerate() {
                    let ms = spec.grid.ms_for(est, rec.tau0, n)?;
                    let e = compute(est, &rec, &ms);
                    let e: Vec<_> = e.into_iter().filter(|e| keep(e.tau)).collect();
                    for p in annotate_with(est, &rec, &ids, &e, &opts)? {
                        let Some(tr) = truth(est, alpha, p.estimate.tau, p.estimate.m, 1.0) else {
                            continue;
                        };
                        let v = p.estimate.value;
                        let hits = match (p.edf, p.alpha) {
                            (Some(nu), Some(a)) => {
                                let ci = |c| {
                                    point_interval_rule(est, n, &p.estimate, a, nu, c, spec.guard)
                                };
                                let mut hits = [false; 3];
                                let levels: &[f64] = if spec.check_99 {
                                    &[0.683, 0.95, 0.99]
                                } else {
                                    &[0.683, 0.95]
                                };
                                for (hit, &c) in hits.iter_mut().zip(levels) {
                                    let (lo, hi, _) = ci(c)?;
                                    *hit = lo <= tr && tr <= hi;
                                }
                                hits
                            }
                            _ => [false; 3],
                        };
                        out.push((
                            k,
                            p.estimate.m,
                            p.estimate.tau,
                            (v / tr).powi(2),
                            p.edf,
                            hits,
                            !p.drift && p.alpha == Some(alpha),
                            p.drift,
                        ));
                    }
                }
                Ok(out)
            })
            .collect::<crate::Result<_>>()?;
        let mut all: Vec<Sample> = per_record.into_iter().flatten().collect();
        all.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.cmp(&b.1)));
        for group in all.chunk_by(|a, b| a.0 == b.0 && a.1 == b.1) {
            let (k, m, tau) = (group[0].0, group[0].1, group[0].2);
            let ratios: Vec<f64> = group.iter().map(|s| s.3).collect();
            let mean = ratios.iter().sum::<f64>() / ratios.len() as f64;
            let var = ratios.iter().map(|r| (r - mean).powi(2)).sum::<f64>()
                / (ratios.len().max(2) - 1) as f64;
            let edfs: Vec<f64> = group.iter().filter_map(|s| s.4).collect();
            let right: Vec<f64> = group.iter().filter(|s| s.6).map(|s| s.3).collect();
            let mean_right = right.iter().sum::<f64>() / right.len().max(1) as f64;
            let var_right = right.iter().map(|r| (r - mean_right).powi(2)).sum::<f64>()
                / (right.len().max(2) - 1) as f64;
            cells.push(CoverageCell {
                estimator: spec.estimators[k],
                alpha,
                m,
                tau,
                t_over_tau: t / tau,
                records: group.len(),
                with_interval: edfs.len(),
                hits_68: group.iter().filter(|s| s.5[0]).count(),
                hits_95: group.iter().filter(|s| s.5[1]).count(),
                hits_99: group.iter().filter(|s| s.5[2]).count(),
                labelled_right: group.iter().filter(|s| s.6).count(),
                labelled_drift: group.iter().filter(|s| s.7).count(),
                mean_edf: edfs.iter().sum::<f64>() / edfs.len().max(1) as f64,
                monte_carlo_edf: 2.0 * mean * mean / var,
                monte_carlo_edf_right: if right.len() >= 2 {
                    2.0 * mean_right * mean_right / var_right
                } else {
                    f64::NAN
                },
                mean_ratio: mean,
            });
        }
    }
    Ok(cells)
}
