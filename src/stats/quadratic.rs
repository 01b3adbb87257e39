//! Mean and EDF of a variance estimator written as a quadratic form in the
//! phase samples, under power-law noise.
//!
//! Every estimator of this crate's σ family is, before its normalisation, a
//! sum of squares of linear combinations of the phase samples,
//! Q(x) = Σ_t (c_tᵀ x)² = xᵀ A x with A = Σ_t c_t c_tᵀ. For Gaussian x with
//! (generalised) autocovariance s(k) — the matrix S_{ij} = s(|i − j|) —
//!
//! - E\[Q\] = tr(A S),
//! - Var\[Q\] = 2 tr((A S)²),
//! - EDF ν = 2 E\[Q\]² / Var\[Q\] = tr(A S)² / tr((A S)²),
//!
//! the definition of the EDF (Var\[σ̂²\] = 2σ⁴/ν) evaluated exactly. This is
//! the principle of Greenhall & Riley, "Uncertainty of stability variances
//! based on finite differences" (PTTI 2003), who evaluate it in closed form
//! for the estimators whose terms are all alike; here it is evaluated on the
//! matrices, which serves any estimator — the reflected ends of the total
//! family included — at the price of O(n²·w) work for n samples and
//! combinations w samples wide.
//!
//! The power-law phase of FM noise is not stationary; its generalised
//! autocovariance (GACV, [`crate::stats::gacv`]) is defined only up to a
//! polynomial, which every combination c_t annihilates (each c_t here kills
//! constants and straight lines, and those of the Hadamard family kill
//! parabolas), so tr(AS) and tr((AS)²) are those of the true covariances.

/// E[(Σ_k c_k x_{i_k})²] = Σ_{k,l} c_k c_l s(|i_k − i_l|) for one sparse
/// combination given as (index, coefficient) pairs, with the GACV s given as
/// a function of the lag (so that no table is needed where s has a closed
/// form).
///
/// ```
/// use tauwise::stats::quadratic::mean_square;
/// // White FM phase (s(k) = −|k|/2): x_2 − 2x_1 + x_0 = y_1 − y_0, mean square 2.
/// let e = mean_square(&[(0, 1.0), (1, -2.0), (2, 1.0)], |k| -(k as f64) / 2.0);
/// assert!((e - 2.0).abs() < 1e-15);
/// ```
pub fn mean_square(terms: &[(usize, f64)], s: impl Fn(usize) -> f64) -> f64 {
    let mut total = 0.0;
    for &(i, ci) in terms {
        for &(j, cj) in terms {
            total += ci * cj * s(i.abs_diff(j));
        }
    }
    total
}

/// A quadratic form xᵀ A x on `n` phase samples (A dense, symmetric), built
/// term by term, with the column range of each row's non-zero entries kept
/// so that products with S skip the zeros.
///
/// ```
/// use tauwise::stats::quadratic::QuadraticForm;
/// // Σ (x_{i+1} − x_i)² over 10 samples of a random walk (white FM phase,
/// // GACV s(k) = −|k|/2): nine independent unit squares, mean 9, EDF 9.
/// let mut q = QuadraticForm::new(10);
/// for i in 0..9 {
///     q.add_square(&[(i, -1.0), (i + 1, 1.0)]);
/// }
/// let g: Vec<f64> = (0..10).map(|k| -(k as f64) / 2.0).collect();
/// assert!((q.mean(&g) - 9.0).abs() < 1e-12);
/// assert!((q.edf(&g).unwrap() - 9.0).abs() < 1e-12);
/// ```
#[derive(Debug, Clone)]
pub struct QuadraticForm {
    n: usize,
    a: Vec<f64>,
    /// Per row: first and one-past-last column that may be non-zero.
    span: Vec<(usize, usize)>,
}

impl QuadraticForm {
    /// The zero form on `n` samples.
    pub fn new(n: usize) -> Self {
        Self {
            n,
            a: vec![0.0; n * n],
            span: vec![(usize::MAX, 0); n],
        }
    }

    /// Number of samples.
    pub fn samples(&self) -> usize {
        self.n
    }

    fn widen(&mut self, row: usize, lo: usize, hi: usize) {
        let s = &mut self.span[row];
        s.0 = s.0.min(lo);
        s.1 = s.1.max(hi);
    }

    /// Add the square (Σ_k c_k x_{i_k})² of a sparse combination given as
    /// (index, coefficient) pairs (an index may repeat).
    pub fn add_square(&mut self, terms: &[(usize, f64)]) {
        let lo = terms.iter().map(|t| t.0).min().unwrap_or(0);
        let hi = terms.iter().map(|t| t.0).max().map_or(0, |v| v + 1);
        for &(i, ci) in terms {
            for &(j, cj) in terms {
                self.a[i * self.n + j] += ci * cj;
            }
            self.widen(i, lo, hi);
        }
    }

    /// Add x_wᵀ R x_w for the window x_w = x_start … x_{start+len−1}, R a
    /// symmetric len × len matrix in row-major order.
    pub fn add_local(&mut self, start: usize, r: &[f64], len: usize) {
        for a in 0..len {
            let row = &mut self.a[(start + a) * self.n + start..(start + a) * self.n + start + len];
            for (v, rv) in row.iter_mut().zip(&r[a * len..(a + 1) * len]) {
                *v += rv;
            }
            self.widen(start + a, start, start + len);
        }
    }

    /// The symmetric extension of the GACV table: `gg[n − 1 + d] = g[|d|]`,
    /// so that s(|k − j|) for j = 0 … n−1 is the slice starting at n−1−k.
    fn symmetric(&self, g: &[f64]) -> Vec<f64> {
        let n = self.n;
        (0..2 * n - 1)
            .map(|i| g[(i as isize - (n as isize - 1)).unsigned_abs()])
            .collect()
    }

    /// E\[xᵀAx\] = tr(A S) for the GACV table `g` (lags 0 … n−1).
    pub fn mean(&self, g: &[f64]) -> f64 {
        let n = self.n;
        let mut t = 0.0;
        for (i, &(lo, hi)) in self.span.iter().enumerate() {
            for k in lo..hi.min(n) {
                t += self.a[i * n + k] * g[k.abs_diff(i)];
            }
        }
        t
    }

    /// The EDF ν = tr(AS)²/tr((AS)²) for the GACV table `g` (lags 0 … n−1);
    /// `None` when the form is zero or the table is too short.
    pub fn edf(&self, g: &[f64]) -> Option<f64> {
        let n = self.n;
        if n == 0 || g.len() < n {
            return None;
        }
        let gg = self.symmetric(g);
        // P = A S, row by row: P_i = Σ_k A_ik S_k, S_k the k-th row of S.
        let mut p = vec![0.0f64; n * n];
        for (i, &(lo, hi)) in self.span.iter().enumerate() {
            let row = &mut p[i * n..(i + 1) * n];
            for k in lo..hi.min(n) {
                let aik = self.a[i * n + k];
                if aik == 0.0 {
                    continue;
                }
                let s = &gg[n - 1 - k..n - 1 - k + n];
                for (v, sv) in row.iter_mut().zip(s) {
                    *v += aik * sv;
                }
            }
        }
        let trace: f64 = (0..n).map(|i| p[i * n + i]).sum();
        let mut sq = 0.0;
        for i in 0..n {
            for j in 0..n {
                sq += p[i * n + j] * p[j * n + i];
            }
        }
        (sq > 0.0 && trace.is_finite()).then(|| trace * trace / sq)
    }

    /// The non-zero eigenvalues λ_i of A·S (S_ij = g(|i − j|), the GACV
    /// table `g` at lags 0 … n−1), largest first: the weights of the exact
    /// distribution xᵀAx ~ Σ λ_i χ²₁,i of the form for Gaussian x
    /// ([`crate::stats::weighted_chi2`]). Σλ = tr(AS) ([`Self::mean`]) and
    /// (Σλ)²/Σλ² = the EDF ([`Self::edf`]).
    ///
    /// A = Σ_t c_t c_tᵀ is positive semi-definite: with A = V D Vᵀ
    /// (nalgebra's symmetric eigen-decomposition of A + c·I, c = tr(A)/n,
    /// shifted back: on A itself the iteration returned NaN where A is far
    /// from full rank) and W = V_r D_r^{1/2} over
    /// its non-zero eigenvalues, the λ are the eigenvalues of the Gram
    /// matrix Wᵀ S W. For FM noise S is a generalised autocovariance,
    /// meaningful only on combinations that annihilate polynomials of
    /// degree below `annihilated` (2 for the Allan family, 3 for the
    /// Hadamard family); W's columns are projected onto that subspace
    /// explicitly, so rounding in V does not meet the growth of S.
    /// O(n³): for the reduced records of
    /// [`crate::stats::form_interval`]. `None` when the form is zero or the
    /// table too short.
    pub fn eigenvalues(&self, g: &[f64], annihilated: usize) -> Option<Vec<f64>> {
        use nalgebra::DMatrix;
        let n = self.n;
        if n == 0 || g.len() < n {
            return None;
        }
        let a = DMatrix::from_row_slice(n, n, &self.a);
        let eig = semi_definite_eigen(a)?;
        let top = eig.eigenvalues.iter().cloned().fold(0.0f64, f64::max);
        if !(top > 0.0) {
            return None;
        }
        let keep: Vec<usize> = (0..n)
            .filter(|&i| eig.eigenvalues[i] > 1e-10 * top)
            .collect();
        if keep.is_empty() {
            return None;
        }
        let mut w = DMatrix::<f64>::zeros(n, keep.len());
        for (c, &i) in keep.iter().enumerate() {
            let s = eig.eigenvalues[i].sqrt();
            w.set_column(c, &(eig.eigenvectors.column(i) * s));
        }
        // Orthonormal basis of the polynomials of degree < `annihilated`
        // (modified Gram–Schmidt on 1, t, t², t centred and scaled).
        let centre = 0.5 * (n as f64 - 1.0);
        let scale = centre.max(1.0);
        let mut basis: Vec<nalgebra::DVector<f64>> = Vec::new();
        for deg in 0..annihilated {
            let mut v = nalgebra::DVector::from_fn(n, |i, _| {
                ((i as f64 - centre) / scale).powi(deg as i32)
            });
            for b in &basis {
                let d = b.dot(&v);
                v -= b * d;
            }
            let norm = v.norm();
            if norm > 0.0 {
                basis.push(v / norm);
            }
        }
        for mut col in w.column_iter_mut() {
            for b in &basis {
                let d = b.dot(&col);
                col -= b * d;
            }
        }
        let s = DMatrix::from_fn(n, n, |i, j| g[i.abs_diff(j)]);
        let gram = w.transpose() * (&s * &w);
        let gram = (&gram + gram.transpose()) * 0.5;
        let mut lam: Vec<f64> = semi_definite_eigen(gram)?
            .eigenvalues
            .iter()
            .copied()
            .collect();
        lam.sort_by(|x, y| y.total_cmp(x));
        let first = *lam.first()?;
        if !(first > 0.0 && first.is_finite()) {
            return None;
        }
        lam.retain(|&l| l > 1e-12 * first);
        Some(lam)
    }
}

/// The eigen-decomposition of a symmetric positive semi-definite matrix M
/// (nalgebra's `SymmetricEigen`: Householder tridiagonalisation and
/// implicit QR with Wilkinson shifts), made robust to rank deficiency by
/// decomposing M + c·I, c = tr(M)/n > 0, and subtracting c from the
/// eigenvalues (the eigenvectors are the same; analytic). On M itself,
/// whose many zero eigenvalues leave zero diagonals in the iteration,
/// nalgebra returned NaN eigenvalues for the non-overlapping Allan form at
/// m = 16 on 49 samples and m = 8 … 64 on 512 (`tests/edf.rs`,
/// `rank_deficient_forms_have_their_eigenvalues`); with every diagonal of
/// the shifted matrix at least c its relative stopping rule is met. The
/// shift costs each eigenvalue an absolute rounding of about
/// ε·(λ_max + c) ≤ 2ε·λ_max — far below the cut of 1e−10·λ_max that
/// [`QuadraticForm::eigenvalues`] applies. `None` for a zero, empty or
/// non-finite matrix, or when the iteration does not converge.
fn semi_definite_eigen(
    m: nalgebra::DMatrix<f64>,
) -> Option<nalgebra::SymmetricEigen<f64, nalgebra::Dyn>> {
    let n = m.nrows();
    if n == 0 || m.ncols() != n || m.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let c = m.trace() / n as f64;
    if !(c > 0.0) {
        return None;
    }
    let shifted = m + nalgebra::DMatrix::<f64>::identity(n, n) * c;
    let mut eig = nalgebra::SymmetricEigen::try_new(shifted, f64::EPSILON, 10_000)?;
    eig.eigenvalues.iter_mut().for_each(|v| *v -= c);
    let finite = eig.eigenvalues.iter().all(|v| v.is_finite())
        && eig.eigenvectors.iter().all(|v| v.is_finite());
    finite.then_some(eig)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::gacv::discrete_phase_gacv;

    /// White FM, N phase samples, the single Allan term at m = 1 summed over
    /// every start: the overlapping AVAR at m = 1 — its EDF from the exact
    /// covariance of the second differences (MA(1) with ρ1 = −1/2 of white
    /// frequency increments): Var = 2·Σ_{|d|<M}(M−|d|)ρ(d)²·s0², so
    /// ν = M²/(M + 2(M−1)/4) (analytic).
    #[test]
    fn white_fm_overlapping_allan_m1() {
        let n = 50;
        let mut q = QuadraticForm::new(n);
        for i in 0..n - 2 {
            q.add_square(&[(i, 1.0), (i + 1, -2.0), (i + 2, 1.0)]);
        }
        let g = discrete_phase_gacv(0, n);
        let mm = (n - 2) as f64;
        // E[(x2 − 2x1 + x0)²] = E[(y1 − y0)²] = 2 for unit white y.
        assert!((q.mean(&g) - 2.0 * mm).abs() < 1e-9);
        let want = mm * mm / (mm + 2.0 * (mm - 1.0) / 4.0);
        assert!((q.edf(&g).unwrap() - want).abs() < 1e-9 * want);
    }

    /// White PM and one squared sample per term: n independent χ²₁ → ν = n;
    /// a local form equals the same terms added as squares (analytic).
    #[test]
    fn white_pm_and_local_forms() {
        let n = 20;
        let g = discrete_phase_gacv(2, n);
        let mut q = QuadraticForm::new(n);
        for i in 0..n {
            q.add_square(&[(i, 1.0)]);
        }
        assert!((q.edf(&g).unwrap() - n as f64).abs() < 1e-12);
        // (x_i − x_{i+1})² as a local 2×2 form [[1, −1], [−1, 1]].
        let mut a = QuadraticForm::new(n);
        let mut b = QuadraticForm::new(n);
        for i in 0..n - 1 {
            a.add_square(&[(i, 1.0), (i + 1, -1.0)]);
            b.add_local(i, &[1.0, -1.0, -1.0, 1.0], 2);
        }
        assert_eq!(a.mean(&g), b.mean(&g));
        assert_eq!(a.edf(&g), b.edf(&g));
        assert_eq!(QuadraticForm::new(3).edf(&g), None);
    }
}
