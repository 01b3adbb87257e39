//! The heavy form of `tests/noise_id.rs`'s grid-independence check: on
//! seeded records of N = 4096 (FPM, FFM, and WFM crossing into RWFM), every
//! point of OADEV, TOTDEV, MDEV and OHDEV on the `octave`, `decade` and
//! `all` grids whose factor is in a spread of checked factors — and every
//! Theo1 and TheoH point on `octave`, `decade` and 7 per decade — must be
//! identical (value, label, EDF, interval, bias) to the same τ asked
//! alone. The tests run it with a dense grid instead of `all` at N = 4096
//! and `all` at N = 64; this is the full version (long: every τ of `all`
//! from T/16 on — over a thousand at N = 4096 — takes an interval from the
//! quadratic form's distribution).
//!
//! ```sh
//! cargo run --release --example grid_independence [-- POINTS]
//! ```
//!
//! POINTS (default 4096) sets the record length; the checked factors are
//! those below a third of it. At N = 4096: 645 points compared, none
//! differs, 196 s wall (116 s CPU, nice 10, load 4–6 on the shared 2-core
//! machine). It did not finish in 17 minutes while the quadratic form's CDF
//! was Imhof's integral (up to a few tenths of a second a value for a few
//! dominant eigenvalues); it is now Talbot's contour there
//! (`stats::weighted_chi2`).

use tauwise::deviation::Estimator;
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::stability::{analyse, Request};
use tauwise::tau::TauGrid;
use tauwise::PhaseRecord;

fn compare_with_alone(
    rec: &PhaseRecord,
    ests: &[Estimator],
    grids: &[TauGrid],
    checked: &[usize],
    what: &str,
) -> tauwise::Result<(usize, usize)> {
    let run = |grid: TauGrid| {
        let req = Request {
            estimators: ests.to_vec(),
            grid,
            confidence: 0.683,
            forced_alpha: None,
            bias_correction: true,
        };
        analyse(rec, &req)
    };
    let by_grid = grids
        .iter()
        .map(|g| run(g.clone()))
        .collect::<tauwise::Result<Vec<_>>>()?;
    let mut alone_runs: std::collections::HashMap<usize, Vec<_>> = Default::default();
    let (mut compared, mut differ) = (0, 0);
    for (k, est) in ests.iter().enumerate() {
        for curves in &by_grid {
            for p in &curves[k].points {
                let e = p.estimate;
                let on_lattice = (e.tau - e.m as f64).abs() > 1e-9 || *est == Estimator::Theo1;
                let m = if on_lattice {
                    (0.75 * e.m as f64).round() as usize
                } else {
                    e.m
                };
                if !est.uses_theo_lattice() && !checked.contains(&m) {
                    continue;
                }
                if let std::collections::hash_map::Entry::Vacant(v) = alone_runs.entry(m) {
                    v.insert(run(TauGrid::Explicit(vec![m as f64]))?);
                }
                let q = alone_runs[&m][k]
                    .points
                    .iter()
                    .find(|q| q.estimate.tau == e.tau);
                compared += 1;
                if q != Some(p) {
                    differ += 1;
                    println!("{what} {est} τ = {}: grid {p:?}\n  alone {q:?}", e.tau);
                }
            }
        }
    }
    Ok((compared, differ))
}

fn main() -> tauwise::Result<()> {
    let t = std::time::Instant::now();
    let points: usize = match std::env::args().nth(1) {
        Some(a) => a
            .parse()
            .map_err(|_| tauwise::Error::invalid(format!("POINTS: a whole number, got {a}")))?,
        None => 4096,
    };
    let checked = [
        1usize, 2, 5, 10, 20, 50, 64, 100, 128, 200, 256, 500, 512, 1000, 1024, 1365,
    ];
    let mut total = (0, 0);
    for (model, seed) in [
        ("h1=1e-20", 31u64),
        ("h-1=1e-24", 32),
        ("h0=1e-22,h-2=1e-30", 33),
    ] {
        let m = PowerLaw::parse(model, 0.5)?;
        let rec = simulate_phase(&SimSpec::new(m, 1.0, points, seed))?;
        let checked: Vec<usize> = checked
            .iter()
            .copied()
            .filter(|&c| c <= points / 3)
            .collect();
        for (ests, grids) in [
            (
                vec![
                    Estimator::Oadev,
                    Estimator::Totdev,
                    Estimator::Mdev,
                    Estimator::Ohdev,
                ],
                vec![TauGrid::Octave, TauGrid::Decade, TauGrid::All],
            ),
            (
                vec![Estimator::Theoh, Estimator::Theo1],
                vec![TauGrid::Octave, TauGrid::Decade, TauGrid::PerDecade(7)],
            ),
        ] {
            let (c, d) = compare_with_alone(&rec, &ests, &grids, &checked, model)?;
            println!("{model} {ests:?}: {c} points compared, {d} differ");
            total.0 += c;
            total.1 += d;
        }
    }
    println!(
        "{} points compared, {} differ ({:.0} s)",
        total.0,
        total.1,
        t.elapsed().as_secs_f64()
    );
    if total.1 > 0 {
        return Err(tauwise::Error::invalid(format!(
            "{} points depend on the grid",
            total.1
        )));
    }
    Ok(())
}
