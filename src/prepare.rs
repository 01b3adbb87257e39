//! Preparing a record for analysis: frequency offset and drift, outliers,
//! gap filling and decimation.
//!
//! Everything here works on the fractional frequency of the record. For a
//! frequency record that is y_i itself; for a phase record it is the first
//! difference y_i = (x_{i+1} − x_i)/τ0 (NIST SP 1065 §3). Either way y_i is
//! the mean frequency over [iτ0, (i+1)τ0], so it is placed at the interval's
//! centre t_i = (i + ½)τ0. Gaps (NaN) are left out of every fit and statistic.
//!
//! Changes are written back in the record's own kind: a drift removed from
//! phase data is removed as the phase it integrates to, exactly, so that the
//! first differences of the result are the drift-free frequencies.

use crate::error::{Error, Result};
use crate::record::{FrequencyRecord, PhaseRecord, Record};

pub mod pipeline;

/// Seconds per day, for drift figures "per day".
pub const DAY: f64 = 86400.0;

/// The fractional frequency of a record, y_i over [iτ0, (i+1)τ0] (NaN = gap).
pub fn frequency_of(record: &Record) -> Vec<f64> {
    match record {
        Record::Frequency(f) => f.y.clone(),
        Record::Phase(p) => p.to_frequency().y,
    }
}

/// Mean fractional-frequency offset: the mean of the valid y_i,
/// ȳ = (1/n) Σ y_i. For gap-free phase data this is (x_{N−1} − x_0)/((N−1)τ0).
/// `None` when no frequency value is available.
pub fn mean_frequency(record: &Record) -> Option<f64> {
    mean_valid(&frequency_of(record))
}

fn mean_valid(v: &[f64]) -> Option<f64> {
    let (s, n) = v
        .iter()
        .filter(|x| !x.is_nan())
        .fold((0.0, 0usize), |(s, n), x| (s + x, n + 1));
    (n > 0).then(|| s / n as f64)
}

/// The frequency-drift model fitted by least squares to y(t).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum DriftModel {
    /// y(t) = a + b·u, u = t − t_c
    Linear,
    /// y(t) = a + b·u + c·u²
    Quadratic,
}

impl DriftModel {
    /// `linear` or `quadratic`.
    pub fn name(self) -> &'static str {
        match self {
            DriftModel::Linear => "linear",
            DriftModel::Quadratic => "quadratic",
        }
    }
}

/// A least-squares fit of frequency drift.
///
/// With u = t − t_c measured from the centre t_c of the valid samples, the
/// model is y(u) = a + b·u + c·u² (c = 0 for the linear model). Because each
/// y_i is the *average* of y over its interval, the quadratic basis function
/// is the interval average of u², which is u_i² + τ0²/12; the fit is then
/// exact for data that follow the model.
///
/// Linear frequency drift by a least-squares line through y(t) is the method
/// NIST SP 1065 §5 recommends for white and random-walk FM.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct DriftFit {
    /// The model fitted.
    pub model: DriftModel,
    /// a: the fractional frequency at the centre t_c.
    pub offset: f64,
    /// b: the drift rate at the centre, per second (fractional frequency / s).
    pub rate: f64,
    /// c: the quadratic coefficient, per second² (0 for the linear model).
    pub curvature: f64,
    /// t_c: the centre of the fit, seconds from the first sample.
    pub centre: f64,
    /// Number of frequency values used.
    pub points: usize,
    /// Root-mean-square residual of the fit, √(Σ r_i² / (n − p)).
    pub residual_rms: f64,
}

impl DriftFit {
    /// The drift rate at the centre per day: b·86400 s.
    pub fn per_day(&self) -> f64 {
        self.rate * DAY
    }

    /// The change of the drift rate per day, per day: 2c·86400² (0 for linear).
    pub fn curvature_per_day2(&self) -> f64 {
        2.0 * self.curvature * DAY * DAY
    }

    /// The model's mean frequency over the interval [t − τ0/2, t + τ0/2].
    pub fn frequency_at(&self, t: f64, tau0: f64) -> f64 {
        let u = t - self.centre;
        self.offset + self.rate * u + self.curvature * (u * u + tau0 * tau0 / 12.0)
    }
}

/// Solve the small dense system `a·x = b` by Gaussian elimination with
/// partial pivoting. `None` when singular.
fn solve<const N: usize>(mut a: [[f64; N]; N], mut b: [f64; N]) -> Option<[f64; N]> {
    for col in 0..N {
        let piv = (col..N).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[piv][col].abs() < 1e-300 {
            return None;
        }
        a.swap(col, piv);
        b.swap(col, piv);
        let pivot_row = a[col];
        for row in col + 1..N {
            let f = a[row][col] / pivot_row[col];
            for (v, p) in a[row].iter_mut().zip(&pivot_row).skip(col) {
                *v -= f * p;
            }
            b[row] -= f * b[col];
        }
    }
    let mut x = [0.0; N];
    for row in (0..N).rev() {
        let s: f64 = (row + 1..N).map(|k| a[row][k] * x[k]).sum();
        x[row] = (b[row] - s) / a[row][row];
    }
    Some(x)
}

/// Fit frequency drift to a record by least squares on y (see [`DriftFit`]).
///
/// Needs at least 2 valid frequency values (3 for the quadratic model) that
/// are not all at one time.
pub fn fit_drift(record: &Record, model: DriftModel) -> Result<DriftFit> {
    fit_drift_y(&frequency_of(record), record.tau0(), model)
}

/// [`fit_drift`] on frequency values y_i at t_i = (i + ½)τ0.
pub fn fit_drift_y(y: &[f64], tau0: f64, model: DriftModel) -> Result<DriftFit> {
    let need = match model {
        DriftModel::Linear => 2,
        DriftModel::Quadratic => 3,
    };
    let t = |i: usize| (i as f64 + 0.5) * tau0;
    let (mut st, mut sy, mut n) = (0.0, 0.0, 0usize);
    let (mut tmin, mut tmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for (i, &v) in y.iter().enumerate() {
        if !v.is_nan() {
            st += t(i);
            sy += v;
            n += 1;
            tmin = tmin.min(t(i));
            tmax = tmax.max(t(i));
        }
    }
    if n < need {
        return Err(Error::insufficient(format!(
            "a {} drift fit needs at least {need} frequency values, found {n}",
            model.name()
        )));
    }
    let centre = st / n as f64;
    let ybar = sy / n as f64;
    // Scaled time s = u/h in [-1, 1] keeps the normal equations well conditioned.
    let h = (0.5 * (tmax - tmin)).max(f64::MIN_POSITIVE);
    let q0 = (tau0 / h).powi(2) / 12.0;
    let valid = || {
        y.iter()
            .enumerate()
            .filter(|(_, v)| !v.is_nan())
            .map(|(i, &v)| ((t(i) - centre) / h, v - ybar))
    };
    let (a, b, c) = match model {
        DriftModel::Linear => {
            let (mut sss, mut ssy) = (0.0, 0.0);
            for (s, d) in valid() {
                sss += s * s;
                ssy += s * d;
            }
            if sss <= 0.0 {
                return Err(Error::insufficient(
                    "a drift fit needs frequency values at two or more times",
                ));
            }
            (ybar, ssy / sss / h, 0.0)
        }
        DriftModel::Quadratic => {
            let mut m = [[0.0; 3]; 3];
            let mut r = [0.0; 3];
            for (s, d) in valid() {
                let f = [1.0, s, s * s + q0];
                for j in 0..3 {
                    for k in 0..3 {
                        m[j][k] += f[j] * f[k];
                    }
                    r[j] += f[j] * d;
                }
            }
            let x = solve(m, r).ok_or_else(|| {
                Error::insufficient(
                    "a quadratic drift fit needs frequency values at three or more times",
                )
            })?;
            (ybar + x[0], x[1] / h, x[2] / (h * h))
        }
    };
    let fit0 = DriftFit {
        model,
        offset: a,
        rate: b,
        curvature: c,
        centre,
        points: n,
        residual_rms: 0.0,
    };
    let p = need;
    let ss: f64 = y
        .iter()
        .enumerate()
        .filter(|(_, v)| !v.is_nan())
        .map(|(i, &v)| (v - fit0.frequency_at(t(i), tau0)).powi(2))
        .sum();
    let residual_rms = if n > p {
        (ss / (n - p) as f64).sqrt()
    } else {
        0.0
    };
    Ok(DriftFit {
        residual_rms,
        ..fit0
    })
}

/// Remove the drift terms of `fit` from a record, keeping the frequency at
/// the centre (a): y_i ← y_i − [b·u_i + c·(u_i² + τ0²/12)], u_i = t_i − t_c.
///
/// For phase data the same change is made to phase, exactly:
/// x_j ← x_j − [b·v_j²/2 + c·v_j³/3] with v_j = jτ0 − t_c, whose first
/// differences divided by τ0 are the frequency corrections above.
pub fn remove_drift(record: &Record, fit: &DriftFit) -> Record {
    let tau0 = record.tau0();
    let (b, c, tc) = (fit.rate, fit.curvature, fit.centre);
    match record {
        Record::Frequency(f) => {
            let y =
                f.y.iter()
                    .enumerate()
                    .map(|(i, &v)| {
                        let u = (i as f64 + 0.5) * tau0 - tc;
                        v - (b * u + c * (u * u + tau0 * tau0 / 12.0))
                    })
                    .collect();
            Record::Frequency(FrequencyRecord { y, tau0 })
        }
        Record::Phase(p) => {
            let x =
                p.x.iter()
                    .enumerate()
                    .map(|(j, &v)| {
                        let w = j as f64 * tau0 - tc;
                        v - (b * w * w / 2.0 + c * w * w * w / 3.0)
                    })
                    .collect();
            Record::Phase(PhaseRecord { x, tau0 })
        }
    }
}

/// Scale factor that makes the median absolute deviation an estimate of the
/// standard deviation for normal data: 1/Φ⁻¹(3/4) = 1/0.6744898 (analytic).
pub const MAD_SCALE: f64 = 1.482_602_218_505_602;

/// Frequency outliers by the median absolute deviation (the MAD test of
/// NIST SP 1065 §5, from memory): with m = median(y) and
/// MAD = median|y_i − m| / 0.6745, y_i is an outlier when |y_i − m| > K·MAD.
///
/// When more than half of the values equal the median (coarsely quantised
/// data) the MAD is 0; then the scale used is the mean absolute deviation
/// from the median times √(π/2) (also σ for normal data, analytic), and
/// `mad_fallback` is set.
#[derive(Debug, Clone, PartialEq)]
pub struct Outliers {
    /// The limit K in units of the (scaled) MAD.
    pub limit: f64,
    /// Median of the valid frequency values.
    pub median: f64,
    /// The scaled MAD (an estimate of σ), or the fallback scale.
    pub mad: f64,
    /// True when the MAD was 0 and the fallback scale was used.
    pub mad_fallback: bool,
    /// Indices i of the outlying frequency values y_i, increasing.
    pub indices: Vec<usize>,
    /// Number of valid frequency values tested.
    pub tested: usize,
}

/// Median of `v` (reorders it, O(n) selection); `None` when empty.
pub fn median_in_place(v: &mut [f64]) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    let mid = v.len() / 2;
    let odd = v.len() % 2 == 1;
    let (lower, &mut hi, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    if odd {
        Some(hi)
    } else {
        let lo = lower.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        Some(0.5 * (lo + hi))
    }
}

/// Find the frequency outliers of a record beyond `limit`·MAD (see [`Outliers`]).
pub fn find_outliers(record: &Record, limit: f64) -> Result<Outliers> {
    find_outliers_y(&frequency_of(record), limit)
}

/// [`find_outliers`] on frequency values.
pub fn find_outliers_y(y: &[f64], limit: f64) -> Result<Outliers> {
    if !(limit.is_finite() && limit > 0.0) {
        return Err(Error::invalid(format!(
            "outlier limit {limit}: expected a positive number of MADs (e.g. 5)"
        )));
    }
    let mut valid: Vec<f64> = y.iter().copied().filter(|v| !v.is_nan()).collect();
    let tested = valid.len();
    let median = median_in_place(&mut valid)
        .ok_or_else(|| Error::insufficient("no frequency values to test for outliers"))?;
    for v in valid.iter_mut() {
        *v = (*v - median).abs();
    }
    let mean_abs = valid.iter().sum::<f64>() / tested as f64;
    let raw = median_in_place(&mut valid).unwrap_or(0.0);
    let (mad, mad_fallback) = if raw > 0.0 {
        (raw * MAD_SCALE, false)
    } else {
        (mean_abs * (std::f64::consts::PI / 2.0).sqrt(), true)
    };
    let indices = if mad > 0.0 {
        y.iter()
            .enumerate()
            .filter(|(_, &v)| !v.is_nan() && (v - median).abs() > limit * mad)
            .map(|(i, _)| i)
            .collect()
    } else {
        Vec::new()
    };
    Ok(Outliers {
        limit,
        median,
        mad,
        mad_fallback,
        indices,
        tested,
    })
}

/// What replacing outliers by gaps did.
#[derive(Debug, Clone, PartialEq)]
pub struct OutlierRemoval {
    /// The record with the outliers replaced by gaps.
    pub record: Record,
    /// Samples of the record made gaps.
    pub replaced: usize,
    /// Frequency outliers that could not be removed by blanking one phase
    /// sample: isolated frequency outliers between good phase samples, i.e.
    /// phase steps (indices i of y_i). Always empty for frequency data.
    pub steps: Vec<usize>,
}

/// Replace outliers by gaps.
///
/// Frequency data: each outlying y_i becomes a gap.
/// Phase data: a phase sample x_j becomes a gap when each of its
/// neighbouring frequencies y_{j−1}, y_j is an outlier, a gap or beyond the
/// record's end, and at least one is an outlier — a glitch in x_j. An
/// outlier y_i between two otherwise good phase samples is a step in phase,
/// which blanking a sample cannot remove; it is left in place and listed in
/// [`OutlierRemoval::steps`].
pub fn remove_outliers(record: &Record, outliers: &Outliers) -> OutlierRemoval {
    match record {
        Record::Frequency(f) => {
            let mut y = f.y.clone();
            for &i in &outliers.indices {
                if let Some(v) = y.get_mut(i) {
                    *v = f64::NAN;
                }
            }
            OutlierRemoval {
                record: Record::Frequency(FrequencyRecord { y, tau0: f.tau0 }),
                replaced: outliers.indices.len(),
                steps: Vec::new(),
            }
        }
        Record::Phase(p) => {
            let n = p.x.len();
            let ny = n.saturating_sub(1);
            let mut is_out = vec![false; ny];
            for &i in &outliers.indices {
                if i < ny {
                    is_out[i] = true;
                }
            }
            // y_i is "bad" when it is an outlier or a gap.
            let bad = |i: usize| i >= ny || is_out[i] || p.x[i].is_nan() || p.x[i + 1].is_nan();
            let mut x = p.x.clone();
            let mut blank = vec![false; n];
            let mut replaced = 0;
            for j in 0..n {
                if p.x[j].is_nan() {
                    continue;
                }
                let left = j.checked_sub(1);
                let left_bad = match left {
                    Some(i) => bad(i),
                    None => true,
                };
                let right_bad = bad(j);
                let any_out = left.is_some_and(|i| is_out[i]) || (j < ny && is_out[j]);
                if left_bad && right_bad && any_out {
                    blank[j] = true;
                    replaced += 1;
                }
            }
            let steps = outliers
                .indices
                .iter()
                .copied()
                .filter(|&i| i < ny && !blank[i] && !blank[i + 1])
                .collect();
            for (v, b) in x.iter_mut().zip(&blank) {
                if *b {
                    *v = f64::NAN;
                }
            }
            OutlierRemoval {
                record: Record::Phase(PhaseRecord { x, tau0: p.tau0 }),
                replaced,
                steps,
            }
        }
    }
}

/// What gap filling did.
#[derive(Debug, Clone, PartialEq)]
pub struct GapFill {
    /// The filled record.
    pub record: Record,
    /// Samples filled.
    pub filled: usize,
    /// Gaps left: those before the first or after the last valid sample.
    pub left: usize,
}

/// Fill interior gaps by linear interpolation between the nearest valid
/// samples: v_j = v_a + (v_b − v_a)·(j − a)/(b − a) for a < j < b.
///
/// For phase data this interpolates phase (the frequency across the gap is
/// the mean frequency between its ends). For frequency data it interpolates
/// y (phase across the gap then follows a smooth curve). Gaps at the start or
/// end have no second neighbour and are left.
pub fn fill_gaps(record: &Record) -> GapFill {
    fn fill(v: &mut [f64]) -> (usize, usize) {
        let mut filled = 0;
        let mut prev: Option<usize> = None;
        for j in 0..v.len() {
            if v[j].is_nan() {
                continue;
            }
            if let Some(a) = prev {
                if j > a + 1 {
                    let (va, vb) = (v[a], v[j]);
                    let span = (j - a) as f64;
                    for (k, slot) in v.iter_mut().enumerate().take(j).skip(a + 1) {
                        *slot = va + (vb - va) * (k - a) as f64 / span;
                        filled += 1;
                    }
                }
            }
            prev = Some(j);
        }
        let left = v.iter().filter(|x| x.is_nan()).count();
        (filled, left)
    }
    match record {
        Record::Phase(p) => {
            let mut x = p.x.clone();
            let (filled, left) = fill(&mut x);
            GapFill {
                record: Record::Phase(PhaseRecord { x, tau0: p.tau0 }),
                filled,
                left,
            }
        }
        Record::Frequency(f) => {
            let mut y = f.y.clone();
            let (filled, left) = fill(&mut y);
            GapFill {
                record: Record::Frequency(FrequencyRecord { y, tau0: f.tau0 }),
                filled,
                left,
            }
        }
    }
}

/// Decimate by an integer factor n, giving τ0' = n·τ0.
///
/// Phase: keep every n-th sample, x'_k = x_{kn} (phase is a point value, so
/// this is exact; NIST SP 1065 §5). Frequency: average blocks of n values,
/// y'_k = (1/n) Σ_{i=kn}^{kn+n−1} y_i (the mean frequency over the longer
/// interval); a block holding a gap gives a gap, and a final partial block is
/// dropped. The result must keep at least 2 samples.
pub fn decimate(record: &Record, n: usize) -> Result<Record> {
    if n == 0 {
        return Err(Error::invalid(
            "decimation factor 0: expected a whole number ≥ 1",
        ));
    }
    let tau0 = record.tau0() * n as f64;
    let out = match record {
        Record::Phase(p) => Record::Phase(PhaseRecord {
            x: p.x.iter().step_by(n).copied().collect(),
            tau0,
        }),
        Record::Frequency(f) => Record::Frequency(FrequencyRecord {
            y: f.y
                .chunks_exact(n)
                .map(|c| c.iter().sum::<f64>() / n as f64)
                .collect(),
            tau0,
        }),
    };
    if out.len() < 2 {
        return Err(Error::insufficient(format!(
            "decimating {} samples by {n} leaves {}; expected at least 2",
            record.len(),
            out.len()
        )));
    }
    Ok(out)
}

/// The figures `tauwise inspect` shows for a record.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    /// Samples, gaps included.
    pub points: usize,
    /// Missing samples.
    pub gaps: usize,
    /// (N − 1)·τ0 for phase, N·τ0 for frequency (the time the record covers).
    pub span: f64,
    /// Sampling interval.
    pub tau0: f64,
    /// Mean fractional-frequency offset ([`mean_frequency`]).
    pub frequency_offset: Option<f64>,
    /// Linear drift fit ([`fit_drift`]), when at least 2 frequency values.
    pub drift: Option<DriftFit>,
    /// Frequency outliers beyond the requested MAD limit.
    pub outliers: Option<Outliers>,
}

/// Summarise a record: size, span, offset, linear drift, outliers beyond
/// `outlier_limit`·MAD of the frequency.
pub fn summarize(record: &Record, outlier_limit: f64) -> Result<Summary> {
    let y = frequency_of(record);
    let span = match record {
        Record::Phase(p) => p.span(),
        Record::Frequency(f) => f.len() as f64 * f.tau0,
    };
    let outliers = match find_outliers_y(&y, outlier_limit) {
        Ok(o) => Some(o),
        Err(Error::Insufficient(_)) => None,
        Err(e) => return Err(e),
    };
    Ok(Summary {
        points: record.len(),
        gaps: record.gaps(),
        span,
        tau0: record.tau0(),
        frequency_offset: mean_valid(&y),
        drift: fit_drift_y(&y, record.tau0(), DriftModel::Linear).ok(),
        outliers,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn freq(y: Vec<f64>) -> Record {
        Record::Frequency(FrequencyRecord::new(y, 1.0).unwrap())
    }

    #[test]
    fn solve_3x3() {
        let x = solve(
            [[2.0, 1.0, 0.0], [1.0, 3.0, 1.0], [0.0, 1.0, 4.0]],
            [3.0, 5.0, 5.0],
        )
        .unwrap();
        for v in x {
            assert!((v - 1.0).abs() < 1e-14);
        }
    }

    /// A small deterministic generator for test data (xorshift64*).
    struct Rng(u64);
    impl Rng {
        fn next(&mut self) -> f64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        }
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }

    #[test]
    fn median_matches_sorting() {
        let mut r = Rng(7);
        for n in [1, 2, 3, 10, 101, 1000] {
            let v: Vec<f64> = (0..n).map(|_| r.next()).collect();
            let mut s = v.clone();
            s.sort_by(f64::total_cmp);
            let want = if n % 2 == 1 {
                s[n / 2]
            } else {
                0.5 * (s[n / 2 - 1] + s[n / 2])
            };
            let mut w = v.clone();
            assert_eq!(median_in_place(&mut w), Some(want));
        }
    }

    #[test]
    fn linear_fit_matches_textbook_formula() {
        // Direct least-squares slope: b = (nΣty − ΣtΣy)/(nΣt² − (Σt)²).
        let mut r = Rng(11);
        let tau0 = 0.5;
        let mut y: Vec<f64> = (0..500)
            .map(|i| 1e-9 + 2e-12 * i as f64 + 1e-10 * r.next())
            .collect();
        y[17] = f64::NAN;
        y[300] = f64::NAN;
        let fit = fit_drift_y(&y, tau0, DriftModel::Linear).unwrap();
        let pts: Vec<(f64, f64)> = y
            .iter()
            .enumerate()
            .filter(|(_, v)| !v.is_nan())
            .map(|(i, &v)| ((i as f64 + 0.5) * tau0, v))
            .collect();
        let n = pts.len() as f64;
        let (st, sy) = pts.iter().fold((0.0, 0.0), |a, p| (a.0 + p.0, a.1 + p.1));
        let stt: f64 = pts.iter().map(|p| p.0 * p.0).sum();
        let sty: f64 = pts.iter().map(|p| p.0 * p.1).sum();
        let b = (n * sty - st * sy) / (n * stt - st * st);
        assert!(close(fit.rate, b, 1e-9), "{} vs {b}", fit.rate);
        assert!(close(fit.offset, sy / n, 1e-12));
        assert_eq!(fit.points, 498);
        assert!(close(fit.per_day(), b * 86400.0, 1e-9));
    }

    #[test]
    fn quadratic_fit_is_exact_and_satisfies_normal_equations() {
        // Frequency that is the interval mean of y(t) = a + b·u + c·u²
        // (analytic: mean of u² over an interval of length τ0 is u² + τ0²/12).
        let tau0 = 2.0;
        let (a, b, c) = (3e-8, -4e-13, 5e-18);
        let n = 1000;
        let tc = n as f64 * tau0 / 2.0;
        let y: Vec<f64> = (0..n)
            .map(|i| {
                let u = (i as f64 + 0.5) * tau0 - tc;
                a + b * u + c * (u * u + tau0 * tau0 / 12.0)
            })
            .collect();
        let fit = fit_drift_y(&y, tau0, DriftModel::Quadratic).unwrap();
        assert!((fit.centre - tc).abs() < 1e-9);
        assert!(close(fit.offset, a, 1e-9), "{}", fit.offset);
        assert!(close(fit.rate, b, 1e-7), "{}", fit.rate);
        assert!(close(fit.curvature, c, 1e-6), "{}", fit.curvature);
        assert!(fit.residual_rms < 1e-20);
        // On noisy data the residuals are orthogonal to 1, u and u² + τ0²/12.
        let mut r = Rng(3);
        let noisy: Vec<f64> = y.iter().map(|v| v + 1e-9 * r.next()).collect();
        let f2 = fit_drift_y(&noisy, tau0, DriftModel::Quadratic).unwrap();
        let mut dots = [0.0f64; 3];
        for (i, &v) in noisy.iter().enumerate() {
            let t = (i as f64 + 0.5) * tau0;
            let u = t - f2.centre;
            let res = v - f2.frequency_at(t, tau0);
            let basis = [1.0, u / tc, (u * u + tau0 * tau0 / 12.0) / (tc * tc)];
            for k in 0..3 {
                dots[k] += res * basis[k];
            }
        }
        for d in dots {
            assert!(d.abs() < 1e-20, "{dots:?}");
        }
    }

    #[test]
    fn drift_removal_from_phase_matches_removal_from_frequency() {
        let tau0 = 1.0;
        let mut r = Rng(5);
        let y: Vec<f64> = (0..400)
            .map(|i| 1e-9 + 3e-12 * i as f64 + 1e-11 * r.next())
            .collect();
        let fr = Record::Frequency(FrequencyRecord::new(y, tau0).unwrap());
        let ph = Record::Phase(fr.to_phase());
        for model in [DriftModel::Linear, DriftModel::Quadratic] {
            let f1 = fit_drift(&fr, model).unwrap();
            let f2 = fit_drift(&ph, model).unwrap();
            assert!(close(f1.rate, f2.rate, 1e-6));
            let a = remove_drift(&fr, &f1).to_frequency().y;
            let b = remove_drift(&ph, &f2).to_frequency().y;
            for (u, v) in a.iter().zip(&b) {
                assert!((u - v).abs() < 1e-16, "{model:?}: {u} vs {v}");
            }
            // After removal no drift is left, and the centre frequency is kept.
            let left = fit_drift(&remove_drift(&fr, &f1), model).unwrap();
            assert!(left.rate.abs() < 1e-22, "{}", left.rate);
            assert!(close(left.offset, f1.offset, 1e-9));
        }
    }

    #[test]
    fn mean_frequency_of_phase_is_end_to_end_slope() {
        // Analytic: for gap-free phase, the mean of first differences is
        // (x_{N−1} − x_0)/((N−1)τ0).
        let x: Vec<f64> = (0..50).map(|i| 1e-9 * (i as f64).powi(2)).collect();
        let r = Record::Phase(PhaseRecord::new(x.clone(), 2.0).unwrap());
        let m = mean_frequency(&r).unwrap();
        assert!(close(m, (x[49] - x[0]) / (49.0 * 2.0), 1e-12));
    }

    #[test]
    fn outliers_by_scaled_mad() {
        // y alternates ±1 around 10: median 10, median |y − m| = 1, scaled MAD
        // 1.4826 (1/Φ⁻¹(3/4), analytic). 20 lies 10/1.4826 = 6.7 MADs away.
        let mut y: Vec<f64> = (0..21)
            .map(|i| 10.0 + if i % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        y[4] = 20.0;
        y[9] = 10.0 - 6.0;
        y[12] = f64::NAN;
        let o = find_outliers_y(&y, 5.0).unwrap();
        assert_eq!(o.median, 10.0);
        assert!(close(o.mad, MAD_SCALE, 1e-12));
        assert_eq!(o.indices, vec![4]);
        assert_eq!(o.tested, 20);
        let o3 = find_outliers_y(&y, 3.0).unwrap();
        assert_eq!(o3.indices, vec![4, 9]);
        assert!(find_outliers_y(&y, 0.0).is_err());
        // Quantised data: MAD 0, fallback scale.
        let mut q = vec![0.0; 100];
        q[10] = 1.0;
        q[20] = 50.0;
        let o = find_outliers_y(&q, 5.0).unwrap();
        assert!(o.mad_fallback);
        assert_eq!(o.indices, vec![20]);
    }

    #[test]
    fn outlier_replacement_in_phase() {
        // A glitch at x_5 and a step between x_12 and x_13.
        let mut r = Rng(9);
        let mut x: Vec<f64> = (0..20)
            .map(|i| i as f64 * 1e-9 + 1e-10 * r.next())
            .collect();
        x[5] += 1e-6;
        for v in x.iter_mut().skip(13) {
            *v += 1e-6;
        }
        let r = Record::Phase(PhaseRecord::new(x, 1.0).unwrap());
        let o = find_outliers(&r, 5.0).unwrap();
        assert_eq!(o.indices, vec![4, 5, 12]);
        let rem = remove_outliers(&r, &o);
        assert_eq!(rem.replaced, 1);
        assert_eq!(rem.steps, vec![12]);
        let xp = rem.record.to_phase().x;
        assert!(xp[5].is_nan());
        assert_eq!(rem.record.gaps(), 1);
        // Frequency data: the outlying value itself.
        let f = freq(vec![0.0, 1e-9, -1e-9, 1e-6, 0.0, 2e-9, -2e-9]);
        let o = find_outliers(&f, 5.0).unwrap();
        let rem = remove_outliers(&f, &o);
        assert_eq!(rem.replaced, 1);
        assert!(rem.record.to_frequency().y[3].is_nan());
    }

    #[test]
    fn gap_filling_is_linear() {
        let n = f64::NAN;
        let r = Record::Phase(PhaseRecord::new(vec![n, 1.0, n, n, 4.0, 5.0, n], 1.0).unwrap());
        let g = fill_gaps(&r);
        let x = g.record.to_phase().x;
        assert_eq!(&x[1..6], &[1.0, 2.0, 3.0, 4.0, 5.0]);
        assert!(x[0].is_nan() && x[6].is_nan());
        assert_eq!((g.filled, g.left), (2, 2));
    }

    #[test]
    fn summary_of_constructed_record() {
        // x = y0·t + D·t²/2: y_i = y0 + D·(i + ½)τ0 exactly (analytic).
        let (y0, d, tau0) = (2e-9, 1e-14, 10.0);
        let x: Vec<f64> = (0..1000)
            .map(|i| {
                let t = i as f64 * tau0;
                y0 * t + d * t * t / 2.0
            })
            .collect();
        let s = summarize(&Record::Phase(PhaseRecord::new(x, tau0).unwrap()), 5.0).unwrap();
        assert_eq!((s.points, s.gaps), (1000, 0));
        assert_eq!(s.span, 9990.0);
        let mean = y0 + d * 999.0 * tau0 / 2.0;
        assert!(close(s.frequency_offset.unwrap(), mean, 1e-9));
        assert!(close(s.drift.unwrap().per_day(), d * 86400.0, 1e-6));
    }

    fn record_strategy() -> impl proptest::strategy::Strategy<Value = (Record, f64)> {
        use proptest::prelude::*;
        (
            proptest::collection::vec(prop_oneof![4 => -1e-6f64..1e-6, 1 => Just(f64::NAN)], 0..60),
            any::<bool>(),
            0.5f64..10.0,
            0.5f64..8.0,
        )
            .prop_map(|(v, phase, tau0, k)| {
                let r = if phase {
                    Record::Phase(PhaseRecord { x: v, tau0 })
                } else {
                    Record::Frequency(FrequencyRecord { y: v, tau0 })
                };
                (r, k)
            })
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig { cases: 200, ..Default::default() })]

        /// Any record, however short or gappy: no panic, and the documented
        /// invariants hold.
        #[test]
        fn never_panics_and_keeps_invariants((r, k) in record_strategy()) {
            let _ = summarize(&r, k);
            if let Ok(o) = find_outliers(&r, k) {
                let rem = remove_outliers(&r, &o);
                proptest::prop_assert_eq!(rem.record.len(), r.len());
                proptest::prop_assert!(rem.record.gaps() >= r.gaps());
                proptest::prop_assert_eq!(rem.record.gaps() - r.gaps(), rem.replaced);
            }
            for model in [DriftModel::Linear, DriftModel::Quadratic] {
                if let Ok(f) = fit_drift(&r, model) {
                    let d = remove_drift(&r, &f);
                    proptest::prop_assert_eq!(d.len(), r.len());
                    proptest::prop_assert_eq!(d.gaps(), r.gaps());
                }
            }
            let g = fill_gaps(&r);
            proptest::prop_assert_eq!(g.record.len(), r.len());
            proptest::prop_assert_eq!(g.record.gaps(), g.left);
            proptest::prop_assert_eq!(g.filled + g.left, r.gaps());
            for n in 1..4 {
                if let Ok(d) = decimate(&r, n) {
                    proptest::prop_assert!(d.len() >= 2);
                    proptest::prop_assert_eq!(d.tau0(), r.tau0() * n as f64);
                }
            }
        }
    }

    #[test]
    fn decimation() {
        let r = Record::Phase(PhaseRecord::new((0..10).map(f64::from).collect(), 1.0).unwrap());
        let d = decimate(&r, 3).unwrap();
        assert_eq!(d.tau0(), 3.0);
        assert_eq!(d.to_phase().x, vec![0.0, 3.0, 6.0, 9.0]);
        let f = decimate(&freq(vec![1.0, 3.0, f64::NAN, 1.0, 5.0]), 2).unwrap();
        let y = f.to_frequency().y;
        assert_eq!(y[0], 2.0);
        assert!(y[1].is_nan());
        assert_eq!(y.len(), 2);
        assert!(decimate(&r, 0).is_err());
        assert!(decimate(&r, 10).is_err());
    }
}
