//! The stability of each clock from pairwise comparisons: the N-cornered
//! hat.
//!
//! When no reference is better than the clocks under test, each pair (i, j)
//! is measured against each other and the pair variance σ²_ij(τ) of the
//! phase difference x_i − x_j is estimated. For clocks whose noises are
//! independent, σ²_ij = σ²_i + σ²_j, and the clocks' own variances follow:
//!
//! - **three clocks** (Gray & Allan 1974, the "three-cornered hat"):
//!   σ²_A = (σ²_AB + σ²_AC − σ²_BC)/2, and likewise for B and C
//!   ([`three_cornered_hat`], used exactly when three clocks have three
//!   pairs);
//! - **N > 3 clocks, or more pairs than clocks** (Barnes): the ordinary
//!   least-squares solution of σ²_ij = σ²_i + σ²_j over every measured pair,
//!   by Householder QR ([`least_squares_weights`]; it equals the
//!   three-cornered hat for three clocks);
//! - **correlated clocks** (Premoli & Tavella 1993): with the pair records
//!   simultaneous and every clock compared with one reference clock, the
//!   full covariance matrix of the differences is estimated and the clocks'
//!   covariance matrix chosen positive definite with the least total
//!   correlation ([`covariance`]).
//!
//! **Intervals.** Least squares: each separated variance is a linear
//! combination σ̂²_i = Σ_k w_ik σ̂²_k of the pair variances. Its variance is
//! propagated from the pair estimates' own (Var σ̂²_k = 2σ⁴_k/ν_k, ν_k the
//! pair's EDF from [`crate::stats`]) and their covariances: two pairs that
//! share clock X, measured over the same span, covary by 2σ⁴_X/ν_X — for
//! Gaussian noise Cov(xᵀMx, yᵀMy) = 2 tr(MΣ_xyMΣ_yx) and the shared part
//! of the two differences is ±x_X (analytic), ν_X the EDF of the pair
//! dominated by X. The interval is then the χ² interval on the
//! Satterthwaite (1946) degrees of freedom ν_i = 2σ̂⁴_i / Var σ̂²_i. The
//! covariance form takes its interval from a seeded Monte Carlo of the same
//! separation ([`covariance`]).
//!
//! **Below resolution.** A separated variance that is not positive is never
//! clipped, hidden or turned into NaN: the point is marked below resolution
//! and carries the upper bound the data allow — the smaller of
//! √(max(σ̂²_i, 0) + z·sd) (z the normal quantile of the upper end of the
//! two-sided interval, sd the propagated standard deviation) and the
//! smallest pair deviation that contains the clock (σ²_i ≤ σ²_ij for
//! independent clocks).
//!
//! An engineering estimate: the governing standard, the equipment maker's
//! data and local acceptance procedures decide.

use crate::deviation::{Curve, Estimate, Estimator, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stability::{analyse, Request as StabilityRequest};
use crate::tau::TauGrid;
use nalgebra::DMatrix;

pub mod covariance;

/// Monte Carlo draws of the covariance form's intervals (the command
/// line's and the Python package's).
pub const DEFAULT_DRAWS: usize = 400;

/// The estimators whose variance is a quadratic form in the phase with no
/// bias correction, for which the separation's algebra holds as written.
pub const SUPPORTED: &[Estimator] = &[
    Estimator::Adev,
    Estimator::Oadev,
    Estimator::Mdev,
    Estimator::Tdev,
    Estimator::Hdev,
    Estimator::Ohdev,
];

/// Gray & Allan (1974): the three clocks' variances from the three pair
/// variances, σ²_A = (σ²_AB + σ²_AC − σ²_BC)/2, σ²_B = (σ²_AB + σ²_BC −
/// σ²_AC)/2, σ²_C = (σ²_AC + σ²_BC − σ²_AB)/2. A result may be negative
/// (below the resolution of the data); it is returned as computed.
///
/// ```
/// use tauwise::separate::three_cornered_hat;
/// let [a, b, c] = three_cornered_hat(5.0, 10.0, 13.0);
/// assert_eq!((a, b, c), (1.0, 4.0, 9.0));
/// ```
pub fn three_cornered_hat(ab: f64, ac: f64, bc: f64) -> [f64; 3] {
    [
        (ab + ac - bc) / 2.0,
        (ab + bc - ac) / 2.0,
        (ac + bc - ab) / 2.0,
    ]
}

/// Barnes' least squares for N clocks: the weights W (N × P) with
/// σ̂² = W·v the least-squares solution of σ²_a + σ²_b = v_k over the pairs
/// `pairs[k] = (a, b)`, W = R⁻¹Qᵀ from the Householder QR of the design
/// matrix (nalgebra). Fails, naming why, when the pairs do not determine
/// every clock (fewer pairs than clocks, a clock in no pair, or a group of
/// clocks joined only by an even loop — a bipartite comparison graph).
pub fn least_squares_weights(n_clocks: usize, pairs: &[(usize, usize)]) -> Result<DMatrix<f64>> {
    let p = pairs.len();
    if n_clocks < 3 {
        return Err(Error::invalid(format!(
            "separating clocks needs at least three clocks, got {n_clocks}"
        )));
    }
    if p < n_clocks {
        return Err(Error::invalid(format!(
            "{p} pair(s) cannot separate {n_clocks} clocks: give at least one pair per clock \
             (three clocks: A,B A,C B,C)"
        )));
    }
    let mut a = DMatrix::<f64>::zeros(p, n_clocks);
    for (k, &(i, j)) in pairs.iter().enumerate() {
        if i == j || i >= n_clocks || j >= n_clocks {
            return Err(Error::invalid(format!(
                "pair {} names clock {i} and {j}: expected two different clocks",
                k + 1
            )));
        }
        a[(k, i)] = 1.0;
        a[(k, j)] = 1.0;
    }
    let qr = a.qr();
    let r = qr.r();
    let top = (0..n_clocks).map(|i| r[(i, i)].abs()).fold(0.0, f64::max);
    if (0..n_clocks).any(|i| r[(i, i)].abs() <= 1e-9 * top.max(1.0)) {
        return Err(Error::invalid(
            "the pairs do not determine every clock's variance: each group of connected clocks \
             needs a loop through an odd number of clocks (e.g. A,B B,C A,C); an even loop \
             (A,B B,C C,D D,A) leaves one combination free",
        ));
    }
    let qt = qr.q().transpose();
    let w = r
        .solve_upper_triangular(&qt)
        .ok_or_else(|| Error::invalid("the pair design matrix is singular"))?;
    Ok(w)
}

/// How the clocks are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// Independent clocks: the three-cornered hat (Gray & Allan 1974), or
    /// Barnes' least squares for more pairs or clocks.
    Independent,
    /// Correlated clocks: the covariance-aware form (Premoli & Tavella
    /// 1993) on simultaneous records with a reference clock in every pair.
    Covariance,
}

impl std::str::FromStr for Method {
    type Err = String;
    /// `independent` or `covariance` (the command line's `--method` and the
    /// DUT file's `separate.method`).
    fn from_str(text: &str) -> std::result::Result<Self, String> {
        match text.trim() {
            "independent" => Ok(Method::Independent),
            "covariance" => Ok(Method::Covariance),
            other => Err(format!("expected independent or covariance, got '{other}'")),
        }
    }
}

/// When the pair records were taken: `simultaneous` (true: all pairs over
/// the same span) or `separate` (false: each pair in its own session); the
/// command line's `--sessions` and the DUT file's `separate.sessions`.
pub fn simultaneous_sessions(text: &str) -> std::result::Result<bool, String> {
    match text.trim() {
        "simultaneous" => Ok(true),
        "separate" => Ok(false),
        other => Err(format!("expected simultaneous or separate, got '{other}'")),
    }
}

impl Method {
    /// The name on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Method::Independent => "independent",
            Method::Covariance => "covariance",
        }
    }
}

/// One pair record: the phase difference x_a − x_b of two named clocks.
#[derive(Debug, Clone)]
pub struct PairRecord {
    /// The first clock.
    pub a: String,
    /// The second clock.
    pub b: String,
    /// Where the record came from (named in errors).
    pub source: String,
    /// The phase difference, seconds.
    pub record: PhaseRecord,
    /// The time of the first sample (s), when the file has stamps.
    pub start: Option<f64>,
}

/// Bring the pair records onto one time grid: with stamps, each record is
/// cut to the span all of them cover (their τ0 must agree within 1e-9 and
/// their starts differ by whole τ0 within a tenth of τ0); without stamps
/// (any record), the records must have the same length and τ0. Errors name
/// the files.
pub fn align(mut pairs: Vec<PairRecord>) -> Result<Vec<PairRecord>> {
    let Some(first) = pairs.first() else {
        return Err(Error::invalid("no pair records given"));
    };
    let tau0 = first.record.tau0;
    for p in &pairs {
        if ((p.record.tau0 - tau0) / tau0).abs() > 1e-9 {
            return Err(Error::invalid(format!(
                "{}: τ0 {} s differs from τ0 {} s of {}: the pair records must share one sampling interval",
                p.source, p.record.tau0, tau0, first.source
            )));
        }
    }
    if pairs.iter().any(|p| p.start.is_none()) {
        let n = first.record.len();
        for p in &pairs {
            if p.record.len() != n {
                return Err(Error::invalid(format!(
                    "{}: {} points, but {} has {n}: pair records without time stamps must have \
                     the same length (give files with a time column to align them on their stamps)",
                    p.source,
                    p.record.len(),
                    first.source
                )));
            }
        }
        return Ok(pairs);
    }
    let t0 = first.start.unwrap_or(0.0);
    let mut offs = Vec::with_capacity(pairs.len());
    for p in &pairs {
        let d = (p.start.unwrap_or(0.0) - t0) / tau0;
        let k = d.round();
        if (d - k).abs() > 0.1 {
            return Err(Error::invalid(format!(
                "{}: its first stamp lies {:.3} τ0 off the grid of {}: the records are not sampled \
                 at the same instants",
                p.source,
                d - k,
                first.source
            )));
        }
        offs.push(k as i64);
    }
    let start = *offs.iter().max().unwrap_or(&0);
    let end = pairs
        .iter()
        .zip(&offs)
        .map(|(p, &o)| o + p.record.len() as i64)
        .min()
        .unwrap_or(0);
    if end - start < 3 {
        return Err(Error::invalid(format!(
            "the pair records do not overlap in time (common span {} samples): {}",
            (end - start).max(0),
            pairs
                .iter()
                .map(|p| p.source.clone())
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    for (p, &o) in pairs.iter_mut().zip(&offs) {
        let a = (start - o) as usize;
        let b = (end - o) as usize;
        let x = p.record.x[a..b].to_vec();
        p.record = PhaseRecord::new(x, tau0)?;
        p.start = Some(t0 + start as f64 * tau0);
    }
    Ok(pairs)
}

/// What to compute.
#[derive(Debug, Clone)]
pub struct Request {
    /// The estimator (one of [`SUPPORTED`]).
    pub estimator: Estimator,
    /// The τ grid.
    pub grid: TauGrid,
    /// Two-sided confidence of the intervals.
    pub confidence: f64,
    /// How to separate.
    pub method: Method,
    /// Seed of the Monte Carlo of the covariance form.
    pub seed: u64,
    /// Monte Carlo draws of the covariance form.
    pub draws: usize,
    /// The pair records were taken at the same time (one realisation of
    /// each clock's noise in every pair that has it), so pairs sharing a
    /// clock covary; false for pairs measured in separate sessions.
    pub simultaneous: bool,
}

/// Whether a separated variance is resolved.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Resolution {
    /// Positive: the point's `dev` is √σ̂².
    Resolved,
    /// Not positive: the point's `dev` and `hi` are the upper bound the data
    /// allow, `lo` is null.
    Below,
}

/// One τ of a clock: the [`Point`] of a `stability` curve (for a point
/// below resolution, `dev` = `hi` = the bound and `lo` null) with what the
/// separation adds.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ClockPoint {
    /// The point (`alpha`/`noise`: those identified on the pair dominated by
    /// this clock).
    #[serde(flatten)]
    pub point: Point,
    /// The separated variance σ̂²_i as computed (may be negative).
    pub variance: f64,
    /// The propagated standard deviation of σ̂²_i, when known.
    pub variance_sd: Option<f64>,
    /// Resolved, or below resolution.
    pub resolution: Resolution,
}

/// One clock's separated curve, `{"name","estimator","origin":"separated",
/// "method","points"}`.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ClockCurve {
    /// The estimator's name.
    pub name: &'static str,
    /// The estimator.
    pub estimator: Estimator,
    /// Always `separated`.
    pub origin: &'static str,
    /// The method.
    pub method: Method,
    /// How the intervals were made: `edf-propagated` or `monte-carlo`.
    pub interval: &'static str,
    /// The points, increasing τ.
    pub points: Vec<ClockPoint>,
}

/// One clock and its curves.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Clock {
    /// The clock's name.
    pub name: String,
    /// Its separated curves (one, for the requested estimator).
    pub curves: Vec<ClockCurve>,
}

/// One pair and its measured curve.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Pair {
    /// First clock.
    pub a: String,
    /// Second clock.
    pub b: String,
    /// The record's source.
    pub path: String,
    /// The pair's σ(τ) curve with its statistics (as `stability` gives it).
    pub curve: Curve,
}

/// The separation.
#[derive(Debug, Clone, PartialEq)]
pub struct Separation {
    /// The clocks, in order of first appearance in the pairs.
    pub clocks: Vec<Clock>,
    /// The pairs.
    pub pairs: Vec<Pair>,
    /// The method used.
    pub method: Method,
    /// The reference clock of the covariance form.
    pub reference: Option<String>,
    /// Samples of each aligned record.
    pub points: usize,
    /// The pair records were simultaneous ([`Request::simultaneous`]).
    pub simultaneous: bool,
}

/// An estimator by name (`--dev`), refused with the list of [`SUPPORTED`]
/// ones unless the separation supports it.
pub fn estimator_named(s: &str) -> std::result::Result<Estimator, crate::units::UnitError> {
    let bad = |reason: String| crate::units::UnitError::Invalid {
        text: s.to_string(),
        reason,
    };
    let e = Estimator::from_name(s).map_err(|e| bad(e.to_string()))?;
    if !crate::separate::SUPPORTED.contains(&e) {
        return Err(bad(format!(
            "'{s}' cannot be separated: expected one of {} (plain variances, quadratic in the phase)",
            Estimator::names(crate::separate::SUPPORTED)
        )));
    }
    Ok(e)
}

/// Separate the clocks of the aligned pair records (see [`align`]): each
/// pair's curve from [`crate::stability::analyse`] (so a pair curve equals
/// `stability` on that record), then, at every τ all pairs have, the
/// clocks' variances by the requested method with their intervals (module
/// notes).
pub fn separate(pairs: &[PairRecord], req: &Request) -> Result<Separation> {
    if !SUPPORTED.contains(&req.estimator) {
        return Err(Error::invalid(format!(
            "separate works with {} (plain variances, quadratic in the phase); {} is not one",
            Estimator::names(SUPPORTED),
            req.estimator
        )));
    }
    crate::stats::interval::check_confidence(req.confidence)?;
    if req.method == Method::Covariance && !req.simultaneous {
        return Err(Error::invalid(
            "the covariance form needs simultaneous pair records (the covariances between \
             pairs come from one realisation of each clock)",
        ));
    }
    let mut names: Vec<String> = Vec::new();
    let mut idx = Vec::new();
    for p in pairs {
        let mut id = |n: &str| match names.iter().position(|m| m == n) {
            Some(i) => i,
            None => {
                names.push(n.to_string());
                names.len() - 1
            }
        };
        let (i, j) = (id(&p.a), id(&p.b));
        if i == j {
            return Err(Error::invalid(format!(
                "{}: the pair names clock {} twice",
                p.source, p.a
            )));
        }
        if idx
            .iter()
            .any(|&(a, b): &(usize, usize)| (a, b) == (i, j) || (a, b) == (j, i))
        {
            return Err(Error::invalid(format!(
                "{}: the pair {},{} is given twice",
                p.source, p.a, p.b
            )));
        }
        idx.push((i, j));
    }
    let n = names.len();
    let len = pairs.first().map_or(0, |p| p.record.len());
    if pairs.iter().any(|p| p.record.len() != len) {
        return Err(Error::invalid(
            "the pair records are not aligned (different lengths): align them first",
        ));
    }
    let w = least_squares_weights(n, &idx)?;
    let sreq = StabilityRequest {
        estimators: vec![req.estimator],
        grid: req.grid.clone(),
        confidence: req.confidence,
        forced_alpha: None,
        bias_correction: true,
    };
    let curves: Vec<Curve> = pairs
        .iter()
        .map(|p| {
            analyse(&p.record, &sreq)
                .map(|mut c| c.remove(0))
                .map_err(|e| Error::invalid(format!("{}: {e}", p.source)))
        })
        .collect::<Result<_>>()?;
    // τ (by m) that every pair has.
    let ms: Vec<usize> = curves[0]
        .points
        .iter()
        .map(|p| p.estimate.m)
        .filter(|m| {
            curves
                .iter()
                .all(|c| c.points.iter().any(|p| p.estimate.m == *m))
        })
        .collect();
    let (points_by_clock, reference, interval) = match req.method {
        Method::Independent => (
            independent(&curves, &idx, &w, n, &ms, req)?,
            None,
            "edf-propagated",
        ),
        Method::Covariance => {
            let (pts, r) = covariance::separate(pairs, &idx, &names, &curves, &ms, req)?;
            (pts, Some(names[r].clone()), "monte-carlo")
        }
    };
    let clocks = names
        .iter()
        .zip(points_by_clock)
        .map(|(name, points)| Clock {
            name: name.clone(),
            curves: vec![ClockCurve {
                name: req.estimator.name(),
                estimator: req.estimator,
                origin: "separated",
                method: req.method,
                interval,
                points,
            }],
        })
        .collect();
    let pairs_out = pairs
        .iter()
        .zip(curves)
        .map(|(p, curve)| Pair {
            a: p.a.clone(),
            b: p.b.clone(),
            path: p.source.clone(),
            curve,
        })
        .collect();
    Ok(Separation {
        clocks,
        pairs: pairs_out,
        method: req.method,
        reference,
        points: len,
        simultaneous: req.simultaneous,
    })
}

/// The pair point at averaging factor m.
pub(crate) fn at(c: &Curve, m: usize) -> Option<&Point> {
    c.points.iter().find(|p| p.estimate.m == m)
}

/// For each clock, the pair that contains it and whose other clock has the
/// smallest separated variance (the pair dominated by this clock).
pub(crate) fn dominated_pairs(idx: &[(usize, usize)], var: &[f64]) -> Vec<usize> {
    (0..var.len())
        .map(|x| {
            let mut best = 0;
            let mut other = f64::INFINITY;
            for (k, &(a, b)) in idx.iter().enumerate() {
                let o = if a == x {
                    b
                } else if b == x {
                    a
                } else {
                    continue;
                };
                if var[o] < other {
                    other = var[o];
                    best = k;
                }
            }
            best
        })
        .collect()
}

/// The upper bound on σ²_x the pairs alone give: the smallest pair
/// variance containing clock x (σ²_ij = σ²_i + σ²_j ≥ σ²_i).
pub(crate) fn pair_bound(idx: &[(usize, usize)], pair_var: &[f64], x: usize) -> f64 {
    idx.iter()
        .zip(pair_var)
        .filter(|((a, b), _)| *a == x || *b == x)
        .map(|(_, v)| *v)
        .fold(f64::INFINITY, f64::min)
}

/// A clock point from its separated variance and the propagated standard
/// deviation of it (module notes: Satterthwaite ν, χ² interval; below
/// resolution: the bound).
pub(crate) fn clock_point(
    estimate: Estimate,
    var: f64,
    sd: Option<f64>,
    alpha: Option<i32>,
    bound_var: f64,
    confidence: f64,
) -> Result<ClockPoint> {
    let z = statrs::distribution::ContinuousCDF::inverse_cdf(
        &statrs::distribution::Normal::standard(),
        0.5 * (1.0 + confidence),
    );
    let sd = sd.filter(|s| s.is_finite() && *s > 0.0);
    // Resolved: positive, and told from zero by at least one degree of
    // freedom (ν = 2σ̂⁴/sd² ≥ 1, i.e. sd ≤ √2·σ̂²).
    if var > 0.0 && !sd.is_some_and(|s| s > std::f64::consts::SQRT_2 * var) {
        let dev = var.sqrt();
        let edf = sd.map(|s| 2.0 * var * var / (s * s));
        let (lo, hi, interval_method) = match edf {
            Some(nu) => {
                let (lo, hi, how) = crate::stats::annotate::combined_interval(dev, nu, confidence)?;
                (Some(lo), Some(hi), Some(how))
            }
            None => (None, None, None),
        };
        return Ok(ClockPoint {
            point: Point {
                estimate: Estimate {
                    value: dev,
                    ..estimate
                },
                edf,
                lo,
                hi,
                alpha,
                bias: None,
                drift: false,
                interval_method,
                approximation: None,
            },
            variance: var,
            variance_sd: sd,
            resolution: Resolution::Resolved,
        });
    }
    let statistical = sd.map(|s| var.max(0.0) + z * s);
    let bound = match statistical {
        Some(b) => b.min(bound_var),
        None => bound_var,
    }
    .max(0.0)
    .sqrt();
    Ok(ClockPoint {
        point: Point {
            estimate: Estimate {
                value: bound,
                ..estimate
            },
            edf: None,
            lo: None,
            hi: Some(bound),
            alpha,
            bias: None,
            drift: false,
            interval_method: None,
            approximation: None,
        },
        variance: var,
        variance_sd: sd,
        resolution: Resolution::Below,
    })
}

/// The independent-clock separation at each τ with EDF-propagated
/// intervals (module notes).
fn independent(
    curves: &[Curve],
    idx: &[(usize, usize)],
    w: &DMatrix<f64>,
    n: usize,
    ms: &[usize],
    req: &Request,
) -> Result<Vec<Vec<ClockPoint>>> {
    let confidence = req.confidence;
    let mut out = vec![Vec::new(); n];
    let three = n == 3 && idx.len() == 3;
    for &m in ms {
        let pts: Vec<&Point> = curves.iter().filter_map(|c| at(c, m)).collect();
        let v: Vec<f64> = pts
            .iter()
            .map(|p| p.estimate.value * p.estimate.value)
            .collect();
        let var = if three {
            // The exact identity, with the pairs in clock order.
            let find = |i: usize, j: usize| {
                idx.iter()
                    .position(|&(a, b)| (a, b) == (i, j) || (a, b) == (j, i))
                    .map(|k| v[k])
                    .unwrap_or(f64::NAN)
            };
            three_cornered_hat(find(0, 1), find(0, 2), find(1, 2)).to_vec()
        } else {
            (0..n)
                .map(|i| (0..idx.len()).map(|k| w[(i, k)] * v[k]).sum())
                .collect()
        };
        let sd = propagated_sd(idx, w, &pts, &v, &var, req.simultaneous);
        let dom = dominated_pairs(idx, &var);
        let terms = pts.iter().map(|p| p.estimate.terms).min().unwrap_or(0);
        for i in 0..n {
            let e = Estimate {
                tau: pts[0].estimate.tau,
                m,
                value: 0.0,
                terms,
            };
            let alpha = pts[dom[i]].alpha;
            out[i].push(clock_point(
                e,
                var[i],
                sd[i],
                alpha,
                pair_bound(idx, &v, i),
                confidence,
            )?);
        }
    }
    Ok(out)
}

/// The standard deviation of each σ̂²_i = Σ_k w_ik σ̂²_k: Var σ̂²_k =
/// 2σ̂⁴_k/ν_k, and pairs k ≠ l sharing clock X covary by 2σ⁴_X/ν_X (module
/// notes; σ²_X the separated value, at least 0, ν_X the EDF of the pair
/// dominated by X). `None` for a clock when a pair it depends on has no
/// EDF.
pub(crate) fn propagated_sd(
    idx: &[(usize, usize)],
    w: &DMatrix<f64>,
    pts: &[&Point],
    v: &[f64],
    var: &[f64],
    simultaneous: bool,
) -> Vec<Option<f64>> {
    let n = var.len();
    let p = idx.len();
    let dom = dominated_pairs(idx, var);
    let nu_x: Vec<Option<f64>> = (0..n).map(|x| pts[dom[x]].edf).collect();
    let mut cov = DMatrix::<f64>::zeros(p, p);
    let mut known = vec![true; p];
    for k in 0..p {
        match pts[k].edf {
            Some(nu) if nu > 0.0 => cov[(k, k)] = 2.0 * v[k] * v[k] / nu,
            _ => known[k] = false,
        }
        for l in 0..p {
            if l == k || !simultaneous {
                continue;
            }
            let (a, b) = idx[k];
            let (c, d) = idx[l];
            let shared = [a, b].into_iter().find(|x| *x == c || *x == d);
            if let Some(x) = shared {
                match nu_x[x] {
                    Some(nu) if nu > 0.0 => {
                        let s = var[x].max(0.0);
                        cov[(k, l)] = 2.0 * s * s / nu;
                    }
                    _ => known[k] = false,
                }
            }
        }
    }
    (0..n)
        .map(|i| {
            let uses = |k: usize| w[(i, k)].abs() > 1e-12;
            if (0..p).any(|k| uses(k) && !known[k]) {
                return None;
            }
            let mut s = 0.0;
            for k in 0..p {
                for l in 0..p {
                    s += w[(i, k)] * w[(i, l)] * cov[(k, l)];
                }
            }
            (s > 0.0).then(|| s.sqrt())
        })
        .collect()
}

/// A pair on the command line: `A,B=FILE` — the two clocks compared and the
/// record of x_A − x_B.
///
/// ```
/// use tauwise::separate::PairSpec;
/// let p: PairSpec = "ocxo-a,rb-1=ab.txt".parse().unwrap();
/// assert_eq!((p.a.as_str(), p.b.as_str()), ("ocxo-a", "rb-1"));
/// assert_eq!(p.path.to_str(), Some("ab.txt"));
/// assert!("A=ab.txt".parse::<PairSpec>().is_err());
/// assert!("A,A=ab.txt".parse::<PairSpec>().is_err());
/// ```
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PairSpec {
    /// First clock.
    pub a: String,
    /// Second clock.
    pub b: String,
    /// The record of x_a − x_b.
    pub path: std::path::PathBuf,
}

impl std::str::FromStr for PairSpec {
    type Err = crate::units::UnitError;
    fn from_str(s: &str) -> std::result::Result<Self, Self::Err> {
        let bad = |reason: &str| crate::units::UnitError::Invalid {
            text: s.to_string(),
            reason: format!("'{s}': {reason}; expected CLOCK,CLOCK=FILE (e.g. A,B=ab.txt)"),
        };
        let (names, path) = s
            .split_once('=')
            .ok_or_else(|| bad("no '=' before the file"))?;
        let (a, b) = names
            .split_once(',')
            .ok_or_else(|| bad("two clock names separated by a comma are needed"))?;
        let (a, b) = (a.trim(), b.trim());
        if a.is_empty() || b.is_empty() || b.contains(',') {
            return Err(bad("two non-empty clock names are needed"));
        }
        if a == b {
            return Err(bad("the two clocks of a pair must differ"));
        }
        if path.trim().is_empty() {
            return Err(bad("no file after '='"));
        }
        Ok(PairSpec {
            a: a.to_string(),
            b: b.to_string(),
            path: std::path::PathBuf::from(path.trim()),
        })
    }
}
