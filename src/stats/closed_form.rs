//! Closed-form EDF of the overlapping Allan variance: D. A. Howe, D. W. Allan
//! and J. A. Barnes, "Properties of signal sources and measurement methods",
//! Proc. 35th Frequency Control Symposium (1981), as tabulated in NIST SP 1065
//! (Riley 2008, §5.3.2). N is the number of phase points and m the averaging
//! factor. These are approximations (a few per cent); tauwise uses
//! [`fn@crate::stats::edf`] and keeps these as an independent cross-check.
//!
//! | noise | EDF |
//! |---|---|
//! | WPM | (N + 1)(N − 2m) / (2(N − m)) |
//! | FPM | exp( sqrt( ln((N − 1)/(2m)) · ln((2m + 1)(N − 1)/4) ) ) |
//! | WFM | [3(N − 1)/(2m) − 2(N − 2)/N] · 4m²/(4m² + 5) |
//! | FFM | m = 1: 2(N − 2)²/(2.3N − 4.9); m ≥ 2: 5N²/(4m(N + 3m)) |
//! | RWFM | (N − 2)/m · ((N − 1)² − 3m(N − 1) + 4m²)/(N − 3)² |

/// Howe–Allan–Barnes EDF of the overlapping Allan variance for noise
/// S_y ∝ f^α (α = 2 … −2), `m` averaging factor, `n` phase points.
///
/// `None` outside α = 2 … −2, for m = 0, when 2m ≥ N, or when the formula
/// is not positive.
///
/// ```
/// use tauwise::stats::closed_form::oadev_edf;
/// // White FM, N = 1001, m = 1 (NIST SP 1065 closed form): 665.8.
/// assert!((oadev_edf(0, 1, 1001).unwrap() - 665.8).abs() < 0.1);
/// ```
pub fn oadev_edf(alpha: i32, m: usize, n: usize) -> Option<f64> {
    if m == 0 || n < 4 || 2 * m >= n {
        return None;
    }
    let nf = n as f64;
    let mf = m as f64;
    let v = match alpha {
        2 => (nf + 1.0) * (nf - 2.0 * mf) / (2.0 * (nf - mf)),
        1 => {
            let a = ((nf - 1.0) / (2.0 * mf)).ln();
            let b = ((2.0 * mf + 1.0) * (nf - 1.0) / 4.0).ln();
            if a * b < 0.0 {
                return None;
            }
            (a * b).sqrt().exp()
        }
        0 => {
            (3.0 * (nf - 1.0) / (2.0 * mf) - 2.0 * (nf - 2.0) / nf) * 4.0 * mf * mf
                / (4.0 * mf * mf + 5.0)
        }
        -1 => {
            if m == 1 {
                2.0 * (nf - 2.0).powi(2) / (2.3 * nf - 4.9)
            } else {
                5.0 * nf * nf / (4.0 * mf * (nf + 3.0 * mf))
            }
        }
        -2 => {
            (nf - 2.0) / mf * ((nf - 1.0).powi(2) - 3.0 * mf * (nf - 1.0) + 4.0 * mf * mf)
                / (nf - 3.0).powi(2)
        }
        _ => return None,
    };
    (v.is_finite() && v > 0.0).then_some(v)
}
