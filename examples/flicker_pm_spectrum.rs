//! How the spectrum of OADEV, OHDEV and TOTDEV on flicker PM behaves as the
//! averaging factor grows at a fixed T/τ — the study behind the flicker-PM
//! weights of `tauwise::stats::form_interval` (sampled band-limited flicker
//! PM of IEEE Std 1139, f_h = 1/(2τ0)).
//!
//! ```sh
//! cargo run --release --example flicker_pm_spectrum -- 4 128
//! ```
//!
//! Arguments: T/τ (4) and the largest m′ (128; the dense spectrum costs
//! O((T/τ·m′)³)). For each estimator and m′ = 4, 8, … it prints the form's
//! mean per unit m (M/m) and the three leading eigenvalues per unit m
//! (u = Λ/m, unnormalised): OADEV's and OHDEV's u settle while M/m grows
//! like ln m (so their shares fall like 1/ln m); TOTDEV's end pair grows
//! like ln m in u as well. Then, at the largest m′, the 2.5 %, 15.85 %,
//! 84.15 % and 97.5 % quantiles of the exact distribution beside those of
//! the weights the intervals use (`form_interval::pivot_weights`).

use tauwise::deviation::Estimator;
use tauwise::stats::form_interval::{
    lumped, overlapping_moments, phase_gacv, pivot_weights, spectrum_exact, LUMP_BELOW,
};
use tauwise::stats::quadratic::mean_square;
use tauwise::stats::weighted_chi2::quantile_with;
use tauwise::stats::{edf, totals, VarianceKind};

fn mean(est: Estimator, m: usize, n: usize) -> Option<f64> {
    match est {
        Estimator::Totdev => {
            let g = phase_gacv(1, 2 * m + 1);
            let e_a = mean_square(&[(0, 1.0), (m, -2.0), (2 * m, 1.0)], |k| g[k]);
            Some((n as f64 - 2.0) * totals::totvar_bias(1, m, n)? * e_a)
        }
        _ => overlapping_moments(est, 1, m, n).map(|v| v.0),
    }
}

fn quantiles(w: &[(f64, f64)]) -> Vec<String> {
    [0.025, 0.1585, 0.8415, 0.975]
        .iter()
        .map(|&p| quantile_with(w, p).map_or("-".into(), |q| format!("{q:.4}")))
        .collect()
}

fn main() -> tauwise::Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let parse = |i: usize, d: f64| -> tauwise::Result<f64> {
        args.get(i).map_or(Ok(d), |s| {
            s.parse()
                .map_err(|_| tauwise::Error::invalid(format!("not a number: {s}")))
        })
    };
    let ratio = parse(0, 4.0)?;
    let m_max = parse(1, 128.0)? as usize;
    for (est, kind) in [
        (Estimator::Oadev, VarianceKind::OverlappingAllan),
        (Estimator::Ohdev, VarianceKind::OverlappingHadamard),
        (Estimator::Totdev, VarianceKind::Total),
    ] {
        println!("{} on flicker PM, T/τ = {ratio}", est.name());
        let mut m = 4;
        while m <= m_max {
            let n = (ratio * m as f64).round() as usize + 1;
            if let (Some(lam), Some(total)) = (spectrum_exact(est, 1, m, n), mean(est, m, n)) {
                let u: Vec<String> = lam
                    .iter()
                    .take(3)
                    .map(|l| format!("{:.4}", l * total / m as f64))
                    .collect();
                println!(
                    "  m′ = {m:4}: M/m = {:9.4}  u = {}",
                    total / m as f64,
                    u.join(" ")
                );
            }
            m *= 2;
        }
        let m = m / 2;
        let n = (ratio * m as f64).round() as usize + 1;
        let nu = edf(kind, 1, m, n).unwrap_or(f64::NAN);
        if let (Some(lam), Some(w)) = (
            spectrum_exact(est, 1, m, n),
            pivot_weights(est, 1, m, n, nu),
        ) {
            println!(
                "  m = {m}, N = {n}: exact {}  weights {}",
                quantiles(&lumped(&lam, LUMP_BELOW)).join(" "),
                quantiles(&w).join(" ")
            );
        }
    }
    Ok(())
}
