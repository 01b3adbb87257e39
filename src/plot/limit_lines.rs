//! Limit lines: a limit of a limit file ([`crate::limits::Limit`]) drawn on
//! the chart of its metric — σ_y limits on the σ–τ chart, time-deviation
//! limits (TDEV, TTOT, TIE rms) on the time-deviation chart, `lf` limits on
//! the L(f) chart — as the check reads it: log–log between its points (dB
//! linear in log f for L(f)), a step held up to each point for `step`, the
//! formula segments `a·τ^p + b` for `formula`, each with its name in the
//! legend. Single-value time-error limits (cTE, max |TE|, dTE_H) have no
//! curve and are not drawn.

use super::{Chart, Colour, Line, Marker, Series, Style, XY};
use crate::limits::{Limit, LimitMetric, ValueKind};

/// One limit as a line on a chart.
#[derive(Debug, Clone, PartialEq)]
pub struct LimitLine {
    /// Legend text: `limit NAME METRIC RANGE`.
    pub name: String,
    /// What the values are (a fraction, a duration, dBc/Hz): which chart.
    pub kind: ValueKind,
    /// (x, limit) points in increasing x, values as the chart shows them
    /// (a fraction, s, or dBc/Hz).
    pub points: Vec<(f64, f64)>,
}

/// The line of `limit` over its own range, clipped to `lo … hi` where it
/// has no end of its own (a formula with no upper end), sampled at 200
/// log-spaced x plus every break point and just after it (so that steps
/// and corners show). `None` for a single-value limit or an empty range.
pub fn limit_line(limit: &Limit, lo: f64, hi: f64) -> Option<LimitLine> {
    if limit.metric.is_single() {
        return None;
    }
    let shape = limit.shape();
    let (a, b) = shape.range();
    let a = if a > 0.0 { a } else { lo };
    let b = if b.is_finite() { b } else { hi.max(a) };
    if !(a > 0.0 && b >= a && a.is_finite()) {
        return None;
    }
    let mut xs: Vec<f64> = if b > a {
        (0..=200)
            .map(|i| a * (b / a).powf(i as f64 / 200.0))
            .collect()
    } else {
        vec![a]
    };
    for bp in shape.breakpoints() {
        if bp >= a && bp <= b {
            xs.push(bp);
            xs.push(bp * (1.0 + 1e-9));
        }
    }
    // A formula's start is exclusive: draw it from just above.
    xs.push(a * (1.0 + 1e-9));
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    let power = limit.metric == LimitMetric::Lf;
    let points: Vec<(f64, f64)> = xs
        .iter()
        .filter_map(|&x| shape.eval(x).map(|v| (x, v)))
        .map(|(x, v)| (x, if power { 10.0 * v.log10() } else { v }))
        .filter(|p| p.1.is_finite())
        .collect();
    let label = format!("limit {} {}", limit.name, limit.metric.label());
    (!points.is_empty()).then(|| LimitLine {
        name: label,
        kind: limit.metric.values(),
        points,
    })
}

/// The x range of a chart's series (finite, positive x), if any.
pub fn data_range(chart: &Chart) -> Option<(f64, f64)> {
    let xs = chart
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.x))
        .filter(|x| x.is_finite() && *x > 0.0);
    let (lo, hi) = xs.fold((f64::INFINITY, 0.0f64), |(a, b), x| (a.min(x), b.max(x)));
    (lo <= hi).then_some((lo, hi))
}

/// Draw every limit of `limits` whose values are `kind` on `chart`, dashed
/// in the limit colour (patterns alternate when there are several), each
/// named in the legend; ranges open at the top are drawn to the chart's
/// data.
pub fn add_limits(chart: &mut Chart, limits: &[Limit], kind: ValueKind) {
    let (lo, hi) = data_range(chart).unwrap_or((1.0, 1.0));
    let lines: Vec<LimitLine> = limits
        .iter()
        .filter(|l| l.metric.values() == kind)
        .filter_map(|l| limit_line(l, lo, hi))
        .collect();
    add_lines(chart, &lines);
}

/// Draw prepared limit lines on `chart`.
pub fn add_lines(chart: &mut Chart, lines: &[LimitLine]) {
    let patterns = [Line::Dashed, Line::Dotted];
    for (i, l) in lines.iter().enumerate() {
        chart.series.push(Series {
            name: l.name.clone(),
            points: l.points.iter().map(|&(x, v)| XY::new(x, v)).collect(),
            style: Style {
                colour: Colour::Limit,
                line: patterns[i % patterns.len()],
                width: 1.8,
                marker: Marker::None,
            },
        });
    }
}
