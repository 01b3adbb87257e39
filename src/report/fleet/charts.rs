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
