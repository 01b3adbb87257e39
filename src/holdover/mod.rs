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
use rand::Rng;
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
/// uncertainties (module notes). Term α of path p draws from ChaCha8
/// seeded with `seed` on a stream of its own ([`paths::term_stream`]), the
/// y0 and aging errors of path p on another ([`paths::error_stream`]), so
/// the same seed gives the same result whatever the number of threads and
/// whatever else is predicted with it ([`predict_many`]).
pub fn predict(model: &HoldoverModel, settings: &Settings) -> Result<Prediction> {
    predict_many(&[(model, settings)])
        .pop()
        .unwrap_or_else(|| Err(Error::invalid("no prediction was made")))
}

/// [`predict`] for several spans (or budgets) of one model at once
/// ([`predict_many`]; each prediction is bit for bit the one [`predict`]
/// gives for its settings alone): the report's spans. The first refusal,
/// in the order of `settings`, is the error.
pub fn predict_spans(model: &HoldoverModel, settings: &[Settings]) -> Result<Vec<Prediction>> {
    let jobs: Vec<(&HoldoverModel, &Settings)> = settings.iter().map(|s| (model, s)).collect();
    predict_many(&jobs).into_iter().collect()
}

/// Several predictions in one Monte Carlo — the spans of one model, the
/// models of several devices — each bit for bit the one [`predict`] gives
/// for it alone. The jobs that share the seed, the number of paths and of
/// steps are simulated together: each path's unit paths are drawn once for
/// the union of their noise terms (term α of path p from its own stream,
/// [`paths::term_stream`]; a unit path does not depend on h or the step)
/// and scaled for each job. That is how the comparison report draws the
/// paths of all its devices once.
///
/// Nothing of size paths × steps is held. Each job keeps, per step, the
/// largest values of |TE| that the step's p95 can depend on (at
/// most 2·(paths − ⌊0.95·(paths − 1)⌋) values a step, 6.6 MB for 2000
/// paths of 4096 steps where their table took 66 MB) — only those above
/// half the budget, since a p95 below that decides nothing (`Floor`; in
/// the rare table where that leaves the crossing undecided, the job is
/// run again keeping every value) — and each path's first
/// step out of the budget and its TE at the output times; the percentiles
/// are then those of the whole set of paths, exactly (the reference test
/// keeps the table of every path and step). Each worker draws 32 paths at a
/// time and holds their unit paths (at most 5 terms × 32 × (steps + 1) × 8
/// bytes, 5.2 MB at 4096 steps); the jobs' time errors are made from them
/// a tile of 256 steps at a time and never held whole.
///
/// A job whose model or settings are refused gets its own error; the
/// others are made.
pub fn predict_many(jobs: &[(&HoldoverModel, &Settings)]) -> Vec<Result<Prediction>> {
    let mut out: Vec<Option<Result<Prediction>>> = jobs.iter().map(|_| None).collect();
    let mut plans: Vec<Option<Plan>> = Vec::with_capacity(jobs.len());
    for (i, &(m, s)) in jobs.iter().enumerate() {
        match Plan::new(m, s) {
            Ok(p) => plans.push(Some(p)),
            Err(e) => {
                out[i] = Some(Err(e));
                plans.push(None);
            }
        }
    }
    let mut grouped = vec![false; jobs.len()];
    for i in 0..jobs.len() {
        if grouped[i] || plans[i].is_none() {
            continue;
        }
        let s = jobs[i].1;
        let group: Vec<usize> = (i..jobs.len())
            .filter(|&j| {
                let o = jobs[j].1;
                !grouped[j]
                    && plans[j].is_some()
                    && o.seed == s.seed
                    && o.paths == s.paths
                    && o.steps == s.steps
            })
            .collect();
        let per_job = TopValues::bytes(s.steps, top_count(s.paths));
        // Batches whose kept values fit in the table limit (each batch
        // draws the paths again: the same draws).
        let per_batch = (MAX_TABLE_BYTES as u128 / per_job.max(1)).max(1) as usize;
        for batch in group.chunks(per_batch) {
            let chosen: Vec<(&HoldoverModel, &Settings, &Plan)> = batch
                .iter()
                .filter_map(|&j| plans[j].as_ref().map(|p| (jobs[j].0, jobs[j].1, p)))
                .collect();
            for (&j, r) in batch.iter().zip(simulate_jobs(&chosen)) {
                grouped[j] = true;
                out[j] = Some(r);
            }
        }
    }
    out.into_iter()
        .map(|o| o.unwrap_or_else(|| Err(Error::invalid("the prediction was not made"))))
        .collect()
}

/// One job's fixed parts: the term scales at its step, the deterministic TE
/// and the aging's TE per unit parameter at each step, the y0 and aging
/// uncertainties, and what the summary needs.
struct Plan {
    alphas: Vec<i32>,
    scales: Vec<(i32, f64)>,
    /// t_k = k·step, k = 0 … n.
    t: Vec<f64>,
    base: Vec<f64>,
    unit: Vec<f64>,
    step: f64,
    sy0: f64,
    sd: f64,
    rho: f64,
}

impl Plan {
    fn new(model: &HoldoverModel, s: &Settings) -> Result<Self> {
        s.validate()?;
        let n = s.steps;
        let step = s.span / n as f64;
        let gen = NoisePaths::new(&model.noise, step, n)?;
        let rho = if model.uncertainty.y0_aging_corr.is_finite() {
            model.uncertainty.y0_aging_corr.clamp(-1.0, 1.0)
        } else {
            0.0
        };
        Ok(Self {
            alphas: gen.alphas(),
            scales: gen.scales(),
            t: (0..=n).map(|k| k as f64 * step).collect(),
            base: (0..=n).map(|k| model.base(k as f64 * step)).collect(),
            unit: (0..=n)
                .map(|k| model.aging.te_per_unit(model.start, k as f64 * step))
                .collect(),
            step,
            sy0: model.y0_sigma.abs(),
            sd: model.aging.sigma().abs(),
            rho,
        })
    }

    /// The errors (δy0, δD) of y0 and of the aging parameter of a path
    /// whose two standard normals are (z1, z2): jointly normal with the
    /// standard uncertainties and correlation ρ.
    fn errors(&self, (z1, z2): (f64, f64)) -> (f64, f64) {
        let rho = self.rho;
        let dy = self.sy0 * z1;
        let dd = self.sd * (rho * z1 + (1.0 - rho * rho).sqrt() * z2);
        (dy, dd)
    }

    /// The signed TE of one path at steps k0 + 1 … k0 + seg.len() (without
    /// the worst-case temperature term), in place: `seg` holds the path's
    /// noise x at those steps and receives base + δy0·t + δD·TE_a/unit + x,
    /// with its errors (δy0, δD) from [`Plan::errors`].
    fn segment(&self, (dy, dd): (f64, f64), k0: usize, seg: &mut [f64]) {
        let r = k0 + 1..k0 + 1 + seg.len();
        let parts = self.base[r.clone()]
            .iter()
            .zip(&self.t[r.clone()])
            .zip(&self.unit[r]);
        for (x, ((b, t), u)) in seg.iter_mut().zip(parts) {
            // Added in this order (the noise last), as every prediction
            // has made it: the same value to the last bit.
            let noise = *x;
            *x = b + dy * t + dd * u + noise;
        }
    }
}

/// The y0 and aging errors of path p: two standard normals from the path's
/// error stream ([`paths::error_stream`]).
fn path_errors(seed: u64, p: usize) -> (f64, f64) {
    let mut rng = paths::stream_rng(seed, paths::error_stream(p));
    let z1: f64 = rng.sample(StandardNormal);
    let z2: f64 = rng.sample(StandardNormal);
    (z1, z2)
}

/// The union of the jobs' noise terms, WPM first.
fn union_alphas<'a>(plans: impl Iterator<Item = &'a Plan>) -> Vec<i32> {
    let mut present = [false; 5];
    for p in plans {
        for &a in &p.alphas {
            present[(2 - a) as usize] = true;
        }
    }
    (0..5)
        .filter(|&i| present[i])
        .map(|i| 2 - i as i32)
        .collect()
}

/// Paths a worker draws at a time (even, so that a batch is whole pairs).
/// Each job's values of the batch are then taken tile by tile, the jobs
/// inside each tile: the batch's unit paths at a tile's steps (at most
/// 5 × 32 × 256 × 8 bytes) stay in the core's cache for every job, and each
/// kept-value buffer is visited once for 32 paths instead of once a path.
const BATCH_PATHS: usize = 32;

/// The jobs of one group (same seed, paths and steps), together: each
/// batch of paths drawn once for the union of the terms
/// ([`paths::PathWorkspace::draw_batch`]), then, tile of steps by tile of
/// steps, each job's TE of those paths at those steps made and taken by
/// its summary ([`Collector::scan_segment`], [`Tile::push`]); no row of a
/// path is held whole.
fn simulate_jobs(jobs: &[(&HoldoverModel, &Settings, &Plan)]) -> Vec<Result<Prediction>> {
    let first = simulate_jobs_kept(jobs, true);
    // The jobs whose kept values above the floor did not decide their
    // summary (module notes of [`Floor`]): again, every value kept.
    let again: Vec<usize> = (0..jobs.len()).filter(|&j| first[j].is_none()).collect();
    let mut redone = if again.is_empty() {
        Vec::new()
    } else {
        let sub: Vec<_> = again.iter().map(|&j| jobs[j]).collect();
        simulate_jobs_kept(&sub, false)
    }
    .into_iter();
    first
        .into_iter()
        .map(|p| match p {
            Some(p) => Ok(p),
            None => redone.next().flatten().ok_or_else(undecided),
        })
        .collect()
}

/// [`simulate_jobs`] with each job's kept values above its [`Floor`]
/// (`floored`) or all of them; `None` for a job whose floor left its
/// summary undecided.
fn simulate_jobs_kept(
    jobs: &[(&HoldoverModel, &Settings, &Plan)],
    floored: bool,
) -> Vec<Option<Prediction>> {
    use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering::Relaxed};
    let s0 = jobs[0].1;
    let (n, np, seed) = (s0.steps, s0.paths, s0.seed);
    let alphas = union_alphas(jobs.iter().map(|j| j.2));
    let keep = top_count(np);
    let collectors: Vec<Collector> = jobs
        .iter()
        .map(|&(m, s, p)| Collector::new(m, s, n, p.step))
        .collect();
    let first_out: Vec<Vec<AtomicUsize>> = jobs
        .iter()
        .map(|_| (0..np).map(|_| AtomicUsize::new(0)).collect())
        .collect();
    let at_ks: Vec<Vec<AtomicU64>> = collectors
        .iter()
        .map(|c| (0..np * c.ks.len()).map(|_| AtomicU64::new(0)).collect())
        .collect();
    let batches = np.div_ceil(BATCH_PATHS);
    let tops: Vec<TopValues> = jobs
        .iter()
        .map(|&(_, st, _)| TopValues::new(n, keep, Floor::of(st.budget, floored)))
        .collect();
    let tiles = tops.first().map_or(0, |t| t.tiles.len());
    let lanes = rayon::current_num_threads().min(batches).max(1);
    let next = AtomicUsize::new(0);
    // Each lane takes the next batch of paths until none is left, so a
    // busy core slows only its own lane.
    (0..lanes).into_par_iter().for_each(|_| {
        let mut ws = paths::PathWorkspace::default();
        let mut seg = [0.0f64; STEP_TILE];
        // Per job: each path's (δy0, δD), first step out of the budget and
        // TE at the output steps, for the batch.
        let mut errors: Vec<Vec<(f64, f64)>> = vec![Vec::new(); jobs.len()];
        let mut firsts: Vec<Vec<usize>> = vec![Vec::new(); jobs.len()];
        let mut ats: Vec<Vec<f64>> = vec![Vec::new(); jobs.len()];
        loop {
            let c = next.fetch_add(1, Relaxed);
            if c >= batches {
                break;
            }
            let (p0, p1) = (c * BATCH_PATHS, ((c + 1) * BATCH_PATHS).min(np));
            ws.draw_batch(&alphas, n, seed, p0, p1);
            let z: Vec<(f64, f64)> = (p0..p1).map(|p| path_errors(seed, p)).collect();
            for (j, (&(_, _, plan), col)) in jobs.iter().zip(&collectors).enumerate() {
                errors[j].clear();
                errors[j].extend(z.iter().map(|&e| plan.errors(e)));
                firsts[j].clear();
                firsts[j].resize(p1 - p0, col.never_out());
                ats[j].clear();
                ats[j].resize((p1 - p0) * col.ks.len(), 0.0);
            }
            // Tiles from a different one per batch, so that the lanes
            // seldom wait for one another.
            for t in (0..tiles).map(|t| (c + t) % tiles) {
                for (j, (&(_, _, plan), col)) in jobs.iter().zip(&collectors).enumerate() {
                    let mut tile = tops[j].lock(t);
                    let (k0, width) = (tile.start, tile.len.len());
                    tile.warm();
                    let seg = &mut seg[..width];
                    let nks = col.ks.len();
                    for (i, &e) in errors[j].iter().enumerate() {
                        ws.segment(&plan.scales, i, k0 + 1, seg);
                        plan.segment(e, k0, seg);
                        let at = &mut ats[j][i * nks..(i + 1) * nks];
                        col.scan_segment(k0, seg, &mut firsts[j][i], at);
                        tile.push(seg, &col.added_p95[k0..k0 + width]);
                    }
                }
            }
            for (j, col) in collectors.iter().enumerate() {
                let nks = col.ks.len();
                for (i, &f) in firsts[j].iter().enumerate() {
                    first_out[j][p0 + i].store(f, Relaxed);
                }
                let slots = &at_ks[j][p0 * nks..p1 * nks];
                for (slot, v) in slots.iter().zip(&ats[j]) {
                    slot.store(v.to_bits(), Relaxed);
                }
            }
        }
    });
    jobs.iter()
        .zip(&collectors)
        .enumerate()
        .map(|(j, (&(m, s, _), col))| {
            let fo: Vec<usize> = first_out[j].iter().map(|a| a.load(Relaxed)).collect();
            let at: Vec<f64> = at_ks[j]
                .iter()
                .map(|a| f64::from_bits(a.load(Relaxed)))
                .collect();
            col.finish(m, s, &tops[j], &fo, &at)
        })
        .collect()
}

/// The simulated signed time errors of the prediction, the table of every
/// path and step: `te[p·n + k − 1]` is TE of path p at step k (k = 1 … n,
/// t = k·step), without the worst-case temperature term, from the same
/// draws as [`predict`]; returns (te, n, step). [`summarise`] of it is
/// [`predict`]'s result, bit for bit.
pub(crate) fn simulate_te(
    model: &HoldoverModel,
    settings: &Settings,
) -> Result<(Vec<f64>, usize, f64)> {
    let plan = Plan::new(model, settings)?;
    let (n, np, seed) = (settings.steps, settings.paths, settings.seed);
    let mut te = vec![0.0f64; np * n];
    te.par_chunks_mut(2 * n).enumerate().for_each_init(
        paths::PathWorkspace::default,
        |ws, (i, rows)| {
            let pa = 2 * i;
            ws.draw_batch(&plan.alphas, n, seed, pa, (pa + 2).min(np));
            for (b, row) in rows.chunks_mut(n).enumerate() {
                ws.segment(&plan.scales, b, 1, row);
                plan.segment(plan.errors(path_errors(seed, pa + b)), 0, row);
            }
        },
    );
    Ok((te, n, plan.step))
}

/// How many of a step's largest values its p95 depends on: the set's
/// order statistics ⌊h⌋ and ⌊h⌋ + 1 with h = 0.95·(paths − 1) (type 7,
/// [`percentile`]) are among its paths − ⌊h⌋ largest.
fn top_count(paths: usize) -> usize {
    let h = (paths.max(1) - 1) as f64 * 0.95;
    paths.max(1) - h.floor() as usize
}

/// The least f64 of the total order (a negative NaN with every bit set):
/// below every value |TE| + c a step can hold.
fn lowest() -> f64 {
    f64::from_bits(u64::MAX)
}

/// The largest values of |TE(k·step)| + temp·k·step at each step k of one
/// job, enough for the step's p95 over all the paths: each step keeps a
/// buffer of up to 2·keep values and a threshold, at first the job's
/// [`Floor`]; a value at or below the threshold is dropped, and a full buffer keeps its `keep` largest (the
/// new threshold their least). So every value dropped has at least `keep`
/// kept values at or above it, and the kept values hold the `keep` largest
/// of the whole set above the floor (ties: equal values are
/// interchangeable); a step that kept fewer than `keep` kept every value
/// above the floor and no other. The steps are
/// held in tiles of [`STEP_TILE`], each behind its own lock, and every
/// worker pushes into the one set (whoever pushes first, the kept values
/// are the same set's largest). The cost is a comparison a value and, on
/// average, about 2·keep + keep·ln(paths/(2·keep)) stores a step. Values
/// are held as their [`order_key`], so that the cuts sort integers.
struct TopValues {
    keep: usize,
    tiles: Vec<std::sync::Mutex<Tile>>,
}

/// The steps `start` … `start + len.len() − 1` of a [`TopValues`].
struct Tile {
    start: usize,
    /// Values kept a step at least (the buffers hold 2·keep).
    keep: usize,
    len: Vec<usize>,
    /// Each step's threshold, as its [`order_key`] and as the f64 (a
    /// value v is a candidate when !(v ≤ threshold): every v above it in
    /// the total order is, since the values |TE| + c are never −0 or a
    /// negative NaN, and a NaN threshold lets every value through).
    thr: Vec<i64>,
    thr_f: Vec<f64>,
    buf: Vec<i64>,
}

impl Tile {
    /// Read the place of each step's next kept value, so that the pushes
    /// of a batch of paths find those lines in the core's cache instead of
    /// waiting for memory at each store (the loads are independent and
    /// overlap; the kept values of all the jobs do not fit in a cache).
    fn warm(&self) {
        let cap = 2 * self.keep;
        let mut acc = 0i64;
        // A step that has kept nothing yet is likely below the floor
        // ([`Floor`]): not read.
        for (i, &l) in self.len.iter().enumerate().filter(|(_, &l)| l > 0) {
            acc ^= self.buf[i * cap + l.min(cap - 1)];
        }
        std::hint::black_box(acc);
    }

    /// Take one path's values |TE| + `added[i]` at the tile's steps, its
    /// signed TE being `seg[i]` at step start + i + 1 (`added` the
    /// worst-case temperature term temp·(k·step) there).
    fn push(&mut self, seg: &[f64], added: &[f64]) {
        let (keep, cap) = (self.keep, 2 * self.keep);
        let mut idx = [0u16; STEP_TILE];
        let thr_f = &self.thr_f[..seg.len()];
        // The candidates' places, written without a branch on a
        // comparison that goes either way at random.
        let mut m = 0;
        for (i, ((te, c), thr)) in seg.iter().zip(added).zip(thr_f).enumerate() {
            idx[m] = i as u16;
            m += usize::from(!(te.abs() + c <= *thr));
        }
        for &i in &idx[..m] {
            let i = usize::from(i);
            let v = order_key(seg[i].abs() + added[i]);
            // Above the threshold in the total order too, else it adds
            // nothing (a NaN threshold passes every value).
            if v <= self.thr[i] {
                continue;
            }
            let kept = &mut self.buf[i * cap..(i + 1) * cap];
            let l = self.len[i];
            kept[l] = v;
            if l + 1 == cap {
                let cut = cap - keep;
                kept.select_nth_unstable(cut);
                self.thr[i] = kept[cut];
                self.thr_f[i] = from_order_key(kept[cut]);
                kept.copy_within(cut.., 0);
                self.len[i] = keep;
            } else {
                self.len[i] = l + 1;
            }
        }
    }
}

/// Steps held in one [`Tile`] (a multiple of [`STEP_BLOCK`]).
const STEP_TILE: usize = 256;

/// An integer whose order is [`f64::total_cmp`]'s (the same bit trick; it
/// is its own inverse on the bits, [`from_order_key`]).
#[inline]
fn order_key(v: f64) -> i64 {
    let b = v.to_bits() as i64;
    b ^ ((((b >> 63) as u64) >> 1) as i64)
}

/// The f64 of an [`order_key`].
#[inline]
fn from_order_key(k: i64) -> f64 {
    f64::from_bits((k ^ ((((k >> 63) as u64) >> 1) as i64)) as u64)
}

/// The least value a job's kept values must exceed: half the budget, or
/// none (every value is a candidate).
///
/// A step's p95 matters to the summary only where it may exceed the
/// budget (the crossing and whether it is finite) and just before the
/// crossing (the interpolation), so values at or below budget/2 are not
/// kept. [`Collector::finish`] then knows, from how many values a step
/// kept, whether it has the step's exact p95 (at least the
/// paths − ⌊0.95·(paths − 1)⌋ largest values kept), or that p95 there is
/// finite and at most the budget (two or more fewer: the two order
/// statistics p95 interpolates are both ≤ budget/2), or (one fewer) the
/// upper of the two only. Where that does not decide the summary — a
/// step with one fewer whose upper value is ≥ the budget before the
/// crossing, or a crossing whose step before kept too few to give p95
/// there — the job is summarised again with every value kept: the same
/// result either way, bit for bit, the floor only saves the stores.
#[derive(Debug, Clone, Copy)]
struct Floor(f64);

impl Floor {
    /// Half of `budget` when `floored` (a validated budget is finite and
    /// positive; anything else keeps every value), else none.
    fn of(budget: f64, floored: bool) -> Self {
        if floored && budget.is_finite() && budget > 0.0 {
            Floor(0.5 * budget)
        } else {
            Floor(lowest())
        }
    }
}

impl TopValues {
    fn new(n: usize, keep: usize, floor: Floor) -> Self {
        let keep = keep.max(1);
        let cap = 2 * keep;
        let tiles = (0..n)
            .step_by(STEP_TILE)
            .map(|start| {
                let len = STEP_TILE.min(n - start);
                std::sync::Mutex::new(Tile {
                    start,
                    keep,
                    len: vec![0; len],
                    thr: vec![order_key(floor.0); len],
                    thr_f: vec![floor.0; len],
                    buf: vec![0; len * cap],
                })
            })
            .collect();
        Self { keep, tiles }
    }

    /// Working memory of one job, bytes.
    fn bytes(n: usize, keep: usize) -> u128 {
        n as u128 * (2 * keep.max(1) as u128 * 8 + 16)
    }

    /// Tile `t` (steps t·[`STEP_TILE`] …), locked.
    fn lock(&self, t: usize) -> std::sync::MutexGuard<'_, Tile> {
        self.tiles[t].lock().unwrap_or_else(|e| e.into_inner())
    }

    /// Append the values kept at steps `k0 … k1 − 1` (0-based, within one
    /// tile) to `out`, step after step; returns each step's count.
    fn values(&self, k0: usize, k1: usize, out: &mut Vec<f64>, counts: &mut Vec<usize>) {
        let cap = 2 * self.keep;
        let guard = self.tiles[k0 / STEP_TILE]
            .lock()
            .unwrap_or_else(|e| e.into_inner());
        for k in k0..k1 {
            let i = k - guard.start;
            let l = guard.len[i];
            out.extend(
                guard.buf[i * cap..i * cap + l]
                    .iter()
                    .map(|&v| from_order_key(v)),
            );
            counts.push(l);
        }
    }
}

/// The p-th percentile of a set of `total` values (type 7, as
/// [`percentile`]) from `top`, a part of the set that holds at least its
/// total − ⌊(total − 1)·p⌋ largest values; reorders `top`. The order
/// statistics ⌊h⌋ and ⌊h⌋ + 1 of the set are the same values in `top`,
/// counted from the top, so the result is [`percentile`]'s bit for bit.
fn percentile_from_top(top: &mut [f64], total: usize, p: f64) -> f64 {
    let h = (total - 1) as f64 * p;
    let lo = h.floor() as usize;
    let at = top.len() - (total - lo);
    let (_, &mut a, rest) = top.select_nth_unstable_by(at, f64::total_cmp);
    if lo + 1 >= total {
        return a;
    }
    let b = rest.iter().cloned().fold(f64::INFINITY, f64::min);
    a + (h - lo as f64) * (b - a)
}

/// Steps merged at a time by [`Collector::finish`].
const STEP_BLOCK: usize = 64;

/// What one job's summary takes from each path, and the summary.
struct Collector {
    n: usize,
    np: usize,
    step: f64,
    temp: f64,
    budget: f64,
    /// |te0| > budget: every path is out of the budget at the start.
    out_at_start: bool,
    /// The output steps ([`output_steps`]).
    ks: Vec<usize>,
    /// temp·(k·step) for k = 1 … n: the worst-case temperature term added
    /// to |TE| for each step's p95.
    added_p95: Vec<f64>,
    /// (temp·k)·step for k = 1 … n: the same term as the budget check of
    /// each path adds it (the two roundings are kept as they were).
    added_budget: Vec<f64>,
}

impl Collector {
    fn new(model: &HoldoverModel, settings: &Settings, n: usize, step: f64) -> Self {
        let temp = model.temp_worst.abs();
        Self {
            n,
            np: settings.paths,
            step,
            temp,
            budget: settings.budget,
            out_at_start: model.te0.abs() > settings.budget,
            ks: output_steps(n, settings.per_decade),
            added_p95: (1..=n).map(|k| temp * (k as f64 * step)).collect(),
            added_budget: (1..=n).map(|k| temp * k as f64 * step).collect(),
        }
    }

    /// A path's first step out of the budget before any of its steps is
    /// seen: 0 when |te0| > budget (out at the start), else n + 1 (never
    /// within the span) until [`Collector::scan_segment`] finds one.
    fn never_out(&self) -> usize {
        if self.out_at_start {
            0
        } else {
            self.n + 1
        }
    }

    /// One path's signed TE at steps k0 + 1 … k0 + seg.len(): its TE at the
    /// output steps among them into `at` (indexed as `ks`), and `first`
    /// lowered to the first of them at which its |TE| (with the worst-case
    /// temperature term) leaves the budget. Segments may come in any order;
    /// after all of them `first` is the path's first step out of the budget
    /// ([`Collector::never_out`] when none). Its values for each step's p95
    /// go to [`Tile::push`].
    fn scan_segment(&self, k0: usize, seg: &[f64], first: &mut usize, at: &mut [f64]) {
        let budget = self.budget;
        if *first > k0 + 1 {
            let added = &self.added_budget[k0..k0 + seg.len()];
            let out = |(te, c): (&f64, &f64)| !(te.abs() + c <= budget);
            // Blocks checked whole (no early exit inside, so the check runs
            // on several values at once), then the first step found in the
            // first block that has one.
            for (b, (r, c)) in seg.chunks(64).zip(added.chunks(64)).enumerate() {
                if r.iter().zip(c).fold(false, |any, v| any | out(v)) {
                    if let Some(i) = r.iter().zip(c).position(out) {
                        *first = (*first).min(k0 + b * 64 + i + 1);
                    }
                    break;
                }
            }
        }
        let lo = self.ks.partition_point(|&k| k <= k0);
        let hi = self.ks.partition_point(|&k| k <= k0 + seg.len());
        for (slot, &k) in at[lo..hi].iter_mut().zip(&self.ks[lo..hi]) {
            *slot = seg[k - 1 - k0];
        }
    }

    /// The prediction from every path's first step out of the budget
    /// (`first_out[p]`), TE at the output steps (`at[p·ks + j]`) and the
    /// kept values of every step: percentiles, crossing and verdict;
    /// `None` when the values kept above the [`Floor`] do not decide it
    /// (never with every value kept).
    fn finish(
        &self,
        model: &HoldoverModel,
        settings: &Settings,
        top: &TopValues,
        first_out: &[usize],
        at: &[f64],
    ) -> Option<Prediction> {
        let (n, np, step, temp) = (self.n, self.np, self.step, self.temp);
        let budget = settings.budget;
        // p95 at every step, for the crossing, as far as the kept values
        // give it.
        let p95: Vec<Step95> = (0..n.div_ceil(STEP_BLOCK))
            .into_par_iter()
            .map(|b| {
                let (k0, k1) = (b * STEP_BLOCK, ((b + 1) * STEP_BLOCK).min(n));
                let (mut vals, mut counts) = (Vec::new(), Vec::new());
                top.values(k0, k1, &mut vals, &mut counts);
                let mut at = 0;
                counts
                    .iter()
                    .map(|&c| {
                        let v = step_p95(&mut vals[at..at + c], np, budget);
                        at += c;
                        v
                    })
                    .collect::<Vec<Step95>>()
            })
            .collect::<Vec<Vec<Step95>>>()
            .concat();
        // The first step whose p95 exceeds the budget; undecided when a
        // step before it (or any, without one) may exceed it.
        let mut crossing = None;
        let from_start = model.te0.abs() > budget;
        for (i, v) in p95.iter().enumerate().filter(|_| !from_start) {
            match *v {
                Step95::Exact(x) if x > budget => {
                    crossing = Some(i);
                    break;
                }
                Step95::Unsure => return None,
                _ => {}
            }
        }
        let holds_for = if from_start {
            Some(0.0)
        } else {
            match crossing {
                None => None,
                Some(i) => {
                    let k = i + 1;
                    let v1 = p95[i].exact()?;
                    let (t1, (t0, v0)) = (
                        k as f64 * step,
                        if i == 0 {
                            (0.0, model.te0.abs())
                        } else {
                            ((k - 1) as f64 * step, p95[i - 1].exact()?)
                        },
                    );
                    Some(t0 + (budget - v0) / (v1 - v0) * (t1 - t0))
                }
            }
        };
        // For the verdict only whether each step's p95 is finite counts: a
        // step known to be at most the budget is finite.
        let p95: Vec<f64> = p95.iter().map(|v| v.exact().unwrap_or(budget)).collect();
        let within_through = |k: usize| first_out.iter().filter(|&&f| f > k).count();
        let paths_within_budget = within_through(n);
        let nks = self.ks.len();
        let mut buf = Vec::with_capacity(np);
        let points: Vec<TePoint> = self
            .ks
            .iter()
            .enumerate()
            .map(|(j, &k)| {
                let t = k as f64 * step;
                let rms =
                    ((0..np).map(|p| at[p * nks + j].powi(2)).sum::<f64>() / np as f64).sqrt();
                buf.clear();
                buf.extend((0..np).map(|p| at[p * nks + j].abs() + temp * t));
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
        Some(Prediction {
            te: points,
            judgement,
            holds_for,
            step,
            paths: np,
            paths_within_budget,
        })
    }
}

/// A step's p95 as far as its kept values give it ([`step_p95`]).
#[derive(Debug, Clone, Copy, PartialEq)]
enum Step95 {
    /// The value, exactly as [`percentile`] gives it on all the paths.
    Exact(f64),
    /// Finite and at most the budget (not kept: below the [`Floor`]).
    WithinBudget,
    /// Not known to be within the budget.
    Unsure,
}

impl Step95 {
    fn exact(self) -> Option<f64> {
        match self {
            Step95::Exact(v) => Some(v),
            _ => None,
        }
    }
}

/// The p95 (type 7, as [`percentile`]) of a step's `total` values from
/// `kept`, the values a [`TopValues`] kept there: the `need` = total −
/// ⌊0.95·(total − 1)⌋ largest at least, or — when fewer are kept — every
/// value above the [`Floor`] (≤ budget/2 < `budget`), since a step's
/// threshold rises only once it has kept `need`. Reorders `kept`.
///
/// With p95 = a + f·(b − a), a and b the order statistics ⌊h⌋ and ⌊h⌋ + 1
/// (b the least non-NaN value above a, +∞ when there is none, as in
/// [`percentile`]):
/// - `need` or more kept: exact ([`percentile_from_top`]);
/// - `need` − 2 or fewer: a ≤ b ≤ floor, so p95 is finite and at most the
///   float after b, within the budget;
/// - `need` − 1: b is the least non-NaN kept value, a ≤ floor finite: b
///   infinite gives +∞ (f > 0) or NaN (f = 0, 0·∞) exactly; b below the
///   budget gives within the budget; else unsure.
fn step_p95(kept: &mut [f64], total: usize, budget: f64) -> Step95 {
    let h = (total - 1) as f64 * 0.95;
    let lo = h.floor() as usize;
    let need = total - lo;
    if kept.len() >= need {
        return Step95::Exact(percentile_from_top(kept, total, 0.95));
    }
    // One value (p95 = a ≤ floor), or b ≤ floor too.
    if lo + 1 >= total || kept.len() + 2 <= need {
        return Step95::WithinBudget;
    }
    let b = kept.iter().cloned().fold(f64::INFINITY, f64::min);
    let f = h - lo as f64;
    if b.is_infinite() {
        Step95::Exact(if f > 0.0 { f64::INFINITY } else { f64::NAN })
    } else if b < budget {
        Step95::WithinBudget
    } else {
        Step95::Unsure
    }
}

/// The output steps: log-spaced, `per_decade` a decade, ending at n.
fn output_steps(n: usize, per_decade: usize) -> Vec<usize> {
    let mut ks: Vec<usize> = Vec::new();
    let pd = per_decade.max(1) as f64;
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
    ks
}

/// Percentiles, crossing and verdict of a table of simulated time errors
/// ([`simulate_te`]), by the same summary as [`predict`] (so equal to it,
/// bit for bit, on the table of the same draws).
pub(crate) fn summarise(
    model: &HoldoverModel,
    settings: &Settings,
    te: &[f64],
    n: usize,
    step: f64,
) -> Result<Prediction> {
    let np = settings.paths;
    if np == 0 || n == 0 || te.len() != np * n {
        return Err(Error::invalid(format!(
            "a table of {} simulated time errors is not {np} paths of {n} steps",
            te.len()
        )));
    }
    match summarise_kept(model, settings, te, n, step, true) {
        Some(p) => Ok(p),
        None => summarise_kept(model, settings, te, n, step, false).ok_or_else(undecided),
    }
}

/// The error of a summary left undecided with every value kept — which
/// cannot happen ([`Collector::finish`]); an error rather than a panic.
fn undecided() -> Error {
    Error::invalid("the holdover summary was left undecided with every value kept")
}

/// [`summarise`] with the kept values above the budget's [`Floor`]
/// (`floored`) or all of them; `None` when the floor left it undecided.
fn summarise_kept(
    model: &HoldoverModel,
    settings: &Settings,
    te: &[f64],
    n: usize,
    step: f64,
    floored: bool,
) -> Option<Prediction> {
    let np = settings.paths;
    let col = Collector::new(model, settings, n, step);
    let nks = col.ks.len();
    let top = TopValues::new(n, top_count(np), Floor::of(settings.budget, floored));
    let mut first_out = vec![col.never_out(); np];
    let mut at = vec![0.0f64; np * nks];
    for t in 0..top.tiles.len() {
        let mut tile = top.lock(t);
        let (k0, width) = (tile.start, tile.len.len());
        for (p, row) in te.chunks(n).enumerate() {
            let seg = &row[k0..k0 + width];
            col.scan_segment(k0, seg, &mut first_out[p], &mut at[p * nks..(p + 1) * nks]);
            tile.push(seg, &col.added_p95[k0..k0 + width]);
        }
    }
    col.finish(model, settings, &top, &first_out, &at)
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
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    /// The Monte Carlo's paths in their direct form: each term α of path p
    /// alone through the lone-path synthesiser
    /// [`crate::simulate::power_law_phase`] (itself tested against the
    /// direct convolution) from ChaCha8 `seed` on stream 8p + 2 − α, less
    /// its first sample, the terms added; the y0 and aging errors from
    /// stream 8p + 5 (the documented streams, written out here).
    fn simulate_te_direct(model: &HoldoverModel, settings: &Settings) -> Vec<f64> {
        let n = settings.steps;
        let step = settings.span / n as f64;
        let gen = NoisePaths::new(&model.noise, step, n).unwrap();
        let (sy0, sd) = (model.y0_sigma.abs(), model.aging.sigma().abs());
        let rho = model.uncertainty.y0_aging_corr;
        let mut te = vec![0.0; settings.paths * n];
        for (p, row) in te.chunks_mut(n).enumerate() {
            let mut x = vec![0.0; n + 1];
            for &(alpha, h) in gen.terms() {
                let mut rng = ChaCha8Rng::seed_from_u64(settings.seed);
                rng.set_stream(8 * p as u64 + (2 - alpha) as u64);
                let term = crate::simulate::power_law_phase(alpha, h, step, n + 1, &mut rng);
                for (o, v) in x.iter_mut().zip(&term) {
                    *o += v - term[0];
                }
            }
            let mut rng = ChaCha8Rng::seed_from_u64(settings.seed);
            rng.set_stream(8 * p as u64 + 5);
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

    /// The summary in its direct form, from the table of every path and
    /// step: p95 at each step by sorting that step's values across the
    /// paths ([`percentile`]), each path's first step out of the budget by
    /// scanning its row, the output points from the table's columns.
    fn summarise_direct(
        model: &HoldoverModel,
        settings: &Settings,
        te: &[f64],
        n: usize,
        step: f64,
    ) -> Prediction {
        let np = settings.paths;
        let temp = model.temp_worst.abs();
        let budget = settings.budget;
        let p95: Vec<f64> = (1..=n)
            .map(|k| {
                let mut v: Vec<f64> = (0..np)
                    .map(|p| te[p * n + k - 1].abs() + temp * (k as f64 * step))
                    .collect();
                percentile(&mut v, 0.95)
            })
            .collect();
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
        let first_out: Vec<usize> = (0..np)
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
        let points: Vec<TePoint> = output_steps(n, settings.per_decade)
            .into_iter()
            .map(|k| {
                let t = k as f64 * step;
                let rms =
                    ((0..np).map(|p| te[p * n + k - 1].powi(2)).sum::<f64>() / np as f64).sqrt();
                let mut v: Vec<f64> = (0..np)
                    .map(|p| te[p * n + k - 1].abs() + temp * t)
                    .collect();
                TePoint {
                    t,
                    deterministic: model.deterministic(t),
                    p50: percentile(&mut v, 0.50),
                    p95: percentile(&mut v, 0.95),
                    p99: percentile(&mut v, 0.99),
                    rms,
                    within_budget: within_through(k) as f64 / np as f64,
                }
            })
            .collect();
        let mut judgement = judge(model, &points, &p95, step, np, budget, holds_for);
        let paths_within_budget = within_through(n);
        let p = crate::decision::path_fraction(paths_within_budget, np);
        settings
            .decision
            .decide(&mut judgement, crate::decision::Probabilities::Points(&[p]));
        Prediction {
            te: points,
            judgement,
            holds_for,
            step,
            paths: np,
            paths_within_budget,
        }
    }

    fn model_with(terms: &[(i32, f64)], corr: f64, temp: f64) -> HoldoverModel {
        let mut noise = PowerLaw::zero(0.5);
        for &(a, h) in terms {
            noise.set(a, h);
        }
        HoldoverModel {
            te0: 2e-9,
            y0: 1e-12,
            y0_sigma: 3e-13,
            aging: aging::Aging::Linear {
                c: 0.0,
                d: 1e-16,
                d_sigma: 2e-17,
            },
            start: 0.0,
            temp_worst: temp,
            noise,
            uncertainty: Uncertainty {
                y0_aging_corr: corr,
                ..Default::default()
            },
        }
    }

    const ALL_FIVE: [(i32, f64); 5] =
        [(2, 1e-24), (1, 3e-24), (0, 2e-22), (-1, 4e-24), (-2, 1e-28)];

    /// Seeded Monte Carlo, same draws: the table of the paired unit paths,
    /// scaled, equals every path's time error of the direct, one term at a
    /// time form to 1e−12 of the largest |TE| (rounding of the FFT and of
    /// the scaling), for a model with all five noise terms, an odd number
    /// of paths (the last one alone) and a y0–aging correlation; and the
    /// prediction is the summary of that table, bit for bit.
    #[test]
    fn paths_equal_the_direct_form() {
        let model = model_with(&ALL_FIVE, -0.4, 0.0);
        let settings = Settings {
            paths: 7,
            steps: 300,
            ..Settings::new(86_400.0, 1.5e-6)
        };
        let (te, n, step) = simulate_te(&model, &settings).unwrap();
        let want = simulate_te_direct(&model, &settings);
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
        assert_eq!(
            predict(&model, &settings).unwrap(),
            summarise(&model, &settings, &te, n, step).unwrap()
        );
    }

    /// The streaming summary (each step's largest values kept by each
    /// worker, merged) against the direct one on the whole table, exactly:
    /// many paths (so that the kept values are cut many times and the
    /// workers are several), a budget crossed inside the span, the
    /// worst-case temperature term, te0 over the budget, and tables with
    /// NaN and ±∞ in some paths (the verdict `not-judged` for the same
    /// reason) — seeded Monte Carlo tables and hand-made ones.
    #[test]
    fn streaming_summary_equals_the_direct_form() {
        let model = model_with(&ALL_FIVE, 0.3, 2e-13);
        for (paths, steps, budget) in [(401, 64, 2e-8), (2000, 40, 5e-8), (9, 33, 1e-8)] {
            let settings = Settings {
                paths,
                steps,
                ..Settings::new(20_000.0, budget)
            };
            let (te, n, step) = simulate_te(&model, &settings).unwrap();
            let direct = summarise_direct(&model, &settings, &te, n, step);
            assert!(
                direct.holds_for.is_some() || paths == 9,
                "{paths}: a crossing"
            );
            assert_eq!(summarise(&model, &settings, &te, n, step).unwrap(), direct);
            // The values kept above the floor decide it alone (no second
            // summary with every value kept).
            assert_eq!(
                summarise_kept(&model, &settings, &te, n, step, true).as_ref(),
                Some(&direct),
                "{paths}: decided by the kept values above the floor"
            );
            // predict runs the paths on every worker; the same table.
            assert_eq!(predict(&model, &settings).unwrap(), direct);
            for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
                let mut t = te.clone();
                for p in (0..paths).step_by(7) {
                    t[p * n + n / 2] = bad;
                }
                let d = summarise_direct(&model, &settings, &t, n, step);
                assert_eq!(summarise(&model, &settings, &t, n, step).unwrap(), d);
            }
            // Every path non-finite from a step on: p95 itself not finite.
            let mut t = te.clone();
            for p in 0..paths {
                t[p * n + n / 3] = f64::NAN;
            }
            let d = summarise_direct(&model, &settings, &t, n, step);
            assert_eq!(d.judgement.verdict, crate::verdict::Verdict::NotJudged);
            assert_eq!(summarise(&model, &settings, &t, n, step).unwrap(), d);
        }
        let over = HoldoverModel {
            te0: 1e-6,
            ..model.clone()
        };
        let settings = Settings {
            paths: 150,
            steps: 50,
            ..Settings::new(20_000.0, 1e-7)
        };
        let (te, n, step) = simulate_te(&over, &settings).unwrap();
        assert_eq!(
            summarise(&over, &settings, &te, n, step).unwrap(),
            summarise_direct(&over, &settings, &te, n, step)
        );
    }

    /// The summary with the values kept above the floor (budget/2) against
    /// the direct one on the whole table, exactly, on hand-made tables
    /// that put a step in each case [`step_p95`] tells apart (need = paths
    /// − ⌊0.95·(paths − 1)⌋ largest values; 40 paths: the interpolation
    /// fraction f > 0, 41 paths: f = 0, where a + 0·∞ is NaN): need − 1
    /// values +∞ or NaN above small ones (p95 +∞ or NaN, known without the
    /// rest), need − 2 values +∞ (p95 finite, within the budget), need − 1
    /// values between the floor and the budget (within), need − 1 values
    /// over the budget before the crossing (undecided: summarised again
    /// with every value kept), a crossing whose step before is under the
    /// floor (undecided), a crossing at the first step (from te0), and te0
    /// over the budget (no crossing needed). Analytic (type-7 percentile
    /// of each step's values, [`percentile`]).
    #[test]
    fn floored_summary_equals_the_direct_form() {
        let mut model = model_with(&[(0, 1e-22)], 0.0, 0.0);
        let budget = 1.0;
        let n = 20;
        // Values below the floor (0.5) everywhere, growing to a crossing
        // at step 15 (k = 15) through values above the floor from step 11.
        let smooth = |p: usize, k: usize, np: usize| -> f64 {
            let spread = 1.0 + 0.01 * p as f64 / np as f64;
            if k < 11 {
                0.1 * spread
            } else {
                (0.6 + 0.1 * (k - 11) as f64) * spread
            }
        };
        type Edit = Box<dyn Fn(usize, usize, usize, &mut f64)>;
        // The last `count` paths of `np` at step `at` get the value `v`.
        let last = |at: usize, count: fn(usize) -> usize, v: f64| -> Edit {
            Box::new(move |p, k, np, x| {
                if k == at && p >= np - count(np) {
                    *x = v
                }
            })
        };
        let need_less_1: fn(usize) -> usize = |np| top_count(np) - 1;
        let need_less_2: fn(usize) -> usize = |np| top_count(np) - 2;
        // (what, edit of the value of path p at step k for np paths,
        // whether the floor decides it at 40 and at 41 paths, te0 over the
        // budget)
        let cases: Vec<(&str, Edit, [bool; 2], bool)> = vec![
            (
                "smooth crossing",
                Box::new(|_, _, _, _| {}),
                [true; 2],
                false,
            ),
            // p95 +∞ at 40 paths (a crossing whose step before is under
            // the floor), NaN at 41 (no crossing there).
            (
                "need - 1 infinite before the crossing",
                last(3, need_less_1, f64::INFINITY),
                [false, true],
                false,
            ),
            (
                "need - 1 infinite after the crossing",
                last(17, need_less_1, f64::INFINITY),
                [true; 2],
                false,
            ),
            (
                "need - 1 NaN after the crossing",
                last(17, need_less_1, f64::NAN),
                [true; 2],
                false,
            ),
            (
                "need - 2 infinite",
                last(7, need_less_2, -f64::INFINITY),
                [true; 2],
                false,
            ),
            (
                "need - 1 between floor and budget",
                last(4, need_less_1, 0.9),
                [true; 2],
                false,
            ),
            (
                "need - 1 over the budget before the crossing",
                last(4, need_less_1, -2.0),
                [false; 2],
                false,
            ),
            (
                "a jump over the budget from under the floor",
                Box::new(|_, k, _, v| {
                    if (11..15).contains(&k) {
                        *v = 0.2
                    }
                }),
                [false; 2],
                false,
            ),
            (
                "a crossing at the first step",
                Box::new(|_, _, _, v| *v += 1.5),
                [true; 2],
                false,
            ),
            (
                "te0 over the budget",
                last(4, need_less_1, 2.0),
                [true; 2],
                true,
            ),
        ];
        for np in [40, 41] {
            let h = (np - 1) as f64 * 0.95;
            assert_eq!(h.fract() == 0.0, np == 41, "f = 0 at 41 paths only");
            let settings = Settings {
                paths: np,
                steps: n,
                ..Settings::new(2000.0, budget)
            };
            let step = settings.span / n as f64;
            for (what, edit, floor_decides, te0_over) in &cases {
                model.te0 = if *te0_over { 1.5 } else { 0.2 };
                let mut te = vec![0.0; np * n];
                for p in 0..np {
                    for k in 1..=n {
                        let mut v = smooth(p, k, np);
                        edit(p, k, np, &mut v);
                        te[p * n + k - 1] = v;
                    }
                }
                let direct = summarise_direct(&model, &settings, &te, n, step);
                let floored = summarise_kept(&model, &settings, &te, n, step, true);
                assert_eq!(
                    floored.is_some(),
                    floor_decides[np - 40],
                    "{np} paths, {what}"
                );
                // Compared as printed (every f64 to the last bit; NaN,
                // which is not equal to itself, as NaN).
                let want = format!("{direct:?}");
                if let Some(f) = floored {
                    assert_eq!(format!("{f:?}"), want, "{np} paths, {what}");
                }
                let got = summarise(&model, &settings, &te, n, step).unwrap();
                assert_eq!(format!("{got:?}"), want, "{np} paths, {what}");
                if !*te0_over {
                    assert!(direct.holds_for.is_some(), "{np} paths, {what}: a crossing");
                }
            }
        }
    }

    /// Seeded Monte Carlo: predictions made together — the demo devices'
    /// kinds of model (WFM + FFM; all five terms; WFM + RWFM), two spans
    /// each, and one with another seed — are each bit for bit the
    /// prediction made alone (every term of every path has its own stream,
    /// so a device's draws do not depend on the others' terms); a job with
    /// refused settings gets its error and leaves the others alone.
    #[test]
    fn predictions_together_equal_each_alone() {
        let models = [
            model_with(&[(0, 2e-24), (-1, 6e-26)], 0.6, 0.0),
            model_with(&ALL_FIVE, 0.35, 1e-13),
            model_with(&[(0, 2e-22), (-2, 3e-32)], 0.3, 0.0),
        ];
        let spans: Vec<Settings> = [8.0 * 3600.0, 86_400.0]
            .iter()
            .map(|&span| Settings {
                paths: 61,
                steps: 128,
                ..Settings::new(span, 1.5e-6)
            })
            .collect();
        let other_seed = Settings {
            seed: 7,
            ..spans[0].clone()
        };
        let refused = Settings {
            paths: 1,
            ..spans[0].clone()
        };
        let mut jobs: Vec<(&HoldoverModel, &Settings)> = Vec::new();
        for m in &models {
            for s in &spans {
                jobs.push((m, s));
            }
        }
        jobs.push((&models[1], &other_seed));
        jobs.push((&models[0], &refused));
        let together = predict_many(&jobs);
        assert_eq!(together.len(), jobs.len());
        for (&(m, s), got) in jobs.iter().zip(&together) {
            match predict(m, s) {
                Ok(alone) => assert_eq!(got.as_ref().unwrap(), &alone),
                Err(e) => assert_eq!(got.as_ref().unwrap_err().to_string(), e.to_string()),
            }
        }
        assert!(together.last().unwrap().is_err());
        assert_eq!(
            predict_spans(&models[1], &spans).unwrap(),
            vec![
                predict(&models[1], &spans[0]).unwrap(),
                predict(&models[1], &spans[1]).unwrap()
            ]
        );
    }
}
