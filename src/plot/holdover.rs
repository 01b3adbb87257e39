//! The holdover chart: time error against time since the reference was lost
//! — the deterministic prediction, the p50/p95/p99 envelope of |TE| from the
//! noise simulation, the budget, and where the p95 curve first crosses it.

use super::{Axis, Band, Chart, Colour, Line, Marker, Orientation, Rule, Series, Style, XY};

/// Everything the holdover chart shows. All times in seconds.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct HoldoverPlot {
    /// Title (device or file name).
    pub title: String,
    /// Times since the start of holdover (s), increasing.
    pub t: Vec<f64>,
    /// Deterministic TE(t) (s), signed.
    pub deterministic: Vec<f64>,
    /// Median of |TE(t)| (s).
    pub p50: Vec<f64>,
    /// 95th percentile of |TE(t)| (s).
    pub p95: Vec<f64>,
    /// 99th percentile of |TE(t)| (s).
    pub p99: Vec<f64>,
    /// Time-error budget (s).
    pub budget: Option<f64>,
    /// When p95 first exceeds the budget (s), if it does within the span.
    pub holds_for: Option<f64>,
    /// The holdover span (s).
    pub span: f64,
    /// Footnotes (caution).
    pub notes: Vec<String>,
    /// The record after the start of holdover, when it goes on past the
    /// start: (t, observed |TE|) in seconds.
    pub observed: Vec<(f64, f64)>,
}

/// The display unit for a time axis: hours, minutes or seconds.
pub fn time_unit(span: f64) -> (&'static str, f64) {
    if span >= 2.0 * 3600.0 {
        ("h", 3600.0)
    } else if span >= 120.0 {
        ("min", 60.0)
    } else {
        ("s", 1.0)
    }
}

impl HoldoverPlot {
    /// The chart data of a holdover prediction: the TE curves of `pred`, the
    /// span and budget it was made for, and `notes` as footnotes.
    pub fn from_prediction(
        title: &str,
        pred: &crate::holdover::Prediction,
        span: f64,
        budget: f64,
        notes: Vec<String>,
    ) -> Self {
        Self {
            title: title.to_string(),
            t: pred.te.iter().map(|p| p.t).collect(),
            deterministic: pred.te.iter().map(|p| p.deterministic).collect(),
            p50: pred.te.iter().map(|p| p.p50).collect(),
            p95: pred.te.iter().map(|p| p.p95).collect(),
            p99: pred.te.iter().map(|p| p.p99).collect(),
            budget: Some(budget),
            holds_for: pred.holds_for,
            span,
            notes,
            observed: Vec::new(),
        }
    }

    /// Add the record after the start ([`crate::holdover::observed`]) as a
    /// line of observed |TE|.
    /// (Nothing when `o` is `None`.)
    pub fn with_observed(mut self, o: Option<&crate::holdover::observed::Observed>) -> Self {
        if let Some(o) = o {
            self.observed = o.points.iter().map(|p| (p.t, p.te.abs())).collect();
        }
        self
    }

    /// Build the chart.
    pub fn chart(&self) -> Chart {
        let (unit, div) = time_unit(self.span.max(self.t.last().copied().unwrap_or(0.0)));
        let x = if unit == "s" {
            Axis::linear_si("time in holdover", "s")
        } else {
            Axis::linear_plain("time in holdover", unit)
        };
        let mut ch = Chart::new(&self.title, x, Axis::linear_si("time error", "s"));
        ch.x.range = Some((
            0.0,
            self.span.max(self.t.last().copied().unwrap_or(1.0)) / div,
        ));
        let span_txt = crate::units::format_si(self.span / div, unit, 3);
        ch.subtitle = match (self.budget, self.holds_for) {
            (Some(b), Some(h)) => format!(
                "span {span_txt}, budget ±{}: p95 of |TE| reaches the budget after {}",
                crate::units::format_si(b, "s", 3),
                crate::units::format_si(h / div, unit, 3)
            ),
            (Some(b), None) => format!(
                "span {span_txt}, budget ±{}: p95 of |TE| stays within the budget",
                crate::units::format_si(b, "s", 3)
            ),
            _ => format!("span {span_txt}"),
        };
        let xs: Vec<f64> = self.t.iter().map(|t| t / div).collect();
        let n = xs.len();
        let take = |v: &Vec<f64>| -> Vec<f64> { v.iter().take(n).copied().collect() };
        if self.p50.len() >= n && self.p95.len() >= n {
            ch.bands.push(Band {
                name: "p50 – p95 of |TE|".into(),
                x: xs.clone(),
                lo: take(&self.p50),
                hi: take(&self.p95),
                colour: Colour::Palette(0),
            });
        }
        if self.p95.len() >= n && self.p99.len() >= n {
            ch.bands.push(Band {
                name: "p95 – p99 of |TE|".into(),
                x: xs.clone(),
                lo: take(&self.p95),
                hi: take(&self.p99),
                colour: Colour::Palette(5),
            });
        }
        let mut line = |name: &str, v: &Vec<f64>, style: Style| {
            if !v.is_empty() {
                ch.series.push(Series {
                    name: name.into(),
                    points: xs.iter().zip(v).map(|(&x, &y)| XY::new(x, y)).collect(),
                    style,
                });
            }
        };
        line(
            "p50 |TE|",
            &self.p50,
            Style::line(Colour::Palette(0), Line::Solid),
        );
        line(
            "p95 |TE|",
            &self.p95,
            Style {
                width: 1.4,
                ..Style::line(Colour::Palette(0), Line::Dashed)
            },
        );
        line(
            "p99 |TE|",
            &self.p99,
            Style {
                width: 1.2,
                ..Style::line(Colour::Palette(5), Line::Dotted)
            },
        );
        line(
            "deterministic TE",
            &self.deterministic,
            Style {
                colour: Colour::Palette(1),
                line: Line::Solid,
                width: 2.2,
                marker: Marker::None,
            },
        );
        if !self.observed.is_empty() {
            ch.series.push(Series {
                name: "|TE| observed after the start".into(),
                points: self
                    .observed
                    .iter()
                    .map(|&(t, v)| XY::new(t / div, v))
                    .collect(),
                style: Style {
                    colour: Colour::Palette(3),
                    line: Line::Solid,
                    width: 1.6,
                    marker: Marker::None,
                },
            });
        }
        if let Some(b) = self.budget {
            // The budget is always drawn, both +budget and −budget (TE can
            // leave it on either side): the y range always reaches them, so
            // a prediction far inside the budget shows as far inside it.
            ch.rules.push(Rule {
                label: format!("budget ±{}", crate::units::format_si(b, "s", 3)),
                orientation: Orientation::Horizontal,
                value: b,
                colour: Colour::Alarm,
                line: Line::Dashed,
                extend_range: true,
            });
            ch.rules.push(Rule {
                label: String::new(),
                orientation: Orientation::Horizontal,
                value: -b,
                colour: Colour::Alarm,
                line: Line::Dashed,
                extend_range: true,
            });
            // A little room beyond ±budget, so the lines never sit on the frame.
            ch.y.range = None;
            let top = self
                .p99
                .iter()
                .chain(&self.p95)
                .chain(&self.deterministic)
                .chain(self.observed.iter().map(|o| &o.1))
                .filter(|v| v.is_finite())
                .fold(b, |m, v| m.max(v.abs()));
            let bottom = self
                .deterministic
                .iter()
                .filter(|v| v.is_finite())
                .fold(-b, |m, &v| m.min(v));
            ch.y.range = Some((bottom - 0.08 * top, top * 1.08));
        }
        if let Some(h) = self.holds_for {
            ch.rules.push(Rule {
                label: format!(
                    "p95 reaches budget: {}",
                    crate::units::format_si(h / div, unit, 3)
                ),
                orientation: Orientation::Vertical,
                value: h / div,
                colour: Colour::Limit,
                line: Line::Solid,
                extend_range: true,
            });
        }
        ch.notes.extend(self.notes.iter().cloned());
        ch
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hours_axis_and_marks() {
        let t: Vec<f64> = (0..=24).map(|h| h as f64 * 3600.0).collect();
        let te: Vec<f64> = t.iter().map(|&s| 0.5 * 1e-10 / 86400.0 * s * s).collect();
        let p = HoldoverPlot {
            title: "x".into(),
            p50: te.clone(),
            p95: te.iter().map(|v| v * 1.5).collect(),
            p99: te.iter().map(|v| v * 2.0).collect(),
            deterministic: te,
            t,
            budget: Some(1.5e-6),
            holds_for: Some(13.5 * 3600.0),
            span: 86400.0,
            notes: vec![],
            observed: vec![],
        };
        let ch = p.chart();
        assert_eq!(ch.x.unit, super::super::AxisUnit::Plain("h".into()));
        assert_eq!(ch.x.range, Some((0.0, 24.0)));
        assert_eq!(ch.bands.len(), 2);
        assert!(ch
            .rules
            .iter()
            .any(|r| r.orientation == Orientation::Vertical && (r.value - 13.5).abs() < 1e-12));
        assert!(ch.subtitle.contains("13.5 h"), "{}", ch.subtitle);
        // +budget and −budget are always drawn, inside the y range.
        let (lo, hi) = ch.y.range.unwrap();
        for v in [1.5e-6, -1.5e-6] {
            assert!(ch
                .rules
                .iter()
                .any(|r| r.orientation == Orientation::Horizontal && r.value == v));
            assert!(lo < v && v < hi, "{v} outside {lo} … {hi}");
        }
        assert_eq!(time_unit(600.0), ("min", 60.0));
        assert!(!ch.series.iter().any(|s| s.name.contains("observed")));
        // The record after the start: one more line, in hours.
        let p = HoldoverPlot {
            observed: vec![(3600.0, 1e-7), (7200.0, 2e-7)],
            ..p
        };
        let ch = p.chart();
        let s = ch
            .series
            .iter()
            .find(|s| s.name.contains("observed"))
            .unwrap();
        assert_eq!(s.points.len(), 2);
        assert!((s.points[1].x - 2.0).abs() < 1e-12);
    }
}
