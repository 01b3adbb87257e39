//! The wander chart: MTIE or TDEV against observation interval τ on log–log
//! axes, with each mask drawn as a limit line and every violating τ marked.

use super::{Axis, Chart, Colour, Line, Marker, Series, Style, XY};

/// Which wander metric a chart shows (ITU-T G.810 definitions): the mask
/// layer's one metric type.
pub use crate::wander::masks::Metric;

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
            Axis::log_si(&self.metric.label(), "s"),
        );
        let total: usize = self.masks.iter().map(|m| m.violations.len()).sum();
        ch.subtitle = if self.masks.is_empty() {
            format!("{} (ITU-T G.810)", self.metric.label())
        } else if total == 0 {
            format!(
                "{} against {} mask(s): no violation",
                self.metric.label(),
                self.masks.len()
            )
        } else {
            format!(
                "{} against {} mask(s): {total} violating point(s) marked",
                self.metric.label(),
                self.masks.len()
            )
        };
        ch.series.push(Series {
            name: format!("{} measured", self.metric.label()),
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

/// Log-spaced samples of a mask's limit over the τ it covers (clipped to
/// `lo … hi`), plus its breakpoints, so steps and corners show.
pub fn mask_points(m: &crate::wander::masks::Mask, lo: f64, hi: f64) -> Vec<(f64, f64)> {
    let (a, b) = m.tau_range();
    let (a, b) = (a.max(lo), b.min(hi));
    if !(a > 0.0 && b > a) {
        return Vec::new();
    }
    let mut taus: Vec<f64> = (0..=200)
        .map(|i| a * (b / a).powf(i as f64 / 200.0))
        .collect();
    for bp in m.breakpoints() {
        if bp > a && bp < b {
            taus.push(bp);
            taus.push(bp * (1.0 + 1e-9));
        }
    }
    taus.sort_by(f64::total_cmp);
    taus.iter()
        .filter_map(|&t| m.limit(t).map(|l| (t, l)))
        .collect()
}

/// The MTIE and the TDEV chart of a wander analysis, in that order: each
/// measured curve with the masks of its metric (sampled over the measured τ
/// range) and their violations. `masks` are the masks `res` was checked
/// against, in the same order as `res.checks`.
pub fn plots_from_result(
    res: &crate::wander::WanderResult,
    masks: &[crate::wander::masks::Mask],
    title: &str,
) -> Vec<WanderPlot> {
    let (tlo, thi) = res
        .mtie
        .iter()
        .chain(&res.tdev)
        .fold((f64::INFINITY, 0.0f64), |(a, b), e| {
            (a.min(e.tau), b.max(e.tau))
        });
    let mut plots = Vec::new();
    for (metric, curve) in [(Metric::Mtie, &res.mtie), (Metric::Tdev, &res.tdev)] {
        let mut lines = Vec::new();
        for (m, c) in masks
            .iter()
            .zip(&res.checks)
            .filter(|(m, _)| m.metric == metric)
        {
            lines.push(MaskLine {
                name: m.name.clone(),
                limit: mask_points(m, tlo, thi),
                violations: c.violations.iter().map(|v| (v.tau, v.value)).collect(),
            });
        }
        let mut notes = Vec::new();
        if lines.is_empty() {
            notes.push(format!("No {} mask was asked for.", metric.label()));
        }
        plots.push(WanderPlot {
            title: title.to_string(),
            metric,
            measured: curve.iter().map(|e| (e.tau, e.value)).collect(),
            masks: lines,
            notes,
        });
    }
    plots
}

/// The chart of `wander`: MTIE and TDEV of `res` against `masks` on one
/// chart ([`plots_from_result`], [`combined_chart`]), noting a removed
/// frequency offset and, when masks were checked, the conditions the tool
/// cannot know and the decision caution.
pub fn wander_chart(
    res: &crate::wander::WanderResult,
    masks: &[crate::wander::masks::Mask],
    title: &str,
) -> Chart {
    let plots = plots_from_result(res, masks, title);
    let mut notes = Vec::new();
    if let Some(y) = res.tie.offset_removed {
        notes.push(format!(
            "A constant frequency offset of {y:.4e} was removed first."
        ));
    }
    if let Some(f) = &res.filter {
        notes.push(format!("Measurement filter: {}.", f.line()));
    }
    if !masks.is_empty() {
        notes.push(format!(
            "{} {}",
            crate::wander::masks::CONDITIONS_NOTE,
            crate::DECISION_CAUTION
        ));
    }
    combined_chart(&plots, &notes)
}

/// MTIE and TDEV on one chart (both are times against τ): the charts of
/// `plots` overlaid, the later metrics' measured curves in their own colour
/// and their masks in further palette colours, so one file shows both.
pub fn combined_chart(plots: &[WanderPlot], notes: &[String]) -> Chart {
    let mut iter = plots.iter();
    let Some(first) = iter.next() else {
        return Chart::new(
            "",
            Axis::log_si("observation interval τ", "s"),
            Axis::log_si("", "s"),
        );
    };
    let mut ch = first.chart();
    let mut subtitles = vec![ch.subtitle.clone()];
    let mut shift = first.masks.len() + 2;
    for p in iter {
        let c = p.chart();
        subtitles.push(c.subtitle.clone());
        for mut s in c.series {
            if s.style.colour != Colour::Alarm {
                s.style.colour = match s.style.colour {
                    Colour::Palette(i) => Colour::Palette(i + shift),
                    _ => Colour::Palette(shift + 1),
                };
                if s.style.marker == Marker::Dot {
                    s.style.marker = Marker::Square;
                }
            }
            ch.series.push(s);
        }
        ch.notes.extend(c.notes);
        shift += p.masks.len() + 2;
    }
    // Name each mask's metric in the legend (one mask file may limit both).
    let mut k = 0;
    for p in plots {
        let c = p.chart();
        for s in &mut ch.series[k..k + c.series.len()] {
            let label = p.metric.label();
            if !s.name.starts_with(&label) {
                s.name = format!("{label} {}", s.name);
            }
        }
        k += c.series.len();
    }
    let names: Vec<String> = plots.iter().map(|p| p.metric.label()).collect();
    ch.y.label = names.join(", ");
    ch.subtitle = subtitles.join("; ");
    ch.notes.extend(notes.iter().cloned());
    ch
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
