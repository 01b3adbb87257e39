//! Holdover: the time error TE(t) of a clock through a span with no
//! reference, predicted from its record, and a verdict against a budget.
//!
//! TE(t) = te0 + y0·t + TE_a(t) + TE_temp(t) + x_noise(t), t from the start
//! of holdover (the end of the record, or a chosen start):
//! - te0 — the time error when the reference is lost;
//! - y0 — the fractional-frequency error then, estimated as the mean
//!   frequency over the last *settle* window, carried to the window's end by
//!   the aging law, with its uncertainty;
//! - TE_a — the aging law's time error ([`aging`]): ½·D·t² for a linear law
//!   (docs/checks.md §G: D = 1e−10/day over 24 h gives 4.32 µs);
//! - TE_temp — a worst-case temperature term |c_T·ΔT|·t, always taken with the
//!   sign that makes |TE| larger;
//! - x_noise — the power-law noise model's random phase ([`paths`]).
//!
//! The random part is a seeded Monte Carlo: each path draws x_noise, and
//! errors δy0 and δD of the estimated frequency and aging, jointly normal
//! with the standard uncertainties and the correlation found by a
//! parametric bootstrap of the fit ([`fit`]); percentiles p50, p95, p99 of
//! |TE(t)| over the paths are reported at log-spaced t. The paths are
//! simulated at a step suited to the span (span / steps), not at τ0.
//!
//! y0 is either estimated on the record (above) or given — for a
//! disciplined unit the frequency error when the reference is lost is the
//! loop's residual, not the free-running offset the record shows — with its
//! own standard uncertainty.
//!
//! When holdover starts inside the record, the rest of the record is set
//! beside the prediction ([`observed`]).

pub mod aging;
pub mod calibration;
pub mod fit;
pub mod observed;
pub mod paths;

use crate::deviation::Estimator;
use crate::error::{Error, Result};
use crate::model::fit::ModelFit;
use crate::model::PowerLaw;
use crate::record::{PhaseRecord, Record};
use crate::verdict::{Coverage, Judgement};
use aging::{Aging, AgingModel};
use paths::NoisePaths;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use rayon::prelude::*;

/// What holdover adds to [`crate::DECISION_CAUTION`].
pub const HOLDOVER_NOTE: &str = "Real holdover also depends on temperature, supply, \
vibration and ageing history that the record may not show.";

/// The full caution printed with every holdover verdict.
pub fn caution() -> String {
    format!("{} {HOLDOVER_NOTE}", crate::DECISION_CAUTION)
}

/// The deterministic and random parameters of a holdover prediction.
#[derive(Debug, Clone, PartialEq)]
pub struct HoldoverModel {
    /// Time error at the start of holdover, s.
    pub te0: f64,
    /// Fractional-frequency error at the start of holdover.
    pub y0: f64,
    /// Standard uncertainty of y0.
    pub y0_sigma: f64,
    /// The aging law, with its parameter's standard error.
    pub aging: Aging,
    /// Record time at which holdover starts, s (enters the log law only).
    pub start: f64,
    /// Worst-case temperature frequency offset |c_T·ΔT| (fractional).
    pub temp_worst: f64,
    /// The power-law noise model of the random part.
    pub noise: PowerLaw,
    /// Where y0 and the uncertainties came from, and the correlation of the
    /// y0 and aging errors.
    pub uncertainty: Uncertainty,
}

/// Where the starting frequency and the uncertainties of a
/// [`HoldoverModel`] came from (the default: nothing estimated, nothing
/// correlated).
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize)]
pub struct Uncertainty {
    /// y0 estimated over this settle window at the record's end, s (`None`:
    /// y0 given).
    pub y0_window: Option<f64>,
    /// The aging law was given, not fitted.
    pub aging_given: bool,
    /// Correlation of the errors of y0 and of the aging parameter; the
    /// Monte Carlo draws them jointly.
    pub y0_aging_corr: f64,
    /// Bootstrap records behind the uncertainties ([`fit::bootstrap`]; 0
    /// when nothing was estimated).
    pub replicates: usize,
    /// Sampling step of the bootstrap records, s.
    pub bootstrap_step: f64,
    /// Each bootstrap record drew its own random-walk FM level, as the
    /// record could have measured it ([`fit::RwfmSpread`]); false when the
    /// noise model was given or the record has no long-τ point to judge it.
    pub rwfm_drawn: bool,
}

/// A fitted aging parameter is called significant when it is at least this
/// many standard uncertainties from zero.
pub const SIGNIFICANT_Z: f64 = 2.0;

impl HoldoverModel {
    /// The fitted aging parameter in standard uncertainties, |param|/σ;
    /// `None` when the aging was given (or has no uncertainty).
    pub fn aging_z(&self) -> Option<f64> {
        let (p, s) = match self.aging {
            Aging::Linear { d, d_sigma, .. } => (d, d_sigma),
            Aging::Log { a, a_sigma, .. } => (a, a_sigma),
        };
        (!self.uncertainty.aging_given && s > 0.0).then(|| p.abs() / s)
    }

    /// Whether the fitted aging is significant at [`SIGNIFICANT_Z`]σ
    /// (`None` when given).
    pub fn aging_significant(&self) -> Option<bool> {
        self.aging_z().map(|z| z >= SIGNIFICANT_Z)
    }

    /// A sentence on the aging's significance, for the outputs (`None` when
    /// the aging was given).
    pub fn aging_significance_words(&self) -> Option<String> {
        self.aging_z().map(aging_significance_words)
    }

    /// te0 + y0·t + TE_a(t) (no temperature, no noise).
    pub fn base(&self, t: f64) -> f64 {
        self.te0 + self.y0 * t + self.aging.te(self.start, t)
    }

    /// The deterministic TE(t): [`HoldoverModel::base`] plus the worst-case
    /// temperature term with the sign of the base.
    pub fn deterministic(&self, t: f64) -> f64 {
        let b = self.base(t);
        let temp = self.temp_worst.abs() * t;
        if b < 0.0 {
            b - temp
        } else {
            b + temp
        }
    }
}

/// How the prediction is run.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// Holdover span, s (> 0).
    pub span: f64,
    /// Time-error budget, s (> 0).
    pub budget: f64,
    /// Monte Carlo paths.
    pub paths: usize,
    /// Seed of the random paths (the same seed gives the same result).
    pub seed: u64,
    /// Simulation steps over the span (the step is span/steps).
    pub steps: usize,
    /// Output times per decade.
    pub per_decade: usize,
    /// The decision rule of the budget verdict ([`crate::decision`]):
    /// its probability of conformance is the fraction of paths within the
    /// budget through the span.
    pub decision: crate::decision::DecisionRule,
}

impl Settings {
    /// Defaults: 2000 paths, seed 1, 4096 steps, 10 output times per decade.
    pub fn new(span: f64, budget: f64) -> Self {
        Self {
            span,
            budget,
            paths: 2000,
            seed: 1,
            steps: 4096,
            per_decade: 10,
            decision: crate::decision::DecisionRule::default(),
        }
    }

    fn validate(&self) -> Result<()> {
        if !(self.span.is_finite() && self.span > 0.0) {
            return Err(Error::invalid(format!(
                "holdover span must be a positive duration (e.g. 24h), got {} s",
                self.span
            )));
        }
        if !(self.budget.is_finite() && self.budget > 0.0) {
            return Err(Error::invalid(format!(
                "time-error budget must be a positive duration (e.g. 1.5us), got {} s",
                self.budget
            )));
        }
        if self.paths < 2 {
            return Err(Error::invalid(format!(
                "holdover needs at least 2 Monte Carlo paths for its percentiles (and {MIN_PATHS_FOR_VERDICT} for a verdict), got {}",
                self.paths
            )));
        }
        if self.steps < 16 {
            return Err(Error::invalid(format!(
                "holdover needs at least 16 simulation steps, got {}",
                self.steps
            )));
        }
        if self.steps > MAX_STEPS {
            return Err(Error::invalid(format!(
                "holdover with {} simulation steps would need about {} of memory for each path's noise synthesis (FFT of 2 × steps complex values, 32 bytes a step, per thread), more than tauwise allows: use at most {MAX_STEPS} steps",
                self.steps,
                crate::units::format_bytes(self.steps as u128 * 32)
            )));
        }
        // The table of simulated time errors is paths × steps values.
        let bytes = (self.paths as u128) * (self.steps as u128) * 8;
        if bytes > MAX_TABLE_BYTES as u128 {
            return Err(Error::invalid(format!(
                "holdover with {} paths of {} steps would need {} of memory for the simulated time errors (paths × steps × 8 bytes), more than the {} allowed: use fewer paths or steps",
                self.paths,
                self.steps,
                crate::units::format_bytes(bytes),
                crate::units::format_bytes(MAX_TABLE_BYTES as u128)
            )));
        }
        Ok(())
    }
}

/// One output time.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TePoint {
    /// Time since the start of holdover, s.
    pub t: f64,
    /// The deterministic TE(t), s (signed).
    pub deterministic: f64,
    /// Median of |TE(t)| over the paths, s.
    pub p50: f64,
    /// 95th percentile of |TE(t)|, s.
    pub p95: f64,
    /// 99th percentile of |TE(t)|, s.
    pub p99: f64,
    /// rms of the simulated TE(t) (without the worst-case temperature term), s.
    pub rms: f64,
    /// The fraction of paths whose |TE| (with the worst-case temperature
    /// term) stayed within the budget at every step up to t: the
    /// probability of conformance through t ([`crate::decision`]).
    pub within_budget: f64,
}

/// At least this many Monte Carlo paths for a verdict: with fewer, the p95
/// of |TE| is too poorly determined to judge against a budget (the
/// prediction is still made and shown, the verdict is `not-judged`).
pub const MIN_PATHS_FOR_VERDICT: usize = 100;

/// Most simulation steps over a span: each path is synthesised by FFT over
/// the whole span (about 32 bytes of working memory a step, per thread).
pub const MAX_STEPS: usize = 1 << 22;

/// Largest table of simulated time errors (paths × steps, 8 bytes each)
/// a prediction may hold in memory: 4 GB.
pub const MAX_TABLE_BYTES: u64 = 4_000_000_000;

/// The prediction.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Prediction {
    /// TE at log-spaced t, ending at the span.
    pub te: Vec<TePoint>,
    /// First t at which p95 of |TE| exceeds the budget (linear interpolation
    /// between simulation steps); `None` when it never does within the span.
    pub holds_for: Option<f64>,
    /// The verdict for the span (shared vocabulary): `meets` when p95 of
    /// |TE| stays within the budget through the span, `exceeds` when it
    /// does not, `not-judged` (with the reason) when the prediction is not
    /// finite somewhere in the span or has too few paths.
    #[serde(flatten)]
    pub judgement: Judgement,
    /// Simulation step, s.
    pub step: f64,
    /// Paths simulated.
    pub paths: usize,
    /// Paths whose |TE| (with the worst-case temperature term) stayed
    /// within the budget at every step through the span: the verdict's
    /// probability of conformance is `paths_within_budget / paths`.
    pub paths_within_budget: usize,
}

/// Percentile of `v` by linear interpolation between order statistics
/// (Hyndman & Fan type 7); reorders `v`.
fn percentile(v: &mut [f64], p: f64) -> f64 {
    let len = v.len();
    let h = (len - 1) as f64 * p;
    let lo = h.floor() as usize;
    let (_, &mut a, rest) = v.select_nth_unstable_by(lo, f64::total_cmp);
    if lo + 1 >= len {
        return a;
    }
    let b = rest.iter().cloned().fold(f64::INFINITY, f64::min);
    a + (h - lo as f64) * (b - a)
}

/// Run the prediction: seeded Monte Carlo of the noise paths
/// ([`paths::NoisePaths`]) plus the deterministic part and the y0 and aging
/// uncertainties (module notes). Path p draws from ChaCha8 seeded with
/// `seed` on stream p, so the same seed gives the same result whatever the
/// number of threads.
pub fn predict(model: &HoldoverModel, settings: &Settings) -> Result<Prediction> {
    let (te, n, step) = simulate_te(model, settings)?;
    summarise(model, settings, &te, n, step)
}

/// [`predict`] for several spans (or budgets) of one model at once: each
/// prediction is bit for bit the one [`predict`] gives for its settings
/// alone. Where the settings share the seed, the number of paths and of
/// steps, every Monte Carlo path is drawn once and scaled for each span
/// (its unit paths depend on the draws and the number of steps, not on the
/// step; [`paths::NoisePaths::draw_unit_pair`]), which is how the report
/// predicts its spans. The tables of simulated time errors of those spans
/// are then held at once (paths × steps × 8 bytes each); where together
/// they would exceed [`MAX_TABLE_BYTES`], the spans are simulated one at a
/// time (the same results).
pub fn predict_spans(model: &HoldoverModel, settings: &[Settings]) -> Result<Vec<Prediction>> {
    let tables = simulate_te_spans(model, settings)?;
    settings
        .iter()
        .zip(tables)
        .map(|(s, (te, n, step))| summarise(model, s, &te, n, step))
        .collect()
}

/// The simulated signed time errors of the prediction: `te[p·n + k − 1]`
/// is TE of path p at step k (k = 1 … n, t = k·step), without the
/// worst-case temperature term; returns (te, n, step).
pub(crate) fn simulate_te(
    model: &HoldoverModel,
    settings: &Settings,
) -> Result<(Vec<f64>, usize, f64)> {
    let mut one = simulate_te_spans(model, std::slice::from_ref(settings))?;
    Ok(one.remove(0))
}

/// [`simulate_te`] for each of `settings`: those that share the seed, the
/// number of paths and of steps (and so the noise terms drawn) are
/// simulated together from one draw of each path, the others alone; the
/// tables are the same either way.
fn simulate_te_spans(
    model: &HoldoverModel,
    settings: &[Settings],
) -> Result<Vec<(Vec<f64>, usize, f64)>> {
    let mut out: Vec<Option<(Vec<f64>, usize, f64)>> = vec![None; settings.len()];
    for i in 0..settings.len() {
        if out[i].is_some() {
            continue;
        }
        let s = &settings[i];
        let group: Vec<usize> = (i..settings.len())
            .filter(|&j| {
                let o = &settings[j];
                out[j].is_none() && o.seed == s.seed && o.paths == s.paths && o.steps == s.steps
            })
            .collect();
        let chosen: Vec<&Settings> = group.iter().map(|&j| &settings[j]).collect();
        for (j, table) in group.into_iter().zip(simulate_group(model, &chosen)?) {
            out[j] = Some(table);
        }
    }
    Ok(out.into_iter().flatten().collect())
}

/// One span's fixed parts: the noise generator at its step, the term
/// scales, the deterministic TE and the aging's TE per unit parameter at
/// each step.
struct SpanPlan {
    gen: NoisePaths,
    scales: Vec<(i32, f64)>,
    base: Vec<f64>,
    unit: Vec<f64>,
    step: f64,
}

/// The tables of settings that share the seed, the paths and the steps
/// (the caller groups them): each path pair's unit paths are drawn once
/// (with the generator of the first span; every span has the same terms,
/// checked) and scaled for each span.
fn simulate_group(
    model: &HoldoverModel,
    settings: &[&Settings],
) -> Result<Vec<(Vec<f64>, usize, f64)>> {
    let mut plans = Vec::with_capacity(settings.len());
    for s in settings {
        s.validate()?;
        let n = s.steps;
        let step = s.span / n as f64;
        let gen = NoisePaths::new(&model.noise, step, n)?;
        let scales = gen.scales();
        plans.push(SpanPlan {
            base: (0..=n).map(|k| model.base(k as f64 * step)).collect(),
            unit: (0..=n)
                .map(|k| model.aging.te_per_unit(model.start, k as f64 * step))
                .collect(),
            gen,
            scales,
            step,
        });
    }
    let alphas = |p: &SpanPlan| p.scales.iter().map(|t| t.0).collect::<Vec<_>>();
    let together =
        settings.len() as u128 * settings[0].paths as u128 * settings[0].steps as u128 * 8;
    if settings.len() > 1
        && (plans.iter().any(|p| alphas(p) != alphas(&plans[0]))
            || together > MAX_TABLE_BYTES as u128)
    {
        // Different terms draw differently, and the tables of all the
        // spans together may not exceed the memory one is allowed: one
        // span at a time.
        return settings
            .iter()
            .map(|s| Ok(simulate_group(model, &[*s])?.remove(0)))
            .collect();
    }
    let (n, np, seed) = (settings[0].steps, settings[0].paths, settings[0].seed);
    let (sy0, sd) = (model.y0_sigma.abs(), model.aging.sigma().abs());
    let rho = if model.uncertainty.y0_aging_corr.is_finite() {
        model.uncertainty.y0_aging_corr.clamp(-1.0, 1.0)
    } else {
        0.0
    };
    // te[p*n + (k−1)] = signed TE of path p at step k (k = 1 … n), one
    // table per span. The paths are drawn two at a time (paths 2i and
    // 2i + 1; the last alone when the count is odd), each from its own
    // stream, so the result does not depend on the number of threads.
    let mut tables: Vec<Vec<f64>> = plans.iter().map(|_| vec![0.0f64; np * n]).collect();
    let mut per_pair: Vec<Vec<&mut [f64]>> = (0..np.div_ceil(2)).map(|_| Vec::new()).collect();
    for t in tables.iter_mut() {
        for (i, rows) in t.chunks_mut(2 * n).enumerate() {
            per_pair[i].push(rows);
        }
    }
    let stream = |p: usize| {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        rng.set_stream(p as u64);
        rng
    };
    // The y0 and aging errors of a path, drawn after its noise.
    let errors = |rng: &mut ChaCha8Rng| {
        let z1: f64 = rng.sample(StandardNormal);
        let z2: f64 = rng.sample(StandardNormal);
        (z1, z2)
    };
    let row = |plan: &SpanPlan, (z1, z2): (f64, f64), x: &[f64], row: &mut [f64]| {
        let dy = sy0 * z1;
        let dd = sd * (rho * z1 + (1.0 - rho * rho).sqrt() * z2);
        for k in 1..=n {
            let t = k as f64 * plan.step;
            row[k - 1] = plan.base[k] + dy * t + dd * plan.unit[k] + x[k];
        }
    };
    per_pair.into_par_iter().enumerate().for_each_init(
        || (vec![0.0f64; n + 1], paths::PathWorkspace::default()),
        |(x, ws), (i, mut rows)| {
            let (pa, pb) = (2 * i, 2 * i + 1);
            let mut ra = stream(pa);
            if pb < np {
                let mut rb = stream(pb);
                plans[0].gen.draw_unit_pair(&mut ra, Some(&mut rb), ws);
                let (ea, eb) = (errors(&mut ra), errors(&mut rb));
                for (plan, rows) in plans.iter().zip(rows.iter_mut()) {
                    let (row_a, row_b) = rows.split_at_mut(n);
                    ws.path(&plan.scales, false, x);
                    row(plan, ea, x, row_a);
                    ws.path(&plan.scales, true, x);
                    row(plan, eb, x, row_b);
                }
            } else {
                plans[0].gen.draw_unit_pair(&mut ra, None, ws);
                let ea = errors(&mut ra);
                for (plan, rows) in plans.iter().zip(rows.iter_mut()) {
                    ws.path(&plan.scales, false, x);
                    row(plan, ea, x, rows);
                }
            }
        },
    );
    Ok(tables
        .into_iter()
        .zip(&plans)
        .map(|(te, plan)| (te, n, plan.step))
        .collect())
}

/// Steps gathered at a time by [`p95_per_step`].
const STEP_BLOCK: usize = 32;

/// p95 over the paths of |TE(k·step)| + temp·k·step at every step k = 1 …
/// n of a table `te[p·n + k − 1]` of `np` paths. The table holds a path's
/// steps side by side, so the values of one step lie n apart: they are
/// gathered [`STEP_BLOCK`] steps at a time, each path's run of steps read
/// in one go, rather than one step at a time across the whole table. The
/// percentile of a set of values does not depend on their order, so this
/// is bit for bit the step-by-step gather.
fn p95_per_step(te: &[f64], n: usize, np: usize, temp: f64, step: f64) -> Vec<f64> {
    (0..n.div_ceil(STEP_BLOCK))
        .into_par_iter()
        .map(|b| {
            let k0 = b * STEP_BLOCK + 1;
            let k1 = (k0 + STEP_BLOCK).min(n + 1);
            let width = k1 - k0;
            let mut buf = vec![0.0f64; width * np];
            for p in 0..np {
                let run = &te[p * n + k0 - 1..p * n + k1 - 1];
                for (j, v) in run.iter().enumerate() {
                    buf[j * np + p] = v.abs() + temp * ((k0 + j) as f64 * step);
                }
            }
            buf.chunks_mut(np)
                .map(|col| percentile(col, 0.95))
                .collect::<Vec<f64>>()
        })
        .collect::<Vec<Vec<f64>>>()
        .concat()
}

/// Percentiles, crossing and verdict of simulated time errors
/// ([`simulate_te`]).
pub(crate) fn summarise(
    model: &HoldoverModel,
    settings: &Settings,
    te: &[f64],
    n: usize,
    step: f64,
) -> Result<Prediction> {
    let np = settings.paths;
    let temp = model.temp_worst.abs();
    let abs_at = |k: usize, buf: &mut Vec<f64>| {
        let t = k as f64 * step;
        buf.clear();
        buf.extend((0..np).map(|p| te[p * n + k - 1].abs() + temp * t));
    };
    // p95 at every step, for the crossing.
    let p95 = p95_per_step(te, n, np, temp, step);
    let budget = settings.budget;
    let holds_for = if model.te0.abs() > budget {
        Some(0.0)
    } else {
        p95.iter().position(|&v| v > budget).map(|i| {
            let k = i + 1;
            let (t1, v1) = (k as f64 * step, p95[i]);
            let (t0, v0) = if i == 0 {
                (0.0, model.te0.abs())
            } else {
                ((k - 1) as f64 * step, p95[i - 1])
            };
            t0 + (budget - v0) / (v1 - v0) * (t1 - t0)
        })
    };
    // The first step at which each path's |TE| leaves the budget (n + 1:
    // never within the span; 0: already at the start, |te0| > budget).
    let first_out: Vec<usize> = (0..np)
        .into_par_iter()
        .map(|p| {
            if model.te0.abs() > budget {
                return 0;
            }
            (1..=n)
                .find(|&k| !(te[p * n + k - 1].abs() + temp * k as f64 * step <= budget))
                .unwrap_or(n + 1)
        })
        .collect();
    let within_through = |k: usize| first_out.iter().filter(|&&f| f > k).count();
    let paths_within_budget = within_through(n);
    // Output steps: log-spaced, ending at the span.
    let mut ks: Vec<usize> = Vec::new();
    let pd = settings.per_decade.max(1) as f64;
    for j in 0.. {
        let k = 10f64.powf(j as f64 / pd).round() as usize;
        if k > n {
            break;
        }
        if ks.last() != Some(&k) {
            ks.push(k);
        }
    }
    if ks.last() != Some(&n) {
        ks.push(n);
    }
    let mut buf = Vec::with_capacity(np);
    let points: Vec<TePoint> = ks
        .iter()
        .map(|&k| {
            let t = k as f64 * step;
            let rms = ((0..np).map(|p| te[p * n + k - 1].powi(2)).sum::<f64>() / np as f64).sqrt();
            abs_at(k, &mut buf);
            TePoint {
                t,
                deterministic: model.deterministic(t),
                p50: percentile(&mut buf, 0.50),
                p95: percentile(&mut buf, 0.95),
                p99: percentile(&mut buf, 0.99),
                rms,
                within_budget: within_through(k) as f64 / np as f64,
            }
        })
        .collect();
    let mut judgement = judge(model, &points, &p95, step, np, budget, holds_for);
    let p = crate::decision::path_fraction(paths_within_budget, np);
    settings
        .decision
        .decide(&mut judgement, crate::decision::Probabilities::Points(&[p]));
    Ok(Prediction {
        te: points,
        judgement,
        holds_for,
        step,
        paths: np,
        paths_within_budget,
    })
}

/// The verdict of a prediction (see [`Prediction::judgement`]): anything
/// non-finite in the time error that feeds it (te0, p95 at any step, the
/// output points) makes it `not-judged`, naming the first such value.
fn judge(
    model: &HoldoverModel,
    points: &[TePoint],
    p95: &[f64],
    step: f64,
    paths: usize,
    budget: f64,
    holds_for: Option<f64>,
) -> Judgement {
    if !model.te0.is_finite() {
        return Judgement::not_judged("the time error at the start, te0, is not finite");
    }
    let p95_steps = p95
        .iter()
        .enumerate()
        .map(|(i, &v)| ("p95 of |TE|", v, (i + 1) as f64 * step));
    let others = points.iter().flat_map(|p| {
        [
            ("the deterministic TE", p.deterministic, p.t),
            ("p50 of |TE|", p.p50, p.t),
            ("p99 of |TE|", p.p99, p.t),
        ]
    });
    if let Some(why) = crate::verdict::first_non_finite(p95_steps.chain(others), "s") {
        return Judgement::not_judged(format!(
            "{why}; the prediction cannot be judged against the budget (check the span, the model and the temperature term)"
        ));
    }
    if paths < MIN_PATHS_FOR_VERDICT {
        return Judgement::not_judged(format!(
            "{paths} Monte Carlo paths are too few for a p95 verdict (at least {MIN_PATHS_FOR_VERDICT})"
        ));
    }
    let _ = budget;
    Judgement::judged(holds_for.is_some(), Coverage::Full)
}

/// How the deterministic part is obtained from a record.
#[derive(Debug, Clone, PartialEq)]
pub struct FromRecord {
    /// Time error at the start of holdover, s (default 0).
    pub te0: f64,
    /// Settle window for y0, s; default a tenth of the record used.
    pub settle: Option<f64>,
    /// Holdover start as record time, s; default the end of the record.
    pub start: Option<f64>,
    /// The aging law to fit, unless `aging_given` is set.
    pub aging_model: AgingModel,
    /// A given linear aging rate (1/s), used instead of a fit.
    pub aging_given: Option<f64>,
    /// A given frequency error at the start of holdover and its standard
    /// uncertainty, used instead of the record's end.
    pub y0_given: Option<(f64, f64)>,
    /// Worst-case temperature offset |c_T·ΔT| (fractional).
    pub temp_worst: f64,
    /// A given noise model; default: fitted on the record ([`fit_noise`]).
    pub noise: Option<PowerLaw>,
    /// Bootstrap records for the uncertainties ([`fit::bootstrap`]).
    pub replicates: usize,
    /// Seed of the bootstrap records.
    pub seed: u64,
}

impl Default for FromRecord {
    fn default() -> Self {
        Self {
            te0: 0.0,
            settle: None,
            start: None,
            aging_model: AgingModel::Linear,
            aging_given: None,
            y0_given: None,
            temp_worst: 0.0,
            noise: None,
            replicates: fit::REPLICATES,
            seed: 1,
        }
    }
}

/// Build a [`HoldoverModel`] from a record (phase or frequency):
///
/// 1. the record is cut at the start of holdover (`start`);
/// 2. the aging law is fitted on its frequency ([`aging`]), or taken as given;
/// 3. the noise model is fitted on the record with the aging removed
///    ([`fit_noise`]), unless given;
/// 4. y0 is given, or ŷ0 = ȳ_W + [y_a(T_s) − mean_W y_a], the mean frequency
///    over the last settle window W carried to its end by the aging law
///    ([`fit::estimate_y0`]);
/// 5. the standard uncertainties of the aging parameter and of ŷ0, and the
///    correlation of their errors, come from a parametric bootstrap of the
///    fit on records drawn from the noise model of step 3 plus the law
///    ([`fit::bootstrap`]); a given y0 keeps its given uncertainty.
pub fn model_from_record(rec: &Record, opts: &FromRecord) -> Result<HoldoverModel> {
    // A worst-case temperature offset is a fractional frequency: one of 1
    // or more (or not finite) is not a clock's, and would only overflow.
    if !(opts.temp_worst.is_finite() && opts.temp_worst.abs() < 1.0) {
        return Err(Error::invalid(format!(
            "the worst-case temperature frequency offset |c_T·ΔT| = {:e} is not a fractional frequency of a clock (expected well below 1, e.g. 1e-11/K × 5K = 5e-11)",
            opts.temp_worst
        )));
    }
    let mut y = rec.to_frequency();
    let tau0 = y.tau0;
    if let Some(s) = opts.start {
        let span = y.y.len() as f64 * tau0;
        if !(s.is_finite() && s > 0.0 && s <= span) {
            return Err(Error::invalid(format!(
                "holdover start {s} s is outside the record (0 … {span} s)"
            )));
        }
        y.y.truncate((s / tau0).floor() as usize);
    }
    let valid = y.y.iter().filter(|v| !v.is_nan()).count();
    if valid < 16 {
        return Err(Error::insufficient(format!(
            "holdover needs at least 16 valid frequency samples before the start, got {valid}"
        )));
    }
    if let Some((v, s)) = opts.y0_given {
        if !(v.is_finite() && s.is_finite() && s >= 0.0) {
            return Err(Error::invalid(format!(
                "the given y0 must be a finite fractional frequency with a standard uncertainty ≥ 0, got {v} ± {s}"
            )));
        }
    }
    let ts = y.y.len() as f64 * tau0;
    let mut aging = match opts.aging_given {
        Some(d) => Aging::Linear {
            c: 0.0,
            d,
            d_sigma: 0.0,
        },
        None => match opts.aging_model {
            AgingModel::Linear => aging::fit_linear(&y)?,
            AgingModel::Log => aging::fit_log(&y)?,
        },
    };
    let residual = crate::record::FrequencyRecord {
        y: y.y
            .iter()
            .enumerate()
            .map(|(i, &v)| v - aging.y((i as f64 + 0.5) * tau0))
            .collect(),
        tau0,
    };
    let (noise, rwfm) = match opts.noise {
        Some(m) => (m, None),
        None => {
            let (fit, spread) = fit::fit_noise_spread(&residual.to_phase()).map_err(hint_model)?;
            (fit.model, spread)
        }
    };
    let window = match opts.y0_given {
        Some(_) => None,
        None => {
            let w = opts.settle.unwrap_or(ts / 10.0);
            if !(w.is_finite() && w >= tau0 && w <= ts) {
                return Err(Error::invalid(format!(
                    "settle window {w} s must lie between τ0 = {tau0} s and the record used ({ts} s)"
                )));
            }
            Some(w)
        }
    };
    let y0_hat = match window {
        Some(w) => Some(fit::estimate_y0(
            &y,
            &aging,
            ((w / tau0).round() as usize).max(1),
        )?),
        None => None,
    };
    let source = match opts.aging_given {
        Some(_) => fit::AgingSource::Given,
        None => fit::AgingSource::Fitted(opts.aging_model),
    };
    let spread = if matches!(source, fit::AgingSource::Given) && window.is_none() {
        None
    } else {
        Some(fit::bootstrap(&fit::BootstrapSpec {
            noise: &noise,
            rwfm,
            law: &aging,
            source,
            window,
            span: ts,
            tau0,
            replicates: opts.replicates,
            seed: opts.seed,
        })?)
    };
    if let Some(sp) = &spread {
        match &mut aging {
            Aging::Linear { d_sigma, .. } if opts.aging_given.is_none() => {
                *d_sigma = sp.param_sigma
            }
            Aging::Log { a_sigma, .. } => *a_sigma = sp.param_sigma,
            _ => {}
        }
    }
    let (y0, y0_sigma) = match (opts.y0_given, y0_hat) {
        (Some((v, s)), _) => (v, s),
        (None, Some(v)) => (v, spread.map_or(0.0, |sp| sp.y0_sigma)),
        (None, None) => (0.0, 0.0),
    };
    Ok(HoldoverModel {
        te0: opts.te0,
        y0,
        y0_sigma,
        aging,
        start: ts,
        temp_worst: opts.temp_worst,
        noise,
        uncertainty: Uncertainty {
            y0_window: window,
            aging_given: opts.aging_given.is_some(),
            y0_aging_corr: match window {
                Some(_) => spread.map_or(0.0, |sp| sp.corr),
                None => 0.0,
            },
            replicates: spread.map_or(0, |sp| sp.replicates),
            bootstrap_step: spread.map_or(0.0, |sp| sp.step),
            rwfm_drawn: spread.is_some() && rwfm.is_some(),
        },
    })
}

/// The estimators whose curves feed the noise fit.
pub const FIT_ESTIMATORS: [Estimator; 2] = [Estimator::Oadev, Estimator::Mdev];

/// Fit the power-law model of the random part on a phase record (normally
/// the record with its aging law removed): [`fit::fit_noise`] (OHDEV at
/// every octave τ and MDEV at short τ, EDF-weighted, f_h = 1/(2τ0)).
pub fn fit_noise(phase: &PhaseRecord) -> Result<ModelFit> {
    fit::fit_noise(phase).map_err(hint_model)
}

/// A noise fit that found too little to fit says how to give the model.
fn hint_model(e: Error) -> Error {
    match e {
        Error::Insufficient(msg) => {
            Error::insufficient(format!("{msg}: give the model with --model"))
        }
        other => other,
    }
}

/// In words, whether a fitted aging `z` standard errors from zero is
/// significant at [`SIGNIFICANT_Z`] (what the holdover text shows).
pub fn aging_significance_words(z: f64) -> String {
    if z >= SIGNIFICANT_Z {
        format!("the fitted aging is {z:.1}σ from zero: significant at {SIGNIFICANT_Z}σ")
    } else {
        format!(
            "the fitted aging is {z:.1}σ from zero: not significant at {SIGNIFICANT_Z}σ (the record does not show aging beyond its noise); the prediction keeps the fitted value and draws it per path from its uncertainty"
        )
    }
}

/// The `holdover` result of one record: its model, the prediction, what
/// the record shows after the loss (with [`FromRecord::start`]) and the
/// document body.
#[derive(Debug, Clone)]
pub struct RecordHoldover {
    /// The model fitted to the record ([`model_from_record`]).
    pub model: HoldoverModel,
    /// The prediction through the span ([`predict`]).
    pub prediction: Prediction,
    /// The time error the record shows after `start`, against the
    /// prediction ([`observed::observe`]).
    pub observed: Option<observed::Observed>,
    /// The document body (`holdover --format json` of this record).
    pub body: crate::results::HoldoverBody,
}

/// Everything `holdover` computes for one record: the model, the
/// prediction, the observed time error when a start is given, and the
/// document. The command line (for each FILE) calls this one function.
pub fn record_holdover(rec: &Record, opts: &FromRecord, s: &Settings) -> Result<RecordHoldover> {
    let model = model_from_record(rec, opts)?;
    let prediction = predict(&model, s)?;
    let observed =
        (opts.start).and_then(|_| observed::observe(rec, &model, &prediction, s.span, s.budget));
    let given = opts.aging_given.is_some();
    let body = crate::results::HoldoverBody::new(s, &model, &prediction, given, observed.as_ref());
    Ok(RecordHoldover {
        model,
        prediction,
        observed,
        body,
    })
}

#[cfg(test)]
mod decision_tests {
    use super::*;
    use crate::decision::{DecisionRule, Rule};
    use crate::verdict::Verdict;

    /// Seeded Monte Carlo, exact count: the verdict's probability of
    /// conformance is the number of simulated paths whose |TE| (with the
    /// worst-case temperature term) stays within the budget at every step
    /// through the span, over the paths — counted here directly on the
    /// same simulated time errors.
    #[test]
    fn holdover_probability_is_the_exact_path_count() {
        let mut noise = PowerLaw::zero(0.5);
        noise.set(0, 2e-20);
        let model = HoldoverModel {
            te0: 1e-9,
            y0: 2e-12,
            y0_sigma: 1e-12,
            aging: aging::Aging::Linear {
                c: 0.0,
                d: 0.0,
                d_sigma: 0.0,
            },
            start: 0.0,
            temp_worst: 1e-13,
            noise,
            uncertainty: Default::default(),
        };
        for (budget, rule) in [
            (6e-9, Rule::Simple),
            (6e-9, Rule::Guarded),
            (2e-8, Rule::Guarded),
        ] {
            let settings = Settings {
                paths: 400,
                steps: 256,
                decision: DecisionRule::new(rule, 0.95).unwrap(),
                ..Settings::new(1000.0, budget)
            };
            let (te, n, step) = simulate_te(&model, &settings).unwrap();
            let within = (0..settings.paths)
                .filter(|&p| {
                    (1..=n).all(|k| {
                        te[p * n + k - 1].abs() + model.temp_worst * k as f64 * step <= budget
                    })
                })
                .count();
            let pred = summarise(&model, &settings, &te, n, step).unwrap();
            assert_eq!(pred.paths_within_budget, within);
            let p = within as f64 / settings.paths as f64;
            if budget < 1e-8 {
                // A budget the paths straddle: the count is not trivial.
                assert!(within > 20 && within < 380, "{within}");
            }
            assert_eq!(pred.judgement.probability, Some(p));
            assert_eq!(pred.te.last().unwrap().within_budget, p);
            assert_eq!(pred.judgement.decision_rule, rule);
            if rule == Rule::Guarded {
                let expect = if p >= 0.95 {
                    Verdict::Meets
                } else if p <= 0.05 {
                    Verdict::Exceeds
                } else {
                    Verdict::Undecided
                };
                assert_eq!(pred.judgement.verdict, expect, "P = {p}");
            }
        }
    }
}

#[cfg(test)]
mod paired_path_tests {
    use super::*;

    /// The Monte Carlo as it stood before the paths were drawn two at a
    /// time: each path alone through [`NoisePaths::fill`] (the direct form).
    fn simulate_te_direct(model: &HoldoverModel, settings: &Settings) -> Vec<f64> {
        let n = settings.steps;
        let step = settings.span / n as f64;
        let gen = NoisePaths::new(&model.noise, step, n).unwrap();
        let (sy0, sd) = (model.y0_sigma.abs(), model.aging.sigma().abs());
        let rho = model.uncertainty.y0_aging_corr;
        let mut te = vec![0.0; settings.paths * n];
        let mut x = vec![0.0; n + 1];
        for (p, row) in te.chunks_mut(n).enumerate() {
            let mut rng = ChaCha8Rng::seed_from_u64(settings.seed);
            rng.set_stream(p as u64);
            gen.fill(&mut rng, &mut x);
            let z1: f64 = rng.sample(StandardNormal);
            let z2: f64 = rng.sample(StandardNormal);
            let dy = sy0 * z1;
            let dd = sd * (rho * z1 + (1.0 - rho * rho).sqrt() * z2);
            for k in 1..=n {
                let t = k as f64 * step;
                row[k - 1] =
                    model.base(t) + dy * t + dd * model.aging.te_per_unit(model.start, t) + x[k];
            }
        }
        te
    }

    /// Seeded Monte Carlo, same draws: the paired unit paths, scaled per
    /// span, give every path's time error of the direct,
    /// one-path-at-a-time form to 1e−12 of the largest |TE| (rounding of
    /// the FFT and of the scaling), for a model with all five noise terms,
    /// an odd number of paths (the last one alone) and a y0–aging
    /// correlation, for one span alone and two together; and the
    /// prediction's percentiles agree to 1e−9.
    #[test]
    fn paired_paths_equal_the_direct_form() {
        let mut noise = PowerLaw::zero(0.5);
        for (a, h) in [(2, 1e-24), (1, 3e-24), (0, 2e-22), (-1, 4e-24), (-2, 1e-28)] {
            noise.set(a, h);
        }
        let model = HoldoverModel {
            te0: 2e-9,
            y0: 1e-12,
            y0_sigma: 3e-13,
            aging: aging::Aging::Linear {
                c: 0.0,
                d: 1e-16,
                d_sigma: 2e-17,
            },
            start: 0.0,
            temp_worst: 0.0,
            noise,
            uncertainty: Uncertainty {
                y0_aging_corr: -0.4,
                ..Default::default()
            },
        };
        let settings = Settings {
            paths: 7,
            steps: 300,
            ..Settings::new(86_400.0, 1.5e-6)
        };
        let (te, n, step) = simulate_te(&model, &settings).unwrap();
        let want = simulate_te_direct(&model, &settings);
        // Two spans at once: each table bit for bit the one of its span
        // alone (the report predicts its spans together, the command one
        // at a time).
        let other = Settings {
            span: 8.0 * 3600.0,
            ..settings.clone()
        };
        let both = simulate_te_spans(&model, &[settings.clone(), other.clone()]).unwrap();
        assert_eq!(both[0], (te.clone(), n, step));
        assert_eq!(both[1], simulate_te(&model, &other).unwrap());
        let direct_other = simulate_te_direct(&model, &other);
        let scale_other = direct_other.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        for (g, e) in both[1].0.iter().zip(&direct_other) {
            assert!((g - e).abs() <= 1e-12 * scale_other, "8 h span: {g} vs {e}");
        }
        let scale = want.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        assert!(scale > 0.0);
        for (i, (g, e)) in te.iter().zip(&want).enumerate() {
            assert!(
                (g - e).abs() <= 1e-12 * scale,
                "path {} step {}: {g} vs {e}",
                i / n,
                i % n + 1
            );
        }
        // The blocked gather of p95 at every step against the step-by-step
        // one (exact: the same values, in another order).
        let temp = 3e-13;
        let direct: Vec<f64> = (1..=n)
            .map(|k| {
                let mut v: Vec<f64> = (0..settings.paths)
                    .map(|p| te[p * n + k - 1].abs() + temp * (k as f64 * step))
                    .collect();
                percentile(&mut v, 0.95)
            })
            .collect();
        assert_eq!(p95_per_step(&te, n, settings.paths, temp, step), direct);
        let a = summarise(&model, &settings, &te, n, step).unwrap();
        let b = summarise(&model, &settings, &want, n, step).unwrap();
        for (x, y) in a.te.iter().zip(&b.te) {
            for (u, v) in [
                (x.p50, y.p50),
                (x.p95, y.p95),
                (x.p99, y.p99),
                (x.rms, y.rms),
            ] {
                assert!((u - v).abs() <= 1e-9 * v.abs(), "t = {}: {u} vs {v}", x.t);
            }
        }
    }
}
