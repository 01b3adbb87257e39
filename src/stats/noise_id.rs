//! The dominant noise at one τ: the one identification every consumer uses.
//!
//! # One answer per record and τ
//!
//! [`dominant_noise`] (and [`NoiseIdentifier::at`], the same with the
//! per-record work shared between τ) answers "what dominates σ_y at
//! τ = m·τ0 in this record?" for the `stability` and `noise` commands, the
//! report, the EDF and interval of every estimator, the bias correction of
//! the total family, the `best` curve and the model fit. Its answer at a τ
//! depends only on the record and that τ — never on which other τ were
//! requested — so every command gives the same label, EDF, interval and
//! bias-corrected value at the same τ. The answer ([`NoiseAt`]) is either a
//! power law (α of S_y ∝ f^α, 2 … −2: WPM … RWFM) or `drift`.
//!
//! It is built in three steps:
//!
//! 1. **The power law at τ** ([`power_law_at`], below): the lag-1
//!    autocorrelation of Riley & Greenhall (2004), with the B1 ratio
//!    (Barnes 1969) and R(n) as the fallback for short series. It is run
//!    with up to two differences and the candidates α = 2 … −2, the five
//!    power laws of IEEE Std 1139 that the model fit and every estimator
//!    share, so that one answer serves them all. Steeper rises are drift
//!    (step 3), not a power law: allowing a third difference and α = −3,
//!    −4 made 20 % of seeded random-walk FM records (N = 4096) read as
//!    FWFM/RRFM at long τ, where the lag-1 statistic of thirty points
//!    scatters across the boundary. FWFM and RRFM can still be given
//!    (`--noise-type`) for the Hadamard family.
//! 2. **A consistency rule across τ on a fixed internal grid.** The
//!    dominant power law of a sum of power laws can only get redder as τ
//!    grows (σ²_α(τ) ∝ τ^(−α−1): a lower α gains on a higher one), while the
//!    estimate from a short decimated series scatters. The identification
//!    is therefore run on the record's own octave grid m = 1, 2, 4, … (the
//!    *internal* grid, the same whatever the user asked for), where each
//!    type is capped at the type of the octave below and a τ too long for
//!    any identification takes that type ("carried"). A requested m is
//!    identified on its own and capped at (or, when too long, carried from)
//!    the internal result at the largest octave point below it. So the rule
//!    only ever looks at the record and m.
//!
//!    A cap alone leans red: at long τ the decimated series is short, any
//!    random red reading is accepted while a white one is capped, and the
//!    mistake is passed on to every longer τ (seeded records, N = 4096:
//!    12–23 % of WPM … FFM records read redder than they are at T/τ = 8,
//!    which widened their intervals). So a type *redder* than the one below
//!    is taken only when it fits the statistics at τ better than the type
//!    below by at least [`REDDER_MARGIN`] = 4 squared standard errors (two
//!    standard errors of the deciding statistic); otherwise the type below
//!    is kept ("held", [`IdMethod::Held`]). The scores are those the
//!    identification itself uses: ((r1 − ρ_α)·√n)² for the lag-1 method,
//!    the B1 fallback's combined score below, and for WPM against FPM
//!    ((ln R̂ − ln R_α)/s)² with s = sqrt(8/terms) (`pm_scores`). A real
//!    change of type is still followed: white FM with random-walk FM
//!    crossing it at 16 τ0 reads RWFM at 8 and 16 times the crossing in
//!    over 90 % of seeded records (`tests/noise_id.rs`).
//! 3. **Drift.** A linear frequency drift D (per second) adds D²τ²/2 to the
//!    Allan variance (σ_y = |D|·τ/√2, NIST SP 1065 §5.2) and nothing to the
//!    Hadamard variance. With D the record's least-squares drift
//!    (`prepare::fit_drift_y` on the frequency of the record, gaps skipped)
//!    and the series decimated to τ, the label is `drift` when both hold:
//!    - *the Hadamard family is flat beneath it*: D²τ²/2 exceeds the upper
//!      end of the 95 % interval of the Hadamard variance at τ (the noise,
//!      which the Hadamard variance sees without the drift), and
//!    - *the Allan variance follows the drift*: D²τ²/2 plus that Hadamard
//!      variance lies inside the 95 % interval of the Allan variance at τ.
//!
//!    Both intervals are χ² intervals with the EDF of the non-overlapping
//!    estimator for the power law found at τ. Where the label is `drift` the estimators that
//!    see the drift (the Allan family, the total family but HTOT, Theo1 and
//!    TheoH) get no power-law EDF, no interval and no bias correction: their
//!    value there measures a deterministic term, |D|·τ/√2, not a random
//!    one (our interval rule for drift: none, and the drift rate is
//!    reported instead). The Hadamard family, which cancels a linear drift,
//!    keeps the EDF of the power law beneath ([`NoiseAt::alpha`]). After
//!    `--remove-drift linear` the record's D is zero and the label never
//!    appears. Drift's share grows with τ faster than any power law's, so,
//!    like the cap of step 2, drift found at a point of the internal octave
//!    grid holds at every longer τ (where the decimated series may be too
//!    short for the test itself).
//!
//!
//! # The power law at one τ: lag-1 autocorrelation (Riley & Greenhall 2004)
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

use crate::record::PhaseRecord;
use crate::stats::block_sums::BlockSums;
use crate::stats::interval::chi2_quantile;
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
/// A type redder than the one settled on the internal octave grid below is
/// taken only when it fits the statistics at τ better by at least this many
/// squared standard errors (module notes, step 2); otherwise the type below
/// is held.
pub const REDDER_MARGIN: f64 = 4.0;
/// Two-sided confidence of the intervals used by the drift test.
pub const DRIFT_TEST_CONFIDENCE: f64 = 0.95;
/// Most decimated points the drift test reads at one τ (a contiguous block
/// from the start of the record, like the lag-1 method's): at short τ,
/// where that is less than the record, drift is far from dominating and
/// 2^16 points already give the two variances to about 1 %.
pub const DRIFT_TEST_MAX_POINTS: usize = 1 << 16;

/// The estimator family whose reach the one identification uses: up to
/// two differences, α = 2 … −2 (module notes).
const UNIFIED: VarianceKind = VarianceKind::OverlappingAllan;

/// How a noise type was identified.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum IdMethod {
    /// Lag-1 autocorrelation of the decimated, differenced phase.
    Lag1,
    /// B1 bias ratio (with R(n) for WPM against FPM) on a short series.
    B1,
    /// Too few points at this τ for either: the type of the record's
    /// internal octave grid below this τ was carried over.
    Carried,
    /// Given by the user (`--noise-type`), not identified.
    Given,
    /// The series at this τ read redder than the type of the internal octave
    /// grid below it, but by less than [`REDDER_MARGIN`]: the type below was
    /// kept (module notes, step 2).
    Held,
}

impl IdMethod {
    /// The name used in tables and JSON (`lag1`, `b1`, `carried`, `given`).
    pub fn name(self) -> &'static str {
        match self {
            IdMethod::Lag1 => "lag1",
            IdMethod::B1 => "b1",
            IdMethod::Carried => "carried",
            IdMethod::Given => "given",
            IdMethod::Held => "held",
        }
    }
}

/// The power law identified at one τ by [`power_law_at`].
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

/// The label of the dominant process at a τ: a power law or drift.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoiseLabel {
    /// Power-law noise S_y ∝ f^α.
    PowerLaw(i32),
    /// Linear frequency drift: σ_y(τ) follows |D|·τ/√2 (see the module notes).
    Drift,
}

impl NoiseLabel {
    /// `WPM` … `RRFM`, or `drift`.
    pub fn name(self) -> &'static str {
        match self {
            NoiseLabel::PowerLaw(a) => crate::model::noise_label(a).unwrap_or("?"),
            NoiseLabel::Drift => DRIFT_LABEL,
        }
    }
}

/// The label of a τ where linear frequency drift dominates σ_y.
pub const DRIFT_LABEL: &str = "drift";

impl serde::Serialize for NoiseLabel {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// The drift test at one τ (module notes, step 3). Variances are of
/// fractional frequency (σ_y²).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct DriftTest {
    /// D, the record's least-squares linear frequency drift, per second.
    pub rate: f64,
    /// D²τ²/2, the drift's share of the Allan variance at τ.
    pub drift_var: f64,
    /// The non-overlapping Allan variance of the record decimated to τ.
    pub allan_var: f64,
    /// The non-overlapping Hadamard variance of the same series (the noise,
    /// without the drift).
    pub hadamard_var: f64,
    /// Upper end of the 95 % interval of `hadamard_var`.
    pub hadamard_upper: f64,
    /// Both conditions hold: the label at τ is `drift`.
    pub dominates: bool,
}

/// What the one identification says at one τ ([`dominant_noise`]).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct NoiseAt {
    /// Averaging factor m (τ = m·τ0).
    pub m: usize,
    /// τ in seconds.
    pub tau: f64,
    /// The dominant process: a power-law label or `drift`.
    pub noise: NoiseLabel,
    /// α of the power-law noise at τ — beneath the drift where `noise` is
    /// `drift` (what the Hadamard family sees there).
    pub alpha: i32,
    /// How α was found.
    pub method: IdMethod,
    /// The lag-1 autocorrelation behind α, when that method decided.
    pub r1: Option<f64>,
    /// True when the type identified at this τ was whiter than the type on
    /// the internal octave grid below it and was capped there.
    pub capped: bool,
    /// The drift test at τ; `None` when the record has no drift fit (or a
    /// type was given) or too few points at τ.
    pub drift: Option<DriftTest>,
}

impl NoiseAt {
    /// True when linear frequency drift dominates σ_y at this τ.
    pub fn is_drift(&self) -> bool {
        self.noise == NoiseLabel::Drift
    }

    /// A given power law at every τ (`--noise-type`): no identification and
    /// no drift test.
    pub fn given(alpha: i32, m: usize, tau0: f64) -> Self {
        NoiseAt {
            m,
            tau: m as f64 * tau0,
            noise: NoiseLabel::PowerLaw(alpha),
            alpha,
            method: IdMethod::Given,
            r1: None,
            capped: false,
            drift: None,
        }
    }
}

/// One row of a noise-per-τ table (the `noise` command's `points`): τ, m
/// and what [`dominant_noise`] says there, every field `null` where nothing
/// could be identified.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct NoiseRow {
    /// τ in seconds.
    pub tau: f64,
    /// Averaging factor m.
    pub m: usize,
    /// `drift` or a power-law label.
    pub noise: Option<NoiseLabel>,
    /// α of the power-law noise (beneath the drift where `noise` is `drift`).
    pub alpha: Option<i32>,
    /// How α was found.
    pub method: Option<IdMethod>,
    /// The lag-1 autocorrelation behind α.
    pub r1: Option<f64>,
    /// The type found at τ was capped at the type below it.
    pub capped: Option<bool>,
    /// The drift test at τ.
    pub drift: Option<DriftTest>,
}

impl NoiseRow {
    /// The row for factor m of a record sampled at τ0.
    pub fn new(m: usize, tau0: f64, id: Option<NoiseAt>) -> Self {
        NoiseRow {
            tau: m as f64 * tau0,
            m,
            noise: id.map(|i| i.noise),
            alpha: id.map(|i| i.alpha),
            method: id.map(|i| i.method),
            r1: id.and_then(|i| i.r1),
            capped: id.map(|i| i.capped),
            drift: id.and_then(|i| i.drift),
        }
    }
}

/// The dominant noise at τ = m·τ0 in the phase record `rec` (module notes):
/// the one identification behind every label, EDF, interval and bias
/// correction. `None` when no power law can be identified at τ, nor carried
/// from a shorter τ of the record (τ0 not positive, m = 0, or a record with
/// fewer than about five finite points).
///
/// ```
/// use tauwise::stats::noise_id::{dominant_noise, NoiseLabel};
/// use tauwise::PhaseRecord;
/// // A random walk of phase is white FM (α = 0).
/// let mut x = vec![0.0f64; 2000];
/// let mut s: u64 = 12345;
/// for i in 1..x.len() {
///     s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
///     let u = ((s >> 11) as f64 / (1u64 << 53) as f64) - 0.5;
///     x[i] = x[i - 1] + u * 1e-9;
/// }
/// let rec = PhaseRecord::new(x, 1.0).unwrap();
/// let id = dominant_noise(&rec, 4).unwrap();
/// assert_eq!(id.noise, NoiseLabel::PowerLaw(0));
/// assert_eq!(id.noise.name(), "WFM");
/// ```
pub fn dominant_noise(rec: &PhaseRecord, m: usize) -> Option<NoiseAt> {
    NoiseIdentifier::new(rec).at(m)
}

/// [`dominant_noise`] for many τ of one record: the record's drift fit, its
/// internal octave grid and the window sums of R(n) are computed once and
/// shared. `Sync`, so τ can be handled in parallel; every τ gets exactly
/// the answer [`dominant_noise`] gives.
#[derive(Debug)]
pub struct NoiseIdentifier<'a> {
    raw: PowerLawIdentifier<'a>,
    rule: CrossTauRule,
    /// The record's least-squares linear frequency drift (per second).
    drift_rate: OnceLock<Option<f64>>,
    /// The settled answer at m = 2^k, k = 0, 1, … (module notes, steps 2
    /// and 3).
    octaves: OnceLock<Vec<Option<NoiseAt>>>,
}

/// The rule across τ of step 2 (module notes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CrossTauRule {
    /// Cap each type at the type of the internal octave grid below it, and
    /// carry that type to a τ too long for any identification (the
    /// default).
    CapAtShorterTau,
    /// Each τ on its own: no cap, and no type where none can be identified
    /// (for comparison).
    None,
}

impl<'a> NoiseIdentifier<'a> {
    /// Prepare to identify the noise of `rec` at any τ.
    pub fn new(rec: &'a PhaseRecord) -> Self {
        Self::with_rule(rec, CrossTauRule::CapAtShorterTau)
    }

    /// [`NoiseIdentifier::new`] with a chosen rule across τ.
    pub fn with_rule(rec: &'a PhaseRecord, rule: CrossTauRule) -> Self {
        Self {
            raw: PowerLawIdentifier::new(&rec.x, rec.tau0, UNIFIED),
            rule,
            drift_rate: OnceLock::new(),
            octaves: OnceLock::new(),
        }
    }

    /// The dominant noise at τ = m·τ0 (as [`dominant_noise`]).
    pub fn at(&self, m: usize) -> Option<NoiseAt> {
        let tau0 = self.raw.tau0;
        if !(tau0.is_finite() && tau0 > 0.0) || m == 0 {
            return None;
        }
        if self.rule == CrossTauRule::None {
            return self.answer(m, None);
        }
        // A point of the internal grid has its answer there already.
        if m.is_power_of_two() {
            let k = m.trailing_zeros() as usize;
            if let Some(a) = self.octaves().get(k) {
                return *a;
            }
        }
        // The settled answer at the largest octave point strictly below m.
        let below = if m > 1 {
            let k = usize::BITS - 1 - (m - 1).leading_zeros(); // 2^k < m ≤ 2^(k+1)
            self.octaves().get(k as usize).copied().flatten()
        } else {
            None
        };
        self.answer(m, below.as_ref())
    }

    /// Steps 1–3 at m given the settled answer below it on the internal
    /// grid (module notes).
    fn answer(&self, m: usize, below: Option<&NoiseAt>) -> Option<NoiseAt> {
        let tau0 = self.raw.tau0;
        let below_id = below.map(|b| NoiseId {
            alpha: b.alpha,
            method: b.method,
            r1: b.r1,
        });
        let (id, capped) = settle(self.raw.evidence(m), below_id)?;
        let drift = self.drift_test(m, id.alpha);
        // Drift's share D²τ²/2 grows faster with τ than any power law's, so
        // once it dominates on the internal grid it dominates beyond.
        let drift_below = below.is_some_and(|b| b.is_drift());
        let noise = if drift_below || drift.is_some_and(|d| d.dominates) {
            NoiseLabel::Drift
        } else {
            NoiseLabel::PowerLaw(id.alpha)
        };
        Some(NoiseAt {
            m,
            tau: m as f64 * tau0,
            noise,
            alpha: id.alpha,
            method: id.method,
            r1: id.r1,
            capped,
            drift,
        })
    }

    /// The record's least-squares linear frequency drift per second, if the
    /// record has one (at least two finite frequency values).
    pub fn drift_rate(&self) -> Option<f64> {
        *self.drift_rate.get_or_init(|| {
            // Least squares of y_i = (x_{i+1} − x_i)/τ0 on t_i = (i + ½)τ0
            // over the finite y (the fit of `prepare::fit_drift_y`, linear),
            // in two passes over the phase, with no copy of the record.
            let x = self.raw.x;
            let tau0 = self.raw.tau0;
            let ys = || {
                x.windows(2)
                    .enumerate()
                    .map(move |(i, w)| ((i as f64 + 0.5) * tau0, (w[1] - w[0]) / tau0))
                    .filter(|(_, y)| y.is_finite())
            };
            let (mut n, mut st, mut sy) = (0usize, 0.0, 0.0);
            for (t, y) in ys() {
                n += 1;
                st += t;
                sy += y;
            }
            if n < 2 {
                return None;
            }
            let (tm, ym) = (st / n as f64, sy / n as f64);
            let (mut sty, mut stt) = (0.0, 0.0);
            for (t, y) in ys() {
                sty += (t - tm) * (y - ym);
                stt += (t - tm) * (t - tm);
            }
            let rate = sty / stt;
            (stt > 0.0 && rate.is_finite()).then_some(rate)
        })
    }

    /// The settled answers on the internal octave grid m = 2^k (module
    /// notes, steps 2 and 3), each from the one below it.
    fn octaves(&self) -> &[Option<NoiseAt>] {
        self.octaves.get_or_init(|| {
            let n = self.raw.x.len();
            let mut out: Vec<Option<NoiseAt>> = Vec::new();
            let mut previous: Option<NoiseAt> = None;
            let mut m = 1usize;
            while m <= n.max(1) {
                let here = self.answer(m, previous.as_ref());
                out.push(here);
                if here.is_some() {
                    previous = here;
                }
                match m.checked_mul(2) {
                    Some(v) => m = v,
                    None => break,
                }
            }
            out
        })
    }

    /// The drift test at m for the power law α found there (module notes,
    /// step 3); `None` without a drift fit or with fewer than two third
    /// differences at τ.
    fn drift_test(&self, m: usize, alpha: i32) -> Option<DriftTest> {
        let rate = self.drift_rate()?;
        let tau = m as f64 * self.raw.tau0;
        let x = self.raw.x;
        let (a_sum, a_n) = strided_mean_square(x, m, &[1.0, -2.0, 1.0]);
        let (h_sum, h_n) = strided_mean_square(x, m, &[1.0, -3.0, 3.0, -1.0]);
        if h_n < 2 || a_n < 2 {
            return None;
        }
        let allan_var = a_sum / (a_n as f64 * 2.0 * tau * tau);
        let hadamard_var = h_sum / (h_n as f64 * 6.0 * tau * tau);
        let drift_var = 0.5 * rate * rate * tau * tau;
        let p_lo = 0.5 * (1.0 - DRIFT_TEST_CONFIDENCE);
        let p_hi = 1.0 - p_lo;
        // EDF of the non-overlapping estimators on the gap-free record with
        // the same number of terms.
        let nu_h = edf::edf(
            VarianceKind::Hadamard,
            alpha,
            m,
            VarianceKind::Hadamard.equivalent_points(m, h_n),
        );
        let nu_a = edf::edf(
            VarianceKind::Allan,
            alpha,
            m,
            VarianceKind::Allan.equivalent_points(m, a_n),
        );
        let upper = |v: f64, nu: Option<f64>, p: f64| {
            nu.and_then(|nu| chi2_quantile(p, nu).ok().map(|q| v * nu / q))
        };
        let hadamard_upper = upper(hadamard_var, nu_h, p_lo).unwrap_or(f64::INFINITY);
        let allan_lo = upper(allan_var, nu_a, p_hi).unwrap_or(0.0);
        let allan_hi = upper(allan_var, nu_a, p_lo).unwrap_or(f64::INFINITY);
        let both = drift_var + hadamard_var;
        let dominates = drift_var.is_finite()
            && drift_var > hadamard_upper
            && allan_lo <= both
            && both <= allan_hi;
        Some(DriftTest {
            rate,
            drift_var,
            allan_var,
            hadamard_var,
            hadamard_upper,
            dominates,
        })
    }
}

/// Step 2 at one τ: the type identified there (`own`), capped at the
/// settled type below it (`below`) when whiter, kept at that type when
/// redder by less than [`REDDER_MARGIN`] (`held`), or that type carried
/// when nothing could be identified; with a flag for a cap. `None` when
/// there is neither.
fn settle(own: Option<Evidence>, below: Option<NoiseId>) -> Option<(NoiseId, bool)> {
    match (own, below) {
        (Some(o), Some(b)) if o.id.alpha > b.alpha => Some((
            NoiseId {
                alpha: b.alpha,
                ..o.id
            },
            true,
        )),
        (Some(o), Some(b)) if o.id.alpha < b.alpha && o.margin_over(b.alpha) < REDDER_MARGIN => {
            Some((
                NoiseId {
                    alpha: b.alpha,
                    method: IdMethod::Held,
                    r1: o.id.r1,
                },
                false,
            ))
        }
        (Some(o), _) => Some((o.id, false)),
        (None, Some(b)) => Some((
            NoiseId {
                alpha: b.alpha,
                method: IdMethod::Carried,
                r1: None,
            },
            false,
        )),
        (None, None) => None,
    }
}

/// Σ_i (Σ_k c_k z_{i+k})² over the series z_j = x_{jm} (the record
/// decimated to τ, at most [`DRIFT_TEST_MAX_POINTS`] of it), every i whose
/// window is finite, and the count of those i.
fn strided_mean_square(x: &[f64], m: usize, c: &[f64]) -> (f64, usize) {
    let len = x.len().div_ceil(m).min(DRIFT_TEST_MAX_POINTS);
    let (mut s, mut n) = (0.0, 0usize);
    for i in 0..len.saturating_sub(c.len() - 1) {
        let v: f64 = c
            .iter()
            .enumerate()
            .map(|(k, ck)| ck * x[(i + k) * m])
            .sum();
        if v.is_finite() {
            s += v * v;
            n += 1;
        }
    }
    (s, n)
}

/// The power law at τ = m·τ0 in the phase record `x` (seconds, NaN = gap)
/// for the estimator family `kind`, by the lag-1 autocorrelation or the B1
/// fallback (see the module notes): the building block of
/// [`dominant_noise`], at one τ on its own, with no drift test and no rule
/// across τ. Consumers use [`dominant_noise`].
///
/// Returns `None` when τ0 is not positive, m = 0, or too few finite points
/// remain at τ even for the B1 ratio ([`MIN_B1_POINTS`] frequency averages).
///
/// ```
/// use tauwise::stats::noise_id::{power_law_at, IdMethod};
/// use tauwise::stats::VarianceKind;
/// // A random walk of phase is white FM (α = 0).
/// let mut x = vec![0.0f64; 2000];
/// let mut s: u64 = 12345;
/// for i in 1..x.len() {
///     s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
///     let u = ((s >> 11) as f64 / (1u64 << 53) as f64) - 0.5;
///     x[i] = x[i - 1] + u * 1e-9;
/// }
/// let id = power_law_at(&x, 1.0, 4, VarianceKind::OverlappingAllan).unwrap();
/// assert_eq!(id.alpha, 0);
/// assert_eq!(id.method, IdMethod::Lag1);
/// ```
pub fn power_law_at(x: &[f64], tau0: f64, m: usize, kind: VarianceKind) -> Option<NoiseId> {
    PowerLawIdentifier::new(x, tau0, kind).at(m)
}

/// What one identification rests on (module notes, step 2): for every
/// candidate α of the family's range, its squared standardised distance
/// from the measured statistics (lag-1: ((r1 − ρ_α)·√n)²; B1: the score
/// of the short-series fallback), and the same for WPM and FPM from R̂(n).
#[derive(Debug, Clone)]
struct Evidence {
    id: NoiseId,
    /// (α, score) for each candidate.
    score: Vec<(i32, f64)>,
    /// Scores of WPM and FPM from R̂(n) ([`pm_scores`]), when measured.
    pm: Option<[f64; 2]>,
}

impl Evidence {
    fn score_of(&self, alpha: i32) -> f64 {
        self.score
            .iter()
            .find(|s| s.0 == alpha)
            .map_or(f64::INFINITY, |s| s.1)
    }

    /// How much better the type found here fits than `below` does, in
    /// squared standard errors (positive: better). WPM against FPM is
    /// judged by R̂(n) when it was measured.
    fn margin_over(&self, below: i32) -> f64 {
        let own = self.id.alpha;
        if let (Some(p), true) = (self.pm, own >= 1 && below >= 1) {
            return p[(2 - below) as usize] - p[(2 - own) as usize];
        }
        self.score_of(below) - self.score_of(own)
    }
}

/// [`power_law_at`] at many τ of one record, with the window sums of R(n)
/// shared between τ (built on first use, [`BlockSums`]). `Sync`.
#[derive(Debug)]
pub struct PowerLawIdentifier<'a> {
    x: &'a [f64],
    tau0: f64,
    kind: VarianceKind,
    sums: OnceLock<BlockSums>,
}

impl<'a> PowerLawIdentifier<'a> {
    /// Prepare to identify the power law of phase record `x` (seconds, NaN =
    /// gap) for estimator family `kind`.
    pub fn new(x: &'a [f64], tau0: f64, kind: VarianceKind) -> Self {
        Self {
            x,
            tau0,
            kind,
            sums: OnceLock::new(),
        }
    }

    /// The power law at τ = m·τ0 (as [`power_law_at`]).
    pub fn at(&self, m: usize) -> Option<NoiseId> {
        self.evidence(m).map(|e| e.id)
    }

    /// [`PowerLawIdentifier::at`] with the evidence behind it: how far each
    /// candidate lies from what was measured (module notes, step 2).
    fn evidence(&self, m: usize) -> Option<Evidence> {
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

fn lag1_id(id: &PowerLawIdentifier, m: usize) -> Option<Evidence> {
    let kind = id.kind;
    let z = decimate(id.x, m, MAX_LAG1_POINTS);
    let n = z.iter().filter(|v| v.is_finite()).count();
    let (d, r1) = lag1_loop(z, kind.difference_order())?;
    let mut alpha = alpha_from_r1(r1, m, d, kind);
    // r1 of n points scatters by about 1/√n about its expectation.
    let s_r = 1.0 / (n.saturating_sub(d).max(1) as f64).sqrt();
    let score = kind
        .alpha_range()
        .map(|a| {
            let rho = edf::decimated_lag1(a, m, d).unwrap_or(1.0);
            (a, ((r1 - rho) / s_r).powi(2))
        })
        .collect();
    let pm = pm_scores(id, m);
    if alpha >= 1 {
        if let Some(p) = pm {
            alpha = pm_choice(p);
        }
    }
    Some(Evidence {
        id: NoiseId {
            alpha,
            method: IdMethod::Lag1,
            r1: Some(r1),
        },
        score,
        pm,
    })
}

/// WPM (2) or FPM (1), whichever of the [`pm_scores`] is smaller.
fn pm_choice(p: [f64; 2]) -> i32 {
    if p[0] <= p[1] {
        2
    } else {
        1
    }
}

/// The squared standardised distances of the measured ln R̂(n) (R = MVAR/AVAR
/// at n = m) from ln R(n) of WPM and of FPM ([`bias::r_ratio`]), or `None`
/// when m < [`MIN_R_FACTOR`] or the record has no usable term. The smaller
/// one decides between the two (their boundary is the geometric mean of the
/// two R(n)). The spread of ln R̂ over `count` terms is taken as
/// sqrt(8/count) (our approximation: numerator and denominator each a sum
/// of `count` second differences at stride m, whose squares carry about
/// count/2 degrees of freedom — white PM: Σρ² = 1 + 2(4/9 + 1/36) ≈ 1.94 —
/// and nearly independent).
fn pm_scores(id: &PowerLawIdentifier, m: usize) -> Option<[f64; 2]> {
    if m < MIN_R_FACTOR {
        return None;
    }
    let (r, count) = measured_r(id, m)?;
    let s = (8.0 / count as f64).sqrt();
    let z = |a: i32| bias::r_ratio(a, m).map(|ra| ((r.ln() - ra.ln()) / s).powi(2));
    Some([z(2)?, z(1)?])
}

/// R̂(m) = [mean (S₃ − 2S₂ + S₁)²/m²] / [mean (x_{j+2m} − 2x_{j+m} + x_j)²]
/// over start points j = 0, m, 2m, …, S_k the sums of x over the k-th block
/// of m samples from j; at most [`MAX_R_BLOCKS`] blocks. With the number of
/// terms.
fn measured_r(id: &PowerLawIdentifier, m: usize) -> Option<(f64, usize)> {
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
    (count > 0 && den > 0.0 && num > 0.0).then(|| (num / den, count))
}

fn b1_id(id: &PowerLawIdentifier, m: usize) -> Option<Evidence> {
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
    let mut scores = Vec::new();
    for alpha in kind.alpha_range() {
        let mu = bias::mu_of_alpha(alpha);
        let mut score = ((observed - bias::b1(n, mu).ln()) / s_b).powi(2);
        if let Some((d, r1)) = lag {
            // A d-th difference that is not stationary for this α behaves
            // like a random walk: r1 near 1.
            let rho = edf::decimated_lag1(alpha, m, d).unwrap_or(1.0);
            score += ((r1 - rho) / s_r).powi(2);
        }
        scores.push((alpha, score));
        if best.is_none() || best.is_some_and(|(bs, _)| score < bs) {
            best = Some((score, alpha));
        }
    }
    let (_, mut alpha) = best?;
    let pm = pm_scores(id, m);
    if alpha >= 1 {
        if let Some(p) = pm {
            alpha = pm_choice(p);
        }
    }
    Some(Evidence {
        id: NoiseId {
            alpha,
            method: IdMethod::B1,
            r1: lag.map(|l| l.1),
        },
        score: scores,
        pm,
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
        let id = PowerLawIdentifier::new(&x, 1.0, VarianceKind::Allan);
        assert!((measured_r(&id, 8).unwrap().0 - 1.0).abs() < 1e-12);
        // Windows beyond the direct length go through the block table.
        let long: Vec<f64> = (0..40_000).map(|i| (i as f64 * 1e-3).powi(2)).collect();
        let id = PowerLawIdentifier::new(&long, 1.0, VarianceKind::Allan);
        assert!((measured_r(&id, 1000).unwrap().0 - 1.0).abs() < 1e-9);
        let ramp: Vec<f64> = (0..400).map(|i| i as f64).collect();
        let id = PowerLawIdentifier::new(&ramp, 1.0, VarianceKind::Allan);
        assert_eq!(measured_r(&id, 8), None);
    }

    #[test]
    fn too_short() {
        assert_eq!(
            power_law_at(&[0.0, 1.0, 2.0], 1.0, 1, VarianceKind::Allan),
            None
        );
        assert_eq!(power_law_at(&[0.0; 100], 0.0, 1, VarianceKind::Allan), None);
        assert_eq!(power_law_at(&[0.0; 100], 1.0, 0, VarianceKind::Allan), None);
    }
}
