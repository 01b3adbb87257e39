//! The random part's power-law model, estimated from the record when the
//! user gives none.
//!
//! Overlapping Allan variance at octave averaging factors (NIST SP 1065
//! eq. 11, computed on phase with every term that touches a gap skipped),
//!
//! σ_y²(mτ0) = Σ_i (x_{i+2m} − 2x_{i+m} + x_i)² / (2 m² τ0² · terms),
//!
//! then a non-negative least-squares fit of h_2, h_0, h_−1, h_−2 through the
//! IEEE Std 1139 closed forms ([`PowerLaw::avar`]), in relative terms
//! (Σ_k (σ²_model(τ_k)/σ²_k − 1)²), by trying every subset of the four terms
//! and keeping the best fit whose coefficients are all positive. The aging
//! law is removed from the record first, so that drift is not mistaken for
//! RWFM. (FPM is left out: over the τ that matter for holdover it is
//! indistinguishable from WPM and contributes nothing.)

use crate::error::{Error, Result};
use crate::model::PowerLaw;
use crate::record::PhaseRecord;

/// Overlapping ADEV² at averaging factor m (None when no term is usable).
pub fn oavar(rec: &PhaseRecord, m: usize) -> Option<f64> {
    let x = &rec.x;
    if m == 0 || x.len() < 2 * m + 1 {
        return None;
    }
    let (mut s, mut k) = (0.0, 0usize);
    for i in 0..x.len() - 2 * m {
        let d = x[i + 2 * m] - 2.0 * x[i + m] + x[i];
        if !d.is_nan() {
            s += d * d;
            k += 1;
        }
    }
    (k > 0).then(|| s / (2.0 * (m * m) as f64 * rec.tau0 * rec.tau0 * k as f64))
}

/// Solve the small normal equations A·h = b by Gaussian elimination with
/// partial pivoting.
fn solve(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for col in 0..n {
        let piv = (col..n).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[piv][col].abs() < 1e-300 {
            return None;
        }
        a.swap(col, piv);
        b.swap(col, piv);
        let (top, bottom) = a.split_at_mut(col + 1);
        let pivot_row = &top[col];
        for (k, row) in bottom.iter_mut().enumerate() {
            let f = row[col] / pivot_row[col];
            for (v, p) in row[col..].iter_mut().zip(&pivot_row[col..]) {
                *v -= f * p;
            }
            b[col + 1 + k] -= f * b[col];
        }
    }
    let mut h = vec![0.0; n];
    for r in (0..n).rev() {
        let s: f64 = (r + 1..n).map(|c| a[r][c] * h[c]).sum();
        h[r] = (b[r] - s) / a[r][r];
    }
    Some(h)
}

/// Fit h_2, h_0, h_−1, h_−2 to the octave overlapping AVAR of `rec` (see the
/// module notes). `f_h` is the model's cut-off (normally 1/(2τ0)).
pub fn fit_noise(rec: &PhaseRecord, f_h: f64) -> Result<PowerLaw> {
    let mut pts = Vec::new();
    let mut m = 1usize;
    while 2 * m < rec.x.len() / 4 {
        if let Some(v) = oavar(rec, m) {
            if v > 0.0 {
                pts.push((m as f64 * rec.tau0, v));
            }
        }
        m *= 2;
    }
    if pts.is_empty() {
        return Err(Error::insufficient(
            "estimating the noise model needs a record of at least 8 valid phase points",
        ));
    }
    const ALPHAS: [i32; 4] = [2, 0, -1, -2];
    let basis = |alpha: i32, tau: f64| {
        let mut p = PowerLaw::zero(f_h);
        p.set(alpha, 1.0);
        p.avar(tau)
    };
    let mut best: Option<(f64, PowerLaw)> = None;
    for mask in 1u32..16 {
        let act: Vec<i32> = ALPHAS
            .iter()
            .enumerate()
            .filter(|(i, _)| mask & (1 << i) != 0)
            .map(|(_, &a)| a)
            .collect();
        if act.len() > pts.len() {
            continue;
        }
        // Rows g_j(τ_k)/σ²_k, target 1.
        let rows: Vec<Vec<f64>> = pts
            .iter()
            .map(|&(t, v)| act.iter().map(|&a| basis(a, t) / v).collect())
            .collect();
        // Scale columns for conditioning.
        let scale: Vec<f64> = (0..act.len())
            .map(|j| rows.iter().map(|r| r[j] * r[j]).sum::<f64>().sqrt())
            .collect();
        let na = act.len();
        let mut ata = vec![vec![0.0; na]; na];
        let mut atb = vec![0.0; na];
        for r in &rows {
            for i in 0..na {
                atb[i] += r[i] / scale[i];
                for j in 0..na {
                    ata[i][j] += r[i] / scale[i] * r[j] / scale[j];
                }
            }
        }
        let Some(h) = solve(ata, atb) else { continue };
        if h.iter().any(|&v| v.is_nan() || v <= 0.0) {
            continue;
        }
        let mut model = PowerLaw::zero(f_h);
        for (j, &a) in act.iter().enumerate() {
            model.set(a, h[j] / scale[j]);
        }
        let cost: f64 = pts
            .iter()
            .map(|&(t, v)| (model.avar(t) / v - 1.0).powi(2))
            .sum();
        if best.as_ref().map_or(true, |b| cost < b.0) {
            best = Some((cost, model));
        }
    }
    best.map(|b| b.1)
        .ok_or_else(|| Error::insufficient("no power-law model fits the record's Allan variance"))
}
