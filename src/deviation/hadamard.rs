//! The Hadamard deviation, non-overlapping and overlapping (NIST SP 1065,
//! §5.2.8–5.2.9): a third difference of phase, so that a linear frequency
//! drift (quadratic phase) drops out.

use super::allan::finish;
use super::gaps::Prepared;
use super::sums::{sum_sq, sum_sq_decimated, D3};
use super::Estimate;

/// Non-overlapping Hadamard deviation (NIST SP 1065 eq. 19, phase form):
///
/// Hσ_y²(τ) = 1/(6τ²(K−3)) Σ_{j=0}^{K−4} (x_{(j+3)m} − 3x_{(j+2)m} + 3x_{(j+1)m} − x_{jm})²,
///
/// on the K = ⌊(N−1)/m⌋ + 1 samples spaced by τ. Valid for 1 ≤ m ≤ (N−1)/3.
pub(crate) fn hdev(p: &Prepared, m: usize) -> Option<Estimate> {
    let n = p.x.len();
    if m == 0 || n < 3 * m + 1 {
        return None;
    }
    let k = (n - 1) / m + 1;
    let tau = m as f64 * p.tau0;
    let (s, used) = sum_sq_decimated(p.x, &p.gaps, m, k - 3, &D3);
    finish(tau, m, s, 6.0 * tau * tau, used)
}

/// Overlapping Hadamard deviation (NIST SP 1065 eq. 20, phase form):
///
/// Hσ_y²(τ) = 1/(6τ²(N−3m)) Σ_{i=0}^{N−3m−1} (x_{i+3m} − 3x_{i+2m} + 3x_{i+m} − x_i)².
///
/// Valid for 1 ≤ m ≤ (N−1)/3. O(N) per τ.
pub(crate) fn ohdev(p: &Prepared, m: usize) -> Option<Estimate> {
    let n = p.x.len();
    if m == 0 || n < 3 * m + 1 {
        return None;
    }
    let tau = m as f64 * p.tau0;
    let (s, used) = sum_sq(p.x, &p.gaps, m, 0, n - 3 * m, &D3);
    finish(tau, m, s, 6.0 * tau * tau, used)
}
