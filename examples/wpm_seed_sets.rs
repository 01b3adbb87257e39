//! The seed-set question of the coverage sweep (`docs/statistics.md`,
//! § The MDEV/MTOT white-PM EDF): is the simulator's white PM what the
//! analytic white-PM deviations say, with the sweep's seeds (s + 7919·r)
//! and with consecutive seeds (1000 + r) alike?
//!
//! For discrete white phase of variance σ_x² (the simulator's white PM,
//! h2 with f_h = 1/(2τ0): σ_x² = h2·f_h/(4π²), IEEE Std 1139) the second
//! difference of the phase has variance 6σ_x², so exactly (analytic; NIST SP
//! 1065 Table 5 in the sampled form)
//!
//! - AVAR(τ = mτ0) = 3σ_x²/τ²,
//! - MVAR(τ = mτ0) = 3σ_x²/(m·τ²) (the m-sample mean of second differences).
//!
//! Printed per seed set and estimator at each m: the mean of σ̂²/σ² with its
//! standard error, the Monte Carlo EDF 2·mean²/var (over all records and
//! per block of 500, whose spread shows how far a set may wander by
//! chance), and the exact EDF of the
//! estimator on white phase, ν = tr(A)²/tr(A²) with A = Σ_t c_t c_tᵀ, whose
//! terms are alike: tr(A) = M·r(0), tr(A²) = Σ_{|d|<M} (M − |d|)·r(d)²,
//! r(d) = Σ_j c_j c_{j+d} the kernel's autocorrelation (Greenhall & Riley
//! 2003, the identity covariance).
//!
//! ```sh
//! cargo run --release --example wpm_seed_sets -- [records] [points]
//! ```

use rayon::prelude::*;
use tauwise::deviation::{compute, Estimator};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, white_sigma, SimSpec};

/// The exact EDF of the overlapping estimator with kernel `c` on `n` white
/// phase samples (identity covariance).
fn exact_edf(c: &[f64], n: usize) -> f64 {
    let w = c.len();
    let terms = n + 1 - w;
    let r = |d: usize| -> f64 { (0..w.saturating_sub(d)).map(|j| c[j] * c[j + d]).sum() };
    let tr = terms as f64 * r(0);
    let mut tr2 = terms as f64 * r(0).powi(2);
    for d in 1..w.min(terms) {
        tr2 += 2.0 * (terms - d) as f64 * r(d).powi(2);
    }
    tr * tr / tr2
}

fn kernel(est: Estimator, m: usize) -> Vec<f64> {
    match est {
        Estimator::Oadev => {
            let mut c = vec![0.0; 2 * m + 1];
            c[0] = 1.0;
            c[m] = -2.0;
            c[2 * m] = 1.0;
            c
        }
        _ => {
            let mut c = vec![0.0; 3 * m];
            for j in 0..m {
                c[j] += 1.0 / m as f64;
                c[j + m] -= 2.0 / m as f64;
                c[j + 2 * m] += 1.0 / m as f64;
            }
            c
        }
    }
}

fn main() -> tauwise::Result<()> {
    let args: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let records = args.first().copied().unwrap_or(1000);
    let n = args.get(1).copied().unwrap_or(4096);
    let h2 = 1e-20;
    let sx2 = white_sigma(2, h2, 1.0).powi(2);
    let mut model = PowerLaw::zero(0.5);
    model.set(2, h2);
    let cases = [
        (Estimator::Oadev, 1usize),
        (Estimator::Oadev, 16),
        (Estimator::Oadev, 512),
        (Estimator::Mdev, 16),
        (Estimator::Mdev, 128),
        (Estimator::Mdev, 512),
    ];
    // (name, first seed, step): seed = first + step·r.
    let sets: [(&str, u64, u64); 4] = [
        ("1 + 7919·r", 1, 7919),
        ("5 + 7919·r", 5, 7919),
        ("1000 + r", 1000, 1),
        ("31000 + r", 31_000, 1),
    ];
    println!("white PM, N = {n}, {records} records per seed set; σ̂²/σ² analytic");
    for &(name, first, step) in &sets {
        let seed = |r: usize| first + step * r as u64;
        let ratios: Vec<Vec<f64>> = (0..records)
            .into_par_iter()
            .map(|r| -> tauwise::Result<Vec<f64>> {
                let rec = simulate_phase(&SimSpec::new(model, 1.0, n, seed(r)))?;
                Ok(cases
                    .iter()
                    .map(|&(est, m)| {
                        let e = compute(est, &rec, &[m]);
                        let tau = m as f64;
                        let truth = match est {
                            Estimator::Oadev => 3.0 * sx2 / (tau * tau),
                            _ => 3.0 * sx2 / (m as f64 * tau * tau),
                        };
                        e[0].value.powi(2) / truth
                    })
                    .collect())
            })
            .collect::<tauwise::Result<_>>()?;
        for (i, &(est, m)) in cases.iter().enumerate() {
            let v: Vec<f64> = ratios.iter().map(|r| r[i]).collect();
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (v.len() - 1) as f64;
            let exact = exact_edf(&kernel(est, m), n);
            // The Monte Carlo EDF of each block of 500 records: its own
            // spread is the yardstick for a seed set's departure.
            let blocks: Vec<String> = v
                .chunks(500)
                .filter(|b| b.len() == 500)
                .map(|b| {
                    let mu = b.iter().sum::<f64>() / b.len() as f64;
                    let s2 = b.iter().map(|x| (x - mu).powi(2)).sum::<f64>() / (b.len() - 1) as f64;
                    format!("{:.2}", 2.0 * mu * mu / s2)
                })
                .collect();
            println!(
                "{name:>11} {est:>5} m = {m:>3}: mean {mean:.4} ± {:.4} (s.e.), EDF {:.2} measured, {exact:.2} exact ({:+.1} s.e. of the mean); per 500 records: {}",
                (var / v.len() as f64).sqrt(),
                2.0 * mean * mean / var,
                (mean - 1.0) / (2.0 / exact / v.len() as f64).sqrt(),
                blocks.join(" "),
            );
        }
    }
    Ok(())
}
