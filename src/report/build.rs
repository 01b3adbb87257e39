//! Assembly of a [`Report`] from a DUT file: read every input, hash it, run
//! the analyses the DUT file asks for, and fill each section's struct.
//!
//! A question the DUT file asks but this build cannot answer is listed with
//! "not computed" and its reason — never left out silently, never invented.

use super::*;
use crate::deviation::{self, Curve, Estimator, Point};
use crate::io::dut::{Dut, TimeSource};
use crate::io::series::{read_series, Series, SeriesOptions};
use crate::plot::stability::{SigmaCurve, StabilityPlot};
use crate::plot::wander::{Metric, WanderPlot};
use crate::tau::TauGrid;

/// Choices for the report that the DUT file does not hold.
#[derive(Debug, Clone, PartialEq)]
pub struct BuildOptions {
    /// Confidence level of the intervals.
    pub confidence: f64,
    /// Estimators for the stability section.
    pub estimators: Vec<Estimator>,
    /// τ grid for the stability section.
    pub grid: TauGrid,
}

impl Default for BuildOptions {
    fn default() -> Self {
        Self {
            confidence: 0.683,
            estimators: vec![
                Estimator::Oadev,
                Estimator::Mdev,
                Estimator::Ohdev,
                Estimator::Tdev,
            ],
            grid: TauGrid::Octave,
        }
    }
}

fn series_options(src: &TimeSource, carrier: Option<f64>) -> SeriesOptions {
    SeriesOptions {
        kind: Some(src.data),
        unit: src.units,
        tau0: src.tau0,
        carrier,
        value_column: src.value_column,
        time_column: src.time_column,
    }
}

fn load(role: &str, src: &TimeSource, carrier: Option<f64>) -> Result<(Series, Provenance)> {
    let mut prov = Provenance::of_file(role, &src.name, &src.path)?;
    let s = read_series(&src.path, &series_options(src, carrier))?;
    prov.points = Some(s.record.len());
    prov.tau0 = Some(s.record.tau0());
    prov.span = Some(s.record.len().saturating_sub(1) as f64 * s.record.tau0());
    prov.gaps = Some(s.record.gaps());
    Ok((s, prov))
}

/// Evaluate one estimator on a τ grid as a [`Curve`] of bare points.
fn curve(est: Estimator, x: &crate::PhaseRecord, grid: &TauGrid) -> Result<Curve> {
    let ms = grid.ms(x.tau0, est.max_m(x.len()))?;
    let mut est_points: Vec<Point> = deviation::compute(est, x, &ms)
        .into_iter()
        .map(Point::bare)
        .collect();
    est_points.sort_by(|a, b| a.estimate.tau.total_cmp(&b.estimate.tau));
    Ok(Curve {
        estimator: est.name().to_string(),
        points: est_points,
    })
}

fn method(name: &str, source: &str) -> Method {
    Method {
        name: name.into(),
        source: source.into(),
    }
}

/// Build the report for a DUT file.
pub fn from_dut(dut: &Dut, opts: &BuildOptions) -> Result<Report> {
    from_dut_with_progress(dut, opts, &mut |_, _, _| {})
}

/// The number of steps [`from_dut_with_progress`] reports for a DUT file.
pub fn steps(dut: &Dut) -> usize {
    dut.records.len() + dut.tie.len() + dut.phase_noise.len() + 3
}

/// Build the report, calling `progress(done, total, what)` before each
/// step (reading a file, each analysis) so that a caller can show progress.
pub fn from_dut_with_progress(
    dut: &Dut,
    opts: &BuildOptions,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<Report> {
    let total = steps(dut);
    let mut done = 0usize;
    let mut step = |what: &str| {
        progress(done, total, what);
        done += 1;
    };
    let mut r = Report::empty(&dut.name, "");
    r.description = dut.description.clone();
    r.dut_file = Some(dut.file.display().to_string());

    // Inputs: read and hash every file.
    let mut records = Vec::new();
    for src in &dut.records {
        step(&format!("reading {}", src.name));
        let (s, p) = load("time record", src, dut.carrier)?;
        r.inputs.push(p);
        records.push((src, s));
    }
    let mut ties = Vec::new();
    for src in &dut.tie {
        step(&format!("reading {}", src.name));
        let (s, p) = load("TIE capture", src, dut.carrier)?;
        r.inputs.push(p);
        ties.push((src, s));
    }
    for t in &dut.phase_noise {
        r.inputs
            .push(Provenance::of_file("phase-noise table", &t.name, &t.path)?);
    }
    for j in &dut.jitter {
        if let Some(f) = &j.filter_file {
            r.inputs
                .push(Provenance::of_file("jitter filter table", &j.name, f)?);
        }
    }
    if let Some(w) = &dut.wander {
        for f in &w.mask_files {
            r.inputs.push(Provenance::of_file(
                "mask file",
                &f.display().to_string(),
                f,
            )?);
        }
    }

    // Frequency stability on the first record.
    step("stability");
    r.stability = match records.first() {
        None => Part::not_requested("the DUT file lists no [[record]]."),
        Some((src, s)) => {
            let x = s.record.to_phase();
            let mut curves = Vec::new();
            for &e in &opts.estimators {
                let c = curve(e, &x, &opts.grid)?;
                if !c.points.is_empty() {
                    curves.push(c);
                }
            }
            if curves.is_empty() {
                Part::not_computed(format!("{} is too short for any τ.", src.name))
            } else {
                r.methods.push(method(
                    &format!(
                        "{} at {} τ",
                        curves
                            .iter()
                            .map(|c| c.estimator.as_str())
                            .collect::<Vec<_>>()
                            .join(", "),
                        match opts.grid {
                            TauGrid::Octave => "octave",
                            TauGrid::Decade => "1-2-5",
                            _ => "the chosen",
                        }
                    ),
                    "NIST SP 1065 (Riley 2008), §5.2: definitions; gaps skipped term by term",
                ));
                let rows = curves
                    .iter()
                    .flat_map(|c| {
                        c.points.iter().map(|p| StabilityRow {
                            estimator: c.estimator.clone(),
                            tau: p.estimate.tau,
                            m: p.estimate.m,
                            dev: p.estimate.value,
                            lo: p.lo,
                            hi: p.hi,
                            edf: p.edf,
                            noise: p.noise().map(str::to_string),
                            terms: p.estimate.terms,
                        })
                    })
                    .collect();
                let has_ci = curves
                    .iter()
                    .any(|c| c.points.iter().any(|p| p.lo.is_some()));
                let mut notes = Vec::new();
                if !has_ci {
                    notes.push(
                        "Confidence intervals, EDF and noise types are not computed by this build (the statistics layer is not in it yet); the table shows them as —."
                            .to_string(),
                    );
                }
                Part::Done(StabilitySection {
                    source: src.name.clone(),
                    plot: StabilityPlot {
                        title: format!("{} — {}", dut.name, src.name),
                        curves: curves.iter().map(SigmaCurve::from_curve).collect(),
                        regions: curves
                            .first()
                            .map(crate::plot::stability::regions_from_curve)
                            .unwrap_or_default(),
                        confidence: has_ci.then_some(opts.confidence),
                        notes: Vec::new(),
                    },
                    rows,
                    confidence: opts.confidence,
                    notes,
                })
            }
        }
    };

    r.noise_model = if records.is_empty() {
        Part::not_requested("the DUT file lists no [[record]].")
    } else {
        Part::not_computed("the power-law model fit is not in this build yet.")
    };

    // Phase noise and jitter.
    r.phase_noise = if dut.phase_noise.is_empty() {
        Part::not_requested("the DUT file lists no [[phase_noise]] table.")
    } else {
        Part::not_computed(
            "the L(f) table reader and the jitter integration are not in this build yet.",
        )
    };
    for j in &dut.jitter {
        r.verdicts.push(Verdict {
            kind: VerdictKind::Jitter,
            item: format!(
                "{} ({} – {})",
                j.name,
                crate::units::format_si(j.from, "Hz", 4),
                crate::units::format_si(j.to, "Hz", 4)
            ),
            criterion: j
                .limit
                .map(|l| format!("rms ≤ {}", crate::units::format_si(l, "s", 4)))
                .unwrap_or_else(|| "no limit given".into()),
            result: "not computed: jitter integration is not in this build yet".into(),
            pass: None,
        });
    }
    r.combined = if dut.phase_noise.is_empty() || records.is_empty() {
        Part::not_requested("needs both a [[record]] and a [[phase_noise]] table.")
    } else {
        Part::not_computed("the σ(τ) conversion from phase noise is not in this build yet.")
    };

    // Wander.
    step("wander");
    r.wander = match &dut.wander {
        None => Part::not_requested("the DUT file has no [wander] section."),
        Some(w) => {
            let pick = |name: &str| {
                ties.iter()
                    .chain(records.iter())
                    .find(|(src, _)| src.name == name)
            };
            let chosen = match &w.source {
                Some(n) => pick(n),
                None => ties.first().or(records.first()),
            };
            match chosen {
                None => Part::not_computed("no capture to analyse."),
                Some((src, s)) => {
                    let x = s.record.to_phase();
                    let grid = TauGrid::PerDecade(10);
                    let mut plots = Vec::new();
                    for (est, metric) in [
                        (Estimator::Mtie, Metric::Mtie),
                        (Estimator::Tdev, Metric::Tdev),
                    ] {
                        // τ up to a tenth of the record (common practice for wander plots).
                        let max_m = est.max_m(x.len()).min(x.len() / 10).max(1);
                        let c = curve(est, &x, &grid)?;
                        let measured: Vec<(f64, f64)> = c
                            .points
                            .iter()
                            .filter(|p| p.estimate.m <= max_m)
                            .map(|p| (p.estimate.tau, p.estimate.value))
                            .collect();
                        plots.push(WanderPlot {
                            title: format!("{} — {}", dut.name, src.name),
                            metric,
                            measured,
                            masks: Vec::new(),
                            notes: vec![
                                "Masks are not drawn: the mask library is not in this build yet."
                                    .into(),
                            ],
                        });
                    }
                    r.methods.push(method(
                        "MTIE and TDEV",
                        "ITU-T G.810 definitions; TDEV as NIST SP 1065 §5.2.6",
                    ));
                    for m in w
                        .masks
                        .iter()
                        .cloned()
                        .chain(w.mask_files.iter().map(|f| f.display().to_string()))
                    {
                        r.verdicts.push(Verdict {
                            kind: VerdictKind::Mask,
                            item: m,
                            criterion: "MTIE and TDEV below the mask".into(),
                            result: "not computed: the mask library is not in this build yet"
                                .into(),
                            pass: None,
                        });
                    }
                    Part::Done(WanderSection {
                        source: src.name.clone(),
                        tie: None,
                        plots,
                        masks: Vec::new(),
                        notes: vec!["TIE statistics and mask verdicts are not computed by this build (the wander layer is not in it yet).".into()],
                    })
                }
            }
        }
    };

    // Holdover.
    step("holdover");
    r.holdover = match &dut.holdover {
        None => Part::not_requested("the DUT file has no [holdover] section."),
        Some(h) => {
            for &span in &h.spans {
                r.verdicts.push(Verdict {
                    kind: VerdictKind::Holdover,
                    item: format!("{} span", crate::units::format_si(span / 3600.0, "h", 3)),
                    criterion: format!(
                        "p95 of |TE| ≤ {}",
                        crate::units::format_si(h.budget, "s", 3)
                    ),
                    result: "not computed: holdover prediction is not in this build yet".into(),
                    pass: None,
                });
            }
            Part::not_computed("holdover prediction is not in this build yet.")
        }
    };

    r.cautions = vec![crate::DECISION_CAUTION.to_string()];
    Ok(r)
}
