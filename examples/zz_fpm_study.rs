use nalgebra::DMatrix;
use tauwise::deviation::Estimator;
use tauwise::stats::form_interval::{lumped, phase_gacv, LUMP_BELOW};
use tauwise::stats::weighted_chi2::quantile_with;

fn row(est: Estimator, alpha: i32, m: usize, n: usize) -> Vec<f64> {
    let coef: &[f64] = if est == Estimator::Oadev {
        &[1.0, -2.0, 1.0]
    } else {
        &[1.0, -3.0, 3.0, -1.0]
    };
    let d = coef.len() - 1;
    let terms = n - d * m;
    let g = phase_gacv(alpha, n + d * m + 1);
    (0..terms)
        .map(|k| {
            let mut s = 0.0;
            for (a, ca) in coef.iter().enumerate() {
                for (b, cb) in coef.iter().enumerate() {
                    let lag = (k as isize + (b as isize - a as isize) * m as isize).unsigned_abs();
                    s += ca * cb * g[lag];
                }
            }
            s
        })
        .collect()
}
fn exact(r: &[f64]) -> Vec<f64> {
    let t = r.len();
    let c = DMatrix::from_fn(t, t, |i, j| r[i.abs_diff(j)]);
    let mut lam: Vec<f64> = c.symmetric_eigenvalues().iter().copied().collect();
    lam.sort_by(|a, b| b.total_cmp(a));
    lam
}
fn moments(r: &[f64]) -> (f64, f64) {
    let t = r.len() as f64;
    let mean = t * r[0];
    let mut v = t * r[0] * r[0];
    for (k, c) in r.iter().enumerate().skip(1) {
        v += 2.0 * (t - k as f64) * c * c;
    }
    (mean, mean * mean / v)
}
fn qs(w: &[(f64, f64)]) -> Vec<f64> {
    [0.025, 0.1585, 0.8415, 0.975]
        .iter()
        .map(|&p| (quantile_with(w, p).unwrap_or(f64::NAN) * 1e4).round() / 1e4)
        .collect()
}
fn main() {
    let n = 4096usize;
    for (est, m) in [
        (Estimator::Oadev, 1024usize),
        (Estimator::Ohdev, 1024),
        (Estimator::Oadev, 512),
        (Estimator::Ohdev, 512),
        (Estimator::Oadev, 256),
    ] {
        let ratio = (n - 1) as f64 / m as f64;
        let r = row(est, 1, m, n);
        let (mean_m, nu) = moments(&r);
        let want = if r.len() <= 2100 {
            let l = exact(&r);
            let t: f64 = l.iter().sum();
            Some(qs(&lumped(
                &l.iter().map(|v| v / t).collect::<Vec<_>>(),
                LUMP_BELOW,
            )))
        } else {
            None
        };
        println!("{est:?} m={m} T/tau={ratio:.2} exact edf={nu:.2} exact q={want:?}");
        for mr in [16usize, 32, 64] {
            let nr = (ratio * mr as f64).round() as usize + 1;
            let rr = row(est, 1, mr, nr);
            let raw = exact(&rr);
            let mr_mean: f64 = raw.iter().sum();
            let scale = (mr_mean / mr as f64) / (mean_m / m as f64);
            for k in [2usize, 4, 8, 16, 32] {
                let top: Vec<f64> = raw.iter().take(k).map(|l| l / mr_mean * scale).collect();
                let mean_rest = 1.0 - top.iter().sum::<f64>();
                let var_rest = 2.0 / nu - 2.0 * top.iter().map(|l| l * l).sum::<f64>();
                if !(mean_rest > 0.0 && var_rest > 0.0) {
                    println!("   m'={mr} K={k}: no rest");
                    continue;
                }
                let g = var_rest / (2.0 * mean_rest);
                let mut w: Vec<(f64, f64)> = top.iter().map(|&l| (l, 1.0)).collect();
                w.push((g, mean_rest / g));
                println!(
                    "   m'={mr} K={k}: top={:?} rest h={:.1} q={:?}",
                    top.iter()
                        .take(3)
                        .map(|v| (v * 1e4).round() / 1e4)
                        .collect::<Vec<_>>(),
                    mean_rest / g,
                    qs(&w)
                );
            }
        }
    }
}
