//! The overlaid charts of a comparison: one series per device (two for
//! holdover), in the device's colour and marker from
//! [`crate::plot::style::DEVICE_PALETTE`], the same in every chart; masks
//! and budgets in the neutral limit colours.

use super::Fleet;
use crate::plot::style::device_marker;
use crate::plot::{Axis, Chart, Marker, Series, Style, XY};
use crate::report::Part;

pub(super) use crate::plot::overlay::item_style as device_style;
use crate::plot::overlay::{self, missing_note};

fn fleet_title(what: &str) -> String {
    format!("Devices compared — {what}")
}

/// The overlaid charts, with file-name stems: `fleet-stability` (OADEV of
/// each device's first record, with intervals), `fleet-phase-noise` (each
/// device's L(f) table), `fleet-mtie`, `fleet-tdev` (each device's
/// measured curve against every mask), `fleet-holdover` (p95 of |TE| solid,
/// p50 dashed, against each budget). Every series of a device is named by
/// the device and drawn in its colour and marker.
pub fn charts(f: &Fleet) -> Vec<(String, Chart)> {
    vec![
        ("fleet-stability".into(), stability_chart(f)),
        ("fleet-phase-noise".into(), phase_noise_chart(f)),
        (
            "fleet-mtie".into(),
            wander_chart(f, crate::wander::masks::Metric::Mtie),
        ),
        (
            "fleet-tdev".into(),
            wander_chart(f, crate::wander::masks::Metric::Tdev),
        ),
        ("fleet-holdover".into(), holdover_chart(f)),
    ]
}

fn stability_chart(f: &Fleet) -> Chart {
    use crate::deviation::{Estimator, Origin};
    let mut conf = None;
    let items: Vec<(String, Option<&crate::plot::stability::SigmaCurve>)> = f
        .reports
        .iter()
        .map(|r| {
            let curve = match &r.stability {
                Part::Done(list) => list.first().and_then(|s| {
                    s.plot.as_ref().and_then(|p| {
                        conf = conf.or(p.confidence);
                        p.curves.iter().find(|c| {
                            c.estimator == Estimator::Oadev && c.origin == Origin::Measured
                        })
                    })
                }),
                Part::Absent(_) => None,
            };
            (r.device.clone(), curve)
        })
        .collect();
    let subtitle = match conf {
        Some(p) => format!(
            "OADEV of each device's first record, as prepared for its report · bars: {:.1} % confidence intervals",
            p * 100.0
        ),
        None => "OADEV of each device's first record, as prepared for its report".into(),
    };
    overlay::sigma_chart(
        &fleet_title("frequency stability"),
        &subtitle,
        Axis::log_plain("Allan deviation σ_y(τ)", ""),
        &items,
        "no OADEV",
    )
}

fn phase_noise_chart(f: &Fleet) -> Chart {
    use crate::plot::phase_noise::TraceKind;
    let mut ch = Chart::new(
        &fleet_title("phase noise"),
        Axis::log_si("offset frequency", "Hz"),
        Axis::linear_plain("single-sideband phase noise L(f)", "dBc/Hz"),
    );
    ch.subtitle = "each device's L(f) table · L(f) = S_φ(f)/2 (IEEE Std 1139)".into();
    let mut missing = Vec::new();
    let mut carriers = Vec::new();
    for (i, r) in f.reports.iter().enumerate() {
        let trace = match &r.phase_noise {
            Part::Done(p) => {
                carriers.push(p.carrier);
                p.plot.traces.iter().find(|t| t.kind == TraceKind::Table)
            }
            Part::Absent(_) => None,
        };
        match trace {
            Some(t) => ch.series.push(Series {
                name: r.device.clone(),
                points: t.points.iter().map(|&(x, y)| XY::new(x, y)).collect(),
                style: Style {
                    marker: if t.points.len() <= 80 {
                        device_marker(i)
                    } else {
                        Marker::None
                    },
                    ..device_style(i)
                },
            }),
            None => missing.push(r.device.clone()),
        }
    }
    carriers.dedup();
    if carriers.len() > 1 {
        ch.notes.push(
            "The devices' carriers differ: L(f) of different carriers is not directly comparable."
                .into(),
        );
    }
    ch.notes
        .extend(missing_note(&missing, "no phase-noise table"));
    ch
}

fn wander_chart(f: &Fleet, metric: crate::wander::masks::Metric) -> Chart {
    let items: Vec<(String, Option<&crate::plot::wander::WanderPlot>)> = f
        .reports
        .iter()
        .map(|r| {
            let plot = match &r.wander {
                Part::Done(w) => w.plots.iter().find(|p| p.metric == metric),
                Part::Absent(_) => None,
            };
            (r.device.clone(), plot)
        })
        .collect();
    let subtitle = format!(
        "{} of each device's capture against every mask asked for (ITU-T G.810)",
        metric.label()
    );
    let mut ch = overlay::wander_chart(
        &fleet_title(&metric.label()),
        &subtitle,
        metric,
        &items,
        "no wander analysis",
    );
    ch.notes.insert(
        0,
        "Violations are listed in the verdict matrix and in each device's wander section.".into(),
    );
    ch
}

fn holdover_chart(f: &Fleet) -> Chart {
    let spans: Vec<Vec<f64>> = f
        .reports
        .iter()
        .map(|r| match &r.holdover {
            Part::Done(h) => h.spans.iter().map(|s| s.span).collect(),
            Part::Absent(_) => Vec::new(),
        })
        .collect();
    let items: Vec<(String, Option<overlay::HoldoverItem>)> = f
        .reports
        .iter()
        .zip(&spans)
        .map(|(r, spans)| {
            let item = match &r.holdover {
                Part::Done(h) => Some(overlay::HoldoverItem {
                    plot: &h.plot,
                    budget: h.budget,
                    spans,
                }),
                Part::Absent(_) => None,
            };
            (r.device.clone(), item)
        })
        .collect();
    overlay::holdover_chart(
        &fleet_title("holdover"),
        "p95 of |TE| (solid, markers) and p50 (dashed) of each device against its budget",
        &items,
        "no holdover",
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::style::device_colour;
    use crate::report::Report;

    fn report(name: &str) -> Report {
        use crate::plot::holdover::HoldoverPlot;
        use crate::plot::phase_noise::{LfTrace, PhaseNoisePlot, TraceKind};
        use crate::plot::stability::{SigmaCurve, StabilityPlot};
        use crate::plot::wander::{MaskLine, Metric, WanderPlot};
        use crate::report::*;
        let mut r = Report::empty(name, "");
        let pts: Vec<XY> = (0..8)
            .map(|k| {
                let t = 2f64.powi(k);
                XY::with_interval(t, 1e-11 / t.sqrt(), Some(0.9e-11), Some(1.1e-11))
            })
            .collect();
        r.stability = Part::Done(vec![StabilitySection {
            source: "rec".into(),
            quality: None,
            preparation: vec![],
            plot: Some(StabilityPlot {
                title: name.into(),
                curves: vec![SigmaCurve {
                    name: "oadev".into(),
                    estimator: crate::deviation::Estimator::Oadev,
                    origin: crate::deviation::Origin::Measured,
                    points: pts,
                }],
                regions: vec![],
                confidence: Some(0.683),
                notes: vec![],
            }),
            rows: vec![],
            confidence: 0.683,
            notes: vec![],
            limits: vec![],
            limit_checks: vec![],
        }]);
        r.phase_noise = Part::Done(PhaseNoiseSection {
            source: "t".into(),
            carrier: 10e6,
            plot: PhaseNoisePlot {
                title: name.into(),
                carrier: Some(10e6),
                traces: vec![LfTrace {
                    name: "t".into(),
                    kind: TraceKind::Table,
                    points: vec![(1.0, -90.0), (1e6, -150.0)],
                }],
                bands: vec![],
                notes: vec![],
            },
            bands: vec![],
            notes: vec![],
            limits: vec![],
            limit_checks: vec![],
            limit_rows: vec![],
        });
        let wp = |metric| WanderPlot {
            title: name.into(),
            metric,
            measured: vec![(1.0, 1e-9), (100.0, 1e-8)],
            masks: vec![MaskLine {
                name: "m".into(),
                limit: vec![(1.0, 1e-7), (100.0, 1e-6)],
                violations: vec![],
            }],
            notes: vec![],
        };
        r.wander = Part::Done(WanderSection {
            source: "tie".into(),
            tie: None,
            plots: vec![wp(Metric::Mtie), wp(Metric::Tdev)],
            masks: vec![],
            notes: vec![],
            te: None,
        });
        let t: Vec<f64> = (0..=8).map(|h| h as f64 * 3600.0).collect();
        r.holdover = Part::Done(HoldoverSection {
            source: "rec".into(),
            budget: 1.5e-6,
            plot: HoldoverPlot {
                title: name.into(),
                p50: t.iter().map(|s| s * 1e-11).collect(),
                p95: t.iter().map(|s| s * 2e-11).collect(),
                p99: t.iter().map(|s| s * 3e-11).collect(),
                deterministic: t.iter().map(|s| s * 1e-11).collect(),
                t,
                budget: Some(1.5e-6),
                holds_for: None,
                span: 8.0 * 3600.0,
                notes: vec![],
                observed: vec![],
            },
            spans: vec![],
            holds_for: None,
            aging_per_day: None,
            parameters: vec![],
            notes: vec![],
        });
        r
    }

    /// Every overlaid chart has one series per device (two for holdover:
    /// p95 and p50) in that device's palette colour, the same in every
    /// chart.
    #[test]
    fn one_series_per_device_in_its_colour_in_every_chart() {
        let names = ["ocxo-a", "ocxo-b", "rb-1"];
        let reports: Vec<Report> = names.iter().map(|n| report(n)).collect();
        let duts: Vec<String> = names.iter().map(|n| format!("{n}.toml")).collect();
        let f = Fleet::from_reports(reports, &duts).unwrap();
        let charts = charts(&f);
        assert_eq!(charts.len(), 5);
        for (stem, ch) in &charts {
            for (i, name) in names.iter().enumerate() {
                let mine: Vec<&Series> = ch
                    .series
                    .iter()
                    .filter(|s| s.name == *name || s.name.starts_with(&format!("{name} ")))
                    .collect();
                let want = if stem == "fleet-holdover" { 2 } else { 1 };
                assert_eq!(mine.len(), want, "{stem}: {name}");
                for s in mine {
                    assert_eq!(s.style.colour, device_colour(i), "{stem}: {name}");
                }
                if let Some(s) = ch.series.iter().find(|s| s.name == *name) {
                    assert_eq!(s.style.marker, device_marker(i), "{stem}: {name}");
                }
            }
        }
        // No other series takes a device colour.
        for (stem, ch) in &charts {
            for s in &ch.series {
                if !names.iter().any(|n| s.name.starts_with(n)) {
                    assert!(
                        !(0..names.len()).any(|i| s.style.colour == device_colour(i)),
                        "{stem}: {}",
                        s.name
                    );
                }
            }
        }
        // The same device name twice is refused.
        let twice = vec![report("x"), report("x")];
        let e = Fleet::from_reports(twice, &["a.toml".into(), "b.toml".into()]).unwrap_err();
        assert!(e.to_string().contains("a.toml") && e.to_string().contains("b.toml"));
    }
}
