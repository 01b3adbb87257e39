//! TOTDEV's flicker-PM EDF: the exact value from the covariances of its
//! terms (`stats::totals::totvar_edf_by_terms`) against the former rule
//! (`totvar_edf_flicker_pm_bound`), and the reflected ends' penalty
//! 1/ν_TOT − 1/ν_inner, over m at fixed T/τ. The table behind
//! `totvar_edf_flicker_pm` (docs/statistics.md).
//!
//! ```sh
//! cargo run --release --example totdev_fpm_edf -- 1 70000
//! ```
//! Arguments: α (1), the largest record length computed (20000).

use tauwise::stats::totals::{
    totvar_edf_by_terms, totvar_edf_flicker_pm_bound, totvar_end_penalty,
};

fn main() {
    let alpha: i32 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1);
    let max_n: usize = std::env::args()
        .nth(2)
        .and_then(|s| s.parse().ok())
        .unwrap_or(20000);
    for ratio in [3.0f64, 4.0, 8.0, 16.0, 32.0] {
        for k in 1..14 {
            let m = 1usize << k;
            let n = (ratio * m as f64).round() as usize + 1;
            if n > max_n {
                continue;
            }
            let t = std::time::Instant::now();
            let exact = totvar_edf_by_terms(alpha, m, n).unwrap_or(f64::NAN);
            let pen = totvar_end_penalty(alpha, m, n).unwrap_or(f64::NAN);
            let rule = totvar_edf_flicker_pm_bound(m, n).unwrap_or(f64::NAN);
            println!(
                "T/τ {ratio:5.1}  m {m:5}  N {n:6}  exact {exact:9.3}  former rule {rule:9.3} ({:+6.1} %)  end penalty {pen:.4e}  {:.2} s",
                100.0 * (rule / exact - 1.0),
                t.elapsed().as_secs_f64()
            );
        }
    }
}
