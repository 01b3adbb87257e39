//! Stability through time: σ(τ) in a window sliding along the record (the
//! dynamic Allan variance of Galleani & Tavella, "The dynamic Allan
//! variance", IEEE Trans. UFFC 56, 2009), with the statistics of a
//! `stability` curve in every window, and the windows that depart from the
//! whole record.
//!
//! **Windows.** A window holds `window` phase samples; it starts at sample
//! 0 and moves by `step` samples while it fits in the record. Its τ are those
//! of the grid up to a quarter of the window (m ≤ window/4), the same in
//! every window and in the whole-record curve.
//!
//! **Incremental sums.** For each m the terms t_j of the estimator (the
//! second difference x_{j+2m} − 2x_{j+m} + x_j for OADEV, the third for
//! OHDEV, the inner sum of MDEV/TDEV) are computed once along the record,
//! NaN where the term's span touches a gap, and their squares go into a
//! compensated (Neumaier) prefix sum with a prefix count of the terms used.
//! A window's sum is then a difference of two prefix values, O(1) per window
//! and τ, and its value is the estimator's formula (NIST SP 1065) on the
//! window's terms — the same terms [`crate::deviation::compute`] uses on the
//! slice. The statistics (noise type, EDF, interval) come from
//! [`crate::stats::annotate_with`] on the slice, so each window equals
//! `stability` run on that slice.
//!
//! **Events.** A window departs from the whole record at τ when its interval
//! and the whole record's, both at `event_confidence`, do not overlap.
//! Consecutive windows departing at one τ in one direction form one event,
//! whose `ratio` is the window-to-whole ratio of deviations farthest from 1.
//! The expected false-alarm rate of one (window, τ) cell on a stationary
//! record, for the log-normal approximation of σ̂² (sd of ln σ̂² ≈ √(2/ν))
//! and a window nested in the record (the window's terms are part of the
//! whole's, so Var(ln σ̂²_w − ln σ̂²_all) ≈ s_w² − s_a²), is
//! P = 2Φ(−z·(s_w + s_a)/√(s_w² − s_a²)), s = √(2/ν), z the normal quantile
//! at (1 + event_confidence)/2 ([`false_alarm_rate`]; for a window an eighth
//! of the record at 99 %: 1.9·10⁻⁴).
//!
//! An engineering estimate: the governing standard, the equipment maker's
//! data and local acceptance procedures decide.

use crate::deviation::{Curve, Estimate, Estimator, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::annotate::point_interval;
use crate::stats::{annotate_with, NoiseIdentifier, StatsOptions};
use crate::tau::TauGrid;
use rayon::prelude::*;
use statrs::distribution::{ContinuousCDF, Normal};

/// The estimators the timeline computes (fully overlapping ones, whose
/// windows are sums of consecutive terms).
pub const SUPPORTED: &[Estimator] = &[
    Estimator::Oadev,
    Estimator::Mdev,
    Estimator::Tdev,
    Estimator::Ohdev,
];

/// The default confidence of the event test.
pub const EVENT_CONFIDENCE: f64 = 0.99;

/// What to compute.
#[derive(Debug, Clone)]
pub struct Request {
    /// The estimator (one of [`SUPPORTED`]).
    pub estimator: Estimator,
    /// The τ grid (cut at a quarter of the window).
    pub grid: TauGrid,
    /// Phase samples per window.
    pub window: usize,
    /// Samples between window starts.
    pub step: usize,
    /// Two-sided confidence of the windows' intervals.
    pub confidence: f64,
    /// Two-sided confidence of the intervals of the event test.
    pub event_confidence: f64,
}

/// One window: its span in seconds from the record's first sample and its
/// points (the shape of a `stability` curve's points).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Window {
    /// Time of the window's first sample (s from the record's first sample).
    pub start: f64,
    /// Time of the window's last sample (s).
    pub end: f64,
    /// σ(τ) in the window with its statistics.
    pub points: Vec<Point>,
}

impl Window {
    /// The window's centre (s).
    pub fn centre(&self) -> f64 {
        0.5 * (self.start + self.end)
    }
}

/// Above or below the whole record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Direction {
    /// The window is noisier than the whole record.
    Above,
    /// The window is quieter.
    Below,
}

/// A run of consecutive windows that depart from the whole record at one τ
/// in one direction.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Event {
    /// Start of the run's first window (s).
    pub start: f64,
    /// End of the run's last window (s).
    pub end: f64,
    /// The averaging time (s).
    pub tau: f64,
    /// Window deviation over the whole record's, farthest from 1 in the run.
    pub ratio: f64,
    /// Above or below.
    pub direction: Direction,
    /// Windows in the run.
    pub windows: usize,
}

/// The expected false-alarm rate of one τ.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct FalseAlarm {
    /// τ (s).
    pub tau: f64,
    /// The expected fraction of windows flagged at this τ on a stationary
    /// record (mean of [`false_alarm_rate`] over the windows).
    pub rate: f64,
}

/// The timeline of a record.
#[derive(Debug, Clone, PartialEq)]
pub struct Timeline {
    /// The whole record's curve on the windows' τ.
    pub whole: Curve,
    /// The windows, in time order.
    pub windows: Vec<Window>,
    /// The departures.
    pub events: Vec<Event>,
    /// Expected false-alarm rate per τ.
    pub false_alarm: Vec<FalseAlarm>,
    /// Window length (s): the window's samples × τ0.
    pub window_s: f64,
    /// Step (s).
    pub step_s: f64,
}

/// The expected false-alarm rate of one (window, τ) cell (module notes):
/// 2Φ(−z(s_w + s_a)/√(s_w² − s_a²)), s = √(2/ν). `None` when the window
/// has no more EDF than the whole (nothing to compare) or an EDF is missing.
pub fn false_alarm_rate(nu_window: f64, nu_whole: f64, event_confidence: f64) -> Option<f64> {
    if !(nu_window > 0.0 && nu_whole > nu_window) {
        return None;
    }
    let n = Normal::standard();
    let z = n.inverse_cdf(0.5 * (1.0 + event_confidence));
    let sw = (2.0 / nu_window).sqrt();
    let sa = (2.0 / nu_whole).sqrt();
    Some(2.0 * n.cdf(-z * (sw + sa) / (sw * sw - sa * sa).sqrt()))
}

/// Compensated prefix sums of squares of the valid terms, and their count.
struct Prefix {
    /// (sum, compensation) after j terms.
    sum: Vec<(f64, f64)>,
    count: Vec<u32>,
}

impl Prefix {
    fn new(terms: &[f64]) -> Self {
        let mut sum = Vec::with_capacity(terms.len() + 1);
        let mut count = Vec::with_capacity(terms.len() + 1);
        let (mut s, mut c, mut k) = (0.0f64, 0.0f64, 0u32);
        sum.push((s, c));
        count.push(k);
        for &t in terms {
            if t.is_finite() {
                let v = t * t;
                // Neumaier's compensated summation.
                let u = s + v;
                if s.abs() >= v.abs() {
                    c += (s - u) + v;
                } else {
                    c += (v - u) + s;
                }
                s = u;
                k += 1;
            }
            sum.push((s, c));
            count.push(k);
        }
        Self { sum, count }
    }
    /// Σ t_j² and the count over a ≤ j < b.
    fn range(&self, a: usize, b: usize) -> (f64, usize) {
        let (sb, cb) = self.sum[b];
        let (sa, ca) = self.sum[a];
        (
            (sb - sa) + (cb - ca),
            (self.count[b] - self.count[a]) as usize,
        )
    }
}

/// The terms of `est` at m along the whole record (NaN where the span
/// touches a gap), their reach (last index − first) and the normalisation
/// (σ² = Σ t² / (norm · terms)).
fn terms(est: Estimator, x: &[f64], m: usize, tau0: f64) -> (Vec<f64>, usize, f64) {
    let (mut t, reach, norm) = raw_terms(est, x, m, tau0);
    // A term whose span x_j … x_{j+reach} touches a gap is left out, as
    // every estimator does (the gap count of the span must be zero).
    if x.iter().any(|v| v.is_nan()) {
        let mut gaps = Vec::with_capacity(x.len() + 1);
        let mut g = 0u32;
        gaps.push(g);
        for v in x {
            g += v.is_nan() as u32;
            gaps.push(g);
        }
        for (j, v) in t.iter_mut().enumerate() {
            if gaps[j + reach + 1] != gaps[j] {
                *v = f64::NAN;
            }
        }
    }
    (t, reach, norm)
}

fn raw_terms(est: Estimator, x: &[f64], m: usize, tau0: f64) -> (Vec<f64>, usize, f64) {
    let n = x.len();
    let tau = m as f64 * tau0;
    match est {
        Estimator::Oadev => {
            let reach = 2 * m;
            let t = (0..n.saturating_sub(reach))
                .map(|j| x[j + 2 * m] - 2.0 * x[j + m] + x[j])
                .collect();
            (t, reach, 2.0 * tau * tau)
        }
        Estimator::Ohdev => {
            let reach = 3 * m;
            let t = (0..n.saturating_sub(reach))
                .map(|j| x[j + 3 * m] - 3.0 * x[j + 2 * m] + 3.0 * x[j + m] - x[j])
                .collect();
            (t, reach, 6.0 * tau * tau)
        }
        _ => {
            // MDEV / TDEV: S_j = Σ_{i=j}^{j+m−1} (x_{i+2m} − 2x_{i+m} + x_i),
            // j = 0 … N − 3m, by S_{j+1} = S_j + (x_{j+3m} − 3x_{j+2m} +
            // 3x_{j+m} − x_j), restarted from the direct sum every 4096
            // terms; a term whose span x_j … x_{j+3m−1} holds a gap is NaN.
            let reach = 3 * m - 1;
            let nt = (n + 1).saturating_sub(3 * m);
            let direct = |j: usize| -> f64 {
                (j..j + m)
                    .map(|i| x[i + 2 * m] - 2.0 * x[i + m] + x[i])
                    .sum()
            };
            let mut t = Vec::with_capacity(nt);
            let mut s = 0.0f64;
            for j in 0..nt {
                if j % 4096 == 0 || !s.is_finite() {
                    s = direct(j);
                }
                t.push(s);
                if j + 1 < nt {
                    s += (x[j + 3 * m] - x[j]) + 3.0 * (x[j + m] - x[j + 2 * m]);
                }
            }
            let mf = m as f64;
            (t, reach, 2.0 * mf * mf * tau * tau)
        }
    }
}

/// The windows' start samples for a record of `n` samples.
fn starts(n: usize, window: usize, step: usize) -> Vec<usize> {
    if window > n || step == 0 {
        return Vec::new();
    }
    (0..=(n - window) / step).map(|k| k * step).collect()
}

/// The largest number of (window, τ) points [`timeline`] keeps (about
/// 100 bytes each: 400 MB).
pub const MAX_CELLS: usize = 4_000_000;

/// A duration as a whole number of τ0 (within 1e-6), or an error naming
/// the option that gave it.
pub fn whole_samples(seconds: f64, tau0: f64, option: &str) -> Result<usize> {
    let k = seconds / tau0;
    let r = k.round();
    if !(r >= 1.0 && (k - r).abs() <= 1e-6 * r.max(1.0) && r < 1e12) {
        return Err(Error::option(
            option,
            format!("{seconds} s is not a whole number of τ0 = {tau0} s"),
        ));
    }
    Ok(r as usize)
}

/// The window and step of a timeline in samples of `x`, each given as
/// `(option, seconds)`: whole numbers of τ0, the window no longer than the
/// record.
pub fn window_and_step(
    x: &PhaseRecord,
    window: (&str, f64),
    step: (&str, f64),
) -> Result<(usize, usize)> {
    let w = whole_samples(window.1, x.tau0, window.0)?;
    let s = whole_samples(step.1, x.tau0, step.0)?;
    if w > x.len() {
        return Err(Error::option(
            window.0,
            format!(
                "{} is longer than the record ({} samples at τ0 = {} s)",
                crate::units::format_si(window.1, "s", 4),
                x.len(),
                x.tau0
            ),
        ));
    }
    Ok((w, s))
}

/// An estimator by name (`--dev`), refused with the list of [`SUPPORTED`]
/// ones unless the timeline supports it.
pub fn estimator_named(s: &str) -> std::result::Result<Estimator, crate::units::UnitError> {
    let bad = |reason: String| crate::units::UnitError::Invalid {
        text: s.to_string(),
        reason,
    };
    let e = Estimator::from_name(s).map_err(|e| bad(e.to_string()))?;
    if !crate::timeline::SUPPORTED.contains(&e) {
        return Err(bad(format!(
            "'{s}' has no timeline: expected one of {}",
            Estimator::names(crate::timeline::SUPPORTED)
        )));
    }
    Ok(e)
}

/// σ(τ) in each window, the whole record's curve and the events (module
/// notes).
pub fn timeline(x: &PhaseRecord, req: &Request) -> Result<Timeline> {
    if !SUPPORTED.contains(&req.estimator) {
        return Err(Error::invalid(format!(
            "timeline works with {}; {} is not one",
            Estimator::names(SUPPORTED),
            req.estimator
        )));
    }
    crate::stats::interval::check_confidence(req.confidence)?;
    crate::stats::interval::check_confidence(req.event_confidence)?;
    let n = x.len();
    if req.window < 8 || req.window > n {
        return Err(Error::invalid(format!(
            "a window of {} samples does not fit the record of {n} samples (needs 8 … {n})",
            req.window
        )));
    }
    if req.step == 0 {
        return Err(Error::invalid(
            "the window step must be at least one sample",
        ));
    }
    let st = starts(n, req.window, req.step);
    let max_m = (req.window / 4).min(req.estimator.max_m(req.window));
    let ms = req.grid.ms(x.tau0, max_m)?;
    if ms.is_empty() {
        return Err(Error::insufficient(format!(
            "no τ of the grid fits a quarter of the window ({} samples)",
            req.window
        )));
    }
    let cells = st.len().saturating_mul(ms.len());
    if cells > MAX_CELLS {
        return Err(Error::invalid(format!(
            "{} windows × {} τ = {cells} points would need about {} MB (limit {} MB): take a longer step or fewer τ",
            st.len(),
            ms.len(),
            cells / 10_000,
            MAX_CELLS / 10_000
        )));
    }
    let opts = StatsOptions {
        confidence: req.confidence,
        forced_alpha: None,
        bias_correction: true,
    };
    // The whole record, as `stability` gives it on these τ.
    let whole_points = {
        let est = crate::deviation::compute(req.estimator, x, &ms);
        annotate_with(req.estimator, x, &NoiseIdentifier::new(x), &est, &opts)?
    };
    let whole = Curve::measured(req.estimator, whole_points);
    // Per m: terms along the record and their prefix sums.
    let prefixes: Vec<(usize, usize, f64, Prefix)> = ms
        .par_iter()
        .map(|&m| {
            let (t, reach, norm) = terms(req.estimator, &x.x, m, x.tau0);
            (m, reach, norm, Prefix::new(&t))
        })
        .collect();
    let tau0 = x.tau0;
    let windows: Vec<Window> = st
        .par_iter()
        .map(|&s| -> Result<Window> {
            let w = req.window;
            let mut est = Vec::with_capacity(prefixes.len());
            for (m, reach, norm, p) in &prefixes {
                if w <= *reach {
                    continue;
                }
                let (sum, used) = p.range(s, s + w - reach);
                if used == 0 {
                    continue;
                }
                let mut value = (sum.max(0.0) / (norm * used as f64)).sqrt();
                let tau = *m as f64 * tau0;
                if req.estimator == Estimator::Tdev {
                    value *= tau / 3f64.sqrt();
                }
                est.push(Estimate {
                    tau,
                    m: *m,
                    value,
                    terms: used,
                });
            }
            let slice = PhaseRecord::new(x.x[s..s + w].to_vec(), tau0)?;
            let points = annotate_with(
                req.estimator,
                &slice,
                &NoiseIdentifier::new(&slice),
                &est,
                &opts,
            )?;
            Ok(Window {
                start: s as f64 * tau0,
                end: (s + w - 1) as f64 * tau0,
                points,
            })
        })
        .collect::<Result<_>>()?;
    let (events, false_alarm) = departures(
        &whole,
        x.x.len(),
        &windows,
        req.window,
        req.event_confidence,
    )?;
    Ok(Timeline {
        whole,
        windows,
        events,
        false_alarm,
        window_s: req.window as f64 * tau0,
        step_s: req.step as f64 * tau0,
    })
}

/// The events and the expected false-alarm rate per τ (module notes):
/// `whole` from a record of `whole_len` samples, `windows` of `window_len`
/// samples each. Both intervals of the event test come from
/// [`crate::stats::annotate::point_interval`], the function behind every
/// point's interval, at `event_confidence`.
pub fn departures(
    whole: &Curve,
    whole_len: usize,
    windows: &[Window],
    window_len: usize,
    event_confidence: f64,
) -> Result<(Vec<Event>, Vec<FalseAlarm>)> {
    let est = whole.estimator;
    let interval = |len: usize, p: &Point, a: i32, nu: f64| -> Result<(f64, f64)> {
        let (lo, hi, _) = point_interval(est, len, &p.estimate, a, nu, event_confidence)?;
        Ok((lo, hi))
    };
    let mut events = Vec::new();
    let mut alarms = Vec::new();
    for wp in &whole.points {
        let m = wp.estimate.m;
        let tau = wp.estimate.tau;
        let (Some(nu_all), Some(a_all)) = (wp.edf, wp.alpha) else {
            continue;
        };
        let (alo, ahi) = interval(whole_len, wp, a_all, nu_all)?;
        let mut rates = Vec::new();
        let mut run: Option<Event> = None;
        for w in windows {
            let Some(p) = w.points.iter().find(|p| p.estimate.m == m) else {
                if let Some(e) = run.take() {
                    events.push(e);
                }
                continue;
            };
            let dir = match (p.edf, p.alpha) {
                (Some(nu), Some(a)) if p.estimate.value.is_finite() => {
                    if let Some(r) = false_alarm_rate(nu, nu_all, event_confidence) {
                        rates.push(r);
                    }
                    let (lo, hi) = interval(window_len, p, a, nu)?;
                    if lo > ahi {
                        Some(Direction::Above)
                    } else if hi < alo {
                        Some(Direction::Below)
                    } else {
                        None
                    }
                }
                _ => None,
            };
            let ratio = p.estimate.value / wp.estimate.value;
            match (dir, run.as_mut()) {
                (Some(d), Some(e)) if e.direction == d => {
                    e.end = w.end;
                    e.windows += 1;
                    if ratio.ln().abs() > e.ratio.ln().abs() {
                        e.ratio = ratio;
                    }
                }
                (Some(d), _) => {
                    if let Some(e) = run.take() {
                        events.push(e);
                    }
                    run = Some(Event {
                        start: w.start,
                        end: w.end,
                        tau,
                        ratio,
                        direction: d,
                        windows: 1,
                    });
                }
                (None, _) => {
                    if let Some(e) = run.take() {
                        events.push(e);
                    }
                }
            }
        }
        if let Some(e) = run.take() {
            events.push(e);
        }
        if !rates.is_empty() {
            alarms.push(FalseAlarm {
                tau,
                rate: rates.iter().sum::<f64>() / rates.len() as f64,
            });
        }
    }
    events.sort_by(|a, b| a.start.total_cmp(&b.start).then(a.tau.total_cmp(&b.tau)));
    Ok((events, alarms))
}
