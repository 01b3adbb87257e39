//! Charts that overlay several devices or records: one series per item (two
//! for holdover), in the item's colour and marker from
//! [`crate::plot::style::DEVICE_PALETTE`] (item `i` has the same look in
//! every chart); masks and budgets in the neutral limit colours. The
//! comparison report ([`crate::report::fleet`]) and the analysis commands
//! given several records use them alike.

use super::holdover::{time_unit, HoldoverPlot};
use super::stability::SigmaCurve;
use super::style::{device_colour, device_marker};
use super::wander::WanderPlot;
use super::{Axis, Chart, Colour, Line, Marker, Orientation, Rule, Series, Style, XY};
use crate::units::format_si;

/// Item `i`'s style: its colour, its marker, a solid line.
pub fn item_style(i: usize) -> Style {
    Style {
        colour: device_colour(i),
        line: Line::Solid,
        width: 2.0,
        marker: device_marker(i),
    }
}

/// "Not shown (why): a, b." for the items that have nothing to draw.
pub fn missing_note(missing: &[String], what: &str) -> Option<String> {
    (!missing.is_empty()).then(|| format!("Not shown ({what}): {}.", missing.join(", ")))
}

/// σ(τ) of each item (`None`: nothing to draw, named under the chart as
/// `missing_what`), with its interval bars, on the y axis `y`.
pub fn sigma_chart(
    title: &str,
    subtitle: &str,
    y: Axis,
    items: &[(String, Option<&SigmaCurve>)],
    missing_what: &str,
) -> Chart {
    let mut ch = Chart::new(title, Axis::log_si("averaging time τ", "s"), y);
    ch.subtitle = subtitle.to_string();
    let mut missing = Vec::new();
    for (i, (name, curve)) in items.iter().enumerate() {
        match curve {
            Some(c) => ch.series.push(Series {
                name: name.clone(),
                points: c.points.clone(),
                style: item_style(i),
            }),
            None => missing.push(name.clone()),
        }
    }
    ch.notes.extend(missing_note(&missing, missing_what));
    ch
}

/// One estimator's curve of each record (`stability` given several
/// files), with its interval bars: the curves must be of one estimator.
pub fn records_sigma_chart(items: &[(String, &crate::deviation::Curve)], confidence: f64) -> Chart {
    let curves: Vec<(String, SigmaCurve)> = items
        .iter()
        .map(|(n, c)| (n.clone(), SigmaCurve::from_curve(c)))
        .collect();
    let estimator = items.first().map(|(_, c)| c.estimator);
    let y = match estimator {
        Some(e) if e.is_time_deviation() => Axis::log_si("time deviation", "s"),
        _ => Axis::log_plain("fractional frequency deviation σ(τ)", ""),
    };
    let name = estimator
        .map(|e| e.name().to_uppercase())
        .unwrap_or_default();
    let subtitle = format!(
        "{name} of each record · bars: {:.1} % confidence intervals",
        confidence * 100.0
    );
    let refs: Vec<(String, Option<&SigmaCurve>)> =
        curves.iter().map(|(n, c)| (n.clone(), Some(c))).collect();
    sigma_chart("frequency stability", &subtitle, y, &refs, "")
}

/// The MTIE and the TDEV chart of several records' wander analyses
/// ([`super::wander::plots_from_result`] of each), in that order; with the
/// conditions note and the decision caution when masks were checked.
pub fn records_wander_charts(
    items: &[(String, Vec<WanderPlot>)],
    masks_checked: bool,
) -> [Chart; 2] {
    use crate::wander::masks::Metric;
    [Metric::Mtie, Metric::Tdev].map(|metric| {
        let of_metric: Vec<(String, Option<&WanderPlot>)> = (items.iter())
            .map(|(n, p)| (n.clone(), p.iter().find(|p| p.metric == metric)))
            .collect();
        let subtitle = format!("{} of each record against the masks", metric.label());
        let mut chart = wander_chart(&metric.label(), &subtitle, metric, &of_metric, "");
        if masks_checked {
            let note = crate::wander::masks::CONDITIONS_NOTE;
            chart
                .notes
                .push(format!("{note} {}", crate::DECISION_CAUTION));
        }
        chart
    })
}

/// The holdover chart of several records' predictions against one budget
/// through one span, with the holdover caution.
pub fn records_holdover_chart(items: &[(String, HoldoverPlot)], budget: f64, span: f64) -> Chart {
    let spans = [span];
    let items: Vec<(String, Option<HoldoverItem>)> = (items.iter())
        .map(|(n, plot)| {
            (
                n.clone(),
                Some(HoldoverItem {
                    plot,
                    budget,
                    spans: &spans,
                }),
            )
        })
        .collect();
    let what = "p95 of |TE| (solid, markers) and p50 (dashed) of each record against the budget";
    let mut chart = holdover_chart("holdover", what, &items, "");
    chart.notes.push(crate::holdover::caution());
    chart
}

/// MTIE or TDEV of each item against every mask its analysis checked (each
/// mask drawn once, at the widest sampling among the items).
pub fn wander_chart(
    title: &str,
    subtitle: &str,
    metric: crate::wander::masks::Metric,
    items: &[(String, Option<&WanderPlot>)],
    missing_what: &str,
) -> Chart {
    let mut ch = Chart::new(
        title,
        Axis::log_si("observation interval τ", "s"),
        Axis::log_si(&metric.label(), "s"),
    );
    ch.subtitle = subtitle.to_string();
    // Masks by name: the widest sampling of each among the items.
    let mut masks: Vec<(String, Vec<(f64, f64)>)> = Vec::new();
    let mut missing = Vec::new();
    for (i, (name, plot)) in items.iter().enumerate() {
        let Some(p) = plot else {
            missing.push(name.clone());
            continue;
        };
        ch.series.push(Series {
            name: name.clone(),
            points: p.measured.iter().map(|&(x, y)| XY::new(x, y)).collect(),
            style: Style {
                marker: if p.measured.len() <= 120 {
                    device_marker(i)
                } else {
                    Marker::None
                },
                ..item_style(i)
            },
        });
        for m in &p.masks {
            let span = |v: &Vec<(f64, f64)>| match (v.first(), v.last()) {
                (Some(a), Some(b)) => b.0 / a.0,
                _ => 0.0,
            };
            match masks.iter_mut().find(|(n, _)| *n == m.name) {
                Some((_, pts)) if span(pts) < span(&m.limit) => *pts = m.limit.clone(),
                Some(_) => {}
                None => masks.push((m.name.clone(), m.limit.clone())),
            }
        }
    }
    let patterns = [Line::Dashed, Line::Dotted, Line::Solid];
    for (k, (name, pts)) in masks.into_iter().enumerate() {
        ch.series.push(Series {
            name: format!("mask {name}"),
            points: pts.iter().map(|&(x, y)| XY::new(x, y)).collect(),
            style: Style {
                colour: if k % 2 == 0 {
                    Colour::Limit
                } else {
                    Colour::Muted
                },
                line: patterns[k % patterns.len()],
                width: 1.8,
                marker: Marker::None,
            },
        });
    }
    ch.notes.extend(missing_note(&missing, missing_what));
    ch
}

/// One item's holdover prediction for [`holdover_chart`]: its TE curves, its
/// budget and the spans it was judged at.
#[derive(Debug, Clone, Copy)]
pub struct HoldoverItem<'a> {
    /// The prediction's chart data (its `span` sets the x range).
    pub plot: &'a HoldoverPlot,
    /// The ± budget, s.
    pub budget: f64,
    /// The spans judged, s.
    pub spans: &'a [f64],
}

/// p95 (solid, markers) and p50 (dashed) of |TE| of each item against its
/// budget, with the spans marked.
pub fn holdover_chart(
    title: &str,
    subtitle: &str,
    items: &[(String, Option<HoldoverItem>)],
    missing_what: &str,
) -> Chart {
    let longest = items
        .iter()
        .filter_map(|(_, h)| h.map(|h| h.plot.span))
        .fold(0.0f64, f64::max);
    let (unit, div) = time_unit(longest.max(1.0));
    let x = if unit == "s" {
        Axis::linear_si("time in holdover", "s")
    } else {
        Axis::linear_plain("time in holdover", unit)
    };
    let mut ch = Chart::new(title, x, Axis::linear_si("time error |TE|", "s"));
    ch.x.range = Some((0.0, longest.max(1.0) / div));
    ch.subtitle = subtitle.to_string();
    let mut budgets: Vec<f64> = Vec::new();
    let mut spans: Vec<f64> = Vec::new();
    let mut missing = Vec::new();
    for (i, (name, h)) in items.iter().enumerate() {
        let Some(h) = h else {
            missing.push(name.clone());
            continue;
        };
        let p = h.plot;
        let xs: Vec<f64> = p.t.iter().map(|t| t / div).collect();
        let pts =
            |v: &[f64]| -> Vec<XY> { xs.iter().zip(v).map(|(&x, &y)| XY::new(x, y)).collect() };
        ch.series.push(Series {
            name: format!("{name} p95"),
            points: pts(&p.p95),
            style: item_style(i),
        });
        ch.series.push(Series {
            name: format!("{name} p50"),
            points: pts(&p.p50),
            style: Style {
                colour: device_colour(i),
                line: Line::Dashed,
                width: 1.4,
                marker: Marker::None,
            },
        });
        if !budgets.contains(&h.budget) {
            budgets.push(h.budget);
        }
        for &s in h.spans {
            if !spans.contains(&s) {
                spans.push(s);
            }
        }
    }
    for b in budgets {
        ch.rules.push(Rule {
            label: format!(
                "budget ±{} (|TE| ≤ {})",
                format_si(b, "s", 3),
                format_si(b, "s", 3)
            ),
            orientation: Orientation::Horizontal,
            value: b,
            colour: Colour::Limit,
            line: Line::Dashed,
            extend_range: true,
        });
    }
    spans.sort_by(f64::total_cmp);
    for s in spans {
        ch.rules.push(Rule {
            label: format!("span {}", format_si(s / div, unit, 3)),
            orientation: Orientation::Vertical,
            value: s / div,
            colour: Colour::Muted,
            line: Line::Dotted,
            extend_range: false,
        });
    }
    ch.notes
        .push("|TE| is the size of the time error either side of zero: a budget of ±B holds while |TE| ≤ B.".into());
    ch.notes.extend(missing_note(&missing, missing_what));
    ch
}
