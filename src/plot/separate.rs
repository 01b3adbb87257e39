//! The chart of a separation: one series per clock with its interval bars,
//! points below resolution as open triangles at their bound, and the pair
//! curves they came from faint and dotted behind them.

use super::{Axis, Chart, Colour, Line, Marker, Series, Style, XY};
use crate::separate::{Resolution, Separation};

/// The σ–τ chart of a separation, titled `title`.
pub fn chart(s: &Separation, title: &str) -> Chart {
    let est = s
        .clocks
        .first()
        .and_then(|c| c.curves.first())
        .map(|c| c.estimator);
    let (label, unit) = match est {
        Some(e) if e.is_time_deviation() => (e.name().to_string(), "s"),
        Some(e) => (e.name().to_string(), ""),
        None => ("σ".to_string(), ""),
    };
    let y = if unit.is_empty() {
        Axis::log_plain(&label, "")
    } else {
        Axis::log_si(&label, unit)
    };
    let mut chart = Chart::new(title, Axis::log_si("averaging time τ", "s"), y);
    chart.subtitle = format!(
        "each clock separated from {} pair records ({}); pair curves dotted",
        s.pairs.len(),
        match s.method {
            crate::separate::Method::Independent => "independent clocks",
            crate::separate::Method::Covariance => "covariance-aware",
        }
    );
    for p in &s.pairs {
        chart.series.push(Series {
            name: format!("pair {}−{}", p.a, p.b),
            points: p
                .curve
                .points
                .iter()
                .map(|q| XY::new(q.estimate.tau, q.estimate.value))
                .collect(),
            style: Style {
                colour: Colour::Muted,
                line: Line::Dotted,
                width: 1.0,
                marker: Marker::None,
            },
        });
    }
    let mut any_below = false;
    for (i, c) in s.clocks.iter().enumerate() {
        let Some(curve) = c.curves.first() else {
            continue;
        };
        let resolved: Vec<XY> = curve
            .points
            .iter()
            .map(|p| match p.resolution {
                Resolution::Resolved => XY::with_interval(
                    p.point.estimate.tau,
                    p.point.estimate.value,
                    p.point.lo,
                    p.point.hi,
                ),
                Resolution::Below => XY::new(p.point.estimate.tau, f64::NAN),
            })
            .collect();
        chart.series.push(Series {
            name: c.name.clone(),
            points: resolved,
            style: Style::line_dots(Colour::Palette(i)),
        });
        let below: Vec<XY> = curve
            .points
            .iter()
            .filter(|p| p.resolution == Resolution::Below)
            .map(|p| XY::new(p.point.estimate.tau, p.point.estimate.value))
            .collect();
        if !below.is_empty() {
            any_below = true;
            chart.series.push(Series {
                name: format!("{}: below resolution (bound)", c.name),
                points: below,
                style: Style::markers(Colour::Palette(i), Marker::Triangle),
            });
        }
    }
    if any_below {
        chart.notes.push(
            "triangles: the separated variance is not positive; the mark is the upper bound the data allow"
                .into(),
        );
    }
    chart.notes.push(crate::DECISION_CAUTION.into());
    chart
}
