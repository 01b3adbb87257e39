//! The full coverage sweep: seeded Monte Carlo coverage of every
//! estimator's 68.3 % and 95 % intervals, for the five power-law noise types,
//! over the octave τ grid (or a chosen grid), with the EDF given beside the
//! EDF the spread of the values shows.
//!
//! ```sh
//! cargo run --release --example coverage -- --points 4096 --records 2000
//! cargo run --release --example coverage -- --dev theoh,totdev --alphas 0,-1 --records 500
//! ```
//!
//! Options: `--points N` (4096), `--records R` per noise type (1000),
//! `--dev LIST` (every estimator with intervals), `--alphas LIST`
//! (2,1,0,-1,-2), `--taus GRID` (octave), `--seed S` (1), `--min-t-over-tau X`,
//! `--max-t-over-tau X`, `--no-cap` (no rule across τ), `--no-guard` (the
//! form interval alone at 95 %, without the union with χ²), `--with-99`
//! (also the 99 % intervals), `--json`.
//! The CI tests (`tests/coverage.rs`) run the same code with fewer records.

use tauwise::deviation::Estimator;
use tauwise::stats::coverage::{run, CoverageSpec};
use tauwise::tau::TauGrid;

fn main() -> tauwise::Result<()> {
    let mut spec = CoverageSpec {
        estimators: Estimator::ALL
            .iter()
            .copied()
            .filter(|e| !matches!(e, Estimator::Mtie | Estimator::TieRms))
            .collect(),
        alphas: vec![2, 1, 0, -1, -2],
        points: 4096,
        records: 1000,
        seed: 1,
        grid: TauGrid::Octave,
        max_t_over_tau: None,
        min_t_over_tau: None,
        rule: tauwise::stats::noise_id::CrossTauRule::CapAtShorterTau,
        guard: true,
        check_99: false,
    };
    let mut json = false;
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut i = 0;
    while i < args.len() {
        let value = |i: usize| {
            args.get(i + 1)
                .cloned()
                .ok_or_else(|| tauwise::Error::invalid(format!("{} needs a value", args[i])))
        };
        match args[i].as_str() {
            "--points" => spec.points = parse(&value(i)?)?,
            "--records" => spec.records = parse(&value(i)?)?,
            "--seed" => spec.seed = parse(&value(i)?)?,
            "--dev" => spec.estimators = Estimator::parse_list(&value(i)?)?,
            "--alphas" => {
                spec.alphas = value(i)?
                    .split(',')
                    .map(parse::<i32>)
                    .collect::<tauwise::Result<_>>()?
            }
            "--taus" => spec.grid = TauGrid::parse(&value(i)?)?,
            "--min-t-over-tau" => spec.min_t_over_tau = Some(parse(&value(i)?)?),
            "--max-t-over-tau" => spec.max_t_over_tau = Some(parse(&value(i)?)?),
            "--no-cap" => {
                spec.rule = tauwise::stats::noise_id::CrossTauRule::None;
                i += 1;
                continue;
            }
            "--with-99" => {
                spec.check_99 = true;
                i += 1;
                continue;
            }
            "--no-guard" => {
                spec.guard = false;
                i += 1;
                continue;
            }
            "--json" => {
                json = true;
                i += 1;
                continue;
            }
            other => return Err(tauwise::Error::invalid(format!("unknown option {other}"))),
        }
        i += 2;
    }
    let t = std::time::Instant::now();
    let cells = run(&spec)?;
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&cells).unwrap_or_default()
        );
        return Ok(());
    }
    println!(
        "seeded Monte Carlo: N = {}, {} records per noise type, {:.1} s",
        spec.points,
        spec.records,
        t.elapsed().as_secs_f64()
    );
    println!(
        "{:<7} {:>5} {:>9} {:>7} {:>6} {:>7} {:>7} {:>7} {:>6} {:>6} {:>9} {:>9} {:>9} {:>7}",
        "dev",
        "noise",
        "tau",
        "T/tau",
        "n",
        "68.3%",
        "95%",
        "99%",
        "right",
        "drift",
        "edf",
        "edf(MC)",
        "MC right",
        "mean"
    );
    for c in &cells {
        println!(
            "{:<7} {:>5} {:>9.1} {:>7.2} {:>6} {:>7.3} {:>7.3} {:>7.3} {:>6.2} {:>6} {:>9.2} {:>9.2} {:>9.2} {:>7.3}",
            c.estimator.name(),
            tauwise::model::noise_label(c.alpha).unwrap_or("?"),
            c.tau,
            c.t_over_tau,
            c.with_interval,
            c.coverage_68(),
            c.coverage_95(),
            c.coverage_99(),
            c.labelled_right as f64 / c.records.max(1) as f64,
            c.labelled_drift,
            c.mean_edf,
            c.monte_carlo_edf,
            c.monte_carlo_edf_right,
            c.mean_ratio
        );
    }
    Ok(())
}

fn parse<T: std::str::FromStr>(s: &str) -> tauwise::Result<T> {
    s.trim()
        .parse()
        .map_err(|_| tauwise::Error::invalid(format!("'{s}' is not a valid number here")))
}
