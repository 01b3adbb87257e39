//! The wander chart: MTIE or TDEV against observation interval τ on log–log
//! axes, with each mask drawn as a limit line and every violating τ marked.

use super::{Axis, Chart, Colour, Line, Marker, Series, Style, XY};

/// Which wander metric a chart shows (ITU-T G.810 definitions).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Metric {
    /// Maximum time interval error.
    Mtie,
    /// Time deviation.
    Tdev,
}

impl Metric {
    /// Trade name.
    pub fn name(self) -> &'static str {
        match self {
            Metric::Mtie => "MTIE",
            Metric::Tdev => "TDEV",
        }
    }
}

/// A mask: the limit curve and the measured points that exceed it.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskLine {
    /// Mask name (e.g. `g8262-opt1`).
    pub name: String,
    /// (τ, limit) points of the mask, increasing τ, sampled finely enough to
    /// show its shape.
    pub limit: Vec<(f64, f64)>,
    /// (τ, measured value) of each violation.
    pub violations: Vec<(f64, f64)>,
}

/// Everything the wander chart shows.
#[derive(Debug, Clone, PartialEq)]
pub struct WanderPlot {
    /// Title (device or file name).
    pub title: String,
    /// MTIE or TDEV.
    pub metric: Metric,
    /// (τ, value) measured.
    pub measured: Vec<(f64, f64)>,
    /// Masks.
    pub masks: Vec<MaskLine>,
    /// Footnotes (mask source notes, measurement conditions).
    pub notes: Vec<String>,
}

impl WanderPlot {
    /// Build the chart.
    pub fn chart(&self) -> Chart {
        let mut ch = Chart::new(
            &self.title,
            Axis::log_si("observation interval τ", "s"),
            Axis::log_si(self.metric.name(), "s"),
        );
        let total: usize = self.masks.iter().map(|m| m.violations.len()).sum();
        ch.subtitle = if self.masks.is_empty() {
            format!("{} (ITU-T G.810)", self.metric.name())
        } else if total == 0 {
            format!(
                "{} against {} mask(s): no violation",
                self.metric.name(),
                self.masks.len()
            )
        } else {
            format!(
                "{} against {} mask(s): {total} violating point(s) marked",
                self.metric.name(),
                self.masks.len()
            )
        };
        ch.series.push(Series {
            name: format!("{} measured", self.metric.name()),
            points: self.measured.iter().map(|&(t, v)| XY::new(t, v)).collect(),
            style: Style {
                colour: Colour::Palette(0),
                line: Line::Solid,
                width: 2.0,
                marker: if self.measured.len() <= 120 {
                    Marker::Dot
                } else {
                    Marker::None
                },
            },
        });
        let patterns = [Line::Dashed, Line::Dotted, Line::Solid];
        for (i, m) in self.masks.iter().enumerate() {
            ch.series.push(Series {
                name: format!("mask {}", m.name),
                points: m.limit.iter().map(|&(t, v)| XY::new(t, v)).collect(),
                style: Style {
                    colour: if i == 0 {
                        Colour::Limit
                    } else {
                        Colour::Palette(i + 1)
                    },
                    line: patterns[i % patterns.len()],
                    width: 1.8,
                    marker: Marker::None,
                },
            });
        }
        for m in &self.masks {
            if m.violations.is_empty() {
                continue;
            }
            ch.series.push(Series {
                name: format!("exceeds {} ({})", m.name, m.violations.len()),
                points: m.violations.iter().map(|&(t, v)| XY::new(t, v)).collect(),
                style: Style::markers(Colour::Alarm, Marker::Cross),
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
    fn violations_become_alarm_crosses() {
        let p = WanderPlot {
            title: "x".into(),
            metric: Metric::Mtie,
            measured: vec![(1.0, 1e-8), (10.0, 1e-7)],
            masks: vec![MaskLine {
                name: "m".into(),
                limit: vec![(1.0, 4e-8), (10.0, 5e-8)],
                violations: vec![(10.0, 1e-7)],
            }],
            notes: vec![],
        };
        let ch = p.chart();
        let v = ch.series.last().unwrap();
        assert_eq!(v.style.colour, Colour::Alarm);
        assert_eq!(v.style.marker, Marker::Cross);
        assert!(ch.subtitle.contains("1 violating"));
    }
}
