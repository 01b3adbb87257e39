//! The seeded Monte Carlo behind TheoH's EDF (`tauwise::stats::theo`,
//! `theoh_excess`): for each noise type, record length N and T/τ, the
//! relative variance of the record's ThêoBR ratio R̂ (TheoH²/Theo1² at the
//! same τ), its relative covariance with Theo1(τ), and the excess
//! Δ = Var(TheoH²)/E² − Var(Theo1²)/E² that the ratio adds — the numbers
//! the table in `theoh_excess` was made from (1500 records at N = 1001,
//! 2049 and 4097; 300 at 16385).
//!
//! ```sh
//! cargo run --release --example theoh_calibration -- 4097 1500 2,1,0,-1,-2
//! ```
//!
//! Arguments: N, records, the noise types (α). Seeds 77, 78, … per record.

use rayon::prelude::*;
use tauwise::deviation::{compute, Estimator};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};

fn main() -> tauwise::Result<()> {
    let args: Vec<String> = std::env::args().collect();
    let arg = |i: usize, default: &str| args.get(i).cloned().unwrap_or_else(|| default.into());
    let parse = |s: String| -> tauwise::Result<usize> {
        s.parse()
            .map_err(|_| tauwise::Error::invalid(format!("'{s}' is not a whole number")))
    };
    let n = parse(arg(1, "4097"))?;
    let records = parse(arg(2, "1500"))?;
    let alphas: Vec<i32> = arg(3, "2,1,0,-1,-2")
        .split(',')
        .map(|a| {
            a.trim()
                .parse()
                .map_err(|_| tauwise::Error::invalid(format!("'{a}' is not a noise type α")))
        })
        .collect::<tauwise::Result<_>>()?;
    let ratios = [9.5f64, 8.0, 6.0, 4.0, 3.0, 2.0, 1.5, 1.34];
    let t = (n - 1) as f64;
    let grid: Vec<usize> = ratios.iter().map(|r| (t / r).round() as usize).collect();
    println!("N = {n}, {records} records per noise type");
    println!(
        "{:>5} {:>6} {:>9} {:>9} {:>9} {:>9} {:>9}",
        "alpha", "T/tau", "mean R", "relvar R", "relcov", "excess", "edf T1"
    );
    for alpha in alphas {
        let mut model = PowerLaw::zero(0.5);
        model.set(alpha, 1.0);
        let rows: Vec<Vec<(f64, f64)>> = (0..records)
            .into_par_iter()
            .map(|s| -> tauwise::Result<Vec<(f64, f64)>> {
                let rec = simulate_phase(&SimSpec::new(model, 1.0, n, 77 + s as u64))?;
                let h = compute(Estimator::Theoh, &rec, &grid);
                let t1 = compute(Estimator::Theo1, &rec, &grid);
                Ok(h.iter()
                    .zip(&t1)
                    .map(|(a, b)| ((a.value / b.value).powi(2), b.value.powi(2)))
                    .collect())
            })
            .collect::<tauwise::Result<_>>()?;
        for (k, ratio) in ratios.iter().enumerate() {
            let r: Vec<f64> = rows.iter().filter_map(|v| v.get(k).map(|p| p.0)).collect();
            let th: Vec<f64> = rows.iter().filter_map(|v| v.get(k).map(|p| p.1)).collect();
            let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
            let relvar = |v: &[f64]| {
                let m = mean(v);
                v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len() - 1) as f64 / (m * m)
            };
            let (mr, mt) = (mean(&r), mean(&th));
            let cov = r
                .iter()
                .zip(&th)
                .map(|(a, b)| (a - mr) * (b - mt))
                .sum::<f64>()
                / (r.len() - 1) as f64
                / (mr * mt);
            let prod: Vec<f64> = r.iter().zip(&th).map(|(a, b)| a * b).collect();
            let (vt, vp) = (relvar(&th), relvar(&prod));
            println!(
                "{alpha:>5} {ratio:>6.2} {mr:>9.4} {:>9.5} {cov:>9.5} {:>9.4} {:>9.2}",
                relvar(&r),
                vp - vt,
                2.0 / vt
            );
        }
    }
    Ok(())
}
