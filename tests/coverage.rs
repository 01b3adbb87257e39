//! Coverage of the confidence intervals by seeded Monte Carlo
//! (`tauwise::stats::coverage`): over seeded power-law records from the
//! project's simulator (Kasdin & Walter 1992, IEEE Std 1139 with
//! f_h = 1/(2τ0)), the fraction of 68.3 % and 95 % intervals that contain
//! the true value, for every estimator that gives intervals, the five noise
//! types, at a short and a long τ — with the noise type identified per τ
//! exactly as the commands do it.
//!
//! Sized for CI (N = 2049, 300 records per noise type); the full table
//! (more records, every octave τ, N = 1001 … 16384) comes from
//! `cargo run --release --example coverage`. A cell fails when its coverage
//! is below nominal by more than 0.04 plus two binomial standard errors
//! (too narrow: the dangerous side), or above by more than 0.2 at 68.3 %
//! (grossly conservative, as the recalled Theo1 flicker-PM form was, with
//! 1.00); and the pooled coverage of each estimator over its cells must be
//! within 0.04 of nominal. At T/τ ≤ 16 the intervals come from the exact
//! distribution of the estimate's quadratic form (`stats::form_interval`);
//! cells that over-covered with the χ² interval are checked at nominal in
//! `former_wide_cells_cover_at_nominal`, and TOTDEV on flicker PM (formerly
//! 0.77–0.82 at 68.3 %) in `totdev_flicker_pm_covers_at_nominal`.

use tauwise::deviation::Estimator;
use tauwise::stats::coverage::{run, CoverageCell, CoverageSpec};
use tauwise::stats::noise_id::CrossTauRule;
use tauwise::tau::TauGrid;

const N: usize = 2049;
const RECORDS: usize = 300;

/// Short τ: m = 8 (Theo1: τ = 15 s, m′ = 20). Long τ: T/τ = 4 (τ = 512 s;
/// TheoH's ThêoBR part 511.5 s; Theo1 510 s, m′ = 680).
fn spec(estimators: &[Estimator]) -> CoverageSpec {
    CoverageSpec {
        estimators: estimators.to_vec(),
        alphas: vec![2, 1, 0, -1, -2],
        points: N,
        records: RECORDS,
        seed: 77_000,
        grid: TauGrid::Explicit(vec![8.0, 15.0, 510.0, 512.0]),
        max_t_over_tau: None,
        min_t_over_tau: None,
        rule: CrossTauRule::CapAtShorterTau,
        guard: true,
        check_99: false,
    }
}

/// The spec of the sweep's cells (`examples/coverage --points N
/// --records 1000 --seed 1`) for the given estimators, noises and τ.
fn sweep_spec(
    estimators: &[Estimator],
    alphas: &[i32],
    points: usize,
    taus: &[f64],
) -> CoverageSpec {
    CoverageSpec {
        alphas: alphas.to_vec(),
        points,
        records: 1000,
        seed: 1,
        grid: TauGrid::Explicit(taus.to_vec()),
        ..spec(estimators)
    }
}

fn check(cells: &[CoverageCell]) {
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    let mut pooled: std::collections::BTreeMap<&str, (usize, usize, usize)> = Default::default();
    for c in cells {
        if c.with_interval < RECORDS / 2 {
            continue;
        }
        let n = c.with_interval as f64;
        let sd68 = (0.683 * 0.317 / n).sqrt();
        let sd95 = (0.95 * 0.05 / n).sqrt();
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!(
            "{} {} τ={} T/τ={:.1}: {c68:.3} / {c95:.3} (n = {}, EDF {:.1})",
            c.estimator.name(),
            tauwise::model::noise_label(c.alpha).unwrap_or("?"),
            c.tau,
            c.t_over_tau,
            c.with_interval,
            c.mean_edf
        );
        if c68 < 0.683 - 0.04 - 2.0 * sd68 || c68 > 0.683 + 0.2 || c95 < 0.95 - 0.04 - 2.0 * sd95 {
            bad.push(line.clone());
        }
        let e = pooled.entry(c.estimator.name()).or_default();
        e.0 += c.with_interval;
        e.1 += c.hits_68;
        e.2 += c.hits_95;
        lines.push(line);
    }
    for (est, (n, h68, h95)) in &pooled {
        let (p68, p95) = (*h68 as f64 / *n as f64, *h95 as f64 / *n as f64);
        let line = format!("{est} pooled: {p68:.3} / {p95:.3} over {n}");
        if (p68 - 0.683).abs() > 0.04 || (p95 - 0.95).abs() > 0.04 {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
    // Every estimator has both τ for the FM noises at least.
    assert!(cells.len() >= 2 * 3);
}

/// Every cell of `cells` has at least `min_intervals` intervals and covers
/// within ±0.04 of nominal at 68.3 % and at 95 % (the issue's bound); the
/// cells are printed (`--nocapture`) and every one outside is named.
fn check_nominal<'a>(cells: impl IntoIterator<Item = &'a CoverageCell>, min_intervals: usize) {
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for c in cells {
        let name = format!(
            "{} {} m={}",
            c.estimator.name(),
            tauwise::model::noise_label(c.alpha).unwrap_or("?"),
            c.m
        );
        assert!(
            c.with_interval >= min_intervals,
            "{name}: {} intervals",
            c.with_interval
        );
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!("{name} T/τ={:.1}: {c68:.3} / {c95:.3}", c.t_over_tau);
        if (c68 - 0.683).abs() > 0.04 || (c95 - 0.95).abs() > 0.04 {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
}

/// NIST SP 1065 estimators with Greenhall & Riley (2003) EDF: ADEV, OADEV.
#[test]
fn allan_intervals_cover() {
    check(&run(&spec(&[Estimator::Adev, Estimator::Oadev])).unwrap());
}

/// MDEV and TDEV (Greenhall & Riley 2003, modified variances).
#[test]
fn modified_intervals_cover() {
    check(&run(&spec(&[Estimator::Mdev, Estimator::Tdev])).unwrap());
}

/// HDEV and OHDEV (Greenhall & Riley 2003, d = 3).
#[test]
fn hadamard_intervals_cover() {
    check(&run(&spec(&[Estimator::Hdev, Estimator::Ohdev])).unwrap());
}

/// The total family, bias-corrected: TOTDEV (SP 1065 rule; exact for WPM
/// and FPM), MTOT, TTOT, HTOT (exact quadratic-form EDF).
#[test]
fn total_family_intervals_cover() {
    check(
        &run(&spec(&[
            Estimator::Totdev,
            Estimator::Mtot,
            Estimator::Ttot,
            Estimator::Htot,
        ]))
        .unwrap(),
    );
}

/// Theo1 (truth: its own expectation, exact from its terms) and TheoH
/// (truth: AVAR; the ThêoBR ratio's variance in the EDF).
#[test]
fn theo_intervals_cover() {
    check(&run(&spec(&[Estimator::Theo1, Estimator::Theoh])).unwrap());
}

/// Theo1 and TheoH at their last points on three record lengths (seeded
/// Monte Carlo; issue: N = 1001, 4096, 16384 — here 1001 and 4097 with
/// fewer records, the full sweep in `examples/coverage.rs`): the 95 %
/// intervals are not too narrow where the EDF is smallest.
#[test]
fn theo_last_points_cover() {
    for (n, records) in [(1001usize, 300usize), (4097, 120)] {
        let t = (n - 1) as f64;
        let mut s = spec(&[Estimator::Theo1, Estimator::Theoh]);
        s.points = n;
        s.records = records;
        s.alphas = vec![0, -1, -2];
        s.grid = TauGrid::Explicit(vec![0.75 * t, 0.5 * t]);
        let cells = run(&s).unwrap();
        assert!(!cells.is_empty());
        for c in &cells {
            let sd = (0.95 * 0.05 / c.with_interval as f64).sqrt();
            assert!(
                c.coverage_95() >= 0.95 - 0.04 - 2.0 * sd,
                "N={n} {} α={} τ={}: {:.3}",
                c.estimator.name(),
                c.alpha,
                c.tau,
                c.coverage_95()
            );
        }
    }
}

/// Cells that over-covered with the χ² interval (docs/statistics.md
/// § Coverage, seeded Monte Carlo at N = 4096: OADEV RWFM at T/τ = 4
/// 0.763, ADEV RWFM 0.715, TOTDEV WPM at T/τ = 8 0.805, MDEV FFM at T/τ = 4
/// 0.759) now take their interval from the distribution of the estimate's
/// quadratic form (`stats::form_interval`). Seeded Monte Carlo here
/// (N = 2049, 400 records): 68.3 % coverage within ±0.06 of nominal
/// (0.04 plus about two binomial standard errors of 0.023) and 95 %
/// coverage not below 0.95 − 0.04 − 2 s.e. (the dangerous side) nor above
/// 0.99.
#[test]
fn former_wide_cells_cover_at_nominal() {
    let mut s = spec(&[
        Estimator::Adev,
        Estimator::Oadev,
        Estimator::Mdev,
        Estimator::Totdev,
    ]);
    s.records = 400;
    s.alphas = vec![2, -1, -2];
    s.grid = TauGrid::Explicit(vec![256.0, 512.0]);
    s.seed = 91_000;
    let cells = run(&s).unwrap();
    let wanted = [
        (Estimator::Oadev, -2, 512usize),
        (Estimator::Adev, -2, 512),
        (Estimator::Mdev, -1, 512),
        (Estimator::Totdev, 2, 256),
    ];
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for (est, alpha, m) in wanted {
        let c = cells
            .iter()
            .find(|c| c.estimator == est && c.alpha == alpha && c.m == m)
            .unwrap_or_else(|| panic!("no cell {est:?} α={alpha} m={m}"));
        let n = c.with_interval as f64;
        assert!(n >= 0.9 * s.records as f64, "{est:?}: {n} intervals");
        let sd95 = (0.95 * 0.05 / n).sqrt();
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!(
            "{} α={alpha} T/τ={:.1}: {c68:.3} / {c95:.3}",
            est.name(),
            c.t_over_tau
        );
        if (c68 - 0.683).abs() > 0.06 || c95 < 0.95 - 0.04 - 2.0 * sd95 || c95 > 0.99 {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
}

/// TOTDEV on flicker PM at T/τ = 16, 8 and 4 (seeded Monte Carlo, N = 2049,
/// 1000 records: one binomial standard error 0.015 at 68.3 %; with 500,
/// 0.021, the T/τ = 4 cell read 0.723 on these seeds, at the edge of
/// ±0.04 by chance, and 0.704 with 1000): its EDF is now exact from the terms' covariances
/// (`stats::totals::totvar_edf_flicker_pm`; the former rule, 15–20 % low,
/// covered 0.77–0.82 at 68.3 %) and its interval the split spectrum with the
/// two end samples' eigenvalues kept apart. Coverage at 68.3 % within
/// ±0.04 of nominal (issue 11: when the simulator's flicker records were
/// the first N samples of a process started from rest, their reflected
/// ends varied less than the stationary process the form describes — EDF
/// measured 17 % above the exact one at T/τ = 8, 0.734 at 68.3 % here —
/// and the upper tolerance had been relaxed to +0.06; the records are now
/// segments of the process in steady state, src/simulate.rs § Steady
/// state: now 0.706, 0.694, 0.704 at T/τ = 16, 8, 4, EDF within 12 % of
/// the spread's); at 95 % not below 0.91 (the dangerous side) and at
/// most 0.995 — there the interval is the union with the χ² interval
/// (`form_interval::GUARD_CONFIDENCE`), which puts it at 0.97–0.99; and the
/// EDF within 25 % of the one the spread of 1000 values shows (the spread's
/// own sampling error at EDF ≈ 20 is about 7 %).
#[test]
fn totdev_flicker_pm_covers_at_nominal() {
    let mut s = spec(&[Estimator::Totdev]);
    s.records = 1000;
    s.alphas = vec![1];
    s.grid = TauGrid::Explicit(vec![128.0, 256.0, 512.0]);
    s.seed = 123_000;
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 3);
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for c in &cells {
        assert!(c.with_interval >= 900, "{} intervals", c.with_interval);
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!(
            "totdev FPM T/τ={:.1}: {c68:.3} / {c95:.3}, EDF {:.1} given, {:.1} measured",
            c.t_over_tau, c.mean_edf, c.monte_carlo_edf
        );
        if (c68 - 0.683).abs() > 0.04
            || !(0.91..=0.995).contains(&c95)
            || (c.mean_edf / c.monte_carlo_edf - 1.0).abs() > 0.25
        {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
}

/// TheoH's ThêoBR part (τ ≥ 10 % of the record) at T/τ = 8, 4 and 2, where
/// its χ²_ν interval over-covered (full sweep, N = 4096, 1000 records:
/// 0.80 / 0.98 at T/τ = 2 for WFM, FFM and RWFM, 0.73–0.74 at T/τ = 4 and
/// RWFM at 8): the interval is now the pivot interval of the product of
/// Theo1's form distribution and the ThêoBR ratio's gamma factor
/// (`form_interval::theoh_interval`). Seeded Monte Carlo, N = 1025 (the FM
/// noises are self-similar: the distribution depends on T/τ), 1000 records
/// per noise type: coverage within ±0.04 of nominal at 68.3 % and 95 %
/// (one binomial standard error 0.015 / 0.007).
#[test]
fn theoh_long_tau_covers_at_nominal() {
    let mut s = spec(&[Estimator::Theoh]);
    s.points = 1025;
    s.records = 1000;
    s.alphas = vec![0, -1, -2];
    s.grid = TauGrid::Explicit(vec![128.0, 256.0, 512.0]);
    s.seed = 31_000;
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 9, "{cells:?}");
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for c in &cells {
        assert!(c.with_interval >= 950, "{} intervals", c.with_interval);
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!(
            "theoh {} T/τ={:.1}: {c68:.3} / {c95:.3}, EDF {:.2} given, {:.2} measured",
            tauwise::model::noise_label(c.alpha).unwrap_or("?"),
            c.t_over_tau,
            c.mean_edf,
            c.monte_carlo_edf
        );
        if (c68 - 0.683).abs() > 0.04 || (c95 - 0.95).abs() > 0.04 {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
}

/// TheoH's reported EDF at its ThêoBR part describes its interval: it is
/// 2E²/Var of the product distribution the interval is taken from
/// (Q·R, `form_interval::theoh_factors`: Var = (1 + V_Q)(1 + V_R) − 1,
/// analytic for independent factors) for the five noise types, and over
/// seeded records (N = 2049, 300 per type, T/τ = 8 and 4) the EDF the
/// spread of the values shows — over the records labelled with the
/// simulated type, since a record read as another type gets another bias
/// correction (white PM: 2 % of the records took the measured EDF from 3300
/// to 1530 at N = 4096) — is within 25 % of the one reported (seeded Monte
/// Carlo; one standard error of a Monte Carlo EDF from 300 records is
/// about 8 %).
#[test]
fn theoh_edf_describes_its_interval() {
    use tauwise::stats::form_interval::theoh_factors;
    use tauwise::stats::theo::theoh_edf;
    for alpha in [2, 1, 0, -1, -2] {
        for (n, ms) in [(1025usize, [170usize, 342, 682]), (4096, [682, 1366, 2730])] {
            for m in ms {
                let (q, k) = theoh_factors(alpha, m, n).unwrap();
                let mean: f64 = q.iter().map(|(l, h)| l * h).sum();
                let v_q = q.iter().map(|(l, h)| 2.0 * h * l * l).sum::<f64>() / (mean * mean);
                let v_r = k.map_or(0.0, |k| 2.0 / k);
                let want = 2.0 / ((1.0 + v_q) * (1.0 + v_r) - 1.0);
                let got = theoh_edf(alpha, n, m).unwrap();
                assert!(
                    (got / want - 1.0).abs() < 1e-9,
                    "α = {alpha}, N = {n}, m = {m}: EDF {got} reported, the interval's {want}"
                );
            }
        }
    }
    let mut s = spec(&[Estimator::Theoh]);
    s.points = 2049;
    s.records = 300;
    s.grid = TauGrid::Explicit(vec![256.0, 512.0]);
    s.seed = 41_000;
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 10, "{cells:?}");
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for c in &cells {
        let line = format!(
            "theoh {} T/τ={:.1}: EDF {:.1} given, {:.1} measured (labelled right), {:.1} (all)",
            tauwise::model::noise_label(c.alpha).unwrap_or("?"),
            c.t_over_tau,
            c.mean_edf,
            c.monte_carlo_edf_right,
            c.monte_carlo_edf
        );
        if !((c.mean_edf / c.monte_carlo_edf_right - 1.0).abs() <= 0.25) {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "EDF off:\n{}", bad.join("\n"));
}

/// TheoH on flicker PM at T/τ = 8 and 4 (N = 4096), where the 300-record
/// sweep gave 0.737 / 0.977 and 0.753 / 0.967: the EDF was 10–20 % below
/// the spread (the ThêoBR excess for flicker PM, 0.013·(N/1001)^−0.31,
/// overstated the seeded calibration at N = 4097 — 0.0074 at T/τ = 8 —,
/// and Theo1's flicker-PM EDF is itself about 10 % low there). Seeded Monte
/// Carlo, 600 records: coverage within ±0.04 of nominal at 68.3 % and 95 %
/// (one binomial standard error 0.019 / 0.009).
#[test]
fn theoh_flicker_pm_covers_at_nominal_at_4096() {
    let mut s = spec(&[Estimator::Theoh]);
    s.points = 4096;
    s.records = 600;
    s.alphas = vec![1];
    s.grid = TauGrid::Explicit(vec![512.0, 1024.0]);
    s.seed = 1;
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 2, "{cells:?}");
    let mut lines = Vec::new();
    let mut bad = Vec::new();
    for c in &cells {
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        let line = format!(
            "theoh FPM T/τ={:.1}: {c68:.3} / {c95:.3}, EDF {:.1} given, {:.1} measured",
            c.t_over_tau, c.mean_edf, c.monte_carlo_edf_right
        );
        if (c68 - 0.683).abs() > 0.04 || (c95 - 0.95).abs() > 0.04 {
            bad.push(line.clone());
        }
        lines.push(line);
    }
    eprintln!("{}", lines.join("\n"));
    assert!(bad.is_empty(), "coverage off:\n{}", bad.join("\n"));
}

/// The simulator's white PM against the analytic white-PM deviations, with
/// the coverage sweep's seeds (s + 7919·r) and with consecutive seeds
/// (1000 + r): for discrete white phase of variance σ_x² = h2·f_h/(4π²)
/// (IEEE Std 1139, f_h = 1/(2τ0)), AVAR(mτ0) = 3σ_x²/τ² and MVAR(mτ0) =
/// 3σ_x²/(m·τ²) exactly (analytic; NIST SP 1065 Table 5 in sampled form).
/// Over 600 seeded records of N = 4096 per seed set, the mean of σ̂²/σ² is
/// within 4 standard errors of 1 for OADEV (m = 1, 16, 512) and MDEV
/// (m = 16, 128, 512), and the Monte Carlo EDF of MDEV at m = 128 within
/// 20 % of the exact EDF of its quadratic form on white phase,
/// ν = tr(A)²/tr(A²) (Greenhall & Riley 2003; tr(A) = M·r(0),
/// tr(A²) = Σ_{|d|<M}(M − |d|)·r(d)², r the kernel's autocorrelation).
/// `examples/wpm_seed_sets.rs` is the long form (docs/statistics.md, § the
/// seed-set question).
#[test]
fn white_pm_simulation_matches_the_analytic_deviations_for_both_seed_sets() {
    use rayon::prelude::*;
    use tauwise::deviation::compute;
    use tauwise::model::PowerLaw;
    use tauwise::simulate::{simulate_phase, white_sigma, SimSpec};
    let (n, records, h2) = (4096usize, 600usize, 1e-20);
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
    let kernel = |est: Estimator, m: usize| -> Vec<f64> {
        if est == Estimator::Oadev {
            let mut c = vec![0.0; 2 * m + 1];
            (c[0], c[m], c[2 * m]) = (1.0, -2.0, 1.0);
            c
        } else {
            let mut c = vec![0.0; 3 * m];
            for j in 0..m {
                c[j] += 1.0 / m as f64;
                c[j + m] -= 2.0 / m as f64;
                c[j + 2 * m] += 1.0 / m as f64;
            }
            c
        }
    };
    let exact_edf = |c: &[f64]| -> f64 {
        let w = c.len();
        let terms = n + 1 - w;
        let r = |d: usize| -> f64 { (0..w - d).map(|j| c[j] * c[j + d]).sum() };
        let mut tr2 = terms as f64 * r(0).powi(2);
        for d in 1..w.min(terms) {
            tr2 += 2.0 * (terms - d) as f64 * r(d).powi(2);
        }
        (terms as f64 * r(0)).powi(2) / tr2
    };
    let mut bad = Vec::new();
    for (name, first, step) in [("s + 7919·r", 1u64, 7919u64), ("1000 + r", 1000, 1)] {
        let ratios: Vec<Vec<f64>> = (0..records)
            .into_par_iter()
            .map(|r| {
                let rec =
                    simulate_phase(&SimSpec::new(model, 1.0, n, first + step * r as u64)).unwrap();
                cases
                    .iter()
                    .map(|&(est, m)| {
                        let tau = m as f64;
                        let truth = if est == Estimator::Oadev {
                            3.0 * sx2 / (tau * tau)
                        } else {
                            3.0 * sx2 / (m as f64 * tau * tau)
                        };
                        compute(est, &rec, &[m])[0].value.powi(2) / truth
                    })
                    .collect()
            })
            .collect();
        for (i, &(est, m)) in cases.iter().enumerate() {
            let v: Vec<f64> = ratios.iter().map(|r| r[i]).collect();
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            let var = v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (v.len() - 1) as f64;
            let exact = exact_edf(&kernel(est, m));
            // The standard error of the mean from the exact EDF.
            let se = (2.0 / exact / v.len() as f64).sqrt();
            let mc_edf = 2.0 * mean * mean / var;
            let line = format!(
                "{name} {est} m = {m}: mean {mean:.4} (s.e. {se:.4}), EDF {mc_edf:.2} measured, {exact:.2} exact"
            );
            if (mean - 1.0).abs() > 4.0 * se
                || (est == Estimator::Mdev && m == 128 && (mc_edf / exact - 1.0).abs() > 0.2)
            {
                bad.push(line.clone());
            }
            eprintln!("{line}");
        }
    }
    assert!(bad.is_empty(), "white PM off:\n{}", bad.join("\n"));
}

/// ADEV and HDEV on white PM at the last octaves (seeded Monte Carlo,
/// N = 4096 as in the sweep, 1000 records, seed 1 of `examples/coverage`):
/// the sweep had ADEV at T/τ = 4 at 0.743 and HDEV at T/τ = 8 at 0.732 at
/// 68.3 % — the reduced record rounded T/τ = 3.999 up to 4 (one term more)
/// and left a degenerate rest. The non-overlapping forms on white PM are
/// now exact at any m (`form_interval::pivot_weights`). 68.3 % coverage
/// within ±0.04 of nominal, 95 % within ±0.04.
#[test]
fn non_overlapping_white_pm_last_octaves_cover_at_nominal() {
    let s = CoverageSpec {
        estimators: vec![Estimator::Adev, Estimator::Hdev],
        alphas: vec![2],
        points: 4096,
        records: 1000,
        seed: 1,
        grid: TauGrid::Explicit(vec![512.0, 1024.0]),
        ..spec(&[])
    };
    let cells = run(&s).unwrap();
    let wanted = [(Estimator::Adev, 1024usize), (Estimator::Hdev, 512)].map(|(est, m)| {
        cells
            .iter()
            .find(|c| c.estimator == est && c.m == m)
            .unwrap_or_else(|| panic!("no cell {est:?} m={m}"))
    });
    check_nominal(wanted, 900);
}

/// ADEV and HDEV at T/τ = 12, 6 and exactly 3 (N = 3073, m = 256, 512,
/// 1024: four samples read at the last, two Allan terms and one Hadamard
/// term), seeded Monte Carlo (1000 records per noise type, seed 1 of
/// `examples/coverage`): every noise type within ±0.04 of nominal at
/// 68.3 % and 95 %. The non-overlapping forms are built on the samples
/// they read (`form_interval::spectrum_subsampled`); before, the FM noises
/// at m = 1024 fell back to χ²_ν here (the dense eigen-solver failed on
/// the reduced record's rank-deficient form), and at N = 4096 the reduced
/// record rounded T/τ = 3.999 to 4 (a third Allan term).
#[test]
fn non_overlapping_last_octaves_cover_at_nominal_for_every_noise() {
    let s = sweep_spec(
        &[Estimator::Adev, Estimator::Hdev],
        &[2, 1, 0, -1, -2],
        3073,
        &[256.0, 512.0, 1024.0],
    );
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 30, "{} cells", cells.len());
    check_nominal(&cells, 950);
}

/// OADEV and OHDEV on flicker PM at T/τ = 4 (seeded Monte Carlo, N = 4096,
/// 1000 records, seed 1 of `examples/coverage`, the sweep's records): the
/// sweep had 0.744 and 0.738 at 68.3 % — the split spectrum continued the
/// two leading shares geometrically and left no variance for the rest,
/// and the χ²_ν interval (too wide in the middle for a distribution with
/// two dominant weights) stood. The leading eigenvalues are now carried by
/// the exact means (`form_interval::pivot_weights`). Within ±0.04 of
/// nominal at 68.3 % and 95 %, T/τ = 8 and 4.
#[test]
fn overlapping_flicker_pm_last_octaves_cover_at_nominal() {
    let s = sweep_spec(
        &[Estimator::Oadev, Estimator::Ohdev],
        &[1],
        4096,
        &[512.0, 1024.0],
    );
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 4, "{} cells", cells.len());
    check_nominal(&cells, 950);
}

/// TOTDEV on flicker PM at T/τ = 4, the form's own interval without the
/// union with χ²_ν (seeded Monte Carlo, N = 4096, 1000 records, seed 1 of
/// `examples/coverage`, `--no-guard`): it covered 0.894 at 95 % (too
/// narrow — the end pair's continued shares were too large and the rest
/// too narrow), which is why the union was kept there. With the weights
/// continued per unit m (`form_interval::pivot_weights`) the form alone
/// is within ±0.04 of nominal at 68.3 % and 95 %; with the guard (as the
/// commands) the 95 % coverage stays within +0.04.
#[test]
fn totdev_flicker_pm_form_alone_covers_at_nominal() {
    for guard in [false, true] {
        let s = CoverageSpec {
            guard,
            ..sweep_spec(&[Estimator::Totdev], &[1], 4096, &[1024.0])
        };
        let cells = run(&s).unwrap();
        assert_eq!(cells.len(), 1);
        let c = &cells[0];
        assert!(c.with_interval >= 950, "{} intervals", c.with_interval);
        let (c68, c95) = (c.coverage_68(), c.coverage_95());
        eprintln!("guard {guard}: {c68:.3} / {c95:.3}");
        assert!(
            (c68 - 0.683).abs() <= 0.04 && (c95 - 0.95).abs() <= 0.04,
            "guard {guard}: {c68:.3} / {c95:.3}"
        );
    }
}

/// TOTDEV on flicker PM at T/τ = 8 and 4 on the simulator's records as
/// made, N = 2049, which are segments of the process in steady state
/// (src/simulate.rs § Steady state; this test first took the last N of
/// 5N samples to get there, issue 11) (seeded Monte Carlo, 1000 records,
/// the true noise type and the exact bias factor, the form's own interval
/// without the union). On these the exact EDF is what the spread shows
/// (within 10 %), the bias-corrected mean is within 2 % of the truth, and
/// the intervals cover within ±0.04 of nominal at 68.3 % and 95 %. (On
/// records started from rest the sweep's cells read 0.70–0.72 at 68.3 %
/// at T/τ = 8 and a mean of 0.95 at T/τ = 4.)
#[test]
fn totdev_flicker_pm_covers_on_stationary_records() {
    use tauwise::deviation::compute;
    use tauwise::model::PowerLaw;
    use tauwise::record::PhaseRecord;
    use tauwise::simulate::{simulate_phase, SimSpec};
    use tauwise::stats::coverage::truth;
    use tauwise::stats::form_interval::interval_for_rule;
    use tauwise::stats::{edf, totals::totvar_bias, VarianceKind};
    let (n, records) = (2049usize, 1000usize);
    let mut model = PowerLaw::zero(0.5);
    model.set(1, 1.0);
    let recs: Vec<PhaseRecord> = (0..records)
        .map(|r| simulate_phase(&SimSpec::new(model, 1.0, n, 321 + 7919 * r as u64)).unwrap())
        .collect();
    let mut bad = Vec::new();
    for m in [256usize, 512] {
        let b = totvar_bias(1, m, n).unwrap();
        let nu = edf(VarianceKind::Total, 1, m, n).unwrap();
        let tr = truth(Estimator::Totdev, 1, m as f64, m, 1.0).unwrap();
        let (mut h68, mut h95, mut s1, mut s2) = (0usize, 0usize, 0.0, 0.0);
        for rec in &recs {
            let v = compute(Estimator::Totdev, rec, &[m])[0].value / b.sqrt();
            let ratio = (v / tr).powi(2);
            s1 += ratio;
            s2 += ratio * ratio;
            for (c, h) in [(0.683, &mut h68), (0.95, &mut h95)] {
                let (lo, hi, _) =
                    interval_for_rule(Estimator::Totdev, 1, m, n, v, nu, c, false).unwrap();
                *h += usize::from(lo <= tr && tr <= hi);
            }
        }
        let k = records as f64;
        let mean = s1 / k;
        let var = (s2 / k - mean * mean) * k / (k - 1.0);
        let (c68, c95) = (h68 as f64 / k, h95 as f64 / k);
        let line = format!(
            "T/τ={:.1}: {c68:.3} / {c95:.3}, mean {mean:.3}, EDF {nu:.1} given, {:.1} measured",
            (n - 1) as f64 / m as f64,
            2.0 * mean * mean / var
        );
        eprintln!("{line}");
        if (c68 - 0.683).abs() > 0.04
            || (c95 - 0.95).abs() > 0.04
            || (mean - 1.0).abs() > 0.02
            || (nu * var / (2.0 * mean * mean) - 1.0).abs() > 0.1
        {
            bad.push(line);
        }
    }
    assert!(bad.is_empty(), "off:\n{}", bad.join("\n"));
}

/// OADEV and OHDEV on flicker PM at T/τ ≤ 16 take their interval from the
/// distribution of their quadratic form, whose variance is the exact one
/// from the covariance of the terms (`form_interval::overlapping_moments`:
/// Gaussian fourth moments, the definition of the EDF, Greenhall & Riley
/// 2003). The EDF each point reports is that distribution's,
/// 2·(Σ h·λ)²/(2·Σ h·λ²) of the interval's weights (analytic), both where
/// the spectrum is exact (m ≤ 16) and where its leading eigenvalues are
/// carried to m (before: Greenhall & Riley's rule on the discrete
/// Kasdin–Walter kernel, 7 % higher at T/τ = 4 — 37.5 against 35.0 at
/// m = 1024, N = 4097 — while the interval used 35.0). Beyond T/τ = 16
/// (χ²_ν intervals) the exact EDF is kept too
/// (`overlapping_flicker_pm_beyond_the_form_covers_at_nominal`).
#[test]
fn overlapping_flicker_pm_edf_describes_its_interval() {
    use tauwise::deviation::compute;
    use tauwise::record::PhaseRecord;
    use tauwise::stats::annotate::edf_of;
    use tauwise::stats::form_interval::pivot_weights;
    let cases: [(usize, &[usize]); 4] = [
        (129, &[8, 16]),
        (257, &[16]),
        (1025, &[64, 128, 256]),
        (4097, &[256, 512, 1024]),
    ];
    for est in [Estimator::Oadev, Estimator::Ohdev] {
        for (n, ms) in cases {
            let x: Vec<f64> = (0..n).map(|i| (0.37 * i as f64).sin()).collect();
            let rec = PhaseRecord::new(x, 1.0).unwrap();
            for &m in ms {
                let e = compute(est, &rec, &[m])[0];
                let got = edf_of(est, 1, n, 1.0, &e).unwrap();
                let w = pivot_weights(est, 1, m, n, got).unwrap();
                let mean: f64 = w.iter().map(|(l, h)| h * l).sum();
                let var: f64 = w.iter().map(|(l, h)| 2.0 * h * l * l).sum();
                let want = 2.0 * mean * mean / var;
                assert!(
                    (got / want - 1.0).abs() < 1e-9,
                    "{} FPM N = {n}, m = {m}: EDF {got} reported, the interval's {want}",
                    est.name()
                );
            }
        }
    }
    // TOTDEV at m = 1 is OADEV term for term (analytic): the same EDF.
    for n in [9usize, 17, 33] {
        let x: Vec<f64> = (0..n).map(|i| (0.37 * i as f64).sin()).collect();
        let rec = PhaseRecord::new(x, 1.0).unwrap();
        let [oa, tot] = [Estimator::Oadev, Estimator::Totdev]
            .map(|est| edf_of(est, 1, n, 1.0, &compute(est, &rec, &[1])[0]).unwrap());
        assert_eq!(oa, tot, "N = {n}");
    }
}

/// OADEV and OHDEV on flicker PM beyond T/τ = 16, where the interval is
/// χ²_ν with the point's EDF (seeded Monte Carlo, N = 4096, 1000 records,
/// seed 1 of `examples/coverage`, records in steady state). With the EDF
/// of Greenhall & Riley's rule on the discrete Kasdin–Walter kernel the
/// sweep's OADEV cell at T/τ = 128 covered 0.637 at 68.3 % (too narrow:
/// the rule gave 624 where the spread of the records shows 543); the EDF
/// is now the exact ν = 2E[Q]²/Var[Q] of the form's terms
/// (`form_interval::overlapping_moments`, Greenhall & Riley 2003's
/// definition), 573 there. Every cell within ±0.04 of nominal.
#[test]
fn overlapping_flicker_pm_beyond_the_form_covers_at_nominal() {
    let s = sweep_spec(
        &[Estimator::Oadev, Estimator::Ohdev],
        &[1],
        4096,
        &[8.0, 32.0, 64.0, 128.0],
    );
    let cells = run(&s).unwrap();
    assert_eq!(cells.len(), 8, "{} cells", cells.len());
    check_nominal(&cells, 950);
}

/// OHDEV on flicker FM at T/τ = 64 (N = 4096): seed 1 of the
/// steady-state sweep covered 0.639 at 68.3 %, 3 binomial standard errors
/// low, though its EDF (Greenhall & Riley's rule, 61.8) equals the exact ν
/// of the form's terms (`form_interval::overlapping_moments`: 61.8) and the
/// spread of those records (57.6) is within the sampling error of an EDF
/// measured on 1000 records (about 5 %). Seeds 1 … 7 (7000 records, seeded
/// Monte Carlo; the other six read 0.672–0.710): pooled within ±0.015 of
/// nominal at 68.3 % and ±0.01 at 95 % (one standard error 0.0056 /
/// 0.0026), and the measured EDF within 5 % of the one given — the seed-1
/// cell is chance, not the rule.
#[test]
fn ohdev_flicker_fm_at_t_over_tau_64_covers_over_seeds() {
    let (mut n, mut h68, mut h95, mut edf_given, mut edf_mc) = (0usize, 0usize, 0usize, 0.0, 0.0);
    for seed in 1..=7u64 {
        let s = CoverageSpec {
            seed,
            ..sweep_spec(&[Estimator::Ohdev], &[-1], 4096, &[64.0])
        };
        let cells = run(&s).unwrap();
        assert_eq!(cells.len(), 1);
        let c = &cells[0];
        eprintln!(
            "seed {seed}: {:.3} / {:.3}, EDF {:.1} given, {:.1} measured",
            c.coverage_68(),
            c.coverage_95(),
            c.mean_edf,
            c.monte_carlo_edf
        );
        n += c.with_interval;
        h68 += c.hits_68;
        h95 += c.hits_95;
        edf_given += c.mean_edf;
        edf_mc += c.monte_carlo_edf;
    }
    let (c68, c95) = (h68 as f64 / n as f64, h95 as f64 / n as f64);
    eprintln!("pooled over {n}: {c68:.3} / {c95:.3}");
    assert!(n >= 6900, "{n} intervals");
    assert!(
        (c68 - 0.683).abs() <= 0.015 && (c95 - 0.95).abs() <= 0.01,
        "{c68:.3} / {c95:.3}"
    );
    assert!(
        (edf_mc / edf_given - 1.0).abs() < 0.05,
        "EDF {edf_given} given, {edf_mc} measured"
    );
}
