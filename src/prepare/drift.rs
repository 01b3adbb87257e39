//! Frequency drift: the linear and quadratic models, their least-squares
//! fit to y(t), and their removal from a record.

use super::offset::frequency_of;
use super::DAY;
use crate::error::{Error, Result};
use crate::record::{FrequencyRecord, PhaseRecord, Record};

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

impl std::str::FromStr for DriftModel {
    type Err = crate::units::UnitError;

    /// `linear` or `quadratic` (any case).
    fn from_str(text: &str) -> std::result::Result<Self, Self::Err> {
        match text.trim().to_ascii_lowercase().as_str() {
            "linear" => Ok(DriftModel::Linear),
            "quadratic" => Ok(DriftModel::Quadratic),
            _ => Err(crate::units::UnitError::Bad {
                text: text.to_string(),
                what: "drift model",
                expected:
                    "linear or quadratic (a least-squares line or parabola through the frequency)",
            }),
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

/// Rows of [`least_squares_3`] folded into one Householder QR at a time: a
/// block this long costs 128 KiB, whatever the record's length.
const QR_BLOCK: usize = 4096;

/// Least squares min ‖F·c − d‖ over the rows (f_i, d_i), f_i ∈ ℝ³, by
/// Householder QR (nalgebra) of the augmented matrix [F d] — never the
/// normal equations FᵀF, whose condition number is the square of F's.
///
/// The rows are streamed: a block of [`QR_BLOCK`] rows is stacked under the
/// triangular factor of the rows so far and factored again, which gives the
/// same factor as one QR of all rows (Golub & Van Loan, *Matrix
/// Computations*, §5.6, updating the QR factorization) while holding one block
/// in memory. The final factor is [R z; 0 ρ]; the solution is R⁻¹z. `None`
/// when R is singular (a pivot below 10⁻¹² of its largest entry).
fn least_squares_3(rows: impl Iterator<Item = ([f64; 3], f64)>) -> Option<[f64; 3]> {
    use nalgebra::DMatrix;
    fn fold(top: Option<DMatrix<f64>>, block: &mut Vec<[f64; 4]>) -> DMatrix<f64> {
        let above = top.as_ref().map_or(0, |t| t.nrows());
        let mut m = DMatrix::<f64>::zeros(above + block.len(), 4);
        if let Some(t) = &top {
            m.rows_mut(0, above).copy_from(t);
        }
        for (i, row) in block.iter().enumerate() {
            for (j, v) in row.iter().enumerate() {
                m[(above + i, j)] = *v;
            }
        }
        block.clear();
        m.qr().r()
    }
    let mut top: Option<DMatrix<f64>> = None;
    let mut block: Vec<[f64; 4]> = Vec::with_capacity(QR_BLOCK);
    for (f, d) in rows {
        block.push([f[0], f[1], f[2], d]);
        if block.len() == QR_BLOCK {
            top = Some(fold(top, &mut block));
        }
    }
    if !block.is_empty() {
        top = Some(fold(top, &mut block));
    }
    let r = top?;
    if r.nrows() < 3 {
        return None;
    }
    let scale = (0..3)
        .flat_map(|j| (0..3).map(move |k| (j, k)))
        .fold(0.0f64, |s, (j, k)| s.max(r[(j, k)].abs()));
    let mut x = [0.0; 3];
    for j in (0..3).rev() {
        let piv = r[(j, j)];
        if !(piv.abs() > 1e-12 * scale) {
            return None;
        }
        let s: f64 = (j + 1..3).map(|k| r[(j, k)] * x[k]).sum();
        x[j] = (r[(j, 3)] - s) / piv;
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
    fit_drift_at(y.len(), |i| y[i], tau0, model)
}

/// [`fit_drift_y`] on y_i = `at(i)`, i < len, read where used (no copy:
/// `inspect` fits the frequencies of a phase record this way).
pub(crate) fn fit_drift_at(
    len: usize,
    at: impl Fn(usize) -> f64,
    tau0: f64,
    model: DriftModel,
) -> Result<DriftFit> {
    let values = || (0..len).map(&at);
    let need = match model {
        DriftModel::Linear => 2,
        DriftModel::Quadratic => 3,
    };
    let t = |i: usize| (i as f64 + 0.5) * tau0;
    let (mut st, mut sy, mut n) = (0.0, 0.0, 0usize);
    let (mut tmin, mut tmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for (i, v) in values().enumerate() {
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
        values()
            .enumerate()
            .filter(|(_, v)| !v.is_nan())
            .map(|(i, v)| ((t(i) - centre) / h, v - ybar))
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
            let rows = valid().map(|(s, d)| ([1.0, s, s * s + q0], d));
            let x = least_squares_3(rows).ok_or_else(|| {
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
    let ss: f64 = values()
        .enumerate()
        .filter(|(_, v)| !v.is_nan())
        .map(|(i, v)| (v - fit0.frequency_at(t(i), tau0)).powi(2))
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prepare::testing::{close, Rng};

    /// The solver this module used before nalgebra, kept as the reference:
    /// the normal equations FᵀF·c = Fᵀd solved by Gaussian elimination with
    /// partial pivoting.
    fn normal_equations_reference(rows: &[([f64; 3], f64)]) -> Option<[f64; 3]> {
        let mut a = [[0.0; 3]; 3];
        let mut b = [0.0; 3];
        for (f, d) in rows {
            for j in 0..3 {
                for k in 0..3 {
                    a[j][k] += f[j] * f[k];
                }
                b[j] += f[j] * d;
            }
        }
        const N: usize = 3;
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

    /// Analytic: an exactly quadratic d is fitted exactly.
    #[test]
    fn least_squares_fits_an_exact_quadratic() {
        let rows: Vec<([f64; 3], f64)> = (0..11)
            .map(|i| {
                let s = -1.0 + 0.2 * i as f64;
                ([1.0, s, s * s], 2.0 - 3.0 * s + 0.5 * s * s)
            })
            .collect();
        let x = least_squares_3(rows.into_iter()).unwrap();
        for (v, want) in x.iter().zip([2.0, -3.0, 0.5]) {
            assert!((v - want).abs() < 1e-14, "{x:?}");
        }
    }

    /// The QR solution equals the old normal-equations solution on the same
    /// rows to 1e−10 relative: short and long (several QR blocks) drift fits
    /// with noise and gaps, the basis the drift fit uses.
    #[test]
    fn least_squares_agrees_with_the_old_solver() {
        let mut r = Rng(21);
        for &(n, q0) in &[
            (3usize, 0.0),
            (7, 1e-3),
            (1000, 1e-6),
            (3 * QR_BLOCK + 17, 1e-9),
        ] {
            let rows: Vec<([f64; 3], f64)> = (0..n)
                .filter(|i| i % 13 != 5)
                .map(|i| {
                    let s = -1.0 + 2.0 * i as f64 / (n - 1) as f64;
                    let d = 1e-9 * (0.3 - 0.7 * s + 0.45 * s * s) + 1e-10 * r.next();
                    ([1.0, s, s * s + q0], d)
                })
                .collect();
            let new = least_squares_3(rows.iter().copied()).unwrap();
            let old = normal_equations_reference(&rows).unwrap();
            for (a, b) in new.iter().zip(&old) {
                assert!(close(*a, *b, 1e-10), "n = {n}: {new:?} vs {old:?}");
            }
        }
        assert!(least_squares_3(std::iter::empty()).is_none());
        let two = [([1.0, -1.0, 1.0], 0.0), ([1.0, 1.0, 1.0], 1.0)];
        assert!(least_squares_3(two.into_iter()).is_none());
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
}
