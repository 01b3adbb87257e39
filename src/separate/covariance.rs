//! The covariance-aware separation of Premoli & Tavella (1993) ("A revisited
//! three-cornered hat method for estimating frequency standard
//! instability", IEEE Trans. Instrum. Meas. 42).
//!
//! Choose a reference clock r compared with every other clock, and form the
//! N − 1 differences d_i = x_i − x_r from the (simultaneous) pair records.
//! Their covariance matrix S at τ is estimated with the chosen estimator:
//! S_ii = σ̂²(d_i) and, by polarisation of the quadratic form,
//! S_ij = (σ̂²(d_i + d_j) − σ̂²(d_i − d_j))/4. The clocks' covariance matrix
//! R (N × N) satisfies S = H R Hᵀ, H = [I | −u]; its N free parameters are
//! the covariances with the reference r_iN and the reference's variance
//! r_NN, and then r_ij = S_ij − r_NN + r_iN + r_jN. Premoli & Tavella take
//! the R that is positive definite and has the least global correlation,
//! Σ_{i<j} r²_ij (their normalisation by |S|^{2/N} is a constant and does
//! not move the minimum). Here that convex problem is solved by a
//! logarithmic barrier, t·Σ r²_ij − ln|R|, with damped Newton steps and t
//! raised until the duality gap N/t is below 1e-9 of the scale of S,
//! starting from the paper's feasible point r_iN = 0,
//! r_NN = 1/(2uᵀS⁻¹u).
//!
//! **Intervals** by a seeded Monte Carlo of the same separation: S is drawn
//! from the Wishart distribution with ν degrees of freedom around the
//! estimate (Bartlett's decomposition), ν the smallest EDF of the diagonal
//! pair variances at that τ; each draw is separated the same way and the
//! interval is the central `confidence` range of the draws' deviations
//! (percentile method). The seed is mixed with m, so a τ's interval does
//! not depend on which other τ were asked for.

use super::{clock_point, pair_bound, ClockPoint, PairRecord, Request, Resolution};
use crate::deviation::{compute, Curve, Estimate, Point};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::stats::form_interval::IntervalMethod;
use nalgebra::{DMatrix, DVector};
use rand::SeedableRng;
use rand_distr::{ChiSquared, Distribution, StandardNormal};

/// The clocks' covariance matrix R (reference last) chosen by Premoli &
/// Tavella for the difference covariance matrix `s` ((N−1) × (N−1),
/// symmetric positive definite): positive definite, S = H R Hᵀ, and
/// Σ_{i<j} r²_ij least. `None` when S is not positive definite.
pub fn premoli_tavella(s: &DMatrix<f64>) -> Option<DMatrix<f64>> {
    let q = s.nrows();
    if q == 0 || s.ncols() != q {
        return None;
    }
    let scale = (0..q).map(|i| s[(i, i)]).sum::<f64>() / q as f64;
    if !(scale.is_finite() && scale > 0.0) {
        return None;
    }
    let sn = s / scale;
    let chol = sn.clone().cholesky()?;
    let u = DVector::from_element(q, 1.0);
    let su = chol.solve(&u);
    let utsu = u.dot(&su);
    let n = q + 1;
    let mut p = DVector::zeros(n);
    p[q] = 0.5 / utsu;
    let r_of = |p: &DVector<f64>| -> DMatrix<f64> {
        let mut r = DMatrix::zeros(n, n);
        for i in 0..q {
            for j in 0..q {
                r[(i, j)] = sn[(i, j)] - p[q] + p[i] + p[j];
            }
            r[(i, q)] = p[i];
            r[(q, i)] = p[i];
        }
        r[(q, q)] = p[q];
        r
    };
    // dR/dp_k.
    let e: Vec<DMatrix<f64>> = (0..n)
        .map(|k| {
            let mut m = DMatrix::zeros(n, n);
            if k < q {
                for j in 0..q {
                    m[(k, j)] += 1.0;
                    m[(j, k)] += 1.0;
                }
                m[(k, q)] = 1.0;
                m[(q, k)] = 1.0;
            } else {
                for i in 0..q {
                    for j in 0..q {
                        m[(i, j)] = -1.0;
                    }
                }
                m[(q, q)] = 1.0;
            }
            m
        })
        .collect();
    // Off-diagonal gradient vectors e_ij = dR_ij/dp.
    let mut offd: Vec<(usize, usize, DVector<f64>)> = Vec::new();
    for i in 0..n {
        for j in (i + 1)..n {
            offd.push((i, j, DVector::from_fn(n, |k, _| e[k][(i, j)])));
        }
    }
    let mut hf = DMatrix::zeros(n, n);
    for (_, _, v) in &offd {
        hf += 2.0 * v * v.transpose();
    }
    let f_of = |r: &DMatrix<f64>| -> f64 { offd.iter().map(|(i, j, _)| r[(*i, *j)].powi(2)).sum() };
    let phi = |t: f64, p: &DVector<f64>| -> Option<f64> {
        let r = r_of(p);
        let c = r.clone().cholesky()?;
        let logdet: f64 = 2.0 * c.l().diagonal().iter().map(|d| d.ln()).sum::<f64>();
        Some(t * f_of(&r) - logdet)
    };
    let mut t = 1.0;
    for _outer in 0..60 {
        for _inner in 0..100 {
            let r = r_of(&p);
            let c = r.clone().cholesky()?;
            let rinv = c.inverse();
            let mut grad = DVector::zeros(n);
            for (i, j, v) in &offd {
                grad += 2.0 * t * r[(*i, *j)] * v;
            }
            let re: Vec<DMatrix<f64>> = e.iter().map(|ek| &rinv * ek).collect();
            for k in 0..n {
                grad[k] -= re[k].trace();
            }
            let mut h = t * &hf;
            for k in 0..n {
                for l in 0..n {
                    h[(k, l)] += (&re[k] * &re[l]).trace();
                }
            }
            let step = h.clone().cholesky().map(|c| -c.solve(&grad))?;
            let dec = -grad.dot(&step);
            if dec < 1e-14 {
                break;
            }
            let f0 = phi(t, &p)?;
            let mut a = 1.0;
            let mut moved = false;
            for _ in 0..60 {
                let cand = &p + a * &step;
                if let Some(f1) = phi(t, &cand) {
                    if f1 <= f0 - 0.25 * a * dec {
                        p = cand;
                        moved = true;
                        break;
                    }
                }
                a *= 0.5;
            }
            if !moved {
                break;
            }
        }
        if n as f64 / t < 1e-9 {
            break;
        }
        t *= 8.0;
    }
    Some(r_of(&p) * scale)
}

/// Draw a Wishart matrix with `nu` degrees of freedom and mean `s`
/// (Bartlett's decomposition: S* = L A Aᵀ Lᵀ/ν, S = LLᵀ, A lower
/// triangular with A_ii² ~ χ²(ν − i) and standard normal entries below).
pub fn wishart(s: &DMatrix<f64>, nu: f64, rng: &mut impl rand::Rng) -> Option<DMatrix<f64>> {
    let q = s.nrows();
    if !(nu > q as f64 - 1.0) {
        return None;
    }
    let l = s.clone().cholesky()?.l();
    let mut a = DMatrix::zeros(q, q);
    for i in 0..q {
        let chi = ChiSquared::new(nu - i as f64).ok()?;
        a[(i, i)] = chi.sample(rng).sqrt();
        for j in 0..i {
            a[(i, j)] = StandardNormal.sample(rng);
        }
    }
    let la = &l * a;
    Some(&la * la.transpose() / nu)
}

/// The covariance-aware separation of the aligned pairs at each m of `ms`,
/// with Monte Carlo intervals; returns the points of each clock (in the
/// order of `names`) and the reference clock's index.
pub(super) fn separate(
    pairs: &[PairRecord],
    idx: &[(usize, usize)],
    names: &[String],
    curves: &[Curve],
    ms: &[usize],
    req: &Request,
) -> Result<(Vec<Vec<ClockPoint>>, usize)> {
    let n = names.len();
    let reference = (0..n)
        .find(|&r| {
            (0..n).all(|i| {
                i == r
                    || idx
                        .iter()
                        .any(|&(a, b)| (a, b) == (i, r) || (a, b) == (r, i))
            })
        })
        .ok_or_else(|| {
            Error::invalid(format!(
                "the covariance form needs one clock compared with every other (a reference: \
                 e.g. A,B A,C A,D); none of {} is",
                names.join(", ")
            ))
        })?;
    let others: Vec<usize> = (0..n).filter(|&i| i != reference).collect();
    // d_i = x_i − x_ref, and the pair index it came from.
    let mut diffs: Vec<(Vec<f64>, usize)> = Vec::new();
    for &i in &others {
        let k = idx
            .iter()
            .position(|&(a, b)| (a, b) == (i, reference) || (a, b) == (reference, i))
            .expect("reference pairs exist");
        let sign = if idx[k].0 == i { 1.0 } else { -1.0 };
        diffs.push((pairs[k].record.x.iter().map(|v| sign * v).collect(), k));
    }
    let tau0 = pairs[0].record.tau0;
    let q = others.len();
    // Polarisation records: σ̂²(d_i ± d_j) at every m.
    let mut plus = vec![vec![Vec::new(); q]; q];
    let mut minus = vec![vec![Vec::new(); q]; q];
    for i in 0..q {
        for j in (i + 1)..q {
            let (a, b) = (&diffs[i].0, &diffs[j].0);
            let s: Vec<f64> = a.iter().zip(b).map(|(x, y)| x + y).collect();
            let d: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
            plus[i][j] = compute(req.estimator, &PhaseRecord::new(s, tau0)?, ms);
            minus[i][j] = compute(req.estimator, &PhaseRecord::new(d, tau0)?, ms);
        }
    }
    let var_at = |e: &[Estimate], m: usize| e.iter().find(|e| e.m == m).map(|e| e.value * e.value);
    let mut out = vec![Vec::new(); n];
    for &m in ms {
        let pts: Vec<&Point> = curves.iter().filter_map(|c| super::at(c, m)).collect();
        let v: Vec<f64> = pts
            .iter()
            .map(|p| p.estimate.value * p.estimate.value)
            .collect();
        let mut s = DMatrix::zeros(q, q);
        let mut complete = true;
        for i in 0..q {
            s[(i, i)] = v[diffs[i].1];
            for j in (i + 1)..q {
                match (var_at(&plus[i][j], m), var_at(&minus[i][j], m)) {
                    (Some(a), Some(b)) => {
                        s[(i, j)] = (a - b) / 4.0;
                        s[(j, i)] = s[(i, j)];
                    }
                    _ => complete = false,
                }
            }
        }
        if !complete {
            continue;
        }
        let Some(r) = premoli_tavella(&s) else {
            // S not positive definite at this τ: no separation there.
            continue;
        };
        // Clock index → position in R (others first, reference last).
        let pos = |c: usize| {
            if c == reference {
                q
            } else {
                others.iter().position(|&o| o == c).unwrap_or(q)
            }
        };
        let var: Vec<f64> = (0..n).map(|c| r[(pos(c), pos(c))]).collect();
        // Monte Carlo of the separation.
        let nu = (0..q)
            .filter_map(|i| pts[diffs[i].1].edf)
            .fold(f64::INFINITY, f64::min);
        let mut draws: Vec<Vec<f64>> = vec![Vec::new(); n];
        if nu.is_finite() && req.draws > 0 {
            let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(
                req.seed ^ (m as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15),
            );
            for _ in 0..req.draws {
                let Some(sd) = wishart(&s, nu, &mut rng) else {
                    break;
                };
                if let Some(rd) = premoli_tavella(&sd) {
                    for c in 0..n {
                        draws[c].push(rd[(pos(c), pos(c))]);
                    }
                }
            }
        }
        let dom = super::dominated_pairs(idx, &var);
        let terms = pts.iter().map(|p| p.estimate.terms).min().unwrap_or(0);
        for c in 0..n {
            let e = Estimate {
                tau: pts[0].estimate.tau,
                m,
                value: 0.0,
                terms,
            };
            let alpha = pts[dom[c]].alpha;
            let d = &mut draws[c];
            let enough = d.len() >= 20;
            let sd = enough.then(|| {
                let mean = d.iter().sum::<f64>() / d.len() as f64;
                (d.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (d.len() - 1) as f64).sqrt()
            });
            let mut cp = clock_point(e, var[c], sd, alpha, pair_bound(idx, &v, c), req.confidence)?;
            if cp.resolution == Resolution::Resolved {
                cp.point.edf = None;
                if enough {
                    let mut devs: Vec<f64> = d.iter().map(|x| x.max(0.0).sqrt()).collect();
                    devs.sort_by(f64::total_cmp);
                    let qtl = |p: f64| {
                        let k = ((devs.len() - 1) as f64 * p).round() as usize;
                        devs[k.min(devs.len() - 1)]
                    };
                    cp.point.lo = Some(qtl(0.5 * (1.0 - req.confidence)));
                    cp.point.hi = Some(qtl(0.5 * (1.0 + req.confidence)));
                    cp.point.interval_method = Some(IntervalMethod::MonteCarlo);
                } else {
                    cp.point.lo = None;
                    cp.point.hi = None;
                    cp.point.interval_method = None;
                }
            }
            out[c].push(cp);
        }
    }
    Ok((out, reference))
}
